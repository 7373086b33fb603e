"""Benchmarks under pytest: `python -m pytest -m benchmark -s` prints the ratios.

They are excluded from the default run (pyproject's addopts) and assert accuracy
only: speed on a shared machine is reported, not tested.
"""

import pytest

pytestmark = pytest.mark.benchmark


def test_thermo_benchmark_prints_ratios(capsys):
    from bench_thermo import main

    ratios = main()
    out = capsys.readouterr().out
    print(out)
    assert len(ratios) == 3 and "ratio" in out
