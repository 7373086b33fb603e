"""The heat-capacity → DOS inversion: synthetic round trips, the band, bad input.

The synthetic C(T) is built independently of modeheat: a Debye branch by mpmath
quadrature and an Einstein mode in closed form, with seeded 0.5 % noise.
"""

from __future__ import annotations

import functools
import math
import warnings

import mpmath
import numpy as np
import pandas as pd
import pytest
import scipy.constants

from modeheat import Cancelled, InputError, Spectrum, invert_heat_capacity
from modeheat.inversion import InversionWarning
from modeheat.units import R, kelvin_per

THETA_D, THETA_E = 200.0, 500.0  # K: Debye branch (3 modes) + Einstein mode (3 modes), atoms = 2
T_GRID = np.geomspace(2.0, 300.0, 150)
SEEDS = range(5)


def _debye_cv_mpmath(T: float, theta: float) -> float:
    # reference: mpmath quadrature of 9 (T/θ)³ ∫₀^{θ/T} x⁴eˣ/(eˣ−1)² dx, per 3 modes, in units of R
    xd = mpmath.mpf(theta) / T
    integral = mpmath.quad(lambda x: x**4 * mpmath.exp(x) / mpmath.expm1(x) ** 2, [0, xd])
    return float(9 * integral / xd**3)


def _einstein_cv(T: np.ndarray, theta: float) -> np.ndarray:
    # reference: the Einstein closed form x²eˣ/(eˣ−1)² per mode (common practice)
    x = theta / T
    return x**2 * np.exp(-x) / (-np.expm1(-x)) ** 2


@functools.lru_cache(maxsize=1)
def _truth() -> np.ndarray:
    """C_v in J/(mol K) of the Debye + Einstein solid at T_GRID (mpmath at 15 digits)."""
    mpmath.mp.dps = 15
    debye = np.array([_debye_cv_mpmath(float(t), THETA_D) for t in T_GRID])
    return R * (debye + 3.0 * _einstein_cv(T_GRID, THETA_E))


def _true_moment(n: int) -> float:
    # reference: closed forms of ⟨θⁿ⟩ — Debye: 3/(n+3)·θ_Dⁿ per mode; Einstein: θ_Eⁿ (common practice)
    mean = 0.5 * (3.0 / (n + 3.0) * THETA_D**n) + 0.5 * THETA_E**n
    return ((n + 3.0) / 3.0 * mean) ** (1.0 / n)


def _data(seed: int, *, sigma: bool = True) -> pd.DataFrame:
    C0 = _truth()
    s = 0.005 * C0
    C = C0 + s * np.random.default_rng(seed).standard_normal(C0.size)
    frame = pd.DataFrame({"T": T_GRID, "C": C, **({"sigma": s} if sigma else {})})
    frame.attrs["atoms"] = 2.0
    return frame


@functools.lru_cache(maxsize=None)
def _result(seed: int):
    return invert_heat_capacity(_data(seed), samples=20, seed=seed)


@pytest.mark.parametrize("seed", SEEDS)
def test_round_trip_fits_within_the_noise(seed):
    r = _result(seed)
    # χ²_red of the regularised fit: 150 points, ≈ 1 ± 0.3 (the spread of χ²/ν at ν ≈ 140
    # is ±0.12; a GCV-chosen smoother adds bias — band set from what the seeds give)
    assert 0.6 < r.chi2_red < 1.4
    assert np.isfinite(r.fitted[["C_model", "residual", "normalised"]].to_numpy()).all()
    assert r.spectrum.modes == pytest.approx(6.0, rel=1e-6)  # 3·atoms, common practice


@pytest.mark.parametrize("seed", SEEDS)
def test_round_trip_moments_within_5_percent(seed):
    table = _result(seed).moments.set_index("n")
    for n in (-2, 2):
        # reference: the closed-form moments of the Debye + Einstein truth (_true_moment)
        assert table.loc[n, "theta_D"] == pytest.approx(_true_moment(n), rel=0.05)


@pytest.mark.parametrize("seed", SEEDS)
def test_isolated_einstein_peak_position_and_weight(seed):
    r = _result(seed)
    theta = r.frequency * kelvin_per("THz")
    counts = r.density * np.diff(r.edges)
    # the Einstein peak lies well above the Debye cut-off (200 K): count the modes above 350 K
    peak = theta > 350.0
    weight = counts[peak].sum()
    centre = float(np.sum(counts[peak] * theta[peak]) / weight)
    assert centre == pytest.approx(THETA_E, rel=0.10)  # reference: the truth's θ_E (10 %, the target)
    assert weight == pytest.approx(3.0, rel=0.20)  # reference: the truth's 3 Einstein modes (20 %)


def test_band_covers_theta2_in_most_repeats():
    # θ(2), set by the high-T heat capacity, is resolvable; the resampling spread is
    # statistical only (no regularisation bias), so the check is at 2 standard errors (≈ 95 %)
    truth = _true_moment(2)  # reference: closed-form moments of the truth
    hits = 0
    for seed in SEEDS:
        row = _result(seed).moments.set_index("n").loc[2]
        hits += abs(row.theta_D - truth) <= 2.0 * row.stderr
    assert hits >= 0.8 * len(SEEDS)


def test_band_brackets_the_density_and_names_its_method():
    r = _result(0)
    assert "68 % resampling band" in r.band_method
    assert np.all(r.band_low <= r.band_high)
    assert "THz" in r.resolution and "gcv" in r.alpha_method
    assert "theta(+2)" in r.report()


def test_lcurve_prior_and_no_band():
    prior = Spectrum.from_histogram(np.linspace(0.1, 12.0, 40), np.ones(39), atoms=2.0)
    r = invert_heat_capacity(_data(1), method="lcurve", prior=prior, band="none", electronic="none")
    assert np.isnan(r.band_low).all() and np.isnan(r.gamma) and "L-curve" in r.alpha_method
    assert np.isnan(r.moments.stderr).all()
    assert r.chi2_red < 3.0  # the L-curve corner smooths more than GCV; a loose check of a sane fit


def test_missing_sigma_falls_back_with_a_warning():
    with pytest.warns(InversionWarning, match="1 %"):
        r = invert_heat_capacity(_data(2, sigma=False), band="none")
    assert np.isfinite(r.chi2_red)


def test_progress_and_cancel():
    seen = []
    invert_heat_capacity(_data(3), samples=3, progress=seen.append)
    assert seen[-1].done == seen[-1].total and [s.done for s in seen] == sorted(s.done for s in seen)
    with pytest.raises(Cancelled):
        invert_heat_capacity(_data(3), samples=3, progress=lambda step: False)


@pytest.mark.parametrize(
    "change, match",
    [
        (lambda d: d.iloc[:8], "at least 10 points"),
        (lambda d: d[(d["T"] > 100) & (d["T"] < 250)], "too narrow"),
        (lambda d: d.assign(C=np.where(d.index == 5, -1.0, d["C"])), "positive"),
    ],
)
def test_bad_data(change, match):
    with pytest.raises(InputError, match=match):
        invert_heat_capacity(change(_data(0)), band="none")


@pytest.mark.parametrize(
    "options",
    [{"method": "best"}, {"band": "bootstrap"}, {"electronic": -1.0}, {"samples": 1}, {"grid": [3.0, 2.0, 1.0, 0.5]}, {"prior": 5.0}],
)
def test_bad_options(options):
    with pytest.raises(InputError):
        invert_heat_capacity(_data(0), **options)


@pytest.mark.parametrize("width, inches", [("double", 7.0), ("single", 3.4)])
def test_inversion_figure_size(width, inches):
    from modeheat.figures import inversion_figure

    fig = inversion_figure(_result(0), width=width)
    assert fig.get_size_inches()[0] == pytest.approx(inches)  # journal column widths, common practice
    assert len(fig.axes) == 3


# --- C_p → C_v inside the inversion ---------------------------------------------------------
A_NL = 2e-6  # mol/J, an invented Nernst–Lindemann coefficient (C_p − C_v ≈ 2 % of C_p at 300 K)


def _cp_data(seed: int) -> pd.DataFrame:
    """C_p of the Debye + Einstein truth with seeded 0.5 % noise; σ given on C_p."""
    cv = _truth()
    # reference: the Nernst–Lindemann form C_p − C_v = A·C_p²·T solved for C_p in closed
    # form, C_p = 2C_v/(1 + √(1 − 4A·T·C_v)) (common practice)
    cp = 2.0 * cv / (1.0 + np.sqrt(1.0 - 4.0 * A_NL * T_GRID * cv))
    s = 0.005 * cp
    frame = pd.DataFrame({"T": T_GRID, "C": cp + s * np.random.default_rng(seed).standard_normal(cp.size), "sigma": s})
    frame.attrs["atoms"] = 2.0
    return frame


def test_cp_to_cv_nernst_lindemann_converts_data_and_sigma():
    data = _cp_data(0)
    r = invert_heat_capacity(data, band="none", cp_to_cv={"A": A_NL})
    cp, T = data["C"].to_numpy(), data["T"].to_numpy()
    # reference: Nernst–Lindemann C_v = C_p − A·C_p²·T and its slope dC_v/dC_p = 1 − 2A·T·C_p
    np.testing.assert_allclose(r.fitted["C"], cp - A_NL * cp**2 * T, rtol=1e-12)
    sigma_cv = data["sigma"].to_numpy() * (1.0 - 2.0 * A_NL * T * cp)
    np.testing.assert_allclose(r.fitted["normalised"], r.fitted["residual"] / sigma_cv, rtol=1e-9)
    table = r.moments.set_index("n")
    for n in (-2, 2):
        # reference: closed-form moments of the C_v truth — the conversion recovers the harmonic DOS
        assert table.loc[n, "theta_D"] == pytest.approx(_true_moment(n), rel=0.05)


def test_cp_to_cv_thermodynamic_identity():
    data = _cp_data(1)
    bulk, volume = 1.4e11, 7e-6  # invented: Pa, m³/mol
    # invented α_V(T) in 1/K following C_v (Grüneisen's rule), so C_p − C_v stays small at low T
    def alpha(t):
        return 5e-5 * np.interp(t, T_GRID, _truth()) / (6.0 * R)

    r = invert_heat_capacity(data, band="none",
                             cp_to_cv={"alpha": alpha, "bulk_modulus": bulk, "molar_volume": volume})
    T = data["T"].to_numpy()
    # reference: the thermodynamic identity C_p − C_v = α²·B·V·T (common practice); slope 1, σ unchanged
    np.testing.assert_allclose(r.fitted["C"], data["C"].to_numpy() - alpha(T) ** 2 * bulk * volume * T, rtol=1e-12)
    np.testing.assert_allclose(r.fitted["normalised"], r.fitted["residual"] / data["sigma"].to_numpy(), rtol=1e-9)


@pytest.mark.parametrize(
    "conversion, match",
    [({"A": 1.0}, "must be positive"), ({"B": 1.0}, "unknown keyword"), ([("A", 1e-6)], "mapping"),
     ({"alpha": 1e-5}, "one form")],
)
def test_cp_to_cv_bad_conversion(conversion, match):
    with pytest.raises(InputError, match=match):
        invert_heat_capacity(_cp_data(0), band="none", cp_to_cv=conversion)


# --- round trip from a lattice-model DOS ------------------------------------------------------
# The truth is the linear-tetrahedron DOS of an fcc nearest-neighbour spring model
# (modeheat.lattice, tested against elastic constants, the Debye ν² law and direct sums
# in test_lattice.py — the reference here); its C(T) is summed in this file from that DOS
# with the closed-form Einstein kernel, not by modeheat's thermodynamics.
T_LATTICE = np.geomspace(3.0, 300.0, 150)
# The bin edges stop at 12 THz (576 K, about 1.7× the model's 7 THz cut-off).  A grid up to
# 12·T_max = 3600 K let GCV spread modes far above the sharp cut-off (θ(2) came out 2–17 % high
# over the seeds); the default grid now stops at 3·θ_eff of the warm data (≈ 975 K here), and
# the test runs both.
LATTICE_GRID = np.geomspace(0.03, 12.0, 121)
K_PER_THZ = scipy.constants.h * 1e12 / scipy.constants.k  # scipy.constants (CODATA)


@pytest.fixture(scope="module")
def lattice_dos():
    from modeheat.lattice import CubicLattice, dos

    # invented test shape (copper-like scale); a 12³ mesh keeps this quick
    return dos(CubicLattice("fcc", 63.5, 3.61, 28.0), 12)


def _lattice_cv(spectrum) -> np.ndarray:
    """C_v in J/(mol K) at T_LATTICE: R ∫ g(ν) x²eˣ/(eˣ−1)² dν by the trapezoid rule (common practice)."""
    nu = np.asarray(spectrum.frequency)
    g = np.asarray(spectrum.density)
    x = nu[None, :] * K_PER_THZ / T_LATTICE[:, None]
    safe = np.where(x > 0, x, 1.0)
    kernel = np.where(x > 0, safe**2 * np.exp(-safe) / (-np.expm1(-safe)) ** 2, 1.0)  # → 1 as x → 0
    return R * np.trapezoid(g[None, :] * kernel, nu, axis=1)


@pytest.mark.parametrize("grid", [LATTICE_GRID, None], ids=["12 THz", "default"])
@pytest.mark.parametrize("seed", SEEDS)
def test_lattice_round_trip(lattice_dos, seed, grid):
    C0 = _lattice_cv(lattice_dos)
    s = 0.005 * C0
    data = pd.DataFrame({"T": T_LATTICE, "C": C0 + s * np.random.default_rng(seed).standard_normal(C0.size), "sigma": s})
    r = invert_heat_capacity(data, atoms=1.0, grid=grid, band="none", electronic="none")
    # χ²_red of the regularised fit at 150 points: the spread of χ²/ν is ±0.12 (0.81–1.15
    # measured over the seeds); the band
    # 0.6–1.4 allows a GCV-chosen smoother's bias, as for the Debye + Einstein truth
    assert 0.6 < r.chi2_red < 1.4
    table = r.moments.set_index("n")
    for n in (-2, 2):
        # reference: θ(n) of the lattice DOS (Spectrum.moment_debye_temperature of the tested lattice code)
        assert table.loc[n, "theta_D"] == pytest.approx(lattice_dos.moment_debye_temperature(n), rel=0.05)


def test_uncertainties_too_small_to_weight_are_refused():
    """A subnormal C with the 1 % fallback σ overflowed the weights (found by the fuzz
    target); like the fits, σ below 1e-30 J/(mol K) or 1e-12 of the largest C is refused."""
    T = np.geomspace(1.0, 30.0, 12)
    frame = pd.DataFrame({"T": T, "C": np.where(T < 29.0, 1e-3 * T**3, 2.2e-313)})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", InversionWarning)  # no sigma column: the documented fallback
        with pytest.raises(InputError, match="uncertainty .* below"):
            invert_heat_capacity(frame, atoms=1, band="none")


@pytest.mark.parametrize("low, high, tmax", [(150.0, 1200.0, 300.0), (300.0, 900.0, 300.0), (300.0, 900.0, 100.0),
                                              (200.0, 2500.0, 300.0)])
def test_default_grid_reaches_above_a_high_optical_mode(low, high, tmax):
    """The default upper edge (3·θ_eff of the warm data, at most 12·T_max) stays above every
    mode: an optical mode far above the acoustic ones leaves C short and raises θ_eff."""
    from modeheat.inversion import _default_top

    T = np.geomspace(2.0, tmax, 100)

    def einstein(theta):  # C/R of one mode, the closed form (common practice)
        x = theta / T
        return x**2 * np.exp(-x) / (-np.expm1(-x)) ** 2

    C = R * (3.0 * einstein(low) + 3.0 * einstein(high))  # two atoms: 3 modes at each θ
    top = _default_top(T, C, 2.0)
    assert top >= min(12.0 * tmax, 1.3 * high)
    assert top <= 12.0 * tmax
