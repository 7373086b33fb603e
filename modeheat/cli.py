"""The ``modeheat`` command.

``modeheat table FILE...`` reads spectrum files (format: :mod:`modeheat.io`) and
prints the thermodynamic table of each: C_v, S, U, F and the effective Debye
temperature against T.  Each file has its own atom count (``--atoms`` sets one for
all).  Several files make one table with ``source`` and ``atoms`` columns and the
other per-file values (:mod:`modeheat.io`, "Table files"), computed in parallel
worker processes (or serially, or on Dask: ``--engine``) by :mod:`modeheat.batch`; with
``-o NAME.parquet`` the rows stream into a Parquet dataset chunk by chunk, and a rerun
skips the sources already written.

A batch keeps what worked: every file that gives a table is written, and each file
that does not gets one line ``modeheat: error: FILE…: problem`` on standard error,
whatever went wrong — bad input, a table with non-finite values, a bug, or a worker
process that died.  Exit status: 0 when every file gave a table, 1 when any failed or
the output could not be written, 2 for bad usage.  Standard output carries only the
table (with ``-o``, a one-line summary); warnings, the basis, the caution and
progress go to standard error.

The commands ``lab``, ``demo``, ``lowt``, ``figure`` and ``quasi-harmonic`` live in :mod:`modeheat.commands`
and follow the same conventions.

The backend (numpy, pandas, scipy) is imported inside the command, so ``modeheat
--help`` starts quickly.
"""

from __future__ import annotations

import argparse
import math
import os
import sys
from collections.abc import Sequence
from typing import TYPE_CHECKING

from .errors import InputError, ModeheatError
from .progress import Progress, ProgressLine
from .units import FREQUENCY_UNITS, check_unit

if TYPE_CHECKING:
    import numpy as np
    import pandas as pd

__all__ = ["main", "build_parser", "parse_temperatures", "version"]

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
    import numpy as np

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
    from .spectrum import LOW_T_CHOICES

    if text in LOW_T_CHOICES:
        return text
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(
            f"expected {', '.join(repr(c) for c in LOW_T_CHOICES)} or a Debye temperature in K, not {text!r}"
        ) from None
    if not (math.isfinite(value) and value > 0):
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
parallel (or on Dask), whose first columns 'source' and 'atoms' hold each file as it was
named and its atoms per formula unit, and whose last columns hold each file's
zero-point energy and other per-file values.  Files that fail do not stop the
others: their results are written and each failure is reported."""

_TABLE_EPILOG = f"""\
spectrum files:
  Text columns: the frequency, then one or more densities of states, separated
  by blanks, tabs, commas or semicolons; numbers use a decimal point.  Lines
  starting with # are comments.  An optional header row names the columns and
  may give the frequency unit, e.g.  frequency (THz), total, Ga, N
  A column named 'total' is the total density; otherwise the density columns
  are summed and each is a partial.

atoms per formula unit:
  Without --atoms each file has its own count, read from the file (see the
  file format: python -c "import modeheat.io; help(modeheat.io)") or, when
  the file gives none, taken from its density of states when that integrates
  to within 1 % of 3 modes per atom; a file where neither works fails, with
  its own error line.  --atoms N applies to every file of the batch.

output:
  The table goes to standard output; with -o it goes to that CSV file and
  standard output gets one summary line (files, rows, where written,
  failures).  Warnings, the basis and the caution go to standard error, and so
  does a progress line for {_PROGRESS_FROM} or more files when standard error is a
  terminal.  Every file that gives a table is written; each file that fails
  (bad input, non-finite values, a crash) gets one line on standard error:
    modeheat: error: FILE[, line N]: problem
  -o refuses a folder, a device, a FIFO or a link, and never replaces an input
  file; --overwrite replaces only an existing regular file.

databases of files:
  -o NAME.parquet (or a name ending in /) writes a Parquet dataset folder
  instead, chunk by chunk (--chunk files at a time, so memory stays flat):
  one row per file and temperature, failures in NAME.parquet/_errors.parquet.
  Running the same command again adds only the files not yet written (and
  tries the failed ones again); other temperatures or options are refused.
  --files-from LIST reads the file names from LIST, one per line.  --engine
  process (default), serial or dask; --scheduler ADDRESS uses a running Dask
  cluster.  Needs pip install 'modeheat[batch]' (pyarrow, dask).

exit status:
  0 every file gave a table; 1 some file failed (the others are still
  written) or the output could not be written; 2 bad usage.

examples:
  modeheat table spectrum.txt --unit THz --atoms 2
  modeheat table spectrum.txt --temperatures 1:300:1 -o table.csv
  modeheat table a.txt b.txt c.txt --per atom --jobs 3 -o batch.csv
  modeheat table --files-from all_dos.txt -o database.parquet"""


_TOP_EPILOG = """\
exit status:
  0 success; 1 bad input (with several files: any file failed, the others'
  results are still written); 2 bad usage.  'modeheat COMMAND --help' tells
  more; 'modeheat table --help' gives the spectrum file format.

examples:
  modeheat lab                                  # the notebooks in JupyterLab
  modeheat demo --out demo-results              # the whole job headless
  modeheat table spectrum.txt --atoms 2         # thermodynamic table
  modeheat lowt cp.txt --tmax 5                 # γ, β, θ_D(0) from C_p
  modeheat figure --dos dos.txt --cp cp.txt -o fig.pdf
  modeheat quasi-harmonic vols.txt -o qh.csv    # V(T), α, C_p from several volumes"""


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``modeheat`` command."""
    parser = argparse.ArgumentParser(
        prog="modeheat",
        description="Heat capacity, entropy, energy, free energy and the effective Debye "
        "temperature from a phonon density of states.",
        epilog=_TOP_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument(
        "--version", action=_VersionAction, help="print the version of modeheat and exit"
    )
    commands = parser.add_subparsers(title="commands", metavar="COMMAND")
    table = commands.add_parser(
        "table",
        help="print the thermodynamic table of spectrum files",
        description=_TABLE_DESCRIPTION,
        epilog=_TABLE_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    table.add_argument("files", nargs="*", metavar="FILE", help="spectrum file(s)")
    table.add_argument(
        "--files-from",
        metavar="LIST",
        help="also the files listed in LIST, one per line ('-': standard input), for batches too long "
        "for a command line",
    )
    table.add_argument(
        "--unit",
        type=_unit_arg,
        help=f"frequency unit of the files: {', '.join(FREQUENCY_UNITS)} "
        "(needed when a file's header gives none; must agree with it otherwise)",
    )
    table.add_argument(
        "--atoms",
        type=_positive_float,
        help="atoms per formula unit, for every file (default: each file's own count, "
        "see below)",
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
    table.add_argument(
        "-o", "--output", metavar="OUT",
        help="write the table to this CSV file instead of standard output; a name ending in .parquet or / "
        "is a folder that receives a Parquet dataset, written chunk by chunk (needs pyarrow)",
    )
    table.add_argument(
        "--overwrite",
        action="store_true",
        help="replace the output file if it is an existing regular file (never an input file)",
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
    table.add_argument(
        "--engine",
        choices=("process", "serial", "dask"),
        default="process",
        help="where the files are computed: a local process pool (default), this process, or Dask "
        "(a local cluster, or --scheduler)",
    )
    table.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="a running Dask scheduler, e.g. tcp://10.0.0.5:8786 (implies --engine dask; needs "
        "dask.distributed)",
    )
    table.add_argument(
        "--chunk",
        type=_positive_int,
        default=500,
        metavar="N",
        help="files computed and written together (default 500): what memory holds at a time",
    )
    table.add_argument(
        "--no-resume",
        action="store_true",
        help="refuse an existing dataset instead of adding the files it does not hold yet",
    )
    table.set_defaults(run=_table, check=_check_table_args, usage=table)
    from .commands import add_commands

    add_commands(commands)
    return parser


class _VersionAction(argparse.Action):
    """``--version``: looks the version up only when asked, to keep start-up quick."""

    def __init__(self, option_strings: Sequence[str], dest: str, help: str | None = None) -> None:
        super().__init__(option_strings, dest, nargs=0, default=argparse.SUPPRESS, help=help)

    def __call__(self, parser, namespace, values, option_string=None) -> None:
        sys.stdout.write(f"modeheat {version()}\n")
        parser.exit()


def version() -> str:
    """The installed version of modeheat, or the source tree's when it is not installed
    (the one rule of ``modeheat.__version__``, asked afresh)."""
    from . import _version

    return _version()


def _check_table_args(args: argparse.Namespace) -> None:
    if (args.per == "gram") != (args.molar_mass is not None):
        args.usage.error("--per gram and --molar-mass go together")
    if not args.files and args.files_from is None:
        args.usage.error("name at least one spectrum file (or a list of them with --files-from)")
    if args.scheduler is not None and args.engine not in ("process", "dask"):
        args.usage.error("--scheduler goes with --engine dask")


# --- the table command ------------------------------------------------------------------------------
def _table(args: argparse.Namespace) -> int:
    files = _files(args)
    parquet = args.output is not None and _parquet_output(args.output)
    if args.output is not None and not parquet:
        _check_output(args.output, files, args.overwrite)
    from .batch import TableJob, iter_outcomes
    from .io.tables import combine_tables, write_table
    from .thermo import CAUTION

    options = dict(unit=args.unit, atoms=args.atoms, columns=args.columns, total=args.total, per=args.per,
                   low_t=args.low_t, low_t_cutoff=args.low_t_cutoff, molar_mass=args.molar_mass)
    workers = min(args.jobs or os.cpu_count() or 1, len(files))
    engine = "dask" if args.scheduler else args.engine
    # The terminal line is modeheat.progress's, the one a fit or a lattice DOS would draw.
    line = ProgressLine() if len(files) >= _PROGRESS_FROM else None
    if parquet:
        return _table_dataset(args, files, options, engine, workers, line)
    jobs = [TableJob(path, args.temperatures, **options) for path in files]
    outcomes = []
    for k, outcome in enumerate(iter_outcomes(jobs, engine=engine, workers=workers, scheduler=args.scheduler,
                                              chunk=args.chunk), start=1):
        outcomes.append(outcome)
        if line is not None:
            line(Progress(k, len(jobs), "files", os.path.basename(outcome.path)))

    good = [o for o in outcomes if o.error is None]
    for outcome in outcomes:
        # A failed file gets its one error line; warnings about it would be moot.
        if outcome.error is not None:
            _say("error", outcome.error)
        for message in outcome.warnings:
            _say("warning", message)
    status = 0 if len(good) == len(outcomes) else 1
    if not good:
        return status
    # The shape follows the command, not the luck of the batch: several files, several sources.
    frame = good[0].frame if len(files) == 1 else combine_tables([(o.path, o.frame) for o in good])
    if args.output is None:
        sys.stdout.write(_format(frame) + "\n")
    else:
        write_table(frame, args.output, overwrite=args.overwrite)
        failed = len(outcomes) - len(good)
        sys.stdout.write(
            f"wrote {len(frame)} rows from {len(good)} of {_count(len(outcomes), 'file')} to {args.output}"
            + (f"; {failed} failed (see the errors above)" if failed else "")
            + "\n"
        )
    sys.stdout.flush()
    for outcome in good:
        _say("note", _source_note(outcome.frame.attrs, outcome.path if len(files) > 1 else None))
    _say("note", _basis(frame))
    _say("caution", CAUTION)
    return status


def _files(args: argparse.Namespace) -> list[str]:
    """The files named on the command line, then those listed in --files-from (one per
    line; blank lines and lines starting with '#' skipped; '-' reads standard input)."""
    files = list(args.files)
    if args.files_from is not None:
        try:
            if args.files_from == "-":
                text = sys.stdin.read()
            else:
                with open(args.files_from, encoding="utf-8") as listing:
                    text = listing.read()
        except (OSError, UnicodeDecodeError) as exc:
            raise InputError(f"cannot read the list of files: {exc}", path=args.files_from) from None
        files += [line.strip() for line in text.splitlines() if line.strip() and not line.lstrip().startswith("#")]
    if not files:
        raise InputError("the list names no files", path=args.files_from)
    return files


def _parquet_output(output: str) -> bool:
    """A Parquet dataset: a name ending in .parquet or in a slash (any other name is a CSV
    file, so an existing folder named without the slash is refused, not filled)."""
    return output.lower().endswith(".parquet") or output.endswith(("/", os.sep))


def _table_dataset(args, files: list[str], options: dict, engine: str, workers: int, line) -> int:
    """Stream the tables of `files` into a Parquet dataset (:mod:`modeheat.batch`)."""
    from .batch import tabulate_files
    from .thermo import CAUTION

    summary = tabulate_files(files, args.temperatures, args.output, engine=engine, workers=workers,
                             scheduler=args.scheduler, chunk=args.chunk, resume=not args.no_resume,
                             progress=line, **options)
    for _, message in summary.errors:
        _say("error", message)
    for message in summary.warnings:
        _say("warning", message)
    sys.stdout.write(
        f"wrote {summary.rows} rows from {summary.written} of {_count(len(files), 'file')} to the dataset "
        f"{args.output} ({summary.engine}, {summary.seconds:.1f} s)"
        + (f"; {summary.skipped} already there, skipped" if summary.skipped else "")
        + (f"; {summary.failed} failed (listed in {os.path.join(args.output, '_errors.parquet')} and above)"
           if summary.failed else "")
        + "\n"
    )
    sys.stdout.flush()
    _say("note", "read it with pandas.read_parquet(" + repr(args.output) + "); units and basis in its _README.txt")
    _say("caution", CAUTION)
    return 1 if summary.failed else 0


_ATOMS_FROM = {
    "given": "given",
    "file": "from the file's '# atoms:' line",
    "integral": "from the DOS integral, 3 modes per atom",
}


def _source_note(attrs: dict, path: str | None) -> str:
    """Where a source's atom count came from and its low-temperature continuation, in words."""
    atoms = attrs["atoms"]
    text = f"{atoms:g} atom{'' if atoms == 1 else 's'} per formula unit"
    if attrs.get("atoms_source") in _ATOMS_FROM:
        text += f" ({_ATOMS_FROM[attrs['atoms_source']]})"
    if attrs.get("low_t_summary"):
        text += f"; low-temperature continuation: {attrs['low_t_summary']}"
    return text if path is None else f"{path}: {text}"


def _count(n: int, noun: str) -> str:
    return f"{n} {noun}" + ("" if n == 1 else "s")


def _check_output(output: str, files: list[str], overwrite: bool) -> None:
    """Refuse before any work an output that cannot be written, is not a regular file,
    would replace an input or, without --overwrite, would replace any file."""
    from .io.tables import check_table_destination

    check_table_destination(output)
    folder = os.path.dirname(output) or "."
    if not os.path.isdir(folder):
        raise InputError(f"the folder {folder!r} does not exist", path=output)
    if not os.access(folder, os.W_OK):
        raise InputError(f"no permission to write in the folder {folder!r}", path=output)
    if not os.path.exists(output):
        return
    for path in files:
        if os.path.exists(path) and os.path.samefile(path, output):
            raise InputError("the output file is one of the input files; choose another name", path=output)
    if not overwrite:
        raise InputError("the output file exists; choose another name or pass --overwrite", path=output)


def _format(frame: pd.DataFrame) -> str:
    units = frame.attrs.get("units", {})
    # The terminal shows the numbers; per-source metadata go to the notes (and the CSV).
    keep = [c for c in frame.columns if c in ("source", "atoms") or c in units and c != "zero_point_energy"]
    shown = frame[keep].rename(columns={c: f"{c} [{units[c]}]" for c in frame.columns if c in units})
    formatters = {}
    if "source" in shown.columns:
        width = int(shown["source"].str.len().max())
        formatters["source"] = lambda s: s.ljust(width)
    return shown.to_string(
        index=False, float_format=lambda v: f"{v:.{_DIGITS}g}", na_rep="nan", formatters=formatters
    )


def _basis(frame: pd.DataFrame) -> str:
    return "values " + frame.attrs["basis"]


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
    int — the exit status: 0 success, 1 bad input (any file of a batch failed, or the
    output could not be written), 2 bad usage
    """
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
        if hasattr(args, "check"):
            args.check(args)
    except SystemExit as exc:  # --help, --version and usage errors
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
