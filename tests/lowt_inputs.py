"""Test inputs for the low-temperature continuation: q-mesh DOS of the fcc spring lattice.

A helper (not a test file) shared by tests/test_low_t_continuation.py and
tests/benchmarks/lowt_error_table.py.  Each function returns a plain DOS, as other
programs would write it, for the model of :mod:`fcc_reference` on a Γ-centred n³ mesh:

* :func:`tetrahedron` — the linear-tetrahedron DOS of :mod:`modeheat.lattice` (401-point
  grid, its default): input only, never a reference.
* :func:`histogram` — mode counts of the mesh in bins of width ν_max/(2n) from 0 (ν_max
  the highest mode), a bin width tied to the mesh: about half the frequency spacing of
  the mesh's lowest shells, 1.5n² modes per bin on average, and the three zero modes at
  Γ in the first bin.
* :func:`mesh_modes` — every mode of the mesh, for :meth:`modeheat.Spectrum.from_modes`.
* :func:`smeared` — every mode of the mesh as a Gaussian of σ = ν_max/(2n), about half
  the frequency spacing of the mesh's lowest shells (a width tied to the mesh, as for the
  histogram's bins; the smeared shells still show as bumps), sampled on a grid of step
  σ/4 from 0; the Gaussians' parts below 0 are cut off (what a grid from 0 keeps), and
  the three zero modes at Γ are smeared like the others.

Frequencies in THz; densities in modes per THz per atom (histogram: counts per bin).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

import fcc_reference

__all__ = ["tetrahedron", "histogram", "smeared", "mesh_modes", "model"]


def model():
    """The spring model of :mod:`fcc_reference` in :mod:`modeheat.lattice` (inputs only)."""
    from modeheat import lattice

    return lattice.CubicLattice("fcc", fcc_reference.MASS, fcc_reference.A, fcc_reference.K1)


@lru_cache(maxsize=None)
def tetrahedron(n: int) -> tuple[np.ndarray, np.ndarray]:
    """(ν, g) of the linear-tetrahedron DOS on the n³ mesh."""
    from modeheat import lattice

    d = lattice.tetrahedron_dos(lattice.mesh_modes(model(), n))
    return np.array(d.frequency), np.array(d.total)


@lru_cache(maxsize=None)
def mesh_modes(n: int) -> np.ndarray:
    """ν in THz of every mode of the n³ mesh (Γ's three zero modes included)."""
    return fcc_reference.mesh_frequencies(n).ravel()


@lru_cache(maxsize=None)
def histogram(n: int) -> tuple[np.ndarray, np.ndarray]:
    """(edges, counts) of the n³ mesh's modes in bins of width ν_max/(2n) from 0."""
    nu = mesh_modes(n)
    top = float(nu.max())
    width = top / (2 * n)
    bins = int(np.ceil(top / width * (1 + 1e-12)))
    edges = width * np.arange(bins + 1)
    counts, _ = np.histogram(nu, bins=edges)
    return edges, counts.astype(float)


@lru_cache(maxsize=None)
def smeared(n: int) -> tuple[np.ndarray, np.ndarray]:
    """(ν, g) of the n³ mesh's modes smeared by Gaussians of σ = ν_max/(2n)."""
    nu = np.sort(mesh_modes(n))
    top = float(nu[-1])
    sigma = top / (2 * n)
    grid = np.arange(0.0, top + 6 * sigma, sigma / 4)
    # Gaussians beyond 8σ add nothing at double precision: sum each grid point's neighbours.
    g = np.zeros(grid.size)
    lo = np.searchsorted(nu, grid - 8 * sigma)
    hi = np.searchsorted(nu, grid + 8 * sigma)
    for i, x in enumerate(grid):
        d = (x - nu[lo[i] : hi[i]]) / sigma
        g[i] = float(np.sum(np.exp(-0.5 * d * d)))
    g /= sigma * np.sqrt(2 * np.pi) * n**3
    return grid, g
