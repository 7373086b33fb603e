"""``modeheat quasi-harmonic``: a volume table and its DOS files → the quasi-harmonic CSV (and figure).

The reference of the written numbers is the backend, :func:`modeheat.quasi_harmonic`, on
the same invented volume set built in memory from the same arrays
(tests/volume_set_shapes.py); the CSV keeps 12 significant digits, hence rtol 1e-11.
The files are written by hand in the contract's volume-table format; the tests that read
them need ``modeheat.io.volume_sets`` and are skipped without it.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import modeheat as mh
from modeheat.cli import main
from volume_set_shapes import volume_set, write_volume_files

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_spectra"
CSV_DIGITS = 1e-11  # write_table keeps 12 significant digits


@pytest.fixture
def reader():
    return pytest.importorskip("modeheat.io.volume_sets")


def _files(tmp_path: Path, **kw) -> Path:
    table, _ = write_volume_files(tmp_path, **kw)
    return table


def _read_csv(path: Path) -> pd.DataFrame:
    return pd.read_csv(path, comment="#")


# --- help and usage ----------------------------------------------------------------------------------
def test_help_has_the_format_examples_and_exit_codes(capsys):
    assert main(["quasi-harmonic", "--help"]) == 0
    out = capsys.readouterr().out
    assert "examples:" in out and "modeheat quasi-harmonic" in out.split("examples:")[1]
    assert "exit status:" in out and "2 bad usage" in out
    for option in ("--pressure", "--eos", "--temperatures", "--output", "--overwrite", "--figure"):
        assert option in out
    assert "volume unit" in out and "energy unit" in out
    assert main(["--help"]) == 0
    assert "    quasi-harmonic " in capsys.readouterr().out


@pytest.mark.parametrize(
    "args",
    [
        ["quasi-harmonic", "v.txt"],  # -o is required
        ["quasi-harmonic", "v.txt", "-o", "q.csv", "--eos", "cubic"],
        ["quasi-harmonic", "v.txt", "-o", "q.csv", "--pressure", "high"],
        ["quasi-harmonic", "v.txt", "-o", "q.csv", "--pressure", "nan"],
        ["quasi-harmonic", "v.txt", "-o", "q.csv", "--temperatures", "300:10:1"],
        ["quasi-harmonic", "v.txt", "-o", "q.csv", "--figure", "f.jpg"],
        ["quasi-harmonic", "v.txt", "-o", "q.csv", "--cp", "cp.txt"],  # data only go on a figure
    ],
)
def test_bad_usage_exits_2(args, capsys):
    assert main(args) == 2
    assert "usage:" in capsys.readouterr().err


# --- refusals before any work (no reader needed) -------------------------------------------------------
def test_refuses_an_existing_output_before_reading(tmp_path, capsys):
    out = tmp_path / "qh.csv"
    out.write_text("mine")
    assert main(["quasi-harmonic", str(tmp_path / "missing.txt"), "-o", str(out)]) == 1
    err = capsys.readouterr().err.splitlines()
    assert len(err) == 1 and err[0].startswith(f"modeheat: error: {out}: the output file exists")
    assert out.read_text() == "mine"


def test_never_overwrites_the_volume_table(tmp_path, capsys):
    table = tmp_path / "v.txt"
    table.write_text("the user's table")
    assert main(["quasi-harmonic", str(table), "-o", str(table), "--overwrite"]) == 1
    assert "one of the input files" in capsys.readouterr().err
    assert table.read_text() == "the user's table"


def test_refuses_an_existing_figure_before_reading(tmp_path, capsys):
    (tmp_path / "fig.svg").write_text("mine")
    assert main(["quasi-harmonic", "nonexistent.txt", "-o", str(tmp_path / "q.csv"),
                 "--figure", str(tmp_path / "fig")]) == 1
    assert "fig.svg: exists" in capsys.readouterr().err
    assert (tmp_path / "fig.svg").read_text() == "mine" and not (tmp_path / "q.csv").exists()
    assert main(["quasi-harmonic", "x.txt", "-o", str(tmp_path / "q.csv"), "--figure", str(tmp_path / "no" / "f.pdf")]) == 1
    assert "does not exist" in capsys.readouterr().err


# --- from files (needs the volume-set reader) ----------------------------------------------------------
def test_writes_the_backends_table_with_the_caution(tmp_path, capsys, reader):
    table = _files(tmp_path)
    out = tmp_path / "qh.csv"
    assert main(["quasi-harmonic", str(table), "-o", str(out), "--temperatures", "10:800:10"]) == 0
    captured = capsys.readouterr()
    assert captured.out.startswith(f"wrote 80 rows to {out}")
    written = _read_csv(out)
    T = np.arange(10.0, 801.0, 10.0)
    want = mh.quasi_harmonic(volume_set(), T)
    assert list(written.columns) == list(want.columns)
    # reference: the backend's quasi_harmonic on the same set built in memory
    for column in ("T", "V", "B_T", "alpha_V", "Cv", "Cp", "S", "G", "H", "gamma"):
        np.testing.assert_allclose(written[column], want[column], rtol=CSV_DIGITS, err_msg=column)
    assert list(written["extrapolated"]) == list(want["extrapolated"])
    head = [line for line in out.read_text(encoding="utf-8").splitlines() if line.startswith("#")]
    assert f"# caution: {mh.CAUTION}" in head
    assert any(line.startswith("# units: T [K]; V [A3 per formula unit]; B_T [GPa]; alpha_V [1/K]") for line in head)
    assert any("quasi-harmonic, birch-murnaghan equation of state, 0 GPa" in line for line in head)
    err = captured.err
    assert "modeheat: note: 6 volumes, 1 atom(s) per formula unit; equation of state: birch-murnaghan" in err
    assert "modeheat: caution:" in err and "extrapolated" not in err


def test_pressure_and_equation_of_state_are_passed_on(tmp_path, capsys, reader):
    table = _files(tmp_path)
    out = tmp_path / "qh5.csv"
    assert main(["quasi-harmonic", str(table), "-o", str(out), "--pressure", "5", "--eos", "vinet",
                 "--temperatures", "50,300,600"]) == 0
    want = mh.quasi_harmonic(volume_set(), [50.0, 300.0, 600.0], pressure=5.0, eos="vinet")
    written = _read_csv(out)
    # reference: the backend at 5 GPa with the Vinet form
    np.testing.assert_allclose(written["V"], want["V"], rtol=CSV_DIGITS)
    np.testing.assert_allclose(written["Cp"], want["Cp"], rtol=CSV_DIGITS)
    assert "equation of state: vinet" in capsys.readouterr().err
    assert written["V"].iloc[0] < mh.quasi_harmonic(volume_set(), [50.0])["V"].iloc[0]  # compressed (common practice)


def test_extrapolation_is_reported(tmp_path, capsys, reader):
    table = _files(tmp_path, volumes=np.linspace(15.0, 16.6, 6))
    assert main(["quasi-harmonic", str(table), "-o", str(tmp_path / "q.csv")]) == 0
    err = capsys.readouterr().err
    assert "modeheat: warning: from T = " in err and "V(T) is extrapolated beyond the sampled volumes from T = " in err
    written = _read_csv(tmp_path / "q.csv")
    assert written["extrapolated"].iloc[-1] and not written["extrapolated"].iloc[0]


def test_figure_with_data(tmp_path, capsys, reader):
    table = _files(tmp_path)
    assert main(["quasi-harmonic", str(table), "-o", str(tmp_path / "q.csv"), "--figure", str(tmp_path / "fig"),
                 "--cp", str(DEMO / "quellium_cp.txt")]) == 0
    assert "the figure to" in capsys.readouterr().out
    for fmt in ("pdf", "svg", "png"):
        assert (tmp_path / f"fig.{fmt}").stat().st_size > 0
    assert (tmp_path / "fig.pdf").read_bytes()[:4] == b"%PDF"


def test_never_overwrites_without_permission(tmp_path, capsys, reader):
    table = _files(tmp_path)
    out = tmp_path / "q.csv"
    assert main(["quasi-harmonic", str(table), "-o", str(out), "--temperatures", "100,200"]) == 0
    first = out.read_text(encoding="utf-8")
    assert main(["quasi-harmonic", str(table), "-o", str(out), "--temperatures", "100,300"]) == 1
    assert "exists" in capsys.readouterr().err and out.read_text(encoding="utf-8") == first
    assert main(["quasi-harmonic", str(table), "-o", str(out), "--temperatures", "100,300", "--overwrite"]) == 0
    assert list(_read_csv(out)["T"]) == [100.0, 300.0]


def test_a_missing_dos_file_is_one_line_exit_1(tmp_path, capsys, reader):
    table = _files(tmp_path, missing=3)
    out = tmp_path / "q.csv"
    assert main(["quasi-harmonic", str(table), "-o", str(out)]) == 1
    err = capsys.readouterr().err.splitlines()
    assert len(err) == 1 and err[0].startswith(f"modeheat: error: {table}")
    assert "invented_qh_v3.txt" in err[0] and "Traceback" not in err[0]
    assert not out.exists()


def test_too_few_volumes_is_one_line_exit_1(tmp_path, capsys, reader):
    table = _files(tmp_path, volumes=np.linspace(15.0, 16.0, 3))
    assert main(["quasi-harmonic", str(table), "-o", str(tmp_path / "q.csv")]) == 1
    err = capsys.readouterr().err.splitlines()
    assert len(err) == 1 and str(table) in err[0] and "at least 4 volumes" in err[0]


def test_no_minimum_anywhere_writes_nothing(tmp_path, capsys, reader):
    table = _files(tmp_path)
    # a tension far beyond the invented solid's strength: F + PV has no minimum at any T
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        code = main(["quasi-harmonic", str(table), "-o", str(tmp_path / "q.csv"), "--pressure", "-500",
                     "--temperatures", "100,200"])
    assert code == 1
    err = capsys.readouterr().err.splitlines()
    assert err[-1].startswith(f"modeheat: error: {table}") and "no minimum" in err[-1]
    assert not (tmp_path / "q.csv").exists()
