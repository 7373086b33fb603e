"""Model components and mixtures against closed forms and high-precision quadrature.

References, each named beside its check:
- Debye low-temperature laws C/(N k) → d·(d+1)!·ζ(d+1)·(T/θ)^d for dim d (published:
  the Debye model in d dimensions; ζ from mpmath);
- the nearest-neighbour linear chain g(ω) = (2/π)/√(ω_max² − ω²) (published), integrated
  with mpmath after ω = ω_max·sin φ removes the square-root singularity;
- mpmath quadrature (30 digits) of the defining integrals for sine chains and bands;
- the Einstein model (closed form), the Sommerfeld electronic term γT (published), and
  the two-level Schottky anomaly (closed form; peak position found with mpmath);
- moment Debye temperatures (Barron, Berg & Morrison, Proc. R. Soc. A 242, 478 (1957)).
"""

from __future__ import annotations

import math
import warnings

import mpmath as mp
import numpy as np
import pytest
from scipy import constants

from modeheat import (
    Band,
    Debye,
    Einstein,
    Electronic,
    InputError,
    Mixture,
    ModeCountWarning,
    NoDebyeTemperatureWarning,
    Schottky,
    SineChain,
    entropy,
    free_energy,
    heat_capacity,
    internal_energy,
    solid,
    thermo,
    zero_point_energy,
)
from modeheat.engine.special import debye_cv, einstein_cv

R = constants.R
mp.mp.dps = 30


def mp_cv(x):
    return x**2 * mp.exp(-x) / (-mp.expm1(-x)) ** 2


def mp_s(x):
    return x / mp.expm1(x) - mp.log1p(-mp.exp(-x))


def mp_u(x):  # thermal energy per mode / kT
    return x / mp.expm1(x)


# --- Debye in 1, 2, 3 dimensions ---------------------------------------------------------

@pytest.mark.parametrize("dim", [1, 2, 3])
def test_debye_low_temperature_laws(dim):
    theta, T = 300.0, np.array([0.03, 0.3])
    coeff = dim * math.factorial(dim + 1) * float(mp.zeta(dim + 1))
    # published: C/(N k) = d (d+1)! ζ(d+1) (T/θ)^d at T ≪ θ (mpmath ζ)
    got = heat_capacity(Debye(theta, modes=3, dim=dim), T) / (3 * R)
    assert np.allclose(got, coeff * (T / theta) ** dim, rtol=1e-6)


def test_debye_closed_form_and_zero_point():
    d = Debye(250.0, modes=6)
    T = np.array([0.0, 5.0, 50.0, 500.0])
    # reference: closed-form Debye functions (checked against mpmath in test_special.py)
    assert np.allclose(heat_capacity(d, T[1:]), 6 * R * debye_cv(250.0 / T[1:]), rtol=1e-14)
    # published: Debye zero-point energy (9/8) N k θ_D, i.e. (3/8) k θ_D per mode
    assert zero_point_energy(d) == pytest.approx(6 * R * 3 / 8 * 250.0, rel=1e-14)
    assert internal_energy(d, [0.0])[0] == pytest.approx(zero_point_energy(d))


# --- sine chains ---------------------------------------------------------------------------

@pytest.mark.parametrize("T", [1.0, 6.0, 30.0, 150.0, 300.0, 2000.0])
def test_linear_chain_against_analytic_dos(T):
    theta = 300.0
    X = mp.mpf(theta) / T
    # published: nearest-neighbour chain g(ω) = (2/π)/√(ω_max² − ω²); with ω = ω_max sin φ,
    # C/k = (2/π) ∫_0^{π/2} cv_E(x_max sin φ) dφ (mpmath, 30 digits)
    ref_cv = 2 / mp.pi * mp.quad(lambda p: mp_cv(X * mp.sin(p)), [0, mp.pi / 8, mp.pi / 4, mp.pi / 2])
    ref_s = 2 / mp.pi * mp.quad(lambda p: mp_s(X * mp.sin(p)), [0, mp.pi / 8, mp.pi / 4, mp.pi / 2])
    chain = SineChain(theta, modes=1, dim=1)
    assert heat_capacity(chain, T)[0] / R == pytest.approx(float(ref_cv), rel=1e-10)
    assert entropy(chain, T)[0] / R == pytest.approx(float(ref_s), rel=1e-10)


@pytest.mark.parametrize("dim", [2, 3])
@pytest.mark.parametrize("T", [2.0, 20.0, 200.0, 2000.0])
def test_sine_chain_in_higher_dimensions(dim, T):
    theta = 400.0
    X = mp.mpf(theta) / T

    def avg(fn):
        return mp.quad(lambda s: dim * s ** (dim - 1) * fn(X * mp.sin(mp.pi * s / 2)), [0, 0.05, 0.2, 0.5, 1])

    c = SineChain(theta, modes=2, dim=dim)
    # reference: mpmath quadrature over the k-sphere, s = k/k_max with weight d s^(d−1)
    assert heat_capacity(c, T)[0] / (2 * R) == pytest.approx(float(avg(mp_cv)), rel=1e-10)
    assert entropy(c, T)[0] / (2 * R) == pytest.approx(float(avg(mp_s)), rel=1e-10)
    u_th = internal_energy(c, T)[0] - zero_point_energy(c)
    assert u_th / (2 * R * T) == pytest.approx(float(avg(mp_u)), rel=1e-10)


def test_sine_chain_low_temperature_is_debye_with_pi_over_two():
    # common practice: at small k, ω ≈ ω_max·(π/2)·k/k_max, a Debye branch with θ = πθ_max/2
    c = SineChain(300.0, modes=3)
    assert c.moment_debye_temperature(-3) == pytest.approx(math.pi / 2 * 300.0, rel=1e-12)
    T = 0.05
    assert heat_capacity(c, T)[0] == pytest.approx(3 * R * debye_cv(math.pi / 2 * 300.0 / T), rel=1e-6)


# --- bands, Einstein ----------------------------------------------------------------------------

@pytest.mark.parametrize("lo,hi", [(0.0, 300.0), (200.0, 300.0), (290.0, 300.0)])
@pytest.mark.parametrize("T", [2.0, 10.0, 60.0, 300.0, 3000.0])
def test_band_against_quadrature(lo, hi, T):
    A, B = mp.mpf(lo) / T, mp.mpf(hi) / T
    pts = [A + k * (B - A) / 40 for k in range(41)]

    def avg(fn):
        return mp.quad(fn, pts) / (B - A)

    band = Band(lo, hi, modes=1)
    # reference: mpmath quadrature of a flat density between the edges
    assert heat_capacity(band, T)[0] / R == pytest.approx(float(avg(mp_cv)), rel=1e-10)
    assert entropy(band, T)[0] / R == pytest.approx(float(avg(mp_s)), rel=1e-10)


def test_band_tends_to_einstein():
    T = np.array([20.0, 100.0, 500.0])
    einstein = heat_capacity(Einstein(300.0, modes=3), T)
    # reference: Einstein model; a band of relative width w differs by O((w·θ/T)²)
    x = 300.0 / T
    for w in (1e-2, 1e-4):
        band = Band(300.0 * (1 - w / 2), 300.0 * (1 + w / 2), modes=3)
        assert np.all(np.abs(heat_capacity(band, T) / einstein - 1) <= (w * x) ** 2 / 8)
    assert np.array_equal(heat_capacity(Band(300.0, 300.0), T), einstein)
    # reference: Einstein C_v closed form
    assert np.allclose(einstein, 3 * R * einstein_cv(300.0 / T), rtol=1e-13)


# --- non-vibrational terms ---------------------------------------------------------------

def test_electronic_adds_gamma_t():
    T = np.array([1.0, 10.0, 300.0])
    gamma = 1.35e-3  # J/(mol K²), invented
    base = Debye(300.0)
    both = base + Electronic(gamma)
    # published: Sommerfeld C_el = S_el = γT, U_el = γT²/2
    assert np.allclose(heat_capacity(both, T) - heat_capacity(base, T), gamma * T, rtol=1e-12)
    assert np.allclose(entropy(both, T) - entropy(base, T), gamma * T, rtol=1e-12)
    assert np.allclose(free_energy(both, T) - free_energy(base, T), -gamma * T**2 / 2, rtol=1e-9)
    # θ_D comes from the lattice part alone
    assert np.allclose(thermo(both, T)["theta_D"], 300.0, rtol=1e-9)
    assert both.modes == 3


def test_schottky_peak_and_entropy():
    delta = 10.0
    sch = Schottky(delta)

    def c_of(t):
        y = delta / t
        return y**2 * mp.exp(-y) / (1 + mp.exp(-y)) ** 2

    # reference: closed form, peak by mpmath root of dC/dT; published values (from memory)
    # T_max ≈ 0.4168 Δ, C_max ≈ 0.4392 R for equal degeneracies
    t_peak = mp.findroot(lambda t: mp.diff(c_of, t), 4.2)
    assert float(t_peak) / delta == pytest.approx(0.4168, abs=1e-4)
    assert heat_capacity(sch, [float(t_peak)])[0] / R == pytest.approx(float(c_of(t_peak)), rel=1e-12)
    assert heat_capacity(sch, [float(t_peak)])[0] / R == pytest.approx(0.4392, abs=1e-4)
    # published: S → R ln(1 + g) at T ≫ Δ, 0 at T → 0
    s = entropy(Schottky(delta, g_ratio=3.0, n=2), [0.01, 1e6])
    assert s[0] == pytest.approx(0.0, abs=1e-12)
    assert s[1] == pytest.approx(2 * R * math.log(4.0), rel=1e-5)


# --- mixtures --------------------------------------------------------------------------------

def test_mixture_names_parameters_and_replacement():
    m = Debye(300.0) + Einstein(400.0, modes=1.5) + Einstein(500.0, modes=1.5) + Electronic(1e-3)
    assert [c.name for c in m] == ["debye", "einstein", "einstein_2", "electronic"]
    assert m.modes == 6
    assert m.parameters == {
        "debye.theta": 300.0,
        "debye.modes": 3.0,
        "einstein.theta": 400.0,
        "einstein.modes": 1.5,
        "einstein_2.theta": 500.0,
        "einstein_2.modes": 1.5,
        "electronic.gamma": 1e-3,
    }
    assert m.continuous_parameters() == ["debye.theta", "einstein.theta", "einstein_2.theta", "electronic.gamma"]
    m2 = m.with_parameters({"einstein_2.theta": 520.0})
    assert m2["einstein_2"].theta == 520.0 and m["einstein_2"].theta == 500.0
    with pytest.raises(InputError, match="unknown parameter"):
        m.with_parameters({"einstein_3.theta": 1.0})
    assert sum([Debye(300.0), Einstein(400.0)]).modes == 6


def test_mode_count_check():
    m = Debye(300.0) + Einstein(400.0, modes=2.0)
    with pytest.raises(InputError, match="3·atoms = 6"):
        m.with_atoms(2)
    with pytest.warns(ModeCountWarning):
        m.with_atoms(2, check="warn")
    assert m.with_atoms(5 / 3).atoms == pytest.approx(5 / 3)


def test_solid_helper_splits_optical_modes():
    s = solid(3, Debye(300.0), [Einstein(400.0), Band(500.0, 600.0)], split=[2, 1], extras=[Electronic(1e-3)])
    assert s.atoms == 3
    assert [c.modes for c in s] == [3.0, 4.0, 2.0, 0.0]
    with pytest.raises(InputError):
        solid(2, Debye(300.0))


def test_component_validation():
    for bad in (lambda: Debye(-1.0), lambda: Debye(300.0, dim=4), lambda: Einstein(float("nan")),
                lambda: Band(300.0, 200.0), lambda: Electronic(-1.0), lambda: Schottky(0.0),
                lambda: Einstein(300.0, modes=-1)):
        with pytest.raises(InputError):
            bad()
    with pytest.raises(InputError):
        Mixture((Debye(300.0), "not a component"))


def test_moment_debye_temperatures_of_a_mixture():
    m = Debye(300.0) + SineChain(200.0) + Einstein(500.0, modes=3)
    # published: θ(−3) equals the low-temperature θ_D (Barron, Berg & Morrison 1957)
    theta0 = m.moment_debye_temperature(-3)
    assert thermo(m, [0.002])["theta_D"][0] == pytest.approx(theta0, rel=1e-8)
    assert thermo(m, [0.0])["theta_D"][0] == pytest.approx(theta0, rel=1e-15)
    # θ(2) is the high-temperature limit of θ_D(T) (same reference)
    assert thermo(m, [1e6])["theta_D"][0] == pytest.approx(m.moment_debye_temperature(2), rel=1e-6)
    # θ(0) from ⟨ln θ⟩: Debye ⟨ln θ⟩ = ln θ_D − 1/3, Einstein ln θ_E (closed forms)
    d = Debye(300.0) + Einstein(500.0, modes=3)
    assert d.moment_debye_temperature(0) == pytest.approx(
        math.exp(1 / 3 + 0.5 * (math.log(300.0) - 1 / 3) + 0.5 * math.log(500.0)), rel=1e-12
    )


MIXTURES = [
    solid(2, Debye(300.0), [Einstein(500.0)]),
    SineChain(300.0, dim=1) + Band(400.0, 600.0),
    SineChain(250.0) + Debye(200.0, dim=2) + Einstein(420.0, modes=1.0) + Band(500.0, 520.0, modes=2.0),
    Mixture((Band(0.0, 300.0),)),
]


@pytest.mark.parametrize("mixture", MIXTURES, ids=lambda m: "+".join(c.name for c in m))
def test_rendered_spectrum_reproduces_the_mixture(mixture):
    sp = mixture.spectrum(unit="meV")
    T = np.array([3.0, 15.0, 60.0, 300.0, 1500.0])
    a, b = thermo(mixture, T), thermo(sp, T)
    # reference: the mixture's own closed forms and quadratures (checked above); F
    # changes sign, so it is compared on the scale of U and T·S
    for col in ("Cv", "S", "U"):
        assert np.allclose(b[col], a[col], rtol=1e-6, atol=0), col
    scale = a["U"].abs() + T * a["S"]
    assert np.all(np.abs(b["F"] - a["F"]) <= 1e-6 * scale)
    assert set(sp.partials) == {c.name for c in mixture}
    assert np.allclose(sum(sp.partials.values()), sp.density)


def test_component_thermo_matches_single_mixture():
    T = [5.0, 50.0, 500.0]
    c = SineChain(300.0)
    assert np.array_equal(thermo(c, T)["Cv"], thermo(Mixture((c,)), T)["Cv"])
    with pytest.warns(NoDebyeTemperatureWarning):  # no modes, so theta_D is NaN, with a warning
        electrons = thermo(Electronic(1e-3), T)
    assert electrons["Cv"].tolist() == pytest.approx([5e-3, 5e-2, 5e-1])
