"""The Explorer's status area: errors in callbacks become plain words, never tracebacks."""

from __future__ import annotations

from modeheat.errors import InputError
from modeheat.widgets.status import StatusArea


def test_input_errors_show_their_message():
    status = StatusArea()
    with status.guard("reading the DOS file"):
        raise InputError("text where a number belongs", path="dos.txt", line=7)
    assert status.kind == "error"
    assert status.message == "reading the DOS file: dos.txt, line 7: text where a number belongs"
    assert "Traceback" not in status.value


def test_unexpected_errors_are_named_not_raised():
    status = StatusArea()
    with status.guard("fitting"):
        raise ZeroDivisionError("float division by zero")
    assert status.message == "fitting: unexpected problem (ZeroDivisionError: float division by zero)"


def test_messages_are_escaped_and_on_one_line():
    status = StatusArea()
    status.info("C < 3R\nfor <b>all</b> T")
    assert status.kind == "info" and "<b>" not in status.value and "&lt;b&gt;" in status.value
    status.clear()
    assert status.value == "" and status.message == ""
