"""The measured points every fit and analysis reads: data sets, windows, uncertainties."""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..errors import InputError
from ..units import KELVIN_RANGE

__all__ = []


# C = (12π⁴/5)·atoms·R·(T/θ)³ at low T: the Debye T³ law per 3·atoms modes.
_T3 = 12.0 * math.pi**4 / 5.0

# --- data ---------------------------------------------------------------------------------------
@dataclass(frozen=True)
class _Points:
    T: np.ndarray
    C: np.ndarray
    sigma: np.ndarray | None
    dataset: np.ndarray  # index of the data set each point came from
    names: tuple[str, ...]


_SIGMA_FLOOR = 1e-30  # J/(mol K): smallest uncertainty accepted
_SIGMA_RELATIVE = 1e-12  # smallest uncertainty relative to the largest heat capacity of its set


def _data_sets(data) -> list[pd.DataFrame]:
    if isinstance(data, pd.DataFrame):
        return [data]
    if isinstance(data, (list, tuple)) and data and all(isinstance(d, pd.DataFrame) for d in data):
        return list(data)
    raise InputError("data must be a DataFrame with columns T and C (and optionally sigma), or a list of them")


def _points(data, tmin: float | None, tmax: float | None) -> _Points:
    """Every point of every data set inside [tmin, tmax], validated."""
    sets = _data_sets(data)
    with_sigma = ["sigma" in d.columns for d in sets]
    if any(with_sigma) and not all(with_sigma):
        raise InputError(
            "some data sets have a sigma column and others do not: give every set its uncertainties, or "
            "drop them all for an unweighted fit"
        )
    Ts, Cs, Ss, Ks, names = [], [], [], [], []
    for k, frame in enumerate(sets):
        label = frame.attrs.get("name") or f"data set {k}"
        names.append(str(label))
        for col in ("T", "C"):
            if col not in frame.columns:
                raise InputError(f"{label}: no column {col!r}; expected T [K], C [J/(mol K)] and optionally sigma")
        cols = ["T", "C"] + (["sigma"] if with_sigma[k] else [])
        try:
            values = frame[cols].to_numpy(dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"{label}: the columns {', '.join(cols)} must hold numbers") from None
        lo, hi = KELVIN_RANGE
        bad = ~np.isfinite(values).all(axis=1) | ~((values[:, 0] >= lo) & (values[:, 0] <= hi))
        if with_sigma[k]:
            # An uncertainty this far below the data scale would overflow the weights T/σ.
            floor = max(_SIGMA_FLOOR, _SIGMA_RELATIVE * float(np.max(np.abs(values[:, 1]), initial=0.0)))
            bad |= ~(values[:, 2] >= floor)
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            raise InputError(
                f"{label}: row {i} ({', '.join(f'{c} = {v:g}' for c, v in zip(cols, values[i]))}) needs T in "
                f"{lo:g}–{hi:g} K, finite values and sigma ≥ {_SIGMA_FLOOR:g} J/(mol K) and ≥ {_SIGMA_RELATIVE:g} of the largest C"
            )
        keep = np.ones(len(values), dtype=bool)
        if tmin is not None:
            keep &= values[:, 0] >= tmin
        if tmax is not None:
            keep &= values[:, 0] <= tmax
        v = values[keep]
        Ts.append(v[:, 0])
        Cs.append(v[:, 1])
        Ss.append(v[:, 2] if with_sigma[k] else None)
        Ks.append(np.full(len(v), k))
    sigma = np.concatenate(Ss) if all(with_sigma) else None
    return _Points(np.concatenate(Ts), np.concatenate(Cs), sigma, np.concatenate(Ks), tuple(names))


def _window_text(tmin, tmax) -> str:
    lo = "0" if tmin is None else f"{tmin:g}"
    hi = "∞" if tmax is None else f"{tmax:g}"
    return f"{lo}–{hi} K"


def _check_window(tmin, tmax) -> None:
    for label, v in (("tmin", tmin), ("tmax", tmax)):
        if v is not None and not (isinstance(v, numbers.Real) and math.isfinite(v) and v > 0):
            raise InputError(f"{label} must be a positive temperature in K, not {v!r}")
    if tmin is not None and tmax is not None and tmin >= tmax:
        raise InputError(f"tmin ({tmin:g} K) must be below tmax ({tmax:g} K)")
