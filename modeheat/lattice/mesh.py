"""q-meshes, the linear tetrahedron DOS and dispersions along paths of the spring models."""

from __future__ import annotations

import math
from collections.abc import Iterator, Sequence
from typing import Union

import numpy as np

from ..errors import InputError
from ..progress import Progress, ProgressCallback, drive
from ..spectrum import Spectrum
from ..units import check_unit, kelvin_per
from ._base import (
    _CELL_BATCH,
    _K_BATCH,
    _POINTS,
    DensityOfStates,
    Dispersion,
    MeshModes,
    _finish,
    _frequencies,
    _grid,
    _positive,
    _spread,
    _tetra_coefficients,
    _tetra_fraction,
)
from .chains import DiatomicChain, MonatomicChain
from .cubic import CubicLattice, Model3D, RockSalt, _dynamical, _matrix_terms, _species_weights, _structure

__all__ = ["iter_mesh", "mesh_modes", "tetrahedron_dos", "iter_dos", "dos", "dispersion"]

Model = Union[MonatomicChain, DiatomicChain, CubicLattice, RockSalt]


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
        ``Progress(done, total, "modes")`` after each batch; the last one carries the
        :class:`MeshModes` in ``result``.

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
    yield Progress(total, total, "modes", result=result)


def mesh_modes(
    model: Model3D,
    mesh=16,
    *,
    vectors: bool | None = None,
    batch: int = _K_BATCH,
    progress: ProgressCallback | None = None,
) -> MeshModes:
    """Every mode on a Γ-centred k-mesh: :func:`iter_mesh` run to the end.

    `progress` is a callback that receives each :class:`~modeheat.progress.Progress`
    and may cancel (:mod:`modeheat.progress`); the other parameters are
    :func:`iter_mesh`'s.
    """
    return drive(iter_mesh(model, mesh, vectors=vectors, batch=batch), progress)


# --------------------------------------------------------------------------------------
# linear tetrahedron method


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
    yield Progress(start + nbatch, total, "tetrahedra", result=dens)


def tetrahedron_dos(
    modes: MeshModes,
    *,
    step: float | None = None,
    points: int = _POINTS,
    unit: str = "THz",
    name: str | None = None,
    progress: ProgressCallback | None = None,
) -> DensityOfStates:
    """Linear-tetrahedron DOS of the modes on a mesh (method in the module docstring).

    Parameters
    ----------
    modes : MeshModes — from :func:`mesh_modes` (eigenvector weights give partials)
    step : float, optional — frequency step in `unit` (default from `points`)
    points : int — grid points from 0 to just above the highest mode
    unit : str — frequency unit of the result
    name : str, optional
    progress : callable, optional — receives a :class:`~modeheat.progress.Progress` per
        batch of tetrahedra and may cancel (:mod:`modeheat.progress`)
    """
    return drive(_tetra_steps(modes, step, points, unit, name), progress)


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
            yield Progress(total, total, p.stage, result=p.result.spectrum(low_t=low_t))


def dos(
    model: Model3D,
    mesh=16,
    *,
    step: float | None = None,
    points: int = _POINTS,
    unit: str = "THz",
    low_t: str | float = "auto",
    name: str | None = None,
    progress: ProgressCallback | None = None,
) -> Spectrum:
    """The model's linear-tetrahedron DOS as a :class:`~modeheat.Spectrum`: :func:`iter_dos` run to the end.

    `progress` is a callback that receives each :class:`~modeheat.progress.Progress`
    (both stages) and may cancel (:mod:`modeheat.progress`); the other parameters are
    :func:`iter_dos`'s.
    """
    return drive(iter_dos(model, mesh, step=step, points=points, unit=unit, low_t=low_t, name=name), progress)


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
