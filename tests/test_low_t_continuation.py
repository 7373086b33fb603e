"""The default low-temperature continuation converges with the q-mesh.

Inputs: DOS of an fcc nearest-neighbour spring lattice on Γ-centred 16³/32³/48³ meshes
(tests/lowt_inputs.py: tetrahedron DOS from modeheat.lattice, histogram and Gaussian-
smeared DOS and mode lists from an independent dynamical matrix), handed to Spectrum as
plain arrays.  Reference: C_v from a direct 96³ Brillouin-zone sum and the elastic
θ_D(0) from ⟨v⁻³⟩ over directions (tests/fcc_reference.py, cached in
tests/data/fcc_nn_reference.json), neither of which uses modeheat.

Measured errors of C_v at T = θ_D(0)/100, /50, /20 (python tests/benchmarks/lowt_error_table.py):

=============  ======  ==========================  ============================
input          mesh    default                     θ_D(0) given
=============  ======  ==========================  ============================
tetrahedron    16³     −0.4 / +0.0 / +0.1 %        +0.2 / +0.6 / +0.5 %
tetrahedron    32³     −0.4 / −0.3 / −0.3 %        +0.1 / +0.2 / −0.1 %
tetrahedron    48³     −1.3 / −1.2 / −0.4 %        +0.1 / −0.0 / −0.2 %
histogram      16³     +2.7 / +2.5 / +3.1 %        +0.1 / +0.5 / +2.8 %
histogram      32³     +2.8 / +2.1 / +0.1 %        −0.0 / −0.2 / −0.4 %
histogram      48³     −0.0 / +0.2 / −0.1 %        +0.1 / +0.1 / −0.0 %
smeared        16³     +7.6 / +6.3 / +3.6 %        +0.4 / +1.5 / +2.4 %
smeared        32³     +0.0 / +0.6 / +0.8 %        +0.1 / +0.3 / +0.6 %
smeared        48³     −1.5 / −1.2 / −0.1 %        +0.1 / +0.2 / +0.3 %
mode list      16³     −5.5 / −8.2 / −6.7 %        −0.3 / −1.1 / −2.6 %
mode list      32³     −0.8 / −0.5 / −0.3 %        +0.0 / −0.0 / −0.3 %
mode list      48³     −0.3 / −0.2 / −0.2 %        +0.0 / +0.0 / +0.1 %
=============  ======  ==========================  ============================
"""

from __future__ import annotations

import importlib.util
import math
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import constants

import fcc_reference
import lowt_inputs
from modeheat import Spectrum, SpectrumWarning, heat_capacity, thermo
from modeheat import read_spectrum, write_table
from modeheat.units import R

REF = fcc_reference.load_reference()
THETA = REF["theta_D0_K"]
T = np.array(REF["T_K"][:3])  # θ_D(0)/100, /50, /20
CV = np.array(REF["cv_over_3R"][:3]) * 3 * R

# The brief's targets: |C_v error| at θ_D(0)/100, /50, /20.
DEFAULT_TARGET = {16: (0.12, 0.10, 0.04), 32: (0.05, 0.03, 0.015), 48: (0.025, 0.015, 0.008)}
THETA_TARGET = {16: (0.03, 0.04, 0.035), 32: (0.02, 0.02, 0.015), 48: (0.015, 0.012, 0.008)}


def _spectrum(kind: str, n: int, **kw) -> Spectrum:
    if kind == "tetrahedron":
        return Spectrum(*lowt_inputs.tetrahedron(n), unit="THz", atoms=1, **kw)
    if kind == "smeared":
        return Spectrum(*lowt_inputs.smeared(n), unit="THz", atoms=1, **kw)
    if kind == "histogram":
        return Spectrum.from_histogram(*lowt_inputs.histogram(n), unit="THz", atoms=1, **kw)
    return Spectrum.from_modes(lowt_inputs.mesh_modes(n), unit="THz", atoms=1, **kw)


def _errors(sp: Spectrum) -> np.ndarray:
    return np.abs(heat_capacity(sp, T) / CV - 1)


# --- the reference itself -----------------------------------------------------------------------
def test_cached_reference_is_what_its_script_computes():
    # reference: tests/fcc_reference.py (independent dynamical matrix).  A fresh 64³ sum
    # agrees with the cached 96³ one to 6.3e-4 at θ_D(0)/100 and ≤ 2e-8 from θ_D(0)/50
    # (the sums' own convergence, measured against 128³); the elastic θ_D(0) to rounding.
    assert fcc_reference.elastic_debye_temperature() == pytest.approx(THETA, rel=1e-13)
    fresh = fcc_reference.heat_capacity_sum(64, REF["T_K"])
    cached = np.array(REF["cv_over_3R"])
    assert fresh[0] == pytest.approx(cached[0], rel=7e-4)
    np.testing.assert_allclose(fresh[1:], cached[1:], rtol=2e-8)


def test_elastic_debye_temperature_of_the_lattice_module():
    # reference: the independent ⟨v⁻³⟩ average of tests/fcc_reference.py; both are
    # quadratures of the same smooth function on the sphere, exact to ≈ 1e-12
    assert __import__("modeheat.lattice").lattice.debye_temperature(lowt_inputs.model()) == pytest.approx(
        THETA, rel=1e-10
    )


# --- convergence with the mesh --------------------------------------------------------------------
@pytest.mark.parametrize("n", [16, 32, 48])
def test_tetrahedron_dos_meets_the_targets_by_default(n):
    sp = _spectrum("tetrahedron", n)
    assert sp.low_t_method == "auto"
    # reference: the 96³ direct zone sum; targets of the issue (measured in the docstring)
    assert np.all(_errors(sp) <= DEFAULT_TARGET[n]), _errors(sp)
    # reference: the elastic θ_D(0) (T → 0); measured +0.2 / +0.2 / +0.4 %
    assert sp.moment_debye_temperature(-3) == pytest.approx(THETA, rel=0.005)


@pytest.mark.parametrize("kind", ["tetrahedron", "histogram", "smeared", "modes"])
@pytest.mark.parametrize("n", [16, 32, 48])
def test_with_the_elastic_debye_temperature_every_input_meets_the_targets(kind, n):
    sp = _spectrum(kind, n, low_t=THETA)
    assert sp.low_t_method == "theta"
    # reference: the 96³ direct zone sum; targets of the issue (measured in the docstring)
    assert np.all(_errors(sp) <= THETA_TARGET[n]), _errors(sp)
    # common practice: θ_D(T → 0) is the Debye temperature of the ω² law given
    assert sp.moment_debye_temperature(-3) == pytest.approx(THETA, rel=1e-12)


@pytest.mark.parametrize("kind", ["histogram", "smeared"])
@pytest.mark.parametrize("n", [16, 32, 48])
def test_histogram_and_smeared_inputs_meet_the_targets_by_default(kind, n):
    sp = _spectrum(kind, n)
    assert sp.low_t_method == "auto"
    # reference: the 96³ direct zone sum; the tetrahedron targets of the issue, which asks
    # the same convergence of these inputs (measured in the docstring)
    assert np.all(_errors(sp) <= DEFAULT_TARGET[n]), _errors(sp)
    # reference: the elastic θ_D(0), within the target at θ_D(0)/100 (C_v ∝ θ⁻³ there:
    # a third of it); measured at most 2.3 % (16³), 1.0 % (32³), 0.5 % (48³)
    assert sp.moment_debye_temperature(-3) == pytest.approx(THETA, rel=DEFAULT_TARGET[n][0] / 3)


def test_mode_lists_converge_by_default():
    errors = {n: _errors(_spectrum("modes", n)) for n in (16, 32, 48)}
    # reference: the 96³ direct zone sum.  From 32³ the targets hold.  At 16³ only
    # three distinct shells of the mesh lie below 1.25 THz, and the law fitted to them
    # misses C_v at θ_D(0)/20 by 6.7 % (measured −5.5 / −8.2 / −6.7 %): held to 12 / 10 / 7 %.
    assert np.all(errors[48] <= DEFAULT_TARGET[48]), errors[48]
    assert np.all(errors[32] <= DEFAULT_TARGET[32]), errors[32]
    assert np.all(errors[16] <= (0.12, 0.10, 0.07)), errors[16]


def test_the_default_beats_the_old_continuation_at_every_mesh():
    # reference: the 96³ direct zone sum.  The former default, an ω² branch with the
    # data's own modes below the third grid point, stays 16–37 % low at θ_D(0)/100.
    for n in (16, 32, 48):
        f, g = lowt_inputs.tetrahedron(n)
        old = Spectrum(f, g, unit="THz", atoms=1, low_t="fit", low_t_cutoff=f[3])
        assert _errors(old)[0] > 0.1
        assert _errors(Spectrum(f, g, unit="THz", atoms=1))[0] < 0.1 * _errors(old)[0]


def test_demo_spectra_agree_with_their_elastic_debye_temperature():
    # reference: modeheat.lattice.debye_temperature of the spring models the demo script
    # states (elastic constants, ⟨v⁻³⟩ over directions); the issue asks for 3 %,
    # measured −0.9 % (zorbium lumide) and −0.4 % (quellium)
    demo = Path(__file__).resolve().parent.parent / "demo_spectra"
    spec = importlib.util.spec_from_file_location("make_demo", demo / "make_demo.py")
    make_demo = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = make_demo
    spec.loader.exec_module(make_demo)
    from modeheat.lattice import debye_temperature

    for material in make_demo.MATERIALS:
        sp = read_spectrum(demo / f"{material.key}_dos.txt", atoms=material.model.atoms)
        assert sp.low_t_method == "auto"
        assert sp.moment_debye_temperature(-3) == pytest.approx(debye_temperature(material.model), rel=0.03)


# --- no Debye branch where the data have no acoustic bottom ---------------------------------------
def _no_branch(sp: Spectrum, temperatures) -> None:
    off = sp.with_low_t("off")
    assert sp.low_t_method == "off" and sp.low_t_cutoff == 0.0
    np.testing.assert_allclose(heat_capacity(sp, temperatures), heat_capacity(off, temperatures), rtol=1e-13)


def test_an_optical_peak_at_the_bottom_is_not_a_debye_branch():
    f = np.arange(0.0, 10.01, 0.5)
    g = np.where(f == 5.0, 1.0, 0.0)
    with pytest.warns(SpectrumWarning, match="optical peak"):
        sp = Spectrum(f, g, unit="THz", atoms=1)
    # reference: the same data with the continuation off (the measured case:
    # C_v ×21 at 20 K with a Debye branch)
    _no_branch(sp, [5.0, 20.0, 300.0])


def test_a_gapped_spectrum_is_not_a_debye_branch():
    # invented test shape: an optical band from 4 to 6 THz on a fine grid, nothing below
    f = np.linspace(0.0, 8.0, 801)
    g = np.where((f > 4.0) & (f < 6.0), 1.0 - ((f - 5.0) / 1.0) ** 2, 0.0)
    with pytest.warns(SpectrumWarning, match="no ω² low-temperature continuation"):
        sp = Spectrum(f, g, unit="THz", atoms=1)
    _no_branch(sp, [2.0, 20.0, 300.0])
    # the same band as a histogram and as a list of modes: no branch either
    edges = np.linspace(0.0, 8.0, 161)
    counts = np.interp(0.5 * (edges[1:] + edges[:-1]), f, g)
    with pytest.warns(SpectrumWarning):
        assert Spectrum.from_histogram(edges, counts, unit="THz", atoms=1).low_t_method == "off"
    modes = 5.0 + np.linspace(-0.99, 0.99, 2000)
    with pytest.warns(SpectrumWarning):
        assert Spectrum.from_modes(modes, unit="THz", atoms=1).low_t_method == "off"


def test_an_empty_first_bin_is_not_a_gap():
    # invented test shape: a histogram of an ω² law up to 8 THz whose first bin is empty
    # (as a mesh without its Γ modes gives); 10⁻³ THz³ per bin: exact counts
    edges = np.linspace(0.0, 10.0, 401)
    counts = np.diff(np.minimum(edges, 8.0) ** 3)
    counts[0] = 0.0
    with warnings.catch_warnings():
        warnings.simplefilter("error", SpectrumWarning)
        sp = Spectrum.from_histogram(edges, counts, unit="THz", atoms=1)
    assert sp.low_t_method == "auto"
    # published: a Debye spectrum of 3 modes up to ν_D has θ_D = hν_D/k (h, k: CODATA
    # via scipy.constants)
    assert sp.moment_debye_temperature(-3) == pytest.approx(constants.h * 8e12 / constants.k, rel=1e-9)


def test_a_linear_bottom_is_not_turned_into_an_omega_squared_one():
    # common practice: a layered solid's DOS rises linearly (C ∝ T²); an ω² branch would
    # replace that law.  Invented test shape.
    f = np.linspace(0.0, 6.0, 601)
    with pytest.warns(SpectrumWarning, match="not as ω³"):
        sp = Spectrum(f, f / 6.0, unit="THz", atoms=1)  # 3 modes: one atom
    _no_branch(sp, [1.0, 10.0])


def test_a_debye_spectrum_is_continued_exactly_by_every_constructor():
    # published: the Debye model (T³ law and θ(−3) = θ_D); 400 K, invented grid
    theta = 400.0
    f = np.linspace(0.0, theta, 300)
    sampled = Spectrum(f, f**2, unit="K", atoms=1)
    edges = np.linspace(0.0, theta, 301)
    hist = Spectrum.from_histogram(edges, np.diff(edges**3), unit="K", atoms=1)
    modes = Spectrum.from_modes(theta * ((np.arange(30_000) + 0.5) / 30_000) ** (1 / 3), unit="K", atoms=1)
    # a list's count at ω_c differs from the law's by under half a mode (1/60000 of them),
    # which the normalisation spreads over all: 2e-9 in θ(−3)
    for sp, rel in ((sampled, 1e-9), (hist, 1e-9), (modes, 1e-8)):
        assert sp.low_t_method == "auto"
        assert sp.moment_debye_temperature(-3) == pytest.approx(theta, rel=rel)
        Tl = np.array([theta / 1000, theta / 100])
        assert np.allclose(heat_capacity(sp, Tl), 12 * math.pi**4 / 5 * R * (Tl / theta) ** 3, rtol=1e-6)


# --- what the tables say ------------------------------------------------------------------------------
def test_the_command_line_default_is_auto_and_its_file_says_so(tmp_path, capsys):
    from modeheat.cli import main

    out = tmp_path / "q.csv"
    demo = Path(__file__).resolve().parent.parent / "demo_spectra" / "quellium_dos.txt"
    assert main(["table", str(demo), "--temperatures", "1,10", "-o", str(out)]) == 0
    capsys.readouterr()
    text = out.read_text(encoding="utf-8")
    assert "# low-temperature continuation: auto (ω² law fitted above the unresolved bottom" in text
    # reference: the same spectrum built in Python with the documented default
    expected = thermo(read_spectrum(demo), [1.0, 10.0])
    np.testing.assert_allclose(pd.read_csv(out, comment="#").to_numpy(), expected.to_numpy(), rtol=1e-11)


def test_tables_files_and_repr_say_which_continuation_was_applied(tmp_path):
    sp = _spectrum("tetrahedron", 16)
    table = thermo(sp, [1.0, 10.0])
    assert table.attrs["low_t_method"] == "auto"
    assert table.attrs["low_t_cutoff"] == sp.low_t_cutoff > 0
    assert table.attrs["low_t_cutoff_unit"] == "THz"
    assert table.attrs["low_t_summary"] == sp.low_t_summary
    assert f"{sp.low_t_cutoff:.5g} THz" in sp.low_t_summary and "auto" in repr(sp)
    path = write_table(table, tmp_path / "t.csv")
    comments = [line for line in path.read_text(encoding="utf-8").splitlines() if line.startswith("#")]
    assert any(line.startswith("# low-temperature continuation: auto") for line in comments)
    np.testing.assert_allclose(pd.read_csv(path, comment="#").to_numpy(), table.to_numpy(), rtol=1e-11)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SpectrumWarning)
        off = Spectrum([0.0, 1.0, 2.0], [0.0, 1.0, 4.0], unit="THz", atoms=1, low_t="off")
    assert thermo(off, [1.0]).attrs["low_t_method"] == "off"
