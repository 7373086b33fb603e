"""The demonstration spectrum in demo_spectra/ is what its script writes, and is a sane DOS.

The compound there is invented: these checks are about the file, not about physics.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np

DEMO = Path(__file__).resolve().parent.parent / "demo_spectra"


def _script():
    spec = importlib.util.spec_from_file_location("make_demo", DEMO / "make_demo.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_committed_file_is_reproducible():
    # reference: the committed file itself; rerun demo_spectra/make_demo.py if this fails
    make_demo = _script()
    committed = (DEMO / make_demo.FILENAME).read_text(encoding="utf-8")
    assert committed == make_demo.render()


def test_demo_dos_counts_three_modes_per_atom():
    # common practice: a DOS per formula unit integrates to 3 modes per atom; partials add up
    text = (DEMO / _script().FILENAME).read_text(encoding="utf-8").splitlines()
    header = [line for line in text if not line.startswith("#")][0]
    assert header.split() == ["frequency", "(THz)", "total", "A", "B"]
    assert any("INVENTED FOR DEMONSTRATION" in line for line in text if line.startswith("#"))
    nu, total, a, b = np.loadtxt(text[text.index(header) + 1 :], unpack=True)
    area = lambda g: 0.5 * np.sum((g[1:] + g[:-1]) * np.diff(nu))  # noqa: E731
    assert abs(area(total) - 6.0) < 1e-6
    assert abs(area(a) - 3.0) < 1e-6 and abs(area(b) - 3.0) < 1e-6
    np.testing.assert_allclose(a + b, total, atol=1e-6)
    assert np.all(np.diff(nu) > 0) and np.all(total >= 0)
