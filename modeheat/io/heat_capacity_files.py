"""Reading measured heat capacities from text files, and the units of C (format: :mod:`modeheat.io`)."""

from __future__ import annotations

import os
import warnings
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
from scipy import constants as _constants

from ..errors import InputError, ModeheatWarning
from ..units import check_unit
from .columns import _atoms_of_file, _Header, _parse, _positive_argument, _read_text, _select

__all__ = ["read_heat_capacity", "HeatCapacityWarning", "HEAT_CAPACITY_UNITS"]


# --- the right kind of file (the spectrum reader refuses a file by these marks too) -----------
_TEMPERATURE_NAMES = ("t", "temp", "temperature")
_FREQUENCY_NAMES = ("frequency", "freq", "omega", "ω", "nu", "ν", "energy")
_DENSITY_NAMES = ("density", "dos", "total", "pdos", "partial")


def _cp_mark(header: _Header | None) -> str | None:
    """Why the header is a heat-capacity file's, or None."""
    if header is None:
        return None
    if header.names[0].casefold() in _TEMPERATURE_NAMES:
        return f"its first column, {header.fields[0]!r}, is a temperature"
    for k, unit in enumerate(header.units):
        if unit is not None and _cp_unit(unit) is not None:
            return f"header field {k + 1}, {header.fields[k]!r}, has the heat-capacity unit {unit!r}"
    return None


def _refuse_spectrum(header: _Header | None, path) -> None:
    if header is None:
        return
    first, unit = header.names[0].casefold(), header.units[0]
    why = None
    if first in _FREQUENCY_NAMES:
        why = f"its first column, {header.fields[0]!r}, is a frequency"
    elif unit is not None and unit.strip().lower() not in _TEMPERATURE_UNITS and _is_frequency_unit(unit):
        why = f"its first column, {header.fields[0]!r}, has the frequency unit {unit!r}"
    elif _cp_mark(header) is None:
        dens = [f for n, f in zip(header.names, header.fields) if n.casefold().startswith(_DENSITY_NAMES)]
        if dens:
            why = f"it has density-of-states columns ({', '.join(repr(f) for f in dens)})"
    if why is not None:
        raise InputError(
            f"this is a density-of-states file, not heat capacities ({why}); read it with read_spectrum "
            "or the command 'modeheat table'",
            path=path,
            line=header.line,
        )


def _is_frequency_unit(unit: str) -> bool:
    try:
        check_unit(unit)
    except InputError:
        return False
    return True


# --- heat-capacity files ---------------------------------------------------------------------
class HeatCapacityWarning(ModeheatWarning):
    """Heat-capacity data were repaired on the way in (rows sorted by temperature)."""


_CP_COLUMNS = "the temperature followed by the heat capacity and, optionally, its uncertainty"
_CP_NAMES = ("T", "C", "sigma")
_ENERGY = {"j": 1.0, "mj": 1e-3, "cal": _constants.calorie, "mcal": 1e-3 * _constants.calorie}
_AMOUNT = {  # amount in a heat-capacity unit → (basis, grams per amount or None)
    "mol": ("formula", None),
    "mol-atom": ("atom", None),
    "mol-atoms": ("atom", None),
    "g": ("mass", 1.0),
    "kg": ("mass", 1000.0),
}
_TEMPERATURE_UNITS = ("k", "kelvin")
HEAT_CAPACITY_UNITS = (
    "J/(mol K)",
    "mJ/(mol K)",
    "cal/(mol K)",
    "mcal/(mol K)",
    "J/(mol-atom K)",
    "J/(g K)",
    "J/(kg K)",
)


@dataclass(frozen=True)
class _CpUnit:
    text: str  # as written
    energy: float  # J per energy unit
    basis: str  # "formula", "atom" or "mass"
    grams: float | None  # grams per mass unit


def _cp_unit(text: str) -> _CpUnit | None:
    """Parse a heat-capacity unit such as ``J/(mol K)``, ``mJ mol-1 K-1`` or ``J/g/K``; None if unknown."""
    s = str(text).strip().lower()
    if not s:
        return None
    for mark in ("·", "⋅", "*"):
        s = s.replace(mark, " ")
    s = s.replace("⁻¹", "-1").replace("^-1", "-1").replace("mol atoms", "mol-atoms").replace("mol atom", "mol-atom")
    if "/" in s:
        numerator, denominator = s.split("/", 1)
        words = denominator.replace("(", " ").replace(")", " ").replace("/", " ").split()
        numerator = numerator.strip()
    else:
        first, *rest = s.split()
        if not rest or not all(w.endswith("-1") for w in rest):
            return None
        numerator, words = first, [w[:-2] for w in rest]
    if numerator not in _ENERGY or words.count("k") != 1:
        return None
    words.remove("k")
    amount = "-".join(words)
    if amount not in _AMOUNT:
        return None
    basis, grams = _AMOUNT[amount]
    return _CpUnit(str(text).strip(), _ENERGY[numerator], basis, grams)


def _known_cp_units() -> str:
    return ", ".join(HEAT_CAPACITY_UNITS)


def read_heat_capacity(
    path: str | os.PathLike,
    *,
    unit: str | None = None,
    atoms: float | None = None,
    molar_mass: float | None = None,
    columns: Sequence[str | int] | None = None,
    per: str | None = None,
) -> pd.DataFrame:
    """Read measured heat capacities from a text file of columns.

    The file follows the rules of spectrum files (module docstring: comments, header,
    separators, numbers, byte-order mark and line endings), with the columns
    temperature, heat capacity and, optionally, its standard uncertainty, e.g.::

        # Invented measurement
        T (K)  C (J/(mol K))  sigma (J/(mol K))
        2.0    0.00231        0.00005
        3.0    0.00512        0.00008

    Units
    -----
    The temperature is in K (a header may say ``T (K)``).  The heat-capacity unit comes
    from the header of the C column (``C (J/(mol K))``) or from `unit`; when both give
    one they must agree.  Known: J/(mol K), mJ/(mol K), cal/(mol K) and mcal/(mol K)
    (the thermochemical calorie, 4.184 J, ``scipy.constants.calorie``), and J/(g K),
    J/(kg K) (per mass: `molar_mass` is then required).  The unit may be written
    ``J/(mol K)``, ``J/mol/K``, ``J mol-1 K-1`` or ``J/(mol·K)``.  An uncertainty column
    with a unit of its own is converted with it, otherwise with the C column's unit.

    Basis
    -----
    The result is per mole of formula units.  Molar data per mole of *atoms* are
    multiplied by `atoms`; say so with ``per="atom"`` or in the unit itself,
    ``J/(mol-atom K)`` (also ``mJ/(mol-atom K)``, ``cal/(mol-atom K)`` …).  Per-mass data
    are multiplied by `molar_mass`, the grams per mole of formula units.

    Atom count
    ----------
    `atoms`, else the file's ``# atoms:`` line (module docstring), is stored in
    ``attrs["atoms"]``; :func:`~modeheat.fitting.low_temperature_fit`, :func:`~modeheat.fitting.fit`,
    :func:`~modeheat.fitting.debye_breakdown` and
    :func:`~modeheat.thermo.effective_debye_temperature` use it.  Without either it is
    None (those functions then take 1 atom per formula unit unless told otherwise),
    except for data per mole of atoms, which are then per formula unit of one atom
    (``attrs["atoms"]`` = 1).

    Parameters
    ----------
    path : str or os.PathLike — the file
    unit : str, optional — the heat-capacity unit, when the header gives none
    atoms : float, optional — atoms per formula unit (Atom count)
    molar_mass : float, optional — molar mass in g/mol of formula units (per-mass units)
    columns : sequence of str or int, optional — the temperature, heat-capacity and
        (optional) uncertainty columns, by header name or 0-based index; by default the
        first two or three columns in that order
    per : {"formula", "atom"}, optional — what the moles of a molar unit count; by
        default what the unit says (``mol-atom``), else formula units

    Returns
    -------
    pandas.DataFrame
        Columns ``T`` [K], ``C`` [J/(mol K) per mole of formula units] and, when the file
        has one, ``sigma`` [same unit]; sorted by T (repeated temperatures, repeated
        measurements, are kept in file order).  ``attrs`` holds ``source`` (the path),
        ``name`` (the file name), ``unit`` (the unit as read), ``factor`` (the factor
        applied), ``units``, ``per`` ("formula"), ``basis``, ``atoms``, ``molar_mass``
        and ``lines`` (the file line of each row).

    Raises
    ------
    InputError
        The file cannot be read or does not hold valid heat capacities: a density of
        states (it names :func:`read_spectrum`), `atoms` unlike the ``# atoms:`` line, a temperature
        ≤ 0, a non-finite value, a negative heat capacity, an uncertainty ≤ 0, text
        where a number belongs, a row of the wrong length, an unknown unit, a per-mass
        unit without `molar_mass`.  The message names the file and, where one applies,
        the 1-based line.

    Warns
    -----
    HeatCapacityWarning
        The rows were not in increasing order of temperature and have been sorted.
    """
    if molar_mass is not None:
        molar_mass = _positive_argument("molar_mass", molar_mass, path)
    if per not in (None, "formula", "atom"):
        raise InputError(f"per must be 'formula' or 'atom', not {per!r}", path=path)
    table = _parse(_read_text(path), path, _CP_COLUMNS)
    _refuse_spectrum(table.header, path)
    atoms = _atoms_of_file(atoms, table, path)
    width = table.values.shape[1]
    header = table.header
    names = header.names if header is not None else list(_CP_NAMES[:width]) + [f"column {k}" for k in range(3, width)]
    if columns is None:
        if width > 3:
            raise InputError(
                f"{width} columns: choose the temperature, heat-capacity and (optional) uncertainty columns "
                "with columns=",
                path=path,
            )
        chosen = list(range(width))
    else:
        wanted = [columns] if isinstance(columns, (str, int)) else list(columns)
        if len(wanted) not in (2, 3):
            raise InputError(
                "columns: choose the temperature and heat-capacity columns, and optionally the uncertainty "
                f"column (2 or 3 columns, not {len(wanted)})",
                path=path,
            )
        chosen = _select(wanted, names, header, path)
    _check_temperature_unit(header, chosen[0], path)
    c_unit = _resolve_cp_unit(unit, header, chosen[1], path)
    if atoms is None and (per == "atom" or c_unit.basis == "atom"):
        atoms = 1.0  # per-atom data with no count: per formula unit of one atom
    factor = _cp_factor(c_unit, per, atoms or 1.0, molar_mass, path, header)
    sigma_factor = factor
    if len(chosen) == 3 and header is not None and header.units[chosen[2]] is not None:
        s_unit = _written_cp_unit(header, chosen[2], path)
        sigma_factor = _cp_factor(s_unit, per, atoms or 1.0, molar_mass, path, header)
    values = table.values[:, chosen]
    _check_cp_rows(values, [names[k] for k in chosen], [k + 1 for k in chosen], table.lines, path)
    lines = np.asarray(table.lines)
    T = values[:, 0]
    order = np.argsort(T, kind="stable")
    if np.any(np.diff(T) < 0):
        first = int(np.flatnonzero(np.diff(T) < 0)[0]) + 1
        warnings.warn(
            f"{path}: the temperatures are not in increasing order (line {lines[first]} is below the row "
            "above it); the rows were sorted by T",
            HeatCapacityWarning,
            stacklevel=2,
        )
    data = {"T": T[order], "C": values[order, 1] * factor}
    units = {"T": "K", "C": "J/(mol K)"}
    if len(chosen) == 3:
        data["sigma"] = values[order, 2] * sigma_factor
        units["sigma"] = "J/(mol K)"
    frame = pd.DataFrame(data)
    frame.attrs.update(
        source=str(path),
        name=Path(path).name,
        unit=c_unit.text,
        factor=factor,
        units=units,
        per="formula",
        basis="per mole of formula units",
        atoms=atoms,
        molar_mass=molar_mass,
        lines=[int(v) for v in lines[order]],
    )
    return frame


def _check_temperature_unit(header: _Header | None, col: int, path) -> None:
    written = header.units[col] if header is not None else None
    if written is not None and written.strip().lower() not in _TEMPERATURE_UNITS:
        raise InputError(
            f"unknown temperature unit {written!r} in header field {col + 1} ({header.fields[col]!r}); "
            "temperatures must be in K",
            path=path,
            line=header.line,
        )


def _written_cp_unit(header: _Header, col: int, path) -> _CpUnit:
    parsed = _cp_unit(header.units[col])
    if parsed is None:
        raise InputError(
            f"unknown heat-capacity unit {header.units[col]!r} in header field {col + 1} "
            f"({header.fields[col]!r}); expected one of {_known_cp_units()}",
            path=path,
            line=header.line,
        )
    return parsed


def _resolve_cp_unit(unit: str | None, header: _Header | None, col: int, path) -> _CpUnit:
    given = None
    if unit is not None:
        given = _cp_unit(unit)
        if given is None:
            raise InputError(f"unknown heat-capacity unit {unit!r}; expected one of {_known_cp_units()}", path=path)
    if header is None or header.units[col] is None:
        if given is None:
            raise InputError(
                "the heat-capacity unit is not given: write it in the header, e.g. 'C (J/(mol K))', or pass "
                f"it (unit=); one of {_known_cp_units()}",
                path=path,
            )
        return given
    written = _written_cp_unit(header, col, path)
    if given is not None and (given.energy, given.basis, given.grams) != (written.energy, written.basis, written.grams):
        raise InputError(
            f"the header gives the heat capacities in {written.text} but the unit {given.text} was asked for",
            path=path,
            line=header.line,
        )
    return written


def _cp_factor(u: _CpUnit, per: str | None, atoms: float, molar_mass: float | None, path, header) -> float:
    """J/(mol K) per mole of formula units for one of `u`."""
    line = header.line if header is not None else None
    if u.basis == "mass":
        if per == "atom":
            raise InputError(
                f"per='atom' applies to molar units, not to {u.text}; a per-mass unit is converted with the "
                "molar mass of the formula unit",
                path=path,
            )
        if molar_mass is None:
            raise InputError(
                f"the heat capacities are per mass ({u.text}): give molar_mass, the molar mass in g/mol of "
                "formula units, to convert them to J/(mol K)",
                path=path,
                line=line,
            )
        return u.energy * molar_mass / u.grams
    basis = u.basis
    if per is not None and basis == "atom" and per != "atom":
        raise InputError(f"the unit {u.text} is per mole of atoms but per={per!r} was asked for", path=path, line=line)
    if per == "atom":
        basis = "atom"
    return u.energy * (atoms if basis == "atom" else 1.0)


def _check_cp_rows(values: np.ndarray, names: list[str], fields: list[int], lines: list[int], path) -> None:
    """The first row (in file order) that breaks a rule gives the error."""
    T, C = values[:, 0], values[:, 1]
    sigma = values[:, 2] if values.shape[1] == 3 else None
    problems = [~np.isfinite(values).all(axis=1), ~(T > 0), C < 0]
    if sigma is not None:
        problems.append(~(sigma > 0))
    bad = np.logical_or.reduce(problems)
    if not bad.any():
        return
    i = int(np.flatnonzero(bad)[0])
    where = lambda k: f"field {fields[k]} ({names[k]})"  # noqa: E731
    row = values[i]
    if not np.isfinite(row).all():
        k = int(np.flatnonzero(~np.isfinite(row))[0])
        problem = f"{where(k)} is {float(row[k])!r}, not a finite number"
    elif not T[i] > 0:
        problem = f"{where(0)} is {float(T[i])!r}: temperatures must be above 0 K"
    elif C[i] < 0:
        problem = f"{where(1)} is {float(C[i])!r}: a heat capacity cannot be negative"
    else:
        problem = f"{where(2)} is {float(sigma[i])!r}: an uncertainty must be positive"
    raise InputError(problem, path=path, line=lines[i])
