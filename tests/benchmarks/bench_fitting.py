"""Speed of the heat-capacity fits (printed, not a timed test).

Run:  python tests/benchmarks/bench_fitting.py      (or: python -m pytest -m benchmark -s)

Targets (issue "Measured heat capacity"): a fit of Debye + 2 Einstein + Electronic to
300 points ≤ 0.5 s; a low-temperature γ/β fit ≤ 5 ms.  The data are invented: a
seeded, noisy rendering of the model itself, fitted from a start 10–20 % off.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from modeheat import Debye, Einstein, Electronic, Mixture, heat_capacity
from modeheat.fitting import fit, low_temperature_fit
from bench_thermo import best_of  # one timing rule for every benchmark

TRUE = Mixture((Debye(250.0), Einstein(180.0, modes=1.5), Einstein(420.0, modes=1.5), Electronic(2e-3)), atoms=2)
START = Mixture((Debye(220.0), Einstein(150.0, modes=1.5), Einstein(500.0, modes=1.5), Electronic(1e-3)), atoms=2)


def invented_data(rng) -> pd.DataFrame:
    T = np.geomspace(2.0, 400.0, 300)
    c = heat_capacity(TRUE, T)
    sigma = 0.005 * c + 1e-5
    return pd.DataFrame({"T": T, "C": c + sigma * rng.standard_normal(T.size), "sigma": sigma})


def main() -> dict[str, float]:
    rng = np.random.default_rng(20240605)
    data = invented_data(rng)
    t_fit, result = best_of(lambda: fit(START, data))
    worst = max(abs(result.params[k] - TRUE.parameters[k]) / result.stderr[k] for k in result.varied)
    low = data[data["T"] <= 10.0]
    t_low, low_fit = best_of(lambda: low_temperature_fit(low, tmax=10.0), repeat=50)
    print(
        f"fit Debye + 2 Einstein + Electronic, 300 points  [target <= 500 ms]\n"
        f"    {t_fit * 1e3:8.1f} ms   {result.nfev} evaluations   chi2_red {result.chi2_red:.3f}   "
        f"worst |fit - truth| / stderr {worst:.2f}"
    )
    print(
        f"low_temperature_fit, {low_fit.n_points} points  [target <= 5 ms]\n"
        f"    {t_low * 1e3:8.3f} ms   theta_D(0) {low_fit.theta_D0:.1f} +- {low_fit.theta_D0_stderr:.1f} K"
    )
    return {"fit_s": t_fit, "low_temperature_fit_s": t_low, "worst_sigma": worst}


if __name__ == "__main__":
    main()
