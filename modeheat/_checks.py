"""The argument checks every module shares: one wording, one rule.

Each returns the value as a float or raises :class:`~modeheat.errors.InputError`
naming the argument (and the file, where one is given).
"""

from __future__ import annotations

import math

from .errors import InputError
from .units import ATOMS_RANGE

__all__ = ["number", "finite", "positive", "non_negative", "atoms"]


def number(label: str, value, *, path=None) -> float:
    """`value` as a float (it may be infinite or NaN); `label` names it in the error."""
    if isinstance(value, bool):
        raise InputError(f"{label} must be a number, not {value!r}", path=path)
    try:
        return float(value)
    except (TypeError, ValueError):
        raise InputError(f"{label} must be a number, not {value!r}", path=path) from None


def finite(label: str, value, *, path=None) -> float:
    """A finite number."""
    v = number(label, value, path=path)
    if not math.isfinite(v):
        raise InputError(f"{label} must be a finite number, not {value!r}", path=path)
    return v


def positive(label: str, value, *, path=None) -> float:
    """A finite number > 0."""
    v = number(label, value, path=path)
    if not (math.isfinite(v) and v > 0):
        raise InputError(f"{label} must be a positive number, not {value!r}", path=path)
    return v


def non_negative(label: str, value, *, path=None) -> float:
    """A finite number ≥ 0."""
    v = number(label, value, path=path)
    if not (math.isfinite(v) and v >= 0):
        raise InputError(f"{label} must be ≥ 0 and finite, not {value!r}", path=path)
    return v


def atoms(value, *, path=None) -> float:
    """Atoms per formula unit: positive, inside :data:`~modeheat.units.ATOMS_RANGE`."""
    a = positive("atoms", value, path=path)
    lo, hi = ATOMS_RANGE
    if not lo <= a <= hi:
        raise InputError(f"atoms = {a:g} per formula unit is outside {lo:g}–{hi:g}", path=path)
    return a
