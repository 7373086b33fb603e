"""Side-by-side speed ratios of the thermodynamics engine (not a timed test).

Run:  python tests/benchmarks/bench_thermo.py      (or: python -m pytest -m benchmark -s)

Each case times modeheat and a straightforward baseline in the same process and
prints the ratio, with the accuracy against direct summation.  Targets (issue
"Foundation"): (a) ≥ 20×, (b) ≥ 80×, (c) ≥ 300× at ≤ 1e-9 relative; accuracy of
(a) and (b) ≤ 1e-6 relative.  The spectra are invented test shapes.
"""

from __future__ import annotations

import math
import time

import numpy as np
from scipy.optimize import brentq

from modeheat import Spectrum, effective_debye_temperature, thermo
from modeheat.engine.special import debye_cv
from modeheat.units import R


def best_of(fn, repeat=3):
    """Best wall time of `repeat` calls, and the last result (the minimum filters out
    interruptions by other work on a shared machine; both sides get the same rule)."""
    best, out = math.inf, None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t)
    return best, out


def direct_table(spectrum, T):
    """Reference: C_v by direct summation over the spectrum's own nodes and branches."""
    ms = spectrum.modeset()
    out = np.zeros_like(T)
    for i, t in enumerate(T):
        x = ms.theta / t
        out[i] = np.dot(ms.weight, x * x * np.exp(-x) / np.expm1(-x) ** 2)
    for branch in ms.branches:
        out += branch.terms(T)[0]
    return R * out


def loop_cv_bins(theta, g_dtheta, T):
    """Baseline: per-temperature numpy loop, C_v alone, from bins (Einstein sum)."""
    out = np.empty_like(T)
    for i, t in enumerate(T):
        x = theta / t
        out[i] = R * np.sum(g_dtheta * x * x * np.exp(-x) / np.expm1(-x) ** 2)
    return out


def invented_dos(n, rng):
    """An invented two-branch density of states on n bins, in THz."""
    f = np.linspace(0.0, 20.0, n)
    acoustic = np.where(f < 8, f**2, 64 * np.exp(-((f - 8) / 1.5) ** 2))
    optical = 40 * np.exp(-((f - 15) / 1.2) ** 2)
    return f, acoustic + optical + 0.01 * rng.random(n) * (f > 0)


def case_a(rng, T):
    f, g = invented_dos(10_000, rng)
    sp = Spectrum(f, g, unit="THz", atoms=2)
    t_ours, table = best_of(lambda: thermo(sp, T))
    pos = f > 0
    theta = f[pos] * 47.99243073366221
    gd = sp.density[pos] * (f[1] - f[0])
    t_base, _ = best_of(lambda: loop_cv_bins(theta, gd, T), repeat=3)
    ref = direct_table(sp, T)
    err = np.max(np.abs(table["Cv"].to_numpy() - ref) / ref)
    return t_base / t_ours, t_ours, t_base, err


def case_b(rng, T):
    n = 1_000_000
    # invented q-mesh-like mode list: Debye-like acoustic modes and an optical band
    acoustic = 6.0 * rng.random(n // 2) ** (1 / 3)
    optical = rng.normal(11.0, 0.6, n - n // 2)
    modes = np.concatenate([acoustic, optical])

    def ours():
        return thermo(Spectrum.from_modes(modes, unit="THz", atoms=2), T)

    t_ours, table = best_of(ours, repeat=5)
    theta = modes * 47.99243073366221
    w = np.full(n, 6.0 / n)
    t_base, _ = best_of(lambda: loop_cv_bins(theta, w, T), repeat=1)
    ref = direct_table(Spectrum.from_modes(modes, unit="THz", atoms=2), T)
    err = np.max(np.abs(table["Cv"].to_numpy() - ref) / ref)
    return t_base / t_ours, t_ours, t_base, err


def _scalar_debye_cv(x: float) -> float:
    """A fast scalar Debye C_v per mode (series / exponential sum), the baseline's own."""
    if x < 2.0:
        # 1 − x²/20 + x⁴/560 − x⁶/18144 + x⁸/633600 − …
        x2 = x * x
        return 1 - x2 / 20 + x2**2 / 560 - x2**3 / 18144 + x2**4 / 633600 - x2**5 / 23063040
    tail = 0.0
    for k in range(1, 30):
        q = math.exp(-k * x)
        if q < 1e-18:
            break
        tail += q * (x**3 / k + 3 * x * x / k**2 + 6 * x / k**3 + 6 / k**4)
    d3 = 3.0 / x**3 * (math.pi**4 / 15 - tail)
    return 4 * d3 - 3 * x * math.exp(-x) / -math.expm1(-x)


def case_c(rng):
    T = np.linspace(2.0, 300.0, 1000)
    theta_true = 250 + 150 * rng.random(T.size)
    cv = 3 * R * debye_cv(theta_true / T)

    def baseline():
        return np.array(
            [brentq(lambda th: 3 * R * _scalar_debye_cv(th / t) - c, 1e-3 * t, 1e4 * t, xtol=1e-12) for t, c in zip(T, cv)]
        )

    t_ours, ours = best_of(lambda: effective_debye_temperature(T, cv), repeat=20)
    t_base, base = best_of(baseline, repeat=3)
    err = np.max(np.abs(ours - theta_true) / theta_true)
    return t_base / t_ours, t_ours, t_base, err


def case_mixture():
    """Six components at 400 temperatures, the widgets' slider loop (target ≤ 2 ms)."""
    from modeheat import Band, Debye, Einstein, Electronic, SineChain

    mix = (
        Debye(250.0) + SineChain(300.0, modes=2) + Einstein(400.0, modes=3) + Einstein(500.0, modes=2)
        + Band(600.0, 650.0, modes=2) + Electronic(2e-3)
    )
    T = np.linspace(1.0, 400.0, 400)
    t, _ = best_of(lambda: thermo(mix, T), repeat=50)
    return t


def main() -> dict[str, float]:
    rng = np.random.default_rng(20261201)
    T = np.linspace(1.0, 1000.0, 1000)
    rows = {
        "(a) table, 10^4-bin DOS, 1000 T  [target >= 20x]": case_a(rng, T),
        "(b) table from 10^6 modes, build included  [target >= 80x]": case_b(rng, T),
        "(c) effective Debye temperature, 1000 points vs brentq  [target >= 300x]": case_c(rng),
    }
    for label, (ratio, ours, base, err) in rows.items():
        print(f"{label}\n    modeheat {ours * 1e3:9.2f} ms   baseline {base * 1e3:9.1f} ms   "
              f"ratio {ratio:8.1f}x   max rel. error {err:.1e}")
    t_mix = case_mixture()
    print(f"(d) thermo of a 6-component mixture at 400 T  [target <= 2 ms]\n    modeheat {t_mix * 1e3:9.2f} ms")
    return {k: v[0] for k, v in rows.items()}


if __name__ == "__main__":
    main()
