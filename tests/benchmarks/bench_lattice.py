"""Time and peak memory of the fcc nearest-neighbour DOS on a 48³ mesh (not a timed test).

Run:  python tests/benchmarks/bench_lattice.py      (or: python -m pytest -m benchmark -s)

Targets (task "lattice"): the whole computation — 110 592 k-points diagonalised and the
linear-tetrahedron DOS of 663 552 tetrahedra × 3 branches — in ≤ 5 s and ≤ 1 GiB peak
memory on a 2-core machine.  Time is the best of three runs (interruptions by other
work on a shared machine only ever add time); memory is the peak of numpy/Python
allocations during one run (tracemalloc) and the process's peak resident size
(getrusage, an upper bound that includes the interpreter and imports).  The lattice is
an invented test shape of copper-like scale.
"""

from __future__ import annotations

import math
import resource
import sys
import time
import tracemalloc

from modeheat.lattice import CubicLattice, dos

TIME_TARGET = 5.0  # s
MEMORY_TARGET = 1024.0  # MiB
MESH = 48


def run(mesh: int = MESH, repeat: int = 3) -> dict:
    """Best time over `repeat` runs, the tracemalloc peak of one run, and the process peak RSS."""
    model = CubicLattice("fcc", 63.5, 3.61, 28.0)
    dos(model, 6)  # warm up imports and caches outside the timing
    best = math.inf
    spectrum = None
    for _ in range(repeat):
        t = time.perf_counter()
        spectrum = dos(model, mesh)
        best = min(best, time.perf_counter() - t)
    tracemalloc.start()
    dos(model, mesh)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # KiB on Linux
    if sys.platform == "darwin":
        rss /= 1024.0  # bytes there
    return {
        "mesh": mesh,
        "seconds": best,
        "traced_mib": peak / 2**20,
        "rss_mib": rss,
        "modes": spectrum.raw_integral,
    }


def main() -> dict:
    r = run()
    print(f"fcc nearest-neighbour DOS, {r['mesh']}³ mesh, linear tetrahedra")
    print(f"  time        {r['seconds']:7.2f} s    (target ≤ {TIME_TARGET:g} s)   {'ok' if r['seconds'] <= TIME_TARGET else 'OVER'}")
    print(
        f"  peak memory {r['traced_mib']:7.1f} MiB  traced, {r['rss_mib']:.1f} MiB process RSS "
        f"(target ≤ {MEMORY_TARGET:g} MiB)   {'ok' if r['rss_mib'] <= MEMORY_TARGET else 'OVER'}"
    )
    print(f"  modes       {r['modes']:.12f}  (3 per atom)")
    return r


if __name__ == "__main__":
    main()
