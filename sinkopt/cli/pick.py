"""``sinkopt pick RESULTS_DIR [--json]``: the short list of a results folder (shortlist.json,
written by ``sinkopt run``): the smallest sink, the lowest fan power, the most margin and the
balanced pick at the knee of the front, each with its reason."""
from __future__ import annotations

import json
import sys
from pathlib import Path

from sinkopt.errors import InputError

__all__ = ["register", "cmd_pick", "format_picks"]


def register(sub) -> None:
    p = sub.add_parser("pick", help="print the short list of a results folder",
                       description="Print the named picks of a results folder's Pareto front "
                                   "with the reason for each (docs/theory.md#short-list).")
    p.add_argument("results_dir", type=Path, metavar="RESULTS_DIR")
    p.add_argument("--json", action="store_true", help="print the picks as JSON")
    p.set_defaults(func=cmd_pick)


def format_picks(picks: list[dict]) -> list[str]:
    """One line per pick, then its reason."""
    out = []
    for p in picks:
        fan = f", {p['fan']} {p['fan_power_W']:.3g} W" if p.get("fan") else ""
        out.append(f"  {p['pick']:<17} trial {p['trial']}: {p['volume_cm3']:.4g} cm³, "
                   f"{p['mass_kg']:.3g} kg{fan}, margin {p['worst_margin_K']:.3g} K")
        out.append(f"  {'':<17} {p['reason']}")
    return out


def cmd_pick(args) -> int:
    path = args.results_dir / "shortlist.json"
    if not args.results_dir.is_dir():
        raise InputError("results folder not found", str(args.results_dir))
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError("no shortlist.json: run `sinkopt report` on this folder to write it",
                         str(args.results_dir)) from None
    if args.json:
        json.dump(data["picks"], sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    if not data["picks"]:
        print("no feasible design: the front and its short list are empty")
        return 0
    print(f"short list of {data['study']!r}:")
    print("\n".join(format_picks(data["picks"])))
    return 0
