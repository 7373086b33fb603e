"""The committed notebooks carry no outputs and no execution counts, and open with a Python 3 kernel.

Outputs in git make diffs unreadable and go stale with every library version; the notebooks are
run by the suite itself (nbval, ``notebooks/conftest.py``), so what they show is always current.
The ``kernelspec`` keeps JupyterLab from asking which kernel to start.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

__all__: list[str] = []

NOTEBOOKS = sorted((Path(__file__).resolve().parent.parent / "notebooks").glob("*.ipynb"))
EXPECTED = {
    "explore_computed_dos.ipynb",
    "where_debye_breaks_down.ipynb",
    "fit_calorimetry.ipynb",
    "figures_for_paper.ipynb",
    "quasi_harmonic_quellium.ipynb",
}


def test_the_five_notebooks_are_there():
    assert {p.name for p in NOTEBOOKS} == EXPECTED


@pytest.mark.parametrize("path", NOTEBOOKS, ids=lambda p: p.name)
def test_notebook_is_stripped(path: Path):
    notebook = json.loads(path.read_text(encoding="utf-8"))
    code = [cell for cell in notebook["cells"] if cell["cell_type"] == "code"]
    assert code, f"{path.name} has no code cells"
    for number, cell in enumerate(code, 1):
        assert cell.get("outputs") == [], f"{path.name}: code cell {number} has outputs"
        assert cell.get("execution_count") is None, f"{path.name}: code cell {number} has an execution count"
    assert notebook["metadata"]["kernelspec"]["name"] == "python3"
    assert notebook["metadata"]["kernelspec"]["language"] == "python"


@pytest.mark.parametrize("path", NOTEBOOKS, ids=lambda p: p.name)
def test_notebook_uses_only_public_names(path: Path):
    # notebooks are stories on the public API (DEVELOPERS.md): no private modules or names
    notebook = json.loads(path.read_text(encoding="utf-8"))
    source = "\n".join("".join(cell["source"]) for cell in notebook["cells"] if cell["cell_type"] == "code")
    private = re.search(r"\._(?!_)\w*", source)  # `._name`, not a dunder such as `__name__`
    assert private is None, f"{path.name} uses the private name {private.group()!r}"
