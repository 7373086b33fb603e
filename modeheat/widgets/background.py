"""What the fit and inversion panels share: one long backend call in a thread, with a
progress bar, Cancel, and every problem in the status area.

A panel subclasses :class:`BackgroundPanel`, builds its controls, calls
:meth:`BackgroundPanel._init_background` and implements ``_problem`` (read on the calling
thread), ``_compute`` (the backend call, on the worker thread) and ``_show`` (the result
into the panel's own widgets).
"""

from __future__ import annotations

import threading
from collections.abc import Callable

import ipywidgets as widgets

from ..errors import Cancelled
from ..progress import Progress
from .status import StatusArea

__all__ = ["BackgroundPanel", "advance"]


def advance(bar: widgets.IntProgress, step: Progress) -> None:
    """Move a progress bar to a :class:`~modeheat.progress.Progress` record: its length is
    the record's total when known, otherwise it doubles whenever it fills (a fit does not
    know its number of evaluations)."""
    if step.total is not None:
        bar.max = max(step.total, 1)
    else:
        while step.done > bar.max:
            bar.max *= 2
    bar.value = min(step.done, bar.max)


class BackgroundPanel(widgets.VBox):
    """A panel whose work runs in a background thread, so the view never freezes."""

    #: words for the status line, set by each panel
    noun = "task"  # "a fit is already running", "fit cancelled after …"
    doing = "working"  # "fitting…", status guard of the work
    steps = "steps"  # "cancelled after N steps"
    applying = "applying the result"

    def _init_background(self, on_result: Callable[[object], object], status: StatusArea,
                         start_button: widgets.Button, cancel_button: widgets.Button,
                         progress: widgets.IntProgress) -> None:
        self.on_result, self.status = on_result, status
        self.start_button, self.cancel_button, self.progress = start_button, cancel_button, progress
        self.result = None
        self._thread: threading.Thread | None = None
        self._cancel = threading.Event()
        self._first_max = progress.max
        start_button.on_click(lambda _: self.run())
        cancel_button.on_click(lambda _: self.cancel())

    @property
    def running(self) -> bool:
        """True while the work runs."""
        return self._thread is not None and self._thread.is_alive()

    def run(self, wait: bool = False):
        """Start the work (refused, with a note, while it runs).

        Parameters
        ----------
        wait : bool — block until the work has ended (tests, scripts)

        Returns
        -------
        The result with `wait`, or None when it was cancelled or failed (the status says
        why); without `wait`, None.
        """
        if self.running:
            self.status.error(f"a {self.noun} is already running: wait for it to end or press Cancel")
            return None
        problem = None
        with self.status.guard(f"preparing the {self.noun}"):
            problem = self._problem()
        if problem is None:
            return None
        self._cancel.clear()
        self.result = None
        self.progress.max, self.progress.value, self.progress.bar_style = self._first_max, 0, ""
        self.start_button.disabled, self.cancel_button.disabled = True, False
        self.status.info(f"{self.doing}…")
        self._thread = threading.Thread(target=self._work, args=(problem,), name=f"modeheat-{self.noun}",
                                        daemon=True)
        self._thread.start()
        if wait:
            self._thread.join()
            return self.result
        return None

    def cancel(self) -> None:
        """Ask the running work to stop at its next step (nothing to do when none runs)."""
        if self.running:
            self._cancel.set()
            self.status.info(f"cancelling the {self.noun}…")

    def _work(self, problem) -> None:
        try:
            with self.status.guard(self.doing):
                try:
                    result = self._compute(problem, self._step)
                except Cancelled:
                    self.progress.bar_style = "warning"
                    self.status.info(f"{self.noun} cancelled after {self.progress.value} {self.steps}: nothing changed")
                    return
                self.result = result
                self._show(result)
            if self.result is None:
                return  # the status says what went wrong
            with self.status.guard(self.applying):
                self.on_result(self.result)
        finally:
            self.start_button.disabled, self.cancel_button.disabled = False, True

    def _step(self, step: Progress) -> bool:
        """The backend's progress callback: move the bar; False (cancel) once Cancel was pressed."""
        advance(self.progress, step)
        return not self._cancel.is_set()

    # --- what each panel supplies ------------------------------------------------------------------
    def _problem(self):
        raise NotImplementedError

    def _compute(self, problem, progress: Callable[[Progress], bool]):
        raise NotImplementedError

    def _show(self, result) -> None:
        raise NotImplementedError
