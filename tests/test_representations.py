"""Plot-ready curves (modeheat.representations) against closed forms and outside references.

References, each named beside its check:
- mpmath quadrature (30 digits) of the Debye and Einstein heat capacities;
- Debye's T³ law, C/T³ → (12π⁴/5)·R/θ³ per mole of atoms (4π⁴/5 per mode; common practice);
- the Gaussian integral ∫ exp(−x²/2σ²) dx = σ√(2π) (common practice);
- the Debye density 9·atoms·ω²/θ³ (common practice), so g/ω² is flat below θ;
- unit conversions from scipy.constants (CODATA);
- C = γT + βT³ makes C/T = γ + βT² a straight line in T² (common practice).
The mixtures and data are invented test shapes.
"""

from __future__ import annotations

import math
import warnings

import mpmath as mp
import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc

from modeheat.errors import InputError, NoDebyeTemperatureWarning
from modeheat.models import Band, Debye, Dilatation, Einstein, Electronic, Mixture, SineChain
from modeheat.representations import MAX_POINTS, contributions, plot_dos, reduced_dos, temperature_curves
from modeheat.spectrum import Spectrum

mp.mp.dps = 30
R = sc.R  # reference: scipy.constants (CODATA)


def mp_debye_cv(theta, T: float, modes: float = 3.0) -> float:
    """C_v/R of a 3-d Debye branch: modes·3(T/θ)³ ∫_0^{θ/T} x⁴eˣ/(eˣ−1)² dx (mpmath, 30 digits)."""
    return float(_mp_debye_cv(theta, T, modes))


def _mp_debye_cv(theta, T: float, modes: float = 3.0):
    X = mp.mpf(theta) / T
    integral = mp.quad(lambda x: x**4 * mp.exp(-x) / (-mp.expm1(-x)) ** 2, [0, min(X, 10), X])
    return modes * 3 / X**3 * integral


def mp_einstein_cv(theta: float, T: float, modes: float) -> float:
    """C_v/R of Einstein modes: modes·x²eˣ/(eˣ−1)² (mpmath, 30 digits)."""
    x = mp.mpf(theta) / T
    return float(modes * x**2 * mp.exp(-x) / (-mp.expm1(-x)) ** 2)


MIX = (
    Debye(300.0, modes=3)
    + SineChain(250.0, modes=3)
    + Einstein(180.0, modes=3)
    + Einstein(420.0, modes=3)
    + Band(500.0, 700.0, modes=3)
    + Electronic(1e-3)
)


# --- curves against temperature --------------------------------------------------------------

def test_debye_curves_match_mpmath_and_the_t3_law():
    theta = 320.0
    T = np.array([2.0, 5.0, 20.0, 80.0, 300.0, 900.0])
    c = temperature_curves(Debye(theta, modes=6), T, per="atom")
    ref = np.array([mp_debye_cv(theta, t, modes=6) / 2 * R for t in T])  # per mole of atoms (6 modes = 2 atoms)
    # reference: mpmath quadrature at 30 digits; the engine's Debye functions reach ~1e-13
    np.testing.assert_allclose(c["C"], ref, rtol=1e-10)
    np.testing.assert_allclose(c["C_over_T3"], ref / T**3, rtol=1e-10)
    np.testing.assert_allclose(c["C_over_T"], ref / T, rtol=1e-10)
    np.testing.assert_allclose(c["T2"], T**2, rtol=0)
    # reference: Debye's T³ law (common practice): 12π⁴/5·R/θ³ per mole of atoms, 4π⁴/5 per mode
    level = float(12 * mp.pi**4 / 5) * R / theta**3
    assert c.attrs["t3_level"] == pytest.approx(level, rel=1e-14)
    assert 3 * float(4 * mp.pi**4 / 5) * R / theta**3 == pytest.approx(level, rel=1e-14)
    # C/T³ reaches the level at T ≪ θ: the first correction is ~x·e^(−x), x = 160 here
    assert c["C_over_T3"].iloc[0] == pytest.approx(level, rel=1e-12)
    # the Debye model's effective θ_D is θ at every T (common practice)
    np.testing.assert_allclose(c["theta_D"], theta, rtol=1e-9)
    assert c.attrs["units"]["C_over_T3"] == "J/(mol K^4)" and c.attrs["quantity"] == "C_v"


def test_t3_level_per_formula_unit_counts_the_atoms():
    c = temperature_curves(Debye(300.0, modes=6), [10.0])
    # reference: Debye's T³ law (common practice), 2 atoms per formula unit
    assert c.attrs["t3_level"] == pytest.approx(2 * 12 * math.pi**4 / 5 * R / 300.0**3, rel=1e-14)


def test_c_over_t_against_t_squared_is_the_line_gamma_plus_beta_t2():
    theta, gamma = 400.0, 2.5e-3
    T = np.linspace(0.5, 6.0, 25)  # T ≤ θ/65: Debye's law holds to ~e^(−65)
    c = temperature_curves(Debye(theta) + Electronic(gamma), T)
    beta = 12 * math.pi**4 / 5 * R / theta**3  # reference: Debye's T³ law (common practice)
    # reference: C = γT + βT³ gives C/T = γ + βT² (common practice)
    np.testing.assert_allclose(c["C_over_T"], gamma + beta * c["T2"], rtol=1e-12)
    slope, intercept = np.polyfit(c["T2"], c["C_over_T"], 1)
    assert slope == pytest.approx(beta, rel=1e-9) and intercept == pytest.approx(gamma, rel=1e-9)


def test_entropy_energy_free_energy_of_einstein_modes():
    theta, modes, T = 250.0, 3.0, np.array([30.0, 100.0, 400.0])
    c = temperature_curves(Einstein(theta, modes=modes), T)
    x = [mp.mpf(theta) / t for t in T]
    # reference: Einstein closed forms in mpmath (30 digits), zero point ½θ per mode included
    s = [float(modes * R * (xi / mp.expm1(xi) - mp.log1p(-mp.exp(-xi)))) for xi in x]
    u = [float(modes * R * theta * (mp.mpf(1) / 2 + 1 / mp.expm1(xi))) for xi in x]
    np.testing.assert_allclose(c["S"], s, rtol=1e-10)
    np.testing.assert_allclose(c["U"], u, rtol=1e-10)
    np.testing.assert_allclose(c["F"], np.array(u) - T * np.array(s), rtol=1e-10)
    np.testing.assert_allclose(c["C"], [mp_einstein_cv(theta, t, modes) * R for t in T], rtol=1e-10)


def test_data_curves_recover_theta_and_propagate_sigma():
    theta = 280.0
    T = np.array([3.0, 10.0, 30.0, 90.0])
    C = np.array([mp_debye_cv(theta, t) * R for t in T])  # reference data: mpmath Debye C_v, 1 atom
    sigma = 0.01 * C
    data = pd.DataFrame({"T": T, "C": C, "sigma": sigma})
    data.attrs["atoms"] = 1.0
    c = temperature_curves(data, theta_D0=theta)
    # reference: the mpmath Debye C_v was made with θ = 280 K, so θ_D(T) is 280 K throughout
    np.testing.assert_allclose(c["theta_D"], theta, rtol=1e-8)
    np.testing.assert_allclose(c["C_over_T3"], C / T**3, rtol=1e-15)
    np.testing.assert_allclose(c["C_over_T3_sigma"], sigma / T**3, rtol=1e-15)
    # reference: σ_θ = σ_C / |dC/dθ|, the derivative by mpmath differentiation of the quadrature
    slope = [float(mp.diff(lambda th: _mp_debye_cv(th, t), theta)) * R for t in T]
    np.testing.assert_allclose(c["theta_D_sigma"], sigma / np.abs(slope), rtol=1e-6)
    assert c.attrs["t3_level"] == pytest.approx(12 * math.pi**4 / 5 * R / theta**3, rel=1e-14)
    assert c.attrs["quantity"] == "measured" and "S" not in c


def test_data_above_dulong_petit_gives_nan_theta_with_the_warning():
    data = pd.DataFrame({"T": [300.0], "C": [3.2 * R], "sigma": [0.1]})
    with pytest.warns(NoDebyeTemperatureWarning):
        c = temperature_curves(data)
    assert np.isnan(c["theta_D"].iloc[0]) and np.isnan(c["theta_D_sigma"].iloc[0])
    assert np.isnan(c.attrs["t3_level"])


# --- contributions -----------------------------------------------------------------------------

def test_contributions_sum_to_the_total_and_match_closed_forms():
    T = np.array([0.0, 5.0, 50.0, 300.0])
    parts = contributions(MIX + Dilatation(1e-6), T)
    total = temperature_curves(MIX, T[1:])
    summed = parts.groupby("T", sort=True)[["C", "S"]].sum()
    # reference: the parts of a sum add up (common practice)
    np.testing.assert_allclose(summed.loc[T[1:], "C"], total["C"], rtol=1e-9)
    np.testing.assert_allclose(summed.loc[T[1:], "S"], total["S"], rtol=1e-9)
    elec = parts[parts["component"] == "electronic"]
    np.testing.assert_allclose(elec["C"], 1e-3 * T, rtol=1e-15)  # reference: C = γT (common practice)
    ein = parts[(parts["component"] == "einstein_2") & (parts["T"] > 0)]
    # reference: mpmath Einstein C_v (30 digits)
    np.testing.assert_allclose(ein["C"], [mp_einstein_cv(420.0, t, 3.0) * R for t in T[1:]], rtol=1e-9)
    assert (parts.loc[parts["component"] == "dilatation", "C"] == 0).all()
    assert list(parts.columns) == ["component", "T", "C", "S"]


# --- densities on a plotting grid ------------------------------------------------------------

def test_einstein_peak_keeps_its_modes_and_peaks_at_theta():
    theta, modes, width = 15.0, 3.0, 0.4  # THz
    kpu = sc.h * 1e12 / sc.k  # reference: scipy.constants, K per THz
    dos = plot_dos(Einstein(theta * kpu, modes=modes), unit="THz", width=width)
    step = dos.attrs["step"]
    assert len(dos) == MAX_POINTS
    # reference: the Gaussian integral (common practice) — the mode count is kept exactly
    assert dos["einstein"].sum() * step == pytest.approx(modes, rel=1e-13)
    peak = dos["frequency"].iloc[int(dos["einstein"].to_numpy().argmax())]
    assert abs(peak - theta) <= step / 2 + 1e-12
    # reference: peak height modes/(σ√(2π)) (Gaussian integral, common practice); averaging
    # over a bin of step ≈ σ/50 lowers it by ~(step/σ)²/24 ≈ 2e-5
    assert dos["einstein"].max() == pytest.approx(modes / (width * math.sqrt(2 * math.pi)), rel=1e-4)
    assert dos.attrs["broadening"]["shape"] == "gaussian" and dos.attrs["broadening"]["width"] == pytest.approx(width)


def test_mixture_dos_keeps_every_component_count():
    dos = plot_dos(MIX, unit="meV", points=700)
    step = dos.attrs["step"]
    # common practice: each vibrational component carries its modes; electronic terms none
    for name in ("debye", "sinechain", "einstein", "einstein_2", "band"):
        assert dos[name].sum() * step == pytest.approx(3.0, rel=1e-12)
    assert dos["total"].sum() * step == pytest.approx(15.0, rel=1e-12)
    np.testing.assert_allclose(dos["total"], dos[["debye", "sinechain", "einstein", "einstein_2", "band"]].sum(axis=1))
    assert "electronic" not in dos and dos.attrs["units"]["total"] == "modes/meV"
    assert (dos.to_numpy() >= 0).all() and np.isfinite(dos.to_numpy()).all()


def test_flat_band_is_flat_at_its_density():
    lo, hi, modes = 200.0, 600.0, 2.0
    dos = plot_dos(Band(lo, hi, modes=modes), unit="K", points=1000)
    inside = (dos["frequency"] > lo + 2 * dos.attrs["step"]) & (dos["frequency"] < hi - 2 * dos.attrs["step"])
    # closed form: a flat band holds modes/(θ_high − θ_low) per K (common practice)
    np.testing.assert_allclose(dos.loc[inside, "band"], modes / (hi - lo), rtol=1e-12)


def test_units_convert_with_scipy_constants():
    thz = plot_dos(MIX, unit="THz", points=400)
    # reference: scipy.constants — 1 THz = h·1e12/e meV = 1e12/(100 c) cm⁻¹ = h·1e12/k K
    for unit, per_thz in (("meV", sc.h * 1e12 / (sc.e * 1e-3)), ("cm-1", 1e12 / (100 * sc.c)), ("K", sc.h * 1e12 / sc.k)):
        other = plot_dos(MIX, unit=unit, points=400)
        np.testing.assert_allclose(other["frequency"], thz["frequency"] * per_thz, rtol=1e-12)
        np.testing.assert_allclose(other["total"], thz["total"] / per_thz, rtol=1e-9, atol=1e-15)


def test_reduced_dos_of_debye_is_the_debye_level_below_theta():
    theta_k, atoms = 350.0, 2.0
    red = reduced_dos(Debye(theta_k, modes=3 * atoms), unit="THz", points=800)
    theta = theta_k * sc.k / (sc.h * 1e12)  # reference: scipy.constants, θ in THz
    level = 9 * atoms / theta**3  # reference: the Debye density 9·atoms·ω²/θ³ (common practice)
    assert red.attrs["debye_level"] == pytest.approx(level, rel=1e-12)
    below = red["frequency"] < theta - red.attrs["step"]
    np.testing.assert_allclose(red.loc[below, "reduced"], level, rtol=1e-9)
    assert red.attrs["units"]["reduced"] == "modes/THz^3"


def test_spectrum_dos_is_rebinned_with_its_partials_and_mode_count():
    theta = 8.0  # THz
    f = np.linspace(0.0, theta, 801)
    g = 9 * f**2 / theta**3  # the Debye density (common practice), 1 atom
    sp = Spectrum(f, g, unit="THz", atoms=1, partials={"X": 0.25 * g, "Y": 0.75 * g}, low_t="fit")
    dos = plot_dos(sp, unit="THz", points=500)
    step = dos.attrs["step"]
    # common practice: 3 modes per atom, kept exactly on the grid; partials keep their shares
    assert dos["total"].sum() * step == pytest.approx(3.0, rel=1e-13)
    assert dos["X"].sum() * step == pytest.approx(0.75, rel=1e-6)
    red = reduced_dos(sp, unit="THz", points=500)
    inside = (red["frequency"] > 0.5) & (red["frequency"] < theta - step)
    # reference: flat Debye level; the display scale (trapezoid vs the engine's rule) is within ~1e-5
    np.testing.assert_allclose(red.loc[inside, "reduced"], 9 / theta**3, rtol=1e-4)
    assert red.attrs["debye_level"] == pytest.approx(9 / theta**3, rel=1e-4)


# --- bad input -----------------------------------------------------------------------------------

@pytest.mark.parametrize(
    "call",
    [
        lambda: plot_dos(MIX, points=MAX_POINTS + 1),
        lambda: plot_dos(MIX, points=1.5),
        lambda: plot_dos(MIX, width=0.0),
        lambda: plot_dos(MIX, width=float("nan")),
        lambda: plot_dos(MIX, unit="furlong"),
        lambda: plot_dos(Electronic(1e-3)),
        lambda: plot_dos("not a source"),
        lambda: plot_dos(Einstein(100.0, name="total")),
        lambda: reduced_dos(Mixture(())),
        lambda: temperature_curves(MIX, [0.0, 10.0]),
        lambda: temperature_curves(MIX, [10.0], theta_D0=300.0),
        lambda: temperature_curves(pd.DataFrame({"T": [1.0]}), None),
        lambda: temperature_curves(pd.DataFrame({"T": [1.0], "C": [1.0]}), [1.0]),
        lambda: temperature_curves(pd.DataFrame({"T": [1.0], "C": [1.0]}), theta_D0=-1.0),
        lambda: contributions("not a mixture", [1.0]),
        lambda: contributions(MIX, [-1.0]),
    ],
)
def test_bad_input_is_an_input_error(call):
    with pytest.raises(InputError):
        call()


# --- fuzz: any valid mixture keeps its modes, finite and non-negative, without warnings ----------

@settings(max_examples=60, deadline=None, derandomize=True)
@given(
    theta=st.floats(1e-3, 1e5),
    ratio=st.floats(1.0, 50.0),
    modes=st.floats(0.0, 30.0),
    dim=st.sampled_from([1, 2, 3]),
    points=st.integers(2, MAX_POINTS),
    width=st.one_of(st.none(), st.floats(1e-6, 1e3)),
    unit=st.sampled_from(["THz", "meV", "cm-1", "K", "rad/s"]),
)
def test_fuzz_plot_dos_keeps_the_mode_count(theta, ratio, modes, dim, points, width, unit):
    mix = SineChain(theta, modes=3.0, dim=dim) + Einstein(theta * ratio, modes=modes) + Band(0.0, theta * ratio, modes=1.0)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        dos = plot_dos(mix, unit=unit, points=points, width=width)
        red = reduced_dos(mix, unit=unit, points=points, width=width)
    values = dos.drop(columns="frequency").to_numpy()
    assert np.isfinite(values).all() and (values >= 0).all()
    # common practice: the components' modes, kept exactly on the grid
    assert dos["total"].sum() * dos.attrs["step"] == pytest.approx(4.0 + modes, rel=1e-9)
    assert np.isfinite(red["reduced"]).all()
