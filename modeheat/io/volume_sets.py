"""Volume-set files: spectra at several volumes with their static energies (format of our own).

A volume set is a small table file naming one DOS file per volume, the input of the
quasi-harmonic calculation (:func:`modeheat.quasi_harmonic`).  The table is UTF-8 text::

    # INVENTED: quellium at six lattice constants — not a real material
    # volume unit: A3
    # energy unit: eV
    # atoms: 1
    volume, energy, dos file
    15.625, -3.40512, quellium_qh_v1.txt
    16.003, -3.41987, quellium_qh_v2.txt
    ...

* **Comments.** ``#`` starts a comment: a whole line, or the rest of a data line.
  Blank lines are ignored.
* **Key lines.** A comment of the form ``# key: value`` with one of these keys (any
  case) sets a property of the whole set, wherever it stands:

  - ``volume unit`` — "A3" (Å³ per formula unit, the default), "cm3/mol" or "m3/mol";
  - ``energy unit`` — "eV" (per formula unit, the default), "meV", "Ry", "Ha",
    "J/mol" or "kJ/mol";
  - ``atoms`` — atoms per formula unit, passed to every DOS read (``atoms=``);
  - ``frequency unit`` — passed to every DOS read (``unit=``), for DOS files whose
    header gives none.

  An unknown unit, or a key given twice with two values, is an error naming the line.
  Any other comment (``# INVENTED: …``) is only a comment.
* **Header row.** Optional: the first non-comment row when its first field is not a
  number.  Its names are free, but a unit written after the volume or energy name
  (``volume (cm3/mol), energy (kJ/mol), dos file``) counts like the key line, and the
  two must agree.
* **Data rows.** Three fields: the volume, the static (lattice) energy E₀ at that
  volume, and the DOS file's name — relative to the table's folder, or absolute.  The
  first data row decides the separator: ``;`` if it holds one, else ``,``, else runs of
  blanks (then file names cannot hold spaces).  Numbers use a decimal point.  Volumes
  are given in increasing order, each once, at least 4 of them.
* Each DOS file is read with :func:`modeheat.read_spectrum` (``unit=``, ``atoms=`` and
  ``low_t=`` as above), so it follows the spectrum-file rules of :mod:`modeheat.io`.

Errors are :class:`~modeheat.errors.InputError`\\ s naming the table and the line: a
missing table, no data rows, a row without three fields, text where a number belongs,
a DOS file that does not exist (the message names it), fewer than 4 volumes, volumes
out of order or repeated, spectra for different atom counts (each the line of the row
at fault).  A DOS file's own read error passes through unchanged and names the DOS file.

Writing (:func:`write_volume_set`) gives the table ``<stem>.txt`` (any name) and the DOS
files ``<stem>_v1.txt`` … ``<stem>_v<n>.txt`` beside it.  Numbers are written with
``repr`` (the shortest text that reads back as the same float), every DOS file with a
``# atoms:`` line and its frequency unit in the header, the density normalised to 3 modes
per atom by the trapezoid rule on its grid (the way DOS files are normalised; the one a
spectrum stores is normalised together with its low-temperature continuation).  Reading
the files back gives the same volumes, energies and units exactly, the same frequency
grids exactly and the same densities to the last bit or two (reading normalises them
again).  What the files do not hold: the spectra's names (a spectrum read back is named
after its file) and their low-temperature continuation (chosen again on reading,
``read_volume_set(low_t=)``).
"""

from __future__ import annotations

import math
import os
import re
from collections.abc import Iterable
from pathlib import Path

import numpy as np

from .. import _checks
from ..errors import InputError
from ..quasiharmonic import _ENERGY_ALIASES, _VOLUME_ALIASES, ENERGY_UNITS, MIN_VOLUMES, VOLUME_UNITS, VolumeSet, _unit
from ..spectrum import Spectrum
from ..units import check_unit
from .columns import (
    _DECIMAL_COMMA,
    _NAME_UNIT,
    _NUMBER,
    _atoms_line,
    _fields,
    _Header,
    _number,
    _read_text,
    _separator,
    _split,
    _split_header,
)
from .spectrum_files import read_spectrum
from .tables import check_table_destination, write_text_file

__all__ = ["read_volume_set", "write_volume_set"]

# The key lines of a table; the value may be followed by a comment of its own.
_KEY_LINE = re.compile(
    r"(?P<key>volume\s+unit|energy\s+unit|atoms|frequency\s+unit)\s*:\s*(?P<value>[^#]*?)\s*(?:#.*)?",
    re.IGNORECASE,
)
_COLUMNS = _Header(["volume", "energy", "dos file"], [None, None, None], ["volume", "energy", "dos file"], 0)


# --- reading ------------------------------------------------------------------------------
def read_volume_set(
    path: str | os.PathLike,
    *,
    unit: str | None = None,
    atoms: float | None = None,
    low_t: str | float = "auto",
    name: str | None = None,
) -> VolumeSet:
    """Read a volume set: a table of volumes, static energies and DOS files.

    The format is described in the module docstring (:mod:`modeheat.io.volume_sets`,
    also in :mod:`modeheat.io`).

    Parameters
    ----------
    path : str or os.PathLike — the table file
    unit : str, optional — frequency unit of DOS files whose header gives none ("THz",
        "meV", "cm-1", "rad/s" or "K"); must agree with the table's ``# frequency unit:``
    atoms : float, optional — atoms per formula unit for every DOS file; must agree with
        the table's ``# atoms:`` line
    low_t : "auto", "fit", "extrapolate", "off" or float — the low-temperature
        continuation of every spectrum (:class:`~modeheat.spectrum.Spectrum`)
    name : str, optional — the set's name, by default the table's file name

    Returns
    -------
    VolumeSet
        Volumes and energies in the table's units, one spectrum per volume (each named
        after its DOS file).

    Raises
    ------
    InputError
        A table or DOS file that cannot be read or does not fit the format, or volumes
        a :class:`~modeheat.VolumeSet` refuses; the message names the file and the line.

    Warns
    -----
    SpectrumWarning, AtomCountWarning
        As :func:`~modeheat.read_spectrum`, for a DOS file.
    """
    table = _parse_table(path)
    keys = table["keys"]
    volume_unit = keys["volume unit"][0] if "volume unit" in keys else "A3"
    energy_unit = keys["energy unit"][0] if "energy unit" in keys else "eV"
    unit = _agree("frequency unit", unit, keys, path, check_unit)
    atoms = _agree("atoms", atoms, keys, path, _checks.atoms)
    volumes, energies, files, lines = table["volumes"], table["energies"], table["files"], table["lines"]

    if len(lines) < MIN_VOLUMES:
        raise InputError(
            f"{len(lines)} data row{'s' if len(lines) != 1 else ''} (one volume each): a volume set needs at least "
            f"{MIN_VOLUMES} volumes (the equations of state have 4 parameters)",
            path=path,
            line=lines[-1],
        )
    _volume_set(volumes, energies, None, volume_unit, energy_unit, name, path, lines)
    folder = Path(path).parent
    dos_paths = []
    for file, line in zip(files, lines):
        dos = Path(file)
        dos = dos if dos.is_absolute() else folder / dos
        try:
            what = None if dos.is_file() else "is not a file" if dos.exists() else "does not exist"
        except (OSError, ValueError) as exc:  # a name too long, or one the system refuses
            what = f"cannot be looked up ({getattr(exc, 'strerror', None) or exc})"
        if what is not None:
            raise InputError(f"the DOS file {file!r} {what} (looked for {str(dos)!r})", path=path, line=line)
        dos_paths.append(dos)
    spectra = [read_spectrum(dos, unit=unit, atoms=atoms, low_t=low_t) for dos in dos_paths]
    return _volume_set(volumes, energies, spectra, volume_unit, energy_unit,
                       Path(path).name if name is None else name, path, lines)


def _volume_set(volumes, energies, spectra, volume_unit, energy_unit, name, path, lines) -> VolumeSet:
    """The VolumeSet, its own errors re-raised naming the table and the row's line."""
    try:
        return VolumeSet(volumes, energies, spectra, volume_unit=volume_unit, energy_unit=energy_unit, name=name)
    except InputError as err:
        line = lines[err.index] if err.index is not None and 0 <= err.index < len(lines) else None
        raise InputError(err.problem, path=path, line=line) from None


def _agree(key: str, given, keys: dict, path, check):
    """The argument or the table's key line for `key` (checked alike); they must agree."""
    if given is not None:
        try:
            given = check(given)
        except InputError as err:
            raise InputError(err.problem, path=path) from None
    if key not in keys:
        return given
    value, line = keys[key]
    if given is not None and given != value and not (key == "atoms" and math.isclose(given, value, rel_tol=1e-12)):
        raise InputError(f"{key} {given!r} was asked for but the table says {key}: {value!r}", path=path, line=line)
    return value


def _parse_table(path) -> dict:
    """Key lines, header units and the data rows (volume, energy, file, line) of a table."""
    text = _read_text(path)
    keys: dict[str, tuple[object, int]] = {}
    header_seen = False
    sep: str | None = None
    volumes: list[float] = []
    energies: list[float] = []
    files: list[str] = []
    lines: list[int] = []
    header_line = None
    for number, raw_line in enumerate(text.split("\n"), start=1):
        stripped = raw_line.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            _key_line(stripped[1:].strip(), number, path, keys)
            continue
        content = stripped.split("#", 1)[0].strip()
        if not lines and not header_seen:
            header_seen = True
            fields = _split_header(content)
            if not _NUMBER.fullmatch(fields[0]):
                header_line = number
                for field, key in zip(fields[:2], ("volume unit", "energy unit")):
                    _header_unit(field, key, number, path, keys)
                continue
        if not lines:
            _refuse_decimal_commas(content, number, path)
            sep = _separator(content, number, path)
        fields = _split(content, sep)
        if len(fields) != 3:
            hint = (
                "; with blank-separated fields a file name cannot hold spaces: separate the fields with ',' or ';'"
                if sep is None and len(fields) > 3
                else ""
            )
            raise InputError(
                f"this row has {_fields(len(fields))}, expected 3: volume, energy, DOS file{hint}",
                path=path,
                line=number,
            )
        for k, values in enumerate((volumes, energies)):
            value = _number(fields[k], k, _COLUMNS, path, number)
            if not math.isfinite(value):
                raise InputError(
                    f"field {k + 1} ({_COLUMNS.names[k]}) is {fields[k]!r}: "
                    "volumes and energies must be finite numbers",
                    path=path,
                    line=number,
                )
            values.append(value)
        if not fields[2]:
            raise InputError("field 3 (dos file) is empty: name the DOS file of this volume", path=path, line=number)
        files.append(fields[2])
        lines.append(number)
    if not lines:
        if header_line is not None:
            raise InputError("a header row but no data rows", path=path, line=header_line)
        raise InputError("no data rows: only comments and blank lines", path=path)
    return {"keys": keys, "volumes": volumes, "energies": energies, "files": files, "lines": lines}


def _key_line(text: str, number: int, path, keys: dict) -> None:
    """Record a ``key: value`` comment (text after the ``#``); other comments are ignored."""
    match = _KEY_LINE.fullmatch(text)
    if match is None:
        return
    key = " ".join(match["key"].lower().split())
    value = match["value"]
    if key == "atoms":
        parsed: object = _atoms_line(f"atoms: {value}", number, path)
    else:
        try:
            parsed = _unit_value(key, value)
        except InputError as err:
            raise InputError(err.problem, path=path, line=number) from None
    _set_key(key, parsed, number, path, keys)


def _unit_value(key: str, value: str) -> str:
    if key == "volume unit":
        return _unit("volume", value, _VOLUME_ALIASES, VOLUME_UNITS)
    if key == "energy unit":
        return _unit("energy", value, _ENERGY_ALIASES, ENERGY_UNITS)
    return check_unit(value)


def _set_key(key: str, value, number: int, path, keys: dict) -> None:
    if key in keys and keys[key][0] != value:
        first, line = keys[key]
        raise InputError(
            f"the {key} {value!r} differs from the {first!r} of line {line}: give it once", path=path, line=number
        )
    keys.setdefault(key, (value, number))


def _header_unit(field: str, key: str, number: int, path, keys: dict) -> None:
    """A unit written in the header after the volume or energy name counts like its key line."""
    match = _NAME_UNIT.fullmatch(field)
    if match is None:
        return
    written = (match["paren"] if match["paren"] is not None else match["bracket"]).strip()
    try:
        value = _unit_value(key, written)
    except InputError as err:
        raise InputError(f"header field {field!r}: {err.problem}", path=path, line=number) from None
    _set_key(key, value, number, path, keys)


def _refuse_decimal_commas(content: str, number: int, path) -> None:
    blank_fields = content.split()
    if len(blank_fields) == 3 and all(_DECIMAL_COMMA.fullmatch(f) for f in blank_fields[:2]):
        raise InputError(
            f"decimal commas ({blank_fields[0]!r}): write numbers with a decimal point, e.g. "
            f"{blank_fields[0].replace(',', '.')!r}",
            path=path,
            line=number,
        )


# --- writing ------------------------------------------------------------------------------
def write_volume_set(
    path: str | os.PathLike,
    volume_set: VolumeSet,
    *,
    overwrite: bool = False,
    comments: Iterable[str] | str = (),
) -> list[Path]:
    """Write a volume set: the table at `path` and one DOS file per volume beside it.

    The DOS files are named ``<table stem>_v<k>.txt``, k = 1 … n, in the table's folder;
    the format is described in :mod:`modeheat.io.volume_sets`.  Every check comes
    before the first file is written: without `overwrite`, any existing file among them
    is an error and nothing is written (should a file appear meanwhile, the files this
    call made are removed again).  Each file is written atomically
    (:func:`~modeheat.io.tables.write_text_file`); the DOS files go first, the table
    last, so a table never names a missing file.

    Parameters
    ----------
    path : str or os.PathLike — the table file
    volume_set : VolumeSet — with spectra; each spectrum a sampled density (built from
        a grid, not from modes or a histogram)
    overwrite : bool — replace existing files (by default that is an error)
    comments : str or iterable of str — comment lines written at the top of the table
        and of every DOS file (e.g. where the data come from); a line may not read as
        a key line (``volume unit: …``, ``atoms: …``)

    Returns
    -------
    list of pathlib.Path
        The table, then the DOS files in the order of the volumes.

    Raises
    ------
    InputError
        A set without spectra, a spectrum that is not sampled or whose partial names a
        file header cannot hold, a table name that would spoil the DOS file names
        (``#``, ``;``, a line break, blanks at either end), an existing file without
        `overwrite`, a destination that is not a regular file, a missing folder.
    """
    if not isinstance(volume_set, VolumeSet):
        raise InputError(f"write_volume_set needs a VolumeSet, not {type(volume_set).__name__}")
    if volume_set.spectra is None:
        raise InputError("this volume set has no spectra: a volume-set file names a DOS file for every volume")
    path = Path(path)
    notes = _comment_lines(comments)
    stem = path.stem
    if not stem or stem != stem.strip() or any(c in stem for c in "#;\n\r"):
        raise InputError(
            f"the table's name {path.name!r} would spoil the DOS file names written in it (they hold its stem): "
            "choose a name without '#', ';', line breaks or blanks at either end",
            path=path,
        )
    n = len(volume_set)
    dos_paths = [path.parent / f"{stem}_v{k}.txt" for k in range(1, n + 1)]
    texts = [
        _dos_text(sp, k, n, volume_set, path.name, notes) for k, sp in enumerate(volume_set.spectra, start=1)
    ]
    texts.insert(0, _table_text(volume_set, [p.name for p in dos_paths], notes))
    targets = [path, *dos_paths]
    for target in targets:
        check_table_destination(target)
        if not overwrite and (target.exists() or target.is_symlink()):
            raise InputError(
                "the file exists; nothing was written (choose another table name or pass overwrite=True)", path=target
            )
    written: list[Path] = []
    try:
        for target, text in zip(targets[1:] + targets[:1], texts[1:] + texts[:1]):
            write_text_file(target, text, overwrite=overwrite)
            written.append(target)
    except InputError:
        if not overwrite:  # every file written so far is new: leave the folder as it was
            for target in written:
                target.unlink(missing_ok=True)
        raise
    return targets


def _comment_lines(comments) -> list[str]:
    if isinstance(comments, str):
        comments = [comments]
    lines: list[str] = []
    for item in comments:
        if not isinstance(item, str):
            raise InputError(f"comments must be strings, not {item!r}")
        for line in item.splitlines() or [""]:
            line = line.rstrip()  # leading blanks indent a continued comment
            if _KEY_LINE.fullmatch(line.strip()):
                raise InputError(
                    f"the comment {line!r} would read as a key line of the file; reword it (e.g. without the colon)"
                )
            lines.append(line)
    return lines


def _comment_block(notes: list[str]) -> list[str]:
    return [f"# {line}".rstrip() for line in notes]


def _table_text(vs: VolumeSet, names: list[str], notes: list[str]) -> str:
    sep = "; " if any("," in name for name in names) else ", "
    atoms = {sp.atoms for sp in vs.spectra}
    lines = [
        *_comment_block(notes),
        f"# Volume set: the static energy and the density-of-states file at each of {len(vs)} volumes.",
        f"# volume unit: {vs.volume_unit}",
        f"# energy unit: {vs.energy_unit}",
        *([f"# atoms: {float(atoms.pop())!r}"] if len(atoms) == 1 else []),
        sep.join(["volume", "energy", "dos file"]),
    ]
    lines += [
        sep.join([repr(float(v)), repr(float(e)), name]) for v, e, name in zip(vs.volumes, vs.energies, names)
    ]
    return "\n".join(lines) + "\n"


def _dos_text(sp: Spectrum, k: int, n: int, vs: VolumeSet, table: str, notes: list[str]) -> str:
    parts = sp._parts()
    if parts["kind"] != "sampled":
        raise InputError(
            f"spectrum {k} ({sp.name or 'unnamed'}) was built from {parts['kind']}: a DOS file holds a sampled "
            "density, so build the spectrum from a frequency grid"
        )
    names = list(sp.partials)
    seen = {"frequency", "total"}
    for partial in names:
        key = partial.strip().casefold()
        if partial != partial.strip() or not key or key in seen or any(c in partial for c in ",;#()[]\t\n\r"):
            raise InputError(
                f"spectrum {k} ({sp.name or 'unnamed'}): the partial density {partial!r} cannot be a column name of "
                "a DOS file (it must be unique, not 'frequency' or 'total', without blanks at either end or any of "
                ", ; # ( ) [ ] tabs and line breaks); rename it"
            )
        seen.add(key)
    # The density as DOS files hold it: 3 modes per atom by the trapezoid rule on its grid
    # (the spectrum stores it normalised with its continuation, which differs slightly).
    factor = 3.0 * float(sp.atoms) / float(np.trapezoid(sp.density, sp.frequency))
    columns = [sp.frequency, sp.density * factor, *(sp.partials[p] * factor for p in names)]
    rows = [", ".join(repr(x) for x in row) for row in zip(*(np.asarray(c, dtype=float).tolist() for c in columns))]
    lines = [
        *_comment_block(notes),
        f"# Density of states at volume {k} of {n} ({float(vs.volumes[k - 1])!r} {vs.volume_unit}) of the volume set "
        f"{table}:",
        f"#   states per {sp.unit} per formula unit; the total integrates to 3 modes per atom by the trapezoid rule.",
        f"# atoms: {float(sp.atoms)!r}",
        ", ".join([f"frequency ({sp.unit})", "total", *names]),
        *rows,
    ]
    return "\n".join(lines) + "\n"
