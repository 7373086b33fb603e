"""1-D chains with nearest-neighbour springs, solved analytically and on a k-mesh."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..spectrum import Spectrum
from ._base import (
    _AMU,
    _ANGSTROM,
    _POINTS,
    _TO_THZ,
    DensityOfStates,
    _finish,
    _fix,
    _frequencies,
    _grid,
    _interval_fraction,
    _positive,
    _reciprocal,
    _spread,
)

__all__ = ["MonatomicChain", "DiatomicChain"]


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
