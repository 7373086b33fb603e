"""The ``to_dict``/``from_dict`` pair every storable object shares.

The encoding itself lives in :mod:`modeheat.io.sessions`, in one table of kinds; the
classes inherit this mixin, which imports it on first use (sessions imports the classes).
"""

from __future__ import annotations

__all__ = ["Documented"]


class Documented:
    """Mixin: a JSON-safe document of the object, and the object back from one."""

    __slots__ = ()

    def to_dict(self) -> dict:
        """A JSON-safe document of this object (:func:`modeheat.io.sessions.to_dict`)."""
        from .io import sessions

        return sessions.to_dict(self)

    @classmethod
    def from_dict(cls, document):
        """The object a :meth:`to_dict` document holds, exactly as it was
        (:func:`modeheat.io.sessions.from_dict`); the document's kind must be this class's."""
        from .io import sessions

        return sessions.from_dict(document, expect=cls)
