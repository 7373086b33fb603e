"""The shared text tokeniser and column parser of every file modeheat reads.

The rules (comments, separators, numbers, headers, column names, the ``# atoms:``
line) are stated once, in :mod:`modeheat.io`.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .. import _checks
from ..errors import InputError

__all__ = []


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


# --- choosing columns ------------------------------------------------------------------------
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


def _positive_argument(label: str, value, path) -> float:
    return _checks.positive(label, value, path=path)
