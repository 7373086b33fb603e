"""Sound velocities, elastic constants and the Debye temperature of the spring models."""

from __future__ import annotations

import math

import numpy as np

from ..units import check_unit, kelvin_per
from ._base import _ANGSTROM, _unit_vector
from .cubic import Model3D, _eigen_frequencies, _structure

__all__ = ["sound_velocities", "elastic_velocities", "debye_coefficient", "debye_temperature"]


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
