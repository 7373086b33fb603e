"""Low-temperature analysis: C/T = γ + βT² (+ δT⁴) by linear least squares."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np
import pandas as pd

from .._document import Documented
from ..errors import InputError
from ..thermo import CAUTION, atoms_of_data
from ..units import R
from ._points import _T3, _check_window, _data_sets, _points, _window_text

__all__ = ["LowTemperatureFit", "low_temperature_fit"]


# --- low-temperature analysis ---------------------------------------------------------------------
_LOW_T_TERMS = {"gamma": 0, "beta": 2, "delta": 4}  # power of T in C/T


@dataclass(frozen=True, eq=False)
class LowTemperatureFit(Documented):
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
