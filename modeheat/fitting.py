"""Measured heat capacity: low-temperature analysis, model fits and where Debye breaks down.

Data are DataFrames with columns ``T`` [K], ``C`` [J/(mol K) per mole of formula
units] and optionally ``sigma`` (the standard uncertainty of C, same unit), as
:func:`modeheat.data.read_heat_capacity` returns them.

- :func:`low_temperature_fit` — linear least squares of C/T = γ + βT² (+ δT⁴), the
  Sommerfeld coefficient γ and θ_D(0) from β;
- :func:`fit` — non-linear least squares of any model component or mixture to C_p(T),
  one data set or several at once, with standard errors, correlations and a
  :class:`FitQuality` (χ²_red against its χ² band, a runs test on the residual signs,
  a verdict and advice);
- :func:`debye_breakdown` — the temperature below which the T³ law holds and the
  range over which θ_D(T) stays at θ_D(0), for a spectrum, a model or measured data.

A measured heat capacity is C_p.  A model predicts C_v; a :class:`~modeheat.models.Dilatation`
component in the mixture turns it into C_p (Nernst–Lindemann), otherwise the model's
C_v is compared with the data as it is, which is fine at low temperature where
C_p − C_v is negligible.
"""

from __future__ import annotations

import math
import numbers
import warnings
from dataclasses import dataclass
from functools import cached_property
from typing import Iterable, Mapping, Sequence

import numpy as np
import pandas as pd
from scipy import optimize
from scipy.special import chdtri, gammaln

from ._engine import ModeSet
from .errors import InputError, ModeheatWarning
from .models import Component, Dilatation, Electronic, Mixture
from .thermo import CAUTION, atoms_of_data, effective_debye_temperature, heat_capacity, thermo
from .units import KELVIN_RANGE, R

__all__ = [
    "FitWarning",
    "LowTemperatureFit",
    "low_temperature_fit",
    "FitResult",
    "FitQuality",
    "fit",
    "DebyeBreakdown",
    "debye_breakdown",
]

# C = (12π⁴/5)·atoms·R·(T/θ)³ at low T: the Debye T³ law per 3·atoms modes.
_T3 = 12.0 * math.pi**4 / 5.0


class FitWarning(ModeheatWarning):
    """A fit finished but its result needs care (parameters not determined, no convergence)."""


# --- data ---------------------------------------------------------------------------------------
@dataclass(frozen=True)
class _Points:
    T: np.ndarray
    C: np.ndarray
    sigma: np.ndarray | None
    dataset: np.ndarray  # index of the data set each point came from
    names: tuple[str, ...]


_SIGMA_FLOOR = 1e-30  # J/(mol K): smallest uncertainty accepted
_SIGMA_RELATIVE = 1e-12  # smallest uncertainty relative to the largest heat capacity of its set


def _data_sets(data) -> list[pd.DataFrame]:
    if isinstance(data, pd.DataFrame):
        return [data]
    if isinstance(data, (list, tuple)) and data and all(isinstance(d, pd.DataFrame) for d in data):
        return list(data)
    raise InputError("data must be a DataFrame with columns T and C (and optionally sigma), or a list of them")


def _points(data, tmin: float | None, tmax: float | None) -> _Points:
    """Every point of every data set inside [tmin, tmax], validated."""
    sets = _data_sets(data)
    with_sigma = ["sigma" in d.columns for d in sets]
    if any(with_sigma) and not all(with_sigma):
        raise InputError(
            "some data sets have a sigma column and others do not: give every set its uncertainties, or "
            "drop them all for an unweighted fit"
        )
    Ts, Cs, Ss, Ks, names = [], [], [], [], []
    for k, frame in enumerate(sets):
        label = frame.attrs.get("name") or f"data set {k}"
        names.append(str(label))
        for col in ("T", "C"):
            if col not in frame.columns:
                raise InputError(f"{label}: no column {col!r}; expected T [K], C [J/(mol K)] and optionally sigma")
        cols = ["T", "C"] + (["sigma"] if with_sigma[k] else [])
        try:
            values = frame[cols].to_numpy(dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"{label}: the columns {', '.join(cols)} must hold numbers") from None
        lo, hi = KELVIN_RANGE
        bad = ~np.isfinite(values).all(axis=1) | ~((values[:, 0] >= lo) & (values[:, 0] <= hi))
        if with_sigma[k]:
            # An uncertainty this far below the data scale would overflow the weights T/σ.
            floor = max(_SIGMA_FLOOR, _SIGMA_RELATIVE * float(np.max(np.abs(values[:, 1]), initial=0.0)))
            bad |= ~(values[:, 2] >= floor)
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            raise InputError(
                f"{label}: row {i} ({', '.join(f'{c} = {v:g}' for c, v in zip(cols, values[i]))}) needs T in "
                f"{lo:g}–{hi:g} K, finite values and sigma ≥ {_SIGMA_FLOOR:g} J/(mol K) and ≥ {_SIGMA_RELATIVE:g} of the largest C"
            )
        keep = np.ones(len(values), dtype=bool)
        if tmin is not None:
            keep &= values[:, 0] >= tmin
        if tmax is not None:
            keep &= values[:, 0] <= tmax
        v = values[keep]
        Ts.append(v[:, 0])
        Cs.append(v[:, 1])
        Ss.append(v[:, 2] if with_sigma[k] else None)
        Ks.append(np.full(len(v), k))
    sigma = np.concatenate(Ss) if all(with_sigma) else None
    return _Points(np.concatenate(Ts), np.concatenate(Cs), sigma, np.concatenate(Ks), tuple(names))


def _window_text(tmin, tmax) -> str:
    lo = "0" if tmin is None else f"{tmin:g}"
    hi = "∞" if tmax is None else f"{tmax:g}"
    return f"{lo}–{hi} K"


def _check_window(tmin, tmax) -> None:
    for label, v in (("tmin", tmin), ("tmax", tmax)):
        if v is not None and not (isinstance(v, numbers.Real) and math.isfinite(v) and v > 0):
            raise InputError(f"{label} must be a positive temperature in K, not {v!r}")
    if tmin is not None and tmax is not None and tmin >= tmax:
        raise InputError(f"tmin ({tmin:g} K) must be below tmax ({tmax:g} K)")


# --- low-temperature analysis ---------------------------------------------------------------------
_LOW_T_TERMS = {"gamma": 0, "beta": 2, "delta": 4}  # power of T in C/T


@dataclass(frozen=True, eq=False)
class LowTemperatureFit:
    """Result of :func:`low_temperature_fit`: C/T = γ + βT² (+ δT⁴).

    Attributes
    ----------
    gamma, gamma_stderr : float — Sommerfeld coefficient γ and its standard error in
        J/(mol K²) (0 and 0 when "gamma" was not fitted)
    beta, beta_stderr : float — T³ coefficient β in J/(mol K⁴)
    delta, delta_stderr : float — T⁵ coefficient δ in J/(mol K⁶) (NaN when not fitted)
    theta_D0, theta_D0_stderr : float — θ_D(0) = (12π⁴·atoms·R/(5β))^(1/3) in K and its
        standard error, σ_θ = θ·σ_β/(3β)
    covariance : pandas.DataFrame — covariance of the fitted coefficients
    chi2_red : float — χ²/(n − p) when weighted by sigma, NaN when unweighted
    scatter : float — RMS residual of C/T in J/(mol K²) about the fit, scaled by √(n/(n − p))
    weighted : bool — whether sigma weighted the fit (else the errors are scaled by
        the residual scatter)
    window : tuple of float — (tmin, tmax) in K as asked (None: open)
    t_range : tuple of float — lowest and highest T of the points used, K
    n_points : int
    atoms : float — atoms per formula unit
    terms : tuple of str
    table : pandas.DataFrame — the points used in the C/T-versus-T² representation:
        ``T`` [K], ``T2`` [K²], ``C_over_T`` [J/(mol K²)], ``sigma_C_over_T`` (when
        weighted) and ``fit`` (the fitted C/T)
    """

    gamma: float
    gamma_stderr: float
    beta: float
    beta_stderr: float
    delta: float
    delta_stderr: float
    theta_D0: float
    theta_D0_stderr: float
    covariance: pd.DataFrame
    chi2_red: float
    scatter: float
    weighted: bool
    window: tuple
    t_range: tuple
    n_points: int
    atoms: float
    terms: tuple
    table: pd.DataFrame

    def to_dict(self) -> dict:
        """A JSON-safe document of this object (:func:`modeheat.io.sessions.to_dict`)."""
        from .io import sessions  # imported here: sessions imports this module

        return sessions.to_dict(self)

    @classmethod
    def from_dict(cls, document):
        """The object a :meth:`to_dict` document holds (:func:`modeheat.io.sessions.from_dict`)."""
        from .io import sessions

        return sessions.from_dict(document, expect=cls)

    def heat_capacity(self, temperatures) -> np.ndarray:
        """The fitted C = γT + βT³ (+ δT⁵) in J/(mol K) at temperatures in K."""
        T = np.asarray(temperatures, dtype=float)
        delta = 0.0 if math.isnan(self.delta) else self.delta
        return self.gamma * T + self.beta * T**3 + delta * T**5

    def __repr__(self) -> str:
        return (
            f"<LowTemperatureFit γ = {self.gamma:.4g} J/(mol K²), θ_D(0) = {self.theta_D0:.5g} ± "
            f"{self.theta_D0_stderr:.2g} K, {self.n_points} points {self.t_range[0]:g}–{self.t_range[1]:g} K>"
        )

    def report(self) -> str:
        """A short text summary, with the caution."""
        lines = [
            f"low-temperature fit C/T = {' + '.join({'gamma': 'γ', 'beta': 'βT²', 'delta': 'δT⁴'}[t] for t in self.terms)}"
            f" to {self.n_points} points, {self.t_range[0]:g}–{self.t_range[1]:g} K",
            f"  γ   = {self.gamma:.6g} ± {self.gamma_stderr:.2g} J/(mol K²)",
            f"  β   = {self.beta:.6g} ± {self.beta_stderr:.2g} J/(mol K⁴)",
        ]
        if "delta" in self.terms:
            lines.append(f"  δ   = {self.delta:.6g} ± {self.delta_stderr:.2g} J/(mol K⁶)")
        lines.append(f"  θ_D(0) = {self.theta_D0:.5g} ± {self.theta_D0_stderr:.2g} K ({self.atoms:g} atoms per formula unit)")
        if self.weighted:
            lines.append(f"  χ²_red = {self.chi2_red:.4g} (weighted by sigma)")
        else:
            lines.append(
                f"  unweighted: uncertainties scaled by the residual scatter ({self.scatter:.3g} J/(mol K²) in C/T)"
            )
        lines.append(f"caution: {CAUTION}")
        return "\n".join(lines)


def _one_frame(data) -> pd.DataFrame:
    sets = _data_sets(data)
    if len(sets) == 1:
        return sets[0]
    return pd.concat(sets, ignore_index=True)


def low_temperature_fit(
    data,
    *,
    tmax: float,
    atoms: float | None = None,
    terms: Sequence[str] = ("gamma", "beta"),
    tmin: float | None = None,
) -> LowTemperatureFit:
    """Fit C/T = γ + βT² (+ δT⁴) to low-temperature heat capacities.

    The electronic term γT and the Debye T³ law (plus a T⁵ correction with "delta")
    are linear in their coefficients, so this is linear least squares of C/T against
    powers of T², weighted by the uncertainty of C/T, sigma/T, when the data carry
    sigma.  Without sigma every point weighs the same and the standard errors are
    scaled by the residual scatter.  θ_D(0) follows from β:
    θ_D(0) = (12π⁴·atoms·R/(5β))^(1/3) (the Debye T³ law).

    Parameters
    ----------
    data : DataFrame (or list of them, pooled) — ``T`` [K], ``C`` [J/(mol K)],
        optionally ``sigma`` [J/(mol K)]
    tmax : float — upper end of the fit window in K
    atoms : float, optional — atoms per formula unit (for θ_D(0)); by default the
        count the data store (``attrs["atoms"]``), else 1; a different count than the
        stored one is an error (:func:`~modeheat.thermo.atoms_of_data`)
    terms : sequence of str — which of "gamma", "beta", "delta" to fit; "beta" is needed
    tmin : float, optional — lower end of the fit window in K

    Returns
    -------
    LowTemperatureFit

    Raises
    ------
    InputError
        Fewer points, or fewer distinct temperatures, in the window than terms + 1, or a fitted β ≤ 0 (no Debye
        temperature exists: the window may reach above the T³ region, or the data
        may be dominated by another term).
    """
    _check_window(tmin, tmax)
    if tmax is None:
        raise InputError("tmax: give the upper end of the low-temperature window in K")
    atoms, _ = atoms_of_data(data, atoms)
    wanted = [terms] if isinstance(terms, str) else list(terms)
    unknown = [t for t in wanted if t not in _LOW_T_TERMS]
    if unknown or len(set(wanted)) != len(wanted) or "beta" not in wanted:
        raise InputError(
            f"terms must be distinct names from {', '.join(_LOW_T_TERMS)} and include 'beta', not {tuple(wanted)}"
        )
    order = tuple(t for t in _LOW_T_TERMS if t in wanted)
    pts = _points(_one_frame(data), tmin, tmax)
    T, n, p = pts.T, pts.T.size, len(order)
    if n < p + 1:
        raise InputError(
            f"only {n} point(s) in the window {_window_text(tmin, tmax)}: fitting {p} terms "
            f"({', '.join(order)}) needs at least {p + 1}"
        )
    distinct = np.unique(T).size
    if distinct < p + 1:
        # The terms are powers of T: at fewer temperatures they cannot be told apart, and with
        # exactly p the fit passes through the means and its standard errors mean nothing.
        raise InputError(
            f"the {n} points in the window {_window_text(tmin, tmax)} share {distinct} temperature(s): fitting "
            f"{p} terms ({', '.join(order)}) needs at least {p + 1} distinct ones"
        )
    y = pts.C / T
    X = np.stack([T ** _LOW_T_TERMS[t] for t in order], axis=1)
    w = T / pts.sigma if pts.sigma is not None else np.ones(n)
    # Columns scaled to unit norm keep the normal matrix well conditioned (T⁴ spans decades).
    Xw = X * w[:, None]
    norms = np.linalg.norm(Xw, axis=0)
    q, r = np.linalg.qr(Xw / norms)
    coef_scaled = np.linalg.solve(r, q.T @ (y * w))
    r_inv = np.linalg.inv(r)
    cov = (r_inv @ r_inv.T) / np.outer(norms, norms)
    coef = coef_scaled / norms
    resid = (y - X @ coef) * w
    dof = n - p
    chi2 = float(resid @ resid)
    weighted = pts.sigma is not None
    if weighted:
        chi2_red = chi2 / dof
        scatter = float(np.sqrt(np.sum((y - X @ coef) ** 2) / dof))
    else:
        chi2_red = math.nan
        scatter = math.sqrt(chi2 / dof)
        cov = cov * scatter**2
    stderr = np.sqrt(np.diag(cov))
    values = dict(zip(order, coef))
    errors = dict(zip(order, stderr))
    beta, beta_err = values["beta"], errors["beta"]
    if not beta > 0:
        raise InputError(
            f"the fitted β is {beta:.3g} ± {beta_err:.2g} J/(mol K⁴), not positive, so there is no Debye "
            f"temperature; narrow the window ({_window_text(tmin, tmax)}) to the T³ region or add the 'delta' term"
        )
    theta = (_T3 * atoms * R / beta) ** (1.0 / 3.0)
    table = pd.DataFrame({"T": T, "T2": T * T, "C_over_T": y})
    if weighted:
        table["sigma_C_over_T"] = pts.sigma / T
    table["fit"] = X @ coef
    order_rows = np.argsort(T, kind="stable")
    table = table.iloc[order_rows].reset_index(drop=True)
    return LowTemperatureFit(
        gamma=float(values.get("gamma", 0.0)),
        gamma_stderr=float(errors.get("gamma", 0.0)),
        beta=float(beta),
        beta_stderr=float(beta_err),
        delta=float(values.get("delta", math.nan)),
        delta_stderr=float(errors.get("delta", math.nan)),
        theta_D0=float(theta),
        theta_D0_stderr=float(theta * beta_err / (3.0 * beta)),
        covariance=pd.DataFrame(cov, index=list(order), columns=list(order)),
        chi2_red=float(chi2_red),
        scatter=float(scatter),
        weighted=weighted,
        window=(tmin, tmax),
        t_range=(float(T.min()), float(T.max())),
        n_points=int(n),
        atoms=float(atoms),
        terms=order,
        table=table,
    )


# --- model fits -------------------------------------------------------------------------------------
# Typical sizes: the scale of a parameter that starts at 0 (least_squares works on value/scale).
_TYPICAL = {"theta": 100.0, "theta_low": 100.0, "theta_high": 100.0, "delta": 10.0, "gamma": 1e-3, "A": 1e-5}
# Parameters that must stay strictly positive (the others may reach 0).
_STRICT = {"theta", "theta_high", "delta", "g_ratio"}
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
}
_LOSSES = ("linear", "soft_l1", "huber", "cauchy", "arctan")
_HUBER_K = 1.345  # the classic Huber constant: 95 % efficiency on Gaussian residuals
_PENALTY = 1e6  # residual returned where a trial parameter set is not a valid model


def _as_mixture(model) -> Mixture:
    if isinstance(model, Mixture):
        return model
    if isinstance(model, Component):
        return Mixture((model,))
    raise InputError(f"model must be a component or a mixture, not {type(model).__name__}")


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
class FitResult:
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

    def to_dict(self) -> dict:
        """A JSON-safe document of this object (:func:`modeheat.io.sessions.to_dict`)."""
        from .io import sessions  # imported here: sessions imports this module

        return sessions.to_dict(self)

    @classmethod
    def from_dict(cls, document):
        """The object a :meth:`to_dict` document holds (:func:`modeheat.io.sessions.from_dict`)."""
        from .io import sessions

        return sessions.from_dict(document, expect=cls)

    @cached_property
    def quality(self) -> FitQuality:
        return _quality(self)

    def __repr__(self) -> str:
        comps = " + ".join(c.name for c in self.model.components)
        fit_text = f"χ²_red = {self.chi2_red:.3g}" if self.weighted else f"unweighted, scatter {self.scatter:.3g} J/(mol K)"
        return f"<FitResult {comps}: {self.n_points} points, {fit_text}, quality {self.quality.verdict}>"

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
        for key, value in self.params.items():
            status = "varied" if key in self.varied else "fixed"
            if key in self.at_bound:
                status += " (at its bound)"
            err = self.stderr[key]
            err_text = "—" if math.isnan(err) else f"{err:.3g}"
            unit = _UNITS.get(key.split(".", 1)[1], "")
            lines.append(f"{key:<24} {value:>14.6g} {err_text:>12}  {unit:<11} {status}")
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
        if gammas:
            notes.append(
                "note: a free linear term γ·T fitted above ~50 K absorbs C_p − C_v, which grows roughly "
                "linearly with T there; it is not the electronic γ unless a dilatation term is fitted "
                "separately (a Dilatation component), and the low-temperature γ (low_temperature_fit) is the "
                "electronic one."
            )
        if dil:
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


# --- goodness of fit --------------------------------------------------------------------------------
# Every check of FitQuality is made at this significance level: a correct model with the
# right sigma trips any one of them in only 0.1 % of fits.
_LEVEL = 1e-3


def _log_comb(n: int, k: np.ndarray) -> np.ndarray:
    """ln C(n, k) elementwise, −inf where k < 0 or k > n."""
    k = np.asarray(k, dtype=float)
    ok = (k >= 0) & (k <= n)
    kk = np.where(ok, k, 0.0)
    value = gammaln(n + 1.0) - gammaln(kk + 1.0) - gammaln(n - kk + 1.0)
    return np.where(ok, value, -np.inf)


def _runs_test(signs: np.ndarray) -> tuple[int, float, float]:
    """Wald–Wolfowitz runs test on a sequence of signs (True: positive).

    Returns the number of runs R, its expectation 1 + 2·n₊·n₋/n for random order, and
    P(runs ≤ R), exact: for n₊ positives and n₋ negatives in random order,
    P(R = 2k) = 2·C(n₊−1, k−1)·C(n₋−1, k−1)/C(n, n₊) and
    P(R = 2k+1) = [C(n₊−1, k)·C(n₋−1, k−1) + C(n₊−1, k−1)·C(n₋−1, k)]/C(n, n₊).
    Too few runs means residuals of one sign come in blocks: structure.  With only one
    sign present the p-value is 0.5^(n−1), the chance that n independent fair signs agree.
    """
    s = np.asarray(signs, dtype=bool)
    n = s.size
    n_pos = int(np.count_nonzero(s))
    n_neg = n - n_pos
    runs = 1 + int(np.count_nonzero(s[1:] != s[:-1]))
    expected = 1.0 + 2.0 * n_pos * n_neg / n
    if n_pos == 0 or n_neg == 0:
        return runs, expected, 0.5 ** (n - 1)
    r = np.arange(2, runs + 1)
    k = r // 2
    even = 2.0 * np.exp(_log_comb(n_pos - 1, k - 1) + _log_comb(n_neg - 1, k - 1) - _log_comb(n, n_pos))
    odd = np.exp(_log_comb(n_pos - 1, k) + _log_comb(n_neg - 1, k - 1) - _log_comb(n, n_pos)) + np.exp(
        _log_comb(n_pos - 1, k - 1) + _log_comb(n_neg - 1, k) - _log_comb(n, n_pos)
    )
    return runs, expected, float(min(np.sum(np.where(r % 2 == 0, even, odd)), 1.0))


_REGIONS = ("low-T end", "middle", "high-T end")


@dataclass(frozen=True)
class FitQuality:
    """How well a fit describes its data, in numbers and words (:attr:`FitResult.quality`).

    Attributes
    ----------
    verdict : str — "good", "poor" (χ²_red too high or structured residuals) or
        "sigma overestimated" (χ²_red too low)
    level : float — significance level of every check (0.001)
    dof : int — degrees of freedom ν = n − p
    chi2_red : float — χ²/ν (NaN when unweighted: no sigma to judge it by)
    chi2_red_range : tuple of float — the central 1 − 2·level interval of χ²_red for a
        correct model with the right sigma, χ²_ν quantiles / ν (NaN when unweighted)
    runs : int — runs of equal sign among the residuals in order of T (zeros dropped)
    runs_expected : float — their expectation for random signs, 1 + 2·n₊·n₋/n
    runs_p_value : float — P(this few runs or fewer) for random signs (Wald–Wolfowitz
        runs test, exact); small: residuals of one sign come in blocks
    lag1 : float — lag-1 autocorrelation Σ r_i·r_{i+1}/Σ r_i² of the normalised
        residuals in order of T (≈ 0 for independent noise; the Durbin–Watson statistic
        is ≈ 2·(1 − lag1))
    structured : bool — runs_p_value below `level`
    worst : str — "low-T end", "middle" or "high-T end": the third of the points (in
        order of T) with the largest mean squared normalised residual
    worst_range : tuple of float — lowest and highest T of that third, K
    problems : tuple of str — what is wrong, in words (empty when good)
    advice : tuple of str — what to try, tailored to the model and to `worst`
    """

    verdict: str
    level: float
    dof: int
    chi2_red: float
    chi2_red_range: tuple
    runs: int
    runs_expected: float
    runs_p_value: float
    lag1: float
    structured: bool
    worst: str
    worst_range: tuple
    problems: tuple
    advice: tuple

    def to_dict(self) -> dict:
        """A JSON-safe document of this object (:func:`modeheat.io.sessions.to_dict`)."""
        from .io import sessions  # imported here: sessions imports this module

        return sessions.to_dict(self)

    @classmethod
    def from_dict(cls, document):
        """The object a :meth:`to_dict` document holds (:func:`modeheat.io.sessions.from_dict`)."""
        from .io import sessions

        return sessions.from_dict(document, expect=cls)

    def __post_init__(self):
        if self.verdict not in ("good", "poor", "sigma overestimated"):
            raise InputError(f"verdict must be 'good', 'poor' or 'sigma overestimated', not {self.verdict!r}")
        if not 0 < self.level < 0.5 or self.dof < 1:
            raise InputError(f"need 0 < level < 0.5 and dof ≥ 1, not {self.level!r} and {self.dof!r}")


def _quality(result: FitResult) -> FitQuality:
    """The goodness-of-fit checks of a fit result (see :class:`FitQuality`)."""
    res = result.residuals
    order = np.argsort(res["T"].to_numpy(), kind="stable")
    T = res["T"].to_numpy()[order]
    z = res["normalised"].to_numpy()[order]
    dof = result.dof
    if result.weighted:
        chi2_red = result.chi2_red
        # chdtri(ν, q): the χ² with ν degrees of freedom exceeded with probability q
        band = (float(chdtri(dof, 1.0 - _LEVEL) / dof), float(chdtri(dof, _LEVEL) / dof))
    else:
        chi2_red, band = math.nan, (math.nan, math.nan)
    nonzero = z != 0
    if np.count_nonzero(nonzero) >= 2:
        runs, expected, p_runs = _runs_test(z[nonzero] > 0)
    else:  # an exact fit: no signs to test
        runs, expected, p_runs = 0, math.nan, 1.0
    ss = float(z @ z)
    lag1 = float(z[1:] @ z[:-1] / ss) if ss > 0 else 0.0
    thirds = [part for part in np.array_split(np.arange(z.size), 3) if part.size]
    names = _REGIONS if len(thirds) == 3 else (_REGIONS[0], _REGIONS[2])  # n = 2: two halves
    k = int(np.argmax([np.mean(z[part] ** 2) for part in thirds]))
    worst, worst_range = names[k], (float(T[thirds[k][0]]), float(T[thirds[k][-1]]))

    high = chi2_red > band[1]
    low = chi2_red < band[0]
    structured = p_runs < _LEVEL
    problems, advice = [], []
    if high:
        problems.append(
            f"χ²_red = {chi2_red:.3g} is above {band[1]:.3g}, which a correct model with the given sigma exceeds "
            f"in only {100 * _LEVEL:g} % of fits (χ² with {dof} degrees of freedom)"
        )
    if structured:
        problems.append(
            f"the residuals are structured: {runs} runs of equal sign where {expected:.3g} are expected "
            f"(runs test p = {p_runs:.2g}; lag-1 autocorrelation {lag1:+.2f})"
        )
    if high or structured:
        where = "in the middle" if worst == "middle" else f"at the {worst}"
        problems.append(f"the misfit is largest {where} ({worst_range[0]:.3g}–{worst_range[1]:.3g} K)")
        advice += _advice(result, worst) if structured else []
        if high and not structured:
            advice.append(
                f"the residuals look random: sigma may be underestimated (by about ×{math.sqrt(chi2_red):.2g})"
            )
    if low:
        problems.append(
            f"χ²_red = {chi2_red:.3g} is below {band[0]:.3g}, which a correct model with the given sigma falls "
            f"under in only {100 * _LEVEL:g} % of fits"
        )
        advice.append(
            f"sigma is probably overestimated (by about ×{1 / math.sqrt(chi2_red):.2g}), so the standard errors "
            "are too large; or the points are not independent (smoothed or interpolated data)"
        )
    verdict = "poor" if high or structured else "sigma overestimated" if low else "good"
    return FitQuality(
        verdict=verdict,
        level=_LEVEL,
        dof=int(dof),
        chi2_red=float(chi2_red),
        chi2_red_range=band,
        runs=int(runs),
        runs_expected=float(expected),
        runs_p_value=float(p_runs),
        lag1=lag1,
        structured=bool(structured),
        worst=worst,
        worst_range=worst_range,
        problems=tuple(problems),
        advice=tuple(advice),
    )


def _advice(result: FitResult, worst: str) -> list[str]:
    """What to try against a systematic misfit, by where it is largest and what the model holds."""
    kinds = {type(c) for c in result.model.components}
    if worst == "low-T end":
        tips = []
        if not 0 < result.model.modeset().low_temperature_theta() < math.inf:
            tips.append("an acoustic Debye or SineChain branch (no branch of the model gives the T³ law)")
        if Electronic not in kinds:
            tips.append("an Electronic term (γT dominates a metal's C at the lowest T)")
        tips.append(
            "a low-lying Einstein or Schottky term if C/T³ rises there, or a higher tmin "
            f"(window {_window_text(*result.window)})"
        )
    elif worst == "middle":
        tips = [
            "another component (an Einstein or Band term for optical modes, a SineChain for dispersion), or free "
            "mode counts (name two or more '.modes' keys in vary)"
        ]
    else:
        dil = [c for c in result.model.components if isinstance(c, Dilatation)]
        if not dil:
            tips = ["a Dilatation component (C_p − C_v grows at high T)"]
        elif f"{dil[0].name}.A" not in result.varied:
            tips = [f"let {dil[0].name}.A vary (C_p − C_v)"]
        else:
            tips = []
        tips.append(f"a lower tmax (window {_window_text(*result.window)}): anharmonicity grows at high T")
    return tips


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
    model : Component or Mixture — the starting point; a single component is wrapped
        in a mixture
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
        Δ and g_ratio > 0
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

    def residuals(x: np.ndarray) -> np.ndarray:
        m = predict(x)
        if m is None:
            return np.full(n, _PENALTY)
        return (m - pts.C) * weights

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
    return FitResult(
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


# --- where the Debye model breaks down ---------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class DebyeBreakdown:
    """Result of :func:`debye_breakdown`.

    Attributes
    ----------
    tolerance : float — the relative tolerance asked for
    theta_D0 : float — θ_D(0) in K, the T → 0 limit the others are compared with
    t3_below : float — in K: below it C/T³ stays within `tolerance` of its T → 0 limit
        (the T³ law holds); NaN if it does not hold even at the lowest temperature
    theta_range : tuple of float — (low, high) in K: θ_D(T) stays within `tolerance` of
        θ_D(0) from `low`, the lowest temperature examined, up to `high`; high = inf
        when it never leaves over the temperatures examined, (NaN, NaN) when it is
        outside already at the lowest
    t3_range : tuple of float — (lowest temperature examined, t3_below) in K, the
        range of the T³ law in the same form; (NaN, NaN) when it does not hold there
    examined : tuple of float — lowest and highest temperature looked at, K
    gamma_subtracted : float or None — the electronic γ in J/(mol K²) removed from
        measured data before the analysis (None for spectra and models, whose lattice
        part is used directly)
    notes : tuple of str — what was done, in words
    table : pandas.DataFrame — ``T`` [K], ``theta_D`` [K] and ``C_T3_ratio``
        (C/T³ over its T → 0 limit; 1 where the T³ law holds)
    """

    tolerance: float
    theta_D0: float
    t3_below: float
    theta_range: tuple
    examined: tuple
    gamma_subtracted: float | None
    notes: tuple
    table: pd.DataFrame

    @property
    def t3_range(self) -> tuple:
        return (math.nan, math.nan) if math.isnan(self.t3_below) else (self.examined[0], self.t3_below)

    def __repr__(self) -> str:
        def span(r):
            if math.isnan(r[0]):
                return "none"
            return f"{r[0]:.3g} K–∞" if math.isinf(r[1]) else f"{r[0]:.3g}–{r[1]:.3g} K"

        return (
            f"<DebyeBreakdown θ_D(0) = {self.theta_D0:.4g} K, tolerance {100 * self.tolerance:g} %: "
            f"T³ law {span(self.t3_range)}, constant θ_D {span(self.theta_range)} "
            f"(examined {self.examined[0]:.3g}–{self.examined[1]:.3g} K)>"
        )

    def report(self) -> str:
        """A plain-text summary: both ranges, where and how each law fails, the notes and the caution."""
        tol = f"{100 * self.tolerance:g} %"
        lo, hi = self.examined
        lines = [
            f"Debye breakdown: θ_D(0) = {self.theta_D0:.5g} K, tolerance {tol}, "
            f"{len(self.table)} temperatures examined from {lo:.4g} K to {hi:.4g} K",
            f"T³ law (C/T³ within {tol} of its T → 0 limit): " + self._range_text(self.t3_range, "C_T3_ratio", 1.0),
            f"constant θ_D (θ_D(T) within {tol} of θ_D(0)): "
            + self._range_text(self.theta_range, "theta_D", self.theta_D0),
        ]
        lines += [f"note: {note}" for note in self.notes]
        lines.append(f"caution: {CAUTION}")
        return "\n".join(lines)

    def _range_text(self, span: tuple, column: str, reference: float) -> str:
        """Where a law holds and how it fails just above that: the first table value past the end."""
        lo, end = span
        if math.isnan(lo):
            return f"does not hold even at the lowest temperature examined, {self.examined[0]:.4g} K"
        if math.isinf(end):
            return f"holds from {lo:.4g} K through the highest temperature examined, {self.examined[1]:.4g} K"
        text = f"holds from {lo:.4g} K to {end:.4g} K"
        past = self.table.loc[self.table["T"] > end, column]
        if past.empty:
            return text
        value = float(past.iloc[0])
        quantity = "C/T³" if column == "C_T3_ratio" else "θ_D(T)"
        if math.isnan(value):
            return text + "; above it no θ_D(T) exists (C − γT ≤ 0 or ≥ 3·atoms·R)"
        return text + f"; above it {quantity} {'rises above' if value > reference else 'falls below'} its T → 0 limit"


def debye_breakdown(
    source,
    *,
    tolerance: float = 0.01,
    temperatures=None,
    atoms: float | None = None,
    low_t: LowTemperatureFit | None = None,
    tmax: float | None = None,
    gamma: float | None = None,
) -> DebyeBreakdown:
    """Where the Debye model stops describing a solid.

    Two measures, both relative to the T → 0 limit:

    * the T³ law: C/T³ within `tolerance` of its limit (12π⁴/5)·atoms·R/θ_D(0)³, up
      to ``t3_below``;
    * a constant Debye temperature: θ_D(T) within `tolerance` of θ_D(0), over
      ``theta_range``.

    For a spectrum, a component or a mixture the lattice (vibrational) C_v is used —
    electronic and two-level terms are left out — with θ_D(T) from
    :func:`modeheat.thermo` and θ_D(0) from the low-frequency branches
    (:meth:`ModeSet.low_temperature_theta`); crossings are located to ~1e-10 by root
    finding between the temperatures examined.  For measured data the electronic γT
    is subtracted first — `gamma` if given, else γ of `low_t` (a
    :func:`low_temperature_fit` result), else of a low-temperature fit up to `tmax`
    — θ_D(0) comes from that fit's β, and crossings are interpolated between data
    points.  Measured C_p is taken as C_v, which holds at low temperature; where
    C − γT reaches 3·atoms·R no θ_D(T) exists and the point counts as outside.

    Parameters
    ----------
    source : Spectrum, component, mixture, or DataFrame of measured ``T`` [K], ``C``
        [J/(mol K)]
    tolerance : float — relative tolerance, e.g. 0.01 for 1 %
    temperatures : array_like, optional — temperatures to examine in K (models and
        spectra: by default 400 points from 1e-3 of the lowest mode to 3× the highest;
        data: the data's own temperatures)
    atoms : float, optional — atoms per formula unit of measured data (default the
        stored ``attrs["atoms"]``, else 1; :func:`~modeheat.thermo.atoms_of_data`);
        models and spectra know their own
    low_t : LowTemperatureFit, optional — γ and θ_D(0) of measured data
    tmax : float, optional — upper end of the low-temperature fit window (K), used for
        measured data when `low_t` is not given
    gamma : float, optional — electronic γ of measured data in J/(mol K²), overriding
        that of the low-temperature fit

    Returns
    -------
    DebyeBreakdown
    """
    if not (isinstance(tolerance, numbers.Real) and 0 < tolerance < 1):
        raise InputError(f"tolerance must be between 0 and 1, not {tolerance!r}")
    if isinstance(source, pd.DataFrame):
        return _breakdown_of_data(source, tolerance, temperatures, atoms, low_t, tmax, gamma)
    if gamma is not None or low_t is not None or tmax is not None:
        raise InputError("gamma, low_t and tmax are for measured data; a model's lattice part is used directly")
    get = getattr(source, "modeset", None)
    if get is None:
        raise InputError(
            f"debye_breakdown needs a Spectrum, a model component, a mixture or a DataFrame of T and C, "
            f"not {type(source).__name__}"
        )
    ms = get()
    if atoms is not None and not math.isclose(float(atoms), ms.atoms):
        raise InputError(f"atoms: the source has {ms.atoms:g} atoms per formula unit, not {atoms!r}")
    return _breakdown_of_model(source, ms, tolerance, temperatures)


def _grid(ms: ModeSet, temperatures) -> np.ndarray:
    if temperatures is not None:
        T = np.unique(np.asarray(temperatures, dtype=float))
        if T.size < 2 or not np.all(np.isfinite(T)) or T[0] <= 0:
            raise InputError("temperatures must hold at least two finite values > 0 K")
        return T
    # From 1e-3 of the lowest temperature that matters: θ_D(0), the θ below which 1e-4 of
    # the modes lie, and the lower edge of every branch that carries as many.  (A spectrum's
    # first bins sit at 1e-5 of its cut-off and carry almost nothing.)
    floor = 1e-4 * ms.modes
    lows = []
    theta0 = ms.low_temperature_theta()
    if 0 < theta0 < math.inf:
        lows.append(theta0)
    if ms.weight.size and np.sum(ms.weight) >= floor:
        order = np.argsort(ms.theta)
        cum = np.cumsum(ms.weight[order])
        lows.append(float(ms.theta[order][min(int(np.searchsorted(cum, floor)), cum.size - 1)]))
    lows += [getattr(b, "theta_low", 0.0) or b.theta_max for b in ms.branches if b.modes >= floor]
    return np.geomspace(1e-3 * min(lows), 3.0 * ms.theta_max, 400)


def _first_exit(inside: np.ndarray) -> int | None:
    """Index of the first False after a leading run of True (None if all True)."""
    out = np.flatnonzero(~inside)
    return int(out[0]) if out.size else None


def _breakdown_of_model(source, ms: ModeSet, tolerance: float, temperatures) -> DebyeBreakdown:
    if ms.modes <= 0:
        raise InputError("the source has no vibrational modes: there is no Debye temperature")
    theta0 = ms.low_temperature_theta()
    T = _grid(ms, temperatures)
    notes = ["lattice (vibrational) C_v of the model; electronic and two-level terms left out"]
    limit = _T3 * (ms.modes / 3.0) * R / theta0**3 if 0 < theta0 < math.inf else math.nan

    def ratio(t):
        t = np.atleast_1d(np.asarray(t, dtype=float))
        return R * ms.evaluate(t)["cv_lattice"] / t**3 / limit

    def theta_of(t):
        return thermo(source, np.atleast_1d(t))["theta_D"].to_numpy()

    theta = theta_of(T)
    if not 0 < theta0 < math.inf:
        notes.append(
            "no ω² branch at low frequency (a lower-dimensional branch or a gap): C/T³ has no finite "
            "non-zero limit, so the T³ law does not hold"
        )
        table = pd.DataFrame({"T": T, "theta_D": theta, "C_T3_ratio": np.full(T.size, math.nan)})
        return DebyeBreakdown(
            tolerance, theta0, math.nan, (math.nan, math.nan), (float(T[0]), float(T[-1])), None, tuple(notes), table
        )
    rat = ratio(T)
    t3 = _crossing(lambda t: abs(ratio(t)[0] - 1.0) - tolerance, T, np.abs(rat - 1.0) <= tolerance)
    inside = np.abs(theta / theta0 - 1.0) <= tolerance
    hi = _crossing(lambda t: abs(theta_of(t)[0] / theta0 - 1.0) - tolerance, T, inside)
    theta_range = (float(T[0]), hi) if not math.isnan(hi) else (math.nan, math.nan)
    table = pd.DataFrame({"T": T, "theta_D": theta, "C_T3_ratio": rat})
    return DebyeBreakdown(
        tolerance, float(theta0), t3, theta_range, (float(T[0]), float(T[-1])), None, tuple(notes), table
    )


def _crossing(excess, T: np.ndarray, inside: np.ndarray) -> float:
    """The temperature where a leading run of `inside` ends, refined with brentq on `excess` (> 0 outside)."""
    if not inside[0]:
        return math.nan
    k = _first_exit(inside)
    if k is None:
        return math.inf
    a, b = excess(T[k - 1]), excess(T[k])
    if not (a <= 0 < b):  # the grid and the one-point evaluations disagree on the side: interpolate
        return _interpolated_exit(T[k - 1 : k + 1], np.array([min(a, 0.0), max(b, 1e-300)]))
    return float(optimize.brentq(excess, T[k - 1], T[k], xtol=1e-12 * T[k], rtol=1e-12))


def _breakdown_of_data(frame, tolerance, temperatures, atoms, low_t, tmax, gamma) -> DebyeBreakdown:
    if temperatures is not None:
        raise InputError("temperatures: measured data are examined at their own temperatures")
    atoms, _ = atoms_of_data(frame, atoms)
    notes = []
    if low_t is None:
        if tmax is None:
            raise InputError(
                "measured data need γ and θ_D(0): pass low_t (a low_temperature_fit result) or tmax, the upper "
                "end of a low-temperature fit window in K"
            )
        low_t = low_temperature_fit(frame, tmax=tmax, atoms=atoms)
        notes.append(f"γ and θ_D(0) from a low-temperature fit C/T = γ + βT² up to {tmax:g} K")
    else:
        notes.append("γ and θ_D(0) from the low-temperature fit given")
    if not math.isclose(low_t.atoms, atoms):
        raise InputError(f"the low-temperature fit is for {low_t.atoms:g} atoms per formula unit, not {atoms:g}")
    g = low_t.gamma if gamma is None else float(gamma)
    notes.append(
        f"electronic γT subtracted first (γ = {g:.6g} J/(mol K²){', given' if gamma is not None else ''}); "
        "measured C_p taken as C_v"
    )
    pts = _points(frame, None, None)
    order = np.argsort(pts.T, kind="stable")
    T, C = pts.T[order], pts.C[order]
    lattice = C - g * T
    theta0 = low_t.theta_D0
    rat = lattice / T**3 / low_t.beta
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # NaN where C − γT ≥ 3·atoms·R: counted as outside below
        theta = effective_debye_temperature(T, lattice, atoms=atoms)
    if np.any(np.isnan(theta)):
        notes.append("no θ_D(T) where C − γT is ≤ 0 or reaches 3·atoms·R (C_p − C_v): counted as outside")
    excess_t3 = np.abs(rat - 1.0) - tolerance
    excess_theta = np.abs(theta / theta0 - 1.0) - tolerance
    if pts.sigma is not None:
        # Noise alone should not end a range: a point is outside only by more than 2 σ.
        s = pts.sigma[order]
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            up = effective_debye_temperature(T, lattice + s, atoms=atoms)
            down = effective_debye_temperature(T, np.maximum(lattice - s, 0.0), atoms=atoms)
        sigma_theta = np.where(np.isfinite(up) & np.isfinite(down), 0.5 * np.abs(down - up), np.inf)
        excess_t3 = excess_t3 - 2.0 * s / T**3 / low_t.beta
        excess_theta = np.where(np.isnan(theta), np.nan, excess_theta - 2.0 * sigma_theta / theta0)
        notes.append("with sigma: a point counts as outside the tolerance only when it is outside by more than 2σ")
    t3 = _interpolated_exit(T, excess_t3)
    hi = _interpolated_exit(T, excess_theta)
    theta_range = (float(T[0]), hi) if not math.isnan(hi) else (math.nan, math.nan)
    table = pd.DataFrame({"T": T, "theta_D": theta, "C_T3_ratio": rat})
    return DebyeBreakdown(
        tolerance, float(theta0), t3, theta_range, (float(T[0]), float(T[-1])), float(g), tuple(notes), table
    )


def _interpolated_exit(T: np.ndarray, excess: np.ndarray) -> float:
    """Where a leading run of excess ≤ 0 ends, linearly interpolated between points (NaN counts as > 0)."""
    inside = excess <= 0
    if not inside[0]:
        return math.nan
    k = _first_exit(inside)
    if k is None:
        return math.inf
    a, b = excess[k - 1], excess[k]
    if not math.isfinite(b):
        return float(T[k - 1])
    return float(T[k - 1] + (T[k] - T[k - 1]) * (-a) / (b - a))
