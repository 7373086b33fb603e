"""The demonstration data in demo_spectra/ are what their script writes, and are sane.

The materials there are invented: these checks are about the files and their stated
construction, not about any real material.
"""

from __future__ import annotations

import importlib.util
import re
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

from modeheat import quasi_harmonic, read_spectrum, read_volume_set, thermo
from modeheat.units import R

DEMO = Path(__file__).resolve().parent.parent / "demo_spectra"
DOS_FILES = {
    "zorbium_lumide_dos.txt": ("THz", 2),
    "zorbium_lumide_dos_meV.txt": ("meV", 2),
    "zorbium_lumide_dos_cm-1.txt": ("cm-1", 2),
    "quellium_dos.txt": ("THz", 1),
}
CP_FILES = {"zorbium_lumide_cp.txt": 2, "quellium_cp.txt": 1}
VOLUME_TABLE = "quellium_volumes.txt"
VOLUME_FILES = [VOLUME_TABLE, *(f"quellium_volumes_v{k}.txt" for k in range(1, 7))]


def _script(name: str = "make_demo"):
    spec = importlib.util.spec_from_file_location(name, DEMO / f"{name}.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up there
    spec.loader.exec_module(module)
    return module


def _split(text: str):
    """Comment and header lines, and the numeric rows."""
    lines = text.splitlines()
    data = [i for i, line in enumerate(lines) if re.fullmatch(r"\s*[-+\d.][\s\d.eE+-]*", line)]
    head = lines[: data[0]]
    return head, np.array([[float(x) for x in lines[i].split()] for i in data])


def _read(name: str):
    head, rows = _split((DEMO / name).read_text(encoding="utf-8"))
    return head, rows


def test_committed_files_are_reproducible(tmp_path):
    # reference: the committed files themselves; rerun demo_spectra/make_demo.py if this
    # fails.  Headers must match exactly and numbers to their printed precision (the
    # eigen-solver's last-bit rounding may differ between machines)
    make_demo = _script()
    assert make_demo.main(["make_demo.py", str(tmp_path)]) == 0
    written = sorted(p.name for p in tmp_path.iterdir())
    assert written == sorted(list(DOS_FILES) + list(CP_FILES))
    for name in written:
        committed = (DEMO / name).read_text(encoding="utf-8")
        fresh = (tmp_path / name).read_text(encoding="utf-8")
        if committed == fresh:
            continue
        head_c, rows_c = _split(committed)
        head_f, rows_f = _split(fresh)
        assert head_c == head_f, name
        assert rows_c.shape == rows_f.shape, name
        np.testing.assert_allclose(rows_c, rows_f, rtol=2e-6, atol=1e-12, err_msg=name)


def test_every_file_says_it_is_invented():
    # the project's rule: demo data say plainly they are invented, in every file
    for name in [*DOS_FILES, *CP_FILES, *VOLUME_FILES]:
        text = (DEMO / name).read_text(encoding="utf-8")
        comments = " ".join(line for line in text.splitlines() if line.startswith("#"))
        assert "INVENTED FOR DEMONSTRATION" in comments, name
        assert "not a measurement of any real material" in comments, name
    readme = (DEMO / "README.md").read_text(encoding="utf-8")
    assert "invented for demonstration" in readme.lower()


@pytest.mark.parametrize("name", sorted(DOS_FILES))
def test_demo_dos_counts_three_modes_per_atom(name):
    # common practice: a DOS per formula unit integrates to 3 modes per atom; partials add up
    unit, atoms = DOS_FILES[name]
    head, rows = _read(name)
    columns = head[-1].split()
    partials = ["A", "B"] if atoms == 2 else []
    assert columns == ["frequency", f"({unit})", "total", *partials]
    nu, total = rows[:, 0], rows[:, 1]
    area = lambda g: float(np.trapezoid(g, nu))  # noqa: E731
    # 6 printed digits on density and frequency: the trapezoid sum agrees to ~1e-6
    assert area(total) == pytest.approx(3.0 * atoms, rel=1e-5)
    if partials:
        assert area(rows[:, 2]) == pytest.approx(3.0, rel=1e-5)
        assert area(rows[:, 3]) == pytest.approx(3.0, rel=1e-5)
        np.testing.assert_allclose(rows[:, 2] + rows[:, 3], total, rtol=1e-5, atol=1e-6 * total.max())
    assert np.all(np.diff(nu) > 0) and np.all(total >= 0) and nu[0] == 0.0 and total[-1] == 0.0


def test_the_three_units_give_one_thermodynamics():
    # scipy.constants/CODATA (through modeheat.units): the meV and cm⁻¹ files are the THz
    # file in other units, so C_v and S agree to the files' printed precision
    T = [5.0, 50.0, 300.0]
    tables = [thermo(read_spectrum(DEMO / name, atoms=2), T) for name in list(DOS_FILES)[:3]]
    for other in tables[1:]:
        np.testing.assert_allclose(other["Cv"], tables[0]["Cv"], rtol=1e-5)
        np.testing.assert_allclose(other["S"], tables[0]["S"], rtol=1e-5)


def _stated(header: str, pattern: str) -> float:
    match = re.search(pattern, header)
    assert match, pattern
    return float(match.group(1))


@pytest.mark.parametrize("name", sorted(CP_FILES))
def test_synthetic_calorimetry_follows_its_stated_model(name):
    # reference: the construction the file's own header states (invented data), rebuilt
    # from the header and the committed DOS file alone: the normalised residuals
    # (C − C_p,true)/σ are standard normal and σ is the stated noise model
    atoms = CP_FILES[name]
    head, rows = _read(name)
    assert head[-1].split() == ["T", "(K)", "C", "(J/(mol", "K))", "sigma", "(J/(mol", "K))"]
    T, C, sigma = rows.T
    assert T[0] == 2.0 and T[-1] == 300.0 and np.all(np.diff(T) > 0)
    assert np.count_nonzero(T < 20) > np.count_nonzero(T > 200)  # denser at low T
    header = " ".join(line.lstrip("#").strip() for line in head)
    cutoff = _stated(header, r"continued below ([0-9.]+) THz")
    theta = _stated(header, r"theta_D\(0\) = ([0-9.]+) K")
    gamma = _stated(header, r"gamma = ([0-9.e+-]+) J")
    a = _stated(header, r"A = ([0-9.e+-]+) mol/J")
    relative = _stated(header, r"sigma = ([0-9.]+)\*C_p")
    floor = _stated(header, r"\*C_p \+ ([0-9.e+-]+) J")
    dos = DEMO / name.replace("_cp.txt", "_dos.txt")
    spectrum = read_spectrum(dos, atoms=atoms, low_t=theta, low_t_cutoff=cutoff)
    cv = thermo(spectrum, T)["Cv"].to_numpy() + gamma * T
    cp = 2 * cv / (1 + np.sqrt(1 - 4 * a * T * cv))  # the stated root of C_p − C_v = A·C_p²·T
    assert np.all(cp - cv == pytest.approx(a * cp**2 * T, rel=1e-9))
    # header values are rounded (θ to 0.01 K, the cut-off to 1e-4 THz): 1e-4 of σ's size
    np.testing.assert_allclose(sigma, relative * cp + floor, rtol=1e-4)
    z = (C - cp) / sigma
    # 100 standard normals: |mean| < 0.4 and 0.6 < std < 1.4 are beyond 4σ of chance
    assert abs(z.mean()) < 0.4 and 0.6 < z.std() < 1.4
    # common practice: near room temperature C_p is a few % above 3R per mole of atoms
    assert 0.9 * 3 * atoms * R < cp[-1] < 1.1 * 3 * atoms * R


# --- the quasi-harmonic demonstration: quellium at six lattice constants --------------------------
def _number(field: str) -> float | None:
    try:
        return float(field)
    except ValueError:
        return None


def test_committed_volume_set_is_reproducible(tmp_path, capsys):
    # reference: the committed files themselves; rerun demo_spectra/make_volume_demo.py if
    # this fails.  Comment and header lines must match exactly, file names in the table
    # too, and numbers to 2e-6 as for the other demo files (the eigen-solver's last-bit
    # rounding may differ between machines, and these files print every digit)
    make = _script("make_volume_demo")
    assert make.main(["make_volume_demo.py", str(tmp_path)]) == 0
    assert "V(T) stays inside them" in capsys.readouterr().out
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(VOLUME_FILES)
    for name in VOLUME_FILES:
        committed = (DEMO / name).read_text(encoding="utf-8").splitlines()
        fresh = (tmp_path / name).read_text(encoding="utf-8").splitlines()
        assert len(committed) == len(fresh), name
        for line_c, line_f in zip(committed, fresh):
            fields_c, fields_f = line_c.split(","), line_f.split(",")
            if line_c.startswith("#") or _number(fields_c[0]) is None:
                assert line_c == line_f, name
                continue
            assert len(fields_c) == len(fields_f), name
            for a, b in zip(fields_c, fields_f):
                if _number(a) is None:
                    assert a == b, name
                else:
                    assert float(a) == pytest.approx(float(b), rel=2e-6, abs=1e-12), name


def test_volume_set_dos_files_count_three_modes_per_atom():
    # common practice: a DOS per formula unit integrates to 3 modes per atom
    vs = read_volume_set(DEMO / VOLUME_TABLE)
    assert vs.atoms == 1.0 and vs.volume_unit == "A3" and vs.energy_unit == "eV"
    for name in VOLUME_FILES[1:]:
        rows = [line.split(",") for line in (DEMO / name).read_text(encoding="utf-8").splitlines()
                if line and _number(line.split(",")[0]) is not None]
        nu, total = np.array(rows, dtype=float).T
        assert float(np.trapezoid(total, nu)) == pytest.approx(3.0, rel=1e-12)
        assert nu[0] == 0.0 and np.all(np.diff(nu) > 0) and np.all(total >= 0) and total[-1] == 0.0
    # common practice: volume per atom of an fcc lattice is a³/4
    header = (DEMO / VOLUME_TABLE).read_text(encoding="utf-8")
    stated = re.search(r"Lattice constants \(angstrom\): ([0-9., ]+);", header).group(1)
    a = np.array([float(x) for x in stated.split(",")])
    np.testing.assert_allclose(vs.volumes, a**3 / 4, rtol=1e-12)


def test_volume_set_gives_a_quasi_harmonic_table_without_warnings():
    # invented data: the checks say the demo is usable as designed (V(T) inside the sampled
    # volumes up to 500 K, no warning), and physically sane — common practice for a simple
    # solid: α_V > 0, C_p ≥ C_v, γ of order 1–3, C_v near 3R per mole of atoms at 500 K
    vs = read_volume_set(DEMO / VOLUME_TABLE)
    T = np.linspace(1.0, 500.0, 100)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        table = quasi_harmonic(vs, T)
    assert len(table) == T.size and not table["extrapolated"].any() and table.attrs["extrapolated_from"] is None
    assert (table["alpha_V"] > 0).all() and (table["Cp"] >= table["Cv"]).all()
    assert table["gamma"].between(1.0, 3.0).all()
    assert vs.volumes[0] < table["V"].iloc[0] < table["V"].iloc[-1] < vs.volumes[-1]
    assert 0.95 * 3 * R < table["Cv"].iloc[-1] < 3 * R
