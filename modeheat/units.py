"""Frequency units and the physical constants every module shares.

Frequencies are carried internally as temperature equivalents θ = ħω/k in kelvin,
so that the argument of every thermal function is the dimensionless x = θ/T.
Constants come from :mod:`scipy.constants` (CODATA).
"""

from __future__ import annotations

import numpy as np
from scipy import constants as _c

from .errors import InputError

__all__ = [
    "R",
    "FREQUENCY_UNITS",
    "KELVIN_RANGE",
    "ATOMS_RANGE",
    "kelvin_per",
    "to_kelvin",
    "from_kelvin",
    "check_unit",
    "check_kelvin",
]

#: Molar gas constant in J/(mol K) (CODATA, via scipy.constants).
R: float = _c.R

#: Kelvin of temperature equivalent per one of each frequency unit.
FREQUENCY_UNITS: dict[str, float] = {
    "K": 1.0,
    "THz": _c.h * 1e12 / _c.k,
    "meV": 1e-3 * _c.e / _c.k,
    "cm-1": _c.h * _c.c * 100.0 / _c.k,
    "rad/s": _c.hbar / _c.k,
}

#: Temperatures and temperature equivalents modeheat accepts, in K.  Far wider than any
#: solid (nuclear Schottky levels ~1e-6 K, phonons < 1e4 K), and narrow enough that the
#: powers θ^±10 and x = θ/T the numerics form stay finite and normal in double precision.
KELVIN_RANGE: tuple[float, float] = (1e-12, 1e12)

#: Atoms per formula unit modeheat accepts: beyond any real formula unit on both sides,
#: and narrow enough that 3·atoms·R and the per-mode heat capacities stay finite.
ATOMS_RANGE: tuple[float, float] = (1e-6, 1e9)

_ALIASES = {
    "k": "K",
    "kelvin": "K",
    "thz": "THz",
    "mev": "meV",
    "cm-1": "cm-1",
    "cm^-1": "cm-1",
    "1/cm": "cm-1",
    "cm⁻¹": "cm-1",
    "wavenumber": "cm-1",
    "rad/s": "rad/s",
    "rad s-1": "rad/s",
}


def check_unit(unit: str) -> str:
    """Return the canonical spelling of a frequency unit, or raise :class:`InputError`."""
    if unit in FREQUENCY_UNITS:
        return unit
    key = str(unit).strip().lower()
    if key in _ALIASES:
        return _ALIASES[key]
    raise InputError(
        f"unknown frequency unit {unit!r}; expected one of {', '.join(FREQUENCY_UNITS)}"
    )


def kelvin_per(unit: str) -> float:
    """Kelvin of temperature equivalent per one `unit` of frequency."""
    return FREQUENCY_UNITS[check_unit(unit)]


def to_kelvin(values, unit: str) -> np.ndarray:
    """Frequencies in `unit` → temperature equivalents in K."""
    return np.asarray(values, dtype=float) * kelvin_per(unit)


def from_kelvin(values, unit: str) -> np.ndarray:
    """Temperature equivalents in K → frequencies in `unit`."""
    return np.asarray(values, dtype=float) / kelvin_per(unit)


def check_kelvin(label: str, value: float) -> float:
    """`value` (K) as a float if it lies in :data:`KELVIN_RANGE`, else an :class:`InputError`."""
    lo, hi = KELVIN_RANGE
    if not lo <= value <= hi:
        raise InputError(f"{label} = {value:.6g} K lies outside the {lo:g}–{hi:g} K that modeheat can evaluate")
    return float(value)
