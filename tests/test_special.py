"""Reference checks of the per-mode Einstein and Debye functions in modeheat.engine.special.

The main oracle is mpmath at 30 significant digits: adaptive quadrature of the
defining integrals for the Debye functions, and the closed forms for the Einstein
functions (with a quadrature of the thermodynamic identities as a second opinion).
Points run from x = 1e-6 (T ≫ θ) to x = 1e4 (T ≪ θ) and cluster around x = 2, where
the Debye functions switch from the Bernoulli series to the exponential tail sum,
and x = ln 2, where ln(1 − e^(−x)) switches formula.
"""

from __future__ import annotations

import math
import warnings
from functools import lru_cache

import mpmath as mp
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants

from modeheat.engine import special

mp.mp.dps = 30

RTOL = 1e-12
DIMS = (1, 2, 3)
TINY = mp.mpf("1e-300")  # below this a double has lost its relative precision

XS = sorted(
    set(np.logspace(-6, 4, 41).tolist())
    | {0.3, 0.69, math.log(2.0), 0.7, 1.0, 1.5, 1.9, 1.999999, 2.0, 2.000001, 2.1, 2.5, 2 * math.pi, 40.0, 700.0}
)

# Break the quadrature interval where the integrand changes scale, so that mp.quad
# never has to resolve e^(−t) decay across thousands of units in one piece.
_BREAKS = (1, 4, 16, 64, 256, 1024)


def _pieces(x: mp.mpf) -> list:
    return [mp.mpf(0)] + [mp.mpf(b) for b in _BREAKS if b < x] + [x]


@lru_cache(maxsize=None)
def ref_debye_function(x: float, n: int) -> mp.mpf:
    """D_n(x) = (n/xⁿ) ∫_0^x tⁿ/(eᵗ−1) dt by mpmath quadrature."""
    X = mp.mpf(x)
    return n / X**n * mp.quad(lambda t: t**n / mp.expm1(t), _pieces(X))


@lru_cache(maxsize=None)
def ref_debye_cv(x: float, n: int) -> mp.mpf:
    """(n/xⁿ) ∫_0^x t^(n+1) eᵗ/(eᵗ−1)² dt, with eᵗ/(eᵗ−1)² = 1/(4 sinh²(t/2))."""
    X = mp.mpf(x)
    return n / X**n * mp.quad(lambda t: t ** (n + 1) / (4 * mp.sinh(t / 2) ** 2), _pieces(X))


def ref_log_one_minus_exp(x: float) -> mp.mpf:
    # log1p keeps every digit where e^(−x) is tiny; log(−expm1(−x)) would not at 30 digits.
    return mp.log1p(-mp.exp(-mp.mpf(x)))


def ref_einstein(name: str, x: float) -> mp.mpf:
    X = mp.mpf(x)
    bose = X / mp.expm1(X)
    return {
        "cv": X**2 * mp.exp(X) / mp.expm1(X) ** 2,
        "energy": bose,
        "free_energy": ref_log_one_minus_exp(x),
        "entropy": bose - ref_log_one_minus_exp(x),
    }[name]


def ref_debye(name: str, x: float, n: int) -> mp.mpf:
    if name == "cv":
        return ref_debye_cv(x, n)
    d = ref_debye_function(x, n)
    return {
        "energy": d,
        "entropy": (n + 1) * d / n - ref_log_one_minus_exp(x),
        "free_energy": ref_log_one_minus_exp(x) - d / n,
    }[name]


def assert_close(got: float, ref: mp.mpf, rtol: float = RTOL) -> None:
    err = abs((mp.mpf(float(got)) - ref) / ref)
    assert err <= rtol, f"got {float(got)!r}, reference {mp.nstr(ref, 20)}, relative error {float(err):.2e}"


# --- Einstein functions -----------------------------------------------------------

EINSTEIN = {
    "cv": special.einstein_cv,
    "energy": special.einstein_energy,
    "free_energy": special.einstein_free_energy,
    "entropy": special.einstein_entropy,
}


@pytest.mark.parametrize("name", sorted(EINSTEIN))
def test_einstein_against_mpmath(name):
    # reference: mpmath closed forms at 30 digits
    got = EINSTEIN[name](np.array(XS))
    for x, g in zip(XS, got):
        ref = ref_einstein(name, x)
        if abs(ref) < TINY:
            # underflows in double (x ≳ 690): no digits to compare, only that it is ~0
            assert abs(g) < 1e-299
            continue
        assert_close(g, ref)


@pytest.mark.parametrize("x", [1e-4, 0.05, 0.7, 2.0, 5.0, 30.0])
def test_einstein_entropy_and_energy_from_heat_capacity(x):
    # reference: mpmath quadrature at 30 digits of the thermodynamic identities
    # S = ∫_0^T C/T' dT' and U_th = ∫_0^T C dT', i.e. with t = θ/T':
    # S/k = ∫_x^∞ C_E(t)/t dt and U_th/(kT) = x ∫_x^∞ C_E(t)/t² dt.
    X = mp.mpf(x)
    ce = lambda t: t**2 / (4 * mp.sinh(t / 2) ** 2)  # noqa: E731
    s = mp.quad(lambda t: ce(t) / t, [X, X + 1, X + 10, X + 100, mp.inf])
    u = X * mp.quad(lambda t: ce(t) / t**2, [X, X + 1, X + 10, X + 100, mp.inf])
    assert_close(special.einstein_entropy(x), s)
    assert_close(special.einstein_energy(x), u)


def test_einstein_limits():
    # common practice: one classical mode has C = k, U_th = kT; a frozen mode has none
    x = np.array([0.0, np.inf])
    np.testing.assert_array_equal(special.einstein_cv(x), [1.0, 0.0])
    np.testing.assert_array_equal(special.einstein_energy(x), [1.0, 0.0])
    np.testing.assert_array_equal(special.einstein_free_energy(x), [-np.inf, 0.0])
    np.testing.assert_array_equal(special.einstein_entropy(x), [np.inf, 0.0])


# --- Debye functions --------------------------------------------------------------

DEBYE = {
    "cv": special.debye_cv,
    "energy": special.debye_energy,
    "free_energy": special.debye_free_energy,
    "entropy": special.debye_entropy,
}


@pytest.mark.parametrize("dim", DIMS)
@pytest.mark.parametrize("name", sorted(DEBYE))
def test_debye_against_mpmath_quadrature(name, dim):
    # reference: mpmath quadrature at 30 digits of (dim/x^dim)∫_0^x …
    got = DEBYE[name](np.array(XS), dim)
    for x, g in zip(XS, got):
        assert_close(g, ref_debye(name, x, dim))


@pytest.mark.parametrize("dim", DIMS)
def test_debye_integral_is_the_debye_energy(dim):
    # reference: mpmath quadrature at 30 digits
    got = special.debye_integral(np.array(XS), dim)
    for x, g in zip(XS, got):
        assert_close(g, ref_debye_function(x, dim))


@pytest.mark.parametrize("dim", DIMS)
@pytest.mark.parametrize("x", [0.5, 1.9, 2.1, 7.0, 60.0])
def test_debye_function_through_polylogarithms(x, dim):
    # reference: closed form via mpmath polylog at 40 digits (a second opinion):
    # ∫_0^x tⁿ/(eᵗ−1) dt = n! ζ(n+1) − Σ_{k=0}^{n} n!/(n−k)! x^(n−k) Li_{k+1}(e^(−x))
    with mp.workdps(40):
        X, n = mp.mpf(x), dim
        q = mp.exp(-X)
        tail = sum(mp.factorial(n) / mp.factorial(n - k) * X ** (n - k) * mp.polylog(k + 1, q) for k in range(n + 1))
        d = n / X**n * (mp.factorial(n) * mp.zeta(n + 1) - tail)
    assert_close(special.debye_energy(x, dim), d)


def test_debye_limits():
    # common practice: D_n(0) = 1 (classical), D_n(∞) = 0 (frozen)
    for dim in DIMS:
        x = np.array([0.0, np.inf])
        np.testing.assert_array_equal(special.debye_cv(x, dim), [1.0, 0.0])
        np.testing.assert_array_equal(special.debye_energy(x, dim), [1.0, 0.0])
        np.testing.assert_array_equal(special.debye_entropy(x, dim), [np.inf, 0.0])
        np.testing.assert_array_equal(special.debye_free_energy(x, dim), [-np.inf, 0.0])


# --- published results and limiting laws -----------------------------------------

def test_debye_t3_integral():
    # reference: ∫_0^∞ x⁴eˣ/(eˣ−1)² dx = 4π⁴/15 (Γ(5)ζ(4), Abramowitz & Stegun 23.2.7
    # after one integration by parts; from memory), checked by mpmath quadrature too
    exact = 4 * mp.pi**4 / 15
    quad = mp.quad(lambda t: t**4 / (4 * mp.sinh(t / 2) ** 2), [0, 1, 10, 100, mp.inf])
    assert abs(quad / exact - 1) < mp.mpf("1e-25")
    # far below θ the integral to x is the integral to ∞ (the rest is ~x⁴e^(−x))
    x = 1e3
    assert_close(special.debye_cv(x) * x**3 / 3, exact)


def test_low_temperature_t3_law_coefficient():
    # reference: C_v = (12π⁴/5) R (T/θ)³ ≈ 1943.77 (T/θ)³ J/(mol K) (the Debye T³ law;
    # the value 1943.77 from memory), R from scipy.constants (CODATA)
    coefficient = 12 * math.pi**4 / 5 * constants.R
    assert round(coefficient, 2) == 1943.77
    for x in (50.0, 200.0, 1e3, 1e4):
        # C_v/(3R) per mode → (4π⁴/5)/x³; e^(−50)-sized corrections are below the tolerance
        assert 3 * constants.R * special.debye_cv(x) == pytest.approx(coefficient / x**3, rel=1e-12)


@pytest.mark.parametrize("dim", DIMS)
def test_low_temperature_law_any_dimension(dim):
    # reference: ∫_0^∞ t^(d+1)eᵗ/(eᵗ−1)² dt = (d+1)! ζ(d+1) (Abramowitz & Stegun 23.2.7 by
    # parts; from memory), so C/k per mode → d·(d+1)!·ζ(d+1)/x^d ∝ T^d; ζ from mpmath
    coefficient = float(dim * mp.factorial(dim + 1) * mp.zeta(dim + 1))
    for x in (100.0, 1e3, 1e4):
        assert special.debye_cv(x, dim) * x**dim == pytest.approx(coefficient, rel=1e-12)


def test_dulong_petit():
    # common practice: C_v → 3R per mole of atoms (1 per mode) as T → ∞
    assert special.debye_cv(0.0) == 1.0
    for x in (1e-6, 1e-4):
        assert special.debye_cv(x) == pytest.approx(1.0, abs=x * x / 19)


@pytest.mark.parametrize("x", [1e-3, 1e-2, 0.05, 0.1, 0.3])
def test_small_x_series(x):
    # reference: C_v/3R = 1 − x²/20 + x⁴/560 − x⁶/18144 + …, the Bernoulli series of
    # Abramowitz & Stegun 27.1.1 differentiated term by term (derivable); the bound is
    # the first omitted term
    series = 1 - x**2 / 20 + x**4 / 560
    assert abs(special.debye_cv(x) - series) <= 1.01 * x**6 / 18144 + 2e-16


# --- inverse ----------------------------------------------------------------------

INVERSE_XS = np.logspace(-3, 3, 121)


@pytest.mark.parametrize("dim", DIMS)
def test_inverse_round_trip(dim):
    # reference: the forward function (checked above against mpmath)
    x = special.debye_cv_inverse(special.debye_cv(INVERSE_XS, dim), dim)
    np.testing.assert_allclose(x, INVERSE_XS, rtol=1e-9)


@settings(derandomize=True, max_examples=200, deadline=None)
@given(st.floats(min_value=-3.0, max_value=3.0), st.sampled_from(DIMS))
def test_inverse_round_trip_property(log10_x, dim):
    # reference: the forward function; derandomized so the run is reproducible
    x = 10.0**log10_x
    assert special.debye_cv_inverse(special.debye_cv(x, dim), dim) == pytest.approx(x, rel=1e-9)


@pytest.mark.parametrize("dim", DIMS)
def test_inverse_outside_range_is_nan(dim):
    # common practice: a heat capacity per mode outside (0, 1) has no Debye temperature
    c = np.array([-1.0, 0.0, 1.0, 1.0 + 1e-12, 2.0, np.inf, -np.inf, np.nan])
    assert np.all(np.isnan(special.debye_cv_inverse(c, dim)))


def test_no_runtime_warnings_at_the_edges():
    # common practice: limits and frozen-out values must come without floating-point warnings
    x = np.array([0.0, np.inf, 1e4])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        # numpy's defaults, stated here: divide, overflow and invalid warn; underflow is silent
        with np.errstate(divide="warn", over="warn", invalid="warn", under="ignore"):
            for f in EINSTEIN.values():
                f(x)
            for dim in DIMS:
                for f in DEBYE.values():
                    f(x, dim)
                special.debye_integral(x, dim)
                special.debye_cv_derivative(x, dim)
                c = special.debye_cv(x, dim)
                back = special.debye_cv_inverse(c, dim)
                assert np.isnan(back[0]) and np.isnan(back[1])  # c = 1 and c = 0
                assert back[2] == pytest.approx(1e4, rel=1e-9)


def test_inverse_of_subnormal_heat_capacity_is_finite():
    # common practice: C_v/k ≈ (4π⁴/5)/x³ far below θ; a subnormal C must not overflow
    x = special.debye_cv_inverse(np.array([5e-324, 1e-310, 1e-300]))
    assert np.all(np.isfinite(x))
    assert x[2] == pytest.approx((4 * math.pi**4 / 5 / 1e-300) ** (1 / 3), rel=1e-12)
