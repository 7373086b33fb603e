"""What every lattice module shares: units, validation helpers and the result types."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import constants as _c

from .. import _checks
from ..errors import InputError
from ..spectrum import Spectrum
from ..units import check_unit, kelvin_per

__all__ = ["MeshModes", "DensityOfStates", "Dispersion", "ElasticConstants"]


_AMU = _c.atomic_mass  # kg
_ANGSTROM = 1e-10  # m
_TO_THZ = 1.0 / (2.0 * math.pi * 1e12)  # ω in rad/s → ν in THz
_ZERO = 1e-12  # |λ| below this fraction of the largest on-site term of D is rounding
_K_BATCH = 16384  # k-points per diagonalisation batch
_CELL_BATCH = 8192  # mesh sub-cells per tetrahedron batch
_POINTS = 401  # default number of frequency grid points


# --------------------------------------------------------------------------------------
# validation helpers


_positive = _checks.positive
_finite = _checks.finite


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


# --------------------------------------------------------------------------------------
# frequencies and the frequency grid (chains and the tetrahedron DOS alike)


def _frequencies(lam: np.ndarray, scale: float) -> np.ndarray:
    """Eigenvalues (rad/s)² → ν in THz; rounding-level ones → 0, real negatives → −√|λ|.

    `scale` is the largest on-site term of D, the size of its rounding errors' source.
    """
    lam = np.where(np.abs(lam) <= _ZERO * scale, 0.0, lam)
    return np.sign(lam) * np.sqrt(np.abs(lam)) * _TO_THZ


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


def _finish(grid, edges, cum, pcum, species, atoms, name) -> DensityOfStates:
    width = np.diff(edges)
    total = np.diff(cum) / width
    partials = {}
    if pcum is not None:
        for s, label in enumerate(species):
            partials[label] = np.diff(pcum[:, s]) / width
    return DensityOfStates(grid, total, partials, "THz", atoms, name)
