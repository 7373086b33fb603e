"""The Explorer's inversion panel: recover a DOS from the loaded C(T) in a background thread,
with progress and Cancel."""

from __future__ import annotations

import html
import math
from collections.abc import Callable, Mapping, Sequence

import ipywidgets as widgets
import pandas as pd

from .background import BackgroundPanel
from .status import StatusArea

__all__ = ["InversionPanel", "InversionProblem", "summary_html"]

#: What ``get_data()`` returns: the heat-capacity data sets, the atoms per formula unit
#: (None: the backend's rule for data decides) and, optionally, the keyword arguments of
#: :func:`modeheat.cv_from_cp` that turn measured C_p into C_v (passed as ``cp_to_cv``).
InversionProblem = (tuple[Sequence[pd.DataFrame], float | None]
                    | tuple[Sequence[pd.DataFrame], float | None, Mapping | None])

#: Strength choices offered: label → the backend's ``method``.
METHODS = (("GCV", "gcv"), ("L-curve", "lcurve"))
#: Electronic-term choices offered: label → the backend's ``electronic``.
ELECTRONIC = (("fit alongside", "fit"), ("none", "none"))
#: Starting length of the progress bar (it doubles while the total is unknown).
_FIRST_MAX = 16


class InversionPanel(BackgroundPanel):
    """Invert C(T), Cancel, the method, electronic and band controls, a progress bar and a summary.

    Pressing "Invert C(T)" (or :meth:`run`) asks `get_data` for the data sets, the atom
    count and any C_p → C_v conversion, and runs :func:`modeheat.inversion.invert_heat_capacity` in a background thread,
    so the notebook stays responsive and Cancel works: the progress callback feeds the
    bar and answers False once Cancel was pressed.  When the inversion ends, the summary
    shows the regularisation strength α and how it was chosen, χ²_red, the moment Debye
    temperatures with their standard errors and the resolution note, and
    `on_result(result)` is called.  A cancelled or failed inversion says so in `status`
    and changes nothing; nothing raises.

    Parameters
    ----------
    get_data : callable — returns ``(data sets, atoms)`` or ``(data sets, atoms, cp_to_cv)``
        (:data:`InversionProblem`)
    on_result : callable — receives the :class:`~modeheat.inversion.InversionResult`
    status : StatusArea — where progress notes and problems are shown

    Attributes
    ----------
    invert_button, cancel_button : Button — DOM classes ``mh-invert`` and ``mh-invert-cancel``
    method : Dropdown — "gcv" or "lcurve": how α is chosen
    electronic : Dropdown — "fit" (γT fitted alongside) or "none"
    band : Checkbox — compute the uncertainty band by resampling the data within σ
    progress : IntProgress — the backend's steps so far
    summary : HTML — DOM class ``mh-invert-summary``
    result : InversionResult or None — the last finished inversion
    """

    noun, doing, steps, applying = "inversion", "inverting C(T)", "steps", "drawing the recovered DOS"

    def __init__(
        self,
        get_data: Callable[[], InversionProblem],
        on_result: Callable[[object], object],
        status: StatusArea,
    ) -> None:
        self.get_data = get_data
        self.invert_button = widgets.Button(description="Invert C(T)",
                                            tooltip="recover a DOS from the loaded heat-capacity data")
        self.invert_button.add_class("mh-invert")
        self.cancel_button = widgets.Button(description="Cancel", disabled=True, tooltip="stop the running inversion")
        self.cancel_button.add_class("mh-invert-cancel")
        self.method = widgets.Dropdown(options=list(METHODS), value="gcv", description="α by",
                                       layout=widgets.Layout(width="180px"))
        self.electronic = widgets.Dropdown(options=list(ELECTRONIC), value="fit", description="γT",
                                           layout=widgets.Layout(width="200px"))
        self.band = widgets.Checkbox(value=True, description="uncertainty band", indent=False)
        self.progress = widgets.IntProgress(value=0, min=0, max=_FIRST_MAX, description="steps")
        self.summary = widgets.HTML(value="")
        self.summary.add_class("mh-invert-summary")
        super().__init__([
            widgets.HBox([self.invert_button, self.cancel_button, self.progress]),
            widgets.HBox([self.method, self.electronic, self.band]),
            self.summary,
        ])
        self._init_background(on_result, status, self.invert_button, self.cancel_button, self.progress)
        self.add_class("mh-invert-panel")

    def _problem(self) -> tuple:
        # the controls are read here, on the calling thread, not in the worker
        options = {"method": self.method.value, "electronic": self.electronic.value,
                   "band": "resample" if self.band.value else "none"}
        return self.get_data(), options

    def _compute(self, problem: tuple, progress):
        from ..inversion import invert_heat_capacity  # the backend loads only when asked for

        data_problem, options = problem
        data, atoms = data_problem[0], data_problem[1]
        conversion = data_problem[2] if len(data_problem) > 2 else None
        return invert_heat_capacity(list(data), atoms=atoms, cp_to_cv=conversion, progress=progress, **options)

    def _show(self, result) -> None:
        self.summary.value = summary_html(result)
        self.progress.bar_style = "success"
        self.status.info(f"inversion done: α = {result.alpha:.3g} by {result.alpha_method}, "
                         f"χ²_red = {result.chi2_red:.3g}")


def summary_html(result) -> str:
    """An inversion's summary as HTML.

    Parameters
    ----------
    result : InversionResult

    Returns
    -------
    str
        α and how it was chosen, χ²_red, γ [J/(mol K²)] when fitted or given, the band's
        method, a table of the moment Debye temperatures θ(n) [K] ± standard error, and
        the resolution note.
    """
    lines = [f"α = {result.alpha:.4g} (chosen by {html.escape(str(result.alpha_method))})",
             f"χ²_red = {result.chi2_red:.4g}"]
    if math.isfinite(result.gamma):
        lines.append(f"γ = {result.gamma:.4g} J/(mol K²)")
    lines.append(f"band: {html.escape(str(result.band_method))}")
    rows = "".join(
        f"<tr><td>{int(row.n):+d}</td><td>{row.theta_D:.4g}</td>"
        f"<td>{'—' if math.isnan(row.stderr) else f'± {row.stderr:.2g}'}</td></tr>"
        for row in result.moments.itertuples(index=False)
    )
    table = (f'<table class="mh-invert-moments"><tr><th>n</th><th>θ(n) (K)</th><th>± stderr (K)</th></tr>'
             f"{rows}</table>")
    note = f'<p class="mh-invert-resolution">{html.escape(str(result.resolution))}</p>'
    return "<br>".join(lines) + table + note
