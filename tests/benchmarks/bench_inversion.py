"""Speed of the heat-capacity → DOS inversion (printed, not a timed test).

Run:  python tests/benchmarks/bench_inversion.py      (or: python -m pytest -m benchmark -s)

Targets (issue 11): 300 data points on a 200-bin DOS grid, the choice of the strength
included, ≤ 2 s; the 68 % resampling band (50 resamples) ≤ 10 s more.  The data are
invented: a seeded, noisy rendering of a Debye + Einstein + electronic mixture.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from modeheat import Debye, Einstein, Electronic, Mixture, heat_capacity, invert_heat_capacity
from modeheat.units import kelvin_per
from bench_thermo import best_of  # one timing rule for every benchmark

TRUE = Mixture((Debye(220.0), Einstein(450.0, modes=3.0), Electronic(1e-3)), atoms=2)


def invented_data(rng) -> pd.DataFrame:
    T = np.geomspace(2.0, 350.0, 300)
    c = heat_capacity(TRUE, T)
    sigma = 0.005 * c
    frame = pd.DataFrame({"T": T, "C": c + sigma * rng.standard_normal(T.size), "sigma": sigma})
    frame.attrs["atoms"] = 2.0
    return frame


def main() -> dict[str, float]:
    data = invented_data(np.random.default_rng(20261202))
    edges = np.geomspace(1.0, 12.0 * 350.0, 201) / kelvin_per("THz")  # 200 bins
    t_core, core = best_of(lambda: invert_heat_capacity(data, grid=edges, band="none"))
    t_all, full = best_of(lambda: invert_heat_capacity(data, grid=edges, band="resample", samples=50), repeat=1)
    t_band = t_all - t_core
    print(
        f"inversion, 300 points, 200 bins, GCV strength  [target <= 2 s]\n"
        f"    {t_core:8.3f} s   alpha {core.alpha:.3g}   chi2_red {core.chi2_red:.3f}\n"
        f"68 % resampling band, 50 resamples, on top  [target <= 10 s more]\n"
        f"    {t_band:8.3f} s   theta(2) {full.moments.set_index('n').loc[2, 'theta_D']:.1f} "
        f"+- {full.moments.set_index('n').loc[2, 'stderr']:.1f} K (truth {TRUE.moment_debye_temperature(2):.1f} K)"
    )
    return {"core_s": t_core, "band_s": t_band, "chi2_red": core.chi2_red}


if __name__ == "__main__":
    main()
