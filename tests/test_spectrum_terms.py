"""A spectrum as a term of mixtures and fits (PhononDOS).

References, each named beside its check:

- the Sommerfeld term of conduction electrons, C = S = γT, U = γT²/2, F = −γT²/2
  (common practice);
- exact scaling of the Planck kernel x = ħω/kT: a spectrum whose frequencies are all
  multiplied by s is an independent construction (a new Spectrum on the scaled grid,
  its own nodes and continuation) of the scaled term;
- the Debye heat capacity by mpmath quadrature (30 digits) at the scaled θ_D, with the
  Nernst–Lindemann C_p − C_v = A·C_p²·T solved in closed form here, for the fits;
- 3 modes per atom and θ(n) = θ_D for every moment of a Debye spectrum (common practice).

The spectra are invented test shapes (a smooth two-hump density and a Debye ω² law).
"""

from __future__ import annotations

import copy
import json
import math
import pickle

import mpmath as mp
import numpy as np
import pandas as pd
import pytest
from scipy import constants

from modeheat import (
    Debye,
    Dilatation,
    Einstein,
    Electronic,
    InputError,
    Mixture,
    PhononDOS,
    Spectrum,
    fit,
    heat_capacity,
    solid,
    thermo,
)
from modeheat import representations as views
from modeheat.io.sessions import from_dict, to_dict

mp.mp.dps = 30
R = constants.R  # reference: scipy.constants (CODATA)
T = np.geomspace(0.5, 2000.0, 120)


def humps(scale: float = 1.0, low_t="auto") -> Spectrum:
    """An invented DOS of 2 atoms: an ω² bottom and two humps, on frequencies × scale."""
    nu = np.linspace(0.0, 8.0, 401)
    g = 0.3 * nu**2 * (nu < 6.5) + nu**2 * np.exp(-(((nu - 5.0) / 1.2) ** 2)) + 4.0 * np.exp(-(((nu - 7.2) / 0.3) ** 2))
    return Spectrum(nu * scale, g, unit="THz", atoms=2, low_t=low_t)


def debye_dos(theta: float) -> Spectrum:
    """An ω² density up to θ (K), one atom: exactly a Debye spectrum on a grid in K."""
    nu = np.linspace(0.0, theta, 301)
    return Spectrum(nu, nu**2, unit="K", atoms=1)


def test_spectrum_plus_electronic_adds_the_sommerfeld_term():
    sp = humps()
    gamma = 5e-3
    base = thermo(sp, T)
    for mixture in (sp + Electronic(gamma), Electronic(gamma) + sp, sum([sp + Electronic(gamma)])):
        got = thermo(mixture, T)
        # reference: Sommerfeld γT (common practice); exact but for the last bits of R·(c + γT/R)
        np.testing.assert_allclose(got["Cv"], base["Cv"] + gamma * T, rtol=1e-14, atol=0)
        np.testing.assert_allclose(got["S"], base["S"] + gamma * T, rtol=1e-14, atol=0)
        np.testing.assert_allclose(got["U"], base["U"] + 0.5 * gamma * T**2, rtol=1e-14, atol=0)
        np.testing.assert_allclose(got["F"], base["F"] - 0.5 * gamma * T**2, rtol=1e-13, atol=0)
        np.testing.assert_allclose(got["theta_D"], base["theta_D"], rtol=1e-14, atol=0)
    m = sp + Electronic(gamma) + Dilatation(1e-6)
    assert list(m.parameters) == ["dos.scale", "dos.modes", "electronic.gamma", "dilatation.A"]
    assert m.continuous_parameters() == ["dos.scale", "electronic.gamma", "dilatation.A"]
    assert m.modes == pytest.approx(6.0, rel=1e-15)  # common practice: 3 modes per atom


@pytest.mark.parametrize("s", [0.9, 1.04, 1.3])
@pytest.mark.parametrize("low_t", ["auto", "fit"])
def test_scaled_term_equals_the_spectrum_on_scaled_frequencies(s, low_t):
    term = PhononDOS(humps(low_t=low_t), scale=s)
    got = thermo(term, T)
    # reference: exact scaling of the Planck kernel x = ħω/kT — the spectrum rebuilt on
    # frequencies × s (its own nodes and low-T continuation)
    want = thermo(humps(s, low_t=low_t), T)
    for col in ("U", "F", "theta_D"):
        np.testing.assert_allclose(got[col], want[col], rtol=1e-10, atol=0)
    for col in ("Cv", "S"):
        # C and S fall to 1e-6 J/(mol K) at the lowest T; the FFT correlation's rounding
        # is absolute (engine docstring), ~2e-14 J/(mol K) in either construction
        np.testing.assert_allclose(got[col], want[col], rtol=1e-10, atol=1e-12)


def test_scaling_laws_of_u_s_f():
    # derived from x = θ/T: C(T; s) = C₀(T/s), S(T; s) = S₀(T/s), U(T; s) = s·U₀(T/s),
    # F(T; s) = s·F₀(T/s), zero point s·U₀(0); reference: the unscaled spectrum at T/s
    sp, s = humps(), 1.07
    got = thermo(PhononDOS(sp, scale=s), T)
    base = thermo(sp, T / s)
    np.testing.assert_allclose(got["Cv"], base["Cv"], rtol=1e-13)
    np.testing.assert_allclose(got["S"], base["S"], rtol=1e-13)
    np.testing.assert_allclose(got["U"], s * base["U"], rtol=1e-13)
    np.testing.assert_allclose(got["F"], s * base["F"], rtol=1e-13)
    assert got.attrs["zero_point_energy"] == pytest.approx(s * base.attrs["zero_point_energy"], rel=1e-14)


def test_moments_and_low_temperature_limit_scale_with_the_frequencies():
    term = PhononDOS(debye_dos(300.0), scale=1.04)
    for n in (-2, -1, 0, 1, 2):
        # common practice: every moment Debye temperature of a Debye spectrum is θ_D;
        # the sampled ω² density is exact (piecewise linear in g/ω²)
        assert term.moment_debye_temperature(n) == pytest.approx(312.0, rel=1e-9)
    assert term.moment_debye_temperature(-3) == pytest.approx(312.0, rel=1e-6)  # the fitted ω² law of the bottom
    theta_d = thermo(term, [0.3, 1.0]).theta_D
    np.testing.assert_allclose(theta_d, 312.0, rtol=1e-6)  # common practice: T³ law of a Debye solid


def test_mode_count_scales_the_term_and_is_checked_by_mixtures():
    sp = humps()
    half = PhononDOS(sp, modes=3.0)
    np.testing.assert_allclose(heat_capacity(half, T), 0.5 * heat_capacity(sp, T), rtol=1e-14)
    Mixture((sp,), atoms=2)  # common practice: 3 modes per atom, 6 for 2 atoms
    with pytest.raises(InputError, match="carries 9 vibrational modes"):
        Mixture((sp, Einstein(300.0, modes=3.0)), atoms=2)
    assert Mixture((half, Einstein(300.0, modes=3.0)), atoms=2).modes == pytest.approx(6.0)


def test_parameters_replace_and_solid():
    sp = humps()
    m = sp + Electronic(1e-3)
    changed = m.with_parameters({"dos.scale": 1.1, "dos.modes": 5.0})
    assert changed["dos"].scale == 1.1 and changed["dos"].modes == 5.0 and changed["dos"].spectrum is sp
    with pytest.raises(InputError, match="scale must be a positive number"):
        m.with_parameters({"dos.scale": 0.0})
    with pytest.raises(InputError, match="spectrum must be a Spectrum"):
        PhononDOS("dos.txt")
    with pytest.raises(InputError, match="scale × the highest mode"):
        PhononDOS(sp, scale=1e20)
    named = PhononDOS(sp, name="computed") + PhononDOS(sp, name="computed")
    assert [c.name for c in named] == ["computed", "computed_2"]
    # a spectrum of the optical branches shares the optical modes like any optical term
    s = solid(2, Debye(200.0), [sp, Einstein(400.0)], split=[2, 1], extras=[Electronic(1e-3)])
    assert isinstance(s["dos"], PhononDOS) and s["dos"].modes == pytest.approx(2.0)
    assert s.modes == pytest.approx(6.0)  # common practice: 3 modes per atom
    assert solid(1, sp).modes == pytest.approx(3.0)


def test_session_round_trip_pickle_and_copy():
    m = humps() + Electronic(2e-3) + Dilatation(1e-6)
    m = m.with_parameters({"dos.scale": 1.03})
    doc = json.loads(json.dumps(to_dict(m)))
    back = from_dict(doc)
    assert back == m and doc["components"][0]["kind"] == "dos"
    np.testing.assert_array_equal(thermo(back, T).to_numpy(), thermo(m, T).to_numpy())
    term = m["dos"]
    for other in (pickle.loads(pickle.dumps(term)), copy.deepcopy(term), PhononDOS.from_dict(term.to_dict())):
        assert other == term and hash(other) == hash(term)


def test_views_draw_the_term():
    sp = humps()
    m = PhononDOS(sp, scale=1.1) + Einstein(450.0, modes=1.0) + Electronic(1e-3)
    frame = views.plot_dos(m, points=800)
    step = frame.attrs["step"]
    # common practice: 3 modes per atom; the term carries all 6 of its spectrum
    assert frame["dos"].sum() * step == pytest.approx(6.0, rel=1e-12)
    assert frame.loc[frame["dos"] > 0, "frequency"].max() <= 8.0 * 1.1 + step
    parts = views.contributions(m, T)
    total = parts.groupby("T", sort=False)["C"].sum().to_numpy()
    np.testing.assert_allclose(total, heat_capacity(m, T), rtol=1e-12)
    rendered = m.spectrum()
    assert rendered.modes == pytest.approx(7.0)


# --- fits -------------------------------------------------------------------------------------------

def _debye_cv_mp(theta: float, temps: np.ndarray) -> np.ndarray:
    """3R·D(θ/T) per mole of atoms; reference: mpmath quadrature of 9(T/θ)³∫x⁴eˣ/(eˣ−1)² dx."""
    out = []
    for t in temps:
        xd = mp.mpf(theta) / mp.mpf(float(t))
        integral = mp.quad(lambda x: x**4 * mp.exp(-x) / (-mp.expm1(-x)) ** 2, [0, xd])
        out.append(float(9 * R * integral / xd**3))
    return np.array(out)


FIT_T = np.geomspace(3.0, 400.0, 300)
THETA, SCALE, GAMMA, A = 300.0, 1.04, 1.5e-3, 3e-6
_CV_TRUE = None


def synthetic_cp(seed: int) -> pd.DataFrame:
    """C_p of the Debye DOS on frequencies × 1.04 with γT and dilatation, 0.5 % seeded noise."""
    global _CV_TRUE
    if _CV_TRUE is None:
        _CV_TRUE = _debye_cv_mp(THETA * SCALE, FIT_T) + GAMMA * FIT_T
    cv = _CV_TRUE
    cp = 2.0 * cv / (1.0 + np.sqrt(1.0 - 4.0 * A * FIT_T * cv))  # Nernst–Lindemann root, closed form
    sigma = 0.005 * cp
    rng = np.random.default_rng(seed)
    return pd.DataFrame({"T": FIT_T, "C": cp + sigma * rng.standard_normal(FIT_T.size), "sigma": sigma})


def test_fit_recovers_the_frequency_scale():
    """Scale, γ and A fitted to 20 seeded noisy data sets; the errors are calibrated.

    Measured over seeds 1–20 (and 1–40: mean z 0.04, −0.11, −0.26; spread 0.95, 0.87,
    1.08; 97.5 %, 100 %, 92.5 % within 2σ), as Gaussian errors should be.
    """
    truth = {"dos.scale": SCALE, "electronic.gamma": GAMMA, "dilatation.A": A}
    z = []
    for seed in range(1, 21):
        start = debye_dos(THETA) + Electronic(5e-4) + Dilatation(1e-6)
        result = fit(start, synthetic_cp(seed))
        assert result.varied == ("dos.scale", "electronic.gamma", "dilatation.A")
        assert result.stderr["dos.scale"] < 2e-3
        z.append([(result.params[k] - v) / result.stderr[k] for k, v in truth.items()])
    z = np.array(z)
    # seeded 0.5 % noise: the truth within 2σ in each of the first seeds for the scale ...
    assert np.all(np.abs(z[:5, 0]) < 2.0), z[:5]
    # ... and, for every parameter, within 3σ always and within 2σ in ≥ 85 % of the 20 fits
    # (95 % expected; 85 % is the binomial 1 % tail), with no bias beyond 3σ of a mean of 20
    assert np.all(np.abs(z) < 3.0), z
    assert np.all(np.mean(np.abs(z) < 2.0, axis=0) >= 0.85), z
    assert np.all(np.abs(z.mean(axis=0)) < 3.0 / math.sqrt(20)), z.mean(axis=0)
    assert "dos.scale" in result.report()


def test_fit_of_a_spectrum_alone():
    data = synthetic_cp(7)
    cv_data = data[data["T"] <= 40.0]  # below 40 K γT and C_p − C_v are small beside the lattice
    result = fit(debye_dos(THETA), cv_data.assign(C=_CV_TRUE[: len(cv_data)] - GAMMA * cv_data["T"]))
    assert result.varied == ("dos.scale",)
    # reference: mpmath Debye C_v at θ·1.04 without noise; the engine's 1e-10 accuracy
    assert result.params["dos.scale"] == pytest.approx(SCALE, rel=1e-8)


def test_two_spectra_add_into_two_terms():
    """`dos_a + dos_b` is a mixture of two PhononDOS terms whose heat capacity is the sum
    (heat capacities of independent modes add: common practice); `spectrum + spectrum`
    used to be a TypeError."""
    a, b = humps(), debye_dos(300.0)
    mix = a + b
    assert [c.name for c in mix] == ["dos", "dos_2"] and mix.modes == pytest.approx(a.modes + b.modes)
    np.testing.assert_allclose(heat_capacity(mix, T), heat_capacity(a, T) + heat_capacity(b, T), rtol=1e-12)
    with pytest.raises(TypeError):
        a + "not a source"
