"""The one public θ_D(T) of a source: ``effective_debye_temperature(source, T)``.

References, each named beside its check:
- mpmath at 30 digits: the Einstein C_v in closed form and the Debye C_v by quadrature,
  inverted with mpmath's root finder — independent of modeheat's kernels and tables;
- definitions (common practice): θ_D(T) of a Debye solid is its θ at every T; far above
  every mode θ_D² → (5/3)⟨θ²⟩ (the Thirring high-temperature expansion).
"""

from __future__ import annotations

import math

import mpmath as mp
import numpy as np
import pytest

from modeheat import Debye, Einstein, Electronic, SineChain, effective_debye_temperature, thermo
from modeheat.errors import InputError, NoDebyeTemperatureWarning


def _mp_debye_cv(x):
    """Debye C_v per mode, (3/x³) ∫₀ˣ t⁴ eᵗ/(eᵗ − 1)² dt (reference: mpmath quadrature)."""
    x = mp.mpf(x)
    points = [0] + [p for p in (1, 10, 50) if p < x] + [x]
    return 3 / x**3 * mp.quad(lambda t: t**4 * mp.exp(-t) / (-mp.expm1(-t)) ** 2, points)


def _mp_einstein_cv(x):
    """Einstein C_v per mode, x² eˣ/(eˣ − 1)² (reference: closed form in mpmath)."""
    x = mp.mpf(x)
    return x**2 * mp.exp(-x) / (-mp.expm1(-x)) ** 2


@pytest.mark.parametrize("ratio", [0.05, 0.1, 0.3, 1.0, 3.0, 10.0, 19.0, 30.0, 200.0])
def test_einstein_solid_against_mpmath_inversion(ratio):
    theta_e = 240.0
    T = ratio * theta_e
    with mp.workdps(30):
        c = _mp_einstein_cv(theta_e / T)
        # reference: root of D(x) = C_E by bisection in ln x (D falls with x), to ~1e-14
        lo, hi = mp.log("1e-4"), mp.log("1e4")
        for _ in range(50):
            mid = (lo + hi) / 2
            lo, hi = (mid, hi) if _mp_debye_cv(mp.exp(mid)) > c else (lo, mid)
        x = mp.exp((lo + hi) / 2)
    got = effective_debye_temperature(Einstein(theta_e), [T])[0]
    # the inverse Debye table is ~1e-12 relative; above 20·θ_max the four-term moment
    # series is exact to ~(θ/T)^10
    assert got == pytest.approx(float(T * x), rel=1e-9)


def test_debye_solid_has_its_theta_at_every_temperature_and_at_zero():
    theta = 300.0
    T = np.array([0.0, 1e-3, 1.0, 30.0, 300.0, 5999.0, 6001.0, 1e5, 1e9])
    # common practice: the Debye temperature of a Debye solid is θ, T → 0 limit included
    assert effective_debye_temperature(Debye(theta), [0.0])[0] == pytest.approx(theta, rel=1e-12)
    # the inversion carries ~1e-12 relative; at 1e9 K the moment series' rounding ~1e-10
    np.testing.assert_allclose(effective_debye_temperature(Debye(theta), T), theta, rtol=1e-9)


def test_high_temperature_limit_is_the_thirring_moment():
    source = Debye(300.0, modes=3) + Einstein(180.0, modes=2) + Einstein(450.0, modes=1)
    # ⟨θ²⟩ of the modes by hand: a Debye branch's is (3/5)θ² (common practice), an Einstein mode's θ²
    mean_square = (3 * 0.6 * 300.0**2 + 2 * 180.0**2 + 450.0**2) / 6
    # common practice (Thirring): θ_∞² = (5/3)⟨θ²⟩; the next term is O((θ/T)²) ~ 1e-12 at 1e8 K
    assert effective_debye_temperature(source, [1e8])[0] == pytest.approx(math.sqrt(5 / 3 * mean_square), rel=1e-9)


def test_series_and_inversion_meet_at_twenty_theta_max():
    source = SineChain(250.0) + Einstein(400.0)
    edge = 20.0 * source.modeset().theta_max
    below, above = effective_debye_temperature(source, [edge * (1 - 1e-9), edge * (1 + 1e-9)])
    # the two methods describe one smooth curve: at the switch they differ by the inverse
    # table's error amplified by dC/dθ → 0 (1 − C/C_max ~ 1e-4 here), ~1e-8 relative
    assert below == pytest.approx(above, rel=1e-7)


def test_same_values_as_the_thermo_table_and_the_mode_set():
    source = Debye(300.0, modes=3) + Einstein(180.0, modes=3) + Electronic(1e-3)
    T = np.array([0.0, 0.5, 5.0, 50.0, 500.0, 5e4])
    theta = effective_debye_temperature(source, T)
    # one θ_D(T): the thermo column and the mode set's own method give the same floats
    np.testing.assert_array_equal(theta, thermo(source, T)["theta_D"].to_numpy())
    np.testing.assert_array_equal(theta, effective_debye_temperature(source.modeset(), T))
    assert theta.shape == T.shape


def test_source_form_errors_and_warnings():
    with pytest.raises(InputError, match="atoms"):
        effective_debye_temperature(Debye(300.0, modes=6), [10.0], atoms=1)
    # a source knows its own count: giving the same one is allowed
    effective_debye_temperature(Debye(300.0, modes=6), [10.0], atoms=2)
    with pytest.raises(InputError, match="temperature"):
        effective_debye_temperature(Debye(300.0), [-1.0])
    with pytest.warns(NoDebyeTemperatureWarning, match="no vibrational modes"):
        assert np.isnan(effective_debye_temperature(Electronic(1e-3), [1.0, 10.0])).all()
