"""C_p ↔ C_v: the thermodynamic identity, the Grüneisen form and Nernst–Lindemann; Dilatation."""

from __future__ import annotations

import math

import numpy as np
import pytest

from modeheat import Debye, Electronic, heat_capacity
from modeheat import cp_from_cv, cv_from_cp, nernst_lindemann_coefficient
from modeheat.errors import InputError
from modeheat.models import Dilatation, Mixture

# Invented test values (orders of magnitude of a metal near room temperature).
T = np.array([10.0, 50.0, 100.0, 300.0, 800.0])
CV = np.array([0.2, 8.0, 16.0, 24.0, 24.8])  # J/(mol K)
ALPHA = 5.0e-5  # 1/K, volumetric
BULK = 1.0e11  # Pa
VOLUME = 1.0e-5  # m³/mol
FORMS = {
    "identity": dict(alpha=ALPHA, bulk_modulus=BULK, molar_volume=VOLUME),
    "gruneisen": dict(alpha=ALPHA, gruneisen=2.0),
    "nernst-lindemann": dict(A=4.0e-6),
}


@pytest.mark.parametrize("form", list(FORMS))
def test_round_trips_are_exact(form):
    # reference: the forms are algebraic inverses of each other; only rounding remains
    kw = FORMS[form]
    cp = cp_from_cv(T, CV, **kw)
    assert np.all(cp > CV)
    np.testing.assert_allclose(cv_from_cp(T, cp, **kw), CV, rtol=4e-16, atol=0)
    np.testing.assert_allclose(cp_from_cv(T, cv_from_cp(T, cp, **kw), **kw), cp, rtol=4e-16, atol=0)


def test_identity_against_a_hand_calculation():
    # Hand calculation: α²·B·V·T = (3e-5 1/K)²·1e11 Pa·1e-5 m³/mol·300 K
    #   = 9e-10 · 1e11 · 1e-5 · 300 = 0.27 J/(mol K)
    cp = cp_from_cv(300.0, 24.0, alpha=3e-5, bulk_modulus=1e11, molar_volume=1e-5)
    assert math.isclose(float(cp) - 24.0, 0.27, rel_tol=1e-12)
    assert math.isclose(float(cv_from_cp(300.0, 24.27, alpha=3e-5, bulk_modulus=1e11, molar_volume=1e-5)), 24.0,
                        rel_tol=1e-14)


def test_gruneisen_form_equals_identity_with_the_thermodynamic_gruneisen_parameter():
    # Published relation: the thermodynamic Grüneisen parameter γ = α·B_T·V/C_v makes
    # C_p = C_v(1 + αγT) the identity C_p − C_v = α²·B_T·V·T exactly.
    gamma = ALPHA * BULK * VOLUME / CV
    via_gruneisen = cp_from_cv(T, CV, alpha=ALPHA, gruneisen=gamma)
    via_identity = cp_from_cv(T, CV, **FORMS["identity"])
    np.testing.assert_allclose(via_gruneisen, via_identity, rtol=1e-14)


def test_nernst_lindemann_coefficient_reproduces_the_identity_at_its_reference():
    # Nernst & Lindemann (1911): A = α²BV/C_p² makes A·C_p²·T = α²BVT at the reference T
    t_ref, cp_ref = 298.15, 24.4
    A = nernst_lindemann_coefficient(t_ref, cp_ref, alpha=ALPHA, bulk_modulus=BULK, molar_volume=VOLUME)
    assert math.isclose(A, ALPHA**2 * BULK * VOLUME / cp_ref**2, rel_tol=1e-15)  # mol/J
    by_nl = cv_from_cp(t_ref, cp_ref, A=A)
    by_identity = cv_from_cp(t_ref, cp_ref, **FORMS["identity"])
    assert math.isclose(float(by_nl), float(by_identity), rel_tol=1e-14)
    # ... and cp_from_cv solves that quadratic back to cp_ref
    assert math.isclose(float(cp_from_cv(t_ref, by_nl, A=A)), cp_ref, rel_tol=1e-14)


def test_coefficients_may_depend_on_temperature():
    # α(T) as a callable of T: the identity then uses α(T)² at each T (hand check at two T)
    alpha = lambda t: ALPHA * np.asarray(t) / 300.0  # noqa: E731  (invented shape)
    cp = cp_from_cv(T, CV, alpha=alpha, bulk_modulus=BULK, molar_volume=VOLUME)
    np.testing.assert_allclose(cp, CV + (ALPHA * T / 300.0) ** 2 * BULK * VOLUME * T, rtol=1e-15)
    arrays = cp_from_cv(T, CV, alpha=ALPHA * T / 300.0, bulk_modulus=np.full(T.size, BULK), molar_volume=VOLUME)
    np.testing.assert_array_equal(arrays, cp)


def test_nernst_lindemann_at_small_a_keeps_precision():
    # reference: the series C_p = C_v + A·T·C_v² + 2(A·T)²·C_v³ + … of the quadratic's root
    a = 1e-12
    cp = cp_from_cv(T, CV, A=a)
    series = CV + a * T * CV**2 + 2 * (a * T) ** 2 * CV**3
    np.testing.assert_allclose(cp, series, rtol=1e-15)


def test_bad_arguments():
    with pytest.raises(InputError, match="give one form"):
        cp_from_cv(T, CV)
    with pytest.raises(InputError, match="give one form"):
        cp_from_cv(T, CV, A=1e-6, gruneisen=2.0, alpha=ALPHA)
    with pytest.raises(InputError, match="needs alpha, bulk_modulus and molar_volume"):
        cv_from_cp(T, CV, bulk_modulus=BULK)
    with pytest.raises(InputError, match="needs alpha and gruneisen"):
        cv_from_cp(T, CV, gruneisen=2.0)
    with pytest.raises(InputError, match="A too large"):
        cp_from_cv(T, CV, A=1.0)
    with pytest.raises(InputError, match="must be finite"):
        cp_from_cv(T, CV, A=math.nan)


# --- the Dilatation component -------------------------------------------------------------------------
def test_dilatation_sits_in_a_mixture_and_leaves_cv_alone():
    model = Debye(300.0) + Electronic(1e-3) + Dilatation(4e-6)
    assert model.parameters["dilatation.A"] == 4e-6
    assert "dilatation.A" in model.continuous_parameters()
    assert model.modes == 3.0
    plain = Debye(300.0) + Electronic(1e-3)
    # reference: C_v does not see the dilatation term (it carries no modes and no C_v)
    np.testing.assert_array_equal(heat_capacity(model, T), heat_capacity(plain, T))
    cv = heat_capacity(plain, T)
    np.testing.assert_array_equal(model["dilatation"].cp_from_cv(T, cv), cp_from_cv(T, cv, A=4e-6))
    assert Mixture((Dilatation(0.0),)).modes == 0.0


def test_dilatation_validates_itself():
    with pytest.raises(InputError, match="A must be ≥ 0"):
        Dilatation(-1e-6)
    assert Dilatation(2e-6).replace(A=3e-6).A == 3e-6
