"""The status area every part of the Explorer reports to: plain words, never a traceback."""

from __future__ import annotations

import html
from contextlib import contextmanager
from typing import Iterator

import ipywidgets as widgets

from ..errors import ModeheatError

__all__ = ["StatusArea"]


class StatusArea(widgets.HTML):
    """One line of status under the Explorer's controls.

    Callbacks run their work inside :meth:`guard`: a :class:`~modeheat.ModeheatError`
    (bad input, a cancelled fit) shows its message; any other exception shows its type
    and message as an unexpected problem.  Either way the notebook shows no traceback,
    since errors raised in widget callbacks would otherwise vanish silently.
    """

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.add_class("mh-status")
        self.kind = "info"
        self.message = ""

    def info(self, message: str) -> None:
        """Show a plain message."""
        self._show("info", message)

    def error(self, message: str) -> None:
        """Show a problem the user can act on."""
        self._show("error", message)

    def clear(self) -> None:
        self._show("info", "")

    @contextmanager
    def guard(self, action: str) -> Iterator[None]:
        """Run a callback's work; report what went wrong in words instead of raising.

        Parameters
        ----------
        action : str — what the user asked for, e.g. "loading the DOS file"
        """
        try:
            yield
        except ModeheatError as exc:
            self.error(f"{action}: {exc}")
        except Exception as exc:  # noqa: BLE001 — a callback must never leave a traceback behind
            self.error(f"{action}: unexpected problem ({type(exc).__name__}: {exc})")

    def _show(self, kind: str, message: str) -> None:
        self.kind, self.message = kind, str(message)
        text = html.escape(" ".join(self.message.splitlines()))
        colour = "#a3261b" if kind == "error" else "#333333"
        self.value = f'<span style="color:{colour}">{text}</span>' if text else ""
