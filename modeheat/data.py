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

Negative frequencies are imaginary modes; the spectrum excludes them with a warning
(an error when every frequency is ≤ 0).  Unsorted or repeated frequencies and tiny
negative densities are repaired with a warning; see :class:`~modeheat.spectrum.Spectrum`.
Anything else that does not fit — a missing, binary, UTF-16 or otherwise non-UTF-8
file, no data rows, a row of the wrong length, text where a number belongs, a repeated
column name, an unknown unit — is an :class:`~modeheat.errors.InputError` whose message
names the file and, where one applies, the 1-based line.

An example::

    # Invented spectrum of a two-atom compound
    frequency (THz), total, A, B
    0.0, 0.0, 0.0, 0.0
    0.5, 0.012, 0.008, 0.004   # a trailing comment
    1.0, 0.048, 0.032, 0.016

Table files
-----------
:func:`write_table` writes a table from :func:`modeheat.thermo` as comma-separated
values: ``#`` comment lines with the caution, the basis, the units and the source,
then one header row of column names and one row per temperature.  Numbers are written
to 12 significant digits; a missing value (a Debye temperature that does not exist)
is written ``nan``.
"""

from __future__ import annotations

import os
import re
import secrets
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import InputError
from .spectrum import Spectrum
from .thermo import CAUTION
from .units import FREQUENCY_UNITS, check_unit

__all__ = ["read_spectrum", "write_table"]

_NUMBER = re.compile(r"[+-]?(?:(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?|nan|inf|infinity)", re.IGNORECASE | re.ASCII)
_DECIMAL_COMMA = re.compile(r"[+-]?\d*,\d+(?:[eE][+-]?\d+)?", re.ASCII)
_NAME_UNIT = re.compile(r"(?P<name>.*?)\s*(?:\((?P<paren>[^()]*)\)|\[(?P<bracket>[^\[\]]*)\])")


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


def read_spectrum(
    path: str | os.PathLike,
    *,
    unit: str | None = None,
    atoms: float = 1,
    columns: Sequence[str | int] | None = None,
    total: str | None = None,
    name: str | None = None,
    low_t: str | float = "fit",
    low_t_cutoff: float | None = None,
) -> Spectrum:
    """Read a density of states from a text file of columns.

    The file format is described in the module docstring (:mod:`modeheat.data`).

    Parameters
    ----------
    path : str or os.PathLike — the file
    unit : str, optional — frequency unit ("THz", "meV", "cm-1", "rad/s" or "K"); needed
        when the header gives none, and must agree with the header when it does
    atoms : float — atoms per formula unit
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
        The file cannot be read or is not a valid spectrum; the message names the file
        and, where one applies, the line.

    Warns
    -----
    SpectrumWarning
        A repair of the data (unsorted or repeated frequencies, tiny negative densities,
        imaginary modes excluded); the message quotes `name`.
    """
    table = _parse(_read_text(path), path)
    names = table.header.names if table.header else _default_names(table.values.shape[1])
    chosen = _select(columns, names, table.header, path)
    freq_col, dens_cols = chosen[0], chosen[1:]
    unit = _resolve_unit(unit, table.header, freq_col, path)
    density, partials = _total_and_partials(total, [names[i] for i in dens_cols], table.values[:, dens_cols], path)
    try:
        return Spectrum(
            table.values[:, freq_col],
            density,
            unit=unit,
            atoms=atoms,
            partials=partials,
            name=Path(path).name if name is None else name,
            low_t=low_t,
            low_t_cutoff=low_t_cutoff,
        )
    except InputError as err:
        index = err.index
        line = table.lines[index] if index is not None and 0 <= index < len(table.lines) else None
        raise InputError(err.problem, path=path, line=line) from None


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


def _parse(text: str, path) -> _Table:
    header: _Header | None = None
    comment_above: tuple[int, str] | None = None  # the comment line just above, with its number
    candidate: tuple[int, str] | None = None  # that comment when the first data row came
    sep: str | None = None  # None: fields separated by blanks
    width = 0
    rows: list[list[float]] = []
    lines: list[int] = []
    for number, raw_line in enumerate(text.split("\n"), start=1):
        stripped = raw_line.strip()
        if not stripped:
            comment_above = None
            continue
        if stripped.startswith("#"):
            comment_above = (number, stripped[1:].strip())
            continue
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
                    "only one column: expected the frequency followed by at least one density column",
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
    return _Table(header, np.array(rows, dtype=float), lines)


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
    units or of atoms), the unit of each column and, where the table says, its source
    and zero-point energy; then the column names and the rows.  The text goes to a
    temporary file in the same folder that is renamed into place, so an interrupted
    write leaves any earlier file intact.

    Parameters
    ----------
    frame : pandas.DataFrame — a table from :func:`modeheat.thermo` (``attrs`` must hold
        ``units`` and ``per``)
    path : str or os.PathLike — the CSV file to write
    overwrite : bool — replace an existing file (by default that is an error)

    Returns
    -------
    pathlib.Path
        The file written.

    Raises
    ------
    InputError
        The file exists and `overwrite` is false, the folder is missing or not writable,
        or the table carries no units or basis.
    """
    path = Path(path)
    text = _table_text(frame)
    if path.is_dir():
        raise InputError("is a folder, not a file", path=path)
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
    if not units or per not in ("formula", "atom"):
        raise InputError(
            "the table carries no units or basis in frame.attrs ('units', 'per'); make it with modeheat.thermo"
        )
    if per == "atom":
        basis = "per mole of atoms"
    else:
        basis = "per mole of formula units"
        if attrs.get("atoms") is not None:
            basis += f" (atoms per formula unit: {attrs['atoms']:g})"
    lines = [
        "modeheat thermodynamic table",
        f"caution: {CAUTION}",
        f"basis: {basis}",
        "units: " + "; ".join(f"{col} [{units[col]}]" for col in frame.columns if col in units),
    ]
    if attrs.get("source"):
        lines.append(f"source: {attrs['source']}")
    zpe = attrs.get("zero_point_energy")
    if isinstance(zpe, (int, float)) and not isinstance(zpe, bool):
        unit_u = units.get("U", "J/mol")
        lines.append(f"zero-point energy: {zpe:.12g} {unit_u}")
    head = "".join("# " + " ".join(str(line).split()) + "\n" for line in lines)
    body = frame.to_csv(index=False, float_format="%.12g", na_rep="nan", lineterminator="\n")
    return head + body
