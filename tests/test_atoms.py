"""Atom counts: read from the data, from a file line, checked against what is given.

The reference throughout is a fact of the trade: a vibrational density of states per
formula unit holds 3 modes per atom (common practice).  The demo files are invented
compounds, used here only as test input.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import mpmath as mp
import numpy as np
import pandas as pd
import pytest
from scipy import constants

from modeheat import (
    AtomCountWarning,
    Debye,
    Electronic,
    InputError,
    Spectrum,
    SpectrumWarning,
    debye_breakdown,
    effective_debye_temperature,
    fit,
    low_temperature_fit,
    read_heat_capacity,
    read_spectrum,
    thermo,
)

DEMO = Path(__file__).resolve().parent.parent / "demo_spectra"
DOS = DEMO / "zorbium_lumide_dos.txt"
CP = DEMO / "zorbium_lumide_cp.txt"
R = constants.N_A * constants.k  # scipy.constants (CODATA)


def _debye_density(top: float, modes: float, f: np.ndarray) -> np.ndarray:
    """An ω² density up to `top` scaled so that its trapezoid integral on `f` is `modes` (invented shape)."""
    g = np.where((f > 0) & (f <= top), f**2, 0.0)
    return g * modes / np.trapezoid(g, f)


# --- spectra: the count from the integral ---------------------------------------------------------
def test_demo_spectrum_of_six_modes_is_two_atoms():
    spectrum = read_spectrum(DOS)
    # common practice: 3 modes per atom; the file's own total integrates to 6 (numpy trapezoid)
    columns = np.loadtxt(DOS, comments="#", skiprows=11)
    assert np.trapezoid(columns[:, 1], columns[:, 0]) == pytest.approx(6.0, abs=1e-4)
    assert spectrum.atoms == 2 and spectrum.atoms_source == "integral"
    assert spectrum.mode_integral == pytest.approx(6.0, abs=1e-4)
    T = [5.0, 50.0, 300.0]
    pd.testing.assert_frame_equal(thermo(spectrum, T), thermo(read_spectrum(DOS, atoms=2), T))
    # common practice: Dulong–Petit, C_v → 3R per atom, so 6R per formula unit of 2 atoms
    assert thermo(spectrum, [5000.0])["Cv"][0] == pytest.approx(6 * R, rel=1e-3)


def test_a_given_count_the_integral_contradicts_warns_and_is_used():
    with pytest.warns(AtomCountWarning, match=r"6 modes, 3 modes per atom for 2 atoms, but atoms=1 was given"):
        spectrum = read_spectrum(DOS, atoms=1)
    assert spectrum.atoms == 1 and spectrum.atoms_source == "given"


def test_density_normalised_to_one_needs_atoms():
    f = np.linspace(0.0, 10.0, 201)
    with pytest.raises(InputError, match=r"atoms per formula unit are not clear.*integrates .* to 1 modes.*atoms="):
        Spectrum(f, _debye_density(8.0, 1.0, f))
    assert Spectrum(f, _debye_density(8.0, 1.0, f), atoms=1).atoms == 1


def test_imaginary_modes_count_towards_the_total():
    # A q-mesh density normalised to 6 modes with a small imaginary part still holds 6.
    f = np.linspace(-0.5, 10.0, 211)
    g = _debye_density(8.0, 1.0, f) + 0.02 * np.exp(-0.5 * ((f + 0.25) / 0.1) ** 2)
    g *= 6.0 / np.trapezoid(g, f)
    with pytest.warns(SpectrumWarning, match="imaginary"):
        spectrum = Spectrum(f, g)
    assert spectrum.atoms == 2 and spectrum.mode_integral == pytest.approx(6.0, rel=1e-12)


@pytest.mark.parametrize(
    ("total", "atoms"),
    [
        (3.0, 1),
        (6.0 * 1.009, 2),  # within 1 % of 6
        (6.0 * 0.991, 2),
        (6.0 * 1.011, None),  # beyond 1 %
        (60.0 + 0.09, 20),  # within 0.1 mode
        (60.0 + 0.2, None),  # within 1 % but not within 0.1 mode
        (96.0, 32),
        (99.0, None),  # 33 atoms: likelier raw counts of a small q-mesh
        (1.0, None),
        (1.5, None),
    ],
)
def test_which_totals_are_clear(total, atoms):
    f = np.linspace(0.0, 10.0, 101)
    g = _debye_density(9.0, total, f)
    if atoms is None:
        with pytest.raises(InputError, match="not clear from the data"):
            Spectrum(f, g)
    else:
        assert Spectrum(f, g).atoms == atoms


def test_modes_with_q_point_weights_tell_the_count_and_counted_modes_do_not():
    rng = np.random.default_rng(11)
    n_q = 500
    modes = np.sort(rng.uniform(0.1, 9.0, (n_q, 6)), axis=1).ravel()  # invented: 6 modes per q-point
    q_weights = rng.uniform(0.5, 1.5, n_q)
    q_weights /= q_weights.sum()  # q-point weights summing to 1
    spectrum = Spectrum.from_modes(modes, np.repeat(q_weights, 6))
    assert spectrum.atoms == 2 and spectrum.atoms_source == "integral"  # common practice: 3 modes per atom
    with pytest.raises(InputError, match="does not tell the atoms"):
        Spectrum.from_modes(modes)
    with pytest.raises(InputError, match="does not tell the atoms"):
        Spectrum.from_modes(modes, np.repeat(rng.integers(1, 9, n_q), 6).astype(float))
    assert Spectrum.from_modes(modes, atoms=2).atoms == 2


def test_histogram_counts():
    edges = np.linspace(0.0, 6.0, 7)
    assert Spectrum.from_histogram(edges, [0.1, 0.4, 0.7, 0.9, 0.6, 0.3]).atoms == 1
    with pytest.raises(InputError, match="whole-number counts"):
        Spectrum.from_histogram(edges, [1, 4, 7, 9, 6, 3])
    with pytest.warns(AtomCountWarning, match="for 1 atom, but atoms=2"):
        Spectrum.from_histogram(edges, [0.1, 0.4, 0.7, 0.9, 0.6, 0.3], atoms=2)


def test_derived_spectra_keep_how_the_count_was_obtained():
    spectrum = read_spectrum(DOS)
    for other in (spectrum.to("meV"), spectrum.with_low_t("off")):
        assert (other.atoms, other.atoms_source) == (2, "integral")
        assert other.mode_integral == spectrum.mode_integral


# --- spectra: the count from the file -----------------------------------------------------------
def test_atoms_line_in_a_spectrum_file(tmp_path):
    path = tmp_path / "counted.txt"
    # invented, arbitrary normalisation; the header comment stands right above the atoms line
    path.write_text("# invented\n# frequency (THz) total\n# atoms: 2\n0 0\n1 1\n2 4\n3 0\n", encoding="utf-8")
    spectrum = read_spectrum(path)
    assert (spectrum.atoms, spectrum.atoms_source, spectrum.unit) == (2, "file", "THz")
    assert read_spectrum(path, atoms=2).atoms_source == "given"
    with pytest.raises(InputError) as info:
        read_spectrum(path, atoms=3)
    assert str(info.value).startswith(f"{path}, line 3: atoms=3 was asked for but the file says atoms: 2")
    path.write_text("frequency (THz) total\n0 0\n1 1\n# Atoms : 2.5   # a trailing note\n2 5\n", encoding="utf-8")
    assert read_spectrum(path).atoms == 2.5


# --- heat-capacity data: one rule -------------------------------------------------------------------
def _t3_theta(beta: float, atoms: int) -> float:
    # reference: the Debye T³ law C = (12π⁴/5)·n·R·(T/θ)³ (common practice), in mpmath
    mp.mp.dps = 30
    return float(mp.cbrt(12 * mp.pi**4 / 5 * atoms * mp.mpf(R) / mp.mpf(beta)))


def test_low_temperature_fit_uses_the_stored_count():
    data = read_heat_capacity(CP, atoms=2)
    assert data.attrs["atoms"] == 2
    low = low_temperature_fit(data, tmax=6.0)
    assert low.atoms == 2
    assert low.theta_D0 == pytest.approx(_t3_theta(low.beta, 2), rel=1e-12)
    # The measurement: ≈ 255 K with 2 atoms, ≈ 202 K when the count was ignored.
    assert abs(low.theta_D0 - 255.0) < 1.5  # fit on 0.5 % noise: θ_D(0) ± ~1 K
    bare = read_heat_capacity(CP)
    assert bare.attrs["atoms"] is None
    one = low_temperature_fit(bare, tmax=6.0)  # no stored count: 1 atom, documented
    assert one.atoms == 1 and one.beta == low.beta
    assert one.theta_D0 == pytest.approx(_t3_theta(low.beta, 1), rel=1e-12)


def test_a_different_count_than_the_stored_one_is_an_error():
    data = read_heat_capacity(CP, atoms=2)
    with pytest.raises(InputError, match=r"atoms=3 was given but zorbium_lumide_cp\.txt stores atoms=2"):
        low_temperature_fit(data, tmax=6.0, atoms=3)
    with pytest.raises(InputError, match="stores atoms=2"):
        debye_breakdown(data, tmax=6.0, atoms=1)
    with pytest.raises(InputError, match="stores atoms=2"):
        effective_debye_temperature(data["T"], data["C"], atoms=1)
    assert low_temperature_fit(data, tmax=6.0, atoms=2).atoms == 2
    other = data.copy()
    other.attrs.update(atoms=1, name="other")
    with pytest.raises(InputError, match="disagree on the atoms per formula unit"):
        low_temperature_fit([data, other], tmax=6.0)


def test_debye_breakdown_uses_the_same_count_as_the_fit():
    data = read_heat_capacity(CP, atoms=2)
    assert debye_breakdown(data, tmax=6.0).theta_D0 == pytest.approx(low_temperature_fit(data, tmax=6.0).theta_D0)


def test_effective_debye_temperature_of_a_column_uses_its_count():
    data = read_heat_capacity(CP, atoms=2)
    row = data.iloc[int(np.argmin(np.abs(data["T"] - 20.0)))]
    got = effective_debye_temperature(data["T"], data["C"])[data.index.get_loc(row.name)]

    # reference: mpmath quadrature of the Debye heat capacity, 3nR·(3/x³)∫₀ˣ t⁴eᵗ/(eᵗ−1)² dt = C
    mp.mp.dps = 30

    def per_mode(x):
        return 3 / x**3 * mp.quad(lambda t: t**4 * mp.exp(t) / mp.expm1(t) ** 2, [0, x])

    x = mp.findroot(lambda x: 3 * 2 * mp.mpf(R) * per_mode(x) - mp.mpf(row["C"]), 12)
    assert got == pytest.approx(float(x) * row["T"], rel=1e-9)


def test_fit_checks_the_model_against_the_stored_count():
    data = read_heat_capacity(CP, atoms=2)
    with pytest.raises(InputError, match="3 vibrational modes but 2 atoms"):
        fit(Debye(250.0) + Electronic(5e-5), data, tmax=6.0)
    with pytest.raises(InputError, match="the model is for atoms=1 but the data for atoms=2"):
        fit((Debye(250.0) + Electronic(5e-5)).with_atoms(1), data, tmax=6.0)
    result = fit(Debye(250.0, modes=6.0) + Electronic(5e-5), data, tmax=6.0)
    assert result.model.atoms == 2
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        fit(Debye(250.0) + Electronic(5e-5), read_heat_capacity(CP), tmax=6.0)  # no count: not checked


def test_per_atom_data_without_a_count_are_one_atom_per_formula_unit(tmp_path):
    path = tmp_path / "per_atom.txt"
    path.write_text("T (K)  C (J/(mol-atom K))\n2 0.001\n3 0.0034\n", encoding="utf-8")
    assert read_heat_capacity(path).attrs["atoms"] == 1
    assert read_heat_capacity(path, atoms=2)["C"].iloc[0] == pytest.approx(0.002)
