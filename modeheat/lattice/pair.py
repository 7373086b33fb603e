"""Pair potentials on a cubic lattice: springs and static energy from φ(r).

Potentials (published forms, common practice)
---------------------------------------------
* :class:`Morse` — φ(r) = D [e^(−2a(r−r₀)) − 2 e^(−a(r−r₀))], minimum −D at r₀.
* :class:`LennardJones` — φ(r) = 4ε [(σ/r)¹² − (σ/r)⁶], minimum −ε at 2^(1/6) σ.

Energies in eV, lengths in Å, force constants φ''(r) in N/m
(1 eV/Å² = e·10²⁰ N/m, :data:`scipy.constants.e`).

A lattice from a potential (:func:`pair_lattice`)
-------------------------------------------------
The springs of :class:`~modeheat.lattice.CubicLattice` at lattice constant a are the
curvatures of the potential at the first two neighbour distances r₁, r₂:
K1 = φ''(r₁), K2 = φ''(r₂) (sc: r₁ = a, r₂ = √2 a; bcc: r₁ = √3 a/2, r₂ = a;
fcc: r₁ = a/√2, r₂ = a).

**The approximation.** A pair at distance r has the force-constant block
φ''(r) nnᵀ + (φ'(r)/r)(1 − nnᵀ): a central (stretching) part and a transverse part from
the tension φ'(r) the pair carries.  Only the central spring K = φ''(r) is kept and the
tension term φ'(r)/r is dropped, as :class:`~modeheat.lattice.CubicLattice` has central
springs only, and the shells beyond the second are left out of the dynamics.  That is
common practice for a spring-model demonstration, not a converged lattice dynamics of
the potential: at the static equilibrium the tensions of all shells balance in the
pressure, but not shell by shell, so the dropped terms are of the size of φ'(r)/r
against φ''(r) (for a Morse potential near r₀, a few per cent for the nearest shell,
more for the second).  The spectra it gives are still a consistent family: the springs
follow the lattice constant through the potential, which is what a quasi-harmonic
demonstration needs.

**Static energy.** E(a) per atom = ½ Σ_(R ≠ 0) φ(|R|) over every lattice vector R (the ½
because each pair is shared by two atoms), to about 1e-12 of the well depth:

* Morse: a direct sum over every neighbour within the cut-off r_c, the smallest
  distance where the exponential tail beyond it, 4πρ D e^(−a(r_c−r₀)) (r_c²/a + 2r_c/a² +
  2/a³) (ρ atoms per Å³), is below 1e-13 D; r_c is r₀ + 34/a to r₀ + 45/a for
  ordinary potentials.  A potential so long-ranged that the sphere would hold more than
  3·10⁶ atoms is refused (the Morse a times the lattice constant below about 0.75).
* Lennard-Jones: E = 2ε [σ¹² S₁₂ − σ⁶ S₆] with the lattice sums S_n = Σ_(R ≠ 0) |R|⁻ⁿ,
  evaluated by Ewald's splitting of |R|⁻ⁿ into a short-range real-space sum of
  Γ(n/2, η²R²)/|R|ⁿ and a rapidly converging reciprocal-lattice sum of
  Γ(3/2 − n/2, G²/4η²), both cut where their terms are below 1e-30 of the first
  (Γ the upper incomplete gamma function; its negative half-integer orders by the
  recurrence Γ(s, x) = [Γ(s+1, x) − xˢ e⁻ˣ]/s from Γ(½, x) = √π erfc √x); relative
  error about 1e-14, where a plain sum of |R|⁻⁶ would need millions of shells.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from scipy import constants as _c
from scipy.special import erfc

from .. import _checks
from ..errors import InputError
from .cubic import _CELLS, CubicLattice

__all__ = ["Morse", "LennardJones", "pair_lattice"]

_EV_PER_A2_IN_N_PER_M = _c.e * 1e20  # 1 eV/Å² in N/m
_TAIL = 1e-13  # Morse: the tail beyond the cut-off, in units of the depth D
_MAX_POINTS = 3e6  # lattice points within the Morse cut-off we are willing to sum (≈ 0.3 s)

#: Distances of the first two neighbour shells in units of the lattice constant.
_SHELLS = {"sc": (1.0, math.sqrt(2.0)), "bcc": (math.sqrt(3.0) / 2.0, 1.0), "fcc": (1.0 / math.sqrt(2.0), 1.0)}
#: Atoms per conventional cubic cell (in units of a) of each structure.
_BASIS = {
    "sc": np.zeros((1, 3)),
    "bcc": np.array([[0.0, 0.0, 0.0], [0.5, 0.5, 0.5]]),
    "fcc": np.array([[0.0, 0.0, 0.0], [0.0, 0.5, 0.5], [0.5, 0.0, 0.5], [0.5, 0.5, 0.0]]),
}


def _distances(r, who: str) -> tuple[np.ndarray, bool]:
    """r as a float array of positive finite distances in Å, and whether it was a scalar."""
    try:
        x = np.asarray(r, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{who}: r must be a number or an array of numbers in Å, not {r!r}") from None
    if not np.all(np.isfinite(x) & (x > 0)):
        raise InputError(f"{who}: distances must be finite and > 0 Å")
    return x, x.ndim == 0


def _finished(value: np.ndarray, scalar: bool, who: str, what: str):
    if not np.all(np.isfinite(value)):
        raise InputError(f"{who}: {what} overflows at the distances given: they lie too far inside the repulsive core")
    return float(value) if scalar else value


@dataclass(frozen=True)
class Morse:
    """The Morse pair potential φ(r) = D [e^(−2a(r−r₀)) − 2 e^(−a(r−r₀))] (published form).

    Parameters
    ----------
    depth : float — well depth D in eV (φ(r₀) = −D)
    width : float — a in 1/Å (the inverse range of the well)
    r0 : float — distance of the minimum in Å
    """

    depth: float
    width: float
    r0: float

    def __post_init__(self):
        for name in ("depth", "width", "r0"):
            object.__setattr__(self, name, _checks.positive(f"Morse {name}", getattr(self, name)))

    def energy(self, r):
        """φ(r) in eV at distances r in Å (a float for a number, else an array)."""
        x, scalar = _distances(r, "Morse")
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # inf where φ overflows: refused below
            e = np.exp(-self.width * (x - self.r0))
            value = self.depth * e * (e - 2.0)
        return _finished(value, scalar, "Morse", "φ(r)")

    def force_constant(self, r):
        """φ''(r) in N/m at distances r in Å: 2a²D [2e^(−2a(r−r₀)) − e^(−a(r−r₀))]."""
        x, scalar = _distances(r, "Morse")
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # inf or NaN where φ'' overflows: refused below
            e = np.exp(-self.width * (x - self.r0))
            value = 2.0 * (self.width * self.width) * self.depth * e * (2.0 * e - 1.0) * _EV_PER_A2_IN_N_PER_M
        return _finished(value, scalar, "Morse", "φ''(r)")

    def _static_energy(self, structure: str, a: float) -> float:
        """½ Σ φ(|R|) per atom in eV (module docstring: the cut-off)."""
        rc = self._cutoff(structure, a)
        try:
            total = math.fsum(float(np.sum(self.energy(d))) for d in _neighbour_distances(structure, a, rc))
        except OverflowError:
            total = math.inf
        if not math.isfinite(total):
            raise InputError(f"Morse: the static energy overflows at a = {a:g} Å (far inside the core)")
        return 0.5 * total

    def _cutoff(self, structure: str, a: float) -> float:
        """The smallest r_c ≥ max(r₀, a) with the continuum tail beyond it below _TAIL·D (in logarithms,
        so that no parameter overflows), refusing a sphere of more than _MAX_POINTS atoms."""
        w, r0 = self.width, self.r0
        log_density = math.log(_BASIS[structure].shape[0]) - 3.0 * math.log(a)
        log_w = math.log(w)
        start = max(r0, a)
        rc = start
        for _ in range(200):
            log_r = math.log(rc)
            terms = (2.0 * log_r - log_w, math.log(2.0) + log_r - 2.0 * log_w, math.log(2.0) - 3.0 * log_w)
            peak = max(terms)
            log_poly = peak + math.log(sum(math.exp(t - peak) for t in terms))
            excess = math.log(4.0 * math.pi) + log_density + log_poly - math.log(_TAIL)
            new = max(start, r0 + excess / w)
            if abs(new - rc) <= 1e-12 * new:
                break
            rc = new
        if math.log(4.0 / 3.0 * math.pi) + 3.0 * math.log(rc) + log_density > math.log(_MAX_POINTS):
            raise InputError(
                f"Morse width {w:g}/Å is so small against the lattice constant {a:g} Å that the static energy "
                f"would need more than {_MAX_POINTS:.0e} neighbours (cut-off {rc:.4g} Å); "
                "use width × lattice constant ≥ about 0.75"
            )
        return rc


@dataclass(frozen=True)
class LennardJones:
    """The Lennard-Jones pair potential φ(r) = 4ε [(σ/r)¹² − (σ/r)⁶] (published form).

    Parameters
    ----------
    epsilon : float — well depth ε in eV (the minimum is −ε at r = 2^(1/6) σ)
    sigma : float — σ in Å (φ(σ) = 0)
    """

    epsilon: float
    sigma: float

    def __post_init__(self):
        for name in ("epsilon", "sigma"):
            object.__setattr__(self, name, _checks.positive(f"Lennard-Jones {name}", getattr(self, name)))

    def energy(self, r):
        """φ(r) in eV at distances r in Å (a float for a number, else an array)."""
        x, scalar = _distances(r, "Lennard-Jones")
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # inf where φ overflows: refused below
            s6 = (self.sigma / x) ** 6
            value = 4.0 * self.epsilon * s6 * (s6 - 1.0)
        return _finished(value, scalar, "Lennard-Jones", "φ(r)")

    def force_constant(self, r):
        """φ''(r) in N/m at distances r in Å: (4ε/r²) [156 (σ/r)¹² − 42 (σ/r)⁶]."""
        x, scalar = _distances(r, "Lennard-Jones")
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # inf or NaN where φ'' overflows: refused below
            s6 = (self.sigma / x) ** 6
            value = 4.0 * self.epsilon * s6 * (156.0 * s6 - 42.0) / (x * x) * _EV_PER_A2_IN_N_PER_M
        return _finished(value, scalar, "Lennard-Jones", "φ''(r)")

    def _static_energy(self, structure: str, a: float) -> float:
        """2ε [σ¹² S₁₂ − σ⁶ S₆] per atom in eV, the lattice sums by Ewald's splitting."""
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # inf or NaN where E overflows: refused below
            s6 = np.float64(self.sigma / a) ** 6
            value = float(2.0 * self.epsilon * s6 * (s6 * _power_sum(structure, 12) - _power_sum(structure, 6)))
        if not math.isfinite(value):
            raise InputError(f"Lennard-Jones: the static energy overflows at a = {a:g} Å (far inside the core)")
        return value


def pair_lattice(potential: Morse | LennardJones, structure: str, a: float, mass: float, shells: int = 2, *,
                 name: str | None = None, species: str = "atom") -> tuple[CubicLattice, float]:
    """A monatomic cubic spring lattice from a pair potential, and its static energy.

    The springs are the curvatures of the potential at the neighbour distances,
    K1 = φ''(r₁) and K2 = φ''(r₂): central springs only, the tension term φ'(r)/r of a
    strained pair dropped (common practice for a spring-model demonstration; the module
    docstring states the approximation).  The static energy sums the potential over all
    neighbours, to about 1e-12 of the well depth (the module docstring gives the cut-off).

    Parameters
    ----------
    potential : Morse or LennardJones
    structure : "sc", "bcc" or "fcc"
    a : float — cubic lattice constant in Å
    mass : float — atomic mass in u
    shells : int — 1 (nearest-neighbour springs only, K2 = 0) or 2 (default)
    name : str, optional — the lattice's name
    species : str — the atom's name

    Returns
    -------
    (CubicLattice, float)
        The lattice (springs in N/m) and the static energy per atom in eV,
        E = ½ Σ_(R ≠ 0) φ(|R|).

    Raises
    ------
    InputError
        An unknown structure or potential, `shells` other than 1 or 2, a lattice constant
        where φ''(r₁) ≤ 0 (beyond the inflection point the nearest-neighbour spring would
        be unstable), non-positive `a` or `mass`.
    """
    if not isinstance(potential, (Morse, LennardJones)):
        raise InputError(f"pair_lattice needs a Morse or LennardJones potential, not {type(potential).__name__}")
    if structure not in _SHELLS:
        raise InputError(f"structure must be one of {', '.join(_SHELLS)}, not {structure!r}")
    a = _checks.positive("a (Å)", a)
    if isinstance(shells, bool) or shells not in (1, 2):
        raise InputError(f"shells must be 1 or 2 (the springs a CubicLattice has), not {shells!r}")
    r1, r2 = (f * a for f in _SHELLS[structure])
    k1 = potential.force_constant(r1)
    if not k1 > 0:
        raise InputError(
            f"the nearest-neighbour spring φ''(r₁) = {k1:.4g} N/m at r₁ = {r1:.4g} Å (a = {a:g} Å) is not positive: "
            "the lattice is beyond the potential's inflection point; choose a smaller lattice constant"
        )
    k2 = potential.force_constant(r2) if shells == 2 else 0.0
    lattice = CubicLattice(structure, mass, a, k1, k2, name=name, species=species)
    return lattice, potential._static_energy(structure, a)


# --- lattice sums --------------------------------------------------------------------------------
def _neighbour_distances(structure: str, a: float, rc: float):
    """Distances (Å) of every lattice point with 0 < |R| ≤ rc, one slab of cubic cells at a time."""
    basis = _BASIS[structure]
    m = int(math.ceil(rc / a)) + 1
    n = np.arange(-m, m + 1, dtype=float)
    jk = np.stack(np.meshgrid(n, n, indexing="ij"), -1).reshape(-1, 2)
    for i in n:
        cells = np.column_stack([np.full(jk.shape[0], i), jk])
        points = (cells[:, None, :] + basis[None, :, :]).reshape(-1, 3) * a
        d = np.sqrt(np.einsum("ij,ij->i", points, points))
        yield d[(d > 0) & (d <= rc)]


def _upper_gamma_integer(s: int, x: np.ndarray) -> np.ndarray:
    """Γ(s, x) for a whole s ≥ 1: (s−1)! e⁻ˣ Σ_(k<s) xᵏ/k!."""
    term = np.ones_like(x)
    total = np.ones_like(x)
    for k in range(1, s):
        term = term * x / k
        total = total + term
    return math.factorial(s - 1) * np.exp(-x) * total


def _upper_gamma_negative_half(s: float, x: np.ndarray) -> np.ndarray:
    """Γ(s, x) for s = ½, −½, −3/2, …, down from Γ(½, x) = √π erfc √x."""
    value = math.sqrt(math.pi) * erfc(np.sqrt(x))
    order = 0.5
    while order > s + 0.25:
        order -= 1.0
        value = (value - x**order * np.exp(-x)) / order
    return value


@lru_cache(maxsize=None)
def _power_sum(structure: str, n: int) -> float:
    """S_n = Σ_(R ≠ 0) |R|⁻ⁿ for the lattice of constant 1 (n even, > 3), by Ewald's splitting.

    With |R|⁻ⁿ = (1/Γ(s)) ∫₀^∞ t^(s−1) e^(−R²t) dt, s = n/2, split at t = η² and the small-t
    part summed over the reciprocal lattice (Poisson):
    S_n Γ(s) = Σ' Γ(s, η²R²) R⁻ⁿ + (π^(3/2)/Ω) [η^(n−3)/(s − 3/2) + Σ' (G/2)^(n−3) Γ(3/2 − s, G²/4η²)] − ηⁿ/s.
    """
    s = n // 2
    prim, scale = _CELLS[structure]
    cell = np.asarray(prim, dtype=float) * scale
    omega = abs(float(np.linalg.det(cell)))
    reciprocal = 2.0 * math.pi * np.linalg.inv(cell).T
    eta = math.sqrt(math.pi) / omega ** (1.0 / 3.0)
    x_max = 90.0  # x^(s−1) e^(−x) at x = 90 is below 1e-30 of the terms at x ≈ 1
    real = _lattice_vectors(cell, math.sqrt(x_max) / eta)
    r2 = np.einsum("ij,ij->i", real, real)
    real_part = math.fsum(_upper_gamma_integer(s, eta**2 * r2) / r2**s)
    recip = _lattice_vectors(reciprocal, 2.0 * eta * math.sqrt(x_max))
    g2 = np.einsum("ij,ij->i", recip, recip)
    reciprocal_part = math.fsum((g2 / 4.0) ** (s - 1.5) * _upper_gamma_negative_half(1.5 - s, g2 / (4.0 * eta**2)))
    total = real_part + math.pi**1.5 / omega * (eta ** (n - 3) / (s - 1.5) + reciprocal_part) - eta**n / s
    return total / math.factorial(s - 1)


def _lattice_vectors(vectors: np.ndarray, radius: float) -> np.ndarray:
    """Every nonzero combination of the rows of `vectors` no longer than `radius`."""
    # n = p·V⁻¹, so |n_i| ≤ radius·|column i of V⁻¹|: a box of integer coefficients holding the sphere.
    m = np.ceil(radius * np.linalg.norm(np.linalg.inv(vectors), axis=0)).astype(int)
    grids = np.meshgrid(*(np.arange(-k, k + 1) for k in m), indexing="ij")
    coefficients = np.stack(grids, -1).reshape(-1, 3).astype(float)
    points = coefficients @ vectors
    length = np.sqrt(np.einsum("ij,ij->i", points, points))
    return points[(length > 0) & (length <= radius)]
