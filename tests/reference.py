"""Reference data for the tests: NIST-JANAF Thermochemical Tables.

NIST-JANAF Thermochemical Tables, 4th ed. (M. W. Chase, 1998), as shipped in the data
files of the ``janaf`` PyPI package: an index ``janaf/janaf.json`` with two parallel
lists, ``display`` (e.g. ``"Al, Aluminum (cr)"``) and ``index`` (e.g. ``"Al-002"``),
and one tab-separated table per phase in ``janaf/data/<id>.txt``.  Each table has a
title line, a header line ``T(K)  Cp  S  -[G-H(Tr)]/T  H-H(Tr)  delta-f H  delta-f G
log Kf`` and rows in J/(mol K) and kJ/mol, per mole of the formula (per mole of atoms
for the elements).  A phase transition appears as a row whose last columns hold a
note (``CRYSTAL <--> LIQUID``), in some tables followed by a second row at the same
T; those rows are dropped here.  Crystalline tables go on above the melting point
(the metastable solid, extrapolated): pick the temperatures you need.

The files are read here with importlib.resources and pandas, not with that package's
own parser.
"""

from __future__ import annotations

import io
import json
from functools import lru_cache
from importlib import resources

import pandas as pd

__all__ = ["janaf_table", "janaf_row", "janaf_id"]

_COLUMNS = ("T(K)", "Cp", "S", "-[G-H(Tr)]/T", "H-H(Tr)", "delta-f H", "delta-f G", "log Kf")


@lru_cache(maxsize=None)
def _index() -> dict[str, str]:
    raw = json.loads(resources.files("janaf").joinpath("janaf.json").read_text(encoding="utf-8"))
    return dict(zip(raw["display"], raw["index"]))


def janaf_id(formula: str, phase: str = "cr") -> str:
    """The table id (e.g. ``"Al-002"``) of `formula` in `phase` ("cr", "l", "g", …).

    The index names tables as ``"<formula>, <name> (<phase>)"``.  Exactly one table
    must match; otherwise the candidates are listed in the error.
    """
    hits = [
        (name, ident)
        for name, ident in _index().items()
        if name.split(",", 1)[0] == formula and name.endswith(f"({phase})")
    ]
    if len(hits) != 1:
        raise LookupError(f"{len(hits)} JANAF tables match {formula} ({phase}): {[h[0] for h in hits]}")
    return hits[0][1]


@lru_cache(maxsize=None)
def janaf_table(formula: str, phase: str = "cr") -> pd.DataFrame:
    """Columns ``T`` [K], ``Cp`` [J/(mol K)] and ``S`` [J/(mol K)] of one JANAF table.

    Only rows where every column is a number are kept: transition rows and their
    notes are dropped.  ``attrs["id"]`` and ``attrs["title"]`` say which table it is.
    """
    ident = janaf_id(formula, phase)
    text = resources.files("janaf").joinpath("data", f"{ident}.txt").read_text(encoding="utf-8")
    title, body = text.split("\n", 1)
    raw = pd.read_csv(io.StringIO(body), sep="\t", dtype=str, keep_default_na=False)
    if tuple(raw.columns) != _COLUMNS:
        raise ValueError(f"JANAF table {ident}: unexpected header {list(raw.columns)}")
    # "+inf" (the Gibbs function at 0 K) parses as a number; a note does not.
    numbers = raw.apply(lambda column: pd.to_numeric(column, errors="coerce"))
    numbers = numbers[numbers.notna().all(axis=1)]
    table = pd.DataFrame(
        {"T": numbers["T(K)"].to_numpy(float), "Cp": numbers["Cp"].to_numpy(float), "S": numbers["S"].to_numpy(float)}
    )
    table.attrs.update(id=ident, title=" ".join(title.split()))
    return table


def janaf_row(formula: str, temperature: float, phase: str = "cr") -> pd.Series:
    """The row of a JANAF table at exactly `temperature` K."""
    table = janaf_table(formula, phase)
    row = table[table["T"] == temperature]
    if len(row) != 1:
        raise LookupError(f"JANAF {formula} ({phase}) has {len(row)} rows at {temperature} K")
    return row.iloc[0]
