"""Start-up time of the command and the package, side by side (not a timed test).

Run:  python tests/benchmarks/bench_startup.py      (or: python -m pytest -m benchmark -s)

Target (issue "batches", item 2): ``modeheat --help`` ≤ 1.5 × ``python -c "import
numpy, pandas"``, the floor any pandas-based tool pays.  Each figure is the best wall
time of several fresh interpreters (see ``best_of``), run from this source tree.  The
third line shows ``import modeheat``, which loads only the errors until a name is used.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

from bench_thermo import best_of  # one timing rule for every benchmark

ROOT = Path(__file__).resolve().parents[2]
TARGET = 1.5
CASES = {
    'python -c "import numpy, pandas"': ["-c", "import numpy, pandas"],
    "modeheat --help": ["-m", "modeheat", "--help"],
    "python -c \"import modeheat\"": ["-c", "import modeheat"],
}


def _start(args: list[str]) -> None:
    subprocess.run([sys.executable, *args], cwd=ROOT, check=True, stdout=subprocess.DEVNULL)


def main(repeat: int = 7) -> dict[str, float]:
    times = {label: best_of(lambda a=args: _start(a), repeat=repeat)[0] for label, args in CASES.items()}
    floor = times['python -c "import numpy, pandas"']
    ratio = times["modeheat --help"] / floor
    print(f"start-up, best of {repeat} fresh interpreters")
    for label, seconds in times.items():
        print(f"    {label:34s} {seconds * 1e3:7.0f} ms   {seconds / floor:5.2f} x numpy+pandas")
    print(f"modeheat --help / numpy+pandas = {ratio:.2f}  [target <= {TARGET:g}]  {'ok' if ratio <= TARGET else 'OVER'}")
    return {"help_s": times["modeheat --help"], "numpy_pandas_s": floor, "ratio": ratio}


if __name__ == "__main__":
    main()
