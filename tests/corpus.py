"""The bad-input corpus in tests/data/bad, read from the table in its README.md.

That table is the single list of the files and of what each must produce; the reader
and command-line tests both draw their cases from here.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

__all__ = ["DATA", "BAD", "Case", "CASES", "cases"]

DATA = Path(__file__).parent / "data"
BAD = DATA / "bad"
_OUTCOMES = ("error", "warning", "valid")


@dataclass(frozen=True)
class Case:
    """One corpus file and what reading it must give."""

    file: str
    problem: str
    outcome: str  # "error", "warning" or "valid"
    line: int | None  # the 1-based line an error names, None for the whole file
    fragment: str  # part of the error or warning text, compared ignoring case

    @property
    def path(self) -> Path:
        return BAD / self.file


def _read_manifest() -> tuple[Case, ...]:
    cases = []
    for text in (BAD / "README.md").read_text(encoding="utf-8").splitlines():
        if not text.startswith("| `"):
            continue
        cells = [cell.strip() for cell in text.split("|")[1:-1]]
        file, problem, outcome, line, fragment = cells
        if outcome not in _OUTCOMES:
            raise ValueError(f"README.md: unknown outcome {outcome!r} for {file}")
        cases.append(Case(file.strip("`"), problem, outcome, None if line == "—" else int(line), fragment))
    return tuple(cases)


CASES = _read_manifest()


def cases(outcome: str) -> list[Case]:
    """The cases with this outcome."""
    return [case for case in CASES if case.outcome == outcome]
