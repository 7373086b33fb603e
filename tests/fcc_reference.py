"""Independent low-temperature reference for an fcc nearest-neighbour spring lattice.

A helper for the tests (not a test file) and the script that writes the cached
reference ``tests/data/fcc_nn_reference.json``: ``python tests/fcc_reference.py``
rewrites it, and tests/test_low_t_continuation.py checks it against a fresh, smaller sum.

Nothing here uses modeheat: the dynamical matrix is written out in its textbook form,
the heat capacity is a direct sum over wave vectors (no density of states in between)
and the elastic Debye temperature comes from the long-wave limit of the same matrix.

The model (invented numbers, common in spring-model exercises): one atom of 60 u per
primitive cell on an fcc lattice with a = 4 Å, a central spring k1 = 20 N/m to each of
the 12 nearest neighbours R = (a/2)(±1, ±1, 0) and permutations.  With n = R/|R|,

    D(q) = (k1/m) Σ_R n nᵀ (1 − cos q·R),

and ν = √λ/2π for each eigenvalue λ of D (common practice).  For small q,
1 − cos q·R ≈ (q·R)²/2, so ω² = v² q² with v² the eigenvalues of
Λ(q̂) = (k1/2m) Σ_R n nᵀ (q̂·R)²; θ_D(0) follows from ⟨v⁻³⟩ over directions:
g(ν) → 4πΩ Σ_b ⟨v_b⁻³⟩ ν² = 9ν²/ν_D³ per atom, Ω = a³/4 the volume per atom,
θ_D(0) = hν_D/k (common practice).

The sum is over a regular Γ-centred mesh of N³ wave vectors q = (i b1 + j b2 + l b3)/N.
At Γ the three modes count with their limit C = k: at T > 0 the Einstein heat capacity
of ω = v(q̂)|q| is a smooth function of q near Γ whose value there is k, so the
periodic trapezoid rule keeps its fast convergence (measured here against 128³: 6.3e-4
relative at θ_D(0)/100 for 64³, 3.4e-6 for 96³, and ≤ 2e-8 from θ_D(0)/50 up for 64³).
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import numpy as np
from scipy import constants

__all__ = [
    "MASS",
    "A",
    "K1",
    "neighbours",
    "mesh_frequencies",
    "heat_capacity_sum",
    "elastic_debye_temperature",
    "REFERENCE_FILE",
    "load_reference",
]

MASS = 60.0  # u
A = 4.0  # Å
K1 = 20.0  # N/m
REFERENCE_FILE = Path(__file__).resolve().parent / "data" / "fcc_nn_reference.json"
FRACTIONS = (100.0, 50.0, 20.0, 10.0, 5.0)  # T = θ_D(0)/fraction
REFERENCE_MESH = 96


def neighbours(a: float = A) -> np.ndarray:
    """The 12 nearest-neighbour vectors of the fcc lattice in Å."""
    out = []
    for i, j in ((0, 1), (0, 2), (1, 2)):
        for si in (-1, 1):
            for sj in (-1, 1):
                r = np.zeros(3)
                r[i], r[j] = si * a / 2, sj * a / 2
                out.append(r)
    return np.array(out)


def _reciprocal(a: float = A) -> np.ndarray:
    """Reciprocal vectors (rows, Å⁻¹ with 2π) of the fcc primitive cell."""
    cell = 0.5 * a * np.array([[0.0, 1.0, 1.0], [1.0, 0.0, 1.0], [1.0, 1.0, 0.0]])
    return 2.0 * math.pi * np.linalg.inv(cell).T


def _scale() -> float:
    """k1/m in (rad/s)²."""
    return K1 / (MASS * constants.atomic_mass)


def mesh_frequencies(n: int, *, batch: int = 65536) -> np.ndarray:
    """ν in THz of every mode on the Γ-centred n³ mesh, shape (n³, 3), Γ first."""
    R = neighbours()
    nn = R[:, :, None] * R[:, None, :] / (A * A / 2.0)  # n nᵀ per bond
    idx = np.stack(np.meshgrid(*(np.arange(n),) * 3, indexing="ij"), -1).reshape(-1, 3)
    q = (idx / n) @ _reciprocal()
    out = np.empty((q.shape[0], 3))
    for lo in range(0, q.shape[0], batch):
        qb = q[lo : lo + batch]
        phase = 1.0 - np.cos(qb @ R.T)  # (b, 12)
        d = np.einsum("br,rij->bij", phase, nn) * _scale()
        lam = np.clip(np.linalg.eigvalsh(d), 0.0, None)
        out[lo : lo + batch] = np.sqrt(lam) / (2.0 * math.pi * 1e12)
    return out


def heat_capacity_sum(n: int, temperatures) -> np.ndarray:
    """C_v/(3R) per atom from the direct sum over the n³ mesh (Γ's modes at their limit k)."""
    nu = mesh_frequencies(n)[1:].ravel()
    theta = nu * 1e12 * constants.h / constants.k
    T = np.asarray(temperatures, dtype=float)
    out = np.empty(T.size)
    for i, t in enumerate(T):
        x = theta / t
        with np.errstate(over="ignore"):
            ex = np.exp(-x)
            c = x * x * ex / (-np.expm1(-x)) ** 2
        out[i] = (float(np.sum(c)) + 3.0) / (3.0 * n**3)
    return out


def elastic_debye_temperature(order: int = 64) -> float:
    """θ_D(0) in K from ⟨v⁻³⟩ over directions (order-point Gauss–Legendre × 2·order φ)."""
    x, wx = np.polynomial.legendre.leggauss(order)
    phi = np.arange(2 * order) * (math.pi / order)
    ct, p = np.meshgrid(x, phi, indexing="ij")
    st = np.sqrt(1.0 - ct**2)
    dirs = np.stack([st * np.cos(p), st * np.sin(p), ct], -1).reshape(-1, 3)
    w = np.repeat(wx, 2 * order) / (4.0 * order)  # weights sum to 1
    R = neighbours() * 1e-10  # m
    nn = R[:, :, None] * R[:, None, :] / np.sum(R[0] ** 2)
    lam = np.einsum("dr,rij->dij", (dirs @ R.T) ** 2, nn) * (0.5 * _scale())
    v2 = np.linalg.eigvalsh(lam)  # (m/s)²
    inv3 = float(np.sum(w[:, None] * v2**-1.5))  # Σ_b ⟨v_b⁻³⟩
    omega = A**3 / 4.0 * 1e-30  # m³ per atom
    nu_d = (9.0 / (4.0 * math.pi * omega * inv3)) ** (1.0 / 3.0)
    return constants.h * nu_d / constants.k


def compute(n: int = REFERENCE_MESH) -> dict:
    theta = elastic_debye_temperature()
    T = [theta / f for f in FRACTIONS]
    return {
        "model": {"structure": "fcc", "mass_u": MASS, "a_angstrom": A, "k1_N_per_m": K1},
        "theta_D0_K": theta,
        "mesh": n,
        "fractions": list(FRACTIONS),
        "T_K": T,
        "cv_over_3R": heat_capacity_sum(n, T).tolist(),
        "made_by": "tests/fcc_reference.py",
    }


def load_reference() -> dict:
    """The cached reference (see :func:`compute`)."""
    return json.loads(REFERENCE_FILE.read_text(encoding="utf-8"))


def main(argv: list[str]) -> int:
    data = compute()
    REFERENCE_FILE.write_text(json.dumps(data, indent=1) + "\n", encoding="utf-8")
    print(f"wrote {REFERENCE_FILE}: θ_D(0) = {data['theta_D0_K']:.6f} K")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
