"""Frequency units and the physical constants every module shares.

Frequencies are carried internally as temperature equivalents θ = ħω/k in kelvin,
so that the argument of every thermal function is the dimensionless x = θ/T.
Constants come from :mod:`scipy.constants` (CODATA).
"""

from __future__ import annotations

import numpy as np
from scipy import constants as _c

from .errors import InputError

__all__ = ["R", "FREQUENCY_UNITS", "kelvin_per", "to_kelvin", "from_kelvin", "check_unit"]

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
