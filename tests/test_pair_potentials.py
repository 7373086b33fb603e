"""Pair potentials on a cubic lattice (modeheat/lattice/pair.py): φ, φ'', springs, static energy.

The potential parameters are invented test values (argon-like and metal-like orders of
magnitude); every check compares with a reference written independently of the module.
"""

from __future__ import annotations

import math

import mpmath as mp
import numpy as np
import pytest
from scipy import constants
from scipy.optimize import minimize_scalar

from modeheat import InputError
from modeheat.lattice import CubicLattice, LennardJones, Morse, pair_lattice

# reference: scipy.constants (CODATA) — 1 eV/Å² = e J / 1e-20 m² in N/m
EV_PER_A2 = constants.e / 1e-20

MORSE = Morse(depth=0.35, width=1.4, r0=2.9)  # invented test values
LJ = LennardJones(epsilon=0.0104, sigma=3.40)
DISTANCES = [2.2, 2.9, 3.3, 4.1, 6.0]


def _morse_reference(r):
    D, a, r0 = mp.mpf("0.35"), mp.mpf("1.4"), mp.mpf("2.9")
    return D * (mp.exp(-2 * a * (r - r0)) - 2 * mp.exp(-a * (r - r0)))


def _lj_reference(r):
    eps, sig = mp.mpf("0.0104"), mp.mpf("3.40")
    return 4 * eps * ((sig / r) ** 12 - (sig / r) ** 6)


@pytest.mark.parametrize("potential, reference", [(MORSE, _morse_reference), (LJ, _lj_reference)])
def test_energy_and_curvature_against_mpmath(potential, reference):
    # reference: mpmath at 30 digits, φ written independently and differentiated by mpmath.diff
    mp.mp.dps = 30
    for r in DISTANCES:
        x = mp.mpf(str(r))
        assert potential.energy(r) == pytest.approx(float(reference(x)), rel=1e-13, abs=1e-16)
        assert potential.force_constant(r) == pytest.approx(float(mp.diff(reference, x, 2)) * EV_PER_A2, rel=1e-12)
    # arrays in, arrays out, element by element
    np.testing.assert_allclose(potential.energy(np.array(DISTANCES)), [potential.energy(r) for r in DISTANCES],
                               rtol=1e-15)
    assert isinstance(potential.energy(3.0), float) and potential.force_constant(np.array([3.0])).shape == (1,)


def test_morse_minimum_is_minus_depth_at_r0():
    # published form: φ(r0) = −D is the minimum; φ''(r0) = 2a²D
    assert MORSE.energy(2.9) == pytest.approx(-0.35, rel=1e-15)
    assert MORSE.force_constant(2.9) == pytest.approx(2 * 1.4**2 * 0.35 * EV_PER_A2, rel=1e-14)
    found = minimize_scalar(MORSE.energy, bounds=(2.0, 5.0), method="bounded", options={"xatol": 1e-10})
    assert found.x == pytest.approx(2.9, abs=1e-6)
    assert MORSE.energy(1e3) == pytest.approx(0.0, abs=1e-300)  # dissociated: φ → 0


def test_lennard_jones_minimum_is_minus_epsilon_at_two_to_the_sixth_sigma():
    # published form (common practice): the minimum −ε lies at r = 2^(1/6) σ, φ(σ) = 0,
    # φ''(2^(1/6)σ) = 72 ε / (2^(1/3) σ²)
    r_min = 2 ** (1 / 6) * 3.40
    assert LJ.energy(r_min) == pytest.approx(-0.0104, rel=1e-14)
    assert LJ.energy(3.40) == pytest.approx(0.0, abs=1e-17)
    assert LJ.force_constant(r_min) == pytest.approx(72 * 0.0104 / (2 ** (1 / 3) * 3.40**2) * EV_PER_A2, rel=1e-13)
    found = minimize_scalar(LJ.energy, bounds=(3.0, 5.0), method="bounded", options={"xatol": 1e-10})
    assert found.x == pytest.approx(r_min, abs=1e-6)


# --- lattice sums ------------------------------------------------------------------------------------
# from memory: the fcc lattice sums A_n = Σ (r1/R)^n of the Lennard-Jones crystal
A12_FCC, A6_FCC = 12.13188, 14.45392


@pytest.mark.parametrize("a", [5.0, 5.26, 5.6])
def test_fcc_lennard_jones_static_energy_against_the_known_lattice_sums(a):
    # reference: E/atom = 2ε[A12 (σ/r1)^12 − A6 (σ/r1)^6] with A12, A6 from memory (7 digits)
    _, energy = pair_lattice(LJ, "fcc", a, 39.9)
    s = 3.40 / (a / math.sqrt(2))
    expected = 2 * 0.0104 * (A12_FCC * s**12 - A6_FCC * s**6)
    # the constants carry 7 digits: half a unit of their last digit, on each term
    assert energy == pytest.approx(expected, abs=2 * 0.0104 * (s**12 + s**6) * 5e-6)


def test_fcc_lennard_jones_equilibrium_lattice_constant():
    # from memory (the same lattice sums): the static fcc minimum has r1 = (2·A12/A6)^(1/6) σ ≈ 1.0902 σ
    found = minimize_scalar(lambda a: pair_lattice(LJ, "fcc", a, 39.9)[1], bounds=(4.8, 5.8), method="bounded",
                            options={"xatol": 1e-9})
    assert found.x / math.sqrt(2) == pytest.approx((2 * A12_FCC / A6_FCC) ** (1 / 6) * 3.40, rel=1e-6)


def _direct_power_sum(structure: str, n: int, radius: float) -> float:
    """Σ (r1/R)^n over the lattice (constant 1) by brute force within `radius` (in r1), with the
    continuum tail ∫ 4πR²ρ R^−n dR beyond it (written here, independently of the module)."""
    basis = {"sc": [(0, 0, 0)], "bcc": [(0, 0, 0), (0.5, 0.5, 0.5)],
             "fcc": [(0, 0, 0), (0, 0.5, 0.5), (0.5, 0, 0.5), (0.5, 0.5, 0)]}[structure]
    r1 = {"sc": 1.0, "bcc": math.sqrt(3) / 2, "fcc": 1 / math.sqrt(2)}[structure]
    m = int(radius * r1) + 2
    n_ = np.arange(-m, m + 1)
    cells = np.stack(np.meshgrid(n_, n_, n_, indexing="ij"), -1).reshape(-1, 3)
    points = (cells[:, None, :] + np.array(basis)[None]).reshape(-1, 3) / r1
    d = np.linalg.norm(points, axis=1)
    d = d[(d > 0) & (d <= radius)]
    density = len(basis) * r1**3
    return float(np.sum(d ** -float(n))) + 4 * math.pi * density * radius ** (3 - n) / (n - 3)


@pytest.mark.parametrize("structure", ["sc", "bcc", "fcc"])
def test_lattice_sums_against_a_direct_sum(structure):
    # reference: brute-force lattice sums here (Σ R^−12 converges to ~1e-12 within 25 r1;
    # Σ R^−6 with its continuum tail to ~1e-7: the lattice-point count fluctuates about the
    # continuum at the cut-off sphere).  With ε = ½ the static energy is E = A12 s^12 − A6 s^6,
    # s = σ/r1: two values of σ give both sums back.
    r1 = {"sc": 1.0, "bcc": math.sqrt(3) / 2, "fcc": 1 / math.sqrt(2)}[structure]
    a = 4.0
    e1 = pair_lattice(LennardJones(0.5, 1.0 * a * r1), structure, a, 10.0)[1]  # A12 − A6
    e2 = pair_lattice(LennardJones(0.5, 2.0 * a * r1), structure, a, 10.0)[1]  # 4096 A12 − 64 A6
    a12 = (e2 - 64 * e1) / (4096 - 64)
    a6 = a12 - e1
    assert a12 == pytest.approx(_direct_power_sum(structure, 12, 25.0), rel=1e-10)
    assert a6 == pytest.approx(_direct_power_sum(structure, 6, 25.0), rel=2e-7)


def test_morse_static_energy_against_a_direct_sum():
    # reference: a brute-force sum of φ over every neighbour within 60 Å (written here; the
    # Morse tail beyond is below 1e-20 eV), against the module's own cut-off
    for structure, a in (("fcc", 4.1), ("bcc", 3.3), ("sc", 2.7)):
        basis = {"sc": [(0, 0, 0)], "bcc": [(0, 0, 0), (0.5, 0.5, 0.5)],
                 "fcc": [(0, 0, 0), (0, 0.5, 0.5), (0.5, 0, 0.5), (0.5, 0.5, 0)]}[structure]
        m = int(60 / a) + 2
        n_ = np.arange(-m, m + 1)
        cells = np.stack(np.meshgrid(n_, n_, n_, indexing="ij"), -1).reshape(-1, 3)
        d = np.linalg.norm((cells[:, None, :] + np.array(basis)[None]).reshape(-1, 3) * a, axis=1)
        d = d[(d > 0) & (d <= 60.0)]
        x = np.exp(-1.4 * (d - 2.9))
        expected = 0.5 * math.fsum(0.35 * (x * x - 2 * x))
        _, energy = pair_lattice(MORSE, structure, a, 50.0)
        assert energy == pytest.approx(expected, rel=1e-10, abs=1e-12 * 0.35)


# --- the lattice -------------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "structure, r1, r2",
    # common practice: neighbour distances of the cubic lattices in units of a
    [("sc", 1.0, math.sqrt(2)), ("bcc", math.sqrt(3) / 2, 1.0), ("fcc", 1 / math.sqrt(2), 1.0)],
)
def test_springs_are_the_curvature_at_the_first_two_shells(structure, r1, r2):
    # reference: mpmath.diff of the independent Morse φ above, at the neighbour distances
    mp.mp.dps = 30
    a = 3.2 / r1  # r1 = 3.2 Å, beyond r0 but inside the inflection point r0 + ln 2 / a
    lattice, _ = pair_lattice(MORSE, structure, a, 50.0, name="test", species="X")
    assert isinstance(lattice, CubicLattice)
    assert (lattice.structure, lattice.mass, lattice.a, lattice.name, lattice.species) == (structure, 50.0, a, "test", "X")
    for k, r in ((lattice.k1, r1 * a), (lattice.k2, r2 * a)):
        assert k == pytest.approx(float(mp.diff(_morse_reference, mp.mpf(r), 2)) * EV_PER_A2, rel=1e-12)
    assert pair_lattice(MORSE, structure, a, 50.0, shells=1)[0].k2 == 0.0


def test_pair_lattice_refusals():
    with pytest.raises(InputError, match="structure must be one of"):
        pair_lattice(MORSE, "hcp", 4.0, 50.0)
    with pytest.raises(InputError, match="shells must be 1 or 2"):
        pair_lattice(MORSE, "fcc", 4.0, 50.0, shells=3)
    with pytest.raises(InputError, match="Morse or LennardJones"):
        pair_lattice(lambda r: r, "fcc", 4.0, 50.0)
    with pytest.raises(InputError, match="is not positive: the lattice is beyond the potential's inflection point"):
        pair_lattice(MORSE, "fcc", 6.0, 50.0)  # r1 = 4.24 Å > r0 + ln 2 / a = 3.40 Å
    with pytest.raises(InputError, match="a \\(Å\\) must be a positive number"):
        pair_lattice(MORSE, "fcc", -4.0, 50.0)
    with pytest.raises(InputError, match="mass must be a positive number"):
        pair_lattice(MORSE, "fcc", 4.0, 0.0)
    with pytest.raises(InputError, match="more than 3e\\+06 neighbours"):
        pair_lattice(Morse(0.35, 0.01, 8.0), "fcc", 10.0, 50.0)


def test_potential_refusals():
    with pytest.raises(InputError, match="Morse depth must be a positive number"):
        Morse(-0.3, 1.0, 3.0)
    with pytest.raises(InputError, match="Morse width must be a positive number"):
        Morse(0.3, float("nan"), 3.0)
    with pytest.raises(InputError, match="Lennard-Jones sigma must be a positive number"):
        LennardJones(0.01, 0.0)
    with pytest.raises(InputError, match="distances must be finite and > 0"):
        MORSE.energy([3.0, 0.0])
    with pytest.raises(InputError, match="must be a number or an array of numbers"):
        LJ.force_constant("near")
    with pytest.raises(InputError, match="overflows at the distances given"):
        LJ.energy(1e-30)
    with pytest.raises(InputError, match="overflows at the distances given"):
        Morse(0.3, 50.0, 30.0).force_constant(1.0)
