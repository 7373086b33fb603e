"""The ``modeheat`` commands around the notebooks and figures.

- ``modeheat lab`` copies the notebooks shipped with the package (``modeheat/notebooks/``,
  filled from the repository's ``notebooks/`` by ``notebooks/sync.py``) into a working
  folder — an existing copy is kept, never replaced — and starts JupyterLab there, bound to
  127.0.0.1 with a random token, printing the URL;
- ``modeheat demo --out DIR`` does the whole job headless on the invented demo data:
  CSV tables, figures (PDF, SVG, PNG) and a text summary;
- ``modeheat lowt FILE --tmax K`` fits C/T = γ + βT² (+ δT⁴) to a C_p file and prints γ, β
  and θ_D(0) with their standard errors;
- ``modeheat figure --dos FILE --cp FILE -o OUT`` draws the multi-panel figure;
- ``modeheat quasi-harmonic TABLE -o OUT.csv`` reads a volume table and its DOS files
  (:func:`modeheat.io.read_volume_set`) and writes the quasi-harmonic table — V, B_T,
  α_V, C_v, C_p, S, G, H and γ against T at a pressure — with the caution, optionally
  with its figure (:func:`modeheat.figures.quasi_harmonic_figure`).

They follow the conventions of ``modeheat table`` (:mod:`modeheat.cli`): exit status 0
success, 1 bad input or a file that cannot be written, 2 bad usage; errors in one line
``modeheat: error: …`` on standard error; the backend and matplotlib are imported only
when a command runs, so ``modeheat --help`` stays quick.
"""

from __future__ import annotations

import argparse
import importlib.util
import math
import os
import secrets
import signal
import socket
import subprocess
import sys
import warnings
from collections.abc import Iterator
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING

from .errors import InputError, ModeheatError, ModeheatWarning
from .progress import Progress, ProgressLine, drive

if TYPE_CHECKING:
    import pandas as pd
    from matplotlib.figure import Figure

__all__ = [
    "add_commands",
    "shipped_notebooks",
    "prepare_notebooks",
    "lab_command_line",
    "lab_url",
    "DEMO_COMPOUNDS",
    "demo_outputs",
]

#: The working folder ``modeheat lab`` copies the notebooks into, by default.
DEFAULT_LAB_DIR = "modeheat-notebooks"
#: Figure formats a stem gets (the contract of :func:`modeheat.figures.save_figure`).
FIGURE_FORMATS = ("pdf", "svg", "png")
_LAB_EXTRA = "pip install 'modeheat[lab]'"

#: The invented demo compounds: file stem, display name, atoms per formula unit, and the
#: γ in J/(mol K²) and A in mol/J their C_p was made with (demo_spectra/make_demo.py).
DEMO_COMPOUNDS = (
    ("zorbium_lumide", "zorbium lumide", 2, 5e-5, 2e-6),
    ("quellium", "quellium", 1, 9e-4, 4e-6),
)
_DEMO_TEMPERATURES = "1:400:1"
# The T³ law holds below about θ_D(0)/50 (common practice); both demo compounds have
# θ_D(0) ≈ 250–320 K, so 5 K keeps the low-temperature fit inside it.
_DEMO_TMAX = 5.0
_MOMENT_ORDERS = (-3, -2, 0, 2)


def _say(kind: str, message: str) -> None:
    from .cli import _say as say

    say(kind, message)


# --- lab -------------------------------------------------------------------------------------------
def shipped_notebooks() -> list:
    """The notebooks installed with the package (``modeheat/notebooks/*.ipynb``), by name.

    Returns
    -------
    list of importlib.resources.abc.Traversable
    """
    folder = resources.files("modeheat") / "notebooks"
    if not folder.is_dir():
        return []
    return sorted((f for f in folder.iterdir() if f.name.endswith(".ipynb")), key=lambda f: f.name)


def prepare_notebooks(folder: str | os.PathLike, sources: list | None = None) -> tuple[list[Path], list[Path]]:
    """Copy the shipped notebooks into a working folder, keeping every existing file.

    The installed originals are only read.  A notebook already in `folder` — perhaps
    edited by the user — is kept as it is, never replaced.

    Parameters
    ----------
    folder : str or os.PathLike — the working folder, created when missing
    sources : list, optional — the notebooks to copy (default: :func:`shipped_notebooks`)

    Returns
    -------
    (copied, kept) : lists of pathlib.Path — the files written and those left as they were

    Raises
    ------
    InputError
        `folder` exists and is not a folder, or cannot be created or written.
    """
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise InputError("exists and is not a folder; choose another --dir", path=folder)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError(f"cannot create the folder ({exc.strerror or exc})", path=folder) from None
    copied, kept = [], []
    for source in shipped_notebooks() if sources is None else sources:
        target = folder / source.name
        try:
            # "x" refuses an existing file, even one that appeared since we looked.
            with open(target, "xb") as out:
                out.write(source.read_bytes())
        except FileExistsError:
            kept.append(target)
            continue
        except OSError as exc:
            raise InputError(f"cannot write the notebook ({exc.strerror or exc})", path=target) from None
        copied.append(target)
    return copied, kept


def lab_command_line(folder: str | os.PathLike, port: int, token: str, *, browser: bool = False) -> list[str]:
    """The command that starts JupyterLab in `folder` on 127.0.0.1:`port` with `token`.

    Parameters
    ----------
    folder : str or os.PathLike — the server's root folder
    port : int — TCP port; the server fails rather than move to another (port_retries=0),
        so the printed URL is the right one
    token : str — the access token
    browser : bool — let JupyterLab open a web browser

    Returns
    -------
    list of str — the argument vector, starting with this Python
    """
    command = [
        sys.executable, "-m", "jupyterlab",
        "--ServerApp.ip=127.0.0.1",
        f"--ServerApp.port={port}",
        "--ServerApp.port_retries=0",
        f"--IdentityProvider.token={token}",
        f"--ServerApp.root_dir={os.path.abspath(folder)}",
        "--LabApp.news_url=None",
    ]
    if not browser:
        command.append("--no-browser")
    if hasattr(os, "geteuid") and os.geteuid() == 0:
        # JupyterLab refuses to run as root without it (containers often run as root).
        command.append("--allow-root")
    return command


def lab_url(port: int, token: str) -> str:
    """The address of the JupyterLab that :func:`lab_command_line` starts."""
    return f"http://127.0.0.1:{port}/lab?token={token}"


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as probe:
        probe.bind(("127.0.0.1", 0))
        return int(probe.getsockname()[1])


def _port_arg(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        value = -1
    if not 1 <= value <= 65535:
        raise argparse.ArgumentTypeError(f"expected a port number 1–65535, not {text!r}")
    return value


def _lab(args: argparse.Namespace) -> int:
    folder = Path(args.dir)
    port = args.port or _free_port()
    token = secrets.token_hex(24)
    command = lab_command_line(folder, port, token, browser=not args.no_browser)
    url = lab_url(port, token)
    if args.dry_run:
        names = [n.name for n in shipped_notebooks()]
        present = [n for n in names if (folder / n).exists()]
        sys.stdout.write(
            f"folder: {folder} (would copy {len(names) - len(present)} notebook(s), keep {len(present)})\n"
            f"command: {subprocess.list2cmdline(command)}\nurl: {url}\n"
        )
        return 0
    if importlib.util.find_spec("jupyterlab") is None:
        raise ModeheatError(f"JupyterLab is not installed; {_LAB_EXTRA}")
    copied, kept = prepare_notebooks(folder)
    if copied:
        _say("note", f"copied {len(copied)} notebook(s) into {folder}")
    if kept:
        _say("note", f"kept {len(kept)} existing notebook(s) in {folder} as they are: {', '.join(p.name for p in kept)}")
    server = subprocess.Popen(command, cwd=folder)
    sys.stdout.write(f"JupyterLab in {folder}: {url}\n(Ctrl-C stops it)\n")
    sys.stdout.flush()
    previous = signal.getsignal(signal.SIGTERM)

    def stop(signum, frame):
        raise KeyboardInterrupt

    # Stopping this command by its PID stops the server it started, too.
    signal.signal(signal.SIGTERM, stop)
    try:
        server.wait()
    except KeyboardInterrupt:
        server.terminate()
        try:
            server.wait(timeout=15)
        except subprocess.TimeoutExpired:
            server.kill()
            server.wait()
        return 0
    finally:
        signal.signal(signal.SIGTERM, previous)
    return 0 if server.returncode == 0 else 1


# --- shared by demo and figure -----------------------------------------------------------------------
def _figures():
    """:mod:`modeheat.figures`, or an error saying how to get matplotlib."""
    if importlib.util.find_spec("matplotlib") is None:
        raise ModeheatError(f"drawing figures needs matplotlib; {_LAB_EXTRA}")
    from . import figures

    return figures


def _figure_paths(target: str | os.PathLike) -> list[Path]:
    """The files :func:`modeheat.figures.save_figure` writes for `target` (a file or a stem)."""
    target = Path(target)
    if target.suffix:
        return [target]
    return [target.with_name(f"{target.name}.{fmt}") for fmt in FIGURE_FORMATS]


def _check_new(paths: list[Path], overwrite: bool) -> None:
    """Refuse, before any work, outputs that are not regular files or, without
    --overwrite, that exist."""
    from .io.tables import check_table_destination

    for path in paths:
        check_table_destination(path)
        if path.exists() and not overwrite:
            raise InputError("exists; choose another name or pass --overwrite", path=path)


def _strip_caution(report: str) -> str:
    # The summary states the caution once, at its head; the parts' own copies would repeat it.
    return "\n".join(line for line in report.splitlines() if not line.startswith("caution:"))


def _collect(caught: list) -> None:
    """Each modeheat warning recorded, as one line on standard error."""
    for item in caught:
        if issubclass(item.category, ModeheatWarning):
            _say("warning", str(item.message))
        else:
            warnings.warn_explicit(item.message, item.category, item.filename, item.lineno)


# --- demo -------------------------------------------------------------------------------------------
def _demo_file(name: str):
    # Shipped inside the package with the Explorer's demo, so an installed modeheat finds
    # it; reached as files, so the widgets (and ipywidgets) are not imported.
    return resources.files("modeheat") / "widgets" / "demo" / name


def demo_outputs(out: str | os.PathLike) -> list[Path]:
    """Every file ``modeheat demo --out OUT`` writes, in order.

    Parameters
    ----------
    out : str or os.PathLike — the output folder

    Returns
    -------
    list of pathlib.Path — per compound its table (CSV) and its figure (PDF, SVG, PNG),
        then ``summary.txt``
    """
    out = Path(out)
    paths = []
    for stem, *_ in DEMO_COMPOUNDS:
        paths.append(out / f"{stem}_table.csv")
        paths += _figure_paths(out / f"{stem}_figure")
    paths.append(out / f"{_DEMO_VOLUMES}_table.csv")
    paths += _figure_paths(out / f"{_DEMO_VOLUMES}_figure")
    paths.append(out / "summary.txt")
    return paths


_DEMO_VOLUMES = "quellium_quasi_harmonic"  # the invented volume set's outputs


def _demo_steps(out: Path, overwrite: bool) -> Iterator[Progress]:
    """The demo as long work: one record per step, the last carrying the files written."""
    from .cli import parse_temperatures
    from .fitting import fit, low_temperature_fit
    from .io import read_heat_capacity, read_spectrum, write_table
    from .io.tables import write_text_file
    from .models import Dilatation, Electronic, PhononDOS
    from .thermo import CAUTION, thermo

    figures = _figures()
    temperatures = parse_temperatures(_DEMO_TEMPERATURES)
    total = 4 * len(DEMO_COMPOUNDS) + 2
    done = 0
    written: list[Path] = []
    summary = [
        "modeheat demo: the whole job on invented data (zorbium lumide and quellium are not real materials)",
        f"caution: {CAUTION}",
        "",
    ]
    for stem, title, atoms, gamma, A in DEMO_COMPOUNDS:
        with resources.as_file(_demo_file(f"{stem}_dos.txt")) as p:
            dos = read_spectrum(p)
        with resources.as_file(_demo_file(f"{stem}_cp.txt")) as p:
            cp = read_heat_capacity(p, atoms=atoms)
        table = thermo(dos, temperatures)
        written.append(write_table(table, out / f"{stem}_table.csv", overwrite=overwrite))
        done += 1
        yield Progress(done, total, "demo", f"{title}: table")

        low_t = low_temperature_fit(cp, tmax=_DEMO_TMAX)
        done += 1
        yield Progress(done, total, "demo", f"{title}: low-temperature fit")

        # γ is the electronic one from the low-temperature fit (held), A starts where the
        # data were made; the DOS frequency scale and A are fitted to the whole C_p.
        model = PhononDOS(dos, name="dos") + Electronic(gamma=max(low_t.gamma, 0.0)) + Dilatation(A=A)
        result = fit(model, cp, vary=["dos.scale", "dilatation.A"])
        done += 1
        yield Progress(done, total, "demo", f"{title}: fit of the computed DOS")

        figure = figures.paper_figure(spectrum=dos, model=result.model, data=cp)
        written += figures.save_figure(figure, out / f"{stem}_figure", overwrite=overwrite)
        done += 1
        yield Progress(done, total, "demo", f"{title}: figure")

        moments = ", ".join(f"θ({n}) = {dos.moment_debye_temperature(n):.5g} K" for n in _MOMENT_ORDERS)
        summary += [
            f"== {title} (invented; {atoms} atom{'s' if atoms != 1 else ''} per formula unit; electronic γ "
            f"{gamma:g} J/(mol K²) and A {A:g} mol/J as the data were made) ==",
            f"computed DOS: θ_D(0) = {dos.moment_debye_temperature(-3):.5g} K "
            f"(low-temperature continuation: {table.attrs.get('low_t_summary') or 'none'})",
            f"moment Debye temperatures: {moments}",
            "",
            _strip_caution(low_t.report()),
            "",
            _strip_caution(result.report()),
            "",
        ]
    # Quellium at six volumes (invented): quasi-harmonic V(T), α, C_p against the same C_p data.
    from .io.volume_sets import read_volume_set
    from .quasiharmonic import quasi_harmonic

    with resources.as_file(_demo_file("quellium_volumes.txt")) as p:
        volume_set = read_volume_set(p)
    with resources.as_file(_demo_file("quellium_cp.txt")) as p:
        cp = read_heat_capacity(p, atoms=1)
    q = quasi_harmonic(volume_set, temperatures)
    q.attrs["per"] = "formula"  # write_table's basis: per mole of formula units (atoms)
    written.append(write_table(q, out / f"{_DEMO_VOLUMES}_table.csv", overwrite=overwrite))
    written += figures.save_figure(figures.quasi_harmonic_figure(q, cp), out / f"{_DEMO_VOLUMES}_figure",
                                   overwrite=overwrite)
    done += 1
    yield Progress(done, total, "demo", "quellium: quasi-harmonic")
    at = q.set_index("T").loc[300.0] if 300.0 in set(q["T"]) else q.iloc[-1]
    summary += [
        "== quellium at six volumes (invented Morse springs; the volume set of demo_spectra/make_volume_demo.py) ==",
        f"quasi-harmonic at 0 GPa, {q.attrs['eos']} equation of state: at 300 K V = {at['V']:.5g} Å³, "
        f"α_V = {at['alpha_V']:.4g} 1/K, B_T = {at['B_T']:.4g} GPa, C_p − C_v = {at['Cp'] - at['Cv']:.4g} J/(mol K), "
        f"γ = {at['gamma']:.4g}",
        "",
    ]
    summary.append("files: " + ", ".join(p.name for p in written))
    written.append(write_text_file(out / "summary.txt", "\n".join(summary) + "\n", overwrite=overwrite))
    yield Progress(total, total, "demo", "summary", result=written)


def _demo(args: argparse.Namespace) -> int:
    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise InputError("exists and is not a folder", path=out)
    _check_new(demo_outputs(out), args.overwrite)
    _figures()  # before any file is written
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError(f"cannot create the folder ({exc.strerror or exc})", path=out) from None
    from .thermo import CAUTION

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ModeheatWarning)
        written = drive(_demo_steps(out, args.overwrite), ProgressLine())
    _collect(caught)
    sys.stdout.write(f"wrote {len(written)} files to {out}: {', '.join(p.name for p in written)}\n")
    sys.stdout.flush()
    _say("caution", CAUTION)
    return 0


# --- lowt -------------------------------------------------------------------------------------------
_TERMS = ("gamma", "beta", "delta")


def _terms_arg(text: str) -> tuple[str, ...]:
    terms = tuple(t.strip() for t in text.split(","))
    if any(t not in _TERMS for t in terms) or len(set(terms)) != len(terms) or "beta" not in terms:
        raise argparse.ArgumentTypeError(
            f"expected distinct names from {','.join(_TERMS)} including beta (e.g. gamma,beta), not {text!r}"
        )
    return terms


def _read_cp(path: str, unit: str | None, atoms: float | None) -> pd.DataFrame:
    from .io import read_heat_capacity

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ModeheatWarning)
        data = read_heat_capacity(path, unit=unit, atoms=atoms)
    _collect(caught)
    return data


def _lowt(args: argparse.Namespace) -> int:
    from .fitting import low_temperature_fit

    data = _read_cp(args.file, args.unit, args.atoms)
    try:
        result = low_temperature_fit(data, tmax=args.tmax, tmin=args.tmin, atoms=args.atoms, terms=args.terms)
    except InputError as exc:
        if exc.path is None:
            raise InputError(exc.problem, path=args.file) from None
        raise
    sys.stdout.write(result.report() + "\n")
    return 0


def _check_lowt_args(args: argparse.Namespace) -> None:
    if args.tmin is not None and args.tmin >= args.tmax:
        args.usage.error("--tmin must be below --tmax")


# --- figure -----------------------------------------------------------------------------------------
def _check_figure_args(args: argparse.Namespace) -> None:
    if args.dos is None and args.cp is None:
        args.usage.error("give --dos FILE, --cp FILE or both")
    suffix = Path(args.output).suffix.lower().lstrip(".")
    if suffix and suffix not in FIGURE_FORMATS:
        args.usage.error(f"-o: the format {suffix!r} is not one of {', '.join(FIGURE_FORMATS)} (or give a stem)")


def _figure(args: argparse.Namespace) -> int:
    paths = _figure_paths(args.output)
    _check_new(paths, args.overwrite)
    for path in paths:
        folder = path.parent
        if not folder.is_dir():
            raise InputError(f"the folder {str(folder)!r} does not exist", path=path)
    figures = _figures()
    spectrum = model = data = None
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ModeheatWarning)
        if args.dos is not None:
            from .io import read_spectrum

            spectrum = read_spectrum(args.dos, unit=args.unit, atoms=args.atoms)
        if args.cp is not None:
            data = _read_cp(args.cp, args.cp_unit, args.atoms)
        if spectrum is None:
            model = _debye_model(data, args.atoms)
    _collect(caught)
    figure: Figure = figures.paper_figure(
        spectrum=spectrum, model=model, data=data, width=args.width, temperatures=args.temperatures
    )
    written = figures.save_figure(figure, args.output, overwrite=args.overwrite)
    sys.stdout.write("wrote " + ", ".join(str(p) for p in written) + "\n")
    return 0


def _debye_model(data: pd.DataFrame, atoms: float | None):
    """A Debye solid fitted to `data` alone: what the figure draws without a DOS."""
    from .fitting import fit
    from .models import Debye
    from .thermo import atoms_of_data

    count, _ = atoms_of_data(data, atoms)
    # 300 K is only a start; the fit moves it to the data's own θ_D.
    result = fit(Debye(theta=300.0, modes=3 * count, name="debye"), data, vary=["debye.theta"], atoms=count)
    _say("note", f"no DOS given: the model drawn is a Debye solid fitted to the data, θ_D = "
         f"{result.params['debye.theta']:.4g} ± {result.stderr['debye.theta']:.2g} K")
    return result.model


# --- quasi-harmonic ---------------------------------------------------------------------------------
#: The equation-of-state choices (modeheat.quasiharmonic.EOS_FORMS and "auto"), spelled out
#: here so that building the parser imports no backend.
QH_EOS_CHOICES = ("auto", "birch-murnaghan", "vinet")


def _pressure_arg(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"expected a pressure in GPa (a finite number), not {text!r}")
    return value


def _check_quasi_harmonic_args(args: argparse.Namespace) -> None:
    if args.figure is not None:
        suffix = Path(args.figure).suffix.lower().lstrip(".")
        if suffix and suffix not in FIGURE_FORMATS:
            args.usage.error(f"--figure: the format {suffix!r} is not one of {', '.join(FIGURE_FORMATS)} (or give a stem)")
    if args.cp is not None and args.figure is None:
        args.usage.error("--cp draws measured C_p on the figure: give --figure too")


def _quasi_harmonic(args: argparse.Namespace) -> int:
    from .cli import _check_output

    _check_output(args.output, [args.table], args.overwrite)
    figure_paths = [] if args.figure is None else _figure_paths(args.figure)
    _check_new(figure_paths, args.overwrite)
    for path in figure_paths:
        if not path.parent.is_dir():
            raise InputError(f"the folder {str(path.parent)!r} does not exist", path=path)
    figures = _figures() if figure_paths else None  # before any work
    from .io.tables import write_table
    from .io.volume_sets import read_volume_set
    from .quasiharmonic import quasi_harmonic
    from .thermo import CAUTION

    data = None
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ModeheatWarning)
        volumes = read_volume_set(args.table, unit=args.unit, atoms=args.atoms)
        try:
            table = quasi_harmonic(volumes, args.temperatures, pressure=args.pressure, eos=args.eos)
        except InputError as exc:
            raise InputError(exc.problem, path=args.table) from None
        if args.cp is not None:
            data = _read_cp(args.cp, args.cp_unit, volumes.atoms)
    _collect(caught)
    if len(table) == 0:
        raise InputError(f"F + PV has no minimum near the sampled volumes at any temperature asked for "
                         f"({args.pressure:g} GPa): nothing written", path=args.table)
    problem = _qh_not_finite(table)
    if problem is not None:
        raise InputError(f"not written: {problem}", path=args.table)
    table.attrs.update(per="formula", source=f"{args.table} (quasi-harmonic, {table.attrs['eos']} equation of "
                                              f"state, {args.pressure:g} GPa)")
    write_table(table, args.output, overwrite=args.overwrite)
    written = [args.output]
    if figures is not None:
        fig = figures.quasi_harmonic_figure(table, data=data)
        written += [str(p) for p in figures.save_figure(fig, args.figure, overwrite=args.overwrite)]
    sys.stdout.write(f"wrote {len(table)} rows to {args.output}"
                     + (f"; the figure to {', '.join(written[1:])}" if len(written) > 1 else "") + "\n")
    sys.stdout.flush()
    rms = ", ".join(f"{form} {value:.3g} J/mol" for form, value in table.attrs["eos_rms"].items())
    _say("note", f"{len(volumes)} volumes, {volumes.atoms:g} atom(s) per formula unit; equation of state: "
         f"{table.attrs['eos']} (largest RMS misfit over the temperatures: {rms})")
    if table.attrs["extrapolated_from"] is not None:
        _say("note", f"V(T) is extrapolated beyond the sampled volumes from T = {table.attrs['extrapolated_from']:g} K "
             "(column 'extrapolated')")
    _say("note", "values " + table.attrs["basis"])
    _say("caution", CAUTION)
    return 0


def _qh_not_finite(table: pd.DataFrame) -> str | None:
    """Why a quasi-harmonic table must not be written: a non-finite value other than the
    documented NaN Grüneisen parameter where C_v = 0 (at T = 0)."""
    import numpy as np

    T = table["T"].to_numpy(dtype=float)
    for column in table.columns:
        values = table[column].to_numpy(dtype=float)
        bad = ~np.isfinite(values)
        if column == "gamma":
            bad &= ~(np.isnan(values) & (table["Cv"].to_numpy(dtype=float) == 0))
        if bad.any():
            first = int(np.flatnonzero(bad)[0])
            return f"the table has non-finite values: {column} is {values[first]} at T = {T[first]:g} K"
    return None


# --- the parsers ------------------------------------------------------------------------------------
_EXIT = """exit status:
  0 success; 1 bad input, or an output that exists (without --overwrite) or
  cannot be written; 2 bad usage.  Errors are one line on standard error:
    modeheat: error: FILE[, line N]: problem"""

_LAB_EPILOG = f"""\
The notebooks installed with modeheat are copied into the folder (default
./{DEFAULT_LAB_DIR}); the originals are never edited, and a notebook already
in the folder is kept as it is (it may hold your edits): delete it to get a
fresh copy.  JupyterLab listens on 127.0.0.1 only, with a new random token in
the printed URL; Ctrl-C stops it.  Needs the lab extra: {_LAB_EXTRA}

{_EXIT}

examples:
  modeheat lab
  modeheat lab --dir ~/heat-notebooks --port 8899 --no-browser
  modeheat lab --dry-run          # print the folder plan, command and URL only"""

_DEMO_EPILOG = f"""\
Writes into DIR, for each invented compound (zorbium lumide, quellium): the
thermodynamic table of its computed DOS ({_DEMO_TEMPERATURES} K, CSV), the
multi-panel figure (PDF, SVG, PNG), and summary.txt: θ_D(0) and the moment
Debye temperatures of the DOS, the low-temperature fit of its C_p below
{_DEMO_TMAX:g} K (γ, β, θ_D(0) with errors) and the fit report of the computed DOS
to the C_p.  An existing file is never replaced without --overwrite (checked
before any work).  A progress line shows on a terminal.

{_EXIT}

examples:
  modeheat demo --out demo-results
  modeheat demo --out demo-results --overwrite"""

_LOWT_EPILOG = f"""\
Fits C/T = γ + βT² (+ δT⁴ with --terms gamma,beta,delta) to the points up to
--tmax by linear least squares, weighted by the file's sigma column when it
has one, and prints γ in J/(mol K²), β in J/(mol K⁴) and θ_D(0) =
(12π⁴·atoms·R/(5β))^(1/3) in K, each with its standard error.  Choose --tmax
inside the T³ region (common practice: below about θ_D(0)/50).

heat-capacity files:
  Columns T, C and optionally sigma, e.g. a header  T (K)  C (J/(mol K))  sigma
  The C unit comes from the header or --unit: J/(mol K), mJ/(mol K),
  cal/(mol K), mcal/(mol K); per mole of atoms as J/(mol-atom K).

{_EXIT}

examples:
  modeheat lowt cp.txt --tmax 5 --atoms 2
  modeheat lowt cp.txt --tmax 12 --terms gamma,beta,delta --unit "mJ/(mol K)"
  modeheat lowt cp.txt --tmin 2 --tmax 6 --terms beta     # an insulator: no γ"""

_FIGURE_EPILOG = f"""\
Panels: the DOS, C/T³ against T and θ_D(T) against T, with the C_p data and
their residuals when --cp is given.  Without --dos the model drawn is a Debye
solid fitted to the C_p data.  -o with a suffix (.pdf, .svg, .png) writes that
file; a stem without one writes all three.  An existing file is never
replaced without --overwrite.

{_EXIT}

examples:
  modeheat figure --dos dos.txt --cp cp.txt --atoms 2 -o fig.pdf
  modeheat figure --dos dos.txt --width single -o figures/dos_panels
  modeheat figure --cp cp.txt --atoms 1 -o cp_only.svg --overwrite"""


_QH_EPILOG = f"""\
Reads a volume table and the DOS file of each volume, fits an equation of
state to F(V, T) = E0(V) + F_vib(V, T) at every temperature and writes, per
temperature: V (the table's volume unit), B_T in GPa, alpha_V in 1/K, C_v at
V(T) and C_p in J/(mol K), S in J/(mol K), G and H in J/mol and the
thermodynamic Grüneisen parameter gamma, per mole of formula units, with the
caution and the units as # lines.  The equation of
state chosen and where V(T) leaves the sampled volumes (column 'extrapolated')
are reported on standard error.

volume tables:
  UTF-8 text: '# volume unit: A3' (Å³ per formula unit; or cm3/mol, m3/mol),
  '# energy unit: eV' (or meV, Ry, Ha, J/mol, kJ/mol), optional '# atoms: N'
  and '# frequency unit: THz' lines, an optional header row, then one row per
  volume, in increasing order:  volume, static energy, DOS file
  (at least 4 volumes; DOS file names relative to the table's folder; each
  DOS file in the format of 'modeheat table --help'), e.g.
    # volume unit: A3
    # energy unit: eV
    volume, energy, dos file
    15.625, -3.40512, quellium_qh_v1.txt

{_EXIT}

examples:
  modeheat quasi-harmonic volumes.txt -o qh.csv
  modeheat quasi-harmonic volumes.txt --pressure 5 --eos vinet --temperatures 10:1200:10 -o qh5.csv
  modeheat quasi-harmonic volumes.txt -o qh.csv --figure qh_figure --cp cp.txt --overwrite"""


def add_commands(commands: argparse._SubParsersAction) -> None:
    """Add ``lab``, ``demo``, ``lowt``, ``figure`` and ``quasi-harmonic`` to the ``modeheat`` parser's commands."""
    from .cli import DEFAULT_TEMPERATURES, _positive_float, _temperatures_arg, _unit_arg

    raw = argparse.RawDescriptionHelpFormatter
    lab = commands.add_parser(
        "lab",
        help="start JupyterLab on a working copy of the notebooks",
        description="Copy the modeheat notebooks into a working folder and start JupyterLab there.",
        epilog=_LAB_EPILOG,
        formatter_class=raw,
    )
    lab.add_argument("--dir", default=DEFAULT_LAB_DIR, help=f"the working folder (default: {DEFAULT_LAB_DIR})")
    lab.add_argument("--port", type=_port_arg, metavar="N", help="port on 127.0.0.1 (default: a free one)")
    lab.add_argument("--no-browser", action="store_true", help="do not open a web browser")
    lab.add_argument(
        "--dry-run", action="store_true", help="print the folder plan, the command and the URL; start nothing"
    )
    lab.set_defaults(run=_lab, usage=lab)

    demo = commands.add_parser(
        "demo",
        help="the whole job headless on the invented demo data: tables, figures, summary",
        description="Tables, figures and a text summary from the invented demo data, without a notebook.",
        epilog=_DEMO_EPILOG,
        formatter_class=raw,
    )
    demo.add_argument("--out", required=True, metavar="DIR", help="output folder (created when missing)")
    demo.add_argument("--overwrite", action="store_true", help="replace existing output files")
    demo.set_defaults(run=_demo, usage=demo)

    lowt = commands.add_parser(
        "lowt",
        help="low-temperature analysis of a C_p file: γ, β and θ_D(0) with errors",
        description="Fit C/T = γ + βT² to the low-temperature end of a heat-capacity file.",
        epilog=_LOWT_EPILOG,
        formatter_class=raw,
    )
    lowt.add_argument("file", metavar="FILE", help="heat-capacity file (T, C, optional sigma)")
    lowt.add_argument("--tmax", type=_positive_float, required=True, metavar="K", help="upper end of the fit window in K")
    lowt.add_argument("--tmin", type=_positive_float, metavar="K", help="lower end of the fit window in K")
    lowt.add_argument(
        "--atoms", type=_positive_float, help="atoms per formula unit (default: the file's '# atoms:' line, else 1)"
    )
    lowt.add_argument("--unit", metavar="UNIT", help="heat-capacity unit when the header gives none, e.g. 'mJ/(mol K)'")
    lowt.add_argument(
        "--terms", type=_terms_arg, default=("gamma", "beta"), metavar="T1,T2",
        help="terms of C/T: gamma (γ), beta (βT², required), delta (δT⁴) (default: gamma,beta)",
    )
    lowt.set_defaults(run=_lowt, check=_check_lowt_args, usage=lowt)

    figure = commands.add_parser(
        "figure",
        help="draw the multi-panel figure from a DOS file and/or a C_p file",
        description="The multi-panel figure (DOS, C/T³, θ_D(T), data and residuals) as PDF, SVG or PNG.",
        epilog=_FIGURE_EPILOG,
        formatter_class=raw,
    )
    figure.add_argument("--dos", metavar="FILE", help="spectrum file (the format of 'modeheat table --help')")
    figure.add_argument("--cp", metavar="FILE", help="heat-capacity file (the format of 'modeheat lowt --help')")
    figure.add_argument("-o", "--output", required=True, metavar="OUT", help="OUT.pdf, OUT.svg, OUT.png, or a stem for all three")
    figure.add_argument("--width", choices=("single", "double"), default="double", help="journal column width (default: double)")
    figure.add_argument("--unit", type=_unit_arg, help="frequency unit of the DOS file when its header gives none")
    figure.add_argument("--cp-unit", metavar="UNIT", help="heat-capacity unit of the C_p file when its header gives none")
    figure.add_argument("--atoms", type=_positive_float, help="atoms per formula unit (default: each file's own)")
    figure.add_argument(
        "--temperatures", type=_temperatures_arg, metavar="SPEC",
        help="temperatures in K of the curves, start:stop:step or a comma list (default: the figure's own)",
    )
    figure.add_argument("--overwrite", action="store_true", help="replace existing output files")
    figure.set_defaults(run=_figure, check=_check_figure_args, usage=figure)

    qh = commands.add_parser(
        "quasi-harmonic",
        help="quasi-harmonic table (V, α_V, B_T, C_p, …) of a volume table and its DOS files",
        description="The quasi-harmonic thermodynamics of spectra at several volumes, as a CSV table "
                    "(and a figure): V(T), B_T, α_V, C_v, C_p, S, G, H and the Grüneisen parameter at a pressure.",
        epilog=_QH_EPILOG,
        formatter_class=raw,
    )
    qh.add_argument("table", metavar="TABLE", help="volume table (volume, static energy, DOS file per row)")
    qh.add_argument("-o", "--output", required=True, metavar="OUT.csv", help="the CSV file to write")
    qh.add_argument("--pressure", type=_pressure_arg, default=0.0, metavar="GPA", help="pressure in GPa (default: 0)")
    qh.add_argument("--eos", choices=QH_EOS_CHOICES, default="auto",
                    help="equation of state fitted at each T: third-order Birch–Murnaghan, Vinet, or 'auto' "
                         "(the better fitting, default)")
    qh.add_argument(
        "--temperatures", type=_temperatures_arg, default=DEFAULT_TEMPERATURES, metavar="SPEC",
        help="temperatures in K: start:stop:step (stop included when on the grid) or a comma list "
             f"(default: {DEFAULT_TEMPERATURES})",
    )
    qh.add_argument("--unit", type=_unit_arg, help="frequency unit of DOS files whose header gives none")
    qh.add_argument("--atoms", type=_positive_float, help="atoms per formula unit of every DOS file")
    qh.add_argument("--figure", metavar="OUT", help="also draw the figure: OUT.pdf, OUT.svg, OUT.png, or a stem for all three")
    qh.add_argument("--cp", metavar="FILE", help="measured C_p drawn on the figure (the format of 'modeheat lowt --help')")
    qh.add_argument("--cp-unit", metavar="UNIT", help="heat-capacity unit of the C_p file when its header gives none")
    qh.add_argument("--overwrite", action="store_true", help="replace existing output files (never the volume table)")
    qh.set_defaults(run=_quasi_harmonic, check=_check_quasi_harmonic_args, usage=qh)
