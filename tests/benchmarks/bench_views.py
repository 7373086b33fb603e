"""Speed of a view's update after one parameter changes (printed, not a timed test).

Run:  python tests/benchmarks/bench_views.py      (or: python -m pytest -m benchmark -s)

Target (issue 8): a 6-component mixture with one parameter changed → C, S and θ_D(T)
at 400 temperatures and the plot-ready DOS (2,000 points) in ≤ 5 ms together.  The
baselines beside it are the calls a view would otherwise make: ``heat_capacity``,
``thermo`` and ``Mixture.spectrum()``.  The mixture is an invented test shape.
"""

from __future__ import annotations

import numpy as np

from modeheat import Band, Debye, Einstein, Electronic, SineChain, heat_capacity, thermo
from modeheat.representations import plot_dos, temperature_curves
from bench_thermo import best_of  # one timing rule for every benchmark

MIXTURE = (
    Debye(300.0, modes=3)
    + SineChain(250.0, modes=3)
    + Einstein(180.0, modes=3)
    + Einstein(420.0, modes=3)
    + Band(500.0, 700.0, modes=3)
    + Electronic(1e-3)
)
T = np.geomspace(1.0, 1000.0, 400)


def main() -> dict[str, float]:
    # A fresh parameter each call, so no cache of an earlier mixture is reused.
    steps = iter(np.linspace(170.0, 190.0, 10_000))

    def changed():
        return MIXTURE.with_parameters({"einstein.theta": float(next(steps))})

    def update():
        mix = changed()
        return temperature_curves(mix, T), plot_dos(mix, unit="THz", points=2000)

    repeat = 30
    t_change, _ = best_of(changed, repeat)
    t_curves, curves = best_of(lambda: temperature_curves(changed(), T), repeat)
    t_dos, dos = best_of(lambda: plot_dos(changed(), unit="THz", points=2000), repeat)
    t_total, _ = best_of(update, repeat)
    t_cv, _ = best_of(lambda: heat_capacity(changed(), T), repeat)
    t_thermo, _ = best_of(lambda: thermo(changed(), T), repeat)
    t_render, _ = best_of(lambda: changed().spectrum(), 5)
    ms = 1e3
    print(
        "6-component mixture, one parameter changed, 400 temperatures, 2,000-point DOS  [target <= 5 ms together]\n"
        f"    with_parameters                      {t_change * ms:7.3f} ms\n"
        f"    temperature_curves (C, S, θ_D, …)    {t_curves * ms:7.3f} ms\n"
        f"    plot_dos (2,000 points)              {t_dos * ms:7.3f} ms\n"
        f"    together (one update)                {t_total * ms:7.3f} ms\n"
        "  beside it:\n"
        f"    heat_capacity alone                  {t_cv * ms:7.3f} ms\n"
        f"    thermo (C, S, U, F, θ_D)             {t_thermo * ms:7.3f} ms\n"
        f"    Mixture.spectrum() ({changed().spectrum().frequency.size} points)      {t_render * ms:7.3f} ms\n"
        f"    beyond C (θ_D(T), S, U, F, the table): temperature_curves − heat_capacity = {(t_curves - t_cv) * ms:.3f} ms"
    )
    return {
        "curves_s": t_curves,
        "dos_s": t_dos,
        "total_s": t_total,
        "rows": float(len(curves)),
        "points": float(len(dos)),
        "modes": float(dos.attrs["modes"]["total"]),
    }


if __name__ == "__main__":
    main()
