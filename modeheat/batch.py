"""Tables for many spectrum files, streamed: chunk by chunk to a Parquet dataset or a CSV file.

:func:`tabulate_files` reads each DOS file, makes its thermodynamic table
(:func:`modeheat.thermo`) and writes the rows — one per source and temperature — in
chunks, so that memory stays flat in the number of files.  The per-file work is the one
the ``modeheat table`` command always did (its errors and warnings included); what is new
is where the work runs and where the rows go.

Engines
-------
``"serial"`` (this process), ``"process"`` (a local process pool, the default) and
``"dask"`` (``dask.distributed``: a local cluster started and stopped here, or an existing
scheduler at ``scheduler="tcp://host:8786"``).  Every engine runs the same function on the
same chunks of files and the driver writes the rows in the order of the files, so the
tables are the same, bit for bit, whichever engine made them.  A file that kills its
worker (the process pool's or Dask's) is computed again on its own, so only it fails.

Output
------
A **Parquet dataset** (``out`` a folder, or a name ending in ``.parquet``; needs pyarrow):
one file ``part-<run>-<chunk>.parquet`` per chunk, all with the schema :data:`COLUMNS`
(``source`` as given, ``atoms``, ``basis``, the low-temperature method and cut-off,
``zero_point_energy``, then ``T``, ``Cv``, ``S``, ``U``, ``F``, ``theta_D``); the files
that failed go to ``_errors.parquet`` (``source``, ``error``), rewritten after every chunk;
``_settings.json`` records the temperatures and reading options and ``_README.txt`` the
units and the caution.  Files whose names start with ``_`` are not part of the dataset
(pyarrow and pandas skip them), so ``pandas.read_parquet(out)`` reads the rows alone.
A rerun into the same folder skips the sources already written (``resume=True``, the
default) and tries again those that failed; it refuses to mix settings: other
temperatures or reading options need a new folder.

A **CSV file** (any other name) is written at the end, as ``modeheat table -o x.csv``
always did (:mod:`modeheat.io`, "Table files"): for small runs; the rows are held in memory.

Progress goes through :mod:`modeheat.progress` (``progress=`` callback, or the generator
:func:`iter_tabulate_files`): one record per file, stage ``"files"``.
"""

from __future__ import annotations

import itertools
import json
import os
import secrets
import time
import warnings
from collections.abc import Iterable, Iterator, Sequence
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from dataclasses import asdict, dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

from .errors import InputError, ModeheatError, ModeheatWarning
from .progress import Progress, ProgressCallback, drive

if TYPE_CHECKING:
    import numpy as np
    import pandas as pd

__all__ = [
    "TableJob",
    "TableOutcome",
    "compute_table",
    "tabulate_files",
    "iter_tabulate_files",
    "BatchSummary",
    "iter_outcomes",
    "ENGINES",
    "COLUMNS",
    "read_errors",
]

#: Engines :func:`tabulate_files` runs on.
ENGINES = ("serial", "process", "dask")

#: The columns of a Parquet dataset, in order, with their Arrow types.
COLUMNS: dict[str, str] = {
    "source": "string", "atoms": "float64", "basis": "string", "low_t_method": "string",
    "low_t_cutoff": "float64", "low_t_cutoff_unit": "string", "atoms_source": "string",
    "zero_point_energy": "float64",
    "T": "float64", "Cv": "float64", "S": "float64", "U": "float64", "F": "float64", "theta_D": "float64",
}
_PER_SOURCE = ("atoms", "basis", "low_t_method", "low_t_cutoff", "low_t_cutoff_unit", "atoms_source",
               "zero_point_energy")
_THERMO = ("T", "Cv", "S", "U", "F", "theta_D")
_ERRORS = "_errors.parquet"
_SETTINGS = "_settings.json"
_README = "_README.txt"


# --- the work of one file (runs in a worker) -----------------------------------------------------

@dataclass(frozen=True)
class TableJob:
    """One file to tabulate, with the reading options and temperatures.

    Parameters
    ----------
    path : str — the DOS file, as the user named it (it becomes the ``source``)
    temperatures : ndarray — T in K
    unit, atoms, columns, total, low_t, low_t_cutoff : as for :func:`modeheat.read_spectrum`
    per, molar_mass : as for :func:`modeheat.thermo`
    """

    path: str
    temperatures: np.ndarray
    unit: str | None = None
    atoms: float | None = None
    columns: list | None = None
    total: str | None = None
    per: str = "formula"
    low_t: str | float = "auto"
    low_t_cutoff: float | None = None
    molar_mass: float | None = None


@dataclass
class TableOutcome:
    """What one file gave: its table, or one line of error that starts with the file."""

    path: str
    frame: pd.DataFrame | None = None
    error: str | None = None
    warnings: list[str] = field(default_factory=list)
    rows: int = 0  # rows of its table (set where the frame itself stays in the worker)


def compute_table(job: TableJob) -> TableOutcome:
    """The table of one file.  Never raises: every failure, a bug included, becomes the
    outcome's error, so one file cannot cost the others their results."""
    import numpy as np

    from .io.spectrum_files import read_spectrum
    from .thermo import thermo

    outcome = TableOutcome(job.path)
    # Floating-point noise (overflow in a term that then vanishes) is not the user's
    # business; a value it spoiled is caught by the finiteness check below instead.
    with warnings.catch_warnings(record=True) as caught, np.errstate(all="ignore"):
        warnings.simplefilter("always", ModeheatWarning)
        try:
            spectrum = read_spectrum(job.path, unit=job.unit, atoms=job.atoms, columns=job.columns,
                                     total=job.total, low_t=job.low_t, low_t_cutoff=job.low_t_cutoff)
            frame = thermo(spectrum, job.temperatures, per=job.per, molar_mass=job.molar_mass)
            outcome.error = _not_finite(frame, job.path)
            if outcome.error is None:
                outcome.frame = frame
        except (ModeheatError, OSError) as exc:
            outcome.error = located(str(exc), job.path)
        except Exception as exc:  # a bug: reported as this file's failure
            outcome.error = _internal(exc, job.path)
    if outcome.frame is not None:
        messages = [_warning_text(w, job.path) for w in caught]
        messages.append(_missing_theta(outcome.frame, job.path))
        outcome.warnings = [m for m in dict.fromkeys(messages) if m]
    return outcome


def located(message: str, path: str) -> str:
    """The message on one line, starting with the file it is about."""
    text = " ".join(message.split())
    return text if text.startswith((f"{path}:", f"{path},")) else f"{path}: {text}"


def _internal(exc: BaseException, path: str) -> str:
    return located(f"internal error while computing this file ({type(exc).__name__}: {exc}); "
                   "please report it with the file", path)


def _warning_text(caught: warnings.WarningMessage, path: str) -> str:
    if issubclass(caught.category, ModeheatWarning):
        return located(str(caught.message), path)
    return located(f"a library step reported {caught.category.__name__} '{caught.message}'; the table "
                   "was checked and is finite, but please report the file", path)


def _not_finite(frame: pd.DataFrame, path: str) -> str | None:
    """Why the table must not be written, if some value is not finite.

    A NaN Debye temperature is allowed: it is documented for heat capacities that
    admit none (see :func:`_missing_theta`); ±inf there, and NaN or ±inf anywhere
    else, are not.
    """
    import numpy as np

    T = frame["T"].to_numpy(dtype=float)
    problems = []
    for column in frame.columns:
        values = frame[column].to_numpy(dtype=float)
        bad = ~np.isfinite(values)
        if column == "theta_D":
            bad &= ~np.isnan(values)
        if bad.any():
            first = int(np.flatnonzero(bad)[0])
            more = int(bad.sum()) - 1
            problems.append(f"{column} is {values[first]} at T = {T[first]:g} K"
                            + (f" and at {more} other temperature(s)" if more else ""))
    if not problems:
        return None
    return f"{path}: not written: the table has non-finite values: " + "; ".join(problems)


def _missing_theta(frame: pd.DataFrame, path: str) -> str | None:
    """A warning for Debye temperatures written as nan, so that none is silent."""
    import numpy as np

    missing = np.isnan(frame["theta_D"].to_numpy(dtype=float))
    if not missing.any():
        return None
    first = frame["T"].to_numpy(dtype=float)[missing][0]
    return (f"{path}: no effective Debye temperature exists at {int(missing.sum())} of {missing.size} "
            f"temperature(s) (the first at T = {first:g} K): written as nan")


def _compute_many(jobs: list[TableJob]) -> list[TableOutcome]:
    """Several files in one task (fewer round trips to a worker than one task per file)."""
    return [compute_table(job) for job in jobs]


@dataclass
class _Rows:
    """A task's rows as one Arrow table, and its outcomes without their frames."""

    table: Any
    outcomes: list[TableOutcome]


def _rows_many(jobs: list[TableJob]) -> list[_Rows]:
    """Several files in one task, their rows made into Arrow columns in the worker: the
    driver then only joins tables and writes them (it would otherwise take a core's share)."""
    import pyarrow

    outcomes = _compute_many(jobs)
    table = _arrow_chunk(pyarrow, outcomes)
    light = [TableOutcome(o.path, None, o.error, o.warnings, 0 if o.frame is None else len(o.frame)) for o in outcomes]
    return [_Rows(table, light)]


# --- engines ------------------------------------------------------------------------------------

def _split(items: list, parts: int) -> list[list]:
    size = max(1, -(-len(items) // max(1, parts)))
    return [items[i : i + size] for i in range(0, len(items), size)]


def _crashed(job: TableJob, why: str) -> TableOutcome:
    return TableOutcome(job.path, error=f"{job.path}: the worker process computing this file stopped abruptly ({why})")


# Every engine runs a task function fn(list of jobs) -> list of items (TableOutcome for
# `_compute_many`, one _Rows for `_rows_many`) on tasks of a few dozen files; a task that
# fails as a whole (a dead worker, a result that cannot travel back) is run again file by
# file, each alone, and a file that still fails becomes a TableOutcome with its error.

class _Serial:
    name = "serial"
    workers = 1

    def submit(self, jobs, fn):
        return fn(jobs)

    def gather(self, handle):
        return handle

    def close(self):
        pass


class _Pool:
    name = "process"

    def __init__(self, workers: int):
        self.workers = workers
        self._pool = ProcessPoolExecutor(max_workers=workers)

    def submit(self, jobs, fn):
        tasks = _split(jobs, 4 * self.workers)
        futures = []
        for task in tasks:
            try:
                futures.append(self._pool.submit(fn, task))
            except BrokenProcessPool:
                futures.append(None)
        return fn, tasks, futures

    def gather(self, handle):
        fn, tasks, futures = handle
        out = []
        for task, future in zip(tasks, futures):
            try:
                if future is None:
                    raise BrokenProcessPool("the pool was broken")
                out.extend(future.result())
            except BrokenProcessPool:
                # A dead worker breaks the pool and every task in flight with it: start a
                # new pool and compute those files one process each, so only the file that
                # kills its worker fails.
                self._renew()
                for job in task:
                    out.extend(self._alone(fn, job))
            except Exception:  # noqa: BLE001 — e.g. a result that cannot travel back: file by file
                for job in task:
                    out.extend(self._alone(fn, job))
        return out

    def _renew(self):
        self._pool.shutdown(wait=False, cancel_futures=True)
        self._pool = ProcessPoolExecutor(max_workers=self.workers)

    @staticmethod
    def _alone(fn, job: TableJob) -> list:
        with ProcessPoolExecutor(max_workers=1) as pool:
            try:
                return pool.submit(fn, [job]).result()
            except BrokenProcessPool:
                return [_crashed(job, "killed, out of memory or crashed")]
            except Exception as exc:  # noqa: BLE001
                return [TableOutcome(job.path, error=_internal(exc, job.path))]

    def close(self):
        self._pool.shutdown(wait=True, cancel_futures=True)


class _Dask:
    name = "dask"

    def __init__(self, workers: int, scheduler: str | None):
        try:
            from distributed import Client, LocalCluster
        except ImportError:
            raise InputError("the Dask engine needs dask.distributed: pip install 'modeheat[batch]'") from None
        self._cluster = None
        if scheduler is None:
            self._cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True,
                                         dashboard_address=None, silence_logs=40)
            self._client = Client(self._cluster)
        else:
            try:
                self._client = Client(scheduler, timeout="10s")  # a refused address fails after this
            except OSError as exc:
                raise InputError(f"cannot reach the Dask scheduler at {scheduler!r}: {exc}") from None
        self.workers = max(1, len(self._client.scheduler_info().get("workers", {})) or workers)

    def submit(self, jobs, fn):
        tasks = _split(jobs, 4 * self.workers)
        return fn, tasks, self._client.map(fn, tasks, pure=False)

    def gather(self, handle):
        fn, tasks, futures = handle
        out = []
        for task, future in zip(tasks, futures):
            try:
                out.extend(future.result())
            except Exception:  # noqa: BLE001 — KilledWorker and the like: retry file by file
                for job in task:
                    out.extend(self._alone(fn, job))
        return out

    def _alone(self, fn, job: TableJob) -> list:
        from distributed import KilledWorker

        try:
            return self._client.submit(fn, [job], pure=False).result()
        except KilledWorker:
            return [_crashed(job, "killed, out of memory or crashed")]
        except Exception as exc:  # noqa: BLE001
            return [TableOutcome(job.path, error=_internal(exc, job.path))]

    def close(self):
        self._client.close()
        if self._cluster is not None:
            self._cluster.close()


def _engine(engine: str, workers: int | None, scheduler: str | None):
    if engine not in ENGINES:
        raise InputError(f"engine must be one of {', '.join(ENGINES)}, not {engine!r}")
    if scheduler is not None and engine != "dask":
        raise InputError("a scheduler address goes with engine='dask'")
    n = workers or os.cpu_count() or 1
    if engine == "serial" or (engine == "process" and n == 1):
        return _Serial()
    if engine == "process":
        return _Pool(n)
    return _Dask(n, scheduler)


def iter_outcomes(jobs: Iterable[TableJob], *, engine: str = "process", workers: int | None = None,
                  scheduler: str | None = None, chunk: int = 500, _task=_compute_many) -> Iterator[TableOutcome]:
    """Each job's outcome, in the order of `jobs`, computed chunk by chunk on `engine`.

    `jobs` is consumed a chunk at a time (a generator keeps memory flat), and while the
    caller handles one chunk's outcomes the next chunk computes, so at most two chunks
    are in memory.  The engine is started on the first job and stopped when the
    iteration ends (or is abandoned).
    """
    if not isinstance(chunk, int) or isinstance(chunk, bool) or chunk < 1:
        raise InputError(f"chunk must be a whole number of files ≥ 1, not {chunk!r}")
    source = iter(jobs)
    first = list(itertools.islice(source, chunk))
    if not first:
        return
    runner = _engine(engine, workers, scheduler)
    try:
        handle = runner.submit(first, _task)
        while handle is not None:
            outcomes = runner.gather(handle)
            following = list(itertools.islice(source, chunk))
            handle = runner.submit(following, _task) if following else None
            yield from outcomes
    finally:
        runner.close()


# --- the batch ------------------------------------------------------------------------------------

@dataclass(frozen=True)
class BatchSummary:
    """What a batch did.

    Attributes
    ----------
    out : Path — the dataset folder or CSV file
    written : int — sources whose rows were written in this run
    failed : int — sources that failed in this run (listed in the errors table)
    skipped : int — sources already in the dataset (a rerun), not computed again
    rows : int — rows written in this run
    engine : str — the engine used
    seconds : float — wall time
    errors : tuple of (str, str) — (source, message) of each failure of this run
    warnings : tuple of str — one line per warning about a written source
    """

    out: Path
    written: int
    failed: int
    skipped: int
    rows: int
    engine: str
    seconds: float
    errors: tuple = ()
    warnings: tuple = ()


def _is_parquet(out: Path, format: str | None) -> bool:
    if format is None:
        return out.suffix.lower() == ".parquet" or out.is_dir() or out.suffix == ""
    if format not in ("parquet", "csv"):
        raise InputError(f"format must be 'parquet' or 'csv', not {format!r}")
    return format == "parquet"


def _pyarrow():
    try:
        import pyarrow
        import pyarrow.parquet
    except ImportError:
        raise InputError("Parquet output needs pyarrow: pip install 'modeheat[batch]' (or write a .csv)") from None
    return pyarrow


def _settings(job: TableJob) -> dict:
    d = asdict(job)
    d.pop("path")
    d["temperatures"] = [float(t).hex() for t in job.temperatures]  # exact
    return d


def _schema(pa):
    kinds = {"string": pa.string(), "float64": pa.float64()}
    return pa.schema([(name, kinds[kind]) for name, kind in COLUMNS.items()])


def _arrow_chunk(pa, outcomes: list[TableOutcome]):
    """The rows of a chunk's good outcomes as one Arrow table (schema :data:`COLUMNS`)."""
    import numpy as np

    good = [o for o in outcomes if o.frame is not None]
    counts = [len(o.frame) for o in good]
    columns = {}
    columns["source"] = pa.array(np.repeat(np.array([o.path for o in good], dtype=object), counts), pa.string())
    for key in _PER_SOURCE:
        values = [o.frame.attrs.get(key) for o in good]
        if COLUMNS[key] == "float64":
            arr = np.repeat(np.array([np.nan if v is None else float(v) for v in values], dtype=float), counts)
            columns[key] = pa.array(arr, pa.float64(), mask=np.repeat(np.array([v is None for v in values], dtype=bool), counts))
        else:
            columns[key] = pa.array(np.repeat(np.array([None if v is None else str(v) for v in values],
                                                       dtype=object), counts), pa.string())
    for key in _THERMO:
        columns[key] = pa.array(np.concatenate([o.frame[key].to_numpy(dtype=float) for o in good])
                                if good else np.empty(0), pa.float64())
    return pa.table(columns, schema=_schema(pa))


def _write_atomic(path: Path, write) -> None:
    temporary = path.with_name(f".{path.name}.{secrets.token_hex(4)}.tmp")
    try:
        write(temporary)
        os.replace(temporary, path)
    finally:
        if temporary.exists():
            temporary.unlink()


def _done_sources(pa, out: Path) -> set[str]:
    import pyarrow.compute as pc

    done: set[str] = set()
    for part in sorted(out.glob("part-*.parquet")):
        try:
            column = pa.parquet.read_table(part, columns=["source"]).column("source")
        except Exception as exc:  # noqa: BLE001 — a damaged part: say which
            raise InputError(f"cannot read the dataset part {part.name}: {exc}", path=part) from None
        done.update(pc.unique(column).to_pylist())
    return done


def read_errors(out: str | os.PathLike) -> pd.DataFrame:
    """The errors table of a Parquet dataset written by :func:`tabulate_files`: ``source``
    and ``error`` (empty when every file gave a table)."""
    import pandas as pd

    path = Path(out) / _ERRORS
    if not path.exists():
        return pd.DataFrame({"source": pd.Series([], dtype=str), "error": pd.Series([], dtype=str)})
    return pd.read_parquet(path)


def iter_tabulate_files(
    files: Sequence[str | os.PathLike],
    temperatures,
    out: str | os.PathLike,
    *,
    engine: str = "process",
    workers: int | None = None,
    scheduler: str | None = None,
    format: str | None = None,
    chunk: int = 500,
    resume: bool = True,
    overwrite: bool = False,
    unit: str | None = None,
    atoms: float | None = None,
    columns: list | None = None,
    total: str | None = None,
    per: str = "formula",
    low_t: str | float = "auto",
    low_t_cutoff: float | None = None,
    molar_mass: float | None = None,
) -> Iterator[Progress]:
    """:func:`tabulate_files` as a generator of :class:`~modeheat.progress.Progress`
    records (one per file, stage ``"files"``); the last carries the :class:`BatchSummary`."""
    import numpy as np

    start = time.perf_counter()
    out = Path(out)
    T = np.asarray(temperatures, dtype=float)
    if T.ndim != 1 or T.size == 0 or not np.all(np.isfinite(T)) or np.any(T < 0):
        raise InputError("temperatures must be a non-empty 1-D array of finite values ≥ 0 K")
    if not isinstance(chunk, int) or isinstance(chunk, bool) or chunk < 1:
        raise InputError(f"chunk must be a whole number of files ≥ 1, not {chunk!r}")
    if engine not in ENGINES:
        raise InputError(f"engine must be one of {', '.join(ENGINES)}, not {engine!r}")
    paths = [os.fspath(f) for f in files]
    if len(set(paths)) != len(paths):
        seen: set[str] = set()
        twice = next(p for p in paths if p in seen or seen.add(p))
        raise InputError(f"the file {twice!r} is listed twice; each source is one file")
    template = TableJob("", T, unit, atoms, columns, total, per, low_t, low_t_cutoff, molar_mass)
    parquet = _is_parquet(out, format)
    pa = _pyarrow() if parquet else None
    done: set[str] = set()
    run = time.strftime("%Y%m%dT%H%M%S") + "-" + secrets.token_hex(3)
    if parquet:
        settings = _settings(template)
        if out.exists() and not out.is_dir():
            raise InputError("the Parquet output must be a folder; a file of that name exists", path=out)
        if out.is_dir() and any(out.iterdir()):
            recorded = out / _SETTINGS
            if not recorded.is_file():
                raise InputError("the folder exists and is not a modeheat dataset (no _settings.json); "
                                 "choose a new folder", path=out)
            if not resume:
                raise InputError("the dataset exists; pass resume=True (--resume) to add the missing "
                                 "sources, or choose a new folder", path=out)
            if json.loads(recorded.read_text(encoding="utf-8")) != settings:
                raise InputError("the dataset was made with other temperatures or reading options "
                                 f"({recorded.name}); a table mixing settings would mislead: choose a new "
                                 "folder", path=out)
            done = _done_sources(pa, out)
        else:
            out.mkdir(parents=True, exist_ok=True)
            _write_atomic(out / _SETTINGS, lambda p: p.write_text(json.dumps(settings, indent=1), encoding="utf-8"))
            _write_atomic(out / _README, lambda p: p.write_text(_readme(template), encoding="utf-8"))
    else:
        from .io.tables import check_table_destination

        check_table_destination(out)
        if out.exists() and not overwrite:
            raise InputError("the output file exists; choose another name or pass overwrite=True", path=out)
    pending = [p for p in paths if p not in done]
    skipped = len(paths) - len(pending)
    # Failures of an earlier run stay listed until this run tries their files again.
    listed = read_errors(out) if parquet else None
    earlier = dict(zip(listed["source"], listed["error"])) if parquet else {}
    errors: list[tuple[str, str]] = []
    notes: list[str] = []
    kept: list[TableOutcome] = []  # CSV only: the rows are written at the end
    tables: list = []  # Parquet: the Arrow tables of the part being filled
    filled = written = rows = finished = part = 0
    engine_name = _engine_name(engine, workers) if pending else "serial"

    def flush() -> None:
        nonlocal part, filled
        if tables:
            table = pa.concat_tables(tables)
            if table.num_rows:
                _write_atomic(out / f"part-{run}-{part:06d}.parquet", lambda p: pa.parquet.write_table(table, p))
                part += 1
        _write_errors(pa, out, list(earlier.items()) + errors)
        tables.clear()
        filled = 0

    jobs = (_with_path(template, p) for p in pending)
    items = iter_outcomes(jobs, engine=engine, workers=workers, scheduler=scheduler, chunk=chunk,
                          _task=_rows_many if parquet else _compute_many)
    for item in items:
        if isinstance(item, _Rows):
            tables.append(item.table)
            group = item.outcomes
        else:  # a file alone (a task that failed as a whole was run again file by file)
            group = [item]
        for o in group:
            earlier.pop(o.path, None)
            finished += 1
            if o.error is not None:
                errors.append((o.path, o.error))
            else:
                notes.extend(o.warnings)
                written += 1
                filled += 1
                rows += o.rows if o.frame is None else len(o.frame)
                if not parquet:
                    kept.append(o)
            yield Progress(finished, len(pending), "files", os.path.basename(o.path))
        if parquet and filled >= chunk:
            flush()
    if parquet:
        flush()
    elif kept:
        _write_csv(kept, out, overwrite)
    summary = BatchSummary(out, written, len(errors), skipped, rows, engine_name, time.perf_counter() - start,
                           tuple(errors), tuple(notes))
    yield Progress(len(pending), len(pending), "files", "done", result=summary)


def _engine_name(engine: str, workers: int | None) -> str:
    n = workers or os.cpu_count() or 1
    return "serial" if engine == "process" and n == 1 else engine


def _with_path(template: TableJob, path: str) -> TableJob:
    from dataclasses import replace

    return replace(template, path=path)


def _write_errors(pa, out: Path, errors: list[tuple[str, str]]) -> None:
    table = pa.table({"source": pa.array([s for s, _ in errors], pa.string()),
                      "error": pa.array([e for _, e in errors], pa.string())})
    _write_atomic(out / _ERRORS, lambda p: pa.parquet.write_table(table, p))


def _write_csv(outcomes: list[TableOutcome], out: Path, overwrite: bool) -> None:
    from .io.tables import combine_tables, write_table

    write_table(combine_tables([(o.path, o.frame) for o in outcomes]), out, overwrite=overwrite)


def _readme(job: TableJob) -> str:
    from .thermo import CAUTION

    amount = "g" if job.per == "gram" else "mol"
    return (
        "A table of many spectrum files written by modeheat (modeheat.batch.tabulate_files).\n"
        "Read it with pandas.read_parquet(<this folder>); files starting with '_' are not rows.\n"
        f"Rows: one per source and temperature. Basis: per {job.per} (see the basis column).\n"
        f"Units: T [K]; Cv, S [J/({amount} K)]; U, F, zero_point_energy [J/{amount}] (zero point included); "
        "theta_D [K] (nan where no effective Debye temperature exists); atoms per formula unit; "
        "low_t_cutoff in low_t_cutoff_unit.\n"
        "Failures: _errors.parquet (source, error). Settings: _settings.json (temperatures as hex floats).\n"
        f"Caution: {CAUTION}\n"
    )


def tabulate_files(
    files: Sequence[str | os.PathLike],
    temperatures,
    out: str | os.PathLike,
    *,
    progress: ProgressCallback | None = None,
    **options: Any,
) -> BatchSummary:
    """Thermodynamic tables of many DOS files, streamed to a Parquet dataset or a CSV file.

    Parameters
    ----------
    files : sequence of str or path — the DOS files (each is one source, named as given)
    temperatures : array_like — T in K, the same for every file
    out : str or path — a folder (or a name ending in ``.parquet``) for a Parquet
        dataset, else a CSV file (see the module notes)
    engine : {"process", "serial", "dask"} — where the work runs (default "process")
    workers : int, optional — worker processes (default: the CPU count); for Dask, of the
        local cluster started here
    scheduler : str, optional — address of a running Dask scheduler (``engine="dask"``)
    format : {"parquet", "csv"}, optional — by default from `out`
    chunk : int — files per chunk written (default 500): the memory bound
    resume : bool — extend an existing dataset, skipping the sources it holds (default True)
    overwrite : bool — replace an existing CSV file
    unit, atoms, columns, total, low_t, low_t_cutoff : as for :func:`modeheat.read_spectrum`
    per, molar_mass : as for :func:`modeheat.thermo`
    progress : callable, optional — receives a :class:`~modeheat.progress.Progress` per
        file; returning ``False`` cancels (the chunks written so far stay, and a rerun
        goes on from there)

    Returns
    -------
    BatchSummary

    Raises
    ------
    InputError
        Bad options, an output that cannot be written or that holds other settings, a
        missing optional dependency (pyarrow, dask.distributed).
    """
    return drive(iter_tabulate_files(files, temperatures, out, **options), progress)
