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


def test_lattice_benchmark_prints_time_and_memory(capsys):
    from bench_lattice import main

    result = main()
    out = capsys.readouterr().out
    print(out)
    # common practice: 3 modes per atom; speed and memory are reported, not asserted
    assert abs(result["modes"] - 3.0) < 1e-9 and "peak memory" in out


def test_fitting_benchmark_prints_times(capsys):
    from bench_fitting import main

    times = main()
    out = capsys.readouterr().out
    print(out)
    assert "target" in out and times["fit_s"] > 0
    # the benchmark's fit must be right, whatever its speed: truth within 4σ (seeded data)
    assert times["worst_sigma"] < 4
    assert "DOS/Debye" in out and times["dos_scale_sigma"] < 4


def test_startup_benchmark_prints_ratio(capsys):
    from bench_startup import main

    result = main()
    out = capsys.readouterr().out
    print(out)
    assert "target" in out and result["ratio"] > 0


def test_views_benchmark_prints_times(capsys):
    from bench_views import main

    times = main()
    out = capsys.readouterr().out
    print(out)
    # common practice: the mixture's 15 modes (3 per vibrational component); speed is reported, not asserted
    assert "target" in out and times["points"] == 2000 and abs(times["modes"] - 15.0) < 1e-9


def test_progress_benchmark_prints_costs(capsys):
    from bench_progress import main

    result = main()
    out = capsys.readouterr().out
    print(out)
    # every cancelled fit raised Cancelled; the costs are reported, not asserted
    assert "ratio" in out and result["cancelled"] == 3


def test_breakdown_benchmark_prints_times(capsys):
    from bench_breakdown import main

    times = main()
    out = capsys.readouterr().out
    print(out)
    # speed is reported, not asserted; the breakdown tabulates the one public θ_D(T), bit for bit
    assert "target" in out and times["breakdown_s"] > 0 and times["same_theta"] == 1.0


def test_explorer_benchmark_prints_slider_times(capsys):
    from bench_explorer import main

    times = main()
    out = capsys.readouterr().out
    print(out)
    # the kernel-side time of a slider move is reported, not asserted (shared machine)
    assert "target" in out and times["mixture_s"] > 0 and times["dos_s"] > 0


def test_inversion_benchmark_prints_times(capsys):
    from bench_inversion import main

    times = main()
    out = capsys.readouterr().out
    print(out)
    assert "target" in out and times["core_s"] > 0
    # the benchmark's inversion must fit within the noise, whatever its speed (seeded data)
    assert 0.5 < times["chi2_red"] < 1.5


def test_quasiharmonic_benchmark_prints_times(capsys):
    from bench_quasiharmonic import main

    result = main()
    out = capsys.readouterr().out
    print(out)
    # Grüneisen's rule (common practice): frequencies scaling as V^-2 give γ = 2; speed is reported
    assert "target" in out and abs(result["gamma"] - 2.0) < 2e-3


def test_batch_benchmark_prints_rates_and_memory(capsys):
    pytest.importorskip("pyarrow")
    pytest.importorskip("distributed")
    from bench_batch import main

    rows = main()
    out = capsys.readouterr().out
    print(out)
    # every engine tabulated every invented file; speed and memory are reported, not asserted
    assert "target" in out and all(r["written"] == 10_000 and r["failed"] == 0 for r in rows.values())
