"""Speed of the quasi-harmonic table (printed, not a timed test).

Run:  python tests/benchmarks/bench_quasiharmonic.py      (or: python -m pytest -m benchmark -s)

Target (issue 12): 6 volumes × 10⁴-bin spectra × 500 temperatures, equation-of-state
fits included, ≤ 1 s.  The spectra are invented: Debye-like densities with a bump, their
frequencies scaled as V^−2 between volumes; the static energy a Birch–Murnaghan curve.
"""

from __future__ import annotations

import numpy as np

from modeheat import Spectrum, VolumeSet, quasi_harmonic
from modeheat.quasiharmonic import birch_murnaghan_energy
from bench_thermo import best_of  # one timing rule for every benchmark

VOLUMES = np.linspace(38.0, 43.0, 6)


def invented_set(bins: int = 10_000) -> VolumeSet:
    spectra = []
    for v in VOLUMES:
        top = 8.0 * (v / 40.0) ** -2.0
        nu = np.linspace(0.0, top, bins)
        g = nu**2 * (1.0 + 2.0 * np.exp(-(((nu - 0.7 * top) / (0.05 * top)) ** 2)))
        spectra.append(Spectrum(nu, g, unit="THz", atoms=2))
    return VolumeSet(VOLUMES, birch_murnaghan_energy(VOLUMES, -10.0, 40.0, 0.6, 4.5), spectra)


def main() -> dict[str, float]:
    volume_set = invented_set()
    T = np.linspace(1.0, 1000.0, 500)
    times = {}
    # cold: the spectra built from arrays and evaluated for the first time, as a user's first call
    times["cold, auto"], _ = best_of(lambda: quasi_harmonic(invented_set(), T, warn=False))
    for eos in ("birch-murnaghan", "vinet", "auto"):
        times[eos], table = best_of(lambda: quasi_harmonic(volume_set, T, eos=eos, warn=False))
    print("quasi-harmonic table: 6 volumes x 10^4 bins x 500 temperatures, EOS fits included  [target <= 1 s]")
    for eos, t in times.items():
        print(f"    eos={eos:16s} {t * 1e3:8.1f} ms" + ("   (spectra built from arrays, first evaluation)" if "cold" in eos else ""))
    print(f"    (gamma at 1000 K: {table['gamma'].iloc[-1]:.4f}; the spectra scale as V^-2)")
    return times | {"gamma": float(table["gamma"].iloc[-1])}


if __name__ == "__main__":
    main()
