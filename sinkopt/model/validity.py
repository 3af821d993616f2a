"""Validity ranges of the correlations, as data in one registry.

The model reports, per design, every correlation whose published range the design leaves; they
are reported as warnings (and can be made constraints), never ignored.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Correlation", "REGISTRY", "out_of_range", "describe"]


@dataclass(frozen=True)
class Correlation:
    name: str  #: the function that implements it
    quantity: str  #: key of the evaluated quantity the range applies to
    low: float
    high: float
    source: str
    applies_when: str | None = None  #: key of a boolean array: only checked where it is True


REGISTRY: tuple[Correlation, ...] = (
    Correlation("nu_plate_fin_teertstra_2000", "reynolds_channel_star", 0.1, 100.0,
                "Teertstra, Yovanovich & Culham 2000 (range from memory)", "uses_teertstra"),
    Correlation("laminar_turbulent_transition", "transition_blend", 0.0, 0.0,
                "Re_Dh 2300-4000: laminar and turbulent results blended, lower confidence "
                "(common practice)", "always"),
    Correlation("nu_turbulent_gnielinski_1976", "reynolds_dh", 2300.0, 5e6, "Gnielinski 1976",
                "uses_turbulent"),
    Correlation("fin_corrected_length", "tip_biot_root", 0.0, 0.0625,
                "Bergman et al. 2011 §3.6.4 (from memory)", "uses_corrected_length"),
    Correlation("resistance_spreading_song_lee_au_1994", "sla_relative_radius", 0.0, 1.0,
                "Song, Lee & Au 1994: source smaller than the base", "uses_fast_spreading"),
    Correlation("air_properties_in_tool", "air_temperature_K", 233.15, 373.15,
                "Sutherland fits checked against CoolProp 0-80 °C (docs/theory.md#air-properties)", "always"),
    # Natural convection (sinkopt.physics.natural_convection); inert until the model provides
    # these quantities and flags.
    Correlation("nu_vertical_channel_bar_cohen_rohsenow_1984", "elenbaas_number", 0.1, 1e5,
                "Bar-Cohen & Rohsenow 1984, Elenbaas 1942 data (range from memory)",
                "uses_natural_fins_vertical"),
    Correlation("natural_convection_channel_laminar", "rayleigh_channel_length", 0.0, 1e9,
                "laminar vertical plate Ra_L <= 1e9, Bergman et al. 2011 §9.6",
                "uses_natural_fins_vertical"),
    Correlation("nu_vertical_plate_churchill_chu_1975", "rayleigh_vertical_plate", 0.1, 1e12,
                "Churchill & Chu 1975", "uses_natural_convection"),
    Correlation("nu_horizontal_plate_up_mcadams_1954", "rayleigh_horizontal_plate", 1e4, 1e11,
                "McAdams 1954, Bergman et al. 2011 eqs 9.30-9.31", "uses_natural_face_up"),
    Correlation("nu_horizontal_plate_down_mcadams_1954", "rayleigh_horizontal_plate", 1e5, 1e10,
                "McAdams 1954, Bergman et al. 6th ed. eq 9.32 (from memory)",
                "uses_natural_face_down"),
)


def out_of_range(quantities: dict[str, np.ndarray], n: int) -> dict[str, np.ndarray]:
    """Boolean arrays (n,) per correlation name: True where the design leaves the range."""
    flags: dict[str, np.ndarray] = {}
    for c in REGISTRY:
        if c.quantity not in quantities:
            continue
        value = np.broadcast_to(np.asarray(quantities[c.quantity], dtype=float), (n,))
        when = (np.ones(n, dtype=bool) if c.applies_when in (None, "always")
                else np.broadcast_to(np.asarray(quantities.get(c.applies_when, False)), (n,)))
        bad = when & ~((value >= c.low) & (value <= c.high))
        flags[c.name] = flags.get(c.name, np.zeros(n, dtype=bool)) | bad
    return flags


def describe(name: str, quantities: dict[str, np.ndarray], i: int) -> str:
    """One warning line: the correlation, the value that left the range, the range, the source."""
    for c in REGISTRY:
        if c.name == name:
            value = np.broadcast_to(np.asarray(quantities.get(c.quantity, np.nan), dtype=float),
                                    np.shape(quantities.get("reynolds_dh", [0])))
            v = float(value[i]) if value.ndim else float(value)
            if c.quantity == "transition_blend":
                return f"{name}: Re_Dh = {float(quantities['reynolds_dh'][i]):.0f}; {c.source}"
            return (f"{name}: {c.quantity} = {v:.4g} outside {c.low:g}..{c.high:g} "
                    f"({c.source})")
    return f"{name}: outside its validity range"
