"""Progress and cancellation of long work: one record, one error, one way to report.

Long computations — a q-mesh DOS, a model fit, a batch of files, later the inversion —
tell how far they are with :class:`Progress` records and stop when asked, through one
mechanism, so the ``modeheat`` command's progress line and a notebook's progress widget
are drawn by the same code.

Two spellings, one path:

* **Generator.** Work whose loop is ours is written as a generator that yields a
  :class:`Progress` per step; the last record carries the finished result in
  ``result`` (every earlier one has ``None``).  A caller that iterates draws what it
  likes and cancels by leaving the loop::

      for step in modeheat.lattice.iter_dos(model, 24):
          bar.value = step.fraction
      spectrum = step.result

* **Callback.** Every long function also takes ``progress=callback``.  The callback
  receives each :class:`Progress`; it cancels by returning ``False`` or by raising
  :class:`Cancelled` (any other return value, ``None`` included, means go on; any other
  exception propagates unchanged).  The function then raises :class:`Cancelled` and
  returns nothing: no partial result, and its inputs are untouched (they are immutable
  or copied).  :func:`drive` runs a generator with a callback, so a function such as
  :func:`modeheat.lattice.dos` is its generator driven by :func:`drive`; work whose
  loop belongs to a library (:func:`scipy.optimize.least_squares` inside
  :func:`modeheat.fit`) calls :func:`report` at each step instead, which is where a
  callback's answer becomes :class:`Cancelled` for both spellings.

``done`` never decreases within one computation, and the last record has
``done == total`` whenever ``total`` is known; a fit does not know its number of steps
in advance (``total`` is ``None``) until its last record.  :class:`ProgressLine` is the
callback the command line uses: one line on standard error, drawn only on a terminal.
This module imports nothing heavy, so it costs nothing at start-up.
"""

from __future__ import annotations

import operator
import sys
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from typing import IO, Any

from .errors import Cancelled, InputError

__all__ = ["Progress", "Cancelled", "ProgressCallback", "report", "drive", "ProgressLine"]


@dataclass(frozen=True)
class Progress:
    """One step of a long computation.

    Attributes
    ----------
    done : int — steps finished (k-point batches, residual evaluations, files), ≥ 0
    total : int or None — steps in all, ≥ `done`; None while unknown
    stage : str — what is being done, e.g. "modes", "tetrahedra", "fit", "files"
    message : str — a short note for a display (a file name, the current χ²), may be empty
    result : object — None until the last record of a generator, which carries the
        finished result
    """

    done: int
    total: int | None
    stage: str
    message: str = ""
    result: Any = field(default=None, repr=False, compare=False)

    def __post_init__(self) -> None:
        done = _whole(self.done)
        if done is None or done < 0:
            raise InputError(f"Progress.done must be an integer ≥ 0, not {self.done!r}")
        total = None if self.total is None else _whole(self.total)
        if self.total is not None and (total is None or total < done):
            raise InputError(f"Progress.total must be None or an integer ≥ done = {done}, not {self.total!r}")
        if not isinstance(self.stage, str) or not isinstance(self.message, str):
            raise InputError("Progress.stage and Progress.message must be strings")
        # numpy integers become plain ones, so a record prints and compares simply
        object.__setattr__(self, "done", done)
        object.__setattr__(self, "total", total)

    @property
    def fraction(self) -> float | None:
        """done/total in [0, 1] (1 for an empty computation); None while the total is unknown."""
        if self.total is None:
            return None
        return self.done / self.total if self.total else 1.0


def _whole(value: object) -> int | None:
    """`value` as an int when it is an integer (numpy's too, never a bool), else None."""
    if isinstance(value, bool):
        return None
    try:
        return operator.index(value)
    except TypeError:
        return None


ProgressCallback = Callable[[Progress], Any]
"""A callback given ``progress=``: receives each :class:`Progress`; ``False`` or raising
:class:`Cancelled` cancels."""


def report(progress: ProgressCallback | None, step: Progress) -> None:
    """Hand one record to a callback and turn its answer into :class:`Cancelled`.

    Parameters
    ----------
    progress : callable or None — the caller's callback (None: nothing to do)
    step : Progress

    Raises
    ------
    Cancelled
        The callback returned ``False`` (or raised it itself).
    """
    if progress is None:
        return
    if progress(step) is False:
        where = f" after {step.done}" + ("" if step.total is None else f" of {step.total}")
        raise Cancelled(f"cancelled at the {step.stage} stage{where} step(s)")


def drive(steps: Iterator[Progress], progress: ProgressCallback | None = None) -> Any:
    """Run a generator of :class:`Progress` to its end, reporting each record.

    Parameters
    ----------
    steps : iterator of Progress — a generator of long work; its last record carries
        the result
    progress : callable, optional — receives every record (:func:`report`)

    Returns
    -------
    object
        The ``result`` of the last record.

    Raises
    ------
    Cancelled
        The callback cancelled; the generator is closed first, so it stops at once.
    """
    last = None
    try:
        for last in steps:
            report(progress, last)
    finally:
        close = getattr(steps, "close", None)
        if close is not None:
            close()
    return None if last is None else last.result


class ProgressLine:
    """A progress line on a terminal: the callback the ``modeheat`` command uses.

    Each record rewrites one line, ``[done/total] message`` (``[done] stage message``
    while the total is unknown); the line is cleared when ``done`` reaches ``total``.
    Nothing is written when the stream is not a terminal, so redirected output and logs
    stay clean.  It never cancels.

    Parameters
    ----------
    stream : text stream, optional — where to draw (default: standard error at the time
        the line is made)
    """

    def __init__(self, stream: IO[str] | None = None) -> None:
        self.stream = sys.stderr if stream is None else stream
        isatty = getattr(self.stream, "isatty", None)
        self.active = bool(isatty is not None and isatty())

    def __call__(self, step: Progress) -> None:
        if not self.active:
            return
        count = f"[{step.done}]" if step.total is None else f"[{step.done}/{step.total}]"
        head = f"{count} {step.stage}" if step.total is None else count
        # \x1b[K clears what a longer line left behind.
        self.stream.write(f"\r{head} {step.message}".rstrip() + "\x1b[K")
        if step.total is not None and step.done >= step.total:
            self.stream.write("\r\x1b[K")
        self.stream.flush()
