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

from ..errors import InputError

__all__ = [
    "einstein_terms",
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
    "debye_terms",
]

_SPLIT = 2.0  # series below, exponential tail sum above; the series' radius is 2π
_N_SERIES = 22
_N_TAIL = 24  # e^(−24·2) ≈ 1e-21: the tail sum is complete at x = 2


def _as_x(x) -> np.ndarray:
    x = np.asarray(x, dtype=float)
    if np.any(x < 0) or np.any(np.isnan(x)):
        raise InputError("x = θ/T must be non-negative and not NaN")
    return x


def _check_dim(dim: int) -> int:
    if dim not in (1, 2, 3):
        raise InputError(f"dim must be 1, 2 or 3, not {dim!r}")
    return int(dim)


# --- Einstein ---------------------------------------------------------------------

def einstein_terms(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """C/k, U_th/(kT) and F_th/(kT) of one Einstein mode at x = θ/T > 0, unchecked.

    The one Einstein kernel: the engine's node sums and the model quadratures call it
    directly on arrays they know to be positive; the checked functions below add the
    limits at x = 0 and x = ∞.  e^(−x) keeps every term finite without overflow, and
    log1p keeps ln(1 − e^(−x)) exact where e^(−x) ≪ 1.
    """
    with np.errstate(over="ignore", under="ignore"):
        ex = np.exp(-x)
        d = -np.expm1(-x)
        e = x * ex / d
        cv = e * x / d
        f = np.where(x < _LN2, np.log(d), np.log1p(-ex))
    return cv, e, f


_LN2 = math.log(2.0)


def _limits(x: np.ndarray, values: np.ndarray, at_zero: float) -> np.ndarray:
    """`values` with the exact limits at x = 0 (`at_zero`) and x = ∞ (0)."""
    return np.where(x == 0, at_zero, np.where(np.isinf(x), 0.0, values))


def _terms(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    with np.errstate(invalid="ignore", divide="ignore"):
        return einstein_terms(x)


def _bose(x: np.ndarray) -> np.ndarray:
    """x/(eˣ−1); 1 at x = 0 and 0 at x = ∞."""
    return _limits(x, _terms(x)[1], 1.0)


def _log_one_minus_exp(x: np.ndarray) -> np.ndarray:
    """ln(1 − e^(−x)); −∞ at x = 0 and 0 at x = ∞."""
    return _limits(x, _terms(x)[2], -np.inf)


def einstein_cv(x):
    """Heat capacity of one Einstein mode, C_v/k = x² eˣ/(eˣ−1)².

    Parameters
    ----------
    x : array_like — θ_E/T, dimensionless, ≥ 0
    """
    x = _as_x(x)
    return _limits(x, _terms(x)[0], 1.0)


def einstein_energy(x):
    """Thermal energy of one Einstein mode in units of kT, x/(eˣ−1) (zero point excluded)."""
    return _bose(_as_x(x))


def einstein_free_energy(x):
    """Thermal free energy of one Einstein mode in units of kT, ln(1 − e^(−x)); −∞ at x = 0."""
    return _log_one_minus_exp(_as_x(x))


def einstein_entropy(x):
    """Entropy of one Einstein mode, S/k = x/(eˣ−1) − ln(1 − e^(−x)); +∞ at x = 0."""
    x = _as_x(x)
    _, e, f = _terms(x)
    return _limits(x, e - f, np.inf)


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
    return _cv_from(x, _debye_function(x, n), n)


def _cv_from(x: np.ndarray, d: np.ndarray, n: int) -> np.ndarray:
    """Debye C_v/k from D_n(x): its own series below the split, so no cancellation."""
    shape = x.shape
    x, d = x.ravel(), d.ravel()
    out = (n + 1) * d - n * _bose(x)
    small = x < _SPLIT
    if np.any(small):
        _, cvc = _series_coefficients(n)
        xs = x[small]
        out[small] = _horner(cvc, xs * xs)
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


def debye_terms(x, dim: int = 3) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(C_v/k, U_th/kT, F_th/kT) per mode of a Debye branch in one pass over D_dim(x)."""
    x = _as_x(x)
    n = _check_dim(dim)
    d = _debye_function(x, n)
    return _cv_from(x, d, n), d, _log_one_minus_exp(x) - d / n


# --- inverse ----------------------------------------------------------------------

def _cv_deficit(x: np.ndarray, n: int) -> np.ndarray:
    """1 − C_v/k per mode of a Debye branch, without cancellation at small x."""
    out = 1.0 - debye_cv(x, n)
    small = x < 0.5
    _, cvc = _series_coefficients(n)
    xs = x[small]
    # 1 − series = −Σ_j c_j x^(2j): drop the constant term, then factor out x².
    out[small] = -_horner(cvc[:-1], xs * xs) * xs * xs
    return out


@lru_cache(maxsize=None)
def _inverse_table(dim: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """y = logit(C_v/k), ln x and d(ln x)/dy on a dense ln x grid, ascending in y."""
    lnx = np.linspace(math.log(2e3), math.log(1e-4), 8001)
    x = np.exp(lnx)
    c = debye_cv(x, dim)
    deficit = _cv_deficit(x, dim)
    y = np.log(c) - np.log(deficit)
    slope = c * deficit / (x * debye_cv_derivative(x, dim))
    return y, lnx, slope


def debye_cv_inverse(c, dim: int = 3, *, newton_steps: int = 0):
    """x = θ_D/T such that the Debye heat capacity per mode C_v/k equals `c`.

    Cubic Hermite interpolation of ln x in logit(c) on a dense table, with exact
    slopes, gives about 1e-12 relative; asymptotes take over beyond the table
    (x > 2e3: C_v ∝ x^(−dim); x < 1e-4: 1 − C_v ∝ x²).  Optional Newton steps polish
    further.  Values outside (0, 1) have no solution and give NaN.

    Parameters
    ----------
    c : array_like — C_v/k per mode, dimensionless
    dim : int — 1, 2 or 3
    newton_steps : int — extra Newton iterations
    """
    n = _check_dim(dim)
    c = np.asarray(c, dtype=float)
    out = np.full(c.shape, np.nan)
    ok = (c > 0) & (c < 1)
    if not np.any(ok):
        return out
    cc = c[ok]
    yt, lnx_t, slope_t = _inverse_table(n)
    with np.errstate(divide="ignore"):
        y = np.log(cc) - np.log1p(-cc)
    i = np.clip(np.searchsorted(yt, y) - 1, 0, yt.size - 2)
    h = yt[i + 1] - yt[i]
    t = (y - yt[i]) / h
    t2, t3 = t * t, t * t * t
    lnx = (
        (2 * t3 - 3 * t2 + 1) * lnx_t[i]
        + (t3 - 2 * t2 + t) * h * slope_t[i]
        + (-2 * t3 + 3 * t2) * lnx_t[i + 1]
        + (t3 - t2) * h * slope_t[i + 1]
    )
    x = np.exp(lnx)
    low = y < yt[0]
    # in logs: c may be so small (subnormal) that the quotient would overflow
    x[low] = np.exp((math.log(n * (n + 1) * _full_integral(n)) - np.log(cc[low])) / n)
    high = y > yt[-1]
    if np.any(high):
        # 1 − C_v = a x² − b x⁴ with a = −c_1, b = c_2 (series coefficients)
        _, cvc = _series_coefficients(n)
        a, b = -cvc[-2], cvc[-3]
        d = 1.0 - cc[high]
        x2 = d / a
        x2 = d / (a - b * x2)
        x[high] = np.sqrt(x2)
    for _ in range(newton_steps):
        f = debye_cv(x, n) - cc
        dfx = debye_cv_derivative(x, n)
        step = np.where(dfx != 0, f / np.where(dfx != 0, dfx, 1.0), 0.0)
        x = np.maximum(x - step, 0.5 * x)
    out[ok] = x
    return out
