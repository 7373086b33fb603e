"""Write the demonstration phonon DOS of an invented compound, "zorbium lumide" (ZbLm).

Zorbium lumide is INVENTED FOR DEMONSTRATION: it is not a real material, and its
numbers describe nothing.  It has 2 atoms per formula unit, a heavy one (A = Zb) and
a light one (B = Lm), and a DOS of the usual shape:

* an acoustic part (3 modes): g ∝ ν² up to a van-Hove-like peak at 4.8 THz, falling
  as a square root to its cut-off at 6.4 THz;
* a gap from 6.4 to 8.8 THz;
* an optical band (3 modes) from 8.8 to 12.6 THz, a skewed semi-ellipse.

The heavy atom carries 3/4 of the acoustic and 1/4 of the optical modes, so each
partial DOS integrates to 3 and the total to 6 states per formula unit.

Run ``python demo_spectra/make_demo.py`` to rewrite the file; the output is fully
deterministic (no random numbers), and tests/test_demo_spectra.py checks that the
committed file is what this script writes.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
FILENAME = "zorbium_lumide_dos.txt"

ROWS = 401
NU_MAX = 14.0  # THz, the last row; the spectrum is zero above 12.6 THz
PEAK, CUTOFF = 4.8, 6.4  # THz, acoustic van-Hove-like peak and cut-off
OPTICAL = (8.8, 12.6)  # THz, optical band edges
HEAVY_SHARE = {"acoustic": 0.75, "optical": 0.25}  # fraction of each band on atom A

HEADER = f"""\
# Phonon density of states of "zorbium lumide", ZbLm.
# INVENTED FOR DEMONSTRATION: not a real material. Use it only to try modeheat.
# 2 atoms per formula unit: A = Zb (heavy), B = Lm (light).
# Columns: frequency in THz; total, A and B partial DOS in states per THz per formula unit.
# The total integrates to 6 (3 modes x 2 atoms), each partial to 3 (trapezoid rule on this grid).
# Written by demo_spectra/make_demo.py ({ROWS} rows); rerun it to reproduce this file.
frequency (THz)  total  A  B
"""


def _normalised(nu: np.ndarray, g: np.ndarray, modes: float) -> np.ndarray:
    area = 0.5 * float(np.sum((g[1:] + g[:-1]) * np.diff(nu)))  # trapezoid rule
    return g * (modes / area)


def demo_dos() -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Frequency [THz], total, A and B partial DOS [states/THz per formula unit]."""
    nu = np.linspace(0.0, NU_MAX, ROWS)
    acoustic = np.where(
        nu <= PEAK,
        nu**2,
        PEAK**2 * np.sqrt(np.clip((CUTOFF - nu) / (CUTOFF - PEAK), 0.0, None)),
    )
    lo, hi = OPTICAL
    inside = np.clip((nu - lo) * (hi - nu), 0.0, None)
    optical = np.sqrt(inside) * (1.0 + 0.6 * (nu - lo) / (hi - lo))
    acoustic = _normalised(nu, acoustic, 3.0)
    optical = _normalised(nu, optical, 3.0)
    a = HEAVY_SHARE["acoustic"] * acoustic + HEAVY_SHARE["optical"] * optical
    b = (1 - HEAVY_SHARE["acoustic"]) * acoustic + (1 - HEAVY_SHARE["optical"]) * optical
    return nu, a + b, a, b


def render() -> str:
    """The file's text."""
    nu, total, a, b = demo_dos()
    lines = [f"{f:8.4f}  {t:.6e}  {x:.6e}  {y:.6e}" for f, t, x, y in zip(nu, total, a, b)]
    return HEADER + "\n".join(lines) + "\n"


def main(argv: list[str]) -> int:
    out = Path(argv[1]) if len(argv) > 1 else HERE
    out.mkdir(parents=True, exist_ok=True)
    (out / FILENAME).write_text(render(), encoding="utf-8")
    print(f"wrote {out / FILENAME}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
