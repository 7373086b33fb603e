"""What progress reporting and cancelling cost (printed, not a timed test).

Run:  python tests/benchmarks/bench_progress.py      (or: python -m pytest -m benchmark -s)

Three figures: the fit of bench_fitting.py silent and with a progress callback that
only counts, side by side (the records should cost well under 1 % of a fit); the
same for an fcc 24³ lattice DOS; and how long a fit takes to stop once its callback
answers False (one residual evaluation at most, then the unwinding of least_squares).
The data are invented (bench_fitting's seeded rendering of its own model).
"""

from __future__ import annotations

import time

import numpy as np
from bench_fitting import START, invented_data
from bench_thermo import best_of  # one timing rule for every benchmark

from modeheat import Cancelled
from modeheat.fitting import fit
from modeheat.lattice import CubicLattice, dos

FCC = CubicLattice("fcc", 63.5, 3.61, 28.0)  # invented test shape (copper-like scale)


class _Count:
    def __init__(self, stop: int | None = None):
        self.calls, self.stop, self.answered = 0, stop, 0.0

    def __call__(self, step):
        self.calls += 1
        if self.stop is not None and self.calls >= self.stop:
            self.answered = time.perf_counter()
            return False
        return None


def main() -> dict[str, float]:
    data = invented_data(np.random.default_rng(20240605))
    t_silent, result = best_of(lambda: fit(START, data), repeat=7)
    counter = _Count()
    t_reported, _ = best_of(lambda: fit(START, data, progress=counter), repeat=7)
    records = counter.calls // 7
    print(
        f"fit, 300 points: silent vs a counting callback ({records} records)\n"
        f"    {t_silent * 1e3:8.1f} ms   {t_reported * 1e3:8.1f} ms   ratio {t_reported / t_silent:.3f}"
    )
    t_dos, _ = best_of(lambda: dos(FCC, 24), repeat=2)
    lattice = _Count()
    t_dos_reported, _ = best_of(lambda: dos(FCC, 24, progress=lattice), repeat=2)
    print(
        f"lattice DOS, fcc 24³: silent vs a counting callback ({lattice.calls // 2} records)\n"
        f"    {t_dos * 1e3:8.1f} ms   {t_dos_reported * 1e3:8.1f} ms   ratio {t_dos_reported / t_dos:.3f}"
    )
    delays = []
    stops = (1, records // 4, records // 2)
    for stop in stops:
        cancel = _Count(stop)
        try:
            fit(START, data, progress=cancel)
        except Cancelled:
            delays.append(time.perf_counter() - cancel.answered)
    per_evaluation = t_silent / (records - 1)  # every record but the last is one evaluation
    print(
        f"fit cancelled after {', '.join(map(str, stops))} evaluations: stopped "
        + ", ".join(f"{d * 1e6:.0f} µs" for d in delays)
        + f" after the answer  [target: < one evaluation, {per_evaluation * 1e3:.2f} ms]"
    )
    return {
        "fit_ratio": t_reported / t_silent,
        "dos_ratio": t_dos_reported / t_dos,
        "cancel_s": max(delays),
        "evaluation_s": per_evaluation,
        "cancelled": len(delays),
    }


if __name__ == "__main__":
    main()
