"""Cubic spring models (monatomic sc, bcc, fcc; rock salt): structures and dynamical matrices."""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Union

import numpy as np

from ..errors import InputError
from ._base import _AMU, _ANGSTROM, ElasticConstants, _finite, _fix, _frequencies, _positive

__all__ = ["CubicLattice", "RockSalt"]


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


def _mass_density(mass_u: float, volume_a3: float) -> float:
    return mass_u * _AMU / (volume_a3 * _ANGSTROM**3)


def _structure(model) -> _Structure:
    if not isinstance(model, (CubicLattice, RockSalt)):
        raise InputError(f"expected a CubicLattice or RockSalt, not {type(model).__name__}")
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


def _species_weights(vec: np.ndarray, atoms: int) -> np.ndarray:
    """|e_s|² per species from eigenvectors (n, 3·atoms, branches) → (n, branches, atoms)."""
    p = np.abs(vec) ** 2
    return p.reshape(p.shape[0], atoms, 3, p.shape[2]).sum(axis=2).transpose(0, 2, 1)


# --------------------------------------------------------------------------------------
