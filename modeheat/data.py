"""Reading spectra from text files and writing thermodynamic tables.

Spectrum files
--------------
A spectrum file is UTF-8 text (a byte-order mark and Windows line endings are fine)
holding a table of numbers in columns: the first column is the frequency, every
further column a density of states on that frequency grid.

* **Comments.** A line whose first non-blank character is ``#`` is a comment, and so
  is everything after a ``#`` on a data line.  Blank lines are ignored anywhere.
* **Separators.** The first data row decides: a ``;`` in it makes ``;`` the separator,
  else a ``,`` makes ``,`` the separator, else fields are separated by runs of spaces
  and tabs.  Every data row must then have as many fields as the first; with ``,`` or
  ``;`` an empty field is an error.
* **Numbers** use a decimal point: ``12``, ``-0.5``, ``.25``, ``1.5e-3``.  ``nan`` and
  ``inf`` are read but rejected as non-finite values.  Decimal commas (``1,5``) are
  not supported, since a comma also separates fields: a file written with them (with
  ``;`` or tab separators) gives an error that says so rather than being misread.
* **Header.** The first non-comment row is a header when its first field is not a
  number.  Without such a row, the last comment line *directly* above the first data
  row (no blank line between) is read as the header when, after its ``#``, it splits
  into exactly as many fields as the data rows have and its first field is not a
  number; any other comment stays a comment.  Put a blank line between a comment and
  the data to keep it from being read as a header.  A header splits like the data
  (``;``, else ``,``, else a tab, else spaces — it may use a different separator from
  the data), except that with spaces a parenthesised unit stays with its name.
* **Column names** may carry a unit in parentheses or brackets: ``frequency (meV)``,
  ``frequency [THz]``, ``Ga (states/THz)``.  Only the frequency column's unit is used:
  one of K, THz, meV, cm-1 (also ``1/cm``), rad/s.  Names are compared without their
  unit and without regard to case, so a header may not name two columns alike.
  Without a header the columns are called ``frequency``, ``column 1``, ``column 2``…
  (the number is the 0-based column index).
* **Total and partials.** A density column named ``total`` is the total density and
  the others are partial densities.  Without one, a single density column is the
  total; with several, the total is their sum and each is a partial.  ``total=``
  names the total column, or ``total="sum"`` asks for the sum.
* **Atom count.**  A comment line ``# atoms: 2`` (anywhere in the file; the key is
  case-insensitive, the value a positive number) gives the atoms per formula unit; it
  is never read as a header, and a comment header may stand directly above it.
  An ``atoms=`` argument that differs from it is an error naming the line, and so is a
  second such line with another value.  Without it and without ``atoms=``, the count
  comes from the density's integral, 3 modes per atom (:class:`~modeheat.spectrum.Spectrum`
  says when that is clear), else an error asks for ``atoms=``.  Heat-capacity files
  take the same line.
* **The right kind of file.**  A file whose header names its first column as a
  temperature (``T``, ``temp``, ``temperature``, with or without a unit) or gives any
  column a heat-capacity unit (``J/(mol K)``, ``mJ/mol/K``, ``J/g/K`` …) is a
  heat-capacity file: :func:`read_spectrum` refuses it and names
  :func:`read_heat_capacity`, which in turn refuses a file whose first column is named
  as a frequency (``frequency``, ``freq``, ``omega``, ``nu``, ``energy``) or carries a
  frequency unit (THz, meV, cm-1, rad/s), or — when nothing marks it as heat
  capacities — has density columns (``density``, ``dos``, ``total``, ``partial…``).

Negative frequencies are imaginary modes; the spectrum excludes them with a warning
(an error when every frequency is ≤ 0).  Unsorted or repeated frequencies and tiny
negative densities are repaired with a warning; see :class:`~modeheat.spectrum.Spectrum`.
Anything else that does not fit — a missing, binary, UTF-16 or otherwise non-UTF-8
file, no data rows, a row of the wrong length, text where a number belongs, a repeated
column name, an unknown unit — is an :class:`~modeheat.errors.InputError` whose message
names the file and, where one applies, the 1-based line.

An example::

    # Invented spectrum of a two-atom compound
    # atoms: 2
    frequency (THz), total, A, B
    0.0, 0.0, 0.0, 0.0
    0.5, 0.012, 0.008, 0.004   # a trailing comment
    1.0, 0.048, 0.032, 0.016

Heat-capacity files
-------------------
:func:`read_heat_capacity` reads measured heat capacities from files that follow the
same rules, with the columns temperature (K), heat capacity and, optionally, its
standard uncertainty; the heat-capacity unit comes from the header (``C (J/(mol K))``;
a unit may hold one level of parentheses of its own) or from the ``unit=`` argument.
Its docstring lists the units and the basis (per formula unit, per mole of atoms, per
mass).  :func:`cp_from_cv` and :func:`cv_from_cp` convert between C_p and C_v.

Table files
-----------
:func:`write_table` writes a table from :func:`modeheat.thermo` as comma-separated
values: ``#`` comment lines with the caution, the basis, the units and the source,
then one header row of column names and one row per temperature.  Numbers are written
to 12 significant digits; a missing value (a Debye temperature that does not exist)
is written ``nan``.  The destination must be a new or an existing regular file
(:func:`check_table_destination`).

A table of several sources (``modeheat table A B …``) keeps each source's metadata in
columns, repeated on every row of that source: ``source`` (the file as named) and
``atoms`` (atoms per formula unit) first, then ``T`` … ``theta_D``, then
``zero_point_energy`` (unit of ``U``) and one column for every other single value the
source's table carries in its ``attrs`` (e.g. the low-temperature method and cut-off),
with its unit in the ``# units:`` line where the table gives one.  The comment lines
hold what is common to all sources.  pandas reads it back as it is::

    table = pandas.read_csv("batch.csv", comment="#")
    for source, rows in table.groupby("source", sort=False): ...

When some text cell holds a ``#`` (a file name such as ``run#2.txt``), every field is
written in double quotes, so that ``comment="#"`` does not cut the cell short.
"""

from __future__ import annotations

import csv
import os
import re
import secrets
import stat
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
from scipy import constants as _constants

from .errors import InputError, ModeheatWarning
from .spectrum import Spectrum
from .thermo import CAUTION, basis_text
from .units import FREQUENCY_UNITS, KELVIN_RANGE, check_unit

__all__ = [
    "read_spectrum",
    "write_table",
    "write_text_file",
    "check_table_destination",
    "read_heat_capacity",
    "HeatCapacityWarning",
    "HEAT_CAPACITY_UNITS",
    "cp_from_cv",
    "cv_from_cp",
    "nernst_lindemann_coefficient",
]

_NUMBER = re.compile(r"[+-]?(?:(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?|nan|inf|infinity)", re.IGNORECASE | re.ASCII)
_DECIMAL_COMMA = re.compile(r"[+-]?\d*,\d+(?:[eE][+-]?\d+)?", re.ASCII)
# A unit may hold one level of parentheses of its own: "C (J/(mol K))".
_NAME_UNIT = re.compile(
    r"(?P<name>.*?)\s*(?:\((?P<paren>(?:[^()]|\([^()]*\))*)\)|\[(?P<bracket>[^\[\]]*)\])"
)


@dataclass(frozen=True)
class _Header:
    names: list[str]  # bare names, unit removed
    units: list[str | None]  # unit text of each column, as written
    fields: list[str]  # the fields as written, for messages
    line: int


@dataclass(frozen=True)
class _Table:
    header: _Header | None
    values: np.ndarray  # (rows, columns)
    lines: list[int]  # 1-based file line of each row
    atoms: tuple[float, int] | None = None  # the "# atoms: n" line's count and line number


_ATOMS_LINE = re.compile(r"atoms\s*:\s*(?P<value>[^#]*?)\s*(?:#.*)?", re.IGNORECASE)


def read_spectrum(
    path: str | os.PathLike,
    *,
    unit: str | None = None,
    atoms: float | None = None,
    columns: Sequence[str | int] | None = None,
    total: str | None = None,
    name: str | None = None,
    low_t: str | float = "auto",
    low_t_cutoff: float | None = None,
) -> Spectrum:
    """Read a density of states from a text file of columns.

    The file format is described in the module docstring (:mod:`modeheat.data`).

    Parameters
    ----------
    path : str or os.PathLike — the file
    unit : str, optional — frequency unit ("THz", "meV", "cm-1", "rad/s" or "K"); needed
        when the header gives none, and must agree with the header when it does
    atoms : float, optional — atoms per formula unit; by default the file's
        ``# atoms:`` line, else the density's clear integral (3 modes per atom), else an
        error (:attr:`Spectrum.atoms_source` says which)
    columns : sequence of str or int, optional — the columns to use, by header name or
        0-based index; the first is the frequency, the rest densities
    total : str, optional — name of the total-density column, or "sum" to use the sum
        of the density columns; by default a column named "total", else the sum
    name : str, optional — the spectrum's name, by default the file name (warnings
        about the spectrum quote it)
    low_t, low_t_cutoff : as for :class:`~modeheat.spectrum.Spectrum` (low_t_cutoff in
        the file's frequency unit)

    Returns
    -------
    Spectrum

    Raises
    ------
    InputError
        The file cannot be read or is not a valid spectrum (a heat-capacity file among
        them); `atoms` differs from the file's ``# atoms:`` line; no atom count is given
        and the integral does not tell it.  The message names the file and, where one
        applies, the line.

    Warns
    -----
    SpectrumWarning
        A repair of the data (unsorted or repeated frequencies, tiny negative densities,
        imaginary modes excluded); the message quotes `name`.
    AtomCountWarning
        The atom count given (argument or file) is not the one the integral clearly says.
    """
    table = _parse(_read_text(path), path)
    _refuse_heat_capacity(table.header, path)
    count = _atoms_of_file(atoms, table, path)
    names = table.header.names if table.header else _default_names(table.values.shape[1])
    chosen = _select(columns, names, table.header, path)
    freq_col, dens_cols = chosen[0], chosen[1:]
    unit = _resolve_unit(unit, table.header, freq_col, path)
    density, partials = _total_and_partials(total, [names[i] for i in dens_cols], table.values[:, dens_cols], path)
    try:
        spectrum = Spectrum(
            table.values[:, freq_col],
            density,
            unit=unit,
            atoms=count,
            partials=partials,
            name=Path(path).name if name is None else name,
            low_t=low_t,
            low_t_cutoff=low_t_cutoff,
        )
    except InputError as err:
        index = err.index
        line = table.lines[index] if index is not None and 0 <= index < len(table.lines) else None
        raise InputError(err.problem, path=path, line=line) from None
    if atoms is None and count is not None:
        return spectrum._with(atoms_source="file")
    return spectrum


def _atoms_of_file(atoms, table: _Table, path) -> float | None:
    """The atom count asked for, else the file's ``# atoms:`` line, else None; they must agree."""
    if atoms is not None:
        atoms = _positive_argument("atoms", atoms, path)
    if table.atoms is None:
        return atoms
    written, line = table.atoms
    if atoms is not None and not np.isclose(atoms, written, rtol=1e-12, atol=0.0):
        raise InputError(
            f"atoms={atoms:g} was asked for but the file says atoms: {written:g}",
            path=path,
            line=line,
        )
    return written


def _atoms_line(text: str, number: int, path) -> float | None:
    """The count of a ``# atoms: n`` comment (text after the ``#``), None for any other comment."""
    match = _ATOMS_LINE.fullmatch(text)
    if match is None:
        return None
    value = match["value"]
    if not _NUMBER.fullmatch(value) or not (np.isfinite(float(value)) and float(value) > 0):
        raise InputError(
            f"the atom count {value!r} is not a positive number: write e.g. '# atoms: 2'", path=path, line=number
        )
    return float(value)


# --- reading the text ---------------------------------------------------------------------
def _read_text(path) -> str:
    """The file's text with ``\\n`` line ends; an InputError for anything that is not UTF-8 text."""
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        raise InputError("no such file", path=path) from None
    except IsADirectoryError:
        raise InputError("is a folder, not a file", path=path) from None
    except PermissionError:
        raise InputError("permission denied: cannot read the file", path=path) from None
    except OSError as exc:
        raise InputError(f"cannot read the file ({exc.strerror or exc})", path=path) from None
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise InputError("UTF-16 text; save the file as UTF-8", path=path)
    nul = raw.find(b"\x00")
    if nul >= 0:
        raise InputError(
            "binary data (a NUL byte), not a text file of columns", path=path, line=raw.count(b"\n", 0, nul) + 1
        )
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        raise InputError(
            f"not UTF-8 text (byte 0x{raw[exc.start]:02x}); save the file as UTF-8", path=path, line=line
        ) from None
    if not text.strip():
        raise InputError("the file is empty", path=path)
    return text.replace("\r\n", "\n").replace("\r", "\n")


_SPECTRUM_COLUMNS = "the frequency followed by at least one density column"


def _parse(text: str, path, expected: str = _SPECTRUM_COLUMNS) -> _Table:
    """The header and numbers of a column file; `expected` says what its columns are (for messages)."""
    header: _Header | None = None
    comment_above: tuple[int, str] | None = None  # the comment line just above, with its number
    candidate: tuple[int, str] | None = None  # that comment when the first data row came
    sep: str | None = None  # None: fields separated by blanks
    width = 0
    rows: list[list[float]] = []
    lines: list[int] = []
    atoms: tuple[float, int] | None = None
    for number, raw_line in enumerate(text.split("\n"), start=1):
        stripped = raw_line.strip()
        if not stripped:
            comment_above = None
            continue
        if stripped.startswith("#"):
            count = _atoms_line(stripped[1:].strip(), number, path)
            if count is None:
                comment_above = (number, stripped[1:].strip())
                continue
            if atoms is not None and atoms[0] != count:
                raise InputError(
                    f"a second atom count, {count:g}, differs from the {atoms[0]:g} of line {atoms[1]}",
                    path=path,
                    line=number,
                )
            atoms = atoms or (count, number)
            continue  # transparent: a comment header above it still counts as directly above the data
        content = stripped.split("#", 1)[0].strip()
        if not rows and header is None:
            fields = _split_header(content)
            if not _NUMBER.fullmatch(fields[0]):
                header = _header(fields, number, path)
                comment_above = None
                continue
        if not rows:
            sep = _separator(content, number, path)
            candidate = comment_above
        fields = _split(content, sep)
        if not rows:
            width = len(fields)
            if width < 2:
                raise InputError(
                    f"only one column: expected {expected}",
                    path=path,
                    line=number,
                )
        elif len(fields) != width:
            raise InputError(
                f"this row has {_fields(len(fields))}, expected {width} like line {lines[0]}",
                path=path,
                line=number,
            )
        rows.append(_row(content, fields, header, path, number))
        lines.append(number)
        comment_above = None
    if not rows:
        if header is not None:
            raise InputError("a header row but no data rows", path=path, line=header.line)
        raise InputError("no data rows: only comments and blank lines", path=path)
    if header is None and candidate is not None:
        fields = _split_header(candidate[1]) if candidate[1] else []
        if len(fields) == width and not _NUMBER.fullmatch(fields[0]):
            header = _header(fields, candidate[0], path)
    if header is not None and len(header.names) != width:
        raise InputError(
            f"the header names {len(header.names)} column(s) but the data rows (from line {lines[0]}) "
            f"have {_fields(width)}",
            path=path,
            line=header.line,
        )
    return _Table(header, np.array(rows, dtype=float), lines, atoms)


def _separator(content: str, number: int, path) -> str | None:
    """The data separator decided by the first data row (None: runs of blanks)."""
    if ";" in content:
        return ";"
    if "," in content:
        blank_fields = content.split()
        if len(blank_fields) > 1 and all(_DECIMAL_COMMA.fullmatch(f) for f in blank_fields):
            raise InputError(
                f"decimal commas ({blank_fields[0]!r}): write numbers with a decimal point, e.g. "
                f"{blank_fields[0].replace(',', '.')!r}",
                path=path,
                line=number,
            )
        return ","
    return None


def _fields(count: int) -> str:
    return f"{count} field" if count == 1 else f"{count} fields"


def _split(content: str, sep: str | None) -> list[str]:
    if sep is None:
        return content.split()
    return [field.strip() for field in content.split(sep)]


def _split_header(content: str) -> list[str]:
    for sep in (";", ",", "\t"):
        if sep in content:
            return [field.strip() for field in content.split(sep)]
    fields: list[str] = []
    for token in content.split():
        # Keep "frequency (THz)" and "x [rad / s]" together when split at blanks.
        if fields and (token[0] in "([" or _unclosed(fields[-1])):
            fields[-1] += " " + token
        else:
            fields.append(token)
    return fields


def _unclosed(text: str) -> bool:
    return text.count("(") > text.count(")") or text.count("[") > text.count("]")


def _header(fields: list[str], number: int, path) -> _Header:
    names: list[str] = []
    units: list[str | None] = []
    seen: dict[str, int] = {}
    for k, field in enumerate(fields, start=1):
        match = _NAME_UNIT.fullmatch(field)
        if match:
            bare = match["name"].strip()
            unit = match["paren"] if match["paren"] is not None else match["bracket"]
            unit = unit.strip()
        else:
            bare, unit = field, None
        if not bare:
            raise InputError(f"header field {k} ({field!r}) has no column name", path=path, line=number)
        key = bare.casefold()
        if key in seen:
            first = names[seen[key] - 1]
            alike = "" if first == bare else f" ({first!r} and {bare!r}: case is ignored)"
            raise InputError(
                f"column name {bare!r} appears twice in the header, fields {seen[key]} and {k}{alike}",
                path=path,
                line=number,
            )
        seen[key] = k
        names.append(bare)
        units.append(unit)
    return _Header(names, units, fields, number)


def _row(content: str, fields: list[str], header: _Header | None, path, number: int) -> list[float]:
    # On ASCII without "_", float() accepts exactly the numbers _NUMBER does, and faster.
    if content.isascii() and "_" not in content:
        try:
            return [float(field) for field in fields]
        except ValueError:
            pass
    return [_number(field, k, header, path, number) for k, field in enumerate(fields)]


def _number(field: str, k: int, header: _Header | None, path, number: int) -> float:
    if _NUMBER.fullmatch(field):
        return float(field)
    where = f"field {k + 1}"
    if header is not None and k < len(header.names):
        where += f" ({header.names[k]})"
    if not field:
        problem = f"{where} is empty"
    elif _DECIMAL_COMMA.fullmatch(field):
        problem = (
            f"{where} is {field!r}: decimal commas are not supported, write {field.replace(',', '.')!r}"
        )
    else:
        problem = f"{where} is {field!r}, not a number"
    raise InputError(problem, path=path, line=number)


# --- the right kind of file ---------------------------------------------------------------------
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


def _refuse_heat_capacity(header: _Header | None, path) -> None:
    why = _cp_mark(header)
    if why is not None:
        raise InputError(
            f"this is a heat-capacity file, not a density of states ({why}); read it with read_heat_capacity",
            path=path,
            line=header.line,
        )


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


# --- columns, unit, total -----------------------------------------------------------------------
def _default_names(width: int) -> list[str]:
    return ["frequency"] + [f"column {k}" for k in range(1, width)]


def _select(columns, names: list[str], header: _Header | None, path) -> list[int]:
    """0-based indices of the chosen columns, frequency first."""
    if columns is None:
        return list(range(len(names)))
    if isinstance(columns, (str, int)):
        columns = [columns]
    keys = {n.casefold(): k for k, n in enumerate(names)}
    chosen: list[int] = []
    for item in columns:
        if isinstance(item, (int, np.integer)) and not isinstance(item, bool):
            k = int(item)
            if not 0 <= k < len(names):
                raise InputError(
                    f"columns: index {k} is outside the file's columns 0 to {len(names) - 1}", path=path
                )
        elif isinstance(item, str):
            if header is None:
                raise InputError(
                    f"columns: the file has no header row, so choose columns by 0-based index, not {item!r}",
                    path=path,
                )
            k = keys.get(item.strip().casefold(), -1)
            if k < 0:
                raise InputError(
                    f"columns: no column named {item!r}; the header (line {header.line}) names "
                    + ", ".join(names),
                    path=path,
                )
        else:
            raise InputError(f"columns: expected column names or 0-based indices, not {item!r}", path=path)
        if k in chosen:
            raise InputError(f"columns: column {names[k]!r} is chosen twice", path=path)
        chosen.append(k)
    if len(chosen) < 2:
        raise InputError("columns: choose the frequency column and at least one density column", path=path)
    return chosen


def _resolve_unit(unit: str | None, header: _Header | None, freq_col: int, path) -> str:
    given = None
    if unit is not None:
        try:
            given = check_unit(unit)
        except InputError as err:
            raise InputError(err.problem, path=path) from None
    written = header.units[freq_col] if header is not None else None
    if written is None:
        if given is None:
            raise InputError(
                "the frequency unit is not given: write it in the header, e.g. 'frequency (THz)', "
                f"or pass it (unit=, --unit); one of {', '.join(FREQUENCY_UNITS)}",
                path=path,
            )
        return given
    try:
        from_header = check_unit(written)
    except InputError:
        raise InputError(
            f"unknown frequency unit {written!r} in header field {freq_col + 1} "
            f"({header.fields[freq_col]!r}); expected one of {', '.join(FREQUENCY_UNITS)}",
            path=path,
            line=header.line,
        ) from None
    if given is not None and given != from_header:
        raise InputError(
            f"the header gives the frequencies in {from_header} but the unit {given} was asked for",
            path=path,
            line=header.line,
        )
    return from_header


def _total_and_partials(
    total: str | None, names: list[str], values: np.ndarray, path
) -> tuple[np.ndarray, dict[str, np.ndarray] | None]:
    keys = [n.casefold() for n in names]
    if total is None:
        pick = keys.index("total") if "total" in keys else None
    elif total.strip().casefold() == "sum":
        if "total" in keys:
            raise InputError(
                "total='sum' would add the 'total' column to the partials; leave it out with columns=",
                path=path,
            )
        pick = None
    elif total.strip().casefold() in keys:
        pick = keys.index(total.strip().casefold())
    else:
        raise InputError(
            f"total: no density column named {total!r}; the density columns are " + ", ".join(names), path=path
        )
    if pick is None:
        if len(names) == 1:
            return values[:, 0], None
        return values.sum(axis=1), {n: values[:, k] for k, n in enumerate(names)}
    partials = {n: values[:, k] for k, n in enumerate(names) if k != pick}
    return values[:, pick], partials or None


# --- writing tables ------------------------------------------------------------------------
def write_table(frame: pd.DataFrame, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Write a thermodynamic table as CSV with a commented header.

    The file starts with ``#`` lines giving the caution, the basis (per mole of formula
    units or of atoms), the unit of each column and, where the table says, its source,
    the low-temperature continuation applied (method and cut-off) and the zero-point
    energy; then the column names and the rows.  The text goes to a
    temporary file in the same folder that is renamed into place, so an interrupted
    write leaves any earlier file intact.

    Parameters
    ----------
    frame : pandas.DataFrame — a table from :func:`modeheat.thermo` (``attrs`` must hold
        ``units`` and ``per``)
    path : str or os.PathLike — the CSV file to write
    overwrite : bool — replace an existing regular file (by default that is an error)

    Returns
    -------
    pathlib.Path
        The file written.

    Raises
    ------
    InputError
        The file exists and `overwrite` is false, the path names a folder, a device, a
        FIFO, a socket or a symbolic link (:func:`check_table_destination`), the folder
        is missing or not writable, or the table carries no units or basis.
    """
    return write_text_file(path, _table_text(frame), overwrite=overwrite)


def write_text_file(path: str | os.PathLike, text: str, *, overwrite: bool = False) -> Path:
    """Write UTF-8 text to a new file, atomically; the way every modeheat file is written.

    The text goes to a temporary file in the same folder that is renamed into place, so
    an interrupted write leaves any earlier file intact; without `overwrite` an existing
    file is never replaced, even one created meanwhile.

    Parameters
    ----------
    path : str or os.PathLike — the file to write
    text : str — its whole content
    overwrite : bool — replace an existing regular file (by default that is an error)

    Returns
    -------
    pathlib.Path
        The file written.

    Raises
    ------
    InputError
        As :func:`write_table`: the file exists and `overwrite` is false, the path is not
        (or would not become) a regular file, or the folder is missing or not writable.
    """
    path = Path(path)
    check_table_destination(path)
    if not overwrite and path.exists():
        raise InputError("the file exists; choose another name or allow overwriting", path=path)
    folder = path.parent
    if not folder.is_dir():
        raise InputError(f"the folder {str(folder)!r} does not exist", path=path)
    temporary = folder / f".{path.name}.{secrets.token_hex(4)}.tmp"
    try:
        # os.open with mode 0o666 lets the umask give the file the permissions of any new file.
        fd = os.open(temporary, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666)
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())
        if overwrite:
            os.replace(temporary, path)
        else:
            _place_new(temporary, path)
    except FileExistsError:
        raise InputError("the file exists; choose another name or allow overwriting", path=path) from None
    except OSError as exc:
        raise InputError(f"cannot write the file ({exc.strerror or exc})", path=path) from None
    finally:
        temporary.unlink(missing_ok=True)
    return path


def check_table_destination(path: str | os.PathLike) -> None:
    """Refuse a table destination that is not, or would not become, a regular file.

    Writing renames a new file into place, which would replace a folder's name, a
    device such as ``/dev/null``, a FIFO, a socket or a symbolic link (not its target)
    by a regular file: each is refused.  A missing or existing regular file passes.

    Parameters
    ----------
    path : str or os.PathLike — the CSV file to be written

    Raises
    ------
    InputError
        The path names something other than a regular file; the message says what.
    """
    try:
        mode = os.lstat(path).st_mode
    except FileNotFoundError:
        return
    except OSError as exc:
        raise InputError(f"cannot check the output file ({exc.strerror or exc})", path=path) from None
    if stat.S_ISREG(mode):
        return
    if stat.S_ISDIR(mode):
        raise InputError("is a folder, not a file", path=path)
    if stat.S_ISLNK(mode):
        raise InputError("is a symbolic link; name its target or another file", path=path)
    raise InputError("is not a regular file (a device, FIFO or socket); choose a file name", path=path)


def _place_new(temporary: Path, path: Path) -> None:
    """Move `temporary` to `path` only if `path` does not exist (FileExistsError otherwise)."""
    try:
        # A hard link fails atomically if the name was taken meanwhile.
        os.link(temporary, path)
    except FileExistsError:
        raise
    except OSError:
        # Some file systems have no hard links: fall back on check-then-rename.
        if path.exists():
            raise FileExistsError(path) from None
        os.replace(temporary, path)


def _table_text(frame: pd.DataFrame) -> str:
    attrs = frame.attrs
    units: Mapping[str, str] | None = attrs.get("units")
    per = attrs.get("per")
    if not units or per not in ("formula", "atom", "gram"):
        raise InputError(
            "the table carries no units or basis in frame.attrs ('units', 'per'); make it with modeheat.thermo"
        )
    basis = attrs.get("basis") or basis_text(per, attrs.get("atoms", 1), attrs.get("molar_mass"))
    lines = [
        "modeheat thermodynamic table",
        f"caution: {CAUTION}",
        f"basis: {basis}",
        "units: " + "; ".join(f"{col} [{units[col]}]" for col in frame.columns if col in units),
    ]
    if attrs.get("source"):
        lines.append(f"source: {attrs['source']}")
    if attrs.get("low_t_summary"):
        lines.append(f"low-temperature continuation: {attrs['low_t_summary']}")
    zpe = attrs.get("zero_point_energy")
    if isinstance(zpe, (int, float)) and not isinstance(zpe, bool):
        unit_u = units.get("U", "J/mol")
        lines.append(f"zero-point energy: {zpe:.12g} {unit_u}")
    head = "".join("# " + " ".join(str(line).split()) + "\n" for line in lines)
    # Quoted, a "#" in a text cell is not a comment to pandas.read_csv(comment="#").
    hashed = any(
        frame[col].astype(str).str.contains("#", regex=False).any()
        for col in frame.columns
        if not pd.api.types.is_numeric_dtype(frame[col])
    )
    body = frame.to_csv(
        index=False,
        float_format="%.12g",
        na_rep="nan",
        lineterminator="\n",
        quoting=csv.QUOTE_NONNUMERIC if hashed else csv.QUOTE_MINIMAL,
    )
    return head + body


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


def _positive_argument(label: str, value, path) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{label} must be a number, not {value!r}", path=path) from None
    if not (np.isfinite(v) and v > 0):
        raise InputError(f"{label} must be positive and finite, not {value!r}", path=path)
    return v


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


# --- C_p ↔ C_v ----------------------------------------------------------------------------------
def _of_temperature(value, T: np.ndarray, label: str) -> np.ndarray:
    """A number, an array matching T, or a callable of T (K) → array like T."""
    v = value(T) if callable(value) else value
    try:
        out = np.broadcast_to(np.asarray(v, dtype=float), T.shape)
    except (TypeError, ValueError):
        raise InputError(f"{label} must be a number, an array like the temperatures or a callable of T") from None
    if not np.all(np.isfinite(out)):
        raise InputError(f"{label} must be finite")
    return out


def _dilatation(T, c, alpha, bulk_modulus, molar_volume, gruneisen, A, who):
    try:
        T = np.asarray(T, dtype=float)
        c = np.asarray(c, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{who}: temperatures and heat capacities must be numbers") from None
    if T.shape != c.shape and T.ndim and c.ndim:
        raise InputError(f"{who}: {c.size} heat capacities for {T.size} temperatures; give one per temperature")
    T, c = np.broadcast_arrays(T, c)
    if np.any(~np.isfinite(T) | (T < 0) | (T > KELVIN_RANGE[1])):
        raise InputError(f"{who}: temperatures must be finite, ≥ 0 K and at most {KELVIN_RANGE[1]:g} K")
    if np.any(~np.isfinite(c)):
        raise InputError(f"{who}: heat capacities must be finite")
    identity = bulk_modulus is not None or molar_volume is not None
    forms = [identity, gruneisen is not None, A is not None]
    if sum(forms) != 1:
        raise InputError(
            f"{who}: give one form: alpha, bulk_modulus and molar_volume (thermodynamic identity); "
            "alpha and gruneisen (Grüneisen); or A (Nernst–Lindemann)"
        )
    if identity:
        if alpha is None or bulk_modulus is None or molar_volume is None:
            raise InputError(f"{who}: the thermodynamic identity needs alpha, bulk_modulus and molar_volume")
        b = _of_temperature(bulk_modulus, T, "bulk_modulus")
        v = _of_temperature(molar_volume, T, "molar_volume")
        a = _of_temperature(alpha, T, "alpha")
        with np.errstate(over="ignore", invalid="ignore"):  # the callers reject non-finite results
            return T, c, "identity", a**2 * b * v * T
    if gruneisen is not None:
        if alpha is None:
            raise InputError(f"{who}: the Grüneisen form needs alpha and gruneisen")
        a, g = _of_temperature(alpha, T, "alpha"), _of_temperature(gruneisen, T, "gruneisen")
        with np.errstate(over="ignore", invalid="ignore"):
            return T, c, "gruneisen", 1.0 + a * g * T
    if alpha is not None:
        raise InputError(f"{who}: the Nernst–Lindemann form takes A alone, not alpha")
    a = _of_temperature(A, T, "A")
    with np.errstate(over="ignore", invalid="ignore"):
        return T, c, "nernst-lindemann", a * T


def cp_from_cv(
    temperatures,
    cv,
    *,
    alpha=None,
    bulk_modulus=None,
    molar_volume=None,
    gruneisen=None,
    A=None,
) -> np.ndarray:
    """C_p from C_v, in the same unit (J/(mol K) per mole of formula units).

    One of three forms, chosen by the arguments given:

    * the thermodynamic identity C_p − C_v = α_V²·B_T·V_m·T (``alpha``,
      ``bulk_modulus``, ``molar_volume``);
    * the Grüneisen form C_p = C_v·(1 + α_V·γ_G·T) (``alpha``, ``gruneisen``), exact
      with the thermodynamic Grüneisen parameter γ_G = α_V·B_T·V_m/C_v;
    * the Nernst–Lindemann form C_p − C_v = A·C_p²·T (Nernst & Lindemann, 1911)
      (``A``), solved for C_p: C_p = 2·C_v/(1 + √(1 − 4·A·T·C_v)).

    Every coefficient may be a number, an array like the temperatures or a callable
    of T (K) returning one.

    Parameters
    ----------
    temperatures : array_like — T in K, ≥ 0
    cv : array_like — C_v in J/(mol K)
    alpha : float, array or callable — volumetric thermal expansion coefficient α_V in
        1/K (three times the linear coefficient of a cubic solid)
    bulk_modulus : float, array or callable — isothermal bulk modulus B_T in Pa
    molar_volume : float, array or callable — molar volume V_m in m³/mol (per mole of
        the same units as the heat capacity)
    gruneisen : float, array or callable — Grüneisen parameter γ_G, dimensionless
    A : float, array or callable — Nernst–Lindemann coefficient in mol/J

    Returns
    -------
    numpy.ndarray — C_p in J/(mol K)

    Raises
    ------
    InputError
        Not exactly one form is given, a coefficient is missing or not finite, or
        4·A·T·C_v > 1 (no C_p satisfies the Nernst–Lindemann form).
    """
    T, c, form, k = _dilatation(temperatures, cv, alpha, bulk_modulus, molar_volume, gruneisen, A, "cp_from_cv")
    with np.errstate(over="ignore", invalid="ignore"):  # overflows are caught as non-finite results
        if form == "identity":
            return _finite(c + k, T, "cp_from_cv")
        if form == "gruneisen":
            return _finite(c * k, T, "cp_from_cv")
        disc = 1.0 - 4.0 * k * c
    if np.any(~(disc >= 0)):
        i = int(np.flatnonzero(~(disc.ravel() >= 0))[0])
        raise InputError(
            f"cp_from_cv: no C_p satisfies C_p − C_v = A·C_p²·T at T = {float(T.ravel()[i]):g} K: "
            f"4·A·T·C_v = {float(1 - disc.ravel()[i]):.6g} exceeds 1 (A too large)",
            index=i,
        )
    # This form of the root keeps full precision as A·T·C_v → 0.
    return 2.0 * c / (1.0 + np.sqrt(disc))


def cv_from_cp(
    temperatures,
    cp,
    *,
    alpha=None,
    bulk_modulus=None,
    molar_volume=None,
    gruneisen=None,
    A=None,
) -> np.ndarray:
    """C_v from C_p, in the same unit: the inverse of :func:`cp_from_cv`.

    Thermodynamic identity C_v = C_p − α_V²·B_T·V_m·T; Grüneisen form
    C_v = C_p/(1 + α_V·γ_G·T); Nernst–Lindemann form (Nernst & Lindemann, 1911)
    C_v = C_p − A·C_p²·T.  Parameters as for :func:`cp_from_cv`, with `cp` the
    heat capacity at constant pressure in J/(mol K).
    """
    T, c, form, k = _dilatation(temperatures, cp, alpha, bulk_modulus, molar_volume, gruneisen, A, "cv_from_cp")
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # caught as non-finite results
        if form == "identity":
            out = c - k
        elif form == "gruneisen":
            out = c / k
        else:
            out = c - k * c * c
    return _finite(out, T, "cv_from_cp")


def _finite(values: np.ndarray, T: np.ndarray, who: str) -> np.ndarray:
    """`values`, or an InputError naming the first temperature where they are not finite."""
    bad = np.flatnonzero(~np.isfinite(values.ravel()))
    if bad.size:
        i = int(bad[0])
        raise InputError(
            f"{who}: the result is not finite at T = {float(T.ravel()[i]):g} K; the coefficients are far too large",
            index=i,
        )
    return values


def nernst_lindemann_coefficient(temperature: float, cp: float, *, alpha, bulk_modulus, molar_volume) -> float:
    """The Nernst–Lindemann coefficient A in mol/J from expansion data at one temperature.

    Equating the thermodynamic identity C_p − C_v = α_V²·B_T·V_m·T with the
    Nernst–Lindemann form C_p − C_v = A·C_p²·T at a reference temperature gives
    A = α_V²·B_T·V_m / C_p².  Elsewhere A·C_p²·T then scales C_p − C_v with
    temperature; it is close to constant because α_V follows C_v (Grüneisen's rule).

    Parameters
    ----------
    temperature : float — the reference temperature in K (the relation holds at any
        T; it is an argument so that callables of T can be given)
    cp : float — C_p at that temperature in J/(mol K)
    alpha : float or callable — volumetric expansion coefficient α_V in 1/K
    bulk_modulus : float or callable — isothermal bulk modulus B_T in Pa
    molar_volume : float or callable — molar volume V_m in m³/mol
    """
    T = np.asarray(float(temperature))
    if not (np.isfinite(T) and T > 0):
        raise InputError(f"temperature must be positive and finite, not {temperature!r}")
    if not (np.isfinite(cp) and cp > 0):
        raise InputError(f"cp must be positive and finite, not {cp!r}")
    a = _of_temperature(alpha, T, "alpha")
    b = _of_temperature(bulk_modulus, T, "bulk_modulus")
    v = _of_temperature(molar_volume, T, "molar_volume")
    return float(a * a * b * v / (cp * cp))
