"""Where the Debye model breaks down: the T³ law and a constant θ_D(T).

Reference for the T³ limit: the closed-form Debye heat capacity per mode
(modeheat.engine.special.debye_cv, itself checked against 30-digit mpmath quadrature in
tests/test_special.py), whose T → 0 limit is (4π⁴/5)(T/θ)³.  For a pure Debye solid
C/T³ falls 1 % below its limit at T = θ/11.49 (measured), not at the θ/50 often quoted
as a rule of thumb: that rule is about real solids, whose dispersion bends the DOS
away from ω² well below the cut-off.  A low Einstein mode ends the T³ law far
earlier.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy.optimize import brentq

from modeheat import CAUTION, Debye, Einstein, Electronic, heat_capacity, solid
from modeheat.engine import special
from modeheat import cp_from_cv
from modeheat.errors import InputError
from modeheat.fitting import debye_breakdown, low_temperature_fit
from modeheat.units import R

T3_LIMIT = 4 * math.pi**4 / 5  # lim x³·D(x), x = θ/T (Debye T³ law)


def _debye_t3_temperature(theta: float, tolerance: float) -> float:
    # reference: closed form, brentq on debye_cv(x)·x³/(4π⁴/5) = 1 − tolerance
    x = brentq(lambda x: float(special.debye_cv(x)) * x**3 / T3_LIMIT - (1 - tolerance), 1.0, 200.0, xtol=1e-14)
    return theta / x


@pytest.mark.parametrize("tolerance", [0.001, 0.01, 0.05])
def test_pure_debye_t3_law_and_constant_theta(tolerance):
    result = debye_breakdown(Debye(300.0), tolerance=tolerance)
    expected = _debye_t3_temperature(300.0, tolerance)
    assert math.isclose(result.t3_below, expected, rel_tol=1e-9)
    # a Debye solid's θ_D(T) is its θ at every T (definition): the range is everything
    # examined, and both ranges start at the first temperature examined
    assert result.theta_range == (result.examined[0], math.inf)
    assert result.t3_range == (result.examined[0], result.t3_below)
    assert math.isclose(result.theta_D0, 300.0, rel_tol=1e-12)
    assert result.gamma_subtracted is None


def test_one_percent_is_near_theta_over_11_5():
    # reference: closed form (module docstring); a rule-of-thumb θ/50 is far too low here
    assert 11.3 < 300.0 / debye_breakdown(Debye(300.0)).t3_below < 11.7


def test_an_einstein_mode_ends_the_t3_law_earlier():
    theta_d, theta_e = 300.0, 150.0
    mixture = solid(2, Debye(theta_d), [Einstein(theta_e)])
    pure = debye_breakdown(Debye(theta_d))
    mixed = debye_breakdown(mixture)
    assert mixed.t3_below < 0.5 * pure.t3_below
    # reference: closed forms: at the returned T the lattice C/T³ of 3 Debye modes
    # (special.debye_cv) plus 3 Einstein modes (special.einstein_cv) is 1 % above the
    # Debye T³ limit of the 3 acoustic modes
    t = mixed.t3_below
    c = 3 * special.debye_cv(theta_d / t) + 3 * special.einstein_cv(theta_e / t)
    limit = 3 * T3_LIMIT * (t / theta_d) ** 3
    assert math.isclose(float(c / limit), 1.01, rel_tol=1e-9)
    # θ_D(0) of 6 modes whose ω² part is the Debye branch (common practice:
    # (12π⁴/5)·atoms·R/θ_D(0)³ = the branch's T³ coefficient): θ_D(0) = θ·2^(1/3)
    assert math.isclose(mixed.theta_D0, theta_d * 2 ** (1 / 3), rel_tol=1e-12)
    low, high = mixed.theta_range
    assert low == mixed.examined[0] == mixed.table["T"].iloc[0] and high < 2 * t
    # at the end of the range the lattice C is that of a Debye solid with θ_D(0)·(1 ± 1 %)
    c_high = 3 * special.debye_cv(theta_d / high) + 3 * special.einstein_cv(theta_e / high)
    candidates = [6 * special.debye_cv(mixed.theta_D0 * (1 + s * 0.01) / high) for s in (-1, 1)]
    assert min(abs(float(c_high / k) - 1) for k in candidates) < 1e-8


def test_electronic_terms_are_left_out_of_a_model():
    plain = debye_breakdown(Debye(300.0))
    with_gamma = debye_breakdown(Debye(300.0) + Electronic(1e-3))
    assert with_gamma.t3_below == plain.t3_below
    assert any("electronic" in note for note in with_gamma.notes)


def test_a_rendered_spectrum_agrees_with_its_model():
    # The rendering matches the model's thermodynamics to ~1e-6 (models.py docstring).
    spectrum = Debye(300.0).spectrum()
    result = debye_breakdown(spectrum)
    assert math.isclose(result.t3_below, _debye_t3_temperature(300.0, 0.01), rel_tol=1e-4)
    assert result.theta_range == (result.examined[0], math.inf)
    assert list(result.table.columns) == ["T", "theta_D", "C_T3_ratio"]


def test_a_layer_solid_has_no_t3_law():
    result = debye_breakdown(Debye(300.0, dim=2))
    assert math.isnan(result.t3_below)
    assert any("ω²" in note for note in result.notes)


# --- measured data ------------------------------------------------------------------------------------
def _model_data(step=0.1, top=60.0):
    model = Debye(300.0) + Electronic(1e-3)  # invented
    T = np.arange(1.0, top + step / 2, step)
    return pd.DataFrame({"T": T, "C": heat_capacity(model, T)})


def test_data_subtract_a_fitted_gamma_and_say_so():
    data = _model_data()
    result = debye_breakdown(data, tmax=6.0)
    assert math.isclose(result.gamma_subtracted, 1e-3, rel_tol=1e-6)
    assert math.isclose(result.theta_D0, 300.0, rel_tol=1e-5)
    assert any("γT subtracted" in note for note in result.notes)
    # the closed-form value, to the 0.1 K spacing of the data
    assert abs(result.t3_below - _debye_t3_temperature(300.0, 0.01)) < 0.1
    assert result.theta_range == (1.0, math.inf)


def test_data_with_a_given_low_t_fit_or_gamma():
    data = _model_data()
    low_t = low_temperature_fit(data, tmax=6.0)
    a = debye_breakdown(data, low_t_fit=low_t)
    b = debye_breakdown(data, low_t_fit=low_t, gamma=1e-3)
    assert a.t3_below == pytest.approx(b.t3_below, rel=1e-4)
    assert b.gamma_subtracted == 1e-3 and any("given" in note for note in b.notes)


def test_noise_alone_does_not_end_the_t3_range():
    # Seeded synthetic data (invented), 0.3 % noise with sigma: the 2σ rule keeps
    # single noisy points from ending the range early.
    rng = np.random.default_rng(3)
    data = _model_data(step=0.5)
    sigma = 0.003 * data["C"]
    noisy = data.assign(C=data["C"] + sigma * rng.standard_normal(len(data)), sigma=sigma)
    result = debye_breakdown(noisy, tmax=8.0)
    assert abs(result.t3_below / _debye_t3_temperature(300.0, 0.01) - 1) < 0.2
    assert any("2σ" in note for note in result.notes)


def test_debye_temperature_absent_above_dulong_petit_counts_as_outside():
    # C_p above 3R (invented: a large Nernst–Lindemann dilatation term) has no θ_D
    T = np.linspace(2.0, 600.0, 300)
    data = pd.DataFrame({"T": T, "C": cp_from_cv(T, heat_capacity(Debye(300.0), T), A=1e-5)})
    result = debye_breakdown(data, tmax=6.0)
    assert 3 * R < data["C"].iloc[-1]
    assert result.table["theta_D"].isna().any()
    assert 0 < result.theta_range[1] < 300.0
    assert any("3·atoms·R" in note for note in result.notes)


def test_breakdown_errors():
    data = _model_data()
    with pytest.raises(InputError, match="pass low_t"):
        debye_breakdown(data)
    with pytest.raises(InputError, match="tolerance"):
        debye_breakdown(Debye(300.0), tolerance=0.0)
    with pytest.raises(InputError, match="for measured data"):
        debye_breakdown(Debye(300.0), gamma=1e-3)
    with pytest.raises(InputError, match="needs a Spectrum"):
        debye_breakdown([1, 2, 3])


# --- report and repr ------------------------------------------------------------------------------------
def test_ranges_start_at_the_first_temperature_examined():
    # given temperatures: the first one is where a range that holds there starts
    result = debye_breakdown(Debye(300.0), temperatures=np.geomspace(2.0, 600.0, 50))
    assert result.examined[0] == 2.0
    assert result.t3_range[0] == 2.0 and result.theta_range[0] == 2.0
    assert "holds from 2 K to" in result.report()
    # no T³ law at all: both ranges are (NaN, NaN), in words "does not hold"
    layer = debye_breakdown(Debye(300.0, dim=2))
    assert all(math.isnan(v) for v in layer.t3_range + layer.theta_range)
    assert "does not hold even at the lowest temperature examined" in layer.report()


def test_report_says_where_and_how_each_law_fails():
    mixed = debye_breakdown(solid(2, Debye(300.0), [Einstein(150.0)]))
    text = mixed.report()
    lo = mixed.examined[0]
    assert f"holds from {lo:.4g} K to {mixed.t3_below:.4g} K" in text
    assert f"holds from {lo:.4g} K to {mixed.theta_range[1]:.4g} K" in text
    # reference: closed forms, as in test_an_einstein_mode_ends_the_t3_law_earlier: the
    # Einstein modes add to the Debye T³ term, so C/T³ leaves its limit upwards and the
    # effective θ_D falls (a larger C is a lower Debye temperature)
    assert "above it C/T³ rises above its T → 0 limit" in text
    assert "above it θ_D(T) falls below its T → 0 limit" in text
    assert "tolerance 1 %" in text and "θ_D(0) = 377.98 K" in text  # 300·2^(1/3) K (common practice, as above)
    assert "note: lattice (vibrational) C_v" in text and text.endswith(CAUTION)
    pure = debye_breakdown(Debye(300.0)).report()
    # reference: closed form: x³·D(x) rises monotonically to 4π⁴/5 (special.debye_cv), so
    # C/T³ of a pure Debye solid leaves its limit downwards; θ_D never leaves
    assert "above it C/T³ falls below its T → 0 limit" in pure
    assert "through the highest temperature examined, 900 K" in pure  # 3 × θ, the default grid's end


def test_report_of_measured_data_names_the_subtracted_gamma():
    result = debye_breakdown(_model_data(), tmax=6.0)
    text = result.report()
    assert "holds from 1 K to" in text and "electronic γT subtracted first" in text


def test_repr_is_short_and_never_a_table():
    for result in (debye_breakdown(Debye(300.0)), debye_breakdown(_model_data(), tmax=6.0)):
        text = repr(result)
        assert len(text) < 200 and "\n" not in text and "C_T3_ratio" not in text
        assert text.startswith("<DebyeBreakdown θ_D(0) = 300 K, tolerance 1 %: T³ law ")
