"""The things a design is made of: sink geometry (a batch), material, devices and their mounting
stacks, ambient conditions and model options. Plain dataclasses in SI units; no physics here.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from sinkopt.errors import GeometryError
from sinkopt.physics import stack as stk

__all__ = [
    "SinkGeometry",
    "SlabLayer",
    "ViaLayer",
    "MountingStack",
    "Device",
    "Conditions",
    "ModelOptions",
    "check_geometry",
]


@dataclass(frozen=True)
class SinkGeometry:
    """A batch of plate-fin geometries; every field is an array of shape (n,) [m] or [-]."""

    width: np.ndarray  #: base width across the flow W [m]
    length: np.ndarray  #: base length along the flow L [m]
    fin_height: np.ndarray  #: H [m] (above the base)
    fin_thickness: np.ndarray  #: t [m]
    n_fins: np.ndarray  #: N [-]
    base_thickness: np.ndarray  #: t_b [m]

    @classmethod
    def of(cls, **values) -> "SinkGeometry":
        """Build from scalars or arrays, broadcast to one common shape (n,)."""
        arrays = np.broadcast_arrays(*(np.atleast_1d(np.asarray(values[k], dtype=float))
                                       for k in cls.__dataclass_fields__))
        return cls(*(np.ascontiguousarray(a) for a in arrays))

    def __len__(self) -> int:
        return int(self.width.shape[0])

    def take(self, index) -> "SinkGeometry":
        return SinkGeometry(*(getattr(self, k)[index] for k in self.__dataclass_fields__))


@dataclass(frozen=True)
class SlabLayer:
    """A uniform layer in the heat path (insulating pad, ceramic, copper spreader...)."""

    name: str
    thickness: float  #: [m]
    conductivity: float  #: [W/(m K)]
    area: float  #: conduction area [m^2]

    def resistance(self) -> float:
        return float(stk.resistance_slab(self.thickness, self.conductivity, self.area))


@dataclass(frozen=True)
class ViaLayer:
    """A printed board under the device pad, with an array of plated thermal vias."""

    name: str
    count: int
    drill_diameter: float  #: [m]
    plating_thickness: float  #: [m]
    board_thickness: float  #: [m]
    pad_area: float  #: [m^2]
    copper_conductivity: float | None = None  #: [W/(m K)], None: the stack module's default
    board_conductivity: float | None = None  #: [W/(m K)], None: the stack module's default

    def resistance(self) -> float:
        extra = {}
        if self.copper_conductivity is not None:
            extra["copper_conductivity"] = self.copper_conductivity
        if self.board_conductivity is not None:
            extra["board_conductivity"] = self.board_conductivity
        return float(stk.resistance_via_array(self.count, self.drill_diameter,
                                              self.plating_thickness, self.board_thickness,
                                              self.pad_area, **extra))


@dataclass(frozen=True)
class MountingStack:
    """Case-to-sink heat path of one device: layers in series plus the interface to the sink."""

    name: str
    layers: tuple[SlabLayer | ViaLayer, ...] = ()
    interface: str = "grease"  #: interface material name (catalog)
    interface_specific_resistance: float = 0.0  #: [K m^2/W]
    contact_area: float = 1e-4  #: [m^2]

    def layer_resistances(self) -> list[tuple[str, float]]:
        parts = [(layer.name, layer.resistance()) for layer in self.layers]
        parts.append((f"interface ({self.interface})",
                      float(stk.resistance_interface(self.interface_specific_resistance,
                                                     self.contact_area))))
        return parts

    def resistance(self) -> float:
        """Case-to-sink-base resistance [K/W]."""
        return sum(r for _, r in self.layer_resistances())


@dataclass(frozen=True)
class Device:
    """A heat source on the sink base. Positions are of the footprint centre: x across the flow
    from the left edge, y along the flow from the inlet edge [m]."""

    name: str
    power: float  #: [W]
    tj_max: float  #: [°C]
    r_jc: float  #: junction to case [K/W]
    center_x: float  #: [m]
    center_y: float  #: [m]
    size_x: float  #: footprint across the flow [m]
    size_y: float  #: footprint along the flow [m]
    stacks: tuple[MountingStack, ...] = field(default_factory=tuple)
    #: Junction-to-case transient impedance as a Foster network (R_i [K/W], τ_i [s]) from the
    #: datasheet's Z_th curve; empty: a single time constant (docs/theory.md#transient-thermal-networks).
    foster_r: tuple[float, ...] = ()
    foster_tau: tuple[float, ...] = ()


@dataclass(frozen=True)
class Conditions:
    ambient_C: float  #: worst-case inlet air temperature [°C]
    altitude_m: float = 0.0  #: [m]
    required_margin_K: float = 0.0  #: junction margin every device must keep [K]


@dataclass(frozen=True)
class ModelOptions:
    heat_transfer: str = "teertstra"
    hydraulic_diameter: str = "parallel_plates"
    exit_loss: str = "culham_muzychka"
    fin_tip: str = "adiabatic"
    #: Base spreading: ``coarse``: the exact Fourier series truncated to ``coarse_terms`` (the
    #: search's default: within ~1.5 % of the full series, 0.1 K, on multi-device layouts);
    #: ``fast``: the Song–Lee–Au closed form (position-blind: measured up to 50 % off the series
    #: for devices near an edge or each other); ``exact``: the series with ``series_terms``
    #: (every reported design).
    spreading: str = "coarse"
    coarse_terms: int = 20
    #: ``local``: each device sees the mixed-mean air temperature at its centre (upstream
    #: devices' heat included); ``lumped``: one inlet-referenced sink resistance (docs/theory.md#ref-1-golden-case).
    air_heating: str = "local"
    series_terms: int = 300
    #: Calibration multipliers from a prototype's measurements (``sinkopt calibrate``); 1 = the
    #: published correlations as they are (docs/theory.md#calibration-from-measurements).
    heat_transfer_multiplier: float = 1.0
    friction_multiplier: float = 1.0
    loss_multiplier: float = 1.0


@dataclass(frozen=True)
class Perturbation:
    """Per-design factors on the model's uncertain inputs (the uncertainty band's samples and
    pessimistic corner); None = the nominal value. Shapes: (n,) or, per device, (n, s).

    ``heat_transfer`` multiplies h, ``pressure_drop`` the sink's friction and loss coefficients,
    ``fan_flow`` the fans' flow at a given pressure, ``power``/``r_jc``/``r_stack`` each device's
    loss, junction-to-case and case-to-base resistance; ``ambient_K`` is added to the ambient.
    """

    heat_transfer: np.ndarray | None = None
    pressure_drop: np.ndarray | None = None
    fan_flow: np.ndarray | None = None
    power: np.ndarray | None = None
    r_jc: np.ndarray | None = None
    r_stack: np.ndarray | None = None
    ambient_K: np.ndarray | None = None

    def take(self, index) -> "Perturbation":
        return Perturbation(**{f: None if getattr(self, f) is None else
                               np.asarray(getattr(self, f))[index]
                               for f in self.__dataclass_fields__})


def _first_bad(mask: np.ndarray) -> int:
    return int(np.flatnonzero(mask)[0])


def check_geometry(geometry: SinkGeometry, devices: Sequence[Device] = (),
                   label: str = "design") -> None:
    """Raise :class:`GeometryError` naming the field and rule for a geometry that cannot exist.

    Rules: every dimension > 0; at least 2 fins (one channel); the fins fit on the base
    (N t < W, so the gap is positive); each device footprint lies on the base.
    """
    g = geometry
    for name in ("width", "length", "fin_height", "fin_thickness", "base_thickness"):
        v = getattr(g, name)
        bad = ~(v > 0) | ~np.isfinite(v)
        if bad.any():
            i = _first_bad(bad)
            raise GeometryError(f"`{name} > 0` must hold, but got {name}={v[i]!r} m",
                                field=f"{label}[{i}].{name}")
    bad = ~(g.n_fins >= 2) | (g.n_fins != np.round(g.n_fins))
    if bad.any():
        i = _first_bad(bad)
        raise GeometryError(f"`n_fins` must be a whole number >= 2 (one channel at least), "
                            f"but got n_fins={g.n_fins[i]!r}", field=f"{label}[{i}].n_fins")
    bad = g.n_fins * g.fin_thickness >= g.width
    if bad.any():
        i = _first_bad(bad)
        raise GeometryError(
            f"the fins must fit on the base (`n_fins * fin_thickness < width`, i.e. a positive "
            f"fin gap), but {g.n_fins[i]:g} x {g.fin_thickness[i] * 1e3:g} mm = "
            f"{g.n_fins[i] * g.fin_thickness[i] * 1e3:g} mm >= width {g.width[i] * 1e3:g} mm",
            field=f"{label}[{i}].n_fins")
    for d in devices:
        for axis, size, extent in (("x", d.size_x, g.width), ("y", d.size_y, g.length)):
            centre = d.center_x if axis == "x" else d.center_y
            bad = (centre - size / 2 < -1e-12) | (centre + size / 2 > extent + 1e-12)
            if bad.any():
                i = _first_bad(bad)
                raise GeometryError(
                    f"device footprint must lie on the base: centre_{axis} {centre * 1e3:g} mm "
                    f"± {size * 500:g} mm leaves 0..{extent[i] * 1e3:g} mm",
                    field=f"device {d.name!r}.center_{axis}")
