"""The Explorer's fit panel: fit the checked parameters in a background thread, with progress and Cancel."""

from __future__ import annotations

import html
import math
from collections.abc import Callable, Sequence

import ipywidgets as widgets
import pandas as pd

from ..fitting import FitResult, fit
from ..models import Mixture
from .background import BackgroundPanel
from .status import StatusArea

__all__ = ["FitPanel", "FitProblem", "parameter_table"]

#: What ``get_problem()`` returns: the starting model, the data sets, the window
#: (tmin, tmax) in K (None: open) and the keys of the parameters to vary.
FitProblem = tuple[Mixture, Sequence[pd.DataFrame], tuple[float | None, float | None], Sequence[str]]

#: Starting length of the progress bar: a fit does not know its number of evaluations, so
#: the bar doubles whenever it fills.
_FIRST_MAX = 64


class FitPanel(BackgroundPanel):
    """Fit, Cancel, a progress bar, the parameter table and the fit report.

    Pressing Fit (or :meth:`run`) asks `get_problem` for the model, the data, the window
    and the parameters to vary, and runs :func:`~modeheat.fit` in a background thread,
    so the notebook stays responsive and Cancel works: the fit's progress callback
    feeds the bar and answers False once Cancel was pressed.  Widgets are updated from
    that thread only by plain trait assignments.  When the fit ends, the table shows
    every parameter with its standard error and the correlations of the varied ones,
    the report text shows :meth:`FitResult.report`, and `on_result(result)` is called.
    A cancelled or failed fit says so in `status` and changes nothing; nothing raises.

    Parameters
    ----------
    get_problem : callable — returns ``(model, data, (tmin, tmax), vary)``
        (:data:`FitProblem`); tmin and tmax in K
    on_result : callable — receives the :class:`~modeheat.fitting.FitResult`
    status : StatusArea — where progress notes and problems are shown

    Attributes
    ----------
    fit_button, cancel_button : Button — DOM classes ``mh-fit`` and ``mh-cancel``
    progress : IntProgress — residual evaluations so far
    table : HTML — parameters, ± standard errors and the correlation matrix
    report : HTML — the report text in a ``<pre>``
    result : FitResult or None — the last finished fit
    """

    noun, doing, steps, applying = "fit", "fitting", "evaluations", "applying the fit result"

    def __init__(
        self,
        get_problem: Callable[[], FitProblem],
        on_result: Callable[[FitResult], object],
        status: StatusArea,
    ) -> None:
        self.get_problem = get_problem
        self.fit_button = widgets.Button(description="Fit", tooltip="fit the checked parameters over the window")
        self.fit_button.add_class("mh-fit")
        self.cancel_button = widgets.Button(description="Cancel", disabled=True, tooltip="stop the running fit")
        self.cancel_button.add_class("mh-cancel")
        self.progress = widgets.IntProgress(value=0, min=0, max=_FIRST_MAX, description="evaluations")
        self.table = widgets.HTML(value="")
        self.table.add_class("mh-fit-table")
        self.report = widgets.HTML(value="")
        self.report.add_class("mh-fit-report")
        super().__init__([widgets.HBox([self.fit_button, self.cancel_button, self.progress]), self.table, self.report])
        self._init_background(on_result, status, self.fit_button, self.cancel_button, self.progress)
        self.add_class("mh-fit-panel")

    def _problem(self) -> FitProblem:
        return self.get_problem()

    def _compute(self, problem: FitProblem, progress) -> FitResult:
        model, data, (tmin, tmax), vary = problem
        return fit(model, list(data), tmin=tmin, tmax=tmax, vary=list(vary), progress=progress)

    def _show(self, result: FitResult) -> None:
        self.table.value = parameter_table(result)
        self.report.value = f"<pre>{html.escape(result.report())}</pre>"
        self.progress.bar_style = "success" if result.success else "warning"
        self.status.info(_summary(result))


def _summary(result: FitResult) -> str:
    """One status line: points, goodness of fit, and the warnings that matter."""
    quality = f"χ²_red = {result.chi2_red:.3g}" if result.weighted else f"scatter {result.scatter:.3g} J/(mol K)"
    text = f"fit done: {result.n_points} points, {quality}, {result.nfev} evaluations"
    if not result.success:
        text += f"; it did not converge ({result.message})"
    if result.at_bound:
        text += f"; at a bound: {', '.join(result.at_bound)}"
    return text


def parameter_table(result: FitResult) -> str:
    """The fit's parameters and correlations as an HTML table.

    Parameters
    ----------
    result : FitResult

    Returns
    -------
    str
        One row per parameter (value, ± standard error, the unit,
        varied or fixed), then the correlation matrix of the varied parameters.
    """
    rows = []
    for row in result.parameter_table().itertuples(index=False):
        err_text = "—" if math.isnan(row.stderr) else f"± {row.stderr:.3g}"
        rows.append(
            f"<tr><td>{html.escape(row.parameter)}</td><td>{row.value:.6g}</td><td>{err_text}</td>"
            f"<td>{html.escape(row.unit)}</td><td>{html.escape(row.status)}</td></tr>"
        )
    head = "<tr><th>parameter</th><th>value</th><th>± stderr</th><th>unit</th><th></th></tr>"
    out = f'<table class="mh-fit-parameters">{head}{"".join(rows)}</table>'
    corr = result.correlation
    if len(corr) > 1:
        names = [html.escape(str(k)) for k in corr.columns]
        chead = "<tr><th>correlation</th>" + "".join(f"<th>{n}</th>" for n in names) + "</tr>"
        crows = "".join(
            f"<tr><td>{names[i]}</td>" + "".join(f"<td>{v:+.3f}</td>" for v in corr.iloc[i]) + "</tr>"
            for i in range(len(names))
        )
        out += f'<table class="mh-fit-correlation">{chead}{crows}</table>'
    return out
