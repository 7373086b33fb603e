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
* :func:`pair_lattice` — a :class:`CubicLattice` whose springs are the curvatures
  φ''(r) of a pair potential (:class:`Morse`, :class:`LennardJones`) at the first two
  neighbour distances, with the static energy per atom summed over all neighbours:
  spectra and energies at several lattice constants for the quasi-harmonic
  calculation.  Central springs only (the tension term φ'(r)/r dropped); see
  :mod:`~modeheat.lattice.pair`.

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
code path; :func:`mesh_modes` and :func:`dos` run it to the end and take a
``progress=`` callback that may cancel (:mod:`modeheat.progress`, where ``Progress``
lives; it is re-exported here).

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

Modules
-------
:mod:`~modeheat.lattice.chains` (1-D chains), :mod:`~modeheat.lattice.cubic` (sc/bcc/fcc
and rock salt: structures, dynamical matrices, elastic constants of the springs),
:mod:`~modeheat.lattice.mesh` (q-meshes, tetrahedra, DOS, dispersions),
:mod:`~modeheat.lattice.elastic` (sound velocities, Debye temperature),
:mod:`~modeheat.lattice.pair` (pair potentials, springs and static energy from them); the result types
and the frequency-grid integration they share are in ``_base.py``.
"""

from __future__ import annotations

from ..progress import Progress
from ._base import DensityOfStates, Dispersion, ElasticConstants, MeshModes
from .chains import DiatomicChain, MonatomicChain
from .cubic import CubicLattice, RockSalt
from .elastic import debye_coefficient, debye_temperature, elastic_velocities, sound_velocities
from .mesh import dispersion, dos, iter_dos, iter_mesh, mesh_modes, tetrahedron_dos
from .pair import LennardJones, Morse, pair_lattice

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
    "Morse",
    "LennardJones",
    "pair_lattice",
]
