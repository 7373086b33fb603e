"""Errors and warnings raised by modeheat.

Every error derives from :class:`ModeheatError`, and input errors also derive from
the built-in :class:`ValueError`, so callers can catch either.  Input errors carry
the file and line they are about, and their message names both.
"""

from __future__ import annotations

__all__ = [
    "ModeheatError",
    "InputError",
    "Cancelled",
    "ModeheatWarning",
    "SpectrumWarning",
    "AtomCountWarning",
    "NoDebyeTemperatureWarning",
]


class ModeheatError(Exception):
    """Base class of every error modeheat raises on purpose."""


class InputError(ModeheatError, ValueError):
    """Bad input data: a file, an array or a parameter that cannot be used.

    Parameters
    ----------
    problem : str
        What is wrong, in words a user can act on.
    path : str or os.PathLike, optional
        The file the problem was found in.
    line : int, optional
        1-based line number in that file.
    index : int, optional
        0-based position in the input arrays, for data that came from arrays; a file
        reader turns it into a line number.
    """

    def __init__(
        self,
        problem: str,
        *,
        path: object = None,
        line: int | None = None,
        index: int | None = None,
    ):
        self.problem = problem
        self.path = None if path is None else str(path)
        self.line = line
        self.index = index
        super().__init__(self._message())

    def _message(self) -> str:
        if self.path is None:
            return self.problem if self.index is None else f"{self.problem} (at index {self.index})"
        where = self.path
        if self.line is not None:
            where += f", line {self.line}"
        return f"{where}: {self.problem}"


class Cancelled(ModeheatError):
    """Long work was stopped by its progress callback (:mod:`modeheat.progress`).

    Raised instead of a result: nothing partial is returned and the inputs are unchanged.
    """


class ModeheatWarning(UserWarning):
    """Base class of modeheat's warnings (filter them with this class)."""


class SpectrumWarning(ModeheatWarning):
    """A spectrum was repaired on the way in (imaginary modes, clipped noise, merged points)."""


class AtomCountWarning(ModeheatWarning):
    """A density of states holds clearly 3·n modes for a whole n other than the atoms given.

    The spectrum is still normalised to 3·atoms with the atoms given; the message names
    the count the data suggest.  :class:`~modeheat.spectrum.Spectrum` says when a mode
    count is clear.
    """


class NoDebyeTemperatureWarning(ModeheatWarning):
    """Some heat capacities admit no effective Debye temperature (NaN returned)."""
