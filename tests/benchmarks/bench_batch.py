"""Streamed batches on each engine: files per second and peak memory (printed, not a timed test).

Run:  python tests/benchmarks/bench_batch.py [--files N] [--small N]   (or: python -m pytest -m benchmark -s)

Targets (issue 13): 10⁴ generated DOS files × 100 temperatures through the serial engine,
the local process pool and a local Dask cluster (2 workers each on a 2-core machine):
the pool ≥ 1.7× serial in files per second; peak memory independent of the number of
files within 20 % (the same run with a quarter of the files beside it).  Each run is a
fresh Python process whose process tree (driver and workers) is sampled with psutil
every 20 ms; the figures include the start-up of the workers and the interpreter.  The
spectra are invented (a ν² shape with a peak, 200 bins).  The end prints an estimate for
10⁶ files on 8 and 64 workers from the measured per-file cost and engine overheads.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
TEMPERATURES = np.linspace(1.0, 1000.0, 100)
RUN = """
import json, sys, time
import numpy as np
from modeheat.batch import tabulate_files
files = [line for line in open(sys.argv[1], encoding="utf-8").read().splitlines() if line]
t0 = time.perf_counter()
s = tabulate_files(files, np.linspace(1.0, 1000.0, 100), sys.argv[2], engine=sys.argv[3], workers=int(sys.argv[4]),
                   chunk=500)
print(json.dumps({"seconds": time.perf_counter() - t0, "written": s.written, "failed": s.failed}))
"""


def write_corpus(folder: Path, n: int) -> Path:
    """`n` invented DOS files (200 bins, 3 modes per atom) and a list of them."""
    rng = np.random.default_rng(13)
    nu = np.linspace(0.0, 1.0, 200)
    names = []
    for k in range(n):
        top = 4.0 + 6.0 * rng.random()
        g = nu**2 * (1.0 + 3.0 * rng.random() * np.exp(-(((nu - 0.8) / 0.04) ** 2)))
        g *= 3.0 / np.trapezoid(g, nu * top)
        path = folder / f"dos_{k:06d}.txt"
        path.write_text("# invented\n# atoms: 1\nfrequency (THz), total\n"
                        + "\n".join(f"{a:.8g}, {b:.8g}" for a, b in zip(nu * top, g)) + "\n", encoding="utf-8")
        names.append(str(path))
    listing = folder / f"files_{n}.txt"
    listing.write_text("\n".join(names) + "\n", encoding="utf-8")
    return listing


def measured(listing: Path, out: Path, engine: str, workers: int) -> dict:
    """Run one batch in a fresh process; its wall time and the peak RSS of its process tree."""
    import psutil

    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    t0 = time.perf_counter()
    proc = subprocess.Popen([sys.executable, "-c", RUN, str(listing), str(out), engine, str(workers)],
                            stdout=subprocess.PIPE, text=True, env=env)
    peak, driver_peak = 0, 0
    stop = threading.Event()

    def sample():
        nonlocal peak, driver_peak
        root = psutil.Process(proc.pid)
        while not stop.is_set():
            try:
                tree = [root, *root.children(recursive=True)]
                rss = [p.memory_info().rss for p in tree]
                peak, driver_peak = max(peak, sum(rss)), max(driver_peak, rss[0])
            except psutil.Error:
                pass
            time.sleep(0.02)

    thread = threading.Thread(target=sample, daemon=True)
    thread.start()
    stdout, _ = proc.communicate()
    stop.set()
    thread.join()
    result = json.loads(stdout.strip().splitlines()[-1])
    return result | {"wall": time.perf_counter() - t0, "peak_mb": peak / 2**20, "driver_mb": driver_peak / 2**20}


def driver_cost(listing: Path, n: int = 500) -> float:
    """Seconds per file the driver spends on a Parquet batch with workers elsewhere: taking
    a task's result off the wire (unpickling), joining the tables and writing the part."""
    import pickle

    import pyarrow as pa
    import pyarrow.parquet as pq

    from modeheat.batch import TableJob, _rows_many

    files = listing.read_text(encoding="utf-8").split()[:n]
    tasks = [files[i : i + 62] for i in range(0, len(files), 62)]  # the pool's task size at chunk 500
    blobs = [pickle.dumps(_rows_many([TableJob(f, TEMPERATURES) for f in task])) for task in tasks]
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        rows = [pickle.loads(b)[0] for b in blobs]
        pq.write_table(pa.concat_tables([r.table for r in rows]), Path(tmp) / "part.parquet")
        return (time.perf_counter() - t0) / len(files)


def main(files: int = 10_000, small: int | None = None) -> dict:
    small = small or files // 4
    rows = {}
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        big, little = write_corpus(folder, files), None
        little = folder / f"files_{small}.txt"
        little.write_text("\n".join(big.read_text(encoding="utf-8").splitlines()[:small]) + "\n", encoding="utf-8")
        for engine in ("serial", "process", "dask"):
            workers = 1 if engine == "serial" else 2
            rows[engine] = measured(big, folder / f"{engine}.parquet", engine, workers)
            rows[engine]["small"] = measured(little, folder / f"{engine}_small.parquet", engine, workers)
        driver = driver_cost(big)
    print(f"batch: {files} invented DOS files (200 bins) x 100 temperatures -> Parquet, 2 cores  "
          "[targets: pool >= 1.7x serial; peak memory within 20 % of the run with a quarter of the files]")
    print(f"    {'engine':8s} {'files/s':>9s} {'vs serial':>9s} {'wall s':>8s} {'peak MB':>9s} "
          f"{'driver MB':>10s}   {f'{small} files: peak MB':>20s} {'ratio':>6s}")
    serial_rate = files / rows["serial"]["seconds"]
    for engine, r in rows.items():
        rate = files / r["seconds"]
        r["rate"] = rate
        r["memory_ratio"] = r["peak_mb"] / r["small"]["peak_mb"]
        print(f"    {engine:8s} {rate:9.0f} {rate / serial_rate:8.2f}x {r['wall']:8.1f} {r['peak_mb']:9.0f} "
              f"{r['driver_mb']:10.0f}   {r['small']['peak_mb']:20.0f} {r['memory_ratio']:6.2f}")
    # Estimate for 10⁶ files: per-file cost from the serial run, fixed start-up from the
    # difference between the full and the quarter run, per-engine overhead per file from
    # how far its 2-worker rate falls short of 2 × serial.
    per_file = (rows["serial"]["seconds"] - rows["serial"]["small"]["seconds"]) / (files - small)
    print(f"    per-file cost (serial, start-up removed): {per_file * 1e3:.2f} ms; the driver's share of a "
          f"Parquet batch (unpickle, join, write): {driver * 1e3:.3f} ms per file, a ceiling of "
          f"{1 / driver:,.0f} files/s for one driver")
    for engine in ("process", "dask"):
        r = rows[engine]
        marginal = (r["seconds"] - r["small"]["seconds"]) / (files - small)  # s per file with 2 workers
        overhead = max(0.0, 2 * marginal - per_file)  # per file, beyond the work itself
        startup = r["small"]["seconds"] - small * marginal
        for workers in (8, 64):
            compute = 1e6 * (per_file + overhead) / workers
            bound = "the workers" if compute >= 1e6 * driver else "the driver"
            hours = (max(compute, 1e6 * driver) + startup) / 3600
            print(f"    estimate, 10^6 files on {workers:2d} {engine} workers: {hours:5.2f} h, bound by {bound} "
                  f"({(per_file + overhead) * 1e3:.2f} ms per file per worker, start-up {startup:.1f} s; the "
                  "files read as fast as from a local disk here)")
    print("    (a local process pool has only this machine's cores; 8 or 64 workers means Dask workers on "
          "other machines, or --chunk larger to keep one driver fed)")
    return rows


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--files", type=int, default=10_000)
    parser.add_argument("--small", type=int, default=None)
    args = parser.parse_args()
    main(args.files, args.small)
