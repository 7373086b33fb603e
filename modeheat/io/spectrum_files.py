"""Reading densities of states from text files (format: :mod:`modeheat.io`)."""

from __future__ import annotations

import os
from collections.abc import Sequence
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..spectrum import Spectrum
from ..units import FREQUENCY_UNITS, check_unit
from .columns import _atoms_of_file, _Header, _parse, _read_text, _select
from .heat_capacity_files import _cp_mark

__all__ = ["read_spectrum"]


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

    The file format is described in the module docstring (:mod:`modeheat.io`).

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


def _refuse_heat_capacity(header: _Header | None, path) -> None:
    why = _cp_mark(header)
    if why is not None:
        raise InputError(
            f"this is a heat-capacity file, not a density of states ({why}); read it with read_heat_capacity",
            path=path,
            line=header.line,
        )


# --- columns, unit, total -----------------------------------------------------------------------
def _default_names(width: int) -> list[str]:
    return ["frequency"] + [f"column {k}" for k in range(1, width)]


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
