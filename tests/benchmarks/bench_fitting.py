"""Speed of the heat-capacity fits (printed, not a timed test).

Run:  python tests/benchmarks/bench_fitting.py      (or: python -m pytest -m benchmark -s)

Targets (issue "Measured heat capacity"): a fit of Debye + 2 Einstein + Electronic to
300 points ≤ 0.5 s; a low-temperature γ/β fit ≤ 5 ms.  (issue 8) A fit of a computed
DOS's frequency scale + γ + A to 300 points ≤ 50 ms, printed beside a fit of a Debye
θ + γ + A to the same points.  The data are invented: a seeded, noisy rendering of the
model itself (for the DOS fit: the demo quellium DOS, itself invented, on frequencies
× 1.04), fitted from a start 4–50 % off.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from pathlib import Path

from modeheat import Debye, Dilatation, Einstein, Electronic, Mixture, PhononDOS, heat_capacity, read_spectrum
from modeheat.fitting import fit, low_temperature_fit
from bench_thermo import best_of  # one timing rule for every benchmark

DEMO_DOS = Path(__file__).resolve().parents[2] / "demo_spectra" / "quellium_dos.txt"

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
    t_dos, dos_fit, t_debye, debye_fit = spectrum_fits(rng)
    scale = dos_fit.params["dos.scale"]
    print(
        f"fit a computed DOS's scale + gamma + A, 300 points  [target <= 50 ms]\n"
        f"    {t_dos * 1e3:8.1f} ms   {dos_fit.nfev} evaluations   scale {scale:.5f} +- "
        f"{dos_fit.stderr['dos.scale']:.5f} (truth 1.04)   chi2_red {dos_fit.chi2_red:.3f}\n"
        f"fit a Debye theta + gamma + A, the same points (side by side)\n"
        f"    {t_debye * 1e3:8.1f} ms   {debye_fit.nfev} evaluations   ratio DOS/Debye {t_dos / t_debye:.2f}"
    )
    return {
        "fit_s": t_fit,
        "low_temperature_fit_s": t_low,
        "worst_sigma": worst,
        "dos_fit_s": t_dos,
        "debye_fit_s": t_debye,
        "dos_scale_sigma": abs(scale - 1.04) / dos_fit.stderr["dos.scale"],
    }


def spectrum_fits(rng):
    """(time, result) of fitting the demo DOS's scale + γ + A, and of a Debye θ + γ + A."""
    dos = read_spectrum(DEMO_DOS)
    truth = PhononDOS(dos, scale=1.04) + Electronic(1e-3) + Dilatation(2e-6)
    T = np.geomspace(2.0, 400.0, 300)
    cp = truth["dilatation"].cp_from_cv(T, heat_capacity(truth, T))
    sigma = 0.005 * cp
    data = pd.DataFrame({"T": T, "C": cp + sigma * rng.standard_normal(T.size), "sigma": sigma})
    t_dos, dos_fit = best_of(lambda: fit(dos + Electronic(5e-4) + Dilatation(1e-6), data))
    t_debye, debye_fit = best_of(lambda: fit(Debye(300.0) + Electronic(5e-4) + Dilatation(1e-6), data))
    return t_dos, dos_fit, t_debye, debye_fit


if __name__ == "__main__":
    main()
