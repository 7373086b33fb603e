"""Copy the notebooks of this folder into the package, where ``modeheat lab`` finds them.

The canonical notebooks are the ``*.ipynb`` files here, in ``notebooks/``; the package
ships copies in ``modeheat/notebooks/`` (package data).  Run this after editing a
notebook (``python notebooks/sync.py``); ``tests/test_commands.py`` fails while the two
folders differ.  Copies of notebooks removed here are removed there.
"""

from __future__ import annotations

import shutil
from pathlib import Path

__all__ = ["SOURCE", "PACKAGED", "sync"]

SOURCE = Path(__file__).resolve().parent
PACKAGED = SOURCE.parent / "modeheat" / "notebooks"


def sync(source: Path = SOURCE, packaged: Path = PACKAGED) -> list[str]:
    """Make `packaged` hold exactly the notebooks of `source`, byte for byte.

    Parameters
    ----------
    source : pathlib.Path — the canonical notebooks' folder
    packaged : pathlib.Path — the package-data folder

    Returns
    -------
    list of str — what changed, one line per notebook copied or removed
    """
    packaged.mkdir(parents=True, exist_ok=True)
    wanted = {p.name: p for p in source.glob("*.ipynb")}
    changes = []
    for name, path in sorted(wanted.items()):
        target = packaged / name
        if not target.is_file() or target.read_bytes() != path.read_bytes():
            shutil.copyfile(path, target)
            changes.append(f"copied {name}")
    for stale in sorted(packaged.glob("*.ipynb")):
        if stale.name not in wanted:
            stale.unlink()
            changes.append(f"removed {stale.name}")
    return changes


if __name__ == "__main__":
    for line in sync() or ["up to date"]:
        print(line)
