"""Heat capacity, entropy, energy, free energy and the effective Debye temperature.

Every function takes a *source* — a :class:`~modeheat.Spectrum`, a model component
or a mixture — and temperatures in K.  Results are molar: per mole of formula units
(``per="formula"``, the default) or per mole of atoms (``per="atom"``).  Energies
include the zero-point energy.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pandas as pd

from . import special
from ._engine import ModeSet
from .errors import InputError, NoDebyeTemperatureWarning
from .units import R

__all__ = [
    "thermo",
    "heat_capacity",
    "entropy",
    "internal_energy",
    "free_energy",
    "zero_point_energy",
    "effective_debye_temperature",
    "basis_text",
    "CAUTION",
]

#: The caution every export carries.
CAUTION = (
    "Harmonic-model estimates. Verify against measurements before use in cryogenic or "
    "thermal design, and defer to applicable codes and licensed engineering practice."
)

_PER = ("formula", "atom", "gram")


def _modeset(source) -> ModeSet:
    if isinstance(source, ModeSet):
        return source
    get = getattr(source, "modeset", None)
    if get is None:
        raise TypeError(
            f"cannot compute thermodynamics of {type(source).__name__}: expected a Spectrum, "
            "a model component or a mixture"
        )
    return get()


def _temperatures(temperatures) -> np.ndarray:
    T = np.atleast_1d(np.asarray(temperatures, dtype=float))
    if T.ndim != 1:
        raise InputError(f"temperatures must be one-dimensional, not of shape {T.shape}")
    bad = np.flatnonzero(~np.isfinite(T) | (T < 0))
    if bad.size:
        raise InputError(
            f"temperature {T[bad[0]]!r} is not a finite value ≥ 0 K", index=int(bad[0])
        )
    return T


def _scale(ms: ModeSet, per: str, molar_mass: float | None) -> float:
    """Factor from per mole of formula units to the asked basis."""
    if per not in _PER:
        raise InputError(f"per must be one of {_PER}, not {per!r}")
    if per == "gram":
        if molar_mass is None or not (np.isfinite(molar_mass) and molar_mass > 0):
            raise InputError(f"per='gram' needs molar_mass, the g/mol of formula units, not {molar_mass!r}")
        return 1.0 / molar_mass
    if molar_mass is not None:
        raise InputError("molar_mass is used only with per='gram'")
    return 1.0 if per == "formula" else 1.0 / ms.atoms


def basis_text(per: str, atoms: float, molar_mass: float | None = None) -> str:
    """The basis of a table in words, as exports print it."""
    if per == "atom":
        return "per mole of atoms"
    if per == "gram":
        return f"per gram (molar mass {molar_mass:g} g/mol of formula units; atoms per formula unit: {atoms:g})"
    return f"per mole of formula units (atoms per formula unit: {atoms:g})"


def _evaluate(source, temperatures, per, molar_mass=None):
    ms = _modeset(source)
    T = _temperatures(temperatures)
    return ms, T, ms.evaluate(T), R * _scale(ms, per, molar_mass)


def heat_capacity(source, temperatures, *, per: str = "formula", molar_mass: float | None = None) -> np.ndarray:
    """Isochoric heat capacity C_v in J/(mol K).

    Parameters
    ----------
    source : Spectrum, component or mixture
    temperatures : array_like — T in K, ≥ 0
    per : {"formula", "atom", "gram"} — per mole of formula units, per mole of atoms, or per
        gram (then J/(g K))
    molar_mass : float, optional — g/mol of formula units, for ``per="gram"``
    """
    _, _, r, k = _evaluate(source, temperatures, per, molar_mass)
    return k * r["cv"]


def entropy(source, temperatures, *, per: str = "formula", molar_mass: float | None = None) -> np.ndarray:
    """Entropy S in J/(mol K) (0 at T = 0)."""
    _, _, r, k = _evaluate(source, temperatures, per, molar_mass)
    return k * r["s"]


def internal_energy(source, temperatures, *, per: str = "formula", molar_mass: float | None = None) -> np.ndarray:
    """Internal energy U in J/mol, zero-point energy included."""
    _, _, r, k = _evaluate(source, temperatures, per, molar_mass)
    return k * r["u"]


def free_energy(source, temperatures, *, per: str = "formula", molar_mass: float | None = None) -> np.ndarray:
    """Helmholtz free energy F = U − TS in J/mol, zero-point energy included."""
    _, _, r, k = _evaluate(source, temperatures, per, molar_mass)
    return k * r["f"]


def zero_point_energy(source, *, per: str = "formula", molar_mass: float | None = None) -> float:
    """Zero-point energy U_0 = Σ ħω/2 in J/mol (J/g with ``per="gram"``)."""
    ms = _modeset(source)
    return R * _scale(ms, per, molar_mass) * ms.zero_point()


def thermo(source, temperatures, *, per: str = "formula", molar_mass: float | None = None) -> pd.DataFrame:
    """The thermodynamic table of a source.

    Parameters
    ----------
    source : Spectrum, component or mixture
    temperatures : array_like — T in K, ≥ 0
    per : {"formula", "atom", "gram"} — per mole of formula units, per mole of atoms, or per
        gram (J/(g K) and J/g)
    molar_mass : float, optional — g/mol of formula units, for ``per="gram"``

    Returns
    -------
    pandas.DataFrame
        Columns ``T`` [K], ``Cv`` [J/(mol K)], ``S`` [J/(mol K)], ``U`` [J/mol],
        ``F`` [J/mol] (both with zero point; per gram: J/(g K), J/g) and ``theta_D`` [K], the effective Debye
        temperature of the lattice (vibrational) C_v.  ``attrs`` holds the units, the
        basis, the source's name, the zero-point energy and the caution; for a
        :class:`~modeheat.Spectrum` also its low-temperature continuation: ``low_t_method``
        (:attr:`~modeheat.Spectrum.low_t_method`), ``low_t_cutoff`` with
        ``low_t_cutoff_unit`` and ``low_t`` (:attr:`~modeheat.Spectrum.low_t_summary`).
    """
    ms, T, r, k = _evaluate(source, temperatures, per, molar_mass)
    theta = _lattice_theta(ms, T, r["cv_lattice"])
    frame = pd.DataFrame(
        {"T": T, "Cv": k * r["cv"], "S": k * r["s"], "U": k * r["u"], "F": k * r["f"], "theta_D": theta}
    )
    amount = "g" if per == "gram" else "mol"
    frame.attrs.update(
        units={"T": "K", "Cv": f"J/({amount} K)", "S": f"J/({amount} K)", "U": f"J/{amount}", "F": f"J/{amount}", "theta_D": "K"},
        per=per,
        basis=basis_text(per, ms.atoms, molar_mass),
        atoms=ms.atoms,
        molar_mass=molar_mass,
        source=getattr(source, "name", None),
        zero_point_energy=k * ms.zero_point(),
        caution=CAUTION,
    )
    method = getattr(source, "low_t_method", None)
    if method is not None:
        frame.attrs.update(
            low_t_method=method,
            low_t_cutoff=source.low_t_cutoff,
            low_t_cutoff_unit=source.unit,
            low_t=source.low_t_summary,
        )
    return frame


def _lattice_theta(ms: ModeSet, T: np.ndarray, cv_lattice: np.ndarray) -> np.ndarray:
    """Effective Debye temperature of the vibrational part, with its limits at T = 0 and T → ∞."""
    modes = ms.modes
    theta = np.full(T.shape, np.nan)
    if modes <= 0:
        return theta
    theta[T == 0] = ms.low_temperature_theta()
    hot = T > 0
    # Far above every mode 1 − C/C_max is lost to rounding: use the Thirring series.
    classical = hot & (T > 20.0 * ms.theta_max)
    if np.any(classical):
        theta[classical] = _thirring_theta(ms, T[classical])
    rest = hot & ~classical
    c = cv_lattice[rest] / modes
    x = special.debye_cv_inverse(c)
    with np.errstate(divide="ignore"):
        theta[rest] = T[rest] * x
    return theta


def _thirring_theta(ms: ModeSet, T: np.ndarray) -> np.ndarray:
    """θ_D(T) for T ≫ every mode: match 1 − C/C_max of the Debye model to the moment series."""
    _, coeffs = special._series_coefficients(3)
    a = -coeffs[::-1][1:5]  # 1 − C_D/C_max = Σ a_j x^(2j), j = 1..4
    moments = [ms.moment(2 * j) for j in range(1, 5)]
    deficit = sum(a[j] * moments[j] / T ** (2 * j + 2) for j in range(4))
    # The same series for a single Einstein mode: 1 − C_E = x²/12 − x⁴/240 + x⁶/6048 − …
    e = np.array([1 / 12, -1 / 240, 1 / 6048, -1 / 172800])
    deficit = sum(e[j] * moments[j] / T ** (2 * j + 2) for j in range(4))
    y = np.sqrt(deficit / a[0])
    for _ in range(4):
        g = sum(a[j] * y ** (2 * j + 2) for j in range(4)) - deficit
        dg = sum((2 * j + 2) * a[j] * y ** (2 * j + 1) for j in range(4))
        y = y - g / dg
    return T * y


def effective_debye_temperature(temperatures, cv, *, atoms: float = 1.0) -> np.ndarray:
    """Effective Debye temperature θ_D(T) in K from a heat capacity.

    Solves C_v = 3·atoms·R·D(θ/T) at each temperature, where D is the Debye heat
    capacity per mode (:func:`modeheat.special.debye_cv`).  Where no θ exists —
    C ≤ 0, or C ≥ 3·atoms·R — the result is NaN and one warning says why.

    Parameters
    ----------
    temperatures : array_like — T in K, > 0
    cv : array_like — C_v in J/(mol K) per mole of formula units
    atoms : float — atoms per formula unit

    Notes
    -----
    A measured C_p above 3R per mole of atoms near room temperature is common: the
    dilatation term C_p − C_v and the electronic γT add to the lattice C_v.  Convert
    to C_v and remove the electronic term before asking for a Debye temperature.
    """
    T, c = np.broadcast_arrays(np.asarray(temperatures, dtype=float), np.asarray(cv, dtype=float))
    if not atoms > 0:
        raise InputError(f"atoms must be positive, not {atoms!r}")
    per_mode = c / (3.0 * atoms * R)
    x = special.debye_cv_inverse(per_mode)
    with np.errstate(invalid="ignore", divide="ignore"):
        theta = np.where(T > 0, T * x, np.nan)
    above = np.count_nonzero(per_mode >= 1)
    below = np.count_nonzero(~(per_mode > 0) & np.isfinite(per_mode))
    if above or below:
        parts = []
        if above:
            parts.append(
                f"{above} value(s) at or above the Dulong–Petit limit 3·atoms·R = "
                f"{3 * atoms * R:.3f} J/(mol K) (a measured C_p above 3R is common: C_p − C_v and "
                "the electronic term add to the lattice C_v; convert to C_v and remove γT first)"
            )
        if below:
            parts.append(f"{below} value(s) ≤ 0")
        warnings.warn(
            "no effective Debye temperature for " + "; ".join(parts) + ": NaN returned",
            NoDebyeTemperatureWarning,
            stacklevel=2,
        )
    return theta
