"""pytest settings for the notebooks, which nbval runs in lax mode (``--nbval-lax`` in pyproject.toml).

Each notebook runs in a fresh kernel of the interpreter running pytest
(``--nbval-current-env``), started in this folder.  From a clone that has not been installed
the kernel could not import modeheat, so the source tree that this pytest imports is put first
on the kernel's PYTHONPATH (as tests/test_cli.py does for the ``modeheat`` command): the
notebooks test the same code as the rest of the suite.
"""

from __future__ import annotations

import os
from pathlib import Path

import modeheat

__all__: list[str] = []

_SOURCE_ROOT = str(Path(modeheat.__file__).resolve().parent.parent)
os.environ["PYTHONPATH"] = os.pathsep.join(filter(None, [_SOURCE_ROOT, os.environ.get("PYTHONPATH")]))
