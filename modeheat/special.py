"""Per-mode thermal functions of the Einstein and Debye models, and their inverses.

Every function takes the dimensionless ``x = θ/T`` (θ a temperature equivalent of a
frequency, in K) and returns a dimensionless value *per vibrational mode*:

=====================  =======================================================
``*_cv``               C_v / k
``*_entropy``          S / k
``*_energy``           U_thermal / (k T), the zero-point energy excluded
``*_free_energy``      F_thermal / (k T), the zero-point energy excluded
=====================  =======================================================

The zero-point energy of one mode of temperature equivalent θ is k θ / 2; of a Debye
branch with cut-off θ_D it is ``dim/(dim+1) · k θ_D / 2`` per mode.

The Debye functions accept ``dim`` = 1, 2 or 3: a density of states ∝ ω^(dim−1) up to
the cut-off, the model of chains, layers and bulk solids.  They are evaluated from
the Bernoulli series for x < 2 and from the exponential tail sum
∫_x^∞ tⁿ/(eᵗ−1) dt = Σ_k e^(−kx) Σ_m n!/(n−m)! x^(n−m)/k^(m+1) otherwise, which keeps
them accurate to about 1e-15 relative for every x ≥ 0 without overflow.
Limits are returned at x = 0 (T → ∞) and x = ∞ (T = 0).
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
from scipy.special import bernoulli, zeta

__all__ = [
    "einstein_cv",
    "einstein_entropy",
    "einstein_energy",
    "einstein_free_energy",
    "debye_cv",
    "debye_entropy",
    "debye_energy",
    "debye_free_energy",
    "debye_cv_derivative",
    "debye_cv_inverse",
    "debye_integral",
]

_SPLIT = 2.0  # series below, exponential tail sum above; the series' radius is 2π
_N_SERIES = 22
_N_TAIL = 24  # e^(−24·2) ≈ 1e-21: the tail sum is complete at x = 2


def _as_x(x) -> np.ndarray:
    x = np.asarray(x, dtype=float)
    if np.any(x < 0) or np.any(np.isnan(x)):
        raise ValueError("x = θ/T must be non-negative and not NaN")
    return x


def _check_dim(dim: int) -> int:
    if dim not in (1, 2, 3):
        raise ValueError(f"dim must be 1, 2 or 3, not {dim!r}")
    return int(dim)


# --- Einstein ---------------------------------------------------------------------

def _bose(x: np.ndarray) -> np.ndarray:
    """x/(eˣ−1) without overflow; 1 at x = 0 and 0 at x = ∞."""
    with np.errstate(invalid="ignore", divide="ignore"):
        ex = np.exp(-x)
        out = x * ex / -np.expm1(-x)
    out = np.where(x == 0, 1.0, out)
    return np.where(np.isinf(x), 0.0, out)


def _log_one_minus_exp(x: np.ndarray) -> np.ndarray:
    """ln(1 − e^(−x)); −∞ at x = 0.  log1p keeps it exact where e^(−x) ≪ 1."""
    with np.errstate(divide="ignore"):
        return np.where(x < math.log(2.0), np.log(-np.expm1(-x)), np.log1p(-np.exp(-x)))


def einstein_cv(x):
    """Heat capacity of one Einstein mode, C_v/k = x² eˣ/(eˣ−1)².

    Parameters
    ----------
    x : array_like — θ_E/T, dimensionless, ≥ 0
    """
    x = _as_x(x)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        ex = np.exp(-x)
        out = x * x * ex / np.expm1(-x) ** 2
    out = np.where(x == 0, 1.0, out)
    return np.where(np.isinf(x), 0.0, out)


def einstein_energy(x):
    """Thermal energy of one Einstein mode in units of kT, x/(eˣ−1) (zero point excluded)."""
    return _bose(_as_x(x))


def einstein_free_energy(x):
    """Thermal free energy of one Einstein mode in units of kT, ln(1 − e^(−x))."""
    return _log_one_minus_exp(_as_x(x))


def einstein_entropy(x):
    """Entropy of one Einstein mode, S/k = x/(eˣ−1) − ln(1 − e^(−x)); +∞ at x = 0."""
    x = _as_x(x)
    return _bose(x) - _log_one_minus_exp(x)


# --- Debye ------------------------------------------------------------------------

@lru_cache(maxsize=None)
def _series_coefficients(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Coefficients in x² of D_n(x) + n x/(2(n+1)) and of the Debye C_v for dim n."""
    j = np.arange(1, _N_SERIES + 1)
    b = bernoulli(2 * _N_SERIES)[2 * j]
    fact = np.array([math.factorial(2 * k) for k in j], dtype=float)
    dn = n * b / (fact * (n + 2 * j))
    cv = n * b / fact * (1 - 2 * j) / (n + 2 * j)
    # Horner wants the highest power first, and the constant term 1 last.
    return np.append(dn[::-1], 1.0), np.append(cv[::-1], 1.0)


def _horner(coeffs: np.ndarray, y: np.ndarray) -> np.ndarray:
    out = np.full_like(y, coeffs[0])
    for c in coeffs[1:]:
        out = out * y + c
    return out


def _integral_tail(x: np.ndarray, n: int) -> np.ndarray:
    """∫_x^∞ tⁿ/(eᵗ−1) dt for x ≥ _SPLIT, by the exponential sum."""
    k = np.arange(1, _N_TAIL + 1, dtype=float)
    q = np.exp(-np.outer(x, k))  # e^(−kx), underflows harmlessly to 0
    poly = np.zeros_like(q)
    for m in range(n + 1):
        coef = math.factorial(n) / math.factorial(n - m)
        poly += coef * x[:, None] ** (n - m) / k ** (m + 1)
    return np.sum(q * poly, axis=1)


@lru_cache(maxsize=None)
def _full_integral(n: int) -> float:
    """∫_0^∞ tⁿ/(eᵗ−1) dt = n! ζ(n+1)."""
    return math.factorial(n) * float(zeta(n + 1))


def _debye_function(x: np.ndarray, n: int) -> np.ndarray:
    """D_n(x) = (n/xⁿ) ∫_0^x tⁿ/(eᵗ−1) dt; 1 at x = 0, 0 at x = ∞."""
    shape = x.shape
    x = x.ravel()
    out = np.empty_like(x)
    small = x < _SPLIT
    xs = x[small]
    dn, _ = _series_coefficients(n)
    out[small] = _horner(dn, xs * xs) - n * xs / (2 * (n + 1))
    xl = x[~small]
    finite = np.isfinite(xl)
    big = np.zeros_like(xl)
    xf = xl[finite]
    big[finite] = n * (_full_integral(n) - _integral_tail(xf, n)) / xf**n
    out[~small] = big
    return out.reshape(shape)


def debye_integral(x, n: int = 3):
    """The Debye function D_n(x) = (n/xⁿ) ∫_0^x tⁿ/(eᵗ−1) dt, n = 1, 2, 3."""
    return _debye_function(_as_x(x), _check_dim(n))


def debye_energy(x, dim: int = 3):
    """Thermal energy per mode of a Debye branch in units of kT, D_dim(x); x = θ_D/T."""
    return _debye_function(_as_x(x), _check_dim(dim))


def debye_cv(x, dim: int = 3):
    """Heat capacity per mode of a Debye branch, C_v/k, with x = θ_D/T.

    C_v/k = (dim/x^dim) ∫_0^x t^(dim+1) eᵗ/(eᵗ−1)² dt = (dim+1) D_dim(x) − dim·x/(eˣ−1).
    """
    x = _as_x(x)
    n = _check_dim(dim)
    shape = x.shape
    x = x.ravel()
    out = np.empty_like(x)
    small = x < _SPLIT
    _, cvc = _series_coefficients(n)
    xs = x[small]
    out[small] = _horner(cvc, xs * xs)
    xl = x[~small]
    out[~small] = (n + 1) * _debye_function(xl, n) - n * _bose(xl)
    return out.reshape(shape)


def debye_cv_derivative(x, dim: int = 3):
    """d(C_v/k)/dx per mode of a Debye branch: (dim/x)·(einstein_cv(x) − debye_cv(x))."""
    x = _as_x(x)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = dim / x * (einstein_cv(x) - debye_cv(x, dim))
    return np.where(x == 0, 0.0, np.where(np.isinf(x), 0.0, out))


def debye_entropy(x, dim: int = 3):
    """Entropy per mode of a Debye branch, S/k = ((dim+1)/dim) D_dim(x) − ln(1 − e^(−x))."""
    x = _as_x(x)
    n = _check_dim(dim)
    return (n + 1) / n * _debye_function(x, n) - _log_one_minus_exp(x)


def debye_free_energy(x, dim: int = 3):
    """Thermal free energy per mode of a Debye branch in units of kT, ln(1 − e^(−x)) − D_dim(x)/dim."""
    x = _as_x(x)
    n = _check_dim(dim)
    return _log_one_minus_exp(x) - _debye_function(x, n) / n


# --- inverse ----------------------------------------------------------------------

@lru_cache(maxsize=None)
def _inverse_table(dim: int) -> tuple[np.ndarray, np.ndarray]:
    """ln x against logit(C_v/k) on a dense grid, increasing in the logit."""
    lnx = np.linspace(math.log(1e-4), math.log(2e3), 4001)
    c = debye_cv(np.exp(lnx), dim)
    logit = np.log(c) - np.log1p(-c)
    return logit[::-1].copy(), lnx[::-1].copy()


def debye_cv_inverse(c, dim: int = 3, *, newton_steps: int = 2):
    """x = θ_D/T such that the Debye heat capacity per mode C_v/k equals `c`.

    A dense table gives the first guess and Newton steps polish it (2 reach ~1e-14
    relative).  Values outside (0, 1) have no solution and give NaN.

    Parameters
    ----------
    c : array_like — C_v/k per mode, dimensionless
    dim : int — 1, 2 or 3
    """
    n = _check_dim(dim)
    c = np.asarray(c, dtype=float)
    out = np.full(c.shape, np.nan)
    ok = (c > 0) & (c < 1)
    if not np.any(ok):
        return out
    cc = c[ok]
    logit_t, lnx_t = _inverse_table(n)
    with np.errstate(divide="ignore"):
        y = np.log(cc) - np.log1p(-cc)
    x = np.exp(np.interp(y, logit_t, lnx_t))
    # Beyond the table use the asymptotes: T³-type law at large x, 1 − a x² at small x.
    low = y < logit_t[0]
    x[low] = (n * (n + 1) * _full_integral(n) / cc[low]) ** (1.0 / n)
    high = y > logit_t[-1]
    x[high] = np.sqrt(12.0 * (n + 2) * (1.0 - cc[high]) / n)
    for _ in range(newton_steps):
        f = debye_cv(x, n) - cc
        d = debye_cv_derivative(x, n)
        step = np.where(d != 0, f / np.where(d != 0, d, 1.0), 0.0)
        x = np.maximum(x - step, 0.5 * x)
    out[ok] = x
    return out
