"""The spectrum view: loaded densities of states (total and partials) and the model's,
as g(ω) or as the reduced density g/ω² with the Debye level."""

from __future__ import annotations

import math

import bqplot as bq
import ipywidgets as widgets
import numpy as np

from ..representations import plot_dos, reduced_dos
from ..units import from_kelvin, kelvin_per, to_kelvin
from .curves_view import PALETTE, compact, same_objects

__all__ = ["SpectrumView", "UNITS", "POINTS", "recovered_curves"]

#: Frequency units a user may pick (the backend's names).
UNITS = ("THz", "meV", "cm-1", "K")
#: Grid points of the model's density: two per pixel of the 400-px figure.  Each bin holds
#: its exact modes (see :func:`~modeheat.representations.plot_dos`), so a peak narrower
#: than a pixel keeps its area; more points would only slow every slider step.
POINTS = 800


class SpectrumView(widgets.VBox):
    """Densities of states against frequency (DOM class ``mh-spectrum`` on :attr:`figure`).

    The first mark is the model's total density; one mark per loaded spectrum follows
    (its total and partials as rows), then the band and the density an inversion
    recovered (:meth:`show_recovered`), then the Debye level of the reduced density.
    """

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.unit = widgets.Dropdown(options=list(UNITS), value="THz", description="unit",
                                     layout=widgets.Layout(width="150px"))
        self.reduced = widgets.ToggleButtons(options=[("g(ω)", False), ("g/ω²", True)], value=False,
                                             style=widgets.ToggleButtonsStyle(button_width="60px"))
        self.reduced.add_class("mh-reduced")
        self._sc = {"x": bq.LinearScale(min=0.0), "y": bq.LinearScale(min=0.0)}
        self.model_line = bq.Lines(x=[], y=[], scales=self._sc, colors=[PALETTE[0]], stroke_width=2.5)
        self.debye_level = bq.Lines(x=[], y=[], scales=self._sc, colors=["#999999"], line_style="dashed")
        self.recovered_band = bq.Lines(x=[], y=[], scales=self._sc, colors=["#7a3e9d"], fill="between",
                                       fill_colors=["#7a3e9d"], fill_opacities=[0.2], stroke_width=0.5,
                                       labels=["recovered DOS: band"])
        self.recovered_line = bq.Lines(x=[], y=[], scales=self._sc, colors=["#7a3e9d"], stroke_width=2,
                                       labels=["recovered DOS"])
        self._recovered = None
        self._view = ("THz", False)
        self.spectrum_lines: list[bq.Lines] = []
        self._spectra_key: tuple | None = None
        self.x_axis = bq.Axis(scale=self._sc["x"], label="frequency (THz)")
        self.y_axis = bq.Axis(scale=self._sc["y"], side="left", label="modes per THz")
        self.figure = bq.Figure(marks=[self.model_line, self.recovered_band, self.recovered_line, self.debye_level], axes=[self.x_axis, self.y_axis],
                                title="density of states", fig_margin=dict(top=30, bottom=45, left=60, right=15),
                                layout=widgets.Layout(width="400px", height="380px"))
        self.figure.add_class("mh-spectrum")
        self.children = [widgets.HBox([self.unit, self.reduced]), self.figure]

    def show(self, state) -> None:
        """Draw an :class:`~modeheat.widgets.explorer.ExplorerState`'s spectra and model."""
        unit, reduced = state.unit, state.reduced
        self._view = (unit, reduced)
        self.unit.value, self.reduced.value = unit, reduced
        self.x_axis.label = f"frequency ({unit})"
        self.y_axis.label = f"g/ω² (modes per {unit}³)" if reduced else f"modes per {unit}"
        key = (*state.spectra, unit, reduced)
        if not same_objects(key, self._spectra_key):  # loaded spectra change rarely: redraw only then
            self._spectra_key = key
            self._draw_spectra(state.spectra, unit, reduced)
        model = state.model
        vibrating = model is not None and model.modes > 0
        table = (reduced_dos if reduced else plot_dos)(model, unit=unit, points=POINTS) if vibrating else None
        with self.model_line.hold_sync():
            self.model_line.x = compact(table["frequency"]) if vibrating else []
            self.model_line.y = compact(table["reduced" if reduced else "total"]) if vibrating else []
        level = table.attrs["debye_level"] if vibrating and reduced else math.nan
        with self.debye_level.hold_sync():
            show = math.isfinite(level)
            self.debye_level.x = compact(table["frequency"].iloc[[0, -1]]) if show else []
            self.debye_level.y = compact([level, level]) if show else []
        self._draw_recovered()

    def show_recovered(self, result) -> None:
        """Overlay an inversion's recovered density and its band (None: remove them).

        Parameters
        ----------
        result : InversionResult or None — ``frequency`` [THz] at bin centres,
            ``density``, ``band_low``, ``band_high`` [modes per THz per formula unit];
            drawn in the view's unit, as g/ω² when the view shows the reduced density;
            a band of NaN (none computed) is not drawn
        """
        self._recovered = None if result is None else (
            result.frequency, result.density, result.band_low, result.band_high)
        self._draw_recovered()

    def _draw_recovered(self) -> None:
        unit, reduced = self._view
        have = self._recovered is not None
        if have:
            frequency, density, low, high = self._recovered
            x, y = recovered_curves(frequency, density, unit, reduced)
        band = have and bool(np.isfinite(low).any())
        with self.recovered_line.hold_sync():
            self.recovered_line.x = compact(x) if have else []
            self.recovered_line.y = compact(y) if have else []
        with self.recovered_band.hold_sync():
            self.recovered_band.x = compact(x) if band else []
            self.recovered_band.y = compact([recovered_curves(frequency, v, unit, reduced)[1]
                                             for v in (low, high)]) if band else []

    def _draw_spectra(self, spectra, unit: str, reduced: bool) -> None:
        lines = []
        for i, sp in enumerate(spectra):
            table = (reduced_dos if reduced else plot_dos)(sp, unit=unit)
            columns = ["reduced"] if reduced else ["total", *sp.partials]
            colour = PALETTE[(2 * i + 1) % len(PALETTE)]
            lines.append(bq.Lines(
                x=compact(table["frequency"]), y=compact(table[columns].to_numpy().T), scales=self._sc,
                colors=[colour] + [PALETTE[(2 * i + 2 + k) % len(PALETTE)] for k in range(len(columns) - 1)],
                labels=[f"{sp.name or 'DOS'}: {c}" for c in columns], stroke_width=1.2,
            ))
        self.spectrum_lines = lines
        self.figure.marks = [self.model_line, *lines, self.recovered_band, self.recovered_line, self.debye_level]


def recovered_curves(frequency, density, unit: str, reduced: bool) -> tuple[np.ndarray, np.ndarray]:
    """A density on a THz grid as drawn in another unit.

    Parameters
    ----------
    frequency : array — bin centres in THz (all > 0 when `reduced`)
    density : array — modes per THz per formula unit
    unit : str — the frequency unit drawn ("THz", "meV", "cm-1", "K")
    reduced : bool — draw g/ω² instead of g

    Returns
    -------
    (ndarray, ndarray)
        Frequencies in `unit`; the density in modes per `unit` (the same modes over the
        same span), or g/ω² in modes per `unit`³ taken at the bin centres.
    """
    x = from_kelvin(to_kelvin(frequency, "THz"), unit)
    y = np.asarray(density, dtype=float) * (kelvin_per(unit) / kelvin_per("THz"))
    return x, (y / x**2 if reduced else y)
