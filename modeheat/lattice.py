"""Force-constant lattices: dispersions, densities of states and sound velocities.

Models
------
* :class:`MonatomicChain` and :class:`DiatomicChain` — 1-D chains with nearest-
  neighbour springs, solved analytically (dispersion and DOS) and on a k-mesh.
* :class:`CubicLattice` — monatomic sc, bcc or fcc with central springs to the
  nearest (K1) and next-nearest (K2) neighbours.
* :class:`RockSalt` — the two-atom rock-salt basis on the fcc lattice: a spring K1
  between unlike nearest neighbours and, optionally, springs between like next-nearest
  neighbours (one per species).

Units: masses in atomic mass units (u, :data:`scipy.constants.atomic_mass`), spring
constants in N/m, lengths in Å, wave vectors in Å⁻¹ (including the 2π), frequencies
in THz as ordinary frequency ν = ω/2π unless a ``unit`` says otherwise, sound
velocities in m/s, elastic constants in GPa.

Numerics
--------
A central spring K between atoms s and t separated by R (unit vector n) has the pair
energy ½K[n·(u_s − u_t)]², i.e. the force-constant block K·nnᵀ.  The dynamical matrix
is

    D_st(k) = [δ_st Σ_(bonds of s) K nnᵀ − Σ_(bonds s→t) K nnᵀ cos(k·R)] / √(m_s m_t),

where every structure here has each atom at a centre of inversion, so the bonds of
each pair (s, t) come in ±R pairs and D(k) is real symmetric (the phase e^(ik·R) over
a ±R pair is 2cos k·R).  It is built for a whole batch of k-points by one matrix
product and diagonalised with batched :func:`numpy.linalg.eigh` (``eigvalsh`` where
no eigenvectors are needed); ν = √λ/2π.  λ within rounding of zero (|λ| ≤ 10⁻¹² of
the largest on-site term of D, where its rounding errors come from) is set to 0, and
any other negative λ is returned as an imaginary mode, ν = −√|λ|/2π (negative
frequencies are imaginary modes throughout modeheat).  Eigenvector weights |e_s|²
summed over the three Cartesian components give each species' share of a mode; they
add to 1.

The k-mesh is a uniform Γ-centred grid of N1×N2×N3 points over the reciprocal cell
(a Monkhorst–Pack grid without shift), no symmetry used.  The long loop is a
generator (:func:`iter_mesh`, :func:`iter_dos`) that yields a :class:`Progress` per
batch, the last one carrying the result, so a command-line bar and a widget share one
code path; :func:`mesh_modes` and :func:`dos` run it to the end.

Density of states: the linear tetrahedron method.  Each sub-cell of the mesh is cut
into six tetrahedra around its shortest main diagonal; inside each tetrahedron each
branch's frequency is interpolated linearly between the four corners, whose
integrated number of states is then known in closed form (a piecewise cubic).  The
density reported at each grid frequency is the exact mean of that linear-tetrahedron
density over a bin centred there (half bins at both ends of the grid), so the
trapezoid rule over the grid gives exactly 3·atoms modes and nothing is lost to
sampling a singular density at points.  A partial DOS weights each tetrahedron by the
mean of its four corners' eigenvector weights (constant inside the tetrahedron),
so the partials add up to the total exactly.  The chains use the 1-D analogue: the
frequency is linear between neighbouring k-points, each interval giving a flat
density between its end frequencies.

Elastic constants (derived here)
--------------------------------
Under a homogeneous strain ε a bond R stretches by n·εR = |R| nᵢεᵢⱼnⱼ.  When every atom
is a centre of inversion there is no internal relaxation, and the energy density
W = (1/Ω)·½Σ_s Σ_(bonds of s) ½K(|R| nᵢnⱼεᵢⱼ)² (the first ½ because each bond is seen
from both its ends) equals ½Cᵢⱼₖₗεᵢⱼεₖₗ with

    Cᵢⱼₖₗ = (1/2Ω) Σ_s Σ_(bonds of s) K RᵢRⱼRₖRₗ / R²,

Ω the volume of the primitive cell.  The full symmetry in i, j, k, l gives the Cauchy
relation C12 = C44 of central forces.  Summing over the neighbour shells:

* sc (Ω = a³; NN a⟨100⟩, NNN a⟨110⟩): C11 = (K1 + 2K2)/a, C12 = C44 = K2/a.
* bcc (Ω = a³/2; NN (a/2)⟨111⟩, NNN a⟨100⟩): C11 = 2K1/(3a) + 2K2/a,
  C12 = C44 = 2K1/(3a).
* fcc (Ω = a³/4; NN (a/2)⟨110⟩, NNN a⟨100⟩): C11 = (2K1 + 4K2)/a, C12 = C44 = K1/a.
* rock-salt (Ω = a³/4; NN unlike (a/2)⟨100⟩, NNN like (a/2)⟨110⟩, springs K2a, K2b):
  C11 = 2(K1 + K2a + K2b)/a, C12 = C44 = (K2a + K2b)/a — each like sublattice adds
  what an fcc nearest-neighbour lattice of its own would.

For example fcc nearest neighbours: 8 of the 12 bonds have Rₓ = ±a/2 with R² = a²/2, so
Σ K Rₓ⁴/R² = 8K(a⁴/16)/(a²/2) = Ka², and C11 = Ka²/(2·a³/4) = 2K/a; 4 bonds have
Rₓ, Rᵧ both ±a/2, Σ K Rₓ²Rᵧ²/R² = Ka²/2, so C12 = K/a.  Sound velocities follow from
the Christoffel equation det(Cᵢⱼₖₗnⱼnₗ − ρv²δᵢₖ) = 0 (along [100]: v_L = √(C11/ρ),
v_T = √(C44/ρ)), ρ the mass density.  Models with a zero shear constant (sc or rock-
salt without K2, so C44 = 0; bcc without K2, so C11 = C12) have branches of zero
frequency along whole lines of k and are mechanically unstable; they still compute.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from typing import NamedTuple, Union

import numpy as np
from scipy import constants as _c

from .errors import InputError
from .spectrum import Spectrum
from .units import check_unit, kelvin_per

__all__ = [
    "MonatomicChain",
    "DiatomicChain",
    "CubicLattice",
    "RockSalt",
    "Progress",
    "MeshModes",
    "DensityOfStates",
    "Dispersion",
    "ElasticConstants",
    "iter_mesh",
    "mesh_modes",
    "tetrahedron_dos",
    "iter_dos",
    "dos",
    "dispersion",
    "sound_velocities",
    "elastic_velocities",
    "debye_coefficient",
    "debye_temperature",
]

_AMU = _c.atomic_mass  # kg
_ANGSTROM = 1e-10  # m
_TO_THZ = 1.0 / (2.0 * math.pi * 1e12)  # ω in rad/s → ν in THz
_ZERO = 1e-12  # |λ| below this fraction of the largest on-site term of D is rounding
_K_BATCH = 16384  # k-points per diagonalisation batch
_CELL_BATCH = 8192  # mesh sub-cells per tetrahedron batch
_POINTS = 401  # default number of frequency grid points


# --------------------------------------------------------------------------------------
# validation helpers


def _positive(label: str, value) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{label} must be a positive number, not {value!r}") from None
    if not (math.isfinite(v) and v > 0):
        raise InputError(f"{label} must be a positive number, not {value!r}")
    return v


def _finite(label: str, value) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{label} must be a finite number, not {value!r}") from None
    if not math.isfinite(v):
        raise InputError(f"{label} must be a finite number, not {value!r}")
    return v


def _fix(obj, name: str, value) -> None:
    object.__setattr__(obj, name, value)


def _freeze(obj, *names: str) -> None:
    """Make the named array fields of a frozen result read-only views."""
    for name in names:
        value = getattr(obj, name)
        if value is not None:
            view = np.asarray(value).view()
            view.flags.writeable = False
            _fix(obj, name, view)


# --------------------------------------------------------------------------------------
# results


class Progress(NamedTuple):
    """One step of a long computation.

    Attributes
    ----------
    done : int — batches finished
    total : int — batches in all
    stage : str — what is being done ("modes" or "tetrahedra")
    result : object — None until the last step, which carries the finished result
    """

    done: int
    total: int
    stage: str
    result: object = None


@dataclass(frozen=True)
class MeshModes:
    """Every mode of a model on a Γ-centred k-mesh.

    Attributes
    ----------
    mesh : tuple of 3 int — points along each reciprocal vector
    reciprocal : ndarray (3, 3) — reciprocal vectors as rows in Å⁻¹ (with 2π)
    kpoints : ndarray (n, 3) — Cartesian wave vectors in Å⁻¹, point (i, j, l) at
        index (i·N2 + j)·N3 + l
    frequency : ndarray (n, branches) — ν in THz, ascending at each k; negative values
        are imaginary modes
    weights : ndarray (n, branches, species) or None — eigenvector weights |e_s|² of
        each species (None for one species)
    species : tuple of str
    atoms : int — atoms per primitive cell (one formula unit)
    imaginary : int — number of imaginary modes (negative λ beyond rounding)
    """

    mesh: tuple[int, int, int]
    reciprocal: np.ndarray = field(repr=False)
    kpoints: np.ndarray = field(repr=False)
    frequency: np.ndarray = field(repr=False)
    weights: np.ndarray | None = field(repr=False)
    species: tuple[str, ...]
    atoms: int
    imaginary: int

    def __post_init__(self):
        _freeze(self, "reciprocal", "kpoints", "frequency", "weights")


@dataclass(frozen=True)
class DensityOfStates:
    """A density of states as computed, before it becomes a :class:`~modeheat.Spectrum`.

    Attributes
    ----------
    frequency : ndarray — uniform grid in `unit`
    total : ndarray — states per `unit` per formula unit; the trapezoid rule over the
        grid gives 3·atoms (the chains: 3·atoms as well, see their ``spectrum``)
    partials : dict of str to ndarray — per species, same units, adding up to `total`
    unit : str
    atoms : int — atoms per formula unit
    name : str or None
    """

    frequency: np.ndarray = field(repr=False)
    total: np.ndarray = field(repr=False)
    partials: dict[str, np.ndarray] = field(repr=False)
    unit: str
    atoms: int
    name: str | None = None

    def __post_init__(self):
        _freeze(self, "frequency", "total")
        parts = {}
        for key, value in self.partials.items():
            view = np.asarray(value).view()
            view.flags.writeable = False
            parts[key] = view
        _fix(self, "partials", parts)

    def to(self, unit: str) -> "DensityOfStates":
        """The same density of states with frequencies in another unit."""
        unit = check_unit(unit)
        r = kelvin_per(self.unit) / kelvin_per(unit)
        return DensityOfStates(
            self.frequency * r,
            self.total / r,
            {k: v / r for k, v in self.partials.items()},
            unit,
            self.atoms,
            self.name,
        )

    def spectrum(self, *, low_t: str | float = "auto", low_t_cutoff: float | None = None) -> Spectrum:
        """This density of states as a :class:`~modeheat.Spectrum` (continuation as there)."""
        return Spectrum(
            self.frequency,
            self.total,
            unit=self.unit,
            atoms=self.atoms,
            partials=self.partials or None,
            name=self.name,
            low_t=low_t,
            low_t_cutoff=low_t_cutoff,
        )


@dataclass(frozen=True)
class Dispersion:
    """Frequencies along a path through the Brillouin zone, for plotting.

    Attributes
    ----------
    distance : ndarray (n,) — path length from the start in Å⁻¹
    frequency : ndarray (n, branches) — in `unit`; negative values are imaginary modes
    ticks : ndarray — distances of the labelled points
    labels : tuple of str — their labels (Γ, X, …)
    weights : ndarray (n, branches, species) or None — eigenvector weights per species
    species : tuple of str
    unit : str
    """

    distance: np.ndarray = field(repr=False)
    frequency: np.ndarray = field(repr=False)
    ticks: np.ndarray
    labels: tuple[str, ...]
    weights: np.ndarray | None = field(repr=False)
    species: tuple[str, ...]
    unit: str

    def __post_init__(self):
        _freeze(self, "distance", "frequency", "ticks", "weights")


@dataclass(frozen=True)
class ElasticConstants:
    """Cubic elastic constants of a spring model.

    Attributes
    ----------
    c11, c12, c44 : float — in GPa
    density : float — mass density ρ in kg/m³
    """

    c11: float
    c12: float
    c44: float
    density: float

    @property
    def bulk_modulus(self) -> float:
        """B = (C11 + 2C12)/3 in GPa."""
        return (self.c11 + 2.0 * self.c12) / 3.0

    @property
    def stable(self) -> bool:
        """Born's stability conditions of a cubic crystal: C11 > |C12|, C44 > 0, C11 + 2C12 > 0."""
        return self.c11 > abs(self.c12) and self.c44 > 0 and self.c11 + 2.0 * self.c12 > 0

    def christoffel(self, direction) -> np.ndarray:
        """The Christoffel matrix Cᵢⱼₖₗnⱼnₗ in GPa for a propagation direction (any length)."""
        return self._christoffel(_unit_vector(direction)[None, :])[0]

    def _christoffel(self, n: np.ndarray) -> np.ndarray:
        """Christoffel matrices (m, 3, 3) in GPa for unit vectors n (m, 3)."""
        g = (self.c12 + self.c44) * n[:, :, None] * n[:, None, :]
        i = np.arange(3)
        g[:, i, i] = self.c11 * n**2 + self.c44 * (1.0 - n**2)
        return g


def _unit_vector(direction) -> np.ndarray:
    n = np.asarray(direction, dtype=float).reshape(-1)
    if n.shape != (3,) or not np.all(np.isfinite(n)) or not np.any(n):
        raise InputError(f"a direction must be three finite numbers, not all zero; got {direction!r}")
    return n / np.linalg.norm(n)


# --------------------------------------------------------------------------------------
# 1-D chains


def _chain_mesh(mesh: int) -> int:
    if isinstance(mesh, bool) or not isinstance(mesh, (int, np.integer)) or mesh < 4:
        raise InputError(f"a chain's k-mesh needs an integer number ≥ 4 of points, not {mesh!r}")
    return int(mesh)


@dataclass(frozen=True)
class MonatomicChain:
    """A chain of equal atoms joined by equal nearest-neighbour springs.

    ω(k) = 2√(K/m)·|sin(ka/2)|, and the density of states per atom (one mode)
    g(ω) = (2/π)/√(ω_max² − ω²) for ω < ω_max = 2√(K/m); the same form holds in ν.

    Parameters
    ----------
    mass : float — atomic mass in u
    spring : float — spring constant K in N/m
    spacing : float — interatomic distance a in Å
    name : str, optional
    """

    mass: float
    spring: float
    spacing: float
    name: str | None = None

    def __post_init__(self):
        _fix(self, "mass", _positive("mass", self.mass))
        _fix(self, "spring", _positive("spring", self.spring))
        _fix(self, "spacing", _positive("spacing", self.spacing))

    @property
    def max_frequency(self) -> float:
        """ν_max = 2√(K/m)/2π in THz."""
        return 2.0 * math.sqrt(self.spring / (self.mass * _AMU)) * _TO_THZ

    @property
    def sound_velocity(self) -> float:
        """a√(K/m) in m/s."""
        return self.spacing * _ANGSTROM * math.sqrt(self.spring / (self.mass * _AMU))

    def frequencies(self, k) -> np.ndarray:
        """ν(k) in THz, shape (n, 1), for wave vectors k in Å⁻¹."""
        k = np.asarray(k, dtype=float).reshape(-1)
        return (self.max_frequency * np.abs(np.sin(0.5 * k * self.spacing)))[:, None]

    def density(self, frequency) -> np.ndarray:
        """The analytic DOS (2/π)/√(ν_max² − ν²) in states per THz per atom (one mode).

        Zero outside [0, ν_max); infinite at ν_max.
        """
        nu = np.asarray(frequency, dtype=float)
        top = self.max_frequency
        inside = (nu >= 0) & (nu < top)
        safe = np.where(inside, nu, 0.0)
        g = np.where(inside, (2.0 / math.pi) / np.sqrt(top**2 - safe**2), 0.0)
        return np.where(nu == top, np.inf, g)

    def density_of_states(self, mesh: int = 4096, *, step: float | None = None, points: int = _POINTS) -> DensityOfStates:
        """The DOS sampled on a k-mesh of `mesh` points (1-D linear interpolation).

        Counted as three polarisations with the chain's own dispersion (a chain whose
        transverse springs equal the longitudinal one), so it integrates to 3 per atom and
        gives a :class:`~modeheat.Spectrum` of 3 modes per atom.

        Parameters
        ----------
        mesh : int — k-points over the zone
        step : float, optional — frequency step in THz (default from `points`)
        points : int — frequency grid points when `step` is not given
        """
        mesh = _chain_mesh(mesh)
        k = 2.0 * math.pi * np.arange(mesh) / (mesh * self.spacing)
        return _chain_dos(self.frequencies(k), None, (), 1, step, points, self.name)

    def spectrum(
        self,
        mesh: int = 4096,
        *,
        step: float | None = None,
        points: int = _POINTS,
        low_t: str | float = "off",
    ) -> Spectrum:
        """:meth:`density_of_states` as a Spectrum of 3 modes per atom.

        The continuation is off by default: a chain's density is flat, not ∝ ν², at low
        frequency, so its C_v is linear in T there.
        """
        return self.density_of_states(mesh, step=step, points=points).spectrum(low_t=low_t)


@dataclass(frozen=True)
class DiatomicChain:
    """A chain of alternating masses joined by equal nearest-neighbour springs.

    With s = sin²(ka/2) (a the cell length, two atoms per cell),
    m_a m_b ω⁴ − 2K(m_a + m_b)ω² + 4K²s = 0: an acoustic branch up to √(2K/m_heavy)
    and an optical branch from √(2K/m_light) to √(2K(1/m_a + 1/m_b)), with a gap
    between them when the masses differ.

    Parameters
    ----------
    mass_a, mass_b : float — atomic masses in u
    spring : float — spring constant K in N/m
    spacing : float — cell length a in Å (twice the interatomic distance)
    species : tuple of 2 str — names of the two atoms
    name : str, optional
    """

    mass_a: float
    mass_b: float
    spring: float
    spacing: float
    species: tuple[str, str] = ("A", "B")
    name: str | None = None

    def __post_init__(self):
        _fix(self, "mass_a", _positive("mass_a", self.mass_a))
        _fix(self, "mass_b", _positive("mass_b", self.mass_b))
        _fix(self, "spring", _positive("spring", self.spring))
        _fix(self, "spacing", _positive("spacing", self.spacing))
        species = tuple(str(s) for s in self.species)
        if len(species) != 2 or species[0] == species[1]:
            raise InputError(f"species must be two different names, not {self.species!r}")
        _fix(self, "species", species)

    def _omega2(self, which: str) -> float:
        k = self.spring
        ma, mb = self.mass_a * _AMU, self.mass_b * _AMU
        return {
            "heavy": 2.0 * k / max(ma, mb),
            "light": 2.0 * k / min(ma, mb),
            "top": 2.0 * k * (1.0 / ma + 1.0 / mb),
        }[which]

    @property
    def gap(self) -> tuple[float, float]:
        """(√(2K/m_heavy), √(2K/m_light))/2π in THz: top of the acoustic, bottom of the optical branch."""
        return math.sqrt(self._omega2("heavy")) * _TO_THZ, math.sqrt(self._omega2("light")) * _TO_THZ

    @property
    def max_frequency(self) -> float:
        """√(2K(1/m_a + 1/m_b))/2π in THz, the optical branch at k = 0."""
        return math.sqrt(self._omega2("top")) * _TO_THZ

    @property
    def sound_velocity(self) -> float:
        """a√(K/(2(m_a + m_b))) in m/s."""
        return self.spacing * _ANGSTROM * math.sqrt(self.spring / (2.0 * (self.mass_a + self.mass_b) * _AMU))

    def frequencies(self, k) -> np.ndarray:
        """Both branches in THz, shape (n, 2) (acoustic, optical), analytically."""
        k = np.asarray(k, dtype=float).reshape(-1)
        K = self.spring
        ma, mb = self.mass_a * _AMU, self.mass_b * _AMU
        s = np.sin(0.5 * k * self.spacing) ** 2
        half = K * (1.0 / ma + 1.0 / mb)
        root = np.sqrt(np.clip(half**2 - 4.0 * K**2 * s / (ma * mb), 0.0, None))
        w2 = np.stack([np.clip(half - root, 0.0, None), half + root], axis=1)
        return np.sqrt(w2) * _TO_THZ

    def modes(self, k) -> tuple[np.ndarray, np.ndarray]:
        """Frequencies (n, 2) in THz and eigenvector weights (n, 2, 2) [k, branch, species] by eigh."""
        k = np.asarray(k, dtype=float).reshape(-1)
        K = self.spring
        ma, mb = self.mass_a * _AMU, self.mass_b * _AMU
        # |1 + e^(−ika)| = 2|cos(ka/2)|; the phase of the coupling changes no eigenvalue or |e_s|²
        off = -2.0 * K * np.abs(np.cos(0.5 * k * self.spacing)) / math.sqrt(ma * mb)
        d = np.empty((k.size, 2, 2))
        d[:, 0, 0] = 2.0 * K / ma
        d[:, 1, 1] = 2.0 * K / mb
        d[:, 0, 1] = d[:, 1, 0] = off
        lam, vec = np.linalg.eigh(d)
        return _frequencies(lam, 2.0 * K / min(ma, mb)), np.abs(vec.transpose(0, 2, 1)) ** 2

    def density(self, frequency, branch: str | None = None) -> np.ndarray:
        """The analytic DOS in states per THz per cell: one mode per branch.

        g(ω) = |ω(K(m_a + m_b) − m_a m_b ω²)| / (πK²√(s(1 − s))), with
        s = ω²(2K(m_a + m_b) − m_a m_b ω²)/(4K²), from k(ω) on each branch.

        Parameters
        ----------
        frequency : array_like — ν in THz
        branch : "acoustic", "optical" or None (both)
        """
        if branch not in (None, "acoustic", "optical"):
            raise InputError(f"branch must be 'acoustic', 'optical' or None, not {branch!r}")
        nu = np.asarray(frequency, dtype=float)
        K = self.spring
        ma, mb = self.mass_a * _AMU, self.mass_b * _AMU
        lo, hi = self.gap
        top = self.max_frequency
        acoustic = (nu > 0) & (nu < lo)
        optical = (nu > hi) & (nu < top)
        inside = {None: acoustic | optical, "acoustic": acoustic, "optical": optical}[branch]
        w = 2.0 * math.pi * 1e12 * np.where(inside, nu, 0.5 * lo)  # a harmless value outside
        s = w**2 * (2.0 * K * (ma + mb) - ma * mb * w**2) / (4.0 * K**2)
        s = np.clip(s, 1e-300, 1.0 - 1e-16)
        g = np.abs(w * (K * (ma + mb) - ma * mb * w**2)) / (math.pi * K**2 * np.sqrt(s * (1.0 - s)))
        # per unit of ω → per THz of ν
        return np.where(inside, g * 2.0 * math.pi * 1e12, 0.0)

    def density_of_states(self, mesh: int = 4096, *, step: float | None = None, points: int = _POINTS) -> DensityOfStates:
        """The DOS sampled on a k-mesh (1-D linear interpolation), with partials per atom.

        Three polarisations as for :meth:`MonatomicChain.density_of_states`: 6 modes per
        cell of two atoms.
        """
        mesh = _chain_mesh(mesh)
        k = 2.0 * math.pi * np.arange(mesh) / (mesh * self.spacing)
        nu, w = self.modes(k)
        return _chain_dos(nu, w, self.species, 2, step, points, self.name)

    def spectrum(
        self,
        mesh: int = 4096,
        *,
        step: float | None = None,
        points: int = _POINTS,
        low_t: str | float = "off",
    ) -> Spectrum:
        """:meth:`density_of_states` as a Spectrum of 3 modes per atom, partials per species."""
        return self.density_of_states(mesh, step=step, points=points).spectrum(low_t=low_t)


def _chain_dos(nu, weights, species, atoms, step, points, name) -> DensityOfStates:
    """Linear-interval DOS of a periodic 1-D mesh, ×3 polarisations."""
    nxt = np.roll(np.arange(nu.shape[0]), -1)
    lo = np.minimum(nu, nu[nxt]).ravel()
    hi = np.maximum(nu, nu[nxt]).ravel()
    w = None
    if weights is not None:
        w = (0.5 * (weights + weights[nxt])).reshape(-1, weights.shape[2])
    grid, edges = _grid(float(lo.min()), float(hi.max()), step, points)

    coeffs = {"lo": lo, "inv": _reciprocal(hi - lo)}
    cum, pcum = _spread(lo, hi, coeffs, _interval_fraction, edges, w)
    scale = 3.0 / nu.shape[0]  # each interval holds 1/mesh of a mode per branch
    return _finish(grid, edges, cum * scale, None if pcum is None else pcum * scale, species, atoms, name)


# --------------------------------------------------------------------------------------
# 3-D structures


@dataclass(frozen=True)
class _Structure:
    """Primitive cell, masses and bonds of a spring model (all in SI-friendly units)."""

    cell: np.ndarray  # (3, 3) primitive vectors as rows, Å
    masses: np.ndarray  # (atoms,) u
    species: tuple[str, ...]
    bond_s: np.ndarray  # (bonds,) atom index
    bond_t: np.ndarray
    bond_r: np.ndarray  # (bonds, 3) vector from s to t, Å
    bond_k: np.ndarray  # (bonds,) N/m
    lattice_constant: float  # Å
    points: Mapping[str, tuple[float, float, float]]  # high-symmetry points in 2π/a
    path: tuple[str, ...]

    @property
    def atoms(self) -> int:
        return int(self.masses.size)

    @property
    def reciprocal(self) -> np.ndarray:
        """Reciprocal vectors as rows, Å⁻¹ (with 2π)."""
        return 2.0 * math.pi * np.linalg.inv(self.cell).T

    @property
    def volume(self) -> float:
        """Primitive-cell volume in Å³."""
        return abs(float(np.linalg.det(self.cell)))


def _neighbour_shells(cell, basis, shells: int):
    """For each atom s: [(t, R) for each of the first `shells` neighbour shells], R in Å."""
    n = np.arange(-3, 4)
    lat = np.stack(np.meshgrid(n, n, n, indexing="ij"), -1).reshape(-1, 3) @ cell
    out = []
    for s, ts in enumerate(basis):
        cand_t, cand_r = [], []
        for t, tt in enumerate(basis):
            r = lat + (tt - ts)
            d = np.linalg.norm(r, axis=1)
            keep = d > 1e-9
            cand_t.append(np.full(int(keep.sum()), t))
            cand_r.append(r[keep])
        ct, cr = np.concatenate(cand_t), np.concatenate(cand_r)
        d = np.round(np.linalg.norm(cr, axis=1), 9)
        radii = np.unique(d)[:shells]
        out.append([(ct[d == r], cr[d == r]) for r in radii])
    return out


def _build(cell, basis, masses, species, springs, a, points, path) -> _Structure:
    """Bonds from the neighbour shells; springs[(s, t)][j] is K in N/m on shell j of atom s (0 if absent)."""
    cell = np.asarray(cell, dtype=float)
    basis = np.asarray(basis, dtype=float)
    nshell = max(len(v) for v in springs.values())
    shells = _neighbour_shells(cell, basis, nshell)
    bs, bt, br, bk = [], [], [], []
    for s, atom_shells in enumerate(shells):
        for j, (ts, rs) in enumerate(atom_shells):
            for t, r in zip(ts, rs):
                k = springs[(s, int(t))][j] if j < len(springs[(s, int(t))]) else 0.0
                if k != 0.0:
                    bs.append(s)
                    bt.append(int(t))
                    br.append(r)
                    bk.append(k)
    return _Structure(
        cell=cell,
        masses=np.asarray(masses, dtype=float),
        species=tuple(species),
        bond_s=np.asarray(bs, dtype=int),
        bond_t=np.asarray(bt, dtype=int),
        bond_r=np.asarray(br, dtype=float).reshape(-1, 3),
        bond_k=np.asarray(bk, dtype=float),
        lattice_constant=float(a),
        points=points,
        path=tuple(path),
    )


_CELLS = {
    "sc": ([[1, 0, 0], [0, 1, 0], [0, 0, 1]], 1.0),
    "bcc": ([[-1, 1, 1], [1, -1, 1], [1, 1, -1]], 0.5),
    "fcc": ([[0, 1, 1], [1, 0, 1], [1, 1, 0]], 0.5),
}

#: High-symmetry points in units of 2π/a (Cartesian) and the default paths.
_POINTS_3D = {
    "sc": ({"Γ": (0, 0, 0), "X": (0, 0.5, 0), "M": (0.5, 0.5, 0), "R": (0.5, 0.5, 0.5)}, ("Γ", "X", "M", "Γ", "R", "X")),
    "bcc": ({"Γ": (0, 0, 0), "H": (0, 0, 1), "N": (0.5, 0.5, 0), "P": (0.5, 0.5, 0.5)}, ("Γ", "H", "N", "Γ", "P", "H")),
    "fcc": (
        {"Γ": (0, 0, 0), "X": (0, 1, 0), "W": (0.5, 1, 0), "K": (0.75, 0.75, 0), "L": (0.5, 0.5, 0.5)},
        ("Γ", "X", "W", "K", "Γ", "L"),
    ),
}


@dataclass(frozen=True)
class CubicLattice:
    """A monatomic sc, bcc or fcc lattice with central nearest- and next-nearest-neighbour springs.

    Parameters
    ----------
    structure : "sc", "bcc" or "fcc"
    mass : float — atomic mass in u
    a : float — cubic lattice constant in Å
    k1 : float — nearest-neighbour spring constant in N/m (> 0)
    k2 : float — next-nearest-neighbour spring constant in N/m (a negative one may give
        imaginary modes)
    name : str, optional
    species : str — the atom's name
    """

    structure: str
    mass: float
    a: float
    k1: float
    k2: float = 0.0
    name: str | None = None
    species: str = "atom"

    def __post_init__(self):
        if self.structure not in _CELLS:
            raise InputError(f"structure must be one of {', '.join(_CELLS)}, not {self.structure!r}")
        _fix(self, "mass", _positive("mass", self.mass))
        _fix(self, "a", _positive("a", self.a))
        _fix(self, "k1", _positive("k1", self.k1))
        _fix(self, "k2", _finite("k2", self.k2))
        _fix(self, "species", str(self.species))

    def _build_structure(self) -> _Structure:
        prim, scale = _CELLS[self.structure]
        pts, path = _POINTS_3D[self.structure]
        cell = np.asarray(prim, dtype=float) * scale * self.a
        return _build(cell, [[0, 0, 0]], [self.mass], (self.species,), {(0, 0): (self.k1, self.k2)}, self.a, pts, path)

    @property
    def atoms(self) -> int:
        return 1

    @property
    def volume(self) -> float:
        """Volume per atom in Å³."""
        return self.a**3 * {"sc": 1.0, "bcc": 0.5, "fcc": 0.25}[self.structure]

    def elastic_constants(self) -> ElasticConstants:
        """C11, C12, C44 in GPa of this spring model (derivation in the module docstring)."""
        k1, k2 = self.k1, self.k2
        if self.structure == "sc":
            c11, c12 = k1 + 2.0 * k2, k2
        elif self.structure == "bcc":
            c11, c12 = 2.0 * k1 / 3.0 + 2.0 * k2, 2.0 * k1 / 3.0
        else:
            c11, c12 = 2.0 * k1 + 4.0 * k2, k1
        to_gpa = 1.0 / (self.a * _ANGSTROM) / 1e9
        return ElasticConstants(c11 * to_gpa, c12 * to_gpa, c12 * to_gpa, _mass_density(self.mass, self.volume))

    def dynamical_matrix(self, k) -> np.ndarray:
        """D(k) in (rad/s)², shape (n, 3, 3), for Cartesian wave vectors k (n, 3) in Å⁻¹."""
        return _dynamical(_structure(self), k)

    def frequencies(self, k) -> np.ndarray:
        """ν(k) in THz, shape (n, 3), ascending; negative values are imaginary modes."""
        return _eigen_frequencies(_structure(self), k)


@dataclass(frozen=True)
class RockSalt:
    """The rock-salt structure: two species on interpenetrating fcc lattices.

    Parameters
    ----------
    mass_a, mass_b : float — atomic masses in u (atom A at the origin, B at (a/2, 0, 0))
    a : float — cubic lattice constant in Å (twice the A–B distance)
    k1 : float — spring between unlike nearest neighbours in N/m (> 0)
    k2_a, k2_b : float — springs between like next-nearest neighbours, A–A and B–B, in N/m
    species : tuple of 2 str — names of A and B
    name : str, optional
    """

    mass_a: float
    mass_b: float
    a: float
    k1: float
    k2_a: float = 0.0
    k2_b: float = 0.0
    species: tuple[str, str] = ("A", "B")
    name: str | None = None

    def __post_init__(self):
        _fix(self, "mass_a", _positive("mass_a", self.mass_a))
        _fix(self, "mass_b", _positive("mass_b", self.mass_b))
        _fix(self, "a", _positive("a", self.a))
        _fix(self, "k1", _positive("k1", self.k1))
        _fix(self, "k2_a", _finite("k2_a", self.k2_a))
        _fix(self, "k2_b", _finite("k2_b", self.k2_b))
        species = tuple(str(s) for s in self.species)
        if len(species) != 2 or species[0] == species[1]:
            raise InputError(f"species must be two different names, not {self.species!r}")
        _fix(self, "species", species)

    def _build_structure(self) -> _Structure:
        prim, scale = _CELLS["fcc"]
        pts, path = _POINTS_3D["fcc"]
        cell = np.asarray(prim, dtype=float) * scale * self.a
        basis = [[0, 0, 0], [0.5 * self.a, 0, 0]]
        # shell 1 of each atom is the unlike neighbours, shell 2 the like ones
        springs = {(0, 1): (self.k1,), (1, 0): (self.k1,), (0, 0): (0.0, self.k2_a), (1, 1): (0.0, self.k2_b)}
        return _build(cell, basis, [self.mass_a, self.mass_b], self.species, springs, self.a, pts, path)

    @property
    def atoms(self) -> int:
        return 2

    @property
    def volume(self) -> float:
        """Volume per formula unit (primitive cell) in Å³."""
        return self.a**3 / 4.0

    def elastic_constants(self) -> ElasticConstants:
        """C11, C12, C44 in GPa of this spring model (derivation in the module docstring)."""
        k2 = self.k2_a + self.k2_b
        to_gpa = 1.0 / (self.a * _ANGSTROM) / 1e9
        c11, c12 = 2.0 * (self.k1 + k2), k2
        return ElasticConstants(c11 * to_gpa, c12 * to_gpa, c12 * to_gpa, _mass_density(self.mass_a + self.mass_b, self.volume))

    def dynamical_matrix(self, k) -> np.ndarray:
        """D(k) in (rad/s)², shape (n, 6, 6), for Cartesian wave vectors k (n, 3) in Å⁻¹."""
        return _dynamical(_structure(self), k)

    def frequencies(self, k) -> np.ndarray:
        """ν(k) in THz, shape (n, 6), ascending; negative values are imaginary modes."""
        return _eigen_frequencies(_structure(self), k)


Model3D = Union[CubicLattice, RockSalt]
Model = Union[MonatomicChain, DiatomicChain, CubicLattice, RockSalt]


def _mass_density(mass_u: float, volume_a3: float) -> float:
    return mass_u * _AMU / (volume_a3 * _ANGSTROM**3)


def _structure(model) -> _Structure:
    if not isinstance(model, (CubicLattice, RockSalt)):
        raise TypeError(f"expected a CubicLattice or RockSalt, not {type(model).__name__}")
    return model._build_structure()


def _matrix_terms(st: _Structure):
    """Constant part (9a²,) and per-bond k-dependent parts (bonds, 9a²) of D, mass-scaled, SI."""
    na = st.atoms
    dim = 3 * na
    m = st.masses * _AMU
    rn = st.bond_r / np.linalg.norm(st.bond_r, axis=1)[:, None]
    blocks = st.bond_k[:, None, None] * rn[:, :, None] * rn[:, None, :]  # K nnᵀ
    const = np.zeros((dim, dim))
    per_bond = np.zeros((st.bond_k.size, dim, dim))
    for b in range(st.bond_k.size):
        s, t = st.bond_s[b], st.bond_t[b]
        const[3 * s : 3 * s + 3, 3 * s : 3 * s + 3] += blocks[b] / m[s]
        per_bond[b, 3 * s : 3 * s + 3, 3 * t : 3 * t + 3] = blocks[b] / math.sqrt(m[s] * m[t])
    return const.ravel(), per_bond.reshape(st.bond_k.size, -1)


def _k_array(k) -> np.ndarray:
    k = np.asarray(k, dtype=float)
    if k.ndim == 1 and k.size == 3:
        k = k[None, :]
    if k.ndim != 2 or k.shape[1] != 3 or not np.all(np.isfinite(k)):
        raise InputError(f"wave vectors must be finite numbers of shape (n, 3), not shape {k.shape}")
    return k


def _dynamical(st: _Structure, k, terms=None) -> np.ndarray:
    k = _k_array(k)
    const, per_bond = terms if terms is not None else _matrix_terms(st)
    dim = 3 * st.atoms
    phase = np.cos(k @ st.bond_r.T)  # (n, bonds): ±R pairs make e^(ik·R) real
    return (const[None, :] - phase @ per_bond).reshape(-1, dim, dim)


def _eigen_frequencies(st: _Structure, k) -> np.ndarray:
    terms = _matrix_terms(st)
    return _frequencies(np.linalg.eigvalsh(_dynamical(st, k, terms)), float(np.abs(terms[0]).max()))


def _frequencies(lam: np.ndarray, scale: float) -> np.ndarray:
    """Eigenvalues (rad/s)² → ν in THz; rounding-level ones → 0, real negatives → −√|λ|.

    `scale` is the largest on-site term of D, the size of its rounding errors' source.
    """
    lam = np.where(np.abs(lam) <= _ZERO * scale, 0.0, lam)
    return np.sign(lam) * np.sqrt(np.abs(lam)) * _TO_THZ


def _species_weights(vec: np.ndarray, atoms: int) -> np.ndarray:
    """|e_s|² per species from eigenvectors (n, 3·atoms, branches) → (n, branches, atoms)."""
    p = np.abs(vec) ** 2
    return p.reshape(p.shape[0], atoms, 3, p.shape[2]).sum(axis=2).transpose(0, 2, 1)


# --------------------------------------------------------------------------------------
# the k-mesh


def _mesh3(mesh) -> tuple[int, int, int]:
    m = (mesh,) * 3 if np.ndim(mesh) == 0 else tuple(mesh)
    ok = len(m) == 3 and all(isinstance(x, (int, np.integer)) and not isinstance(x, bool) and x >= 2 for x in m)
    if not ok:
        raise InputError(f"mesh must be an integer ≥ 2 or three of them, not {mesh!r}")
    return tuple(int(x) for x in m)


def _batch(value, label: str) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
        raise InputError(f"{label} must be a positive integer, not {value!r}")
    return int(value)


def iter_mesh(model: Model3D, mesh=16, *, vectors: bool | None = None, batch: int = _K_BATCH) -> Iterator[Progress]:
    """Diagonalise D(k) on a Γ-centred mesh in batches, yielding progress.

    Parameters
    ----------
    model : CubicLattice or RockSalt
    mesh : int or 3 ints — points along each reciprocal vector
    vectors : bool, optional — compute eigenvector weights (default: when the model
        has more than one species)
    batch : int — k-points per batch (bounds memory)

    Yields
    ------
    Progress
        (done, total, "modes", None) after each batch; the last one carries the
        :class:`MeshModes`.

    Examples
    --------
    >>> for step in iter_mesh(CubicLattice("fcc", 63.5, 3.61, 28.0), 24):
    ...     pass  # e.g. bar.value = step.done / step.total
    >>> modes = step.result
    """
    st = _structure(model)
    m = _mesh3(mesh)
    batch = _batch(batch, "batch")
    if vectors is None:
        vectors = st.atoms > 1
    grid = np.stack(np.meshgrid(*(np.arange(n) / n for n in m), indexing="ij"), -1).reshape(-1, 3)
    kpts = grid @ st.reciprocal
    nk = kpts.shape[0]
    dim = 3 * st.atoms
    freq = np.empty((nk, dim))
    weights = np.empty((nk, dim, st.atoms)) if vectors else None
    terms = _matrix_terms(st)
    scale = float(np.abs(terms[0]).max())
    total = -(-nk // batch)
    imaginary = 0
    for i in range(total):
        sl = slice(i * batch, min(nk, (i + 1) * batch))
        d = _dynamical(st, kpts[sl], terms)
        if vectors:
            lam, vec = np.linalg.eigh(d)
            weights[sl] = _species_weights(vec, st.atoms)
        else:
            lam = np.linalg.eigvalsh(d)
        nu = _frequencies(lam, scale)
        imaginary += int(np.count_nonzero(nu < 0))
        freq[sl] = nu
        if i < total - 1:
            yield Progress(i + 1, total, "modes")
    result = MeshModes(m, st.reciprocal, kpts, freq, weights, st.species, st.atoms, imaginary)
    yield Progress(total, total, "modes", result)


def _run(steps: Iterator[Progress]):
    last = None
    for last in steps:
        pass
    return last.result


def mesh_modes(model: Model3D, mesh=16, *, vectors: bool | None = None, batch: int = _K_BATCH) -> MeshModes:
    """Every mode on a Γ-centred k-mesh: :func:`iter_mesh` run to the end."""
    return _run(iter_mesh(model, mesh, vectors=vectors, batch=batch))


# --------------------------------------------------------------------------------------
# linear tetrahedron method


def _grid(lo: float, hi: float, step: float | None, points: int):
    """Uniform frequency nodes from 0 (or below the lowest mode) past the highest, and bin edges.

    Each node's bin is centred on it, the two end bins being half bins, and the last
    bin lies wholly above `hi` so the density returns to zero there.
    """
    if step is None:
        if isinstance(points, bool) or not isinstance(points, (int, np.integer)) or points < 8:
            raise InputError(f"points must be an integer ≥ 8, not {points!r}")
        span = hi - min(lo, 0.0)
        step = span / (points - 2) if span > 0 else 1.0
    else:
        step = _positive("step", step)
    start = 0.0 if lo >= 0 else -step * (math.ceil(-lo / step) + 1)
    n = int(math.floor((hi - start) / step + 0.5)) + 2
    nodes = start + step * np.arange(n)
    edges = np.concatenate(([nodes[0]], nodes[:-1] + 0.5 * step, [nodes[-1]]))
    return nodes, edges


def _spread(lo, hi, coeffs, fraction, edges, weights):
    """Σ over elements of their cumulative share of states below each edge.

    Element i holds 0 below lo[i], 1 from hi[i] up and, in between, fraction(c, E),
    where c holds the rows of `coeffs` (per-element arrays) for the elements evaluated.
    Only the (element, edge) pairs with lo < E < hi are evaluated: elements sorted by
    their count of such edges, pass m takes every element's m-th edge, so each pass
    works on a contiguous leading slice.  Returns the total and, with `weights`
    (elements, species), the weighted sums per species.
    """
    ne = edges.size
    j_lo = np.searchsorted(edges, lo, side="right")
    j_hi = np.searchsorted(edges, hi, side="left")
    total = np.bincount(j_hi, minlength=ne + 1)[:ne].cumsum().astype(float)
    part = None
    if weights is not None:
        part = np.stack(
            [np.bincount(j_hi, weights=weights[:, s], minlength=ne + 1)[:ne].cumsum() for s in range(weights.shape[1])],
            axis=1,
        )
    count = j_hi - j_lo
    order = np.argsort(-count, kind="stable")
    order = order[: int(np.count_nonzero(count > 0))]
    if order.size == 0:
        return total, part
    count, j_lo = count[order], j_lo[order]
    c = {key: v[order] for key, v in coeffs.items()}
    w = None if weights is None else weights[order]
    # elements with more than m edges inside: a leading slice, since count is descending
    lengths = np.searchsorted(-count, -np.arange(int(count[0])), side="left")
    for m, n in enumerate(lengths):
        at = j_lo[:n] + m
        val = fraction({key: v[:n] for key, v in c.items()}, edges[at])
        total += np.bincount(at, weights=val, minlength=ne)
        if w is not None:
            for s in range(w.shape[1]):
                part[:, s] += np.bincount(at, weights=val * w[:n, s], minlength=ne)
    return total, part


def _reciprocal(x: np.ndarray) -> np.ndarray:
    """1/x where x > 0, else 0 (the region that needs it is then empty)."""
    out = np.zeros_like(x)
    np.divide(1.0, x, out=out, where=x > 0)
    return out


def _tetra_coefficients(e: np.ndarray) -> dict[str, np.ndarray]:
    """Per-tetrahedron constants of the integrated number of states, corners e (n, 4) sorted."""
    e1, e2, e3, e4 = e[:, 0], e[:, 1], e[:, 2], e[:, 3]
    e21, e31, e41, e32, e42, e43 = e2 - e1, e3 - e1, e4 - e1, e3 - e2, e4 - e2, e4 - e3
    return {
        "e1": e1,
        "e2": e2,
        "e3": e3,
        "e4": e4,
        "e21": e21,
        "a1": _reciprocal(e21 * e31 * e41),
        "a3": _reciprocal(e41 * e42 * e43),
        "b": (e31 + e42) * _reciprocal(e32 * e42),
        "c": _reciprocal(e31 * e41),
    }


def _tetra_fraction(c: dict[str, np.ndarray], E: np.ndarray) -> np.ndarray:
    """Share of a linear tetrahedron's states below E, for e1 < E < e4.

    e1 < E ≤ e2:  (E − e1)³ / (e21 e31 e41)
    e2 < E ≤ e3:  [e21² + 3e21 x + 3x² − (e31 + e42) x³/(e32 e42)] / (e31 e41),  x = E − e2
    e3 < E < e4:  1 − (e4 − E)³ / (e41 e42 e43)
    """
    x1 = E - c["e1"]
    low = x1 * x1 * x1 * c["a1"]
    x = E - c["e2"]
    e21 = c["e21"]
    mid = (e21 * e21 + x * (3.0 * e21 + x * (3.0 - c["b"] * x))) * c["c"]
    y = c["e4"] - E
    high = 1.0 - y * y * y * c["a3"]
    return np.where(E <= c["e2"], low, np.where(E > c["e3"], high, mid))


def _interval_fraction(c: dict[str, np.ndarray], E: np.ndarray) -> np.ndarray:
    """Share of a linear 1-D interval's states below E, for lo < E < hi."""
    return (E - c["lo"]) * c["inv"]


def _tetrahedra(cell_recip: np.ndarray, mesh: tuple[int, int, int]) -> np.ndarray:
    """Corner offsets (6, 4, 3) of the six tetrahedra around the shortest main diagonal."""
    corners = np.array([[i, j, k] for i in (0, 1) for j in (0, 1) for k in (0, 1)])
    step = cell_recip / np.asarray(mesh)[:, None]
    best, flip = math.inf, None
    for f in corners[:4]:  # the four diagonals from f to f^(1,1,1)
        length = np.linalg.norm((1 - 2 * f) @ step)
        if length < best - 1e-12:
            best, flip = length, f
    tets = []
    for perm in ((0, 1, 2), (0, 2, 1), (1, 0, 2), (1, 2, 0), (2, 0, 1), (2, 1, 0)):
        c = [flip.copy()]
        for axis in perm:
            nxt = c[-1].copy()
            nxt[axis] ^= 1
            c.append(nxt)
        tets.append(c)
    return np.array(tets)


def _tetra_steps(modes: MeshModes, step: float | None, points: int, unit: str, name, start: int = 0, total=None):
    """Generator of the tetrahedron stage; the last Progress carries a DensityOfStates."""
    unit = check_unit(unit)
    to_unit = kelvin_per("THz") / kelvin_per(unit)
    m = modes.mesh
    nk = int(np.prod(m))
    freq = modes.frequency
    if freq.shape[0] != nk:
        raise InputError(f"modes hold {freq.shape[0]} k-points, but the mesh {m} has {nk}")
    step_thz = None if step is None else _positive("step", step) / to_unit
    grid, edges = _grid(float(freq.min()), float(freq.max()), step_thz, points)
    offsets = _tetrahedra(modes.reciprocal, m)  # (6, 4, 3)
    cells = np.stack(np.meshgrid(*(np.arange(n) for n in m), indexing="ij"), -1).reshape(-1, 3)
    ncell = cells.shape[0]
    nbatch = -(-ncell // _CELL_BATCH)
    total = total if total is not None else nbatch
    cum = np.zeros(edges.size)
    w_all = modes.weights
    pcum = None if w_all is None else np.zeros((edges.size, w_all.shape[2]))
    mesh_arr = np.asarray(m)
    for i in range(nbatch):
        base = cells[i * _CELL_BATCH : (i + 1) * _CELL_BATCH]
        pos = (base[:, None, None, :] + offsets[None]) % mesh_arr  # (cells, 6, 4, 3)
        corner = ((pos[..., 0] * m[1] + pos[..., 1]) * m[2] + pos[..., 2]).reshape(-1, 4)  # (tets, 4)
        e = freq[corner].transpose(0, 2, 1).reshape(-1, 4)  # (tets·branches, 4)
        order = np.argsort(e, axis=1)
        e = np.take_along_axis(e, order, axis=1)
        w = None
        if w_all is not None:
            w = w_all[corner].mean(axis=1).reshape(-1, w_all.shape[2])  # (tets·branches, species)
        c, p = _spread(e[:, 0], e[:, 3], _tetra_coefficients(e), _tetra_fraction, edges, w)
        cum += c
        if p is not None:
            pcum += p
        if i < nbatch - 1:
            yield Progress(start + i + 1, total, "tetrahedra")
    scale = 1.0 / (6.0 * nk)  # each tetrahedron is 1/(6·N) of the zone
    dens = _finish(grid, edges, cum * scale, None if pcum is None else pcum * scale, modes.species, modes.atoms, name)
    if unit != "THz":
        dens = dens.to(unit)
    yield Progress(start + nbatch, total, "tetrahedra", dens)


def _finish(grid, edges, cum, pcum, species, atoms, name) -> DensityOfStates:
    width = np.diff(edges)
    total = np.diff(cum) / width
    partials = {}
    if pcum is not None:
        for s, label in enumerate(species):
            partials[label] = np.diff(pcum[:, s]) / width
    return DensityOfStates(grid, total, partials, "THz", atoms, name)


def tetrahedron_dos(modes: MeshModes, *, step: float | None = None, points: int = _POINTS, unit: str = "THz", name: str | None = None) -> DensityOfStates:
    """Linear-tetrahedron DOS of the modes on a mesh (method in the module docstring).

    Parameters
    ----------
    modes : MeshModes — from :func:`mesh_modes` (eigenvector weights give partials)
    step : float, optional — frequency step in `unit` (default from `points`)
    points : int — grid points from 0 to just above the highest mode
    unit : str — frequency unit of the result
    name : str, optional
    """
    return _run(_tetra_steps(modes, step, points, unit, name))


def iter_dos(
    model: Model3D,
    mesh=16,
    *,
    step: float | None = None,
    points: int = _POINTS,
    unit: str = "THz",
    low_t: str | float = "auto",
    name: str | None = None,
    batch: int = _K_BATCH,
) -> Iterator[Progress]:
    """The model's DOS as a Spectrum, yielding progress through both stages.

    Parameters
    ----------
    model : CubicLattice or RockSalt
    mesh : int or 3 ints — Γ-centred k-mesh
    step : float, optional — frequency step in `unit`
    points : int — grid points when `step` is not given
    unit : str — frequency unit of the Spectrum
    low_t : "auto", "fit", "extrapolate", "off" or float — the Spectrum's low-temperature continuation
    name : str, optional — defaults to the model's name
    batch : int — k-points per diagonalisation batch

    Yields
    ------
    Progress
        One per k-batch ("modes") and per tetrahedron batch ("tetrahedra"); the last
        carries the :class:`~modeheat.Spectrum` (total DOS, partials per species for
        more than one species).
    """
    unit = check_unit(unit)
    name = model.name if name is None else name
    m = _mesh3(mesh)
    nk = int(np.prod(m))
    k_batches = -(-nk // _batch(batch, "batch"))
    total = k_batches + -(-nk // _CELL_BATCH)
    modes = None
    for p in iter_mesh(model, m, batch=batch):
        modes = p.result
        yield Progress(p.done, total, p.stage)
    for p in _tetra_steps(modes, step, points, unit, name, start=k_batches, total=total):
        if p.result is None:
            yield p
        else:
            yield Progress(total, total, p.stage, p.result.spectrum(low_t=low_t))


def dos(
    model: Model3D,
    mesh=16,
    *,
    step: float | None = None,
    points: int = _POINTS,
    unit: str = "THz",
    low_t: str | float = "auto",
    name: str | None = None,
) -> Spectrum:
    """The model's linear-tetrahedron DOS as a :class:`~modeheat.Spectrum`: :func:`iter_dos` run to the end."""
    return _run(iter_dos(model, mesh, step=step, points=points, unit=unit, low_t=low_t, name=name))


# --------------------------------------------------------------------------------------
# dispersion, sound and elasticity


def dispersion(model: Model, path: Sequence[str] | None = None, *, points: int = 200, unit: str = "THz") -> Dispersion:
    """Frequencies along a path of high-symmetry points.

    Parameters
    ----------
    model : any model of this module
    path : sequence of labels, optional — e.g. ("Γ", "X", "W", "K", "Γ", "L"); the
        default is the structure's usual path (sc: Γ X M Γ R X; bcc: Γ H N Γ P H;
        fcc and rock-salt: Γ X W K Γ L); chains always run from Γ to X = π/a
    points : int — points along the whole path, shared out by segment length
    unit : str — frequency unit

    Returns
    -------
    Dispersion
    """
    unit = check_unit(unit)
    to_unit = kelvin_per("THz") / kelvin_per(unit)
    if isinstance(points, bool) or not isinstance(points, (int, np.integer)) or points < 2:
        raise InputError(f"points must be an integer ≥ 2, not {points!r}")
    if isinstance(model, (MonatomicChain, DiatomicChain)):
        if path is not None and tuple(path) != ("Γ", "X"):
            raise InputError(f"a chain's dispersion runs from Γ to X; got the path {path!r}")
        k = np.linspace(0.0, math.pi / model.spacing, int(points))
        if isinstance(model, MonatomicChain):
            nu, w, species = model.frequencies(k), None, ()
        else:
            nu, w = model.modes(k)
            species = model.species
        return Dispersion(k, nu * to_unit, np.array([0.0, k[-1]]), ("Γ", "X"), w, species, unit)
    st = _structure(model)
    labels = tuple(st.path if path is None else path)
    unknown = [p for p in labels if p not in st.points]
    if unknown or len(labels) < 2:
        raise InputError(f"a path needs ≥ 2 of the points {', '.join(st.points)}; got {labels!r}")
    corners = np.array([st.points[p] for p in labels], dtype=float) * (2.0 * math.pi / st.lattice_constant)
    seg = np.linalg.norm(np.diff(corners, axis=0), axis=1)
    share = np.maximum(2, np.round((points - 1) * seg / seg.sum()).astype(int))
    ks, ds = [corners[:1]], [np.zeros(1)]
    ticks = np.concatenate(([0.0], np.cumsum(seg)))
    for i, n in enumerate(share):
        t = np.arange(1, n + 1) / n
        ks.append(corners[i] + t[:, None] * (corners[i + 1] - corners[i]))
        ds.append(ticks[i] + t * seg[i])
    k = np.concatenate(ks)
    terms = _matrix_terms(st)
    lam, vec = np.linalg.eigh(_dynamical(st, k, terms))
    w = _species_weights(vec, st.atoms) if st.atoms > 1 else None
    nu = _frequencies(lam, float(np.abs(terms[0]).max()))
    return Dispersion(np.concatenate(ds), nu * to_unit, ticks, labels, w, st.species, unit)


def sound_velocities(model: Model3D, direction=(1, 0, 0)) -> np.ndarray:
    """Acoustic velocities in m/s along a direction, from the slope of ν(k) at small k.

    The three acoustic frequencies at |k| = h and h/2 (h = 10⁻³·2π/a) give ω/k, and a
    Richardson step removes the k² dispersion term.

    Returns
    -------
    ndarray (3,) — ascending (transverse first for the usual cubic cases)
    """
    st = _structure(model)
    n = _unit_vector(direction)
    h = 1e-3 * 2.0 * math.pi / st.lattice_constant
    k = np.stack([n * h, n * (0.5 * h)])
    nu = _eigen_frequencies(st, k)[:, :3]
    slope = 2.0 * math.pi * nu * 1e12 / (np.array([h, 0.5 * h])[:, None] / _ANGSTROM)
    return np.sort((4.0 * slope[1] - slope[0]) / 3.0)


def elastic_velocities(model: Model3D, direction=(1, 0, 0)) -> np.ndarray:
    """Acoustic velocities in m/s along a direction from the model's elastic constants.

    Eigenvalues ρv² of the Christoffel matrix; ascending.
    """
    c = model.elastic_constants()
    lam = np.linalg.eigvalsh(c.christoffel(direction) * 1e9)
    return np.sqrt(np.clip(lam, 0.0, None) / c.density)


def _sphere(order: int = 48):
    """Product Gauss–Legendre × trapezoid rule on the unit sphere: directions and weights (sum 1)."""
    x, wx = np.polynomial.legendre.leggauss(order)
    phi = np.arange(2 * order) * (math.pi / order)
    ct, p = np.meshgrid(x, phi, indexing="ij")
    st = np.sqrt(1.0 - ct**2)
    n = np.stack([st * np.cos(p), st * np.sin(p), ct], -1).reshape(-1, 3)
    w = np.repeat(wx, 2 * order) / (4.0 * order)
    return n, w


def debye_coefficient(model: Model3D, *, unit: str = "THz") -> float:
    """The low-frequency DOS g(ν) ≈ c·ν² per formula unit: c in states per unit³.

    c = 4πΩ·Σ_b ⟨v_b⁻³⟩, the direction average over the sphere of the three elastic
    velocities (Christoffel), Ω the volume per formula unit — for an isotropic solid
    the Debye form 4πΩ(1/v_L³ + 2/v_T³).  Infinite when a shear constant vanishes.
    """
    unit = check_unit(unit)
    c = model.elastic_constants()
    n, w = _sphere()
    lam = np.linalg.eigvalsh(c._christoffel(n) * 1e9)  # ρv², Pa
    if lam.min() <= 0:
        return math.inf
    inv = float(np.sum(w[:, None] * (c.density / lam) ** 1.5))
    per_hz = 4.0 * math.pi * model.volume * _ANGSTROM**3 * inv  # states per Hz³
    hz_per_unit = kelvin_per(unit) / kelvin_per("THz") * 1e12
    return per_hz * hz_per_unit**3


def debye_temperature(model: Model3D) -> float:
    """The T → 0 Debye temperature in K from the elastic constants.

    θ_D(0) = hν_D/k with 9·atoms/ν_D³ = :func:`debye_coefficient`: the Debye spectrum
    of 3·atoms modes with the model's own low-frequency density (as
    ``Spectrum.moment_debye_temperature(-3)`` defines it); 0 when a shear constant
    vanishes (the coefficient is then infinite).
    """
    coeff = debye_coefficient(model, unit="K")
    if not math.isfinite(coeff):
        return 0.0
    return (9.0 * model.atoms / coeff) ** (1.0 / 3.0)
