"""Heat capacity, entropy, energy, free energy and the effective Debye temperature.

Every function takes a *source* — a :class:`~modeheat.Spectrum`, a model component
or a mixture — and temperatures in K.  Results are molar: per mole of formula units
(``per="formula"``, the default) or per mole of atoms (``per="atom"``).  Energies
include the zero-point energy.
"""

from __future__ import annotations

import math
import numbers
import warnings

import numpy as np
import pandas as pd

from .engine import special
from . import _checks
from .engine.modeset import ModeSet
from .errors import InputError, ModeheatError, NoDebyeTemperatureWarning
from .units import KELVIN_RANGE, R

__all__ = [
    "thermo",
    "heat_capacity",
    "entropy",
    "internal_energy",
    "free_energy",
    "zero_point_energy",
    "effective_debye_temperature",
    "atoms_of_data",
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
        raise InputError(
            f"cannot compute thermodynamics of {type(source).__name__}: expected a Spectrum, "
            "a model component or a mixture"
        )
    return get()


def _temperatures(temperatures, *, zero: bool = True) -> np.ndarray:
    """Validated 1-D temperatures in K: 0 (if `zero`) or inside :data:`~modeheat.units.KELVIN_RANGE`."""
    try:
        T = np.atleast_1d(np.asarray(temperatures, dtype=float))
    except (TypeError, ValueError):
        raise InputError(f"temperatures must be numbers in K, not {temperatures!r}") from None
    if T.ndim != 1:
        raise InputError(f"temperatures must be one-dimensional, not of shape {T.shape}")
    lo, hi = KELVIN_RANGE
    inside = (T >= lo) & (T <= hi)
    bad = np.flatnonzero(~(inside | (T == 0)) if zero else ~inside)
    if bad.size:
        allowed = f"0 or {lo:g}–{hi:g} K" if zero else f"{lo:g}–{hi:g} K"
        raise InputError(f"temperature {float(T[bad[0]])!r} K is not {allowed}", index=int(bad[0]))
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
    r = ms.evaluate(T)
    for key, label in (("cv", "C_v"), ("s", "S"), ("u", "U"), ("f", "F")):
        bad = np.flatnonzero(~np.isfinite(r[key]))
        if bad.size:
            # A safety net: inputs are validated so that this cannot happen; never return it silently.
            raise ModeheatError(
                f"{label} is not finite at T = {T[bad[0]]:g} K for {getattr(source, 'name', None) or 'this source'}: "
                "its parameters lie outside what modeheat can evaluate"
            )
    return ms, T, r, R * _scale(ms, per, molar_mass)


def heat_capacity(source, temperatures, *, per: str = "formula", molar_mass: float | None = None) -> np.ndarray:
    """Isochoric heat capacity C_v in J/(mol K).

    Parameters
    ----------
    source : Spectrum, component or mixture
    temperatures : array_like — T in K: 0, or 1e-12–1e12 K (:data:`~modeheat.units.KELVIN_RANGE`)
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
    temperatures : array_like — T in K: 0, or 1e-12–1e12 K (:data:`~modeheat.units.KELVIN_RANGE`)
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
        ``low_t_cutoff_unit`` and ``low_t_summary`` (:attr:`~modeheat.Spectrum.low_t_summary`),
        and ``atoms_source``, where its atom count came from (:attr:`~modeheat.Spectrum.atoms_source`).

    Raises
    ------
    InputError
        Temperatures outside 0 or 1e-12–1e12 K, or a source that is not a spectrum,
        component or mixture.

    Warns
    -----
    NoDebyeTemperatureWarning
        ``theta_D`` is NaN where no effective Debye temperature exists (a source without
        vibrational modes).
    """
    ms, T, r, k = _evaluate(source, temperatures, per, molar_mass)
    theta = ms.effective_debye_temperature(T, r["cv_lattice"])
    _warn_missing_theta(ms, theta, "theta_D is NaN", stacklevel=3)
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
            low_t_summary=source.low_t_summary,
        )
    atoms_source = getattr(source, "atoms_source", None)
    if atoms_source is not None:
        frame.attrs["atoms_source"] = atoms_source
    return frame


def _warn_missing_theta(ms: ModeSet, theta: np.ndarray, what: str, stacklevel: int) -> None:
    """One :class:`NoDebyeTemperatureWarning` for the NaN in a source's θ_D(T), saying why."""
    missing = np.count_nonzero(np.isnan(theta))
    if missing:
        why = "the source has no vibrational modes" if ms.modes <= 0 else "the lattice C_v cannot be inverted there"
        warnings.warn(
            f"no effective Debye temperature at {missing} of {theta.size} temperature(s) ({why}): {what}",
            NoDebyeTemperatureWarning,
            stacklevel=stacklevel,
        )


def atoms_of_data(data, atoms: float | None = None) -> tuple[float, bool]:
    """Atoms per formula unit of heat-capacity data: the one rule of every function taking them.

    The count stored with the data is ``attrs["atoms"]`` (set by
    :func:`~modeheat.read_heat_capacity`; a column of the frame carries it too).
    `atoms` None takes the stored count, or 1 when the data carry none; a given
    `atoms` must equal a stored count.

    Parameters
    ----------
    data : DataFrame, Series, array or a list of DataFrames — the heat-capacity data
    atoms : float, optional — atoms per formula unit asked for

    Returns
    -------
    (float, bool)
        The count, and whether it is known (given or stored) rather than the default 1.

    Raises
    ------
    InputError
        `atoms` is not a positive number, or differs from the stored count (the message
        names both), or data sets store different counts.
    """
    stored: float | None = None
    holder = ""
    for k, item in enumerate(data if isinstance(data, (list, tuple)) else [data]):
        attrs = getattr(item, "attrs", None) or {}
        value = attrs.get("atoms")
        if value is None:
            continue
        label = attrs.get("name") or f"data set {k}"
        if stored is not None and not math.isclose(float(value), stored):
            raise InputError(
                f"the data sets disagree on the atoms per formula unit: {holder} stores atoms={stored:g}, "
                f"{label} atoms={float(value):g}"
            )
        stored, holder = float(value), label
    if atoms is None:
        return (stored, True) if stored is not None else (1.0, False)
    atoms = _checks.atoms(atoms)
    if stored is not None and not math.isclose(float(atoms), stored):
        raise InputError(
            f"atoms={float(atoms):g} was given but {holder} stores atoms={stored:g} (attrs['atoms'], "
            "from read_heat_capacity); pass the same count or none"
        )
    return float(atoms), True


def effective_debye_temperature(first, second, /, *, atoms: float | None = None) -> np.ndarray:
    """Effective Debye temperature θ_D(T) in K, of a source or of a heat capacity.

    Two forms, one meaning — the θ whose Debye heat capacity equals the C_v at T:

    * ``effective_debye_temperature(source, temperatures)``: θ_D(T) of a
      :class:`~modeheat.Spectrum`, a model component, a mixture or a
      :class:`~modeheat.engine.ModeSet`, from its lattice (vibrational) C_v —
      electronic and two-level terms left out — with the exact limits: θ_D(0) from
      the ω² branches (:attr:`~modeheat.engine.ModeSet.theta_D0`) and,
      far above every mode, the Thirring moment series (θ_∞² = (5/3)⟨θ²⟩).  The same
      values as the ``theta_D`` column of :func:`thermo`, without the rest of the table.
      NaN, with one warning, where none exists (no vibrational modes).
    * ``effective_debye_temperature(temperatures, cv, atoms=...)``: solves C_v =
      3·atoms·R·D(θ/T) at each temperature, where D is the Debye heat capacity per
      mode (:func:`modeheat.engine.special.debye_cv`).  Where no θ exists — C ≤ 0, or
      C ≥ 3·atoms·R — the result is NaN and one warning says why.

    Parameters
    ----------
    first : Spectrum, component, mixture or ModeSet — the source; or array_like, the
        temperatures T in K (> 0) of the heat capacities `second`
    second : array_like — for a source, temperatures T in K: 0, or 1e-12–1e12 K;
        otherwise C_v in J/(mol K) per mole of formula units, one per temperature (a
        column of a :func:`~modeheat.read_heat_capacity` frame carries its atom count)
    atoms : float, optional — atoms per formula unit of a heat capacity; by default the
        count `cv` carries, else 1 (:func:`atoms_of_data`).  A source knows its own:
        given with one, it must equal it.

    Returns
    -------
    numpy.ndarray
        θ_D in K: for a source one per temperature (1-D), for heat capacities of the
        broadcast shape of T and C_v.

    Raises
    ------
    InputError
        Temperatures outside 1e-12–1e12 K (:data:`~modeheat.units.KELVIN_RANGE`; a
        source also takes 0), non-finite heat capacities, lengths that differ, atoms
        outside 1e-6–1e9 or differing from a source's.

    Warns
    -----
    NoDebyeTemperatureWarning
        Where θ_D is NaN.

    Notes
    -----
    A measured C_p above 3R per mole of atoms near room temperature is common: the
    dilatation term C_p − C_v and the electronic γT add to the lattice C_v.  Convert
    to C_v and remove the electronic term before asking for a Debye temperature.
    """
    if isinstance(first, ModeSet) or hasattr(first, "modeset"):
        ms = _modeset(first)
        if atoms is not None and not (isinstance(atoms, numbers.Real) and math.isclose(float(atoms), ms.atoms)):
            raise InputError(f"atoms: the source has {ms.atoms:g} atoms per formula unit, not {atoms!r}")
        theta = ms.effective_debye_temperature(_temperatures(second))
        _warn_missing_theta(ms, theta, "NaN returned", stacklevel=3)
        return theta
    temperatures, cv = first, second
    atoms, _ = atoms_of_data(cv, atoms)
    try:
        T, c = np.asarray(temperatures, dtype=float), np.asarray(cv, dtype=float)
    except (TypeError, ValueError):
        raise InputError("temperatures and cv must be numbers (K and J/(mol K))") from None
    try:
        T, c = np.broadcast_arrays(T, c)
    except ValueError:
        raise InputError(f"cv has {c.size} value(s) but temperatures has {T.size}") from None
    _temperatures(T.ravel(), zero=False)
    bad = np.flatnonzero(~np.isfinite(c.ravel()))
    if bad.size:
        raise InputError(f"cv is {float(c.ravel()[bad[0]])!r}, not a finite number", index=int(bad[0]))
    atoms = _checks.atoms(atoms)
    per_mode = c / (3.0 * atoms * R)
    theta = T * special.debye_cv_inverse(per_mode)
    above = np.count_nonzero(per_mode >= 1)
    below = np.count_nonzero(~(per_mode > 0))
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
