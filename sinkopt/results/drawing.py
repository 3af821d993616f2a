"""Drawings of a design: a dimensioned section across the fins and a plan view with the device
footprints, as SVG (hand-written) and DXF (ezdxf), and a printable one-page design sheet (HTML,
A4 portrait) carrying the drawing, the geometry, material and finish, the fan and its speed, the
operating point, the junction temperatures and margins, and the cautions.

The geometry part (:func:`design_drawing`) turns a design into drawing primitives in millimetres
(x to the right, y up), with no I/O; :func:`drawing_svg` and :func:`drawing_dxf` render the same
primitives, so both files carry the same lines, dimensions and texts. Dimensioning follows the
conventions of ISO 129-1 (dimension and extension lines, values in mm above the dimension line,
read from the bottom or the right). :func:`write_design_files` is the only function that writes.

Layers (DXF) and groups (``<g class>`` in the SVG): ``OUTLINE`` (the sink's visible edges),
``HATCH`` (section hatching), ``FOOTPRINTS`` (devices, dashed: they sit on the mounting face
under the base), ``DIMENSIONS``, ``TEXT``. The DXF holds one group per view (``SECTION_A_A``,
``PLAN``) so a reader can pick each view's outline.

Mounting holes are not drawn: their positions, sizes and threads follow the devices' datasheets
and the user's fixings; the drawing says so.
"""
from __future__ import annotations

import datetime as _dt
import html
import math
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable, Sequence

from sinkopt.errors import InputError

__all__ = ["SinkShape", "Footprint", "Line", "Poly", "Text", "Dim", "View", "Drawing",
           "LAYERS", "DRAWINGS_DIR", "MAX_REPORT_DRAWINGS", "fmt_mm", "design_drawing",
           "drawing_svg", "drawing_dxf", "design_sheet", "footprints_of", "drawing_trials",
           "picks_by_trial",
           "design_files", "write_design_files", "write_report_drawings", "file_names"]

#: Layer name -> (DXF colour index, DXF linetype).
LAYERS = {"OUTLINE": (7, "Continuous"), "HATCH": (8, "Continuous"),
          "FOOTPRINTS": (1, "DASHED"), "DIMENSIONS": (3, "Continuous"), "TEXT": (7, "Continuous")}
#: Sub-folder of the report's folder (and default of ``sinkopt drawing --out``).
DRAWINGS_DIR = "drawings"
#: At most this many designs get their drawings written with the report when the front has no
#: short list.
MAX_REPORT_DRAWINGS = 12

MOUNTING_HOLES_NOTE = ("Mounting holes are not shown: the user adds them, sized and placed to the "
                       "devices' datasheets and the chosen fixings (screws, clips).")


def fmt_mm(v: float, decimals: int = 2) -> str:
    """A length in mm as drawn: at most ``decimals`` decimals, trailing zeros dropped (the DXF
    dimensions use the same rule: DIMDEC 2, DIMZIN 8).

    >>> fmt_mm(88.5), fmt_mm(4.0), fmt_mm(3.77222), fmt_mm(1.1)
    ('88.5', '4', '3.77', '1.1')
    """
    text = f"{float(v):.{decimals}f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


# ---------------------------------------------------------------- geometry (no I/O)

@dataclass(frozen=True)
class SinkShape:
    """A plate-fin sink in mm: ``n_fins`` fins of ``fin_thickness`` equally spaced over the
    base ``width`` (the outer fins flush with its edges), ``fin_height`` above a base of
    ``base_thickness``; ``length`` along the flow."""

    width: float
    length: float
    fin_height: float
    fin_thickness: float
    n_fins: int
    base_thickness: float

    @classmethod
    def from_params(cls, params: dict[str, Any], source: str | None = None) -> "SinkShape":
        """From a design's parameters (``width_mm``, ... ``n_fins``); a geometry that cannot
        be drawn is an :class:`InputError` naming the rule."""
        keys = ("width_mm", "length_mm", "fin_height_mm", "fin_thickness_mm", "n_fins",
                "base_thickness_mm")
        values = {}
        for k in keys:
            try:
                v = float(params[k])
            except (KeyError, TypeError, ValueError):
                raise InputError(f"the design has no number for {k}", source, k) from None
            if not (math.isfinite(v) and v > 0):
                raise InputError(f"{k} must be a positive number, got {params[k]!r}", source, k)
            values[k] = v
        n = int(round(values["n_fins"]))
        if n < 2:
            raise InputError(f"a plate-fin sink needs 2 fins or more, got {n}", source, "n_fins")
        if n * values["fin_thickness_mm"] >= values["width_mm"]:
            raise InputError(f"the fins do not fit on the base: {n} × "
                             f"{values['fin_thickness_mm']:g} mm >= width "
                             f"{values['width_mm']:g} mm", source, "n_fins")
        return cls(values["width_mm"], values["length_mm"], values["fin_height_mm"],
                   values["fin_thickness_mm"], n, values["base_thickness_mm"])

    @property
    def gap(self) -> float:
        """Clear gap between neighbouring fins [mm]."""
        return (self.width - self.n_fins * self.fin_thickness) / (self.n_fins - 1)

    @property
    def pitch(self) -> float:
        """Fin pitch, centre to centre [mm]."""
        return self.gap + self.fin_thickness

    @property
    def height(self) -> float:
        """Overall height, base underside to fin tips [mm]."""
        return self.base_thickness + self.fin_height

    def fin_left_edges(self) -> list[float]:
        return [i * self.pitch for i in range(self.n_fins)]

    def section_outline(self) -> list[tuple[float, float]]:
        """The closed profile across the fins (base underside at y = 0), counter-clockwise from
        the lower left corner: 4 N points."""
        tb, top, t = self.base_thickness, self.height, self.fin_thickness
        x = self.fin_left_edges()
        pts = [(0.0, 0.0), (self.width, 0.0)]
        for i in range(self.n_fins - 1, -1, -1):
            right = self.width if i == self.n_fins - 1 else x[i] + t
            if i < self.n_fins - 1:
                pts.append((right, tb))
            pts.append((right, top))
            pts.append((x[i], top))
            if i > 0:
                pts.append((x[i], tb))
        return pts


@dataclass(frozen=True)
class Footprint:
    """A device's footprint on the mounting face [mm]: centre x across the flow from the left
    edge, y along the flow from the inlet edge, and its size."""

    name: str
    center_x: float
    center_y: float
    size_x: float
    size_y: float


def footprints_of(devices: Iterable[Any]) -> list[Footprint]:
    """The footprints of a study's devices (:class:`sinkopt.model.design.Device`, SI)."""
    return [Footprint(d.name, d.center_x * 1e3, d.center_y * 1e3, d.size_x * 1e3, d.size_y * 1e3)
            for d in devices]


@dataclass(frozen=True)
class Line:
    p1: tuple[float, float]
    p2: tuple[float, float]
    layer: str = "OUTLINE"


@dataclass(frozen=True)
class Poly:
    points: tuple[tuple[float, float], ...]
    layer: str = "OUTLINE"
    closed: bool = True
    hatch: bool = False  #: a section: hatched (layer HATCH)


@dataclass(frozen=True)
class Text:
    x: float
    y: float
    text: str
    height: float
    align: str = "center"  #: "left", "center" or "right" of (x, y); y is the text's middle
    layer: str = "TEXT"
    rotation: float = 0.0  #: degrees, counter-clockwise
    bold: bool = False


@dataclass(frozen=True)
class Dim:
    """A linear dimension between ``p1`` and ``p2``: horizontal (the x distance, dimension line
    at y = ``at``) or vertical (the y distance, dimension line at x = ``at``). ``label`` is
    written before the value; ``text_at`` places the text away from the middle (a dimension too
    short to hold it; the arrows then point in from outside)."""

    p1: tuple[float, float]
    p2: tuple[float, float]
    at: float
    vertical: bool = False
    label: str = ""
    text_at: tuple[float, float] | None = None
    text_align: str = "left"  #: of the text at ``text_at``: "left" or "right" of the point

    @property
    def value(self) -> float:
        return abs(self.p2[1] - self.p1[1]) if self.vertical else abs(self.p2[0] - self.p1[0])

    @property
    def text(self) -> str:
        return (self.label + " " if self.label else "") + fmt_mm(self.value)


@dataclass
class View:
    name: str  #: DXF group name
    items: list = field(default_factory=list)


@dataclass
class Drawing:
    """Both views and the notes, in mm; ``text_height`` [mm] sets the size of texts, arrows and
    offsets."""

    shape: SinkShape
    views: list[View]
    notes: list[Text]
    text_height: float

    def items(self):
        for v in self.views:
            yield from v.items
        yield from self.notes


def design_drawing(shape: SinkShape, footprints: Sequence[Footprint] = (),
                   title: str = "", list_devices: bool = True) -> Drawing:
    """The section across the fins (at the origin) and the plan view (to its right) of a sink,
    with every dimension a maker needs: overall width and height, fin height, base thickness,
    fin thickness, gap and pitch; the length; each device's footprint, named, with its centre
    listed under the plan (unless ``list_devices`` is false: the design sheet lists them in
    its table)."""
    s = shape
    extent = max(s.width, s.length, s.height)
    h = 2.5 * max(1.0, extent / 120.0)  # ISO text 2.5 mm up to a 120 mm sink, then in step
    d = 3.2 * h  # spacing of dimension lines
    W, L, H, tb, t, top = s.width, s.length, s.fin_height, s.base_thickness, s.fin_thickness, s.height
    x = s.fin_left_edges()

    # --- section A-A across the fins, looking along the flow
    sec = View("SECTION_A_A")
    sec.items.append(Poly(tuple(s.section_outline()), "OUTLINE", True, hatch=True))
    sec.items.append(Dim((0.0, 0.0), (W, 0.0), -d, label="W"))
    def fits(value: float, label: str) -> bool:  # the text fits between the extension lines
        return value > 0.6 * h * len(f"{label} {fmt_mm(value)}") + 1.2 * h

    base_out = not fits(tb, "base")
    sec.items.append(Dim((W, 0.0), (W, tb), W + d, vertical=True, label="base",
                         text_at=(W + d + 0.8 * h, tb / 2) if base_out else None))
    fin_y = max(tb + H / 2, tb / 2 + 1.5 * h) if base_out else tb + H / 2
    sec.items.append(Dim((W, tb), (W, top), W + d, vertical=True, label="fin H",
                         text_at=None if fits(H, "fin H") else (W + d + 0.8 * h, fin_y)))
    sec.items.append(Dim((W, 0.0), (W, top), W + d + 7 * h, vertical=True))
    # fin thickness on the last fin (text to its right), gap and pitch between the first two
    # fins (text to their left when it does not fit between the extension lines)
    sec.items.append(Dim((W - t, top), (W, top), top + d, label="t",
                         text_at=None if fits(t, "t") else (W + 0.6 * h, top + d + 0.9 * h)))
    sec.items.append(Dim((x[0] + t, top), (x[1], top), top + d, label="gap",
                         text_at=None if fits(s.gap, "gap") else (-2.4 * h, top + d + 0.9 * h),
                         text_align="right"))
    sec.items.append(Dim((x[0], top), (x[1], top), top + 2 * d, label="pitch",
                         text_at=None if fits(s.pitch, "pitch")
                         else (-2.4 * h, top + 2 * d + 0.9 * h), text_align="right"))
    sec.items.append(Text(W / 2, top + 3 * d, f"{s.n_fins} fins, equally spaced over W",
                          h, "center"))
    sec.items.append(Text(W / 2, top + 3 * d + 1.8 * h, "SECTION A–A  across the fins", 1.2 * h,
                          "center", bold=True))
    sec.items.append(Text(W / 2, -d - 2.4 * h, "looking along the flow (air into the page)",
                          h, "center"))

    # --- plan from the fin side, inlet edge at the bottom
    x0 = W + d + 12.5 * h  # right of the section's vertical dimensions and texts
    plan = View("PLAN")
    plan.items.append(Poly(((x0, 0.0), (x0 + W, 0.0), (x0 + W, L), (x0, L)), "OUTLINE"))
    for i, xi in enumerate(x):
        for e in (xi, xi + t):
            if 1e-9 < e < W - 1e-9:
                plan.items.append(Line((x0 + e, 0.0), (x0 + e, L), "OUTLINE"))
    for f in footprints:
        fx0, fy0 = x0 + f.center_x - f.size_x / 2, f.center_y - f.size_y / 2
        plan.items.append(Poly(((fx0, fy0), (fx0 + f.size_x, fy0),
                                (fx0 + f.size_x, fy0 + f.size_y), (fx0, fy0 + f.size_y)),
                               "FOOTPRINTS"))
        c = min(f.size_x, f.size_y) * 0.15
        cx, cy = x0 + f.center_x, f.center_y
        plan.items.append(Line((cx - c, cy), (cx + c, cy), "FOOTPRINTS"))
        plan.items.append(Line((cx, cy - c), (cx, cy + c), "FOOTPRINTS"))
        plan.items.append(Text(cx, cy + c + 0.9 * h, f.name, h, "center", bold=True))
    plan.items.append(Dim((x0, 0.0), (x0 + W, 0.0), -d, label="W"))
    plan.items.append(Dim((x0 + W, 0.0), (x0 + W, L), x0 + W + d, vertical=True, label="L"))
    # the air's direction: an arrow left of the plan, pointing downstream
    xa = x0 - 2.0 * h
    ya = min(L, 8 * h)
    plan.items.append(Line((xa, 0.0), (xa, ya), "TEXT"))
    plan.items.append(Poly(((xa, ya + 1.6 * h), (xa - 0.6 * h, ya), (xa + 0.6 * h, ya)), "TEXT"))
    plan.items.append(Text(xa - 0.8 * h, ya / 2, "AIR", h, "center", rotation=90))
    plan.items.append(Text(x0 + W / 2, L + 1.6 * h, "outlet edge", h, "center"))
    plan.items.append(Text(x0 + W / 2, -d - 2.4 * h, "inlet edge", h, "center"))
    plan.items.append(Text(x0 + W / 2, L + 4.0 * h, "PLAN  from the fin side", 1.2 * h,
                           "center", bold=True))

    # --- notes and the device table, under both views
    notes: list[Text] = []
    y = -d - 5.5 * h
    lines = [title] if title else []
    lines += ["Dimensions in mm. The profile is uniform along L (section A–A anywhere along "
              "the flow).",
              "Devices sit on the mounting face under the base (dashed); positions are footprint "
              "centres: x from the left edge, y from the inlet edge.",
              MOUNTING_HOLES_NOTE]
    for f in footprints if list_devices else ():
        lines.append(f"{f.name}: centre x {fmt_mm(f.center_x)}, y {fmt_mm(f.center_y)}; "
                     f"footprint {fmt_mm(f.size_x)} × {fmt_mm(f.size_y)}")
    for k, text in enumerate(lines):
        notes.append(Text(0.0, y - k * 1.7 * h, text, h, "left", bold=bool(title) and k == 0))
    return Drawing(shape, [sec, plan], notes, h)


# ---------------------------------------------------------------- extents

def _text_box(t: Text) -> tuple[float, float, float, float]:
    w = 0.6 * t.height * len(t.text) * (1.1 if t.bold else 1.0)
    if t.rotation % 180 == 90:
        return (t.x - t.height / 2, t.y - w / 2, t.x + t.height / 2, t.y + w / 2)
    x1 = {"left": t.x, "center": t.x - w / 2, "right": t.x - w}[t.align]
    return (x1, t.y - t.height / 2, x1 + w, t.y + t.height / 2)


def _extents(drawing: Drawing) -> tuple[float, float, float, float]:
    xs, ys = [], []
    for it in drawing.items():
        if isinstance(it, Line):
            xs += [it.p1[0], it.p2[0]]
            ys += [it.p1[1], it.p2[1]]
        elif isinstance(it, Poly):
            xs += [p[0] for p in it.points]
            ys += [p[1] for p in it.points]
        elif isinstance(it, Text):
            x1, y1, x2, y2 = _text_box(it)
            xs += [x1, x2]
            ys += [y1, y2]
        elif isinstance(it, Dim):
            for t in _dim_texts(it, drawing.text_height):
                x1, y1, x2, y2 = _text_box(t)
                xs += [x1, x2]
                ys += [y1, y2]
            if it.vertical:
                xs.append(it.at)
                ys += [it.p1[1], it.p2[1]]
            else:
                ys.append(it.at)
                xs += [it.p1[0], it.p2[0]]
    return min(xs), min(ys), max(xs), max(ys)


def _dim_texts(dm: Dim, h: float) -> list[Text]:
    """Where a dimension's text goes: above the middle of its line (horizontal), left of it and
    rotated (vertical), or at ``text_at``."""
    if dm.text_at is not None:
        return [Text(dm.text_at[0], dm.text_at[1], dm.text, h, dm.text_align, "DIMENSIONS")]
    if dm.vertical:
        ym = (dm.p1[1] + dm.p2[1]) / 2
        return [Text(dm.at - 0.9 * h, ym, dm.text, h, "center", "DIMENSIONS", rotation=90)]
    xm = (dm.p1[0] + dm.p2[0]) / 2
    return [Text(xm, dm.at + 0.9 * h, dm.text, h, "center", "DIMENSIONS")]


# ---------------------------------------------------------------- SVG

def _svg_num(v: float) -> str:
    return f"{v:.4f}".rstrip("0").rstrip(".")


def drawing_svg(drawing: Drawing, margin_mm: float = 6.0) -> str:
    """The drawing as a standalone SVG document, 1:1 in mm (``width``/``height`` in mm)."""
    h = drawing.text_height
    x1, y1, x2, y2 = _extents(drawing)
    x1, y1, x2, y2 = x1 - margin_mm, y1 - margin_mm, x2 + margin_mm, y2 + margin_mm
    w, hh = x2 - x1, y2 - y1
    n = _svg_num

    def P(x, y):  # model (y up) -> SVG (y down)
        return f"{n(x)},{n(-y)}"

    def text_el(t: Text) -> str:
        anchor = {"left": "start", "center": "middle", "right": "end"}[t.align]
        tr = f' transform="rotate({n(-t.rotation)} {n(t.x)} {n(-t.y)})"' if t.rotation else ""
        weight = ' font-weight="bold"' if t.bold else ""
        return (f'<text x="{n(t.x)}" y="{n(-t.y + 0.35 * t.height)}" font-size="{n(t.height)}" '
                f'text-anchor="{anchor}"{weight}{tr}>{html.escape(t.text)}</text>')

    def arrow(tip, direction) -> str:
        (tx, ty), (dx, dy) = tip, direction  # direction: unit vector the arrow points along
        a, b = 0.9 * h, 0.25 * h
        bx, by = tx - a * dx, ty - a * dy
        return (f'<path d="M{P(tx, ty)} L{P(bx - b * dy, by + b * dx)} '
                f'L{P(bx + b * dy, by - b * dx)} Z"/>')

    def dim_el(dm: Dim) -> list[str]:
        out = []
        ext_gap, ext_over = 0.25 * h, 0.6 * h
        if dm.vertical:
            a, b = (dm.at, dm.p1[1]), (dm.at, dm.p2[1])
            for p in (dm.p1, dm.p2):
                sgn = 1 if dm.at >= p[0] else -1
                out.append(f'<line x1="{n(p[0] + sgn * ext_gap)}" y1="{n(-p[1])}" '
                           f'x2="{n(dm.at + sgn * ext_over)}" y2="{n(-p[1])}"/>')
            u = (0.0, 1.0 if b[1] >= a[1] else -1.0)
        else:
            a, b = (dm.p1[0], dm.at), (dm.p2[0], dm.at)
            for p in (dm.p1, dm.p2):
                sgn = 1 if dm.at >= p[1] else -1
                out.append(f'<line x1="{n(p[0])}" y1="{n(-(p[1] + sgn * ext_gap))}" '
                           f'x2="{n(p[0])}" y2="{n(-(dm.at + sgn * ext_over))}"/>')
            u = (1.0 if b[0] >= a[0] else -1.0, 0.0)
        outside = dm.value < 2.5 * h
        if outside:  # arrows outside pointing in, the line run on past them
            run = 1.8 * h
            out.append(f'<line x1="{n(a[0] - u[0] * run)}" y1="{n(-(a[1] - u[1] * run))}" '
                       f'x2="{n(b[0] + u[0] * run)}" y2="{n(-(b[1] + u[1] * run))}"/>')
            out += [arrow(a, u), arrow(b, (-u[0], -u[1]))]
        else:
            out.append(f'<line x1="{n(a[0])}" y1="{n(-a[1])}" x2="{n(b[0])}" y2="{n(-b[1])}"/>')
            out += [arrow(a, (-u[0], -u[1])), arrow(b, u)]
        out += [text_el(t) for t in _dim_texts(dm, h)]
        return out

    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{n(w)}mm" height="{n(hh)}mm" '
             f'viewBox="{n(x1)} {n(-y2)} {n(w)} {n(hh)}" font-family="DejaVu Sans, Arial, '
             f'Helvetica, sans-serif">',
             "<title>" + html.escape(drawing.notes[0].text if drawing.notes else "sink") +
             "</title>",
             f'<defs><pattern id="sinkopt-hatch" patternUnits="userSpaceOnUse" '
             f'width="{n(0.8 * h)}" height="{n(0.8 * h)}" patternTransform="rotate(45)">'
             f'<line x1="0" y1="0" x2="0" y2="{n(0.8 * h)}" stroke="#555" '
             f'stroke-width="{n(0.06 * h)}"/></pattern></defs>',
             '<rect x="{}" y="{}" width="{}" height="{}" fill="#fff"/>'.format(
                 n(x1), n(-y2), n(w), n(hh))]
    styles = {"OUTLINE": f'fill="none" stroke="#000" stroke-width="{n(0.14 * h)}"',
              "HATCH": 'fill="url(#sinkopt-hatch)" stroke="none"',
              "FOOTPRINTS": f'fill="none" stroke="#b22" stroke-width="{n(0.09 * h)}" '
                            f'stroke-dasharray="{n(0.9 * h)} {n(0.45 * h)}"',
              "DIMENSIONS": f'fill="#1a5e2a" stroke="#1a5e2a" stroke-width="{n(0.06 * h)}"',
              "TEXT": f'fill="#000" stroke="#000" stroke-width="{n(0.06 * h)}"'}
    for view in drawing.views:
        layers: dict[str, list[str]] = {k: [] for k in LAYERS}
        for it in view.items:
            if isinstance(it, Poly):
                pts = " ".join(P(*p) for p in it.points)
                tag = "polygon" if it.closed else "polyline"
                if it.hatch:
                    layers["HATCH"].append(f'<{tag} points="{pts}"/>')
                layers[it.layer].append(f'<{tag} points="{pts}"/>')
            elif isinstance(it, Line):
                layers[it.layer].append(f'<line x1="{n(it.p1[0])}" y1="{n(-it.p1[1])}" '
                                        f'x2="{n(it.p2[0])}" y2="{n(-it.p2[1])}"/>')
            elif isinstance(it, Text):
                layers[it.layer].append(text_el(it))
            elif isinstance(it, Dim):
                layers["DIMENSIONS"] += dim_el(it)
        parts.append(f'<g id="{view.name.lower().replace("_", "-")}">')
        for name in ("HATCH", "OUTLINE", "FOOTPRINTS", "DIMENSIONS", "TEXT"):
            if layers[name]:
                # texts are filled, not stroked
                parts.append(f'<g class="{name}" {styles[name]}>' + "".join(
                    e.replace("<text ", '<text stroke="none" ') for e in layers[name]) + "</g>")
        parts.append("</g>")
    parts.append('<g class="TEXT" fill="#000">' + "".join(
        text_el(t) for t in drawing.notes) + "</g>")
    parts.append("</svg>")
    return "\n".join(parts) + "\n"


# ---------------------------------------------------------------- DXF

def drawing_dxf(drawing: Drawing):
    """The drawing as an ezdxf document (R2010, units mm): the layers of :data:`LAYERS`, real
    DIMENSION entities (linear, DIMDEC 2), one group per view."""
    import ezdxf
    from ezdxf import units
    from ezdxf.enums import TextEntityAlignment

    h = drawing.text_height
    doc = ezdxf.new("R2010", setup=True)
    doc.units = units.MM
    doc.header["$MEASUREMENT"] = 1  # metric
    for name, (colour, ltype) in LAYERS.items():
        doc.layers.add(name, color=colour, linetype=ltype)
    msp = doc.modelspace()
    override = {"dimlfac": 1.0, "dimblk": "", "dimtsz": 0.0, "dimtxt": h, "dimasz": 0.9 * h, "dimexo": 0.25 * h, "dimexe": 0.6 * h,
                "dimgap": 0.3 * h, "dimdec": 2, "dimzin": 8, "dimtad": 1, "dimtih": 0,
                "dimtoh": 0, "dimclrd": 3, "dimclre": 3, "dimclrt": 3}
    align = {"left": TextEntityAlignment.MIDDLE_LEFT,
             "center": TextEntityAlignment.MIDDLE_CENTER,
             "right": TextEntityAlignment.MIDDLE_RIGHT}

    def text(t: Text):
        e = msp.add_text(t.text, height=t.height, rotation=t.rotation,
                         dxfattribs={"layer": t.layer, "style": "OpenSans"})
        e.set_placement((t.x, t.y), align=align[t.align])
        return [e]

    def item(it) -> list:
        if isinstance(it, Poly):
            out = [msp.add_lwpolyline(list(it.points), close=it.closed,
                                      dxfattribs={"layer": it.layer})]
            if it.hatch:
                hatch = msp.add_hatch(dxfattribs={"layer": "HATCH"})
                hatch.set_pattern_fill("ANSI31", scale=0.25 * h)
                hatch.paths.add_polyline_path(list(it.points), is_closed=True)
                out.append(hatch)
            return out
        if isinstance(it, Line):
            return [msp.add_line(it.p1, it.p2, dxfattribs={"layer": it.layer})]
        if isinstance(it, Text):
            return text(it)
        if isinstance(it, Dim):
            label = (it.label + " " if it.label else "") + "<>"
            if it.vertical:
                base = (it.at, (it.p1[1] + it.p2[1]) / 2)
                angle = 90
            else:
                base = ((it.p1[0] + it.p2[0]) / 2, it.at)
                angle = 0
            ov = dict(override)
            location = rotation = None
            if it.text_at is not None:
                rotation = 0.0
                half = 0.6 * h * len(it.text) / 2  # DXF places the text by its middle
                location = (it.text_at[0] + (half if it.text_align == "left" else -half),
                            it.text_at[1])
                ov["dimtmove"] = 2  # text moved freely, no leader
            dim = msp.add_linear_dim(base=base, p1=it.p1, p2=it.p2, location=location,
                                     text=label, angle=angle, text_rotation=rotation,
                                     override=ov,
                                     dxfattribs={"layer": "DIMENSIONS"})
            dim.render()
            return [dim.dimension]
        raise TypeError(type(it).__name__)

    for view in drawing.views:
        entities = []
        for it in view.items:
            entities += item(it)
        doc.groups.new(view.name, description=view.name.replace("_", " ").lower()
                       ).set_data(entities)
    for t in drawing.notes:
        text(t)
    return doc


# ---------------------------------------------------------------- the design sheet

SHEET_CSS = """
@page { size: A4 portrait; margin: 10mm; }
* { box-sizing: border-box; }
html { font-family: system-ui, -apple-system, 'Segoe UI', Roboto, Helvetica, Arial, sans-serif;
       font-size: 8pt; color: #111; }
body { margin: 0 auto; max-width: 190mm; padding: 4mm; }
h1 { font-size: 12.5pt; margin: 0 0 1mm; }
h2 { font-size: 8.8pt; margin: 1.6mm 0 0.6mm; border-bottom: 0.3mm solid #999; }
p { margin: 0.8mm 0; }
.sub { color: #444; }
.drawing { text-align: center; margin: 1mm 0; }
.drawing svg { max-width: 100%; max-height: 80mm; width: auto; height: auto; }
.cols { display: grid; grid-template-columns: 1fr 1fr; gap: 0 5mm; }
table { border-collapse: collapse; width: 100%; }
th, td { text-align: left; padding: 0.25mm 1.2mm 0.25mm 0; vertical-align: top; }
th { font-weight: 600; }
.cols th { width: 31%; }
td.n, th.n { text-align: right; }
table.devices th, table.devices td { border-bottom: 0.15mm solid #ccc; }
ul { margin: 0.5mm 0; padding-left: 4mm; }
li { margin: 0.3mm 0; }
.safety, .warnings { font-size: 7pt; }
.safety ul { margin: 0; }
.cmd { font-family: ui-monospace, Menlo, Consolas, monospace; font-size: 7pt;
       word-break: break-all; }
.print { float: right; }
@media print {
  .print { display: none; }
  body { padding: 0; max-width: none; }
  h2, table, .drawing, ul { break-inside: avoid; }
}
"""


def _f(v: Any, digits: int = 4, unit: str = "") -> str:
    if v is None or (isinstance(v, float) and not math.isfinite(v)):
        return "–"
    if isinstance(v, (int, float)):
        text = f"{v:.{digits}g}"
    else:
        text = str(v)
    return f"{text} {unit}".rstrip() if unit else text


def _rows(rows: Sequence[tuple[str, str]]) -> str:
    e = html.escape
    return "<table>" + "".join(f'<tr><th scope="row">{e(k)}</th><td>{e(v)}</td></tr>'
                               for k, v in rows) + "</table>"


def design_sheet(problem, record: dict[str, Any], svg: str, *, cautions: str,
                 picks: Sequence[str] = (), info: dict[str, Any] | None = None,
                 on_front: bool = True) -> str:
    """The one-page design sheet of a design (HTML, prints on one A4 page).

    Parameters
    ----------
    problem : sinkopt.model.problem.Problem
        The study (devices' positions, material, fans, conditions).
    record : dict
        The design's record (:func:`sinkopt.results.collect.design_record`).
    svg : str
        The design's drawing (:func:`drawing_svg`), embedded as is.
    cautions : str
        The cautions as HTML: the report's (``sinkopt.results.report.SAFETY_HTML``), so the
        sheet words them as the report and the README do.
    picks : sequence of str
        The short-list picks this design carries.
    info : dict, optional
        The run's ``run.json`` (sinkopt version, seed).
    on_front : bool
        False for a trial that is not a Pareto design (the sheet says so).
    """
    e = html.escape
    info = info or {}
    p = record["params"]
    shape = SinkShape.from_params(p)
    trial = record.get("trial")
    title = f"Design sheet: {problem.name}, trial {trial}"
    head = [f"<h1>{e(title)}</h1>"]
    sub = []
    if picks:
        sub.append("short list: " + ", ".join(picks))
    elif not on_front:
        sub.append("not a Pareto design (evaluated again here with the exact spreading series)")
    sub.append("meets every constraint" if record.get("feasible") else
               "VIOLATES A CONSTRAINT")
    sub.append(f"sinkopt {info.get('sinkopt') or ''}".strip())
    if info.get("seed") is not None:
        sub.append(f"seed {info['seed']}")
    sub.append(_dt.date.today().isoformat())
    head.append(f'<p class="sub">{e(" · ".join(sub))}</p>')

    geometry = [
        ("base width W × length L", f"{fmt_mm(shape.width)} × {fmt_mm(shape.length)} mm"),
        ("overall height", f"{fmt_mm(shape.height)} mm (base {fmt_mm(shape.base_thickness)} + "
                           f"fins {fmt_mm(shape.fin_height)})"),
        ("fins", f"{shape.n_fins} × {fmt_mm(shape.fin_thickness)} mm thick, gap "
                 f"{fmt_mm(shape.gap)} mm, pitch {fmt_mm(shape.pitch, 3)} mm"),
        ("volume, mass", f"{_f(record.get('volume_cm3'))} cm³, "
                         f"{_f(record.get('mass_kg'), 3)} kg"),
        ("process", f"{problem.process.name}"),
    ]
    still = getattr(problem, "still_air", None)
    finish = (f"{still.finish or 'as given'} (emissivity {still.emissivity:g})" if still else
              "not set in the study: agree it with the supplier (anodising changes neither "
              "the forced-air result nor the drawing's dimensions noticeably)")
    material = [("material", f"{problem.material_name} (k {problem.conductivity:g} W/(m·K), "
                             f"density {problem.density:g} kg/m³)"),
                ("finish", finish)]
    fan_label = record.get("fan") or p.get("fan")
    choice = problem.air.fan_choices().get(fan_label) if fan_label else None
    if choice:
        option, count = choice
        fan_rows = [("fan", f"{option.curve.name or option.key}"
                            + (f", {count} in {option.arrangement}" if count > 1 else "")),
                    ("curve file", Path(option.path).name),
                    ("speed", f"{_f(record.get('fan_speed_pct'), 3)} % of rated"
                              + (f" ({record['fan_speed_rpm']:.0f} rpm)"
                                 if record.get("fan_speed_rpm") else "")),
                    ("electrical power", _f(record.get("fan_power_W"), 3, "W")),
                    ("noise (estimate)", _f(record.get("noise_dBA"), 3, "dB(A)"))]
    else:
        fan_rows = [("fan", "none: the study gives the airflow")]
    q = record.get("airflow_m3_s")
    operating = [
        ("airflow", "–" if q is None else f"{q * 3600:.4g} m³/h ({q * 2118.88:.3g} cfm, "
                                           f"{q:.4g} m³/s)"),
        ("static pressure", f"{_f(record.get('pressure_drop_Pa'), 3, 'Pa')} (the sink "
                            f"{_f(record.get('sink_pressure_drop_Pa'), 3, 'Pa')})"),
        ("channel velocity", _f(record.get("channel_velocity_m_s"), 3, "m/s")),
        ("inlet air", f"{problem.conditions.ambient_C:g} °C (worst case) at "
                      f"{problem.conditions.altitude_m:g} m"),
        ("outlet air", f"{_f(record.get('air_outlet_C'), 4, '°C')} (mixed mean)"),
        ("sink resistance", _f(record.get("sink_resistance_K_per_W"), 3, "K/W")),
    ]
    by_name = {d.get("name"): d for d in record.get("devices", [])}
    dev_rows = []
    for dev, fp in zip(problem.devices, footprints_of(problem.devices)):
        d = by_name.get(dev.name, {})
        dev_rows.append("<tr>" + "".join(f'<td{c}>{e(v)}</td>' for c, v in (
            ("", dev.name), (' class="n"', f"{dev.power:g}"), ("", str(d.get("mounting", "–"))),
            (' class="n"', f"{fmt_mm(fp.center_x)}, {fmt_mm(fp.center_y)}"),
            (' class="n"', f"{fmt_mm(fp.size_x)} × {fmt_mm(fp.size_y)}"),
            (' class="n tj"', _f(d.get("junction_C"), 4)),
            (' class="n"', f"{dev.tj_max:g}"),
            (' class="n"', _f(d.get("margin_K"), 3)))) + "</tr>")
    devices = ('<table class="devices"><thead><tr><th>device</th><th class="n">power [W]</th>'
               '<th>mounting</th><th class="n">centre x, y [mm]</th>'
               '<th class="n">footprint [mm]</th><th class="n">T<sub>j</sub> [°C]</th>'
               '<th class="n">T<sub>j,max</sub> [°C]</th><th class="n">margin [K]</th></tr>'
               "</thead><tbody>" + "".join(dev_rows) + "</tbody></table>")
    need = problem.limits.min_junction_margin_K
    notes = [f"Worst junction margin {_f(record.get('worst_margin_K'), 3)} K "
             f"(required {need:g} K), nominal model at the worst-case inlet air."]
    band = record.get("uncertainty")
    if band:
        notes.append(f"Under the stated uncertainty: P95 worst margin "
                     f"{_f(band.get('p95_margin_K'), 3)} K, pessimistic corner "
                     f"{_f(band.get('pessimistic_margin_K'), 3)} K, probability of exceeding a "
                     f"limit {_f(band.get('p_exceed'), 2)}.")
    failed = record.get("failed_fan")
    if failed and failed.get("applies"):
        notes.append(f"With one fan stopped: worst margin {_f(failed.get('worst_margin_K'), 3)} K.")
    still_rec = record.get("fans_stopped")
    if still_rec:
        notes.append(f"After a fan stop at full load, the first junction reaches its limit in "
                     f"{_f(still_rec.get('time_to_limit_after_fan_stop_s'), 3)} s.")
    warnings = record.get("warnings") or []
    warn_html = ('<ul class="warnings">' + "".join(f"<li>{e(str(w))}</li>" for w in warnings[:4]) +
                 (f"<li>… {len(warnings) - 4} more in the report</li>" if len(warnings) > 4
                  else "") + "</ul>") if warnings else "<p>None: every correlation within its range.</p>"
    command = record.get("evaluate_command") or ""
    body = [
        '<button class="print" type="button" onclick="window.print()">Print</button>',
        *head,
        f'<div class="drawing">{svg}</div>',
        '<div class="cols"><div>', "<h2>Geometry</h2>", _rows(geometry),
        "<h2>Material and finish</h2>", _rows(material), "</div><div>",
        "<h2>Fan</h2>", _rows(fan_rows), "<h2>Operating point</h2>", _rows(operating),
        "</div></div>",
        "<h2>Junction temperatures and margins</h2>", devices,
        "<p>" + e(" ".join(notes)) + "</p>",
        "<h2>Warnings</h2>", warn_html,
        "<h2>Cautions</h2>", f'<div class="safety">{cautions}</div>',
        f'<p class="cmd">{e(command)}</p>',
    ]
    csp = ("default-src 'none'; style-src 'unsafe-inline'; script-src 'unsafe-inline'; "
           "img-src data:")
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f'<meta http-equiv="Content-Security-Policy" content="{csp}">'
            f"<title>{e(title)}</title><style>{SHEET_CSS}</style></head>\n<body>\n"
            + "\n".join(body) + "\n</body></html>\n")


# ---------------------------------------------------------------- files

def file_names(trial: int) -> dict[str, str]:
    """The three files of a design: ``svg``, ``dxf`` and ``sheet``."""
    return {"svg": f"design-{trial}.svg", "dxf": f"design-{trial}.dxf",
            "sheet": f"design-{trial}-sheet.html"}


def design_files(problem, record: dict[str, Any], *, cautions: str, picks: Sequence[str] = (),
                 info: dict[str, Any] | None = None, on_front: bool = True):
    """A design's SVG text, DXF document and sheet HTML (nothing written)."""
    shape = SinkShape.from_params(record["params"], source=f"trial {record.get('trial')}")
    title = f"{problem.name}: trial {record.get('trial')}"
    if picks:
        title += " (" + ", ".join(picks) + ")"
    drawing = design_drawing(shape, footprints_of(problem.devices), title)
    svg = drawing_svg(drawing)
    compact = drawing_svg(design_drawing(shape, footprints_of(problem.devices), title,
                                         list_devices=False))
    sheet = design_sheet(problem, record, compact, cautions=cautions, picks=picks, info=info,
                         on_front=on_front)
    return svg, drawing_dxf(drawing), sheet


def _write_text(path: Path, text: str) -> None:
    tmp = path.with_name(f".{path.name}.tmp{os.getpid()}")
    tmp.write_text(text, encoding="utf-8")
    os.replace(tmp, path)


def write_design_files(folder, problem, record: dict[str, Any], *, cautions: str,
                       picks: Sequence[str] = (), info: dict[str, Any] | None = None,
                       on_front: bool = True) -> dict[str, Path]:
    """Write ``design-N.svg``, ``design-N.dxf`` and ``design-N-sheet.html`` into ``folder``
    (each written to a temporary name and renamed into place); returns their paths."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    svg, doc, sheet = design_files(problem, record, cautions=cautions, picks=picks, info=info,
                                   on_front=on_front)
    names = file_names(int(record["trial"]))
    paths = {k: folder / v for k, v in names.items()}
    _write_text(paths["svg"], svg)
    _write_text(paths["sheet"], sheet)
    tmp = paths["dxf"].with_name(f".{paths['dxf'].name}.tmp{os.getpid()}")
    doc.saveas(tmp)
    os.replace(tmp, paths["dxf"])
    return paths


def drawing_trials(results) -> list[int]:
    """The designs whose drawings the report carries: the short list's designs (in its order,
    each once), or, without a short list, the first :data:`MAX_REPORT_DRAWINGS` Pareto designs."""
    out: list[int] = []
    short = getattr(results, "short_list", None)
    for p in (short() if short else []):
        if int(p["trial"]) not in out:
            out.append(int(p["trial"]))
    if not out:
        out = [int(t) for t in list(results.pareto_trials)[:MAX_REPORT_DRAWINGS]]
    return out


def picks_by_trial(picks: Sequence[dict[str, Any]]) -> dict[int, list[str]]:
    out: dict[int, list[str]] = {}
    for p in picks:
        out.setdefault(int(p["trial"]), []).append(str(p["pick"]))
    return out


def write_report_drawings(results, folder, info: dict[str, Any] | None = None, *,
                          cautions: str, records: Sequence[dict[str, Any]] | None = None
                          ) -> list[int]:
    """Write the drawings of :func:`drawing_trials` into ``folder`` (the report's
    ``drawings/``); returns the trials drawn. Other files there (``sinkopt drawing`` of other
    trials) are left alone."""
    folder = Path(folder)
    trials = drawing_trials(results)
    if not trials:
        return []
    wanted = set(trials)
    records = results.pareto_records() if records is None else records
    picks = picks_by_trial(results.short_list())
    for rec in records:
        if int(rec["trial"]) in wanted:
            write_design_files(folder, results.problem, rec, cautions=cautions,
                               picks=picks.get(int(rec["trial"]), ()), info=info)
    return trials
