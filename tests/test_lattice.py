"""Force-constant lattices checked against analytic results, published laws and Monte Carlo.

Oracles, each named beside its check:
- 3 modes per atom (common practice);
- the nearest-neighbour chain: ω = 2√(K/m)|sin(ka/2)| and g(ω) = (2/π)/√(ω_max² − ω²),
  and the diatomic chain's branches, gap edges √(2K/m_heavy), √(2K/m_light) and top
  √(2K(1/m_a + 1/m_b)) (published: Kittel, Introduction to Solid State Physics,
  chs. 4–5; chapter numbers from memory); the chain's C_v by mpmath quadrature of the
  analytic DOS with ω = ω_max·sin φ;
- elastic constants of the central-spring models (derived here: modeheat.lattice's
  module docstring) against the long-wavelength slope of the dispersion;
- the Debye low-frequency density g = 4πΩν²(1/v_L³ + 2/v_T³) (published: Debye,
  Ann. Phys. 39, 789 (1912)) and Born's stability conditions (published: Born, Proc.
  Camb. Phil. Soc. 36, 160 (1940));
- Monte Carlo sampling of a linear function over a tetrahedron (uniform barycentric
  coordinates) for the linear-tetrahedron counting function;
- CODATA unit relations via scipy.constants.

Measured on the development machine (tolerances set from these): chain C_v within
4.1e-4 of mpmath at 10 K (≤ 1e-4 from 30 K); fcc 16³ vs 24³ DOS differ by 2.4 % of
the modes (24³ vs 32³: 0.8 %); the 24³ fcc low-frequency fit gives 0.971 of the Debye
coefficient.
"""

from __future__ import annotations

import math
import warnings

import mpmath as mp
import numpy as np
import pytest
from scipy import constants
from scipy.integrate import quad

from modeheat import Spectrum, SpectrumWarning, debye_temperature_from_sound, thermo
from modeheat.errors import InputError
from modeheat.lattice import (
    CubicLattice,
    DensityOfStates,
    DiatomicChain,
    MonatomicChain,
    Progress,
    RockSalt,
    debye_coefficient,
    debye_temperature,
    dispersion,
    dos,
    elastic_velocities,
    iter_dos,
    iter_mesh,
    mesh_modes,
    sound_velocities,
    tetrahedron_dos,
)
from modeheat.lattice._base import _spread, _tetra_coefficients, _tetra_fraction
from modeheat.units import R, kelvin_per

AMU = constants.atomic_mass
FCC = CubicLattice("fcc", 63.5, 3.61, 28.0)  # invented test shape (copper-like scale)
MODELS = {
    "sc": CubicLattice("sc", 50.0, 3.0, 20.0, 5.0),
    "bcc": CubicLattice("bcc", 50.0, 3.2, 20.0, 5.0),
    "fcc": FCC,
    "fcc-nnn": CubicLattice("fcc", 40.0, 3.9, 15.0, 2.5),
    "rocksalt": RockSalt(100.0, 20.0, 5.0, 30.0, 4.0, 2.0),
}


def _area(d: DensityOfStates, g=None) -> float:
    return float(np.trapezoid(d.total if g is None else g, d.frequency))


# --- the tetrahedron counting function ---------------------------------------------------


def test_tetrahedron_counting_matches_monte_carlo():
    # reference: Monte Carlo — uniform points in a tetrahedron (Dirichlet(1,1,1,1)
    # barycentric weights), a linear function of them; seeded
    rng = np.random.default_rng(20240611)
    e = np.sort(rng.random((3, 4)), axis=1)
    e[1, 1] = e[1, 0]  # two equal corners, as by symmetry on a mesh
    e[2, 2] = e[2, 3]
    edges = np.linspace(-0.05, 1.05, 57)
    bary = rng.dirichlet(np.ones(4), size=400_000)
    for row in e:
        row = row[None, :]
        counted, _ = _spread(row[:, 0], row[:, 3], _tetra_coefficients(row), _tetra_fraction, edges, None)
        values = np.sort(bary @ row[0])
        sampled = np.searchsorted(values, edges) / values.size
        # binomial σ ≤ 0.5/√N = 8e-4; 4e-3 is 5σ
        np.testing.assert_allclose(counted, sampled, atol=4e-3)


# --- mode count and partials --------------------------------------------------------------


@pytest.mark.parametrize("key", sorted(MODELS))
def test_dos_integrates_to_three_modes_per_atom(key):
    # common practice: 3N modes per cell of N atoms
    model = MODELS[key]
    spectrum = dos(model, 12)
    assert spectrum.raw_integral == pytest.approx(3 * model.atoms, rel=1e-12)
    assert spectrum.atoms == model.atoms


def test_partials_add_up_and_the_light_atom_owns_the_optical_band():
    # common practice: partial DOS add up to the total; with very unequal masses the
    # light atom carries the optical band and the heavy one the acoustic band
    model = RockSalt(200.0, 10.0, 5.0, 40.0, 5.0, 2.0, species=("Hv", "Lt"))
    modes = mesh_modes(model, 14)
    d = tetrahedron_dos(modes)
    np.testing.assert_allclose(d.partials["Hv"] + d.partials["Lt"], d.total, atol=1e-12 * d.total.max())
    assert _area(d, d.partials["Hv"]) == pytest.approx(3.0, rel=1e-12)
    gap = 0.5 * (modes.frequency[:, :3].max() + modes.frequency[:, 3:].min())
    optical = d.frequency > gap
    light = _area(d, d.partials["Lt"] * optical) / _area(d, d.total * optical)
    heavy = _area(d, d.partials["Hv"] * ~optical) / _area(d, d.total * ~optical)
    assert light > 0.95 and heavy > 0.95
    spectrum = d.spectrum()
    assert set(spectrum.partials) == {"Hv", "Lt"}


# --- acoustic sum rule, imaginary modes ---------------------------------------------------


def test_three_zero_modes_at_gamma_and_none_imaginary():
    # common practice: a uniform translation costs nothing (acoustic sum rule)
    for model in MODELS.values():
        nu = model.frequencies(np.zeros((1, 3)))[0]
        assert np.all(nu[:3] == 0.0) and np.all(nu[3:] > 0)
        assert mesh_modes(model, 6).imaginary == 0


def test_unstable_springs_give_reported_imaginary_modes():
    # published: Born (1940) — C11 < C12 violates stability, so shear modes near Γ
    # are imaginary; they come back negative and the Spectrum drops them with a warning
    model = CubicLattice("fcc", 50.0, 3.5, 10.0, -4.0)
    assert not model.elastic_constants().stable
    modes = mesh_modes(model, 8)
    assert modes.imaginary > 0 and modes.frequency.min() < 0
    with pytest.warns(SpectrumWarning, match="imaginary"):
        spectrum = dos(model, 8)
    assert spectrum.frequency.min() >= 0


# --- elasticity and sound -----------------------------------------------------------------


@pytest.mark.parametrize("key", sorted(MODELS))
@pytest.mark.parametrize("direction", [(1, 0, 0), (1, 1, 0), (1, 1, 1), (1, 2, 3)])
def test_sound_velocity_from_slope_matches_elastic_constants(key, direction):
    # derived here: C11, C12, C44 of the central-spring models (modeheat.lattice module
    # docstring) through the Christoffel equation, against ω/k of the dispersion
    model = MODELS[key]
    np.testing.assert_allclose(sound_velocities(model, direction), elastic_velocities(model, direction), rtol=1e-7)


def test_fcc_nearest_neighbour_elastic_constants():
    # derived here (module docstring): fcc nearest-neighbour springs give C11 = 2K/a,
    # C12 = C44 = K/a; along [100] v_L = √(C11/ρ), v_T = √(C44/ρ)
    k, a = FCC.k1, FCC.a * 1e-10
    c = FCC.elastic_constants()
    assert c.c11 == pytest.approx(2 * k / a / 1e9, rel=1e-14)
    assert c.c12 == pytest.approx(k / a / 1e9, rel=1e-14)
    assert c.c44 == pytest.approx(k / a / 1e9, rel=1e-14)
    rho = 4 * FCC.mass * AMU / a**3  # scipy.constants/CODATA: 4 atoms per cubic cell
    assert c.density == pytest.approx(rho, rel=1e-14)
    v = sound_velocities(FCC, (1, 0, 0))
    np.testing.assert_allclose(v, [math.sqrt(k / a / rho)] * 2 + [math.sqrt(2 * k / a / rho)], rtol=1e-7)


def test_fcc_zone_boundary_frequencies_at_x():
    # derived here: at X = (2π/a)(0,1,0) the fcc nearest-neighbour dynamical matrix is
    # (K/m)·diag(4, 8, 4): ν_T = √(4K/m)/2π, ν_L = √(8K/m)/2π
    w = math.sqrt(FCC.k1 / (FCC.mass * AMU)) / (2 * math.pi * 1e12)
    nu = FCC.frequencies([[0.0, 2 * math.pi / FCC.a, 0.0]])[0]
    np.testing.assert_allclose(nu, [2 * w, 2 * w, math.sqrt(8) * w], rtol=1e-12)


def test_debye_coefficient_of_an_isotropic_model():
    # published: Debye (1912), g = 4πΩν²(1/v_L³ + 2/v_T³) for an isotropic solid.  fcc
    # with K2 = K1/4 is elastically isotropic (derived here: C11 − C12 = 2C44), so the
    # direction average must reduce to it, and θ_D to debye_temperature_from_sound
    model = CubicLattice("fcc", 63.5, 3.61, 28.0, 7.0)
    c = model.elastic_constants()
    assert c.c11 - c.c12 == pytest.approx(2 * c.c44, rel=1e-14)
    vl, vt = math.sqrt(c.c11 * 1e9 / c.density), math.sqrt(c.c44 * 1e9 / c.density)
    omega = model.volume * 1e-30
    expected = 4 * math.pi * omega * (1 / vl**3 + 2 / vt**3) * 1e36  # per THz³
    assert debye_coefficient(model) == pytest.approx(expected, rel=1e-12)
    theta = debye_temperature_from_sound(vl, vt, volume=model.volume, atoms=1)
    assert debye_temperature(model) == pytest.approx(theta, rel=1e-12)


# --- fcc: convergence and the ν² law ------------------------------------------------------


def test_fcc_tetrahedron_dos_converges_with_the_mesh():
    # common practice: the linear-tetrahedron DOS converges as the mesh is refined;
    # measured differences 2.4 % (16³ vs 24³) and 0.8 % (24³ vs 32³) of the modes
    d = {n: tetrahedron_dos(mesh_modes(FCC, n), step=0.05) for n in (16, 24, 32)}
    grid = d[16].frequency
    assert all(np.array_equal(d[n].frequency, grid) for n in d)

    def diff(a, b):
        return np.trapezoid(np.abs(d[a].total - d[b].total), grid) / 3.0

    assert diff(16, 24) < 0.04
    assert diff(24, 32) < 0.5 * diff(16, 24)


def test_fcc_low_frequency_dos_follows_the_debye_law():
    # published: Debye (1912), g(ν) → c·ν² with c = 4πΩ Σ⟨v⁻³⟩ from the elastic
    # velocities averaged over directions.  A 24³ mesh resolves the ν² region only
    # above a few mesh shells, so g/(cν²) is fitted as a + bν² + dν⁴ over 15–35 % of
    # the top frequency and extrapolated to ν = 0; measured a = 0.971 (0.984 at 32³).
    # 5 % covers the mesh's linear interpolation of the cone-shaped acoustic branches.
    c = debye_coefficient(FCC)
    top = mesh_modes(FCC, 4).frequency.max()
    d = tetrahedron_dos(mesh_modes(FCC, 24), step=top / 400)
    nu = d.frequency
    window = (nu > 0.15 * top) & (nu < 0.35 * top)
    fit = np.polyfit((nu[window] / top) ** 2, d.total[window] / (c * nu[window] ** 2), 2)
    assert fit[-1] == pytest.approx(1.0, abs=0.05)


# --- 1-D chains ----------------------------------------------------------------------------

CHAIN = MonatomicChain(40.0, 15.0, 2.5)  # invented test shape


def test_monatomic_chain_dispersion_and_sampled_dos():
    # published: ω = 2√(K/m)|sin(ka/2)| and g(ω) = (2/π)/√(ω_max² − ω²) (Kittel)
    k = np.linspace(-math.pi / CHAIN.spacing, math.pi / CHAIN.spacing, 101)
    w = 2 * math.sqrt(CHAIN.spring / (CHAIN.mass * AMU)) * np.abs(np.sin(k * CHAIN.spacing / 2))
    np.testing.assert_allclose(CHAIN.frequencies(k)[:, 0], w / (2 * math.pi * 1e12), rtol=1e-13, atol=1e-15)
    d = CHAIN.density_of_states(20000)
    top = CHAIN.max_frequency
    analytic = 3 * (2 / math.pi) / np.sqrt(top**2 - np.minimum(d.frequency, 0.999 * top) ** 2)
    away = (d.frequency > 0.01 * top) & (d.frequency < 0.9 * top)
    np.testing.assert_allclose(d.total[away], analytic[away], rtol=1e-4)  # measured 2e-5
    np.testing.assert_allclose(CHAIN.density(d.frequency[away]) * 3, analytic[away], rtol=1e-13)
    assert _area(d) == pytest.approx(3.0, rel=1e-12)  # common practice: 3 polarisations


def test_monatomic_chain_heat_capacity_matches_mpmath():
    # reference: mpmath quadrature at 30 digits of the analytic chain DOS with
    # ω = ω_max sin φ: C/(R) = (2/π)∫₀^{π/2} x² eˣ/(eˣ − 1)² dφ, x = θ_max sin φ / T, per
    # polarisation; the chain Spectrum counts three.  The residual (measured 4.1e-4 at
    # 10 K, 1e-6 at 300 K) is the Spectrum's g/ω²-linear interpolation of a flat density
    # over the lowest bins, first order in the frequency step.
    spectrum = CHAIN.spectrum(40000, points=8001)
    T = np.array([10.0, 30.0, 100.0, 300.0])
    theta = CHAIN.max_frequency * kelvin_per("THz")
    mp.mp.dps = 30

    def reference(t):
        def f(phi):
            x = theta * mp.sin(phi) / t
            return x**2 * mp.exp(x) / mp.expm1(x) ** 2

        return float(2 / mp.pi * mp.quad(f, [0, mp.pi / 2]))

    expected = 3 * R * np.array([reference(t) for t in T])
    np.testing.assert_allclose(thermo(spectrum, T)["Cv"].to_numpy(), expected, rtol=1e-3)


DIATOMIC = DiatomicChain(120.0, 30.0, 20.0, 5.0, species=("Hv", "Lt"))  # invented test shape


def test_diatomic_chain_gap_edges_and_empty_gap():
    # published: the diatomic chain (Kittel) — acoustic top √(2K/m_heavy), optical bottom
    # √(2K/m_light) at k = π/a, optical top √(2K(1/m_a + 1/m_b)) at k = 0; at the zone
    # boundary each branch moves one sublattice only
    K = DIATOMIC.spring
    heavy, light = DIATOMIC.mass_a * AMU, DIATOMIC.mass_b * AMU
    to_thz = 1 / (2 * math.pi * 1e12)
    lo, hi = math.sqrt(2 * K / heavy) * to_thz, math.sqrt(2 * K / light) * to_thz
    top = math.sqrt(2 * K * (1 / heavy + 1 / light)) * to_thz
    assert DIATOMIC.gap == pytest.approx((lo, hi), rel=1e-14)
    assert DIATOMIC.max_frequency == pytest.approx(top, rel=1e-14)
    edge = [math.pi / DIATOMIC.spacing]
    np.testing.assert_allclose(DIATOMIC.frequencies(edge)[0], [lo, hi], rtol=1e-12)
    nu, w = DIATOMIC.modes(edge + [0.0])
    np.testing.assert_allclose(nu, [[lo, hi], [0.0, top]], rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(w[0], [[1, 0], [0, 1]], atol=1e-12)
    d = DIATOMIC.density_of_states(4096)
    step = d.frequency[1] - d.frequency[0]
    inside = (d.frequency - step / 2 > lo) & (d.frequency + step / 2 < hi)
    assert inside.sum() > 10 and np.all(d.total[inside] == 0.0)
    assert d.total[(d.frequency > lo - step) & (d.frequency < lo)].max() > 0


def test_diatomic_chain_sampled_dos_matches_the_analytic_branches():
    # published: the diatomic chain's branch densities, each one mode per cell (checked
    # here by scipy quadrature), against the 1-D linear-interpolation sampling
    lo, hi = DIATOMIC.gap
    top = DIATOMIC.max_frequency
    assert quad(lambda x: DIATOMIC.density(x, "acoustic"), 0, lo, limit=200)[0] == pytest.approx(1, abs=1e-8)
    assert quad(lambda x: DIATOMIC.density(x, "optical"), hi, top, limit=200)[0] == pytest.approx(1, abs=1e-8)
    d = DIATOMIC.density_of_states(8192)
    nu = d.frequency
    away = (nu > 0.05) & (np.abs(nu - lo) > 0.1) & (np.abs(nu - hi) > 0.1) & (nu < top - 0.1)
    away &= DIATOMIC.density(nu) > 0
    np.testing.assert_allclose(d.total[away], 3 * DIATOMIC.density(nu[away]), rtol=2e-3)  # measured 5e-4
    # common practice: partials add up; each atom carries half of the modes overall
    np.testing.assert_allclose(d.partials["Hv"] + d.partials["Lt"], d.total, atol=1e-12)
    assert _area(d, d.partials["Hv"]) == pytest.approx(3.0, rel=1e-12)
    spectrum = DIATOMIC.spectrum(4096)
    assert isinstance(spectrum, Spectrum) and spectrum.atoms == 2


# --- dispersion paths, progress, units ------------------------------------------------------


@pytest.mark.parametrize(
    "model, labels, first",
    [
        (MODELS["sc"], ("Γ", "X", "M", "Γ", "R", "X"), 0.5),
        (MODELS["bcc"], ("Γ", "H", "N", "Γ", "P", "H"), 1.0),
        (FCC, ("Γ", "X", "W", "K", "Γ", "L"), 1.0),
        (MODELS["rocksalt"], ("Γ", "X", "W", "K", "Γ", "L"), 1.0),
    ],
)
def test_dispersion_paths(model, labels, first):
    # common practice: the usual high-symmetry labels; Γ carries the three zero modes;
    # the first point lies at |k| = first·2π/a (sc X: π/a; bcc H, fcc X: 2π/a)
    path = dispersion(model, points=120)
    assert path.labels == labels
    assert path.frequency.shape == (path.distance.size, 3 * model.atoms)
    assert np.all(np.diff(path.distance) > 0)
    np.testing.assert_allclose(path.frequency[0, :3], 0.0, atol=1e-12)
    assert path.ticks[1] == pytest.approx(first * 2 * math.pi / model.a, rel=1e-12)
    assert (path.weights is None) == (model.atoms == 1)


def test_chain_dispersion_runs_to_the_zone_boundary():
    # published: the chain's zone boundary π/a carries ν_max (Kittel)
    path = dispersion(CHAIN, points=50)
    assert path.labels == ("Γ", "X") and path.ticks[-1] == pytest.approx(math.pi / CHAIN.spacing)
    assert path.frequency[-1, 0] == pytest.approx(CHAIN.max_frequency, rel=1e-12)


def test_progress_generators_share_one_code_path():
    # behaviour: the generator's last step carries what the plain function returns
    steps = list(iter_mesh(FCC, 10, batch=300))
    assert all(isinstance(p, Progress) for p in steps)
    assert [p.done for p in steps] == list(range(1, len(steps) + 1)) and steps[-1].total == len(steps)
    assert all(p.result is None for p in steps[:-1])
    np.testing.assert_array_equal(steps[-1].result.frequency, mesh_modes(FCC, 10).frequency)
    steps = list(iter_dos(MODELS["rocksalt"], 10, batch=200))
    assert {p.stage for p in steps} == {"modes", "tetrahedra"}
    assert [p.done for p in steps] == list(range(1, len(steps) + 1))
    final = steps[-1].result
    assert isinstance(final, Spectrum)
    np.testing.assert_array_equal(final.density, dos(MODELS["rocksalt"], 10).density)


def test_units_follow_codata():
    # scipy.constants/CODATA: 1 THz = h·10¹²/e ·10³ meV = 10¹²/(100c) cm⁻¹
    modes = mesh_modes(FCC, 8)
    thz = tetrahedron_dos(modes, step=0.1)
    mev = tetrahedron_dos(modes, step=0.1 * constants.h * 1e15 / constants.e, unit="meV")
    cm = thz.to("cm-1")
    r_mev = constants.h * 1e12 / constants.e * 1e3
    r_cm = 1e12 / (100 * constants.c)
    np.testing.assert_allclose(mev.frequency, thz.frequency * r_mev, rtol=1e-12)
    np.testing.assert_allclose(mev.total, thz.total / r_mev, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(cm.frequency, thz.frequency * r_cm, rtol=1e-12)
    assert _area(cm) == pytest.approx(3.0, rel=1e-12)


def test_bad_parameters_are_input_errors():
    # behaviour: parameter errors are InputErrors (also ValueErrors) that say what is wrong
    with pytest.raises(InputError, match="structure"):
        CubicLattice("hcp", 50.0, 3.0, 10.0)
    with pytest.raises(ValueError, match="mass"):
        CubicLattice("fcc", -1.0, 3.0, 10.0)
    with pytest.raises(InputError, match="k1"):
        RockSalt(10.0, 20.0, 5.0, 0.0)
    with pytest.raises(InputError, match="mesh"):
        mesh_modes(FCC, 1)
    with pytest.raises(InputError, match="path"):
        dispersion(FCC, ["Γ", "Q"])
    with pytest.raises(InputError, match="species"):
        DiatomicChain(1.0, 2.0, 3.0, 4.0, species=("A", "A"))
    with pytest.raises(InputError, match="CubicLattice or RockSalt"):  # a chain has no 3-D mesh
        dos(CHAIN, 8)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        dos(FCC, 4)  # a coarse mesh still computes quietly
