"""The bad-input corpora in tests/data/bad (spectra) and tests/data/bad_cp (heat
capacities), each read from the table in its README.md.

That table is the single list of the files and of what each must produce; the reader
and command-line tests draw their cases from here.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

__all__ = ["DATA", "BAD", "BAD_CP", "Case", "CASES", "CP_CASES", "cases", "read_manifest"]

DATA = Path(__file__).parent / "data"
BAD = DATA / "bad"
BAD_CP = DATA / "bad_cp"
_OUTCOMES = ("error", "warning", "valid")


@dataclass(frozen=True)
class Case:
    """One corpus file and what reading it must give."""

    file: str
    problem: str
    outcome: str  # "error", "warning" or "valid"
    line: int | None  # the 1-based line an error names, None for the whole file
    fragment: str  # part of the error or warning text, compared ignoring case
    folder: Path = BAD  # the corpus the file belongs to

    @property
    def path(self) -> Path:
        return self.folder / self.file


def read_manifest(folder: Path = BAD) -> tuple[Case, ...]:
    """The cases listed in the table of `folder`/README.md."""
    cases = []
    for text in (folder / "README.md").read_text(encoding="utf-8").splitlines():
        if not text.startswith("| `"):
            continue
        cells = [cell.strip() for cell in text.split("|")[1:-1]]
        file, problem, outcome, line, fragment = cells
        if outcome not in _OUTCOMES:
            raise ValueError(f"README.md: unknown outcome {outcome!r} for {file}")
        cases.append(Case(file.strip("`"), problem, outcome, None if line == "—" else int(line), fragment, folder))
    return tuple(cases)


CASES = read_manifest(BAD)
CP_CASES = read_manifest(BAD_CP)


def cases(outcome: str, manifest: tuple[Case, ...] = CASES) -> list[Case]:
    """The cases of `manifest` (by default the spectrum corpus) with this outcome."""
    return [case for case in manifest if case.outcome == outcome]


def check_manifest(folder: Path, manifest: tuple[Case, ...]) -> None:
    """The manifest lists every corpus file in `folder` exactly once, and holds ≥ 20."""
    listed = [case.file for case in manifest]
    present = sorted(p.name for p in folder.iterdir() if p.name != "README.md")
    assert sorted(listed) == present
    assert len(set(listed)) == len(listed)
    assert len(listed) >= 20
