"""Non-linear least-squares fits of model components and mixtures to C_p(T), with standard errors."""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass
from functools import cached_property
from typing import Iterable, Mapping

import numpy as np
import pandas as pd
from scipy import optimize

from .._document import Documented
from ..errors import InputError, ModeheatWarning
from ..models import Component, Dilatation, Mixture
from ..progress import Progress, ProgressCallback, report
from ..spectrum import Spectrum
from ..thermo import CAUTION, atoms_of_data, heat_capacity
from ._points import _check_window, _data_sets, _points, _window_text
from .quality import FitQuality, _quality

__all__ = ["FitWarning", "FitResult", "fit"]


class FitWarning(ModeheatWarning):
    """A fit finished but its result needs care (parameters not determined, no convergence)."""


# --- model fits -------------------------------------------------------------------------------------
# Typical sizes: the scale of a parameter that starts at 0 (least_squares works on value/scale).
_TYPICAL = {"scale": 1.0, "theta": 100.0, "theta_low": 100.0, "theta_high": 100.0, "delta": 10.0, "gamma": 1e-3, "A": 1e-5}
# Parameters that must stay strictly positive (the others may reach 0).
_STRICT = {"scale", "theta", "theta_high", "delta", "g_ratio"}
_UNITS = {
    "theta": "K",
    "theta_low": "K",
    "theta_high": "K",
    "delta": "K",
    "gamma": "J/(mol K²)",
    "A": "mol/J",
    "modes": "",
    "n": "",
    "g_ratio": "",
    "scale": "",
}
_LOSSES = ("linear", "soft_l1", "huber", "cauchy", "arctan")
_HUBER_K = 1.345  # the classic Huber constant: 95 % efficiency on Gaussian residuals
_PENALTY = 1e6  # residual returned where a trial parameter set is not a valid model


def _as_mixture(model) -> Mixture:
    if isinstance(model, Mixture):
        return model
    if isinstance(model, (Component, Spectrum)):
        return Mixture((model,))  # a spectrum becomes a PhononDOS term
    raise InputError(f"model must be a component, a mixture or a spectrum, not {type(model).__name__}")


def _model_cp(mixture: Mixture, T: np.ndarray) -> np.ndarray:
    """The mixture's C_p: its C_v, through its Dilatation component when it has one."""
    cv = heat_capacity(mixture, T)
    dil = [c for c in mixture.components if isinstance(c, Dilatation)]
    return dil[0].cp_from_cv(T, cv) if dil else cv


@dataclass(frozen=True)
class _Map:
    """Fit vector x ↔ physical parameters.

    Plain parameters are p = scale·x.  Mode counts that vary keep their sum: with k of
    them, k − 1 stick-breaking fractions f_i ∈ [0, 1] give m_1 = S·f_1,
    m_2 = (S − m_1)·f_2, …, and the last takes what is left, so none goes negative.
    """

    plain: tuple[str, ...]
    scale: np.ndarray
    modes: tuple[str, ...]
    total: float

    @property
    def size(self) -> int:
        return len(self.plain) + max(len(self.modes) - 1, 0)

    def values(self, x: np.ndarray) -> dict[str, float]:
        n = len(self.plain)
        out = {k: float(v) for k, v in zip(self.plain, x[:n] * self.scale)}
        if self.modes:
            left = self.total
            for key, f in zip(self.modes[:-1], x[n:]):
                m = left * min(max(float(f), 0.0), 1.0)
                out[key] = m
                left -= m
            out[self.modes[-1]] = max(left, 0.0)
        return out

    def start(self, current: Mapping[str, float]) -> np.ndarray:
        x = [current[k] / s for k, s in zip(self.plain, self.scale)]
        left = self.total
        for key in self.modes[:-1]:
            x.append(current[key] / left if left > 0 else 0.5)
            left -= current[key]
        return np.array(x, dtype=float)

    def keys(self) -> list[str]:
        return list(self.plain) + list(self.modes)

    def jacobian(self, x: np.ndarray) -> np.ndarray:
        """d(physical values in keys() order)/dx, by central differences (exact for the linear part)."""
        base = x.astype(float)
        out = np.zeros((len(self.keys()), x.size))
        for j in range(x.size):
            h = 1e-7 * max(1.0, abs(base[j]))
            up, down = base.copy(), base.copy()
            up[j] += h
            down[j] -= h
            vu, vd = self.values(up), self.values(down)
            out[:, j] = [(vu[k] - vd[k]) / (2 * h) for k in self.keys()]
        return out


@dataclass(frozen=True, eq=False)
class FitResult(Documented):
    """Result of :func:`fit`.

    Attributes
    ----------
    model : Mixture — the fitted copy of the model (same components and names)
    params : dict — every parameter, keyed like :attr:`Mixture.parameters`
    stderr : dict — standard errors, same keys; NaN for fixed parameters
    varied, fixed : tuple of str — the keys that were fitted and those held
    covariance, correlation : pandas.DataFrame — over the varied parameters
    chi2_red : float — χ²/(n − p) of a fit weighted by sigma; NaN when unweighted
    scatter : float — the RMS residual in J/(mol K), √(Σ r²/(n − p))
    weighted : bool — False: no sigma, uncertainties scaled by the residual scatter
    loss, f_scale : the least-squares loss and its scale (in units of sigma when
        weighted, in J/(mol K) when not)
    window : tuple — (tmin, tmax) in K as asked (None: open)
    n_points : int — points inside the window, all data sets together
    residuals : pandas.DataFrame — ``T``, ``C``, ``model``, ``residual`` (C − model,
        J/(mol K)), ``normalised`` (residual/sigma, or residual/scatter when
        unweighted) and ``dataset`` (index of the data set)
    success : bool, message : str, nfev : int — from scipy.optimize.least_squares
    at_bound : tuple of str — varied parameters that ended on a bound
    datasets : tuple of str — the data sets' names (``attrs["name"]`` or "data set k")
    dof : int — degrees of freedom n − p (varied mode counts share one fixed total, so k
        of them count as k − 1 parameters)
    quality : FitQuality — goodness of fit: the χ²_red band, the runs test on the
        residual signs, the verdict and what to try
    """

    model: Mixture
    params: dict
    stderr: dict
    varied: tuple
    fixed: tuple
    covariance: pd.DataFrame
    correlation: pd.DataFrame
    chi2_red: float
    scatter: float
    weighted: bool
    loss: str
    f_scale: float
    window: tuple
    n_points: int
    residuals: pd.DataFrame
    success: bool
    message: str
    nfev: int
    at_bound: tuple
    datasets: tuple

    @property
    def dof(self) -> int:
        modes = sum(k.endswith(".modes") for k in self.varied)
        return self.n_points - len(self.varied) + (1 if modes else 0)

    @cached_property
    def quality(self) -> FitQuality:
        return _quality(self)

    def __repr__(self) -> str:
        comps = " + ".join(c.name for c in self.model.components)
        fit_text = f"χ²_red = {self.chi2_red:.3g}" if self.weighted else f"unweighted, scatter {self.scatter:.3g} J/(mol K)"
        return f"<FitResult {comps}: {self.n_points} points, {fit_text}, quality {self.quality.verdict}>"

    def parameter_table(self) -> pd.DataFrame:
        """One row per parameter: ``parameter``, ``value``, ``stderr`` (NaN when fixed),
        ``unit`` and ``status`` ("varied", "fixed", "… (at its bound)"); what the report
        prints and the views show."""
        rows = []
        for key, value in self.params.items():
            status = "varied" if key in self.varied else "fixed"
            if key in self.at_bound:
                status += " (at its bound)"
            unit = _UNITS.get(key.split(".", 1)[1], "")
            rows.append((key, float(value), float(self.stderr[key]), unit, status))
        return pd.DataFrame(rows, columns=["parameter", "value", "stderr", "unit", "status"])

    def report(self) -> str:
        """The fit as a readable text table, with its quality, the notes that matter and the caution."""
        comps = " + ".join(c.name for c in self.model.components)
        T = self.residuals["T"]
        sets = len(self.datasets)
        lines = [
            f"modeheat fit: {comps}",
            f"data: {self.n_points} points in {sets} data set{'s' if sets != 1 else ''} "
            f"({', '.join(self.datasets)}), {T.min():g}–{T.max():g} K; window {_window_text(*self.window)}",
            f"loss: {self.loss}" + ("" if self.loss == "linear" else f" (f_scale {self.f_scale:.3g})"),
            "",
            f"{'parameter':<24} {'value':>14} {'± stderr':>12}  {'unit':<11} status",
        ]
        for row in self.parameter_table().itertuples(index=False):
            err_text = "—" if math.isnan(row.stderr) else f"{row.stderr:.3g}"
            lines.append(f"{row.parameter:<24} {row.value:>14.6g} {err_text:>12}  {row.unit:<11} {row.status}")
        lines.append("")
        q = self.quality
        if self.weighted:
            lines.append(
                f"χ²_red = {self.chi2_red:.4g} (weighted by sigma; n − p = {self.dof}; a correct model gives "
                f"{q.chi2_red_range[0]:.3g}–{q.chi2_red_range[1]:.3g} in {100 * (1 - 2 * q.level):g} % of fits)"
            )
        else:
            lines.append(
                "unweighted (no sigma): the uncertainties are scaled by the residual scatter, "
                f"{self.scatter:.3g} J/(mol K)"
            )
        lines.append(
            f"residual signs in order of T: {q.runs} runs ({q.runs_expected:.3g} expected at random, "
            f"runs test p = {q.runs_p_value:.2g}); lag-1 autocorrelation {q.lag1:+.2f}"
        )
        rel = np.abs(self.residuals["residual"] / self.residuals["C"].where(self.residuals["C"] > 0))
        if rel.notna().any():
            lines.append(f"largest relative residual: {100 * float(rel.max()):.3g} %")
        lines.append(f"fit quality: {q.verdict}" + ("" if self.weighted else " (no sigma: χ²_red not judged)"))
        lines += [f"  problem: {text}" for text in q.problems]
        lines += [f"  try: {text}" for text in q.advice]
        lines += self._notes()
        lines.append(f"caution: {CAUTION}")
        return "\n".join(lines)

    def _notes(self) -> list[str]:
        notes = []
        gammas = [k for k in self.varied if k.endswith(".gamma")]
        dil = [c for c in self.model.components if isinstance(c, Dilatation)]
        gives_cp = [c.name for c in self.model.components if c.gives_cp]
        if gammas and not gives_cp:
            notes.append(
                "note: a free linear term γ·T fitted above ~50 K absorbs C_p − C_v, which grows roughly "
                "linearly with T there; it is not the electronic γ unless a dilatation term is fitted "
                "separately (a Dilatation component), and the low-temperature γ (low_temperature_fit) is the "
                "electronic one."
            )
        if gives_cp:
            notes.append(
                f"note: {gives_cp[0]} gives C_p itself (quasi-harmonic: thermal expansion from its spectra at "
                "several volumes), so C_p − C_v is in the model, not in γ."
            )
        elif dil:
            key = f"{dil[0].name}.A"
            how = "fitted" if key in self.varied else "held fixed"
            text = (
                f"note: the dilatation term C_p − C_v = A·C_p²·T is {how} separately "
                f"({key} = {self.params[key]:.4g} mol/J)"
            )
            if key in self.varied and gammas:
                r = float(self.correlation.loc[gammas[0], key])
                text += f"; its correlation with {gammas[0]} over this window is {r:+.2f}"
            notes.append(text + ".")
        elif float(self.residuals["T"].max()) > 50.0:
            notes.append(
                "note: the model is compared as C_v; above ~50 K measured C_p exceeds C_v (add a Dilatation "
                "component to fit C_p − C_v)."
            )
        if self.at_bound:
            notes.append(
                f"note: {', '.join(self.at_bound)} ended on a bound; its standard error is not meaningful."
            )
        return notes


def _varied_keys(mixture: Mixture, vary, fixed_keys: set[str]) -> list[str]:
    known = mixture.parameters
    if vary is None:
        keys = [k for k in mixture.continuous_parameters() if k not in fixed_keys]
    else:
        keys = [vary] if isinstance(vary, str) else list(vary)
        unknown = [k for k in keys if k not in known]
        if unknown:
            raise InputError(f"vary: unknown parameter(s) {', '.join(map(repr, unknown))}; known: {', '.join(known)}")
        both = [k for k in keys if k in fixed_keys]
        if both:
            raise InputError(f"{', '.join(both)}: asked both to vary and to be fixed")
        if len(set(keys)) != len(keys):
            raise InputError("vary: a parameter is named twice")
    if not keys:
        raise InputError("nothing to fit: every parameter is fixed")
    return keys


def _bounds(keys: list[str], current: Mapping[str, float], scale: np.ndarray, bounds) -> tuple[np.ndarray, np.ndarray]:
    bounds = dict(bounds or {})
    unknown = [k for k in bounds if k not in keys]
    if unknown:
        raise InputError(f"bounds: {', '.join(map(repr, unknown))} not among the varied plain parameters {keys}")
    lo, hi = [], []
    for key, s in zip(keys, scale):
        field = key.split(".", 1)[1]
        floor = 1e-9 * s if field in _STRICT else 0.0
        a, b = bounds.get(key, (floor, math.inf))
        a, b = float(a), float(b)
        if not (a < b) or a < floor:
            raise InputError(f"bounds for {key}: need {floor:g} ≤ low < high, not ({a:g}, {b:g})")
        if not a <= current[key] <= b:
            raise InputError(f"{key} starts at {current[key]:g}, outside its bounds ({a:g}, {b:g})")
        lo.append(a / s)
        hi.append(b / s)
    return np.array(lo), np.array(hi)


def fit(
    model,
    data,
    *,
    vary: Iterable[str] | None = None,
    tmin: float | None = None,
    tmax: float | None = None,
    bounds: Mapping[str, tuple[float, float]] | None = None,
    loss: str = "linear",
    fixed: Mapping[str, float] | Iterable[str] | None = None,
    f_scale: float | None = None,
    atoms: float | None = None,
    progress: ProgressCallback | None = None,
) -> FitResult:
    """Least-squares fit of a model component or mixture to measured C_p(T).

    The prediction is the mixture's C_v (:func:`modeheat.heat_capacity`: lattice,
    electronic and two-level terms), turned into C_p by the mixture's
    :class:`~modeheat.models.Dilatation` component when it has one (Nernst–Lindemann,
    C_p = 2·C_v/(1 + √(1 − 4·A·T·C_v))), so A is fitted like any other parameter.
    The fit is :func:`scipy.optimize.least_squares` (trust-region reflective, bounded)
    from the model's own parameter values: deterministic, no random starts.

    Parameters
    ----------
    model : Component, Mixture or Spectrum — the starting point; a single component is
        wrapped in a mixture, a spectrum in a :class:`~modeheat.PhononDOS` term (whose
        frequency scale ``"dos.scale"`` is then varied by default)
    data : DataFrame or list of DataFrames — ``T`` [K], ``C`` [J/(mol K)] and optionally
        ``sigma``; several sets (e.g. a low-T and a high-T run) are fitted jointly, each
        with its own sigma (all sets weighted, or none)
    vary : iterable of str, optional — keys (as in :attr:`Mixture.parameters`) to fit;
        by default every continuous parameter (:meth:`Mixture.continuous_parameters`),
        mode counts held.  Naming mode counts (``"einstein.modes"``) varies them with
        their sum held fixed, through stick-breaking fractions (the last named one takes
        what the others leave), so the total mode count and every count ≥ 0 are kept;
        name at least two
    tmin, tmax : float, optional — fit window in K, applied to every data set
    bounds : mapping, optional — ``{key: (low, high)}`` for plain (not mode-count)
        parameters, in their own units; by default every parameter is kept ≥ 0, and θ,
        Δ, g_ratio and a spectrum's scale > 0
    loss : {"linear", "soft_l1", "huber", "cauchy", "arctan"} — passed to least_squares;
        the robust ones down-weight points whose residual exceeds `f_scale`
    fixed : mapping or iterable of str, optional — parameters to hold: a mapping sets
        them first, an iterable holds them at the model's values
    f_scale : float, optional — the residual scale of a robust loss: in units of sigma
        when weighted (default 1.345, Huber's constant), in J/(mol K) when unweighted
        (default 1.345 × 1.4826 × the median absolute residual of a first fit with the
        linear loss, i.e. 1.345 robust standard deviations)
    atoms : float, optional — atoms per formula unit of the data; by default the count
        they store (``attrs["atoms"]``).  When known (given or stored,
        :func:`~modeheat.thermo.atoms_of_data`) the model must carry 3·atoms
        vibrational modes (its :meth:`Mixture.with_atoms` check)
    progress : callable, optional — receives a :class:`~modeheat.progress.Progress` at
        every residual evaluation (stage "fit" while searching, "uncertainties" for the
        Jacobian at the solution; ``total`` None, the current χ² in ``message``) and a
        last one with ``done == total``; returning ``False`` or raising
        :class:`~modeheat.Cancelled` stops the fit at once (:mod:`modeheat.progress`)

    Returns
    -------
    FitResult

    Notes
    -----
    Weighted (sigma present): residuals (C − model)/sigma, covariance (JᵀJ)⁻¹ with J
    the Jacobian at the solution (central differences), χ²_red reported.  Unweighted:
    residuals C − model, covariance s²·(JᵀJ)⁻¹ with s² = Σ r²/(n − p): the uncertainties
    are scaled by the residual scatter.  With a robust loss the same Gauss–Newton
    covariance is an approximation.  A free γ·T term fitted above ~50 K absorbs
    C_p − C_v and is not the electronic γ unless a Dilatation term is fitted as well;
    even then γ and A are correlated over a window that starts high.

    Raises
    ------
    InputError
        Unknown or contradictory parameter names, bad bounds, a single varied mode
        count, fewer points in the window than varied parameters + 1, more than one
        Dilatation component, an atom count unlike the data's or the model's.
    Cancelled
        The progress callback cancelled: no result, the model and data untouched.
    """
    mixture = _as_mixture(model)
    count, known = atoms_of_data(_data_sets(data), atoms)
    if known:
        if mixture.atoms is not None and not math.isclose(mixture.atoms, count):
            raise InputError(
                f"the model is for atoms={mixture.atoms:g} but the data for atoms={count:g}"
            )
        mixture = mixture.with_atoms(count, check=mixture.check)
    if sum(isinstance(c, Dilatation) for c in mixture.components) > 1:
        raise InputError("the model holds more than one Dilatation component; one A describes C_p − C_v")
    if loss not in _LOSSES:
        raise InputError(f"loss must be one of {', '.join(_LOSSES)}, not {loss!r}")
    _check_window(tmin, tmax)
    if isinstance(fixed, Mapping):
        mixture = mixture.with_parameters(fixed)
        fixed_keys = set(fixed)
    else:
        fixed_keys = set([fixed] if isinstance(fixed, str) else (fixed or ()))
        unknown = fixed_keys - set(mixture.parameters)
        if unknown:
            raise InputError(f"fixed: unknown parameter(s) {', '.join(sorted(unknown))}")
    keys = _varied_keys(mixture, vary, fixed_keys)
    current = mixture.parameters
    mode_keys = tuple(k for k in keys if k.endswith(".modes"))
    plain = tuple(k for k in keys if k not in mode_keys)
    if len(mode_keys) == 1:
        raise InputError(
            f"vary: {mode_keys[0]} alone cannot change, since the total mode count is held; name at least "
            "two mode counts to share the modes between them"
        )
    if any(k in (bounds or {}) for k in mode_keys):
        raise InputError("bounds: mode counts are kept between 0 and their total by the fit itself")
    scale = np.array([abs(current[k]) if current[k] != 0 else _TYPICAL.get(k.split(".", 1)[1], 1.0) for k in plain])
    total = float(sum(current[k] for k in mode_keys))
    if mode_keys and total <= 0:
        raise InputError(f"vary: the mode counts {', '.join(mode_keys)} add up to 0; there are no modes to share")
    mapping = _Map(plain, scale, mode_keys, total)
    lo, hi = _bounds(list(plain), current, scale, bounds)
    lo = np.concatenate([lo, np.zeros(mapping.size - len(plain))])
    hi = np.concatenate([hi, np.ones(mapping.size - len(plain))])

    pts = _points(data, tmin, tmax)
    n, p = pts.T.size, len(keys) - (1 if mode_keys else 0)
    if n < p + 1:
        raise InputError(
            f"only {n} point(s) in the window {_window_text(tmin, tmax)} for {p} varied parameter(s); "
            f"need at least {p + 1}"
        )
    weights = 1.0 / pts.sigma if pts.sigma is not None else np.ones(n)

    def predict(x: np.ndarray) -> np.ndarray | None:
        try:
            return _model_cp(mixture.with_parameters(mapping.values(x)), pts.T)
        except InputError:
            return None  # e.g. a band whose edges crossed, or no C_p for a trial A

    evaluations, stage = 0, "fit"

    def residuals(x: np.ndarray) -> np.ndarray:
        nonlocal evaluations
        m = predict(x)
        r = np.full(n, _PENALTY) if m is None else (m - pts.C) * weights
        if progress is not None:
            # Raising here unwinds least_squares itself: a cancelled fit stops within one evaluation.
            evaluations += 1
            report(progress, Progress(evaluations, None, stage, f"χ² = {float(r @ r):.6g}"))
        return r

    x0 = np.clip(mapping.start(current), lo, hi)
    options = dict(bounds=(lo, hi), method="trf", x_scale=1.0, xtol=1e-10, ftol=1e-10, gtol=1e-10, max_nfev=2000)
    weighted = pts.sigma is not None
    if loss == "linear":
        scale_used = 1.0
        solution = optimize.least_squares(residuals, x0, **options)
    else:
        if f_scale is not None:
            scale_used = float(f_scale)
            start = x0
        elif weighted:
            scale_used = _HUBER_K
            start = x0
        else:
            first = optimize.least_squares(residuals, x0, **options)
            mad = float(np.median(np.abs(first.fun - np.median(first.fun))))
            scale_used = _HUBER_K * 1.4826 * mad if mad > 0 else 1.0
            start = first.x
        if not scale_used > 0:
            raise InputError(f"f_scale must be positive, not {f_scale!r}")
        solution = optimize.least_squares(residuals, start, loss=loss, f_scale=scale_used, **options)
    x = solution.x
    stage = "uncertainties"
    r = residuals(x)
    if not np.all(np.isfinite(r)) or np.any(r == _PENALTY):
        raise InputError("the fit ended on parameters that do not make a valid model; start closer to the data")
    J = _central_jacobian(residuals, x, lo, hi)
    dof = n - p
    chi2 = float(r @ r)
    scatter = math.sqrt(float(np.sum(((r / weights) ** 2))) / dof)
    _, sv, vt = np.linalg.svd(J, full_matrices=False)
    tiny = sv <= 1e-12 * sv.max() if sv.size else np.array([], bool)
    inv = np.where(tiny, 0.0, 1.0 / np.where(tiny, 1.0, sv) ** 2)
    cov_x = (vt.T * inv) @ vt
    if weighted:
        chi2_red = chi2 / dof
    else:
        chi2_red = math.nan
        cov_x = cov_x * scatter**2
    G = mapping.jacobian(x)
    cov = G @ cov_x @ G.T
    names = mapping.keys()
    std = np.sqrt(np.clip(np.diag(cov), 0, None))
    if np.any(tiny):
        warnings.warn(
            "the data do not determine every varied parameter (a singular Jacobian): their standard errors "
            "are reported as inf; fix a parameter or widen the window",
            FitWarning,
            stacklevel=2,
        )
        # Parameters that move along an undetermined direction have no finite error.
        loose = np.abs(vt[tiny]).max(axis=0) > 1e-6
        std = np.where((np.abs(G[:, loose]) > 0).any(axis=1), math.inf, std)
    if not solution.success:
        warnings.warn(f"the fit did not converge: {solution.message}", FitWarning, stacklevel=2)
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(std, std)
    values = mapping.values(x)
    fitted = mixture.with_parameters(values)
    params = fitted.parameters
    stderr = {k: math.nan for k in params}
    stderr.update({k: float(s) for k, s in zip(names, std)})
    near = np.abs(x - lo) <= 1e-8 * np.maximum(1.0, np.abs(lo))
    near |= np.isfinite(hi) & (np.abs(hi - x) <= 1e-8 * np.maximum(1.0, np.abs(hi)))
    at_bound = tuple(k for k, flag in zip(plain, near[: len(plain)]) if flag)
    model_values = r / weights + pts.C
    table = pd.DataFrame(
        {
            "T": pts.T,
            "C": pts.C,
            "model": model_values,
            "residual": pts.C - model_values,
            "normalised": (pts.C - model_values) * (weights if weighted else 1.0 / scatter if scatter > 0 else 1.0),
            "dataset": pts.dataset,
        }
    )
    result = FitResult(
        model=fitted,
        params=params,
        stderr=stderr,
        varied=tuple(names),
        fixed=tuple(k for k in params if k not in names),
        covariance=pd.DataFrame(cov, index=names, columns=names),
        correlation=pd.DataFrame(corr, index=names, columns=names),
        chi2_red=float(chi2_red),
        scatter=float(scatter),
        weighted=weighted,
        loss=loss,
        f_scale=float(scale_used),
        window=(tmin, tmax),
        n_points=int(n),
        residuals=table,
        success=bool(solution.success),
        message=str(solution.message),
        nfev=int(solution.nfev),
        at_bound=at_bound,
        datasets=pts.names,
    )
    report(progress, Progress(evaluations, evaluations, "fit", "finished"))
    return result


def _central_jacobian(fun, x: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
    """Jacobian of fun at x by central differences, one-sided where a bound is near."""
    f0 = fun(x)
    J = np.empty((f0.size, x.size))
    for j in range(x.size):
        h = 1e-6 * max(1.0, abs(x[j]))
        up, down = x.copy(), x.copy()
        if x[j] + h <= hi[j] and x[j] - h >= lo[j]:
            up[j] += h
            down[j] -= h
            J[:, j] = (fun(up) - fun(down)) / (2 * h)
        elif x[j] + h <= hi[j]:
            up[j] += h
            J[:, j] = (fun(up) - f0) / h
        else:
            down[j] -= h
            J[:, j] = (f0 - fun(down)) / h
    return J
