"""Plot-ready curves: what a view draws, computed in one call per mark.

Every function takes a *source* — a :class:`~modeheat.Spectrum`, a model component
or a :class:`~modeheat.Mixture` — (or, for :func:`temperature_curves`, a heat-capacity
data set from :func:`~modeheat.io.read_heat_capacity`) and returns a tidy
:class:`pandas.DataFrame` whose ``attrs["units"]`` names the unit of every column.
A view picks columns and assigns them to marks; it does no numerics itself.

- :func:`temperature_curves` — C, C/T³ (with the T³-law level), C/T against T²,
  θ_D(T), S, U, F against T, from a source or from measured data (σ propagated);
- :func:`contributions` — C and S of each component of a mixture (long format);
- :func:`plot_dos` — the density of states on a uniform plotting grid of at most
  2,000 points in any frequency unit, one column per component plus the total;
  Einstein modes are drawn as Gaussian peaks of a stated width, continua are binned
  from their exact cumulative mode counts, and every column carries its exact mode
  count on the grid (Σ density × step = modes);
- :func:`reduced_dos` — g/ω² on that grid with the Debye level 9·atoms/θ_D(0)³;
- :func:`data_residuals` — measured C minus the model at the data's temperatures.
"""

from __future__ import annotations

import math
import numbers

import numpy as np
import pandas as pd
from scipy.special import ndtr

from .engine import special
from .engine.modeset import ModeSet
from .errors import InputError
from .models import Band, Component, Einstein, Mixture, _linear_cumulative
from .spectrum import Spectrum
from .thermo import _modeset, _scale, _temperatures, atoms_of_data, effective_debye_temperature, thermo
from .units import R, check_unit, kelvin_per

__all__ = ["temperature_curves", "contributions", "plot_dos", "reduced_dos", "data_residuals", "T3_LAW", "MAX_POINTS"]

#: C_v/T³ of a Debye solid at T ≪ θ_D per mole of atoms is T3_LAW·R/θ_D³ (Debye's T³ law).
T3_LAW: float = 12.0 * math.pi**4 / 5.0

#: Most points a plotting grid may have.
MAX_POINTS: int = 2000

#: Default Gaussian width σ of an Einstein peak, as a fraction of the source's highest frequency.
_DEFAULT_WIDTH = 0.01

#: Headroom above the highest mode (and 5 σ above the highest peak), so the top edge shows.
_HEADROOM = 1.04


def _theta_zero(source, ms: ModeSet) -> float:
    """θ_D(0) in K of the vibrational part (NaN without modes)."""
    if ms.modes <= 0:
        return math.nan
    if isinstance(source, Spectrum):
        return source.moment_debye_temperature(-3)  # honours a continuation that is off
    return ms.theta_D0


def _amount(per: str) -> str:
    return "g" if per == "gram" else "mol"


# --- curves against temperature ----------------------------------------------------------------

def temperature_curves(
    source,
    temperatures=None,
    *,
    per: str = "formula",
    molar_mass: float | None = None,
    theta_D0: float | None = None,
) -> pd.DataFrame:
    """C, C/T³, C/T, T², θ_D(T) (and for a source S, U, F) against T, in one table.

    Parameters
    ----------
    source : Spectrum, component, Mixture, or DataFrame — a model or spectrum, or
        heat-capacity data (columns ``T`` [K], ``C`` [J/(mol K)], optional ``sigma``;
        ``attrs["atoms"]`` as :func:`~modeheat.io.read_heat_capacity` stores it)
    temperatures : array_like — T in K, each in 1e-12–1e12 K; for data, None (the
        data's own temperatures)
    per : {"formula", "atom", "gram"} — basis of a source's values (as :func:`~modeheat.thermo`)
    molar_mass : float, optional — g/mol of formula units, for ``per="gram"``
    theta_D0 : float, optional — for data only: θ_D(0) in K that sets the T³-law level
        (a source's own θ_D(0) is used for a source)

    Returns
    -------
    pandas.DataFrame
        ``T`` [K], ``C`` [J/(mol K)], ``C_over_T3`` [J/(mol K⁴)], ``C_over_T``
        [J/(mol K²)], ``T2`` [K²], ``theta_D`` [K]; for a source also ``S`` [J/(mol K)],
        ``U`` and ``F`` [J/mol] (zero point included; per gram: g for mol); for data
        with ``sigma`` also ``sigma``, ``C_over_T3_sigma``, ``C_over_T_sigma`` and
        ``theta_D_sigma`` (first-order propagation of σ of C).  ``attrs``: ``units``,
        ``quantity`` ("C_v" for a source, "measured" for data), ``atoms``, ``theta_D0``
        [K] and ``t3_level`` = (12π⁴/5)·atoms·R/θ_D(0)³ in the unit of ``C_over_T3``, the
        lattice T³-law level (NaN where it does not exist: no θ_D0 for data, or a
        lower-dimensional branch whose C falls slower than T³).

    Raises
    ------
    InputError
        Temperatures outside 1e-12–1e12 K (0 has no C/T³), data without ``T`` and
        ``C`` columns, temperatures given with data, `theta_D0` given with a source.

    Warns
    -----
    NoDebyeTemperatureWarning
        ``theta_D`` is NaN where no effective Debye temperature exists.
    """
    if isinstance(source, pd.DataFrame):
        return _data_curves(source, temperatures, theta_D0)
    if theta_D0 is not None:
        raise InputError("theta_D0 is for heat-capacity data; a source's own θ_D(0) sets its T³-law level")
    T = _temperatures(temperatures, zero=False)
    table = thermo(source, T, per=per, molar_mass=molar_mass)
    C = table["Cv"].to_numpy()
    ms = _modeset(source)
    theta0 = _theta_zero(source, ms)
    level = _t3_level(theta0, ms.atoms * _scale(ms, per, molar_mass))
    frame = pd.DataFrame(
        {
            "T": T,
            "C": C,
            "C_over_T3": C / T**3,
            "C_over_T": C / T,
            "T2": T * T,
            "theta_D": table["theta_D"].to_numpy(),
            "S": table["S"].to_numpy(),
            "U": table["U"].to_numpy(),
            "F": table["F"].to_numpy(),
        }
    )
    a = _amount(per)
    frame.attrs.update(table.attrs)
    frame.attrs.update(
        units=_curve_units(a) | {"S": f"J/({a} K)", "U": f"J/{a}", "F": f"J/{a}"},
        quantity="C_v",
        theta_D0=theta0,
        t3_level=level,
    )
    return frame


def _t3_level(theta0: float, atoms_times_basis: float) -> float:
    """(12π⁴/5)·atoms·R/θ_D(0)³; NaN for θ_D(0) = 0 or unknown (C falls slower than T³)."""
    if not theta0 > 0:
        return math.nan
    return T3_LAW * atoms_times_basis * R / theta0**3


def _curve_units(a: str) -> dict[str, str]:
    return {
        "T": "K",
        "C": f"J/({a} K)",
        "C_over_T3": f"J/({a} K^4)",
        "C_over_T": f"J/({a} K^2)",
        "T2": "K^2",
        "theta_D": "K",
    }


def _measured(data: pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
    """T [K] and C [J/(mol K)] of heat-capacity data, checked."""
    missing = [c for c in ("T", "C") if c not in data.columns]
    if missing:
        raise InputError(
            f"heat-capacity data need columns T and C (as read_heat_capacity returns); missing {', '.join(missing)}"
        )
    return _temperatures(data["T"].to_numpy(dtype=float), zero=False), data["C"].to_numpy(dtype=float)


def _data_curves(data: pd.DataFrame, temperatures, theta_D0) -> pd.DataFrame:
    if temperatures is not None:
        raise InputError("heat-capacity data carry their own temperatures: leave temperatures out")
    T, C = _measured(data)
    atoms, _ = atoms_of_data(data)
    theta = effective_debye_temperature(T, C, atoms=atoms)
    columns = {"T": T, "C": C, "C_over_T3": C / T**3, "C_over_T": C / T, "T2": T * T, "theta_D": theta}
    units = _curve_units("mol")
    if "sigma" in data.columns:
        sigma = data["sigma"].to_numpy(dtype=float)
        # θ = T·x with C = 3·atoms·R·D(x): dθ/dC = T/(3·atoms·R·D'(x)); NaN where θ is.
        slope = 3.0 * atoms * R * np.abs(special.debye_cv_derivative(np.where(np.isfinite(theta), theta / T, 1.0)))
        with np.errstate(divide="ignore"):
            theta_sigma = np.where(np.isfinite(theta) & (slope > 0), sigma * T / np.where(slope > 0, slope, 1.0), np.nan)
        columns |= {
            "sigma": sigma,
            "C_over_T3_sigma": sigma / T**3,
            "C_over_T_sigma": sigma / T,
            "theta_D_sigma": theta_sigma,
        }
        units |= {
            "sigma": units["C"],
            "C_over_T3_sigma": units["C_over_T3"],
            "C_over_T_sigma": units["C_over_T"],
            "theta_D_sigma": "K",
        }
    if theta_D0 is not None:
        if isinstance(theta_D0, bool) or not (isinstance(theta_D0, numbers.Real) and 0 < theta_D0 < math.inf):
            raise InputError(f"theta_D0 must be a positive Debye temperature in K, not {theta_D0!r}")
        theta_D0 = float(theta_D0)
    frame = pd.DataFrame(columns)
    frame.attrs.update(
        units=units,
        quantity="measured",
        atoms=atoms,
        theta_D0=math.nan if theta_D0 is None else theta_D0,
        t3_level=math.nan if theta_D0 is None else _t3_level(theta_D0, atoms),
        source=data.attrs.get("name"),
    )
    return frame


def contributions(source, temperatures, *, per: str = "formula", molar_mass: float | None = None) -> pd.DataFrame:
    """C_v and S of each component of a mixture, in long format.

    Parameters
    ----------
    source : Mixture or component
    temperatures : array_like — T in K: 0, or 1e-12–1e12 K
    per, molar_mass : the basis, as for :func:`~modeheat.thermo` (the mixture's atoms
        per formula unit serve every component)

    Returns
    -------
    pandas.DataFrame
        One row per (component, T): ``component`` (its name), ``T`` [K], ``C``
        [J/(mol K)] and ``S`` [J/(mol K)].  Summed over components at each T they are the
        mixture's C_v and S.  A :class:`~modeheat.Dilatation` term adds nothing to C_v
        and shows as zeros.
    """
    if isinstance(source, Component):
        source = Mixture((source,))
    if not isinstance(source, Mixture):
        raise InputError(f"contributions need a mixture or a model component, not {type(source).__name__}")
    T = _temperatures(temperatures)
    k = R * _scale(source.modeset(), per, molar_mass)
    rows = []
    for c in source.components:
        r = c.modeset().evaluate(T)
        rows.append(pd.DataFrame({"component": c.name, "T": T, "C": k * r["cv"], "S": k * r["s"]}))
    frame = pd.concat(rows, ignore_index=True)
    a = _amount(per)
    frame.attrs.update(units={"T": "K", "C": f"J/({a} K)", "S": f"J/({a} K)"}, per=per, source=source.name)
    return frame


# --- densities on a plotting grid ----------------------------------------------------------------

def _points(points) -> int:
    if isinstance(points, bool) or not isinstance(points, numbers.Integral) or not 2 <= points <= MAX_POINTS:
        raise InputError(f"points must be a whole number from 2 to {MAX_POINTS}, not {points!r}")
    return int(points)


def _lines(c: Component) -> tuple[list, list] | None:
    """(θ [K], modes) of the sharp lines of an Einstein-like component, None for a continuum."""
    if isinstance(c, Einstein) or (isinstance(c, Band) and c.theta_low == c.theta_high):
        thetas, weights, _, _ = c._parts()
        return thetas, weights
    return None


def _binned(source, unit: str, points, width) -> tuple[np.ndarray, dict[str, np.ndarray], dict]:
    """Bin edges in `unit` and the modes per bin of each column, with the attrs that describe them."""
    unit = check_unit(unit)
    n = _points(points)
    kpu = kelvin_per(unit)
    if width is not None:
        if isinstance(width, bool) or not (isinstance(width, numbers.Real) and 0 < width < math.inf):
            raise InputError(f"width must be a positive frequency in {unit}, not {width!r}")
    if isinstance(source, Spectrum):
        return _binned_spectrum(source, unit, n, kpu)
    if isinstance(source, Component):
        source = Mixture((source,))
    if not isinstance(source, Mixture):
        raise InputError(f"a density on a plotting grid needs a Spectrum, a component or a mixture, not {type(source).__name__}")
    vib = [c for c in source.components if c.modes > 0]
    if not vib:
        raise InputError("the mixture has no vibrational modes to draw")
    _check_names([c.name for c in vib])
    top = max(c.modeset().theta_max for c in vib)
    sigma = _DEFAULT_WIDTH * top if width is None else float(width) * kpu
    peak_top = max((max(_lines(c)[0]) + 5.0 * sigma for c in vib if _lines(c)), default=0.0)
    edges = np.linspace(0.0, _HEADROOM * max(top, peak_top), n + 1)
    counts = {}
    for c in vib:
        lines = _lines(c)
        if lines is None:
            counts[c.name] = np.diff(c.cumulative(edges))
            continue
        bins = np.zeros(n)
        for theta, modes in zip(*lines):
            cdf = ndtr((edges - theta) / sigma)
            # The tail below ω = 0 (and the < 3e-7 above the top) is folded back in,
            # so the peak carries exactly its modes on the grid.
            bins += modes * np.diff(cdf) / (cdf[-1] - cdf[0])
        counts[c.name] = bins
    attrs = {
        "broadening": {
            "shape": "gaussian",
            "width": sigma / kpu,
            "width_meaning": "standard deviation σ of each Einstein peak (FWHM = 2.3548·σ)",
            "applies_to": "Einstein modes (and bands of zero width); continua are binned exactly",
        },
        "atoms": source.modeset().atoms,
    }
    return edges / kpu, counts, attrs


def _check_names(names) -> None:
    clash = [name for name in names if name in ("frequency", "total", "reduced")]
    if clash:
        raise InputError(f"a component or partial named {clash[0]!r} would collide with a column; rename it")


def _binned_spectrum(sp: Spectrum, unit: str, n: int, kpu: float):
    # The density as a view draws it: linear between the stored samples, rebinned exactly.
    f = sp.frequency * kelvin_per(sp.unit) / kpu
    edges = np.linspace(0.0, _HEADROOM * float(f.max()), n + 1)
    columns = {"total": sp.density, **sp.partials}
    _check_names(sp.partials)
    r = kelvin_per(sp.unit) / kpu
    raw = {k: np.diff(_linear_cumulative(f, v / r, edges)) for k, v in columns.items()}
    # The engine integrates g/ω² piecewise linearly (and continues the bottom), the
    # trapezoid rule differs by a fraction of a per cent: scale to the exact mode count.
    factor = sp.modes / float(raw["total"].sum())
    counts = {k: v * factor for k, v in raw.items() if k != "total"}
    counts["total"] = raw["total"] * factor
    attrs = {
        "broadening": {
            "shape": "none",
            "meaning": "the stored density, linear between its samples, averaged over each grid bin",
        },
        "display_scale": factor,
        "atoms": sp.atoms,
    }
    return edges, counts, attrs


def plot_dos(source, *, unit: str = "THz", points: int = MAX_POINTS, width: float | None = None) -> pd.DataFrame:
    """The density of states on a uniform plotting grid, per component and in total.

    Continua (Debye, SineChain, Band and any component with a ``cumulative``) are
    binned from their exact cumulative mode counts; Einstein modes become Gaussian
    peaks of standard deviation `width`, integrated over each bin.  Each column holds
    exactly its modes on the grid: Σ density × step = modes.  A :class:`~modeheat.Spectrum`
    is drawn as stored (linear between samples) and scaled to its 3·atoms modes, with
    its partials as columns.  Never goes through ``Mixture.spectrum()``.

    Parameters
    ----------
    source : Spectrum, component or Mixture
    unit : str — "THz", "meV", "cm-1", "K" or "rad/s": the frequency unit of the grid
    points : int — grid points, 2 to 2,000; the grid runs from 0 to 4 % above the
        highest mode or 5 σ above the highest peak, whichever is higher
    width : float, optional — σ of the Einstein peaks in `unit` (default 1 % of the
        highest mode); ignored for a Spectrum

    Returns
    -------
    pandas.DataFrame
        ``frequency`` [unit] at bin centres, one column per vibrational component (or
        partial) and ``total``, each in modes per formula unit per `unit`.  ``attrs``:
        ``units``, ``step`` [unit], ``modes`` (per column), ``broadening`` (shape, width
        and meaning), ``atoms``.
    """
    edges, counts, attrs = _binned(source, unit, points, width)
    unit = check_unit(unit)
    step = float(edges[1] - edges[0])
    if "total" not in counts:
        counts["total"] = sum(counts.values())
    data = {"frequency": 0.5 * (edges[:-1] + edges[1:])}
    data |= {k: v / step for k, v in counts.items() if k != "total"}
    data["total"] = counts["total"] / step
    frame = pd.DataFrame(data)
    frame.attrs.update(
        attrs,
        units={"frequency": unit} | {k: f"modes/{unit}" for k in data if k != "frequency"},
        step=step,
        modes={k: float(v.sum()) for k, v in counts.items()},
        source=getattr(source, "name", None),
    )
    return frame


def reduced_dos(source, *, unit: str = "THz", points: int = MAX_POINTS, width: float | None = None) -> pd.DataFrame:
    """The reduced density g/ω² on a plotting grid, with the Debye level.

    Each bin's modes are divided by ∫ω² dω over the bin, so an ω² density is exactly
    flat (a Debye solid shows its level up to θ_D).  Grid and broadening as
    :func:`plot_dos`.

    Parameters
    ----------
    source : Spectrum, component or Mixture
    unit, points, width : as for :func:`plot_dos`

    Returns
    -------
    pandas.DataFrame
        ``frequency`` [unit] at bin centres and ``reduced`` [modes per formula unit per
        unit³].  ``attrs``: ``units``, ``step`` [unit], ``debye_level`` = 9·atoms/θ_D(0)³ in unit⁻³ (the
        value of a Debye solid with the source's own T → 0 Debye temperature; NaN when
        θ_D(0) is 0 or unknown), ``theta_D0`` [K], ``broadening``.
    """
    edges, counts, attrs = _binned(source, unit, points, width)
    unit = check_unit(unit)
    total = counts["total"] if "total" in counts else sum(counts.values())
    frame = pd.DataFrame(
        {"frequency": 0.5 * (edges[:-1] + edges[1:]), "reduced": total / (np.diff(edges**3) / 3.0)}
    )
    theta0 = _theta_zero(source, _modeset(source))
    level = 9.0 * attrs["atoms"] / (theta0 / kelvin_per(unit)) ** 3 if theta0 > 0 else math.nan
    frame.attrs.update(
        attrs,
        units={"frequency": unit, "reduced": f"modes/{unit}^3"},
        step=float(edges[1] - edges[0]),
        debye_level=level,
        theta_D0=theta0,
        source=getattr(source, "name", None),
    )
    return frame


# --- data against a model --------------------------------------------------------------------------

def data_residuals(source, data: pd.DataFrame) -> pd.DataFrame:
    """Measured heat capacity minus the model's, at the data's own temperatures.

    The model is compared as the fit compares it (:func:`~modeheat.fit`): its C_v,
    turned into C_p by its :class:`~modeheat.Dilatation` term when it has one.

    Parameters
    ----------
    source : Spectrum, component or Mixture — the model (per mole of formula units)
    data : DataFrame — heat-capacity data as :func:`~modeheat.io.read_heat_capacity`
        returns them (``T`` [K], ``C`` [J/(mol K)], optional ``sigma``)

    Returns
    -------
    pandas.DataFrame
        ``T`` [K], ``C``, ``model`` and ``residual`` = C − model [J/(mol K)], and
        ``sigma`` [J/(mol K)] when the data have it.  ``attrs``: ``units``, ``source``.
    """
    # the fit's own C_p of a model, so the residuals drawn are the ones it minimises;
    # imported here to keep scipy.optimize out of the plain curves
    from .fitting.model_fit import _as_mixture, _model_cp

    T, C = _measured(data)
    model = _model_cp(_as_mixture(source), T)
    frame = pd.DataFrame({"T": T, "C": C, "model": model, "residual": C - model})
    units = {"T": "K", "C": "J/(mol K)", "model": "J/(mol K)", "residual": "J/(mol K)"}
    if "sigma" in data.columns:
        frame["sigma"] = data["sigma"].to_numpy(dtype=float)
        units["sigma"] = "J/(mol K)"
    frame.attrs.update(units=units, source=data.attrs.get("name"))
    return frame
