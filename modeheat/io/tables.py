"""Writing thermodynamic tables as comma-separated values (format: :mod:`modeheat.io`)."""

from __future__ import annotations

import csv
import os
import secrets
import stat
from collections.abc import Mapping
from pathlib import Path

import pandas as pd

from ..errors import InputError
from ..thermo import CAUTION, basis_text

__all__ = ["write_table", "write_text_file", "check_table_destination", "combine_tables"]


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


def write_text_file(path: str | os.PathLike, text: str | bytes, *, overwrite: bool = False) -> Path:
    """Write UTF-8 text (or bytes) to a new file, atomically; the way every modeheat file is written.

    The text goes to a temporary file in the same folder that is renamed into place, so
    an interrupted write leaves any earlier file intact; without `overwrite` an existing
    file is never replaced, even one created meanwhile.

    Parameters
    ----------
    path : str or os.PathLike — the file to write
    text : str or bytes — its whole content (str is written as UTF-8, bytes as they are:
        figures go through here too)
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
        with os.fdopen(fd, "wb") as handle:
            handle.write(text.encode("utf-8") if isinstance(text, str) else text)
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


# Table-wide metadata; every other scalar in a table's attrs is per source and becomes a column.
_TABLE_WIDE = ("units", "per", "basis", "molar_mass", "caution", "source", "atoms")


def combine_tables(tables: list[tuple[str, pd.DataFrame]]) -> pd.DataFrame:
    """One table of several sources: ``source`` and ``atoms`` first, the thermodynamic
    columns, then one column per further per-source value (``zero_point_energy``, the
    low-temperature method, …), repeated on every row of its source (the "Table files"
    format of :mod:`modeheat.io`).

    Parameters
    ----------
    tables : list of (str, DataFrame) — each source's name and its :func:`modeheat.thermo` table
    """
    import numpy as np

    first = tables[0][1].attrs
    units = dict(first["units"])
    units.setdefault("zero_point_energy", units["U"])
    extra: list[str] = []
    for _, frame in tables:
        for key, value in frame.attrs.items():
            scalar = value is None or isinstance(value, (str, int, float, bool, np.generic))
            if key not in _TABLE_WIDE and key not in extra and scalar:
                extra.append(key)
    parts = []
    for source, frame in tables:
        part = frame.copy()
        part.attrs = {}
        part.insert(0, "source", source)
        part.insert(1, "atoms", float(frame.attrs["atoms"]))
        for key in extra:
            part[key] = frame.attrs.get(key)
        parts.append(part)
    frame = pd.concat(parts, ignore_index=True)
    bases = list(dict.fromkeys(table.attrs["basis"] for _, table in tables))
    frame.attrs = {
        "units": units,
        "per": first["per"],
        "basis": bases[0] if len(bases) == 1 else "per source (see the atoms column): " + " | ".join(bases),
        "molar_mass": first.get("molar_mass"),
        "caution": CAUTION,
    }
    return frame
