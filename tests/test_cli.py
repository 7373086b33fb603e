"""The ``modeheat`` command, in-process and as ``python -m modeheat``, and CSV tables."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from corpus import DATA, cases

import modeheat.cli as cli
from modeheat.cli import main, parse_temperatures
from modeheat.data import read_spectrum, write_table
from modeheat.errors import InputError
from modeheat.thermo import CAUTION, thermo

GOOD = DATA / "debye_bump.csv"
ROOT = Path(__file__).resolve().parents[1]
COLUMNS = ["T", "Cv", "S", "U", "F", "theta_D"]


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
    assert main(["table", str(GOOD), "--temperatures", "10,100,300"]) == 0
    captured = capsys.readouterr()
    lines = captured.out.splitlines()
    assert len(lines) == 4
    assert lines[0].split()[:3] == ["T", "[K]", "Cv"]
    assert "Cv [J/(mol K)]" in lines[0] and "theta_D [K]" in lines[0]
    assert [float(line.split()[0]) for line in lines[1:]] == [10.0, 100.0, 300.0]
    assert f"modeheat: caution: {CAUTION}" in _stderr_lines(captured)
    assert "warning" not in captured.err


def test_csv_output_carries_caution_units_and_basis(tmp_path, capsys):
    out = tmp_path / "table.csv"
    args = ["table", str(GOOD), "--temperatures", "0:300:50", "--atoms", "2", "--per", "atom", "-o", str(out)]
    assert main(args) == 0
    capsys.readouterr()
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
    args = ["table", str(GOOD), "--temperatures", "0,1,300", "--low-t", "250", "-o", str(out)]
    assert main(args) == 0
    capsys.readouterr()
    table = pd.read_csv(out, comment="#")
    # common practice: θ_D(T → 0) is the Debye temperature of the ω² branch given
    assert table["theta_D"][0] == pytest.approx(250.0, rel=1e-12)
    expected = thermo(read_spectrum(GOOD, atoms=1, low_t=250.0), [0.0, 1.0, 300.0])
    np.testing.assert_allclose(table.to_numpy(), expected.to_numpy(), rtol=1e-11)
    assert main(["table", str(GOOD), "--temperatures", "1", "--low-t", "off"]) == 0
    assert main(["table", str(GOOD), "--temperatures", "1", "--low-t-cutoff", "1e9"]) == 1
    assert "low_t_cutoff" in capsys.readouterr().err


# --- several files ------------------------------------------------------------------------------
def test_several_files_in_parallel_make_one_tidy_table(tmp_path, capsys, monkeypatch):
    second = tmp_path / "second.txt"
    second.write_text("# invented\nfrequency (meV) total\n0 0\n5 1\n10 4\n15 9\n20 3\n", encoding="utf-8")
    pools = []

    class RecordingPool(cli.ProcessPoolExecutor):
        def __init__(self, max_workers=None, **kw):
            pools.append(max_workers)
            super().__init__(max_workers=max_workers, **kw)

    monkeypatch.setattr(cli, "ProcessPoolExecutor", RecordingPool)
    out = tmp_path / "both.csv"
    args = ["table", str(GOOD), str(second), "--temperatures", "10,300", "--jobs", "2", "-o", str(out)]
    assert main(args) == 0
    captured = capsys.readouterr()
    assert pools == [2]
    header = captured.out.splitlines()[0].split()
    assert header[0] == "source"
    table = pd.read_csv(out, comment="#")
    assert list(table.columns) == ["source", *COLUMNS]
    assert list(table["source"]) == [str(GOOD)] * 2 + [str(second)] * 2
    for path in (GOOD, second):
        alone = thermo(read_spectrum(path, atoms=1), [10.0, 300.0])
        part = table[table["source"] == str(path)][COLUMNS].to_numpy()
        np.testing.assert_allclose(part, alone.to_numpy(), rtol=1e-11)


def test_progress_only_on_a_terminal(capsys, monkeypatch):
    args = ["table", *[str(GOOD)] * 4, "--temperatures", "300", "--jobs", "1"]
    assert main(args) == 0
    assert "\r[" not in capsys.readouterr().err
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)
    assert main(args) == 0
    err = capsys.readouterr().err
    assert "\r[1/4] debye_bump.csv" in err and "\r[4/4] debye_bump.csv" in err


def test_one_bad_file_in_a_batch_fails_the_batch(tmp_path, capsys):
    bad = DATA / "bad" / "ragged_row.txt"
    out = tmp_path / "never.csv"
    assert main(["table", str(GOOD), str(bad), "--jobs", "2", "-o", str(out)]) == 1
    captured = capsys.readouterr()
    assert captured.out == ""
    assert _stderr_lines(captured) == [f"modeheat: error: {bad}, line 5: this row has 3 fields, expected 4 like line 3"]
    assert not out.exists()


# --- bad input -------------------------------------------------------------------------------------
@pytest.mark.parametrize("case", cases("error"), ids=lambda case: case.file)
def test_bad_file_exits_1_with_one_line(case, capsys):
    assert main(["table", str(case.path), "--temperatures", "300"]) == 1
    captured = capsys.readouterr()
    assert captured.out == ""
    lines = _stderr_lines(captured)
    assert len(lines) == 1, lines
    where = f"{case.path}, line {case.line}: " if case.line is not None else f"{case.path}: "
    assert lines[0].startswith(f"modeheat: error: {where}")
    assert case.fragment.lower() in lines[0].lower()


@pytest.mark.parametrize("case", cases("warning"), ids=lambda case: case.file)
def test_repairable_file_prints_warning_and_table(case, capsys):
    assert main(["table", str(case.path), "--temperatures", "300"]) == 0
    captured = capsys.readouterr()
    warning_lines = [line for line in _stderr_lines(captured) if line.startswith("modeheat: warning: ")]
    assert warning_lines and all(case.file in line for line in warning_lines)
    assert len(captured.out.splitlines()) == 2


def test_subprocess_success_and_failure(tmp_path):
    done = _run("table", str(GOOD), "--temperatures", "10,300")
    assert done.returncode == 0, done.stderr
    assert len(done.stdout.splitlines()) == 3
    assert "caution" in done.stderr and "Traceback" not in done.stderr

    bad = DATA / "bad" / "text_in_number.txt"
    failed = _run("table", str(bad))
    assert failed.returncode == 1
    assert failed.stdout == ""
    assert failed.stderr.splitlines() == [
        f"modeheat: error: {bad}, line 5: field 2 (total) is 'abc', not a number"
    ]

    usage = _run("table", str(GOOD), "--temperatures", "-")
    assert usage.returncode == 2 and "Traceback" not in usage.stderr


# --- never overwrite what the user had -------------------------------------------------------------
def test_refuses_to_overwrite_unless_asked(tmp_path, capsys):
    out = tmp_path / "table.csv"
    out.write_text("precious\n", encoding="utf-8")
    assert main(["table", str(GOOD), "--temperatures", "300", "-o", str(out)]) == 1
    captured = capsys.readouterr()
    assert captured.out == ""
    assert len(_stderr_lines(captured)) == 1 and str(out) in captured.err and "--overwrite" in captured.err
    assert out.read_text(encoding="utf-8") == "precious\n"

    assert main(["table", str(GOOD), "--temperatures", "300", "-o", str(out), "--overwrite"]) == 0
    capsys.readouterr()
    assert out.read_text(encoding="utf-8").startswith("# modeheat thermodynamic table\n")


def test_missing_output_folder_is_refused_before_any_work(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(cli, "_compute_all", None)  # would fail if reached
    out = tmp_path / "nowhere" / "t.csv"
    assert main(["table", str(GOOD), "-o", str(out)]) == 1
    assert capsys.readouterr().err.splitlines() == [
        f"modeheat: error: {out}: the folder {str(out.parent)!r} does not exist"
    ]


def test_never_overwrites_an_input_file(tmp_path, capsys):
    spectrum = tmp_path / "spectrum.csv"
    original = GOOD.read_text(encoding="utf-8")
    spectrum.write_text(original, encoding="utf-8")
    assert main(["table", str(spectrum), "-o", str(spectrum), "--overwrite"]) == 1
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
    assert sorted(p.name for p in tmp_path.iterdir()) == ["t.csv"]
