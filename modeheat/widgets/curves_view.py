"""The heat-capacity view: the model, its components and the data in one representation,
reference lines, a residual panel and the temperature window a fit uses."""

from __future__ import annotations

import math

import bqplot as bq
import ipywidgets as widgets
import numpy as np

from ..figures import PALETTE  # one palette for views and figures
from ..models import Dilatation, Mixture
from ..representations import contributions, temperature_curves
from ..units import R

__all__ = ["HeatCapacityView", "REPRESENTATIONS", "COMPONENT_VIEWS", "PALETTE", "compact", "model_cp", "same_objects"]

#: How the components' curves are drawn beside the model (for C and S, which add up).
COMPONENT_VIEWS = ("off", "overlaid", "stacked")


#: Representation label → (x column, y column, y label); labels are the selector's options.
REPRESENTATIONS: dict[str, tuple[str, str, str]] = {
    "C": ("T", "C", "C (J/mol K)"),
    "C/T³": ("T", "C_over_T3", "C/T³ (J/mol K⁴)"),
    "C/T vs T²": ("T2", "C_over_T", "C/T (J/mol K²)"),
    "θ_D(T)": ("T", "theta_D", "θ_D (K)"),
    "S": ("T", "S", "S (J/mol K)"),
}
_SIGMA = {"C": "sigma", "C_over_T3": "C_over_T3_sigma", "C_over_T": "C_over_T_sigma", "theta_D": "theta_D_sigma"}


def compact(values, log: bool = False) -> np.ndarray:
    """An array as sent to the browser: float32 (the screen cannot tell), and on a log
    axis non-positive values as gaps, since they have no place there."""
    out = np.asarray(values, dtype=np.float32)
    return np.where(out > 0, out, np.float32(np.nan)) if log else out


def same_objects(a: tuple, b: tuple | None) -> bool:
    """The very same objects in the same order, plain values (str, float, bool) equal: a
    cache key that holds its objects, so no freed object's id is reused while it lives."""
    plain = (str, float, bool)
    return b is not None and len(a) == len(b) and all(
        x is y or (type(x) in plain and type(x) is type(y) and x == y) for x, y in zip(a, b)
    )


def _bars(x: np.ndarray, y: np.ndarray, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Error bars as one polyline: a vertical segment per point, NaN between segments."""
    gap = np.full_like(x, np.nan)
    return np.column_stack([x, x, gap]).ravel(), np.column_stack([y - s, y + s, gap]).ravel()


class HeatCapacityView(widgets.VBox):
    """C, C/T³, C/T vs T², θ_D(T) or S against temperature: the model (and its
    components), each loaded spectrum as loaded, the data with error bars, residuals.

    The first :class:`bqplot.Lines` mark of :attr:`figure` (DOM class ``mh-heat-capacity``)
    is the model's total; :attr:`representation` (class ``mh-representation``) picks the
    curve; :attr:`tmin` and :attr:`tmax` are the fit's temperature window in K.
    """

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.representation = widgets.Dropdown(options=list(REPRESENTATIONS), value="C", description="show",
                                               layout=widgets.Layout(width="190px"))
        self.representation.add_class("mh-representation")
        self.log_t = widgets.Checkbox(value=True, description="log T", indent=False,
                                      layout=widgets.Layout(width="auto"))
        self.log_y = widgets.Checkbox(value=False, description="log C or S", indent=False,
                                      layout=widgets.Layout(width="auto"))
        self.components = widgets.Dropdown(options=list(COMPONENT_VIEWS), value="off", description="components",
                                           style={"description_width": "initial"},
                                           layout=widgets.Layout(width="auto"))
        self.components.add_class("mh-components")
        self.fit_axes = widgets.Button(description="fit axes", tooltip="frame every curve again",
                                       layout=widgets.Layout(width="90px"))
        self.fit_axes.add_class("mh-fit-axes")
        self.fit_axes.on_click(lambda _: self._frame())
        self._frame_key: tuple | None = None
        self.tmin = widgets.BoundedFloatText(description="fit from (K)", min=1e-6, max=1e9, value=1.0,
                                             layout=widgets.Layout(width="180px"))
        self.tmax = widgets.BoundedFloatText(description="to (K)", min=1e-6, max=1e9, value=1000.0,
                                             layout=widgets.Layout(width="180px"))
        self._x = {False: bq.LinearScale(), True: bq.LogScale()}
        self._y = {False: bq.LinearScale(), True: bq.LogScale()}
        sc = {"x": self._x[True], "y": self._y[False]}
        self.model_line = bq.Lines(x=[], y=[], scales=sc, colors=[PALETTE[0]], stroke_width=2.5, labels=["model"])
        self.component_lines = bq.Lines(x=[], y=[], scales=sc, colors=PALETTE[1:], stroke_width=1.2,
                                        line_style="dashed", display_legend=False)
        self.spectrum_lines = bq.Lines(x=[], y=[], scales=sc, colors=PALETTE[5:], stroke_width=1.5,
                                       line_style="dotted")
        self._spectrum_curves: tuple = (None, [])
        self._data_curves: tuple = (None, [])
        self._drawn_data: tuple | None = None
        self.dulong_petit = bq.Lines(x=[], y=[], scales=sc, colors=["#999999"], line_style="dotted")
        self.t3_law = bq.Lines(x=[], y=[], scales=sc, colors=["#999999"], line_style="dash_dotted")
        self.data_points: list[bq.Scatter] = []
        self.error_bars: list[bq.Lines] = []
        self.x_axis = bq.Axis(scale=sc["x"], label="T (K)", tick_format=".3~g")
        self.y_axis = bq.Axis(scale=sc["y"], side="left", label="C (J/mol K)")
        self.figure = bq.Figure(marks=self._marks(), axes=[self.x_axis, self.y_axis], title="heat capacity",
                                fig_margin=dict(top=30, bottom=45, left=70, right=15),
                                layout=widgets.Layout(width="560px", height="380px"))
        self.figure.add_class("mh-heat-capacity")
        rs = {"x": bq.LogScale(), "y": bq.LinearScale()}
        self.residual_points = bq.Scatter(x=[], y=[], scales=rs, colors=[PALETTE[0]], default_size=12)
        self.residual_zero = bq.Lines(x=[], y=[], scales=rs, colors=["#999999"])
        self.residual_figure = bq.Figure(
            marks=[self.residual_zero, self.residual_points],
            axes=[bq.Axis(scale=rs["x"], label="T (K)", tick_format=".3~g"),
                  bq.Axis(scale=rs["y"], side="left", label="data − model")],
            fig_margin=dict(top=10, bottom=40, left=70, right=15),
            layout=widgets.Layout(width="560px", height="170px", display="none"),
        )
        self.residual_figure.add_class("mh-residuals")
        self.children = [
            widgets.HBox([self.representation, self.log_t, self.log_y, self.fit_axes, self.components]),
            self.figure,
            self.residual_figure,
            widgets.HBox([self.tmin, self.tmax]),
        ]

    def _marks(self) -> list:
        # the model's total first: the browser test finds it as the first line
        return [self.model_line, self.component_lines, self.spectrum_lines, self.dulong_petit, self.t3_law, *self.error_bars, *self.data_points]

    def show(self, state) -> None:
        """Draw an :class:`~modeheat.widgets.explorer.ExplorerState`: set the controls, compute
        the curves with the backend and assign them to the marks."""
        rep = state.representation
        xcol, ycol, ylabel = REPRESENTATIONS[rep]
        log_x = state.log_t and xcol == "T"
        log_y = state.log_y and ycol in ("C", "S")
        self.representation.value, self.log_t.value, self.log_y.value = rep, state.log_t, state.log_y
        self.components.value = state.show_components
        self.tmin.value, self.tmax.value = state.window
        self._set_data_marks(len(state.data))
        sc = {"x": self._x[log_x], "y": self._y[log_y]}
        for mark in self._marks():
            mark.scales = sc
        self.x_axis.scale, self.y_axis.scale = sc["x"], sc["y"]
        self.x_axis.label, self.y_axis.label = ("T² (K²)" if xcol == "T2" else "T (K)"), ylabel
        self._draw_model(state, xcol, ycol, log_y)
        self._draw_spectra(state, xcol, ycol, log_y)
        self._draw_data(state, xcol, ycol, log_y)
        # The frame follows what is shown, not a slider: while parameters move, the axes
        # stay put so the curve moves against the data ("fit axes" frames it again).
        model = state.model
        key = (rep, log_x, log_y, state.atoms, state.show_components, *state.data, *state.spectra,
               *(type(c).__name__ + c.name for c in (model.components if model is not None else ())))
        if not same_objects(key, self._frame_key):
            self._frame_key = key
            self._frame()

    def _frame(self) -> None:
        """Set both scales' limits to hold every curve now on the figure (5 % margin)."""
        xs, ys = [], []
        # reference lines follow the curves; they do not set the frame
        for mark in (m for m in self._marks() if m not in (self.dulong_petit, self.t3_law)):
            x, y = np.asarray(mark.x, dtype=float).ravel(), np.asarray(mark.y, dtype=float)
            if x.size and y.size:
                xs.append(x)
                ys.append(y.ravel())
        for scale, values in ((self.x_axis.scale, xs), (self.y_axis.scale, ys)):
            v = np.concatenate(values) if values else np.empty(0)
            v = v[np.isfinite(v) & ((v > 0) if isinstance(scale, bq.LogScale) else True)]
            if v.size == 0:
                scale.min = scale.max = None
                continue
            lo, hi = float(v.min()), float(v.max())
            if isinstance(scale, bq.LogScale):
                pad = (hi / lo) ** 0.05 if hi > lo else 2.0
                lo, hi = lo / pad, hi * pad
            else:
                pad = 0.05 * (hi - lo) if hi > lo else max(abs(hi), 1.0) * 0.05
                lo, hi = lo - pad, hi + pad
            with scale.hold_sync():
                scale.min, scale.max = lo, hi

    def _draw_model(self, state, xcol: str, ycol: str, log_y: bool) -> None:
        model: Mixture | None = state.model
        if model is None or not model.components:
            for mark in (self.model_line, self.component_lines, self.dulong_petit, self.t3_law):
                with mark.hold_sync():
                    mark.x, mark.y = [], []
            return
        T = state.temperatures()
        curves = temperature_curves(model, T)
        x = compact(curves[xcol])
        with self.model_line.hold_sync():
            self.model_line.x, self.model_line.y = x, compact(curves[ycol], log_y)
        with self.component_lines.hold_sync():
            if state.show_components != "off" and ycol in ("C", "S") and len(model.components) > 1:
                parts = contributions(model, T)
                names = list(dict.fromkeys(parts["component"]))
                ys = np.vstack([parts.loc[parts["component"] == n, ycol].to_numpy() for n in names])
                if state.show_components == "stacked":
                    # C and S add over components: each line is the sum of those before it,
                    # so the gaps between lines are the components and the last is the model
                    ys = np.cumsum(ys, axis=0)[:-1]
                    names = [" + ".join(names[:k + 1]) for k in range(len(names) - 1)]
                self.component_lines.x, self.component_lines.y = x, compact(ys, log_y)
                self.component_lines.labels = names
            else:
                self.component_lines.x, self.component_lines.y = [], []
        atoms = curves.attrs.get("atoms", math.nan) if state.atoms is None else state.atoms
        level = curves.attrs.get("t3_level", math.nan)
        with self.dulong_petit.hold_sync():
            # 3·atoms·R, the classical limit of C per formula unit (common practice)
            show = ycol == "C" and atoms > 0
            self.dulong_petit.x = x[[0, -1]] if show else []
            self.dulong_petit.y = compact([3.0 * atoms * R] * 2) if show else []
        with self.t3_law.hold_sync():
            law = {"C": curves["T"] ** 3 * level, "C_over_T3": np.full(len(T), level),
                   "C_over_T": curves["T2"] * level}.get(ycol)
            show = law is not None and math.isfinite(level)
            if show and ycol != "C_over_T3":
                # a rising law (C ∝ T³, C/T ∝ T²) holds at low T only: drawn up to where it
                # passes the model's highest value, so it never sets the scale of the figure
                law = np.asarray(law, dtype=float)
                law = np.where(law <= float(np.nanmax(curves[ycol].to_numpy())), law, np.nan)
            self.t3_law.x = x if show else []
            self.t3_law.y = compact(law, log_y) if show else []

    def _draw_spectra(self, state, xcol: str, ycol: str, log_y: bool) -> None:
        """Each loaded spectrum's own curve (as loaded, scale 1), computed again only when
        the spectra or the temperatures change."""
        T = state.temperatures()
        key = (*state.spectra, float(T[0]), float(T[-1]))
        if not same_objects(key, self._spectrum_curves[0]):
            self._spectrum_curves = (key, [temperature_curves(s, T) for s in state.spectra])
        tables = self._spectrum_curves[1]
        with self.spectrum_lines.hold_sync():
            if tables:
                self.spectrum_lines.x = compact(tables[0][xcol])
                self.spectrum_lines.y = compact(np.vstack([t[ycol].to_numpy() for t in tables]), log_y)
                self.spectrum_lines.labels = [s.name or f"DOS {i + 1}" for i, s in enumerate(state.spectra)]
            else:
                self.spectrum_lines.x, self.spectrum_lines.y = [], []

    def _set_data_marks(self, n: int) -> None:
        if n == len(self.data_points):
            return
        sc = dict(self.model_line.scales)
        self.data_points = [
            bq.Scatter(x=[], y=[], scales=sc, colors=[PALETTE[(2 * i + 1) % len(PALETTE)]], default_size=14,
                       stroke="#ffffff", labels=[f"data {i + 1}"])
            for i in range(n)
        ]
        self.error_bars = [bq.Lines(x=[], y=[], scales=sc, colors=[PALETTE[(2 * i + 1) % len(PALETTE)]])
                           for i in range(n)]
        self.figure.marks = self._marks()

    @staticmethod
    def _draw_points(curves, points, bars, xcol: str, ycol: str, log_y: bool) -> None:
        """One data set's points and error bars in the current representation."""
        has_y = ycol in curves.columns
        with points.hold_sync():
            points.x = compact(curves[xcol]) if has_y else []
            points.y = compact(curves[ycol], log_y) if has_y else []
        with bars.hold_sync():
            sigma = _SIGMA.get(ycol)
            if has_y and sigma in curves.columns:
                bx, by = _bars(curves[xcol].to_numpy(), curves[ycol].to_numpy(), curves[sigma].to_numpy())
                bars.x, bars.y = compact(bx), compact(by, log_y)
            else:
                bars.x, bars.y = [], []

    def _draw_data(self, state, xcol: str, ycol: str, log_y: bool) -> None:
        model: Mixture | None = state.model
        residual_x, residual_y = [], []
        key = state.data
        if not same_objects(key, self._data_curves[0]):  # data change rarely: their curves are kept until then
            self._data_curves = (key, [temperature_curves(d) for d in state.data])
        # The points move only with the data or the representation: a slider leaves them, and
        # sending them again on every step would only slow the browser down.
        drawn = (*key, xcol, ycol, str(log_y), *self.data_points)
        redraw = not same_objects(drawn, self._drawn_data)
        self._drawn_data = drawn
        for curves, points, bars in zip(self._data_curves[1], self.data_points, self.error_bars):
            if redraw:
                self._draw_points(curves, points, bars, xcol, ycol, log_y)
            if model is not None and model.components:
                residual_x.append(curves["T"].to_numpy())
                residual_y.append(curves["C"].to_numpy() - model_cp(model, curves["T"].to_numpy()))
        shown = bool(residual_x)
        self.residual_figure.layout.display = None if shown else "none"
        with self.residual_points.hold_sync():
            self.residual_points.x = compact(np.concatenate(residual_x)) if shown else []
            self.residual_points.y = compact(np.concatenate(residual_y)) if shown else []
        with self.residual_zero.hold_sync():
            self.residual_zero.x = compact(state.window) if shown else []
            self.residual_zero.y = compact([0.0, 0.0]) if shown else []


def model_cp(model: Mixture, T: np.ndarray) -> np.ndarray:
    """The model as measured data compare with it (as the fit does): C_v, turned into
    C_p by the model's :class:`~modeheat.models.Dilatation` term when it has one; J/(mol K)."""
    cv = temperature_curves(model, T)["C"].to_numpy()
    dilatation = [c for c in model.components if isinstance(c, Dilatation)]
    return dilatation[0].cp_from_cv(T, cv) if dilatation else cv

