"""The Explorer's inversion panel: recover a DOS from the loaded C(T) in a background thread,
with progress and Cancel."""

from __future__ import annotations

import html
import math
import threading
from collections.abc import Callable, Mapping, Sequence

import ipywidgets as widgets
import pandas as pd

from ..errors import Cancelled
from ..progress import Progress
from .fit_panel import advance
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


class InversionPanel(widgets.VBox):
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

    def __init__(
        self,
        get_data: Callable[[], InversionProblem],
        on_result: Callable[[object], object],
        status: StatusArea,
    ) -> None:
        self.get_data = get_data
        self.on_result = on_result
        self.status = status
        self.result = None
        self._thread: threading.Thread | None = None
        self._cancel = threading.Event()
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
        self.invert_button.on_click(lambda _: self.run())
        self.cancel_button.on_click(lambda _: self.cancel())
        super().__init__([
            widgets.HBox([self.invert_button, self.cancel_button, self.progress]),
            widgets.HBox([self.method, self.electronic, self.band]),
            self.summary,
        ])
        self.add_class("mh-invert-panel")

    @property
    def running(self) -> bool:
        """True while an inversion runs."""
        return self._thread is not None and self._thread.is_alive()

    def run(self, wait: bool = False):
        """Start an inversion of the current data (refused, with a note, while one runs).

        Parameters
        ----------
        wait : bool — block until the inversion has ended (tests, scripts)

        Returns
        -------
        InversionResult or None
            With `wait`, the finished inversion, or None when it was cancelled or failed
            (the status says why); without, None.
        """
        if self.running:
            self.status.error("an inversion is already running: wait for it to end or press Cancel")
            return None
        problem = None
        with self.status.guard("preparing the inversion"):
            problem = self.get_data()
        if problem is None:
            return None
        self._cancel.clear()
        self.result = None
        self.progress.max, self.progress.value, self.progress.bar_style = _FIRST_MAX, 0, ""
        self.invert_button.disabled, self.cancel_button.disabled = True, False
        self.status.info("inverting C(T)…")
        options = {"method": self.method.value, "electronic": self.electronic.value,
                   "band": "resample" if self.band.value else "none"}
        self._thread = threading.Thread(target=self._work, args=(problem, options), name="modeheat-invert",
                                        daemon=True)
        self._thread.start()
        if wait:
            self._thread.join()
            return self.result
        return None

    def cancel(self) -> None:
        """Ask the running inversion to stop at its next step (nothing to do when none runs)."""
        if self.running:
            self._cancel.set()
            self.status.info("cancelling the inversion…")

    # --- the inversion thread -----------------------------------------------------------------
    def _work(self, problem: InversionProblem, options: dict) -> None:
        try:
            with self.status.guard("inverting C(T)"):
                from ..inversion import invert_heat_capacity  # the backend loads only when asked for

                data, atoms = problem[0], problem[1]
                conversion = problem[2] if len(problem) > 2 else None
                try:
                    result = invert_heat_capacity(list(data), atoms=atoms, cp_to_cv=conversion,
                                                  progress=self._step, **options)
                except Cancelled:
                    self.progress.bar_style = "warning"
                    self.status.info(f"inversion cancelled after {self.progress.value} steps: nothing changed")
                    return
                self.result = result
                self.summary.value = summary_html(result)
                self.progress.bar_style = "success"
                self.status.info(f"inversion done: α = {result.alpha:.3g} by {result.alpha_method}, "
                                 f"χ²_red = {result.chi2_red:.3g}")
            if self.result is None:
                return  # the status says what went wrong
            with self.status.guard("drawing the recovered DOS"):
                self.on_result(self.result)
        finally:
            self.invert_button.disabled, self.cancel_button.disabled = False, True

    def _step(self, step: Progress) -> bool:
        """The inversion's progress callback: move the bar; False (cancel) once Cancel was pressed."""
        advance(self.progress, step)
        return not self._cancel.is_set()


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
