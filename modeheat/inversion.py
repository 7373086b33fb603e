"""From a measured heat capacity back to a phonon DOS: a regularised inversion.

C_v(T) = R Σ_j w_j K(θ_j/T) + γT is a smoothing transform of the mode counts w_j in
bins of a log-spaced frequency grid (K the Einstein kernel x²eˣ/(eˣ−1)², averaged over
each bin), so recovering them is ill-posed.  The inversion solves a non-negative least
squares problem, weighted by the data's σ, with

* the constraints w ≥ 0 and Σ w = 3·atoms (a heavily weighted row),
* an electronic γ fitted alongside (an unregularised column T), removed first, or none,
* a Tikhonov penalty on the second differences of the reduced DOS g/ω² (without a
  prior; smoother at low frequency than smoothing g itself), or on the deviation of
  g/ω² from a prior's binned mode counts (with a prior),
* the penalty strength α chosen by generalised cross-validation (Golub, Heath & Wahba
  1979) or by the corner of the L-curve (Hansen), with the influence matrix of the
  non-negative solution's free set.

The band is a 68 % resampling band: the data are redrawn within σ (seeded) and
re-inverted with the chosen α, and the 16th and 84th percentiles of each bin's density
are reported; moment Debye temperatures carry the standard deviation of the resamples.
The data are taken as C_v, or, with ``cp_to_cv``, as a C_p turned into C_v first by
:func:`~modeheat.cv_from_cp`, each σ scaled by the local slope dC_v/dC_p.
"""

from __future__ import annotations

import math
import numbers
import warnings
from collections.abc import Iterator, Mapping
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.optimize import nnls

from .cp_cv import cv_from_cp
from .engine.special import einstein_terms
from .errors import InputError, ModeheatWarning, NoDebyeTemperatureWarning
from .fitting._points import _SIGMA_FLOOR, _SIGMA_RELATIVE, _points
from .models import PhononDOS
from .progress import Progress, ProgressCallback, drive
from .spectrum import Spectrum
from .thermo import atoms_of_data, effective_debye_temperature
from .units import R, kelvin_per

__all__ = ["invert_heat_capacity", "iter_invert_heat_capacity", "InversionResult", "InversionWarning"]

MOMENT_ORDERS: tuple[int, ...] = (-3, -2, -1, 1, 2)
_NODES = 4  # Gauss–Legendre nodes per bin (in ln θ) for the bin-averaged kernel
_BINS = 120  # default number of bins
_LOW, _HIGH = 0.5, 12.0  # default grid: θ from 0.5·T_min to 12·T_max (K(12) ≈ 1e-3) …
_HOT = 3.0  # … or to 3 × the warm data's largest effective θ_D, where that is lower
_ALPHAS = np.logspace(-1.5, 2.5, 17)  # relative penalty strengths scanned (below, GCV's flat minimum can pick noise)
_SUM_WEIGHT = 1e4  # weight of the mode-count row relative to the data rows
_SIGMA_FALLBACK = 0.01  # σ = 1 % of C when the data carry no sigma column


class InversionWarning(ModeheatWarning):
    """A documented fallback of the inversion (e.g. σ taken as 1 % of C)."""


@dataclass(frozen=True)
class InversionResult:
    """The recovered DOS of :func:`invert_heat_capacity`, its band, fit and moments.

    Attributes
    ----------
    spectrum : Spectrum — the recovered DOS, a histogram on the grid (THz)
    frequency : ndarray — bin centres in THz
    density : ndarray — modes per THz per formula unit
    band_low, band_high : ndarray — the band in modes per THz (NaN when band="none")
    band_method : str — how the band was made, in words
    fitted : DataFrame — T (K), C (the C_v inverted), C_model, residual (J/(mol K)), normalised (residual/σ)
    chi2_red : float — χ² per degree of freedom (points − effective parameters)
    alpha : float — the penalty strength (relative to the scale of the data rows)
    alpha_method : str — "gcv" or "lcurve", with the published name
    gamma : float — electronic γ in J/(mol K²) (NaN when electronic="none")
    moments : DataFrame — n, theta_D (K), stderr (K; NaN without a band)
    resolution : str — where the recovered DOS is data-dominated, in THz
    edges : ndarray — the bin edges in THz
    """

    spectrum: Spectrum
    frequency: np.ndarray
    density: np.ndarray
    band_low: np.ndarray
    band_high: np.ndarray
    band_method: str
    fitted: pd.DataFrame
    chi2_red: float
    alpha: float
    alpha_method: str
    gamma: float
    moments: pd.DataFrame
    resolution: str
    edges: np.ndarray

    def __post_init__(self) -> None:
        n = self.frequency.shape
        for label in ("density", "band_low", "band_high"):
            if getattr(self, label).shape != n:
                raise InputError(f"InversionResult.{label} must have the shape of frequency, {n}")
        if self.edges.shape != (n[0] + 1,):
            raise InputError("InversionResult.edges must have one more entry than frequency")

    def report(self) -> str:
        """The result in words: strength, fit quality, γ, moments with errors, resolution."""
        lines = [
            f"DOS from heat capacity: {self.frequency.size} bins, {len(self.fitted)} points",
            f"strength alpha = {self.alpha:.3g} chosen by {self.alpha_method}",
            f"chi2_red = {self.chi2_red:.3f}",
        ]
        if math.isfinite(self.gamma):
            lines.append(f"gamma = {self.gamma:.4g} J/(mol K^2)")
        lines.append(f"band: {self.band_method}")
        for row in self.moments.itertuples(index=False):
            err = "" if not math.isfinite(row.stderr) else f" ± {row.stderr:.3g}"
            lines.append(f"theta({row.n:+d}) = {row.theta_D:.4g}{err} K")
        lines.append(self.resolution)
        return "\n".join(lines)


# --- input --------------------------------------------------------------------------
def _measured(data, cp_to_cv: Mapping | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """T, C_v, σ sorted by T, validated; σ = 1 % of C with a warning when missing;
    a C_p converted to C_v first when `cp_to_cv` is given (:func:`_to_cv`)."""
    pts = _points(data, None, None)
    T, C, sigma = pts.T, pts.C, pts.sigma
    if T.size < 10:
        raise InputError(f"the inversion needs at least 10 points, got {T.size}")
    bad = np.flatnonzero(C <= 0)
    if bad.size:
        raise InputError(f"heat capacity must be positive, got C = {C[bad[0]]:g} J/(mol K) at T = {T[bad[0]]:g} K", index=int(bad[0]))
    if T.max() / T.min() < 3:
        raise InputError(
            f"the temperature range {T.min():g}–{T.max():g} K is too narrow to invert: T_max/T_min must be ≥ 3"
        )
    if sigma is None:
        warnings.warn(
            f"the data carry no sigma column: σ is taken as {100 * _SIGMA_FALLBACK:g} % of C",
            InversionWarning,
            stacklevel=4,
        )
        sigma = _SIGMA_FALLBACK * C
    if cp_to_cv is not None:
        C, sigma = _to_cv(T, C, sigma, cp_to_cv)
    # The fits' floor for uncertainties: weights 1/σ of tinier ones overflow.
    floor = max(_SIGMA_FLOOR, _SIGMA_RELATIVE * float(C.max()))
    small = np.flatnonzero(sigma < floor)
    if small.size:
        k = int(small[0])
        raise InputError(
            f"the uncertainty at T = {T[k]:g} K is {sigma[k]:.3g} J/(mol K) (C = {C[k]:.3g}), below "
            f"{floor:.3g}: sigma must be ≥ {_SIGMA_FLOOR:g} J/(mol K) and ≥ {_SIGMA_RELATIVE:g} of the "
            "largest C to weight the inversion",
            index=k,
        )
    order = np.argsort(T, kind="stable")
    return T[order], C[order], sigma[order]


_CONVERSION_KEYS = frozenset({"alpha", "bulk_modulus", "molar_volume", "gruneisen", "A"})


def _to_cv(T: np.ndarray, cp: np.ndarray, sigma: np.ndarray, cp_to_cv: Mapping) -> tuple[np.ndarray, np.ndarray]:
    """C_v (J/(mol K)) from C_p by :func:`~modeheat.cv_from_cp`, and σ × dC_v/dC_p.

    Every form is at most quadratic in C_p, so the central difference of the backend's
    own conversion gives the slope exactly (up to rounding) without repeating the forms.
    """
    if not isinstance(cp_to_cv, Mapping):
        raise InputError(f"cp_to_cv must be a mapping of cv_from_cp's keywords, not {type(cp_to_cv).__name__}")
    unknown = sorted(set(map(str, cp_to_cv)) - _CONVERSION_KEYS)
    if unknown:
        raise InputError(f"cp_to_cv: unknown keyword {unknown[0]!r}; give {', '.join(sorted(_CONVERSION_KEYS))}")
    cv = cv_from_cp(T, cp, **cp_to_cv)
    h = 1e-3 * cp
    slope = (cv_from_cp(T, cp + h, **cp_to_cv) - cv_from_cp(T, cp - h, **cp_to_cv)) / (2.0 * h)
    bad = np.flatnonzero(~((cv > 0) & (slope > 0)))
    if bad.size:
        i = int(bad[0])
        raise InputError(
            f"cp_to_cv: at T = {T[i]:g} K, C_p = {cp[i]:g} J/(mol K) gives C_v = {cv[i]:g} J/(mol K) with "
            f"dC_v/dC_p = {slope[i]:.3g}; both must be positive (the dilatation coefficients are too large)",
            index=i,
        )
    return cv, sigma * slope


def _default_top(T: np.ndarray, C: np.ndarray, atoms: float) -> float:
    """The default grid's upper edge in K.

    12·T_max bounds what the data can see; but where the warm half of the data already
    has an effective Debye temperature θ_eff (0 < C < 3·atoms·R), no mode of the solid
    lies far above it: modes there would leave C short of what was measured.  Above a
    sharp cut-off the smoothing would otherwise spread modes up to 12·T_max (a lattice
    DOS came back with θ(2) up to 17 % high; 3·θ_eff keeps it within 3 %).  3·θ_eff is
    wide enough for an optical branch several times the acoustic one, whose deficit in
    C raises θ_eff itself.
    """
    top = _HIGH * T.max()
    warm = T >= np.median(T)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", NoDebyeTemperatureWarning)  # none where C ≥ 3·atoms·R: skipped
        try:
            theta = effective_debye_temperature(T[warm], C[warm], atoms=atoms)
        except InputError:  # e.g. a C ≤ 0 left after a fixed γT was removed: keep 12·T_max
            return max(top, 8.0 * _LOW * T.min())
    theta = theta[np.isfinite(theta) & (theta > 0)]
    if theta.size:
        top = min(top, _HOT * float(theta.max()))
    return max(top, 8.0 * _LOW * T.min())  # never a grid narrower than a few bins of the data's range


def _grid_kelvin(grid, T: np.ndarray, top: float) -> np.ndarray:
    """Bin edges in K: the given THz edges, or the default log grid up to `top` (K)."""
    if grid is None:
        return np.geomspace(_LOW * T.min(), top, _BINS + 1)
    try:
        e = np.asarray(grid, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"grid must be bin edges in THz, not {grid!r}") from None
    if e.ndim != 1 or e.size < 4 or not np.all(np.isfinite(e)) or e[0] <= 0 or np.any(np.diff(e) <= 0):
        raise InputError("grid must be at least 4 positive, finite, strictly increasing bin edges in THz")
    return e * kelvin_per("THz")


def _kernel(T: np.ndarray, edges: np.ndarray) -> np.ndarray:
    """C/R per mode of each bin at each T: the Einstein kernel averaged over the bin in ln θ."""
    nodes, weights = np.polynomial.legendre.leggauss(_NODES)
    lo, hi = np.log(edges[:-1]), np.log(edges[1:])
    ln_theta = 0.5 * (lo + hi)[:, None] + 0.5 * (hi - lo)[:, None] * nodes[None, :]
    x = np.exp(ln_theta)[None, :, :] / T[:, None, None]
    cv, _, _ = einstein_terms(x)
    return (cv * (0.5 * weights)).sum(axis=2)


def _prior_counts(prior, edges: np.ndarray, modes: float) -> np.ndarray:
    """The prior's mode counts in the bins (edges in K), scaled to `modes`."""
    if isinstance(prior, Spectrum):
        prior = PhononDOS(prior)
    get = getattr(prior, "cumulative", None)
    if get is None:
        raise InputError(f"prior must be a Spectrum, a model component or a Mixture, not {type(prior).__name__}")
    cum = np.asarray(get(edges), dtype=float)
    counts = np.clip(np.diff(cum), 0.0, None)
    counts[-1] += max(modes - float(counts.sum()), 0.0)  # the prior's modes above the grid go in the top bin
    return counts * (modes / counts.sum())


# --- solving -----------------------------------------------------------------------
@dataclass(frozen=True)
class _System:
    A: np.ndarray  # data rows / σ, columns: bins (+ T for γ)
    b: np.ndarray  # data / σ
    P: np.ndarray  # penalty rows (normalised), same columns
    p: np.ndarray  # penalty target
    S: np.ndarray  # the mode-count row (weighted)
    s: float


def _solve(system: _System, alpha: float, b: np.ndarray | None = None) -> np.ndarray:
    rows = np.vstack([system.A, alpha * system.P, system.S[None, :]])
    rhs = np.concatenate([system.b if b is None else b, alpha * system.p, [system.s]])
    x, _ = nnls(rows, rhs, maxiter=50 * rows.shape[1])
    return x


def _diagnostics(system: _System, alpha: float, x: np.ndarray) -> tuple[float, float, float]:
    """Residual χ², penalty norm² and the effective number of parameters (influence trace)."""
    free = x > 0
    A, P = system.A[:, free], system.P[:, free]
    G = A.T @ A
    # the mode-count row is a constraint: the influence matrix A·X·Aᵀ takes X from the
    # bordered (KKT) system [[G + α²PᵀP, sᵀ], [s, 0]], whose top-left block of the inverse is X
    s = system.S[free]
    m = G.shape[0]
    kkt = np.zeros((m + 1, m + 1))
    kkt[:m, :m] = G + alpha**2 * (P.T @ P)
    kkt[:m, m] = kkt[m, :m] = s / float(np.abs(s).max())  # some bin is always free: Σw = 3·atoms > 0
    rhs = np.vstack([G, np.zeros((1, m))])
    try:
        solved = np.linalg.solve(kkt, rhs)
    except np.linalg.LinAlgError:  # a free set the penalty does not pin down: the least-squares inverse
        solved = np.linalg.lstsq(kkt, rhs, rcond=None)[0]
    trace = float(np.trace(solved[:m]))
    chi2 = float(np.sum((system.A @ x - system.b) ** 2))
    seminorm = float(np.sum((system.P @ x - system.p) ** 2))
    return chi2, seminorm, trace


def _choose(system: _System, method: str) -> tuple[float, np.ndarray]:
    """α (and its solution) by GCV or the L-curve corner over a log scan."""
    n = system.A.shape[0]
    found = []
    for alpha in _ALPHAS:
        x = _solve(system, alpha)
        found.append((alpha, x, *_diagnostics(system, alpha, x)))
    if method == "gcv":
        # V(α) = n·χ²/(n − tr H)²  (Golub, Heath & Wahba 1979)
        score = [n * chi2 / max(n - tr, 1.0) ** 2 for _, _, chi2, _, tr in found]
        k = int(np.argmin(score))
    else:
        # the corner: largest curvature of (ln χ, ln seminorm) along ln α (Hansen)
        rho = np.log(np.sqrt([max(f[2], 1e-300) for f in found]))
        eta = np.log(np.sqrt([max(f[3], 1e-300) for f in found]))
        t = np.log(_ALPHAS)
        dr, de = np.gradient(rho, t), np.gradient(eta, t)
        d2r, d2e = np.gradient(dr, t), np.gradient(de, t)
        kappa = (dr * d2e - d2r * de) / np.maximum((dr**2 + de**2) ** 1.5, 1e-300)
        k = int(np.argmax(kappa[1:-1])) + 1
    return float(found[k][0]), found[k][1]


def _moments(counts: np.ndarray, edges: np.ndarray) -> np.ndarray:
    """θ(n) in K of flat-in-bin counts: [(n+3)/3 ⟨θⁿ⟩]^(1/n); θ(−3) from the ω² level of the lowest bin."""
    lo, hi = edges[:-1], edges[1:]
    total = counts.sum()
    out = []
    for n in MOMENT_ORDERS:
        if n == -3:
            # the Debye level of the lowest occupied reduced DOS: 3·atoms modes below θ(−3)
            k = int(np.argmax(counts > 0))
            out.append(float(3.0 * total * (hi[k] ** 3 - lo[k] ** 3) / counts[k]) ** (1.0 / 3.0) if counts[k] > 0 else math.nan)
            continue
        if n == -1:
            average = np.log(hi / lo) / (hi - lo)
        else:
            average = (hi ** (n + 1) - lo ** (n + 1)) / ((n + 1) * (hi - lo))
        mean = float(np.sum(counts * average) / total)
        out.append(((n + 3.0) / 3.0 * mean) ** (1.0 / n))
    return np.array(out)


def _check_options(method, electronic, band, samples, seed) -> None:
    if method not in ("gcv", "lcurve"):
        raise InputError(f"method must be 'gcv' or 'lcurve', not {method!r}")
    if not (electronic in ("fit", "none") or (isinstance(electronic, numbers.Real) and not isinstance(electronic, bool)
                                             and math.isfinite(electronic) and electronic >= 0)):
        raise InputError(f"electronic must be 'fit', 'none' or a γ ≥ 0 in J/(mol K²), not {electronic!r}")
    if band not in ("resample", "none"):
        raise InputError(f"band must be 'resample' or 'none', not {band!r}")
    if isinstance(samples, bool) or not isinstance(samples, numbers.Integral) or not 2 <= samples <= 10000:
        raise InputError(f"samples must be an integer from 2 to 10000, not {samples!r}")
    if isinstance(seed, bool) or not isinstance(seed, numbers.Integral):
        raise InputError(f"seed must be an integer, not {seed!r}")


def iter_invert_heat_capacity(
    data,
    *,
    atoms: float | None = None,
    grid=None,
    method: str = "gcv",
    prior=None,
    electronic: str | float = "fit",
    band: str = "resample",
    samples: int = 50,
    seed: int = 0,
    cp_to_cv: Mapping | None = None,
) -> Iterator[Progress]:
    """The inversion as a generator of :class:`~modeheat.progress.Progress` records.

    Arguments as for :func:`invert_heat_capacity`; the last record's ``result`` is the
    :class:`InversionResult`.
    """
    _check_options(method, electronic, band, samples, seed)
    atoms, _ = atoms_of_data(data, atoms)
    T, C, sigma = _measured(data, cp_to_cv)
    modes = 3.0 * atoms
    fit_gamma = electronic == "fit"
    target = C - (float(electronic) * T if isinstance(electronic, numbers.Real) else 0.0)
    edges = _grid_kelvin(grid, T, _default_top(T, target, atoms) if grid is None else math.nan)
    total = 2 + (samples if band == "resample" else 0)
    yield Progress(0, total, "kernel", f"{T.size} points, {edges.size - 1} bins")

    K = R * _kernel(T, edges)
    columns = [K] + ([T[:, None]] if fit_gamma else [])
    A = np.hstack(columns) / sigma[:, None]
    b = target / sigma
    nb = edges.size - 1
    centre = np.sqrt(edges[:-1] * edges[1:])
    # counts → reduced DOS g/θ² per bin, in units of its Debye level, so the penalty is scale-free
    to_reduced = (edges[-1] ** 3 / (3.0 * modes)) / (np.diff(edges) * centre**2)
    if prior is None:
        D = np.diff(np.eye(nb), 2, axis=0) * to_reduced[None, :]
        target_pen = np.zeros(nb - 2)
    else:
        D = np.diag(to_reduced)
        target_pen = to_reduced * _prior_counts(prior, edges, modes)
    scale = np.linalg.norm(A[:, :nb]) / np.linalg.norm(D)
    P = np.hstack([D * scale] + ([np.zeros((D.shape[0], 1))] if fit_gamma else []))
    S = np.concatenate([np.ones(nb), [0.0] if fit_gamma else []]) * (_SUM_WEIGHT * np.abs(A).max())
    system = _System(A, b, P, target_pen * scale, S, modes * S[0])
    alpha, x = _choose(system, method)
    chi2, _, trace = _diagnostics(system, alpha, x)
    yield Progress(1, total, "strength", f"alpha = {alpha:.3g} by {method}")

    counts = x[:nb]
    thz = kelvin_per("THz")
    width = np.diff(edges) / thz
    density = counts / width
    moments = _moments(counts, edges)
    low = high = np.full(nb, math.nan)
    stderr = np.full(len(MOMENT_ORDERS), math.nan)
    band_method = "none"
    if band == "resample":
        rng = np.random.default_rng(seed)
        drawn = np.empty((samples, nb))
        drawn_moments = np.empty((samples, len(MOMENT_ORDERS)))
        for k in range(samples):
            xs = _solve(system, alpha, b + rng.standard_normal(b.size))
            drawn[k] = xs[:nb] / width
            drawn_moments[k] = _moments(xs[:nb], edges)
            yield Progress(2 + k, total, "band", f"resample {k + 1} of {samples}")
        low, high = np.percentile(drawn, [16.0, 84.0], axis=0)
        stderr = np.std(drawn_moments, axis=0, ddof=1)
        band_method = f"68 % resampling band: 16th–84th percentiles of {samples} inversions of data redrawn within σ (seed {seed})"

    model = K @ counts + (x[nb] * T if fit_gamma else 0.0) + (C - target)
    residual = C - model
    fitted = pd.DataFrame({"T": T, "C": C, "C_model": model, "residual": residual, "normalised": residual / sigma})
    fitted.attrs["units"] = {"T": "K", "C": "J/(mol K)", "C_model": "J/(mol K)", "residual": "J/(mol K)", "normalised": "1"}
    dof = max(T.size - trace, 1.0)
    gamma = float(x[nb]) if fit_gamma else (float(electronic) if electronic != "none" else math.nan)
    table = pd.DataFrame({"n": list(MOMENT_ORDERS), "theta_D": moments, "stderr": stderr})
    table.attrs["units"] = {"n": "1", "theta_D": "K", "stderr": "K"}
    # below a few k·T_min/ħ only the mode count reaches the DOS; above ~12 k·T_max/ħ no point does
    resolution = (
        f"resolution: the recovered DOS is data-dominated between about {3.0 * T.min() / thz:.3g} THz "
        f"(3·k·T_min/h) and {12.0 * T.max() / thz:.3g} THz (12·k·T_max/h); outside it, and for features "
        f"narrower than about k·T/h at the temperatures that probe them, it is set by the "
        f"{'prior' if prior is not None else 'smoothness of g/ω²'} and the mode count"
    )
    spectrum = Spectrum.from_histogram(edges / thz, np.maximum(counts, 0.0) + 0.0, unit="THz", atoms=atoms, name="inverted", low_t="off")
    result = InversionResult(
        spectrum=spectrum,
        frequency=0.5 * (edges[:-1] + edges[1:]) / thz,
        density=density,
        band_low=low,
        band_high=high,
        band_method=band_method,
        fitted=fitted,
        chi2_red=chi2 / dof,
        alpha=alpha,
        alpha_method="generalised cross-validation (gcv)" if method == "gcv" else "L-curve corner (lcurve)",
        gamma=gamma,
        moments=table,
        resolution=resolution,
        edges=edges / thz,
    )
    yield Progress(total, total, "done", f"chi2_red = {result.chi2_red:.3g}", result=result)


def invert_heat_capacity(
    data,
    *,
    atoms: float | None = None,
    grid=None,
    method: str = "gcv",
    prior=None,
    electronic: str | float = "fit",
    band: str = "resample",
    samples: int = 50,
    seed: int = 0,
    cp_to_cv: Mapping | None = None,
    progress: ProgressCallback | None = None,
) -> InversionResult:
    """Recover a phonon DOS from a measured heat capacity C_v(T), with a band.

    Parameters
    ----------
    data : DataFrame or list of DataFrames — columns T (K), C (J/(mol K), a C_v, or a
        C_p with `cp_to_cv`) and optionally sigma (J/(mol K); missing: 1 % of C with an
        :class:`InversionWarning`)
    atoms : float, optional — atoms per formula unit (:func:`~modeheat.thermo.atoms_of_data`)
    grid : array_like, optional — bin edges in THz (default: 120 log-spaced bins from
        0.5·k·T_min/h to 12·k·T_max/h, or to 3·k·θ_eff/h where that is lower, θ_eff the
        largest effective Debye temperature of the warmer half of the data)
    method : {"gcv", "lcurve"} — how the strength is chosen: generalised
        cross-validation or the L-curve corner
    prior : Spectrum, component or Mixture, optional — regularise towards its binned
        mode counts instead of towards a smooth g/ω²
    electronic : "fit", "none" or float — γ (J/(mol K²)) fitted, absent, or removed first
    band : {"resample", "none"} — the 68 % resampling band, or none
    samples : int — resamples for the band; seed : int — their seed
    cp_to_cv : mapping, optional — the data are C_p: keyword arguments of
        :func:`~modeheat.cv_from_cp` (``A`` in mol/J; or ``alpha`` in 1/K,
        ``bulk_modulus`` in Pa and ``molar_volume`` in m³/mol; or ``alpha`` and
        ``gruneisen``) turn them into C_v before the inversion, and each σ is scaled by
        the local dC_v/dC_p; ``fitted["C"]`` is then that C_v
    progress : callable, optional — a :mod:`modeheat.progress` callback (False cancels)

    Returns
    -------
    InversionResult

    Raises
    ------
    InputError
        Fewer than 10 points, T_max/T_min < 3, C ≤ 0, a bad grid or option, or a
        `cp_to_cv` that is not a valid conversion or gives C_v ≤ 0 or dC_v/dC_p ≤ 0.
    Cancelled
        The callback cancelled.
    """
    return drive(
        iter_invert_heat_capacity(
            data, atoms=atoms, grid=grid, method=method, prior=prior, electronic=electronic,
            band=band, samples=samples, seed=seed, cp_to_cv=cp_to_cv,
        ),
        progress,
    )
