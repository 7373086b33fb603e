"""The ``modeheat`` command, in-process and as ``python -m modeheat``, and CSV tables.

Atom counts: tests that are not about them pass ``--atoms`` explicitly (the count used
to default to 1); :func:`test_atoms_inferred_per_file` checks the count read from each file.
"""

from __future__ import annotations

import importlib
import os
import stat
import subprocess
import warnings
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from corpus import DATA, cases

import modeheat.cli as cli
import modeheat.batch as batch
from modeheat.cli import main, parse_temperatures
from modeheat import read_spectrum, write_table
from modeheat.errors import InputError
from modeheat.thermo import CAUTION, thermo

GOOD = DATA / "debye_bump.csv"
ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_spectra"
COLUMNS = ["T", "Cv", "S", "U", "F", "theta_D"]
ONE = ["--atoms", "1"]  # debye_bump.csv holds 3.19 modes, no whole atom count: the count is given
# The integrator removes this mark once the backend infers atom counts (read_spectrum(atoms=None)).
thermo_module = importlib.import_module("modeheat.thermo")  # the module; modeheat.thermo is the function


def _run(*args: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    return subprocess.run(
        [sys.executable, "-m", "modeheat", *args], capture_output=True, text=True, env=env, timeout=60
    )


def _stderr_lines(captured) -> list[str]:
    return captured.err.splitlines()


# --- help and usage --------------------------------------------------------------------------
def test_help_exits_0(capsys):
    assert main(["--help"]) == 0
    assert "table" in capsys.readouterr().out
    assert main(["table", "--help"]) == 0
    out = capsys.readouterr().out
    for option in ("--temperatures", "--unit", "--atoms", "--per", "--output", "--overwrite", "--jobs"):
        assert option in out
    assert "applies to every file" in out
    assert "1 some file failed (the others are still\n  written)" in out
    assert "modeheat: error: FILE[, line N]: problem" in out


def test_version(capsys, monkeypatch):
    import modeheat

    # modeheat is not installed here: the version comes from the source tree.
    assert main(["--version"]) == 0
    assert capsys.readouterr().out == f"modeheat {modeheat.__version__}\n"
    from importlib import metadata

    monkeypatch.setattr(metadata, "version", lambda name: "9.8.7" if name == "modeheat" else None)
    assert main(["--version"]) == 0
    assert capsys.readouterr().out == "modeheat 9.8.7\n"


@pytest.mark.parametrize(
    "args",
    [
        [],
        ["table"],
        ["table", "x.txt", "--temperatures", "1:x"],
        ["table", "x.txt", "--temperatures", "10:1:1"],
        ["table", "x.txt", "--temperatures", "1:10:0"],
        ["table", "x.txt", "--temperatures", "10,,20"],
        ["table", "x.txt", "--temperatures", "10,nan"],
        ["table", "x.txt", "--per", "mole"],
        ["table", "x.txt", "--unit", "furlongs"],
        ["table", "x.txt", "--atoms", "0"],
        ["table", "x.txt", "--jobs", "0"],
        ["table", "x.txt", "--columns", "0"],
        ["table", "x.txt", "--low-t", "warm"],
        ["table", "x.txt", "--per", "gram"],
        ["table", "x.txt", "--molar-mass", "60"],
        ["table", "x.txt", "--per", "gram", "--molar-mass", "-1"],
        ["table", "x.txt", "--low-t", "-300"],
        ["table", "x.txt", "--low-t-cutoff", "0"],
        ["frobnicate"],
    ],
)
def test_bad_usage_exits_2(args, capsys):
    assert main(args) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    assert "usage:" in captured.err and "Traceback" not in captured.err


@pytest.mark.parametrize(
    ("spec", "expected"),
    [
        ("1:1000:1", np.arange(1.0, 1001.0)),
        ("0:0.3:0.1", [0.0, 0.1, 0.2, 0.3]),  # stop on the grid despite rounding
        ("0:10:3", [0.0, 3.0, 6.0, 9.0]),  # stop off the grid
        ("10,20,300", [10.0, 20.0, 300.0]),
        ("77", [77.0]),
    ],
)
def test_parse_temperatures(spec, expected):
    values = parse_temperatures(spec)
    np.testing.assert_allclose(values, expected, rtol=1e-12, atol=1e-12)
    assert values[-1] == expected[-1]


def test_parse_temperatures_refuses_huge_grids():
    with pytest.raises(ValueError, match="more than"):
        parse_temperatures("0:1000:1e-6")


# --- one file ---------------------------------------------------------------------------------
def test_single_file_prints_table_and_caution(capsys):
    assert main(["table", str(GOOD), "--temperatures", "10,100,300", *ONE]) == 0
    captured = capsys.readouterr()
    lines = captured.out.splitlines()
    assert len(lines) == 4
    assert lines[0].split()[:3] == ["T", "[K]", "Cv"]
    assert "Cv [J/(mol K)]" in lines[0] and "theta_D [K]" in lines[0]
    assert [float(line.split()[0]) for line in lines[1:]] == [10.0, 100.0, 300.0]
    assert f"modeheat: caution: {CAUTION}" in _stderr_lines(captured)
    assert "warning" not in captured.err
    assert "modeheat: note: values per mole of formula units (atoms per formula unit: 1)" in _stderr_lines(captured)


def test_csv_output_carries_caution_units_and_basis(tmp_path, capsys):
    out = tmp_path / "table.csv"
    args = ["table", str(GOOD), "--temperatures", "0:300:50", "--atoms", "2", "--per", "atom", "-o", str(out)]
    assert main(args) == 0
    # With -o, standard output gets one summary line instead of the table.
    assert capsys.readouterr().out == f"wrote 7 rows from 1 of 1 file to {out}\n"
    text = out.read_text(encoding="utf-8")
    comments = [line for line in text.splitlines() if line.startswith("#")]
    assert f"# caution: {CAUTION}" in comments
    assert "# basis: per mole of atoms" in comments
    assert "# units: T [K]; Cv [J/(mol K)]; S [J/(mol K)]; U [J/mol]; F [J/mol]; theta_D [K]" in comments
    assert "# source: debye_bump.csv" in comments
    table = pd.read_csv(out, comment="#")
    assert list(table.columns) == COLUMNS
    expected = thermo(read_spectrum(GOOD, atoms=2), np.arange(0.0, 301.0, 50.0), per="atom")
    # The CSV keeps 12 significant digits.
    np.testing.assert_allclose(table.to_numpy(), expected.to_numpy(), rtol=1e-11)
    assert not [p for p in tmp_path.iterdir() if p.name != "table.csv"], "no temporary file left"


def test_per_gram_table(tmp_path, capsys):
    out = tmp_path / "table.csv"
    args = ["table", str(GOOD), "--temperatures", "10,300", "--atoms", "2", "--per", "gram", "--molar-mass", "80",
            "-o", str(out)]
    assert main(args) == 0
    capsys.readouterr()
    text = out.read_text(encoding="utf-8")
    assert "# units: T [K]; Cv [J/(g K)]; S [J/(g K)]; U [J/g]; F [J/g]; theta_D [K]" in text
    assert "per gram (molar mass 80 g/mol" in text
    table = pd.read_csv(out, comment="#")
    molar = thermo(read_spectrum(GOOD, atoms=2), [10.0, 300.0])
    # common practice: per gram = per mole of formula units / molar mass
    np.testing.assert_allclose(table["Cv"], molar["Cv"] / 80.0, rtol=1e-11)
    np.testing.assert_allclose(table["theta_D"], molar["theta_D"], rtol=1e-11)


def test_low_temperature_continuation_options(tmp_path, capsys):
    out = tmp_path / "table.csv"
    args = ["table", str(GOOD), "--temperatures", "0,1,300", "--low-t", "250", "-o", str(out), *ONE]
    assert main(args) == 0
    capsys.readouterr()
    table = pd.read_csv(out, comment="#")
    # common practice: θ_D(T → 0) is the Debye temperature of the ω² branch given
    assert table["theta_D"][0] == pytest.approx(250.0, rel=1e-12)
    expected = thermo(read_spectrum(GOOD, atoms=1, low_t=250.0), [0.0, 1.0, 300.0])
    np.testing.assert_allclose(table.to_numpy(), expected.to_numpy(), rtol=1e-11)
    assert main(["table", str(GOOD), "--temperatures", "1", "--low-t", "off", *ONE]) == 0
    assert main(["table", str(GOOD), "--temperatures", "1", "--low-t-cutoff", "1e9", *ONE]) == 1
    assert "low_t_cutoff" in capsys.readouterr().err


# --- several files ------------------------------------------------------------------------------
def _invented_second(tmp_path: Path) -> Path:
    second = tmp_path / "second.txt"
    second.write_text("# invented\nfrequency (meV) total\n0 0\n5 1\n10 4\n15 9\n20 3\n", encoding="utf-8")
    return second


def test_several_files_in_parallel_make_one_tidy_table(tmp_path, capsys, monkeypatch):
    second = _invented_second(tmp_path)
    pools = []

    class RecordingPool(batch.ProcessPoolExecutor):
        def __init__(self, max_workers=None, **kw):
            pools.append(max_workers)
            super().__init__(max_workers=max_workers, **kw)

    monkeypatch.setattr(batch, "ProcessPoolExecutor", RecordingPool)
    out = tmp_path / "both.csv"
    args = ["table", str(GOOD), str(second), "--temperatures", "10,300", "--jobs", "2", "-o", str(out), "--atoms", "2"]
    assert main(args) == 0
    captured = capsys.readouterr()
    assert pools == [2]
    assert captured.out == f"wrote 4 rows from 2 of 2 files to {out}\n"
    # Each source's metadata read back with pandas alone: one column per per-source value.
    table = pd.read_csv(out, comment="#")
    per_source = ["zero_point_energy", "low_t_method", "low_t_cutoff", "low_t_cutoff_unit", "low_t_summary", "atoms_source"]
    assert list(table.columns) == ["source", "atoms", *COLUMNS, *per_source]
    assert set(table["atoms_source"]) == {"given"}
    for path, rows in table.groupby("source", sort=False):
        assert set(rows["low_t_method"]) == {read_spectrum(path, atoms=2).low_t_method}
    assert list(table["source"]) == [str(GOOD)] * 2 + [str(second)] * 2
    assert list(table["atoms"]) == [2.0] * 4  # --atoms applies to every file
    text = out.read_text(encoding="utf-8")
    assert "# basis: per mole of formula units (atoms per formula unit: 2)\n" in text
    assert "; theta_D [K]; zero_point_energy [J/mol]\n" in text
    for path, rows in table.groupby("source", sort=False):
        alone = thermo(read_spectrum(path, atoms=2), [10.0, 300.0])
        np.testing.assert_allclose(rows[COLUMNS].to_numpy(), alone.to_numpy(), rtol=1e-11)
        assert rows["zero_point_energy"].tolist() == pytest.approx([alone.attrs["zero_point_energy"]] * 2, rel=1e-11)
    assert table.groupby("source")["zero_point_energy"].nunique().tolist() == [1, 1]


def test_several_files_on_the_terminal(tmp_path, capsys):
    second = _invented_second(tmp_path)
    assert main(["table", str(GOOD), str(second), "--temperatures", "300", "--jobs", "1", *ONE]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0].split()[:4] == ["source", "atoms", "T", "[K]"]
    assert [line.split()[:2] for line in lines[1:]] == [[str(GOOD), "1"], [str(second), "1"]]


def test_per_source_metadata_is_carried_over_generically(tmp_path, capsys, monkeypatch):
    """Whatever scalar a table's attrs hold per source (here two invented ones) becomes a
    column of the combined table; table-wide entries do not."""
    real = thermo_module.thermo

    def with_extra(source, temperatures, **kw):
        frame = real(source, temperatures, **kw)
        frame.attrs.update(mesh_label=source.name[:4], smearing=0.5, not_a_scalar=[1, 2])
        frame.attrs["units"] = {**frame.attrs["units"], "smearing": "THz"}
        return frame

    monkeypatch.setattr(thermo_module, "thermo", with_extra)
    out = tmp_path / "t.csv"
    second = _invented_second(tmp_path)
    assert main(["table", str(GOOD), str(second), "--temperatures", "300", "--jobs", "1", "-o", str(out), *ONE]) == 0
    capsys.readouterr()
    table = pd.read_csv(out, comment="#")
    assert list(table.columns)[: len(COLUMNS) + 3] == ["source", "atoms", *COLUMNS, "zero_point_energy"]
    assert list(table.columns)[-2:] == ["mesh_label", "smearing"] and "not_a_scalar" not in table.columns
    assert list(table["mesh_label"]) == ["deby", "seco"]
    assert "smearing [THz]" in out.read_text(encoding="utf-8")


def test_progress_only_on_a_terminal(capsys, monkeypatch):
    args = ["table", *[str(GOOD)] * 4, "--temperatures", "300", "--jobs", "1", *ONE]
    assert main(args) == 0
    assert "\r[" not in capsys.readouterr().err
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)
    assert main(args) == 0
    err = capsys.readouterr().err
    assert "\r[1/4] debye_bump.csv" in err and "\r[4/4] debye_bump.csv" in err


def test_one_bad_file_in_a_batch_keeps_the_good_results(tmp_path, capsys):
    # The batch used to fail as a whole; now every good result is written.
    bad = DATA / "bad" / "ragged_row.txt"
    out = tmp_path / "batch.csv"
    assert main(["table", str(GOOD), str(bad), "--jobs", "2", "--temperatures", "10,300", "-o", str(out), *ONE]) == 1
    captured = capsys.readouterr()
    assert captured.out == f"wrote 2 rows from 1 of 2 files to {out}; 1 failed (see the errors above)\n"
    errors = [line for line in _stderr_lines(captured) if line.startswith("modeheat: error:")]
    assert errors == [f"modeheat: error: {bad}, line 5: this row has 3 fields, expected 4 like line 3"]
    table = pd.read_csv(out, comment="#")
    assert list(table["source"]) == [str(GOOD)] * 2

    # Without -o the good table goes to standard output, still with exit status 1.
    assert main(["table", str(bad), str(GOOD), "--jobs", "1", "--temperatures", "300", *ONE]) == 1
    captured = capsys.readouterr()
    assert captured.out.splitlines()[1].split()[0] == str(GOOD)
    assert _stderr_lines(captured)[0].startswith(f"modeheat: error: {bad}, line 5: ")


def _crash_or_compute(job):
    """Stands in for batch.compute_table in worker processes: a worker that dies, a bug, or the real work."""
    name = os.path.basename(job.path)
    if name.startswith("killer"):
        os._exit(7)
    if name.startswith("buggy"):
        raise ZeroDivisionError("simulated bug")
    return _REAL_COMPUTE(job)


_REAL_COMPUTE = batch.compute_table


def test_worker_crash_is_that_files_error(tmp_path, capsys, monkeypatch):
    killer = tmp_path / "killer.csv"
    buggy = tmp_path / "buggy.csv"
    for path in (killer, buggy):
        path.write_text(GOOD.read_text(encoding="utf-8"), encoding="utf-8")
    repaired = DATA / "bad" / "unsorted.txt"  # a good file with a warning, which must survive
    monkeypatch.setattr(batch, "compute_table", _crash_or_compute)
    out = tmp_path / "batch.csv"
    files = [str(GOOD), str(killer), str(repaired), str(buggy)]
    assert main(["table", *files, "--jobs", "2", "--temperatures", "300", "-o", str(out), *ONE]) == 1
    captured = capsys.readouterr()
    assert "Traceback" not in captured.err and "BrokenProcessPool" not in captured.err
    lines = _stderr_lines(captured)
    errors = [line for line in lines if line.startswith("modeheat: error:")]
    assert errors == [
        f"modeheat: error: {killer}: the worker process computing this file stopped abruptly "
        "(killed, out of memory or crashed)",
        f"modeheat: error: {buggy}: internal error while computing this file (ZeroDivisionError: "
        "simulated bug); please report it with the file",
    ]
    assert any(line.startswith("modeheat: warning: ") and "unsorted.txt" in line for line in lines)
    assert captured.out == f"wrote 2 rows from 2 of 4 files to {out}; 2 failed (see the errors above)\n"
    assert list(pd.read_csv(out, comment="#")["source"]) == [str(GOOD), str(repaired)]


def test_a_bug_in_process_is_that_files_error(capsys, monkeypatch):
    def broken(*args, **kwargs):
        raise KeyError("simulated bug")

    monkeypatch.setattr(thermo_module, "thermo", broken)
    assert main(["table", str(GOOD), "--temperatures", "300", *ONE]) == 1
    captured = capsys.readouterr()
    assert captured.out == ""
    assert _stderr_lines(captured) == [
        f"modeheat: error: {GOOD}: internal error while computing this file (KeyError: 'simulated bug'); "
        "please report it with the file"
    ]


# --- no floating-point noise, no silent NaN ---------------------------------------------------------
def _spoiled(column: str, row: int, value: float):
    real = thermo_module.thermo

    def spoil(source, temperatures, **kw):
        frame = real(source, temperatures, **kw)
        np.float64(1e300) * np.float64(1e300)  # overflow noise that must not reach the user
        frame.loc[row, column] = value
        return frame

    return spoil


def test_non_finite_table_is_a_failure(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(thermo_module, "thermo", _spoiled("Cv", 1, np.inf))
    out = tmp_path / "t.csv"
    assert main(["table", str(GOOD), "--temperatures", "10,100,300", "-o", str(out), *ONE]) == 1
    captured = capsys.readouterr()
    assert captured.out == "" and not out.exists()
    assert _stderr_lines(captured) == [
        f"modeheat: error: {GOOD}: not written: the table has non-finite values: Cv is inf at T = 100 K"
    ]
    monkeypatch.setattr(thermo_module, "thermo", _spoiled("theta_D", 0, np.inf))
    assert main(["table", str(GOOD), "--temperatures", "10,100,300", *ONE]) == 1
    assert "theta_D is inf at T = 10 K" in capsys.readouterr().err


def test_missing_debye_temperature_is_written_nan_with_a_warning(capsys, monkeypatch):
    monkeypatch.setattr(thermo_module, "thermo", _spoiled("theta_D", 2, np.nan))
    assert main(["table", str(GOOD), "--temperatures", "10,100,300", *ONE]) == 0
    captured = capsys.readouterr()
    assert captured.out.splitlines()[3].split()[-1] == "nan"
    assert (
        f"modeheat: warning: {GOOD}: no effective Debye temperature exists at 1 of 3 temperature(s) "
        "(the first at T = 300 K): written as nan"
    ) in _stderr_lines(captured)
    assert "overflow" not in captured.err


def test_numpy_warnings_do_not_reach_the_user(capsys, monkeypatch):
    real = thermo_module.thermo

    def noisy(source, temperatures, **kw):
        np.exp(np.float64(1000.0))  # overflow, then harmless
        warnings.warn("a library's own remark", UserWarning)
        return real(source, temperatures, **kw)

    monkeypatch.setattr(thermo_module, "thermo", noisy)
    assert main(["table", str(GOOD), "--temperatures", "300", *ONE]) == 0
    lines = [line for line in _stderr_lines(capsys.readouterr()) if "warning" in line]
    assert lines == [
        f"modeheat: warning: {GOOD}: a library step reported UserWarning 'a library's own remark'; the table "
        "was checked and is finite, but please report the file"
    ]


def test_degenerate_spectrum_is_never_a_silent_bad_table(tmp_path, capsys):
    """The file of the issue: almost no weight near ω = 0 (invented).  It gave an all-NaN
    table with exit 0; now the second row is refused, with the file and line named."""
    path = tmp_path / "degenerate.txt"
    path.write_text("0 0\n1e-200 0\n1 1\n2 4\n", encoding="utf-8")
    for low_t in ([], ["--low-t", "off"]):
        status = main(["table", str(path), "--unit", "THz", "--temperatures", "0,1,300", *low_t, *ONE])
        captured = capsys.readouterr()
        assert status == 1 and captured.out == ""
        assert _stderr_lines(captured)[0].startswith(f"modeheat: error: {path}, line 2: frequency 1e-200 THz")


# --- atom counts --------------------------------------------------------------------------------------
def test_atoms_inferred_per_file(tmp_path, capsys):
    """Each file its own count: zorbium lumide holds 6.00 modes (2 atoms), quellium 3.00
    (1 atom); debye_bump.csv's 3.19 modes fit no whole count and that file fails alone."""
    out = tmp_path / "t.csv"
    files = [str(DEMO / "zorbium_lumide_dos.txt"), str(DEMO / "quellium_dos.txt"), str(GOOD)]
    assert main(["table", *files, "--temperatures", "3000", "--jobs", "1", "-o", str(out)]) == 1
    errors = [line for line in _stderr_lines(capsys.readouterr()) if line.startswith("modeheat: error:")]
    assert len(errors) == 1 and errors[0].startswith(f"modeheat: error: {GOOD}: ")
    table = pd.read_csv(out, comment="#")
    assert list(table["atoms"]) == [2.0, 1.0]
    # common practice: Dulong–Petit, C_v → 3R per mole of atoms far above θ_D (≈ 350 K here;
    # at T = 3000 K the deficit is ≈ (θ/T)²/20 < 1e-3, hence the tolerance)
    np.testing.assert_allclose(table["Cv"] / (3 * 8.314462618), [2.0, 1.0], rtol=2e-3)
    # One file alone: the per-formula values are those of its own count, not halved.
    assert main(["table", files[0], "--temperatures", "3000"]) == 0
    assert "atoms per formula unit: 2" in capsys.readouterr().err


# --- bad input -------------------------------------------------------------------------------------
@pytest.mark.parametrize("case", cases("error"), ids=lambda case: case.file)
def test_bad_file_exits_1_with_one_line(case, capsys):
    assert main(["table", str(case.path), "--temperatures", "300", *ONE]) == 1
    captured = capsys.readouterr()
    assert captured.out == ""
    lines = _stderr_lines(captured)
    assert len(lines) == 1, lines
    where = f"{case.path}, line {case.line}: " if case.line is not None else f"{case.path}: "
    assert lines[0].startswith(f"modeheat: error: {where}")
    assert case.fragment.lower() in lines[0].lower()


@pytest.mark.parametrize("case", cases("warning"), ids=lambda case: case.file)
def test_repairable_file_prints_warning_and_table(case, capsys):
    assert main(["table", str(case.path), "--temperatures", "300", *ONE]) == 0
    captured = capsys.readouterr()
    warning_lines = [line for line in _stderr_lines(captured) if line.startswith("modeheat: warning: ")]
    assert warning_lines and all(case.file in line for line in warning_lines)
    assert len(captured.out.splitlines()) == 2


def test_subprocess_success_and_failure(tmp_path):
    done = _run("table", str(GOOD), "--temperatures", "10,300", *ONE)
    assert done.returncode == 0, done.stderr
    assert len(done.stdout.splitlines()) == 3
    assert "caution" in done.stderr and "Traceback" not in done.stderr

    bad = DATA / "bad" / "text_in_number.txt"
    failed = _run("table", str(bad), *ONE)
    assert failed.returncode == 1
    assert failed.stdout == ""
    assert failed.stderr.splitlines() == [
        f"modeheat: error: {bad}, line 5: field 2 (total) is 'abc', not a number"
    ]

    usage = _run("table", str(GOOD), "--temperatures", "-")
    assert usage.returncode == 2 and "Traceback" not in usage.stderr

    version = _run("--version")
    assert version.returncode == 0 and version.stdout.startswith("modeheat ")


# --- never overwrite what the user had -------------------------------------------------------------
def test_refuses_to_overwrite_unless_asked(tmp_path, capsys):
    out = tmp_path / "table.csv"
    out.write_text("precious\n", encoding="utf-8")
    assert main(["table", str(GOOD), "--temperatures", "300", "-o", str(out), *ONE]) == 1
    captured = capsys.readouterr()
    assert captured.out == ""
    assert len(_stderr_lines(captured)) == 1 and str(out) in captured.err and "--overwrite" in captured.err
    assert out.read_text(encoding="utf-8") == "precious\n"

    assert main(["table", str(GOOD), "--temperatures", "300", "-o", str(out), "--overwrite", *ONE]) == 0
    capsys.readouterr()
    assert out.read_text(encoding="utf-8").startswith("# modeheat thermodynamic table\n")


def _fifo(tmp_path: Path) -> Path:
    fifo = tmp_path / "pipe.csv"
    os.mkfifo(fifo)
    return fifo


def _symlink(tmp_path: Path) -> Path:
    target = tmp_path / "target.csv"
    target.write_text("precious\n", encoding="utf-8")
    link = tmp_path / "link.csv"
    link.symlink_to(target)
    return link


@pytest.mark.parametrize(
    ("make", "problem"),
    [
        (lambda tmp: tmp, "is a folder, not a file"),
        (lambda tmp: Path(os.devnull), "is not a regular file (a device, FIFO or socket); choose a file name"),
        (_fifo, "is not a regular file (a device, FIFO or socket); choose a file name"),
        (_symlink, "is a symbolic link; name its target or another file"),
    ],
    ids=["folder", "devnull", "fifo", "symlink"],
)
@pytest.mark.parametrize("overwrite", [[], ["--overwrite"]], ids=["", "overwrite"])
def test_output_that_is_not_a_regular_file_is_refused_before_any_work(tmp_path, capsys, monkeypatch, make, problem, overwrite):
    monkeypatch.setattr(batch, "iter_outcomes", None)  # would fail if reached
    out = make(tmp_path)
    before = os.lstat(out)
    assert main(["table", str(GOOD), "-o", str(out), *overwrite, *ONE]) == 1
    captured = capsys.readouterr()
    assert captured.out == ""
    assert _stderr_lines(captured) == [f"modeheat: error: {out}: {problem}"]
    after = os.lstat(out)
    assert (after.st_mode, after.st_ino, after.st_rdev) == (before.st_mode, before.st_ino, before.st_rdev)
    if make is _symlink:
        assert (tmp_path / "target.csv").read_text(encoding="utf-8") == "precious\n"


def test_missing_output_folder_is_refused_before_any_work(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(batch, "iter_outcomes", None)  # would fail if reached
    out = tmp_path / "nowhere" / "t.csv"
    assert main(["table", str(GOOD), "-o", str(out), *ONE]) == 1
    assert capsys.readouterr().err.splitlines() == [
        f"modeheat: error: {out}: the folder {str(out.parent)!r} does not exist"
    ]


def test_never_overwrites_an_input_file(tmp_path, capsys):
    spectrum = tmp_path / "spectrum.csv"
    original = GOOD.read_text(encoding="utf-8")
    spectrum.write_text(original, encoding="utf-8")
    assert main(["table", str(spectrum), "-o", str(spectrum), "--overwrite", *ONE]) == 1
    assert "is one of the input files" in capsys.readouterr().err
    assert spectrum.read_text(encoding="utf-8") == original


def test_write_table_directly(tmp_path):
    frame = thermo(read_spectrum(GOOD, atoms=1), [10.0, 300.0])
    path = tmp_path / "t.csv"
    assert write_table(frame, path) == path
    with pytest.raises(InputError, match="the file exists") as info:
        write_table(frame, path)
    assert str(path) in str(info.value)
    write_table(frame.iloc[:1], path, overwrite=True)
    assert len(pd.read_csv(path, comment="#")) == 1
    with pytest.raises(InputError, match="does not exist"):
        write_table(frame, tmp_path / "missing" / "t.csv")
    with pytest.raises(InputError, match="no units or basis"):
        write_table(pd.DataFrame({"T": [1.0]}), tmp_path / "bare.csv")
    # Renaming into place would replace the device itself (as root): refused, even with overwrite.
    with pytest.raises(InputError, match="not a regular file"):
        write_table(frame, os.devnull, overwrite=True)
    with pytest.raises(InputError, match="is a folder"):
        write_table(frame, tmp_path, overwrite=True)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["t.csv"]
    assert stat.S_ISCHR(os.stat(os.devnull).st_mode)


# --- start-up: import what a command needs when it needs it ----------------------------------------
_HEAVY = ("scipy.optimize", "pandas", "modeheat.fitting", "modeheat.lattice")


def _modules_after(code: str) -> set[str]:
    """The heavy modules in sys.modules after running `code` in a fresh interpreter."""
    probe = f"{code}\nimport sys\nprint(' '.join(m for m in {_HEAVY!r} if m in sys.modules))"
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, cwd=ROOT, timeout=60)
    assert done.returncode == 0, done.stderr
    return set(done.stdout.split())


def test_import_modeheat_loads_no_fitting_pandas_or_optimizer():
    # A structural check, not a timing: the start-up time itself is in tests/benchmarks/bench_startup.py.
    assert _modules_after("import modeheat") == set()
    assert _modules_after("import modeheat; modeheat.Spectrum") == set()


def test_help_loads_no_backend():
    code = "import contextlib, io\nfrom modeheat.cli import main\nwith contextlib.redirect_stdout(io.StringIO()):\n    main(['table', '--help'])"
    assert _modules_after(code) == set()


def test_lazy_public_names():
    import modeheat

    assert set(modeheat.__all__) <= set(dir(modeheat))
    for name in modeheat.__all__:
        assert getattr(modeheat, name) is not None, name
    # The submodule modeheat.thermo must not hide the function of the same name.
    import modeheat.thermo  # noqa: F401

    assert callable(modeheat.thermo) and modeheat.thermo.__module__ == "modeheat.thermo"
    with pytest.raises(AttributeError, match="no attribute 'nonesuch'"):
        modeheat.nonesuch


def test_batch_file_names_with_hash_read_back(tmp_path, capsys):
    odd = tmp_path / "run#2, final.csv"
    odd.write_text(GOOD.read_text(encoding="utf-8"), encoding="utf-8")
    out = tmp_path / "t.csv"
    assert main(["table", str(GOOD), str(odd), "--temperatures", "10,300", "-o", str(out), "--jobs", "1", *ONE]) == 0
    capsys.readouterr()
    table = pd.read_csv(out, comment="#")
    assert list(table["source"]) == [str(GOOD)] * 2 + [str(odd)] * 2
    assert list(table["T"]) == [10.0, 300.0] * 2
    assert table["theta_D"].dtype == float
