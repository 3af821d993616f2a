"""A short list of the Pareto front: a few named designs, each with the reason it was picked.

Picks (docs/theory.md#short-list): the smallest sink, the lowest fan power and the most junction
margin among the feasible Pareto designs, and a balanced pick at the knee of the front: the
design farthest, in objectives normalised to [0, 1] over the front, from the hyperplane through
the front's extreme designs (its anchor points), on the side of the ideal point. This is the
knee of normal-boundary intersection (Das, I., "On characterizing the 'knee' of the Pareto curve
based on Normal-Boundary Intersection", Structural Optimization 18:107–115, 1999): the design
where giving up a little of one objective buys the most of the others.

Pure numpy; no I/O.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Pick", "knee_index", "weighted_index", "short_list"]


@dataclass(frozen=True)
class Pick:
    name: str  #: "smallest sink", "lowest fan power", "most margin", "balanced (knee)"
    index: int  #: row of the front
    reason: str


def knee_index(front) -> int:
    """Row of ``front`` (m, k), objectives to minimise, at the knee: the largest distance from
    the hyperplane through the k anchor points (each objective's best design), in objectives
    normalised over the front, towards the ideal point (Das 1999).

    Where the anchors do not span a hyperplane (two objectives at their best in one design, or
    fewer designs than objectives) the plane Σ f_i = 1 of the normalised anchors stands in.

    >>> front = [[0.0, 1.0], [0.2, 0.2], [0.5, 0.1], [1.0, 0.0]]   # a bend at (0.2, 0.2)
    >>> knee_index(front)
    1
    """
    f = np.asarray(front, dtype=float)
    m, k = f.shape
    if m <= 2:
        return 0
    lo, hi = f.min(axis=0), f.max(axis=0)
    span = np.where(hi > lo, hi - lo, 1.0)
    z = (f - lo) / span  # each objective over [0, 1]; the ideal point is the origin
    anchors = z[np.argmin(f, axis=0)]  # (k, k): row i is the best design of objective i
    try:
        normal = np.linalg.solve(anchors, np.ones(k))  # the plane n·z = 1 through the anchors
        if not np.all(np.isfinite(normal)) or np.any(normal <= 0):
            raise np.linalg.LinAlgError
    except np.linalg.LinAlgError:
        normal = np.ones(k)
    distance = (1.0 - z @ normal) / np.linalg.norm(normal)
    return int(np.argmax(distance))


def weighted_index(front, weights) -> int:
    """Row of ``front`` (m, k), objectives to minimise, with the least weighted sum of the
    objectives normalised to [0, 1] over the front (``weights`` (k,), ≥ 0).

    >>> weighted_index([[0.0, 1.0], [0.4, 0.3], [1.0, 0.0]], [1.0, 3.0])
    2
    """
    f = np.asarray(front, dtype=float)
    lo, hi = f.min(axis=0), f.max(axis=0)
    z = (f - lo) / np.where(hi > lo, hi - lo, 1.0)
    return int(np.argmin(z @ np.asarray(weights, dtype=float)))


def short_list(volume, fan_power, margin, objectives, has_fans: bool = True,
               weights=None, weight_text: str = "") -> list[Pick]:
    """The named picks of a front of m feasible designs: ``volume`` [cm³], ``fan_power`` [W],
    ``margin`` [K] (m,), and ``objectives`` (m, k) to minimise for the knee. A design can
    carry several picks."""
    volume = np.asarray(volume, dtype=float)
    if volume.size == 0:
        return []
    margin = np.asarray(margin, dtype=float)
    out = [Pick("smallest sink", int(np.nanargmin(volume)),
                f"the smallest sink volume on the front, {np.nanmin(volume):.4g} cm³, that meets "
                "the junction margin")]
    power = np.asarray(fan_power, dtype=float)
    if has_fans and np.isfinite(power).any():
        out.append(Pick("lowest fan power", int(np.nanargmin(power)),
                        f"the least fan power on the front, {np.nanmin(power):.3g} W"))
    out.append(Pick("most margin", int(np.nanargmax(margin)),
                    f"the most junction margin on the front, {np.nanmax(margin):.3g} K"))
    out.append(Pick("balanced (knee)", knee_index(objectives),
                    "the knee of the front (Das 1999): the farthest from the plane through the "
                    "extreme designs, where the trade-off bends"))
    if weights is not None:
        out.append(Pick("your weights", weighted_index(objectives, weights),
                        f"the least weighted sum of the normalised objectives ({weight_text})"))
    return out
