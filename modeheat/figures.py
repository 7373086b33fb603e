"""Figures for papers: every representation as a matplotlib figure, and the multi-panel figure.

Every curve comes from :mod:`modeheat.representations`; this module only chooses
columns, axes, labels and styles.  Figures are built with the object-oriented API
(:class:`matplotlib.figure.Figure`, no pyplot state), so they draw the same under any
backend.  Widths follow journal columns (:data:`WIDTHS`, inches).

- :func:`curve_figure` — one representation (C, C/T³, C/T vs T², θ_D, S, U, F, the DOS,
  the reduced DOS) of one or several sources, with data and their error bars and the
  reference lines that apply (3·atoms·R, the T³ law, the Debye level of g/ω²);
- :func:`paper_figure` — the DOS and the reduced DOS, C/T³ and θ_D(T)
  against T, with data and a residual panel when data are given;
- :func:`inversion_figure` — a DOS recovered from heat capacity with its band, the fit
  and its normalised residuals (:func:`modeheat.invert_heat_capacity`);
- :func:`quasi_harmonic_figure` — a quasi-harmonic table (:func:`modeheat.quasi_harmonic`):
  V(T), α_V(T), C_p and C_v against T with measured data, and C_p − C_v, marking the
  temperature from which the volume is extrapolated;
- :func:`save_figure` — PDF and SVG (vector; TrueType fonts embedded in the PDF,
  ``pdf.fonttype`` 42; glyphs as paths in the SVG, ``svg.fonttype`` "path") and PNG at
  300 dpi, never overwriting a file unless asked, the caution in the metadata.
"""

from __future__ import annotations

import io
import math
import numbers
import os
from collections.abc import Mapping
from pathlib import Path

import matplotlib as mpl
import numpy as np
import pandas as pd
from matplotlib.figure import Figure

from .errors import InputError
from .io.tables import check_table_destination, write_text_file
from .representations import data_residuals, plot_dos, reduced_dos, temperature_curves
from .thermo import CAUTION
from .units import R, check_unit

__all__ = ["WIDTHS", "PALETTE", "KINDS", "FORMATS", "curve_figure", "paper_figure", "inversion_figure",
           "quasi_harmonic_figure", "save_figure"]

#: Figure widths in inches: one journal column and the full page width.
WIDTHS: dict[str, float] = {"single": 3.4, "double": 7.0}

#: A colour-blind-safe palette of our own choosing (distinct in hue and lightness); the
#: Explorer's views use it too.
PALETTE: list[str] = ["#1f3b73", "#d9822b", "#3a9e8f", "#b3478f", "#7a7a00", "#5fa8e0", "#8c5a2b", "#555555"]

#: Colour of reference lines (3·atoms·R, the T³ law, the Debye level, zero residual).
_REFERENCE = "#888888"

#: Kinds :func:`curve_figure` draws against temperature → (x column, y column, σ column).
_CURVES: dict[str, tuple[str, str, str | None]] = {
    "C": ("T", "C", "sigma"),
    "C/T3": ("T", "C_over_T3", "C_over_T3_sigma"),
    "C/T vs T2": ("T2", "C_over_T", "C_over_T_sigma"),
    "theta_D": ("T", "theta_D", "theta_D_sigma"),
    "S": ("T", "S", None),
    "U": ("T", "U", None),
    "F": ("T", "F", None),
}

#: Every kind :func:`curve_figure` draws.
KINDS: tuple[str, ...] = (*_CURVES, "reduced DOS", "DOS")

#: Formats :func:`save_figure` writes, and what a stem without a suffix gets.
FORMATS: tuple[str, ...] = ("pdf", "svg", "png")

#: Resolution of PNG files in dots per inch.
_DPI = 300

#: Sizes for print: 8 pt text at column width, thin lines.
_STYLE = {
    "font.family": "DejaVu Sans",
    "mathtext.fontset": "dejavusans",
    "font.size": 8,
    "axes.labelsize": 8,
    "axes.titlesize": 8,
    "xtick.labelsize": 7,
    "ytick.labelsize": 7,
    "legend.fontsize": 7,
    "legend.frameon": False,
    "lines.linewidth": 1.3,
    "lines.markersize": 3,
    "axes.linewidth": 0.6,
    "errorbar.capsize": 0,
}

#: Frequency unit → (axis label, the unit in mathtext).
_FREQUENCY = {
    "THz": (r"$\nu$ (THz)", "THz"),
    "meV": (r"$\hbar\omega$ (meV)", "meV"),
    "cm-1": (r"$\tilde{\nu}$ (cm$^{-1}$)", "cm$^{-1}$"),
    "K": (r"$\hbar\omega/k_\mathrm{B}$ (K)", "K"),
    "rad/s": (r"$\omega$ (rad s$^{-1}$)", "rad s$^{-1}$"),
}


def _width(width) -> float:
    """Figure width in inches from a name in :data:`WIDTHS` or a number of inches."""
    if isinstance(width, str) and width in WIDTHS:
        return WIDTHS[width]
    if isinstance(width, numbers.Real) and not isinstance(width, bool) and 1.0 <= width <= 20.0:
        return float(width)
    raise InputError(f"width must be {' or '.join(map(repr, WIDTHS))} or inches from 1 to 20, not {width!r}")


def _y_label(kind: str, per: str) -> str:
    """The y label of a temperature curve, its unit in mathtext."""
    a = "g" if per == "gram" else "mol"
    return {
        "C": rf"$C_V$ (J {a}$^{{-1}}$ K$^{{-1}}$)",
        "C/T3": rf"$C_V/T^3$ (J {a}$^{{-1}}$ K$^{{-4}}$)",
        "C/T vs T2": rf"$C_V/T$ (J {a}$^{{-1}}$ K$^{{-2}}$)",
        "theta_D": r"$\theta_\mathrm{D}$ (K)",
        "S": rf"$S$ (J {a}$^{{-1}}$ K$^{{-1}}$)",
        "U": rf"$U$ (J {a}$^{{-1}}$)",
        "F": rf"$F$ (J {a}$^{{-1}}$)",
    }[kind]


def _sources(sources) -> dict[str, object]:
    """label → source from one source or a mapping."""
    if isinstance(sources, Mapping):
        return {str(k): v for k, v in sources.items()}
    if sources is None:
        return {}
    return {getattr(sources, "name", None) or "model": sources}


def _data_sets(data) -> list[pd.DataFrame]:
    if data is None:
        return []
    sets = list(data) if isinstance(data, (list, tuple)) else [data]
    if not all(isinstance(d, pd.DataFrame) for d in sets):
        raise InputError("data must be a heat-capacity table (as read_heat_capacity returns) or a list of them")
    return sets


def _temperature_grid(temperatures, sets: list[pd.DataFrame]) -> np.ndarray:
    """The curves' T in K: as given, else the data's range with a margin, else 1–1000 K."""
    if temperatures is not None:
        return np.asarray(temperatures, dtype=float)
    if sets:
        lo = min(float(d["T"].min()) for d in sets if "T" in d.columns and len(d)) / 1.5
        hi = max(float(d["T"].max()) for d in sets if "T" in d.columns and len(d)) * 1.5
        return np.geomspace(lo, hi, 400)
    return np.geomspace(1.0, 1000.0, 400)


def _colour(i: int) -> str:
    return PALETTE[i % len(PALETTE)]


def _dashes(i: int) -> str:
    """Line style of the i-th source, so curves that coincide stay visible (dash-dot is the T³ law's)."""
    return ("-", "--", ":")[i % 3]


def _draw_curves(ax, kind: str, sources: dict, sets: list, T: np.ndarray, per: str, log_t: bool) -> None:
    """Sources as lines, data as points with error bars, and the reference lines of `kind`."""
    xcol, ycol, scol = _CURVES[kind]
    if sets and per != "formula":
        raise InputError(f"heat-capacity data are per mole of formula units: draw them with per='formula', not {per!r}")
    law_label = "$T^3$ law"
    for i, (label, source) in enumerate(sources.items()):
        curves = temperature_curves(source, T, per=per)
        x = curves[xcol].to_numpy()
        ax.plot(x, curves[ycol].to_numpy(), color=_colour(i), linestyle=_dashes(i), label=label, zorder=3)
        level = curves.attrs.get("t3_level", math.nan)
        law = {"C": curves["T"] ** 3 * level, "C/T3": np.full(len(T), level), "C/T vs T2": curves["T2"] * level}.get(kind)
        if law is not None and math.isfinite(level):
            law = np.asarray(law, dtype=float)
            if kind != "C/T3":
                # a rising law holds at low T only: drawn up to where it passes the curve's highest value
                law = np.where(law <= float(np.nanmax(curves[ycol].to_numpy())), law, np.nan)
            ax.plot(x, law, color=_colour(i), linestyle="-.", linewidth=0.8, label=law_label, zorder=2)
            law_label = None
        atoms = curves.attrs.get("atoms", math.nan)
        if kind == "C" and per != "gram" and atoms > 0:
            # 3·atoms·R, the classical limit of C (common practice); per atom, 3R
            level_dp = 3.0 * R * (atoms if per == "formula" else 1.0)
            ax.axhline(level_dp, color=_REFERENCE, linestyle=":", linewidth=0.8, zorder=1)
            ax.annotate(rf"${3 * atoms if per == 'formula' else 3:g}R$", (0.02, level_dp), xycoords=("axes fraction", "data"),
                        textcoords="offset points", xytext=(0, 2), color=_REFERENCE, fontsize=7)
    for j, d in enumerate(sets):
        curves = temperature_curves(d)
        if ycol not in curves.columns:
            continue
        sigma = curves[scol].to_numpy() if scol is not None and scol in curves.columns else None
        ax.errorbar(curves[xcol].to_numpy(), curves[ycol].to_numpy(), yerr=sigma, fmt="o",
                    color=_colour(len(sources) + j), markerfacecolor="white", markeredgewidth=0.8,
                    elinewidth=0.7, label=d.attrs.get("name") or f"data {j + 1}", zorder=4)
    ax.set_xscale("log" if log_t and xcol == "T" else "linear")
    ax.set_xlabel(r"$T^2$ (K$^2$)" if xcol == "T2" else r"$T$ (K)")
    ax.set_ylabel(_y_label(kind, per))


def _draw_dos(ax, sources: dict, unit: str, reduced: bool) -> None:
    """Each source's total DOS (or g/ω² with its Debye level) against frequency."""
    label, u = _FREQUENCY[unit]
    for i, (name, source) in enumerate(sources.items()):
        if reduced:
            table = reduced_dos(source, unit=unit)
            ax.plot(table["frequency"], table["reduced"], color=_colour(i), linestyle=_dashes(i), label=name)
            level = table.attrs["debye_level"]
            if math.isfinite(level):
                ax.axhline(level, color=_colour(i), linestyle="-.", linewidth=0.8)
        else:
            table = plot_dos(source, unit=unit)
            ax.plot(table["frequency"], table["total"], color=_colour(i), linestyle=_dashes(i), label=name)
    ax.set_xlabel(label)
    ax.set_ylabel(rf"$g(\nu)/\nu^2$ ({u}$^{{-3}}$)" if reduced else rf"$g(\nu)$ ({u}$^{{-1}}$)")
    ax.set_xlim(left=0.0)
    ax.set_ylim(bottom=0.0)


def curve_figure(
    sources,
    kind: str = "C",
    *,
    data=None,
    width="single",
    temperatures=None,
    per: str = "formula",
    log_t: bool = True,
    unit: str = "THz",
) -> Figure:
    """One representation of one or several sources (and data) as a figure.

    Parameters
    ----------
    sources : Spectrum, component, Mixture, or dict of label → source — what to draw;
        an empty dict draws data alone
    kind : str — one of :data:`KINDS`: "C", "C/T3", "C/T vs T2", "theta_D", "S", "U", "F"
        (against T) or "reduced DOS", "DOS" (against frequency)
    data : DataFrame or list of DataFrame, optional — heat-capacity data as
        :func:`~modeheat.io.read_heat_capacity` returns them (T in K, C and σ in
        J/(mol K)), drawn with error bars where the representation has them
    width : "single", "double" or float — 3.4 in, 7 in, or a width in inches (1–20)
    temperatures : array_like, optional — T in K of the curves (default: the data's
        range with a margin, else 1–1000 K)
    per : {"formula", "atom", "gram"} — basis of the values (data need "formula")
    log_t : bool — logarithmic temperature axis (not for T²)
    unit : str — frequency unit of the DOS kinds: "THz", "meV", "cm-1", "K", "rad/s"

    Returns
    -------
    matplotlib.figure.Figure
        Width as asked, height 3/4 of it.

    Raises
    ------
    InputError
        An unknown kind or width, nothing to draw, data with a DOS kind or with
        ``per`` other than "formula", or what the representations refuse.
    """
    if kind not in KINDS:
        raise InputError(f"kind must be one of {', '.join(map(repr, KINDS))}, not {kind!r}")
    named = _sources(sources)
    sets = _data_sets(data)
    if not named and not sets:
        raise InputError("nothing to draw: give a source or heat-capacity data")
    w = _width(width)
    with mpl.rc_context(_STYLE):
        fig = Figure(figsize=(w, 0.75 * w), layout="constrained")
        ax = fig.add_subplot()
        if kind in _CURVES:
            _draw_curves(ax, kind, named, sets, _temperature_grid(temperatures, sets), per, log_t)
        else:
            if sets:
                raise InputError(f"heat-capacity data have no {kind}: draw them as C, C/T3, C/T vs T2 or theta_D")
            _draw_dos(ax, named, check_unit(unit), kind == "reduced DOS")
        if len(named) + len(sets) > 1 or ax.get_legend_handles_labels()[1][len(named):]:
            ax.legend(loc="best")
    return fig


def paper_figure(
    spectrum=None,
    model=None,
    data=None,
    *,
    width="double",
    temperatures=None,
    unit: str = "THz",
) -> Figure:
    """The multi-panel figure: DOS, reduced DOS, C/T³ and θ_D(T) against T, with
    data and a residual panel when data are given.

    Parameters
    ----------
    spectrum : Spectrum, optional — a density of states (drawn as "DOS")
    model : component or Mixture, optional — a model (drawn as "model"); at least one of
        `spectrum` and `model`
    data : DataFrame or list of DataFrame, optional — heat-capacity data (T in K, C and
        σ in J/(mol K)); their residuals are taken against `model`, else `spectrum`,
        compared as C_p as the fit compares them (J/(mol K))
    width : "single", "double" or float — panels side by side at double width (7 in),
        stacked at single width (3.4 in) or below 5 in
    temperatures : array_like, optional — T in K of the curves (default: the data's
        range with a margin, else 1–1000 K)
    unit : str — frequency unit of the DOS panel: "THz", "meV", "cm-1", "K", "rad/s"

    Returns
    -------
    matplotlib.figure.Figure
        Panels labelled (a), (b), … in reading order.

    Raises
    ------
    InputError
        Neither spectrum nor model, an unknown width or unit, or what the
        representations refuse.
    """
    if spectrum is None and model is None:
        raise InputError("the paper figure needs a spectrum, a model or both")
    named = {k: v for k, v in (("DOS", spectrum), ("model", model)) if v is not None}
    sets = _data_sets(data)
    unit = check_unit(unit)
    T = _temperature_grid(temperatures, sets)
    w = _width(width)
    with mpl.rc_context(_STYLE):
        if w >= 5.0:
            # side by side: DOS over reduced DOS | C/T³ (over residuals) | θ_D(T)
            fig = Figure(figsize=(w, 0.45 * w), layout="constrained")
            grid = fig.add_gridspec(2, 3, height_ratios=[3, 2])
            cells = [grid[0, 0], grid[1, 0], grid[0, 1] if sets else grid[:, 1], grid[:, 2]]
            residual_cell = grid[1, 1] if sets else None
        else:
            # stacked: DOS, reduced DOS, C/T³, (residuals,) θ_D(T)
            ratios = [3, 2, 3, 1.5, 3] if sets else [3, 2, 3, 3]
            fig = Figure(figsize=(w, 0.6 * sum(ratios)), layout="constrained")
            grid = fig.add_gridspec(len(ratios), 1, height_ratios=ratios)
            cells = [grid[0], grid[1], grid[2], grid[len(ratios) - 1]]
            residual_cell = grid[3] if sets else None
        dos_ax, reduced_ax, ct3_ax, theta_ax = (fig.add_subplot(c) for c in cells)
        _draw_dos(dos_ax, named, unit, reduced=False)
        _draw_dos(reduced_ax, named, unit, reduced=True)
        _draw_curves(ct3_ax, "C/T3", named, sets, T, "formula", True)
        _draw_curves(theta_ax, "theta_D", named, sets, T, "formula", True)
        theta_ax.legend(*ct3_ax.get_legend_handles_labels(), loc="lower left")  # below θ_D(0), the emptiest corner
        axes = [dos_ax, reduced_ax, ct3_ax]
        if residual_cell is not None:
            res_ax = fig.add_subplot(residual_cell, sharex=ct3_ax)
            reference = model if model is not None else spectrum
            for j, d in enumerate(sets):
                r = data_residuals(reference, d)
                sigma = r["sigma"].to_numpy() if "sigma" in r.columns else None
                res_ax.errorbar(r["T"], r["residual"], yerr=sigma, fmt="o", color=_colour(len(named) + j),
                                markerfacecolor="white", markeredgewidth=0.8, elinewidth=0.7)
            res_ax.axhline(0.0, color=_REFERENCE, linewidth=0.8)
            res_ax.set_xlabel(r"$T$ (K)")
            res_ax.set_ylabel(r"$C - C_\mathrm{model}$" "\n" r"(J mol$^{-1}$ K$^{-1}$)")
            ct3_ax.tick_params(labelbottom=False)
            ct3_ax.set_xlabel("")
            axes.append(res_ax)
        axes.append(theta_ax)
        for letter, ax in zip("abcdefg", axes):
            ax.set_title(f"({letter})", loc="left", fontweight="bold")
    return fig



def inversion_figure(result, *, width="double") -> Figure:
    """A DOS recovered from heat capacity: the DOS with its band, the fit and residuals.

    Parameters
    ----------
    result : InversionResult — from :func:`modeheat.invert_heat_capacity`
    width : "single", "double" or float — panels side by side at double width (7 in),
        stacked at single width (3.4 in) or below 5 in

    Returns
    -------
    matplotlib.figure.Figure
        (a) the DOS in modes per THz against THz with the band (when made), (b) C
        against T with the fit, (c) the residuals in units of σ.

    Raises
    ------
    InputError
        `result` is not an inversion result, or an unknown width.
    """
    for name in ("edges", "density", "band_low", "band_high", "fitted"):
        if not hasattr(result, name):
            raise InputError(f"inversion_figure needs an InversionResult, not {type(result).__name__}")
    w = _width(width)
    fitted = result.fitted
    with mpl.rc_context(_STYLE):
        if w >= 5.0:
            fig = Figure(figsize=(w, 0.4 * w), layout="constrained")
            grid = fig.add_gridspec(2, 2, height_ratios=[3, 1.5])
            cells = [grid[:, 0], grid[0, 1], grid[1, 1]]
        else:
            fig = Figure(figsize=(w, 0.6 * 7.5), layout="constrained")
            grid = fig.add_gridspec(3, 1, height_ratios=[3, 3, 1.5])
            cells = [grid[0], grid[1], grid[2]]
        dos_ax, c_ax, res_ax = (fig.add_subplot(c) for c in cells)
        edges = np.asarray(result.edges)
        if np.isfinite(result.band_low).all():
            dos_ax.fill_between(edges, np.append(result.band_low, result.band_low[-1]),
                                np.append(result.band_high, result.band_high[-1]), step="post",
                                color=PALETTE[0], alpha=0.25, linewidth=0, label="68 % band")
        dos_ax.stairs(result.density, edges, color=PALETTE[0], label="recovered")
        dos_ax.set_xscale("log")
        dos_ax.set_xlabel(r"$\nu$ (THz)")
        dos_ax.set_ylabel(r"$g(\nu)$ (THz$^{-1}$)")
        dos_ax.legend()
        c_ax.plot(fitted["T"], fitted["C"], "o", color=PALETTE[7], markersize=2, label="data")
        c_ax.plot(fitted["T"], fitted["C_model"], color=PALETTE[1], label="fit")
        c_ax.set_xscale("log")
        c_ax.set_ylabel(r"$C$ (J mol$^{-1}$ K$^{-1}$)")
        c_ax.legend()
        res_ax.plot(fitted["T"], fitted["normalised"], "o", color=PALETTE[1], markersize=2)
        res_ax.axhline(0.0, color=PALETTE[7], linewidth=0.6)
        res_ax.set_xscale("log")
        res_ax.set_xlabel(r"$T$ (K)")
        res_ax.set_ylabel(r"residual/$\sigma$")
        for k, ax in enumerate((dos_ax, c_ax, res_ax)):
            ax.set_title(f"({chr(97 + k)})", loc="left")
    return fig


#: Volume unit of a quasi-harmonic table → its axis label (mathtext).
_VOLUME_LABELS = {"A3": r"$V$ (Å$^3$ per formula unit)", "cm3/mol": r"$V$ (cm$^3$ mol$^{-1}$)",
                  "m3/mol": r"$V$ (m$^3$ mol$^{-1}$)"}
#: The columns :func:`quasi_harmonic_figure` draws.
_QH_COLUMNS = ("T", "V", "alpha_V", "Cv", "Cp")


def quasi_harmonic_figure(table, data=None, *, width="double") -> Figure:
    """A quasi-harmonic table as a figure: V(T), α_V(T), C_p and C_v, C_p − C_v.

    Parameters
    ----------
    table : DataFrame — from :func:`modeheat.quasi_harmonic` (``T`` in K, ``V`` in its
        ``attrs["volume_unit"]``, ``alpha_V`` in 1/K, ``Cv`` and ``Cp`` in J/(mol K) per
        mole of formula units); its ``attrs["extrapolated_from"]`` (K), when set, is marked
        on every panel by a dashed vertical line, the shaded part beyond it being where
        the equation of state is extrapolated
    data : DataFrame or list of DataFrame, optional — measured C_p as
        :func:`~modeheat.io.read_heat_capacity` returns it (T in K, C and σ in J/(mol K)
        per mole of formula units), drawn with error bars on the C_p panel
    width : "single", "double" or float — panels two by two at double width (7 in),
        stacked at single width (3.4 in) or below 5 in

    Returns
    -------
    matplotlib.figure.Figure
        (a) V against T, (b) α_V, (c) C_p and C_v with the data, (d) C_p − C_v, all
        against T in K on a linear axis.

    Raises
    ------
    InputError
        Not a quasi-harmonic table (a column missing), an empty table, data that are not
        heat-capacity tables, or an unknown width.
    """
    if not isinstance(table, pd.DataFrame) or not set(_QH_COLUMNS) <= set(table.columns):
        raise InputError("quasi_harmonic_figure needs a table from modeheat.quasi_harmonic "
                         f"(columns {', '.join(_QH_COLUMNS)})")
    if len(table) == 0:
        raise InputError("the quasi-harmonic table has no rows: nothing to draw")
    sets = _data_sets(data)
    if not all({"T", "C"} <= set(d.columns) for d in sets):
        raise InputError("data must be heat-capacity tables with columns T and C (as read_heat_capacity returns)")
    w = _width(width)
    T = table["T"].to_numpy(dtype=float)
    start = table.attrs.get("extrapolated_from")
    with mpl.rc_context(_STYLE):
        if w >= 5.0:
            fig = Figure(figsize=(w, 0.62 * w), layout="constrained")
            grid = fig.add_gridspec(2, 2)
            cells = [grid[0, 0], grid[0, 1], grid[1, 0], grid[1, 1]]
        else:
            fig = Figure(figsize=(w, 2.0 * 4), layout="constrained")
            grid = fig.add_gridspec(4, 1)
            cells = [grid[k] for k in range(4)]
        v_ax, a_ax, c_ax, d_ax = (fig.add_subplot(c) for c in cells)
        v_ax.plot(T, table["V"].to_numpy(dtype=float), color=_colour(0), label="V", gid="V")
        v_ax.set_ylabel(_VOLUME_LABELS.get(table.attrs.get("volume_unit"), r"$V$"))
        a_ax.plot(T, table["alpha_V"].to_numpy(dtype=float), color=_colour(0), label=r"$\alpha_V$", gid="alpha_V")
        a_ax.set_ylabel(r"$\alpha_V$ (K$^{-1}$)")
        a_ax.ticklabel_format(axis="y", style="sci", scilimits=(-3, 4), useMathText=True)  # 1×10⁻⁴, not 0.000100
        c_ax.plot(T, table["Cp"].to_numpy(dtype=float), color=_colour(0), label=r"$C_p$", gid="Cp", zorder=3)
        c_ax.plot(T, table["Cv"].to_numpy(dtype=float), color=_colour(1), linestyle="--", label=r"$C_V$", gid="Cv",
                  zorder=3)
        for j, d in enumerate(sets):
            # C is drawn as measured: the data's own columns (no representation to derive)
            sigma = d["sigma"].to_numpy(dtype=float) if "sigma" in d.columns else None
            c_ax.errorbar(d["T"].to_numpy(dtype=float), d["C"].to_numpy(dtype=float), yerr=sigma, fmt="o",
                          color=_colour(2 + j),
                          markerfacecolor="white", markeredgewidth=0.8, elinewidth=0.7,
                          label=d.attrs.get("name") or f"data {j + 1}", zorder=4)
        c_ax.set_ylabel(r"$C$ (J mol$^{-1}$ K$^{-1}$)")
        c_ax.legend(loc="lower right")
        d_ax.plot(T, (table["Cp"] - table["Cv"]).to_numpy(dtype=float), color=_colour(0), label=r"$C_p - C_V$",
                  gid="Cp-Cv")
        d_ax.set_ylabel(r"$C_p - C_V$ (J mol$^{-1}$ K$^{-1}$)")
        axes = (v_ax, a_ax, c_ax, d_ax)
        for k, ax in enumerate(axes):
            ax.set_xlabel(r"$T$ (K)")
            ax.set_title(f"({chr(97 + k)})", loc="left", fontweight="bold")
            if start is not None and math.isfinite(start):
                ax.axvspan(start, max(float(T.max()), start), color=_REFERENCE, alpha=0.12, linewidth=0)
                ax.axvline(start, color=_REFERENCE, linestyle="--", linewidth=0.8, gid="extrapolated_from")
        if start is not None and math.isfinite(start):
            v_ax.annotate("V extrapolated", (start, 0.02), xycoords=("data", "axes fraction"), textcoords="offset points",
                          xytext=(3, 0), color=_REFERENCE, fontsize=7)
    return fig


def save_figure(fig: Figure, path: str | os.PathLike, *, formats=None, overwrite: bool = False) -> list[Path]:
    """Write a figure as PDF, SVG and/or PNG; never replaces a file unless asked.

    PDF embeds TrueType fonts (``pdf.fonttype`` 42, no Type 3 fonts); SVG draws glyphs
    as paths (``svg.fonttype`` "path"), so it shows the same without the fonts; PNG is at
    300 dpi.  The size in inches is the figure's.  The caution (:data:`modeheat.CAUTION`)
    goes into the PDF's Subject and the SVG's and PNG's Description.  Every destination is
    checked before anything is written.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
    path : str or os.PathLike — a file name ending in .pdf, .svg or .png (that format),
        or a stem without a suffix (each of `formats`)
    formats : iterable of str, optional — for a stem: some of "pdf", "svg", "png"
        (default all three)
    overwrite : bool — replace existing files (by default an existing file is an error)

    Returns
    -------
    list of pathlib.Path
        The files written, in the order of `formats`.

    Raises
    ------
    InputError
        An unknown suffix or format, a suffix together with `formats`, a file that
        exists (without `overwrite`), a destination that is not a regular file or a
        folder that is missing.
    """
    if not isinstance(fig, Figure):
        raise InputError(f"save_figure needs a matplotlib Figure, not {type(fig).__name__}")
    path = Path(path)
    suffix = path.suffix.lower().lstrip(".")
    if suffix:
        if formats is not None:
            raise InputError("give either a file name with a suffix or formats with a stem, not both", path=path)
        if suffix not in FORMATS:
            raise InputError(f"unknown figure format {path.suffix!r}: use .pdf, .svg or .png, or a stem without a suffix",
                             path=path)
        targets = [(suffix, path)]
    else:
        chosen = list(FORMATS if formats is None else ([formats] if isinstance(formats, str) else formats))
        bad = [f for f in chosen if f not in FORMATS]
        if bad or not chosen:
            raise InputError(f"formats must be some of {', '.join(FORMATS)}, not {chosen!r}", path=path)
        targets = [(f, path.with_name(f"{path.name}.{f}")) for f in dict.fromkeys(chosen)]
    for _, target in targets:
        check_table_destination(target)
        if not overwrite and target.exists():
            raise InputError("the file exists; choose another name or allow overwriting", path=target)
    written = []
    for fmt, target in targets:
        written.append(write_text_file(target, _render(fig, fmt), overwrite=overwrite))
    return written


def _render(fig: Figure, fmt: str) -> bytes:
    """The figure's file content in one format."""
    metadata = {
        "pdf": {"Subject": CAUTION, "Creator": "modeheat", "CreationDate": None},
        "svg": {"Description": CAUTION, "Creator": "modeheat", "Date": None},
        "png": {"Description": CAUTION, "Software": "modeheat"},
    }[fmt]
    # fixed hash salt and no dates: the same figure gives the same bytes
    rc = {"pdf.fonttype": 42, "svg.fonttype": "path", "svg.hashsalt": "modeheat"}
    buffer = io.BytesIO()
    with mpl.rc_context(rc):
        fig.savefig(buffer, format=fmt, dpi=_DPI, metadata=metadata)
    return buffer.getvalue()
