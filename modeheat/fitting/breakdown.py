"""Where the Debye model breaks down: the T³ range and the plateau of θ_D(T)."""

from __future__ import annotations

import math
import numbers
import warnings
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import optimize

from ..engine.modeset import ModeSet
from ..errors import InputError
from ..thermo import CAUTION, _warn_missing_theta, atoms_of_data, effective_debye_temperature
from ..units import R
from ._points import _T3, _points
from .low_t import LowTemperatureFit, low_temperature_fit

__all__ = ["DebyeBreakdown", "debye_breakdown"]


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
    low_t_fit: LowTemperatureFit | None = None,
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
    :func:`~modeheat.effective_debye_temperature` (the mode set's, evaluated once on
    the grid) and θ_D(0) from the low-frequency branches
    (:attr:`ModeSet.theta_D0`); crossings are located to ~1e-10 by root
    finding between the temperatures examined.  For measured data the electronic γT
    is subtracted first — `gamma` if given, else γ of `low_t_fit` (a
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
    low_t_fit : LowTemperatureFit, optional — γ and θ_D(0) of measured data
    tmax : float, optional — upper end of the low-temperature fit window (K), used for
        measured data when `low_t_fit` is not given
    gamma : float, optional — electronic γ of measured data in J/(mol K²), overriding
        that of the low-temperature fit

    Returns
    -------
    DebyeBreakdown
    """
    if not (isinstance(tolerance, numbers.Real) and 0 < tolerance < 1):
        raise InputError(f"tolerance must be between 0 and 1, not {tolerance!r}")
    if isinstance(source, pd.DataFrame):
        return _breakdown_of_data(source, tolerance, temperatures, atoms, low_t_fit, tmax, gamma)
    if gamma is not None or low_t_fit is not None or tmax is not None:
        raise InputError("gamma, low_t_fit and tmax are for measured data; a model's lattice part is used directly")
    get = getattr(source, "modeset", None)
    if get is None:
        raise InputError(
            f"debye_breakdown needs a Spectrum, a model component, a mixture or a DataFrame of T and C, "
            f"not {type(source).__name__}"
        )
    ms = get()
    if atoms is not None and not math.isclose(float(atoms), ms.atoms):
        raise InputError(f"atoms: the source has {ms.atoms:g} atoms per formula unit, not {atoms!r}")
    return _breakdown_of_model(ms, tolerance, temperatures)


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
    theta0 = ms.theta_D0
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


def _breakdown_of_model(ms: ModeSet, tolerance: float, temperatures) -> DebyeBreakdown:
    if ms.modes <= 0:
        raise InputError("the source has no vibrational modes: there is no Debye temperature")
    theta0 = ms.theta_D0
    T = _grid(ms, temperatures)
    notes = ["lattice (vibrational) C_v of the model; electronic and two-level terms left out"]
    limit = _T3 * (ms.modes / 3.0) * R / theta0**3 if 0 < theta0 < math.inf else math.nan
    cv_grid = ms.evaluate(T)["cv_lattice"]
    theta = ms.effective_debye_temperature(T, cv_grid)
    _warn_missing_theta(ms, theta, "theta_D is NaN in the table", stacklevel=4)
    if not 0 < theta0 < math.inf:
        notes.append(
            "no ω² branch at low frequency (a lower-dimensional branch or a gap): C/T³ has no finite "
            "non-zero limit, so the T³ law does not hold"
        )
        table = pd.DataFrame({"T": T, "theta_D": theta, "C_T3_ratio": np.full(T.size, math.nan)})
        return DebyeBreakdown(
            tolerance, theta0, math.nan, (math.nan, math.nan), (float(T[0]), float(T[-1])), None, tuple(notes), table
        )
    # Both root searches evaluate the lattice C_v one temperature at a time, at the grid's
    # own points first: one memo, seeded with the grid, serves both.
    known = dict(zip(T.tolist(), cv_grid.tolist()))

    def cv_at(t: float) -> float:
        t = float(t)
        if t not in known:
            known[t] = float(ms.evaluate(np.array([t]))["cv_lattice"][0])
        return known[t]

    def ratio_excess(t: float) -> float:
        return abs(R * cv_at(t) / t**3 / limit - 1.0) - tolerance

    def theta_excess(t: float) -> float:
        value = ms.effective_debye_temperature(np.array([t]), np.array([cv_at(t)]))[0]
        return abs(value / theta0 - 1.0) - tolerance

    rat = R * cv_grid / T**3 / limit
    t3 = _crossing(ratio_excess, T, np.abs(rat - 1.0) - tolerance)
    hi = _crossing(theta_excess, T, np.abs(theta / theta0 - 1.0) - tolerance)
    theta_range = (float(T[0]), hi) if not math.isnan(hi) else (math.nan, math.nan)
    table = pd.DataFrame({"T": T, "theta_D": theta, "C_T3_ratio": rat})
    return DebyeBreakdown(
        tolerance, float(theta0), t3, theta_range, (float(T[0]), float(T[-1])), None, tuple(notes), table
    )


def _crossing(excess, T: np.ndarray, grid_excess: np.ndarray) -> float:
    """Where a leading run of `grid_excess` ≤ 0 ends (NaN counts as outside), refined with
    brentq on `excess`, the same quantity at any temperature (> 0 outside)."""
    k = _first_exit(grid_excess <= 0)
    if k == 0:
        return math.nan
    if k is None:
        return math.inf
    if not math.isfinite(grid_excess[k]):
        return float(T[k - 1])  # no θ_D past the end to refine toward
    return float(optimize.brentq(excess, T[k - 1], T[k], xtol=1e-12 * T[k], rtol=1e-12))


def _breakdown_of_data(frame, tolerance, temperatures, atoms, low_t_fit, tmax, gamma) -> DebyeBreakdown:
    if temperatures is not None:
        raise InputError("temperatures: measured data are examined at their own temperatures")
    atoms, _ = atoms_of_data(frame, atoms)
    notes = []
    if low_t_fit is None:
        if tmax is None:
            raise InputError(
                "measured data need γ and θ_D(0): pass low_t_fit (a low_temperature_fit result) or tmax, the upper "
                "end of a low-temperature fit window in K"
            )
        low_t_fit = low_temperature_fit(frame, tmax=tmax, atoms=atoms)
        notes.append(f"γ and θ_D(0) from a low-temperature fit C/T = γ + βT² up to {tmax:g} K")
    else:
        notes.append("γ and θ_D(0) from the low-temperature fit given")
    if not math.isclose(low_t_fit.atoms, atoms):
        raise InputError(f"the low-temperature fit is for {low_t_fit.atoms:g} atoms per formula unit, not {atoms:g}")
    g = low_t_fit.gamma if gamma is None else float(gamma)
    notes.append(
        f"electronic γT subtracted first (γ = {g:.6g} J/(mol K²){', given' if gamma is not None else ''}); "
        "measured C_p taken as C_v"
    )
    pts = _points(frame, None, None)
    order = np.argsort(pts.T, kind="stable")
    T, C = pts.T[order], pts.C[order]
    lattice = C - g * T
    theta0 = low_t_fit.theta_D0
    rat = lattice / T**3 / low_t_fit.beta
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
        excess_t3 = excess_t3 - 2.0 * s / T**3 / low_t_fit.beta
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
    if not (math.isfinite(a) and math.isfinite(b)) or T[k] == T[k - 1]:
        return float(T[k - 1])  # nothing to interpolate between (an infinite excess, a repeated T)
    return float(T[k - 1] + (T[k] - T[k - 1]) * (-a) / (b - a))
