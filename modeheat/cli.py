"""The ``modeheat`` command.

``modeheat table FILE...`` reads spectrum files (format: :mod:`modeheat.data`) and
prints the thermodynamic table of each: C_v, S, U, F and the effective Debye
temperature against T.  Several files make one table with a ``source`` column and
are computed in parallel worker processes.

Exit status: 0 on success, 1 for bad input (one line ``modeheat: error: …`` on
stderr per failing file, no traceback), 2 for bad usage.  Standard output carries
only the table; warnings, the caution and progress go to standard error.
"""

from __future__ import annotations

import argparse
import math
import os
import sys
import warnings
from collections.abc import Sequence
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .data import read_spectrum, write_table
from .errors import InputError, ModeheatError
from .spectrum import LOW_T_CHOICES
from .thermo import CAUTION, basis_text, thermo
from .units import FREQUENCY_UNITS, check_unit

__all__ = ["main", "build_parser", "parse_temperatures"]

#: The temperature grid used when --temperatures is not given.
DEFAULT_TEMPERATURES = "10:1000:10"
_MAX_TEMPERATURES = 1_000_000  # a typo such as 0:1000:1e-6 should not exhaust memory
_PROGRESS_FROM = 4  # batches of at least this many files show progress on a terminal
_DIGITS = 6  # significant digits on the terminal (the CSV keeps 12)


def parse_temperatures(spec: str) -> np.ndarray:
    """Temperatures in K from ``start:stop:step`` or a comma list.

    ``start:stop:step`` runs from start by step and includes stop when it lands on the
    grid (``1:1000:1`` gives 1000 values); a comma list (``10,20,300``) is taken as it
    is.  Every temperature must be a finite number ≥ 0.

    Parameters
    ----------
    spec : str — the specification

    Returns
    -------
    ndarray — temperatures in K

    Raises
    ------
    ValueError
        The specification is malformed; the message says how.
    """
    text = spec.strip()
    if ":" in text:
        parts = text.split(":")
        if len(parts) != 3:
            raise ValueError(f"{spec!r} is not start:stop:step (e.g. 1:1000:1)")
        start, stop, step = (_temperature(p, spec) for p in parts)
        if not step > 0:
            raise ValueError(f"the step of {spec!r} must be positive")
        if stop < start:
            raise ValueError(f"the stop of {spec!r} is below its start")
        # The tolerance keeps a stop that lands on the grid despite rounding (0:0.3:0.1).
        count = math.floor((stop - start) / step + 1e-9) + 1
        if count > _MAX_TEMPERATURES:
            raise ValueError(f"{spec!r} gives {count} temperatures, more than {_MAX_TEMPERATURES}")
        values = start + step * np.arange(count)
        if abs(values[-1] - stop) <= 1e-9 * step:
            values[-1] = stop
        return values
    return np.array([_temperature(p, spec) for p in text.split(",")])


def _temperature(text: str, spec: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise ValueError(f"{text.strip()!r} in {spec!r} is not a number") from None
    if not (math.isfinite(value) and value >= 0):
        raise ValueError(f"temperature {text.strip()!r} in {spec!r} is not a finite value ≥ 0 K")
    return value


# --- argument types ------------------------------------------------------------------------
def _low_t_arg(text: str) -> str | float:
    if text in LOW_T_CHOICES:
        return text
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(
            f"expected {', '.join(repr(c) for c in LOW_T_CHOICES)} or a Debye temperature in K, not {text!r}"
        ) from None
    if not (np.isfinite(value) and value > 0):
        raise argparse.ArgumentTypeError(f"a Debye temperature must be positive, not {text!r}")
    return value


def _temperatures_arg(spec: str) -> np.ndarray:
    try:
        return parse_temperatures(spec)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def _unit_arg(text: str) -> str:
    try:
        return check_unit(text)
    except InputError as exc:
        raise argparse.ArgumentTypeError(exc.problem) from None


def _positive_float(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not (math.isfinite(value) and value > 0):
        raise argparse.ArgumentTypeError(f"expected a positive number, not {text!r}")
    return value


def _positive_int(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        value = 0
    if value < 1:
        raise argparse.ArgumentTypeError(f"expected a whole number ≥ 1, not {text!r}")
    return value


def _columns_arg(text: str) -> list[str | int]:
    items = [item.strip() for item in text.split(",")]
    if len(items) < 2 or not all(items):
        raise argparse.ArgumentTypeError(
            f"expected at least two comma-separated column names or indices, not {text!r}"
        )
    return [int(item) if item.isdigit() else item for item in items]


_TABLE_DESCRIPTION = """\
Read spectrum files and print, at each temperature, C_v and S in J/(mol K),
U and F in J/mol (zero-point energy included) and the effective Debye
temperature theta_D in K.  Several files make one table, computed in
parallel, whose first column 'source' holds each file as it was named."""

_TABLE_EPILOG = f"""\
spectrum files:
  Text columns: the frequency, then one or more densities of states, separated
  by blanks, tabs, commas or semicolons; numbers use a decimal point.  Lines
  starting with # are comments.  An optional header row names the columns and
  may give the frequency unit, e.g.  frequency (THz), total, Ga, N
  A column named 'total' is the total density; otherwise the density columns
  are summed and each is a partial.

output:
  The table goes to standard output.  Warnings, the basis and the caution go
  to standard error, and so does a progress line for {_PROGRESS_FROM} or more files
  when standard error is a terminal.  Exit status: 0 success, 1 bad input
  (one error line per failing file), 2 bad usage.

examples:
  modeheat table spectrum.txt --unit THz --atoms 2
  modeheat table spectrum.txt --temperatures 1:300:1 -o table.csv
  modeheat table a.txt b.txt c.txt --per atom --jobs 3"""


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``modeheat`` command."""
    parser = argparse.ArgumentParser(
        prog="modeheat",
        description="Heat capacity, entropy, energy, free energy and the effective Debye "
        "temperature from a phonon density of states.",
        epilog="Exit status: 0 success, 1 bad input, 2 bad usage.  "
        "Run 'modeheat table --help' for the spectrum file format.",
    )
    commands = parser.add_subparsers(title="commands", metavar="COMMAND")
    table = commands.add_parser(
        "table",
        help="print the thermodynamic table of spectrum files",
        description=_TABLE_DESCRIPTION,
        epilog=_TABLE_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    table.add_argument("files", nargs="+", metavar="FILE", help="spectrum file(s)")
    table.add_argument(
        "--unit",
        type=_unit_arg,
        help=f"frequency unit of the files: {', '.join(FREQUENCY_UNITS)} "
        "(needed when a file's header gives none; must agree with it otherwise)",
    )
    table.add_argument(
        "--atoms", type=_positive_float, default=1.0, help="atoms per formula unit (default: 1)"
    )
    table.add_argument(
        "--temperatures",
        type=_temperatures_arg,
        default=DEFAULT_TEMPERATURES,
        metavar="SPEC",
        help="temperatures in K: start:stop:step (stop included when on the grid) or a comma "
        f"list such as 10,20,300 (default: {DEFAULT_TEMPERATURES})",
    )
    table.add_argument(
        "--per",
        choices=("formula", "atom", "gram"),
        default="formula",
        help="per mole of formula units, per mole of atoms, or per gram (needs --molar-mass) "
        "(default: formula)",
    )
    table.add_argument(
        "--molar-mass",
        type=_positive_float,
        metavar="G_PER_MOL",
        help="molar mass in g/mol of formula units, for --per gram",
    )
    table.add_argument("-o", "--output", metavar="OUT.csv", help="also write the table to this CSV file")
    table.add_argument(
        "--overwrite", action="store_true", help="replace the output file if it exists (never an input file)"
    )
    table.add_argument(
        "--columns",
        type=_columns_arg,
        metavar="C1,C2,...",
        help="columns to use, by header name or 0-based index, frequency first (e.g. 0,2 or frequency,Ga)",
    )
    table.add_argument(
        "--total", metavar="NAME", help="the total-density column, or 'sum' to add up the density columns"
    )
    table.add_argument(
        "--low-t",
        type=_low_t_arg,
        default="auto",
        metavar="auto|fit|extrapolate|off|THETA",
        help="low-temperature continuation below what the data resolve: 'auto' (default: an ω² "
        "law fitted to the resolved part above the unresolved bottom of a q-mesh DOS, none for a "
        "gapped spectrum), 'fit' (an ω² branch with the spectrum's own lowest mode count), "
        "'extrapolate' (a·ω² from a fit of aω²+bω⁴ to the lowest 2%% of the modes), 'off', or a "
        "Debye temperature θ_D(0) in K (e.g. from elastic constants; the cut-off then chosen as "
        "for 'auto')",
    )
    table.add_argument(
        "--low-t-cutoff",
        type=_positive_float,
        metavar="FREQ",
        help="cut-off frequency of that continuation, in the files' unit (default: chosen above "
        "the unresolved bottom of the data; a pure ω² law below a cut-off given here)",
    )
    table.add_argument(
        "--jobs",
        type=_positive_int,
        metavar="N",
        help="worker processes for several files (default: one per file, at most the CPU count)",
    )
    table.set_defaults(run=_table, check=_check_table_args, usage=table)
    return parser


def _check_table_args(args: argparse.Namespace) -> None:
    if (args.per == "gram") != (args.molar_mass is not None):
        args.usage.error("--per gram and --molar-mass go together")


# --- the work of one file (runs in a worker process) ----------------------------------------------------
@dataclass(frozen=True)
class _Job:
    path: str
    unit: str | None
    atoms: float
    columns: list | None
    total: str | None
    per: str
    temperatures: np.ndarray
    low_t: str | float = "auto"
    low_t_cutoff: float | None = None
    molar_mass: float | None = None


@dataclass
class _Outcome:
    path: str
    frame: pd.DataFrame | None = None
    error: str | None = None
    warnings: list[str] = field(default_factory=list)


def _compute(job: _Job) -> _Outcome:
    outcome = _Outcome(job.path)
    with warnings.catch_warnings(record=True) as caught:
        try:
            spectrum = read_spectrum(
                job.path,
                unit=job.unit,
                atoms=job.atoms,
                columns=job.columns,
                total=job.total,
                low_t=job.low_t,
                low_t_cutoff=job.low_t_cutoff,
            )
            outcome.frame = thermo(spectrum, job.temperatures, per=job.per, molar_mass=job.molar_mass)
        except (ModeheatError, OSError) as exc:
            outcome.error = str(exc)
    outcome.warnings = [str(w.message) for w in caught]
    return outcome


def _compute_all(jobs: list[_Job], workers: int, progress: bool) -> list[_Outcome]:
    if workers == 1:
        outcomes = []
        for done, job in enumerate(jobs, start=1):
            outcomes.append(_compute(job))
            if progress:
                _progress(done, len(jobs), job.path)
        return outcomes
    results: list[_Outcome | None] = [None] * len(jobs)
    with ProcessPoolExecutor(max_workers=workers) as pool:
        futures = {pool.submit(_compute, job): k for k, job in enumerate(jobs)}
        for done, future in enumerate(as_completed(futures), start=1):
            k = futures[future]
            results[k] = future.result()
            if progress:
                _progress(done, len(jobs), jobs[k].path)
    return results


def _progress(done: int, count: int, path: str) -> None:
    # \x1b[K clears what a longer name left on the line.
    sys.stderr.write(f"\r[{done}/{count}] {os.path.basename(path)}\x1b[K")
    if done == count:
        sys.stderr.write("\r\x1b[K")
    sys.stderr.flush()


# --- the table command ------------------------------------------------------------------------------
def _table(args: argparse.Namespace) -> int:
    files: list[str] = args.files
    if args.output is not None:
        _check_output(args.output, files, args.overwrite)
    jobs = [
        _Job(
            path, args.unit, args.atoms, args.columns, args.total, args.per, args.temperatures,
            args.low_t, args.low_t_cutoff, args.molar_mass,
        )
        for path in files
    ]
    workers = min(args.jobs or os.cpu_count() or 1, len(jobs))
    progress = len(jobs) >= _PROGRESS_FROM and sys.stderr.isatty()
    outcomes = _compute_all(jobs, workers, progress)

    failed = [o for o in outcomes if o.error is not None]
    if failed:
        # Warnings about files that were read are moot when there is no table.
        for outcome in failed:
            _say("error", outcome.error)
        return 1
    for outcome in outcomes:
        for message in outcome.warnings:
            _say("warning", message)
    frame = outcomes[0].frame if len(outcomes) == 1 else _combine(outcomes)
    if args.output is not None:
        write_table(frame, args.output, overwrite=args.overwrite)
    sys.stdout.write(_format(frame) + "\n")
    sys.stdout.flush()
    if args.output is not None:
        _say("note", f"table written to {args.output}")
    _say("note", _basis(frame))
    _say("caution", CAUTION)
    return 0


def _check_output(output: str, files: list[str], overwrite: bool) -> None:
    """Refuse before any work an output that cannot be written, would replace an input
    or, without --overwrite, would replace any file."""
    folder = os.path.dirname(output) or "."
    if not os.path.isdir(folder):
        raise InputError(f"the folder {folder!r} does not exist", path=output)
    if not os.path.exists(output):
        return
    for path in files:
        if os.path.exists(path) and os.path.samefile(path, output):
            raise InputError("the output file is one of the input files; choose another name", path=output)
    if not overwrite:
        raise InputError("the output file exists; choose another name or pass --overwrite", path=output)


def _combine(outcomes: list[_Outcome]) -> pd.DataFrame:
    parts = []
    for outcome in outcomes:
        part = outcome.frame.copy()
        part.insert(0, "source", outcome.path)
        parts.append(part)
    frame = pd.concat(parts, ignore_index=True)
    first = outcomes[0].frame.attrs
    # Zero-point energies differ by file, so the combined table carries none.
    frame.attrs = {
        "units": dict(first["units"]),
        "per": first["per"],
        "atoms": first["atoms"],
        "caution": CAUTION,
    }
    return frame


def _format(frame: pd.DataFrame) -> str:
    units = frame.attrs.get("units", {})
    shown = frame.rename(columns={c: f"{c} [{units[c]}]" for c in frame.columns if c in units})
    formatters = {}
    if "source" in shown.columns:
        width = int(shown["source"].str.len().max())
        formatters["source"] = lambda s: s.ljust(width)
    return shown.to_string(
        index=False, float_format=lambda v: f"{v:.{_DIGITS}g}", na_rep="nan", formatters=formatters
    )


def _basis(frame: pd.DataFrame) -> str:
    a = frame.attrs
    return "values " + (a.get("basis") or basis_text(a.get("per", "formula"), a.get("atoms", 1), a.get("molar_mass")))


def _say(kind: str, message: str) -> None:
    text = " ".join(str(message).splitlines())
    print(f"modeheat: {kind}: {text}", file=sys.stderr)


# --- entry point ---------------------------------------------------------------------------------------
def main(argv: Sequence[str] | None = None) -> int:
    """Run the ``modeheat`` command.

    Parameters
    ----------
    argv : sequence of str, optional — the arguments (default: ``sys.argv[1:]``)

    Returns
    -------
    int — the exit status: 0 success, 1 bad input, 2 bad usage
    """
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
        if hasattr(args, "check"):
            args.check(args)
    except SystemExit as exc:  # --help and usage errors
        return exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 2)
    if not hasattr(args, "run"):
        parser.print_usage(sys.stderr)
        _say("error", "choose a command, e.g. 'modeheat table FILE'")
        return 2
    try:
        return args.run(args)
    except (ModeheatError, OSError) as exc:
        if isinstance(exc, BrokenPipeError):
            # The reader of stdout went away (e.g. `| head`); stay quiet, as other tools do.
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
            return 1
        _say("error", str(exc))
        return 1
    except KeyboardInterrupt:
        _say("error", "interrupted")
        return 130
