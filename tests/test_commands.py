"""The commands around the notebooks and figures: lab, demo, lowt and figure."""

from __future__ import annotations

import importlib.util
import json
import os
import signal
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import scipy.constants as sc

import modeheat.commands as commands
from modeheat.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_spectra"


def _sync_module():
    spec = importlib.util.spec_from_file_location("notebooks_sync", ROOT / "notebooks" / "sync.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _notebook(path: Path, text: str) -> Path:
    path.write_text(json.dumps({"cells": [{"cell_type": "markdown", "metadata": {}, "source": text}],
                                "metadata": {}, "nbformat": 4, "nbformat_minor": 5}))
    return path


# --- help and usage -----------------------------------------------------------------------------
@pytest.mark.parametrize("command", ["lab", "demo", "lowt", "figure"])
def test_every_command_has_help_with_examples_and_exit_codes(command, capsys):
    assert main([command, "--help"]) == 0
    out = capsys.readouterr().out
    assert "examples:" in out and f"modeheat {command}" in out.split("examples:")[1]
    assert "exit status:" in out and "2 bad usage" in out


def test_top_level_help_lists_the_commands(capsys):
    assert main(["--help"]) == 0
    out = capsys.readouterr().out
    for command in ("table", "lab", "demo", "lowt", "figure"):
        assert f"    {command} " in out
    assert "examples:" in out


@pytest.mark.parametrize(
    "args",
    [
        ["demo"],  # --out is required
        ["lowt", "cp.txt"],  # --tmax is required
        ["lowt", "cp.txt", "--tmax", "-3"],
        ["lowt", "cp.txt", "--tmax", "5", "--terms", "gamma"],  # β is needed for θ_D(0)
        ["lowt", "cp.txt", "--tmax", "5", "--terms", "beta,beta"],
        ["lowt", "cp.txt", "--tmax", "5", "--tmin", "6"],
        ["figure", "-o", "x.pdf"],  # neither --dos nor --cp
        ["figure", "--dos", "d.txt", "-o", "x.jpg"],
        ["figure", "--dos", "d.txt", "-o", "x.pdf", "--width", "triple"],
        ["lab", "--port", "70000"],
    ],
)
def test_bad_usage_exits_2(args, capsys):
    assert main(args) == 2
    assert "usage:" in capsys.readouterr().err


def test_help_loads_no_backend():
    code = (
        "import contextlib, io\nfrom modeheat.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        "    [main([c, '--help']) for c in ('lab', 'demo', 'lowt', 'figure', 'quasi-harmonic')]\n"
        "import sys\nprint(' '.join(m for m in ('pandas', 'scipy.optimize', 'matplotlib', 'ipywidgets',"
        " 'modeheat.quasiharmonic', 'modeheat.batch', 'pyarrow', 'distributed') if m in sys.modules))"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=60)
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == []


# --- notebooks shipped with the package ---------------------------------------------------------------
def test_packaged_notebooks_are_the_canonical_ones():
    source = {p.name: p.read_bytes() for p in (ROOT / "notebooks").glob("*.ipynb")}
    packaged = {p.name: p.read_bytes() for p in (ROOT / "modeheat" / "notebooks").glob("*.ipynb")}
    assert packaged == source, "run: python notebooks/sync.py"


def test_sync_copies_updates_and_removes(tmp_path):
    sync = _sync_module().sync
    source, packaged = tmp_path / "src", tmp_path / "pkg"
    source.mkdir()
    _notebook(source / "a.ipynb", "one")
    _notebook(source / "b.ipynb", "two")
    assert sync(source, packaged) == ["copied a.ipynb", "copied b.ipynb"]
    _notebook(source / "a.ipynb", "one, edited")
    (source / "b.ipynb").unlink()
    assert sync(source, packaged) == ["copied a.ipynb", "removed b.ipynb"]
    assert (packaged / "a.ipynb").read_bytes() == (source / "a.ipynb").read_bytes()
    assert sync(source, packaged) == []


def test_shipped_notebooks_are_the_package_folder():
    names = [n.name for n in commands.shipped_notebooks()]
    assert names == sorted(p.name for p in (ROOT / "modeheat" / "notebooks").glob("*.ipynb"))


# --- lab ---------------------------------------------------------------------------------------------
def test_prepare_copies_and_never_replaces_an_edited_copy(tmp_path):
    originals = tmp_path / "installed"
    originals.mkdir()
    a = _notebook(originals / "a.ipynb", "original a")
    b = _notebook(originals / "b.ipynb", "original b")
    before = {p: p.read_bytes() for p in (a, b)}
    work = tmp_path / "work" / "notebooks"
    copied, kept = commands.prepare_notebooks(work, [a, b])
    assert [p.name for p in copied] == ["a.ipynb", "b.ipynb"] and kept == []
    assert (work / "a.ipynb").read_bytes() == before[a]
    _notebook(work / "a.ipynb", "the user's edits")
    edited = (work / "a.ipynb").read_bytes()
    (work / "b.ipynb").unlink()
    copied, kept = commands.prepare_notebooks(work, [a, b])
    assert [p.name for p in copied] == ["b.ipynb"] and [p.name for p in kept] == ["a.ipynb"]
    assert (work / "a.ipynb").read_bytes() == edited
    assert {p: p.read_bytes() for p in (a, b)} == before  # the originals are only read


def test_prepare_refuses_a_file_as_folder(tmp_path):
    target = tmp_path / "not_a_folder"
    target.write_text("x")
    with pytest.raises(commands.InputError, match="not a folder"):
        commands.prepare_notebooks(target, [])


def test_lab_command_line_binds_localhost_with_the_token(tmp_path):
    line = commands.lab_command_line(tmp_path, 8123, "tok", browser=False)
    assert line[:3] == [sys.executable, "-m", "jupyterlab"]
    assert "--ServerApp.ip=127.0.0.1" in line and "--ServerApp.port=8123" in line
    assert "--ServerApp.port_retries=0" in line and "--IdentityProvider.token=tok" in line
    assert f"--ServerApp.root_dir={tmp_path}" in line and "--no-browser" in line
    assert "--no-browser" not in commands.lab_command_line(tmp_path, 8123, "tok", browser=True)
    assert commands.lab_url(8123, "tok") == "http://127.0.0.1:8123/lab?token=tok"


def test_lab_dry_run_prints_command_and_url_and_touches_nothing(tmp_path, capsys):
    folder = tmp_path / "nb"
    assert main(["lab", "--dir", str(folder), "--port", "8765", "--no-browser", "--dry-run"]) == 0
    out = capsys.readouterr().out
    assert "url: http://127.0.0.1:8765/lab?token=" in out
    token = out.split("token=")[1].split()[0]
    assert len(token) >= 32  # 24 random bytes in hex
    assert f"--IdentityProvider.token={token}" in out and "--ServerApp.ip=127.0.0.1" in out
    assert not folder.exists()
    assert main(["lab", "--dry-run"]) == 0
    second = capsys.readouterr().out.split("token=")[1].split()[0]
    assert second != token  # a new token each time


def test_lab_without_jupyterlab_is_one_line_exit_1(tmp_path, capsys, monkeypatch):
    real = importlib.util.find_spec
    monkeypatch.setattr(importlib.util, "find_spec", lambda name, *a: None if name == "jupyterlab" else real(name, *a))
    assert main(["lab", "--dir", str(tmp_path / "nb")]) == 1
    err = capsys.readouterr().err.splitlines()
    assert err == ["modeheat: error: JupyterLab is not installed; pip install 'modeheat[lab]'"]


@pytest.mark.skipif(importlib.util.find_spec("jupyterlab") is None, reason="needs JupyterLab")
def test_lab_really_starts_and_stops_by_pid(tmp_path):
    # One real start, a few seconds: the server answers /api/status and stops with the command.
    private = {k: str(tmp_path / k.lower()) for k in (
        "JUPYTER_CONFIG_DIR", "JUPYTER_RUNTIME_DIR", "JUPYTERLAB_SETTINGS_DIR", "JUPYTERLAB_WORKSPACES_DIR")}
    env = dict(os.environ, PYTHONPATH=str(ROOT), **private)
    folder = tmp_path / "nb"
    process = subprocess.Popen(
        [sys.executable, "-m", "modeheat", "lab", "--dir", str(folder), "--no-browser"],
        stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True, env=env,
    )
    try:
        line = process.stdout.readline()
        url = line.split(": ", 1)[1].strip()
        base, token = url.split("/lab?token=")
        assert base.startswith("http://127.0.0.1:")
        status = None
        deadline = time.monotonic() + 60
        while time.monotonic() < deadline and status is None:
            try:
                with urllib.request.urlopen(f"{base}/api/status?token={token}", timeout=2) as answer:
                    status = json.load(answer)
            except OSError:
                time.sleep(0.3)
        assert status is not None and "started" in status
        with pytest.raises(OSError):  # the token is required
            urllib.request.urlopen(f"{base}/api/status", timeout=2)
        assert folder.is_dir()
    finally:
        os.kill(process.pid, signal.SIGTERM)
        assert process.wait(timeout=30) == 0
    with pytest.raises(OSError):  # the server went with it
        urllib.request.urlopen(f"{base}/api/status?token={token}", timeout=2)


# --- lowt --------------------------------------------------------------------------------------------
def _synthetic_cp(tmp_path: Path, gamma: float, theta: float, atoms: int) -> Path:
    # C = γT + (12π⁴/5)·atoms·R·(T/θ)³, the Debye T³ law (common practice), with R from scipy.constants.
    T = np.linspace(1.0, 6.0, 26)
    C = gamma * T + 12 * np.pi**4 / 5 * atoms * sc.R * (T / theta) ** 3
    path = tmp_path / "cp.txt"
    rows = "".join(f"{t:.6f}  {c:.12e}\n" for t, c in zip(T, 1e3 * C))
    path.write_text("T (K)  C (mJ/(mol K))\n" + rows)
    return path


def test_lowt_recovers_gamma_and_theta(tmp_path, capsys):
    path = _synthetic_cp(tmp_path, gamma=1.2e-3, theta=250.0, atoms=2)
    assert main(["lowt", str(path), "--tmax", "6", "--atoms", "2"]) == 0
    out = capsys.readouterr().out
    lines = {line.split("=")[0].strip(): line for line in out.splitlines() if "=" in line}
    assert float(lines["γ"].split("=")[1].split("±")[0]) == pytest.approx(1.2e-3, rel=1e-6)
    assert float(lines["θ_D(0)"].split("=")[1].split("±")[0]) == pytest.approx(250.0, rel=1e-6)
    assert "caution:" in out


def test_lowt_unit_and_delta(tmp_path, capsys):
    T = np.linspace(1.0, 6.0, 26)
    C = 2e-3 * T + 12 * np.pi**4 / 5 * sc.R * (T / 300.0) ** 3  # Debye T³ law (common practice)
    path = tmp_path / "bare.txt"
    np.savetxt(path, np.column_stack([T, 1e3 * C]))
    assert main(["lowt", str(path), "--tmax", "6", "--unit", "mJ/(mol K)", "--terms", "gamma,beta,delta"]) == 0
    out = capsys.readouterr().out
    assert "δ   =" in out and "θ_D(0) = 300 ±" in out


def test_lowt_bad_input_is_one_line_exit_1(tmp_path, capsys):
    path = _synthetic_cp(tmp_path, gamma=1e-3, theta=250.0, atoms=1)
    assert main(["lowt", str(path), "--tmax", "0.5"]) == 1
    err = capsys.readouterr().err.splitlines()
    assert len(err) == 1 and err[0].startswith(f"modeheat: error: {path}: only 0 point(s)")
    assert main(["lowt", str(tmp_path / "missing.txt"), "--tmax", "5"]) == 1
    assert capsys.readouterr().err.count("\n") == 1


# --- demo and figure ---------------------------------------------------------------------------------
def test_demo_refuses_existing_files_before_any_work(tmp_path, capsys, monkeypatch):
    out = tmp_path / "results"
    out.mkdir()
    (out / "summary.txt").write_text("mine")
    monkeypatch.setattr(commands, "_demo_steps", lambda *a: pytest.fail("work started"))
    assert main(["demo", "--out", str(out)]) == 1
    assert "summary.txt: exists; choose another name or pass --overwrite" in capsys.readouterr().err
    assert (out / "summary.txt").read_text() == "mine"
    (tmp_path / "file").write_text("x")
    assert main(["demo", "--out", str(tmp_path / "file")]) == 1


def test_demo_outputs_names():
    names = [p.name for p in commands.demo_outputs("x")]
    assert names[:4] == ["zorbium_lumide_table.csv", "zorbium_lumide_figure.pdf",
                         "zorbium_lumide_figure.svg", "zorbium_lumide_figure.png"]
    assert names[-5:-1] == ["quellium_quasi_harmonic_table.csv", "quellium_quasi_harmonic_figure.pdf",
                            "quellium_quasi_harmonic_figure.svg", "quellium_quasi_harmonic_figure.png"]
    assert names[-1] == "summary.txt" and len(names) == 13


def test_demo_data_shipped_are_the_demo_files():
    for stem, *_ in commands.DEMO_COMPOUNDS:
        for kind in ("dos", "cp"):
            name = f"{stem}_{kind}.txt"
            assert commands._demo_file(name).read_bytes() == (DEMO / name).read_bytes()


def test_figure_refuses_existing_output_before_reading(tmp_path, capsys):
    (tmp_path / "fig.svg").write_text("mine")
    assert main(["figure", "--dos", "nonexistent.txt", "-o", str(tmp_path / "fig")]) == 1
    assert "fig.svg: exists" in capsys.readouterr().err
    assert (tmp_path / "fig.svg").read_text() == "mine"
    assert main(["figure", "--dos", "x.txt", "-o", str(tmp_path / "no" / "fig.pdf")]) == 1
    assert "does not exist" in capsys.readouterr().err


def test_demo_writes_tables_figures_and_summary(tmp_path, capsys):
    out = tmp_path / "results"
    assert main(["demo", "--out", str(out)]) == 0
    for path in commands.demo_outputs(out):
        assert path.is_file() and path.stat().st_size > 0, path
    summary = (out / "summary.txt").read_text()
    assert "caution:" in summary and "invented" in summary
    assert summary.count("θ_D(0) =") >= 4 and "fit quality" in summary
    table = pd.read_csv(out / "quellium_table.csv", comment="#")
    assert list(table.columns[:2]) == ["T", "Cv"]
    # Dulong–Petit: C_v → 3R per atom at high T (common practice); 400 K ≈ 1.3 θ_D of quellium.
    assert table["Cv"].iloc[-1] == pytest.approx(3 * sc.R, rel=0.03)  # 3 %: 400 K is not yet the limit
    q = pd.read_csv(out / "quellium_quasi_harmonic_table.csv", comment="#")
    # C_p − C_v = α² B_T V T (common practice), read back from the written columns
    V = q["V"] * 1e-30 * sc.N_A
    np.testing.assert_allclose(q["Cp"] - q["Cv"], q["alpha_V"] ** 2 * q["B_T"] * 1e9 * V * q["T"], rtol=1e-6, atol=1e-9)  # 12 digits written
    assert "six volumes" in summary and "quasi-harmonic at 0 GPa" in summary
    assert "Verify against measurements" in (out / "quellium_quasi_harmonic_table.csv").read_text()
    assert (out / "zorbium_lumide_figure.pdf").read_bytes()[:4] == b"%PDF"
    assert (out / "zorbium_lumide_figure.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert main(["demo", "--out", str(out)]) == 1  # never overwrites without --overwrite
    assert main(["demo", "--out", str(out), "--overwrite"]) == 0


@pytest.mark.parametrize("inputs", [["--dos", "zorbium_lumide_dos.txt", "--cp", "zorbium_lumide_cp.txt"],
                                    ["--cp", "quellium_cp.txt"], ["--dos", "quellium_dos.txt"]])
def test_figure_from_files(inputs, tmp_path, capsys):
    args = [str(DEMO / a) if a.endswith(".txt") else a for a in inputs]
    assert main(["figure", *args, "--atoms", "2" if "zorbium" in inputs[1] else "1",
                 "-o", str(tmp_path / "fig"), "--width", "single"]) == 0
    for fmt in ("pdf", "svg", "png"):
        assert (tmp_path / f"fig.{fmt}").stat().st_size > 0
    assert main(["figure", *args, "-o", str(tmp_path / "one.svg")]) == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fig.pdf", "fig.png", "fig.svg", "one.svg"]
