"""Speed of the Explorer's kernel side: slider change → marks assigned (printed, not a timed test).

Run from the repository root:  PYTHONPATH=. python tests/benchmarks/bench_explorer.py

Target (issue 9): ≤ 15 ms from a slider's new value to every mark assigned, for
- a 6-component mixture at 400 temperatures (the mixture of bench_views.py), and
- a 5,000-bin DOS with its frequency-scale slider (plus electronic and dilatation terms
  and a data set, as in the demo).
The time covers the whole callback: new state, editor sync, the spectrum view's
``plot_dos`` and the heat-capacity view's ``temperature_curves`` with the data's
residuals, and the float32 arrays handed to bqplot.  Beside it: the backend calls alone,
so the widget layer's own share shows.  Spectrum and data are invented test shapes.
"""

from __future__ import annotations

import time

import numpy as np
import pandas as pd

from modeheat import Dilatation, Electronic, PhononDOS, Spectrum
from modeheat.representations import plot_dos, temperature_curves
from modeheat.widgets import Explorer
from bench_thermo import best_of  # one timing rule for every benchmark
from bench_views import MIXTURE


def _big_dos() -> Spectrum:
    """An invented 5,000-bin density: ω² up to 4 THz, then an optical hump (a test shape)."""
    f = np.linspace(0.0, 10.0, 5000)
    g = np.where(f < 4.0, 0.1 * f**2, 0.0) + 1.5 * np.exp(-(((f - 7.5) / 0.8) ** 2))
    return Spectrum(f, g, unit="THz", atoms=2, name="invented-5000")


def _data() -> pd.DataFrame:
    """Invented C points on 100 temperatures (a test shape: the residual panel's work)."""
    T = np.geomspace(2.0, 300.0, 100)
    frame = pd.DataFrame({"T": T, "C": 50.0 * T**3 / (T**3 + 1e5), "sigma": np.full(100, 0.01)})
    frame.attrs["atoms"] = 2
    return frame


def _slider_time(explorer: Explorer, key: str, values) -> tuple[float, float]:
    """(best, median) seconds over 30 slider moves, each to a new value."""
    slider = explorer.editor.sliders[key]
    times = []
    for value in values[:30]:
        t = time.perf_counter()
        slider.value = float(value)
        times.append(time.perf_counter() - t)
    assert explorer.status.kind == "info", explorer.status.message
    return min(times), float(np.median(times))


def main() -> dict[str, float]:
    ms = 1e3
    mix = Explorer(model=MIXTURE)
    t_mix, m_mix = _slider_time(mix, "einstein.theta", np.linspace(170.0, 190.0, 30))
    T = mix.state.temperatures()
    t_mix_backend, _ = best_of(
        lambda: (temperature_curves(mix.state.model, T), plot_dos(mix.state.model)), 30)

    dos = _big_dos()
    model = PhononDOS(dos, name="dos") + Electronic(gamma=1e-3) + Dilatation(A=2e-6)
    big = Explorer(spectrum=dos, model=model, data=_data(), atoms=2)
    t_dos, m_dos = _slider_time(big, "dos.scale", np.linspace(0.95, 1.05, 30))
    T2 = big.state.temperatures()
    t_dos_backend, _ = best_of(
        lambda: (temperature_curves(big.state.model, T2), plot_dos(big.state.model)), 30)
    print(
        "Explorer: slider change → marks assigned, 30 moves  [target <= 15 ms]\n"
        "                                                 best     median   backend curves + DOS alone (best)\n"
        f"    6-component mixture, 400 temperatures   {t_mix * ms:7.2f} ms {m_mix * ms:7.2f} ms   {t_mix_backend * ms:6.2f} ms\n"
        f"    5,000-bin DOS scale, + 100 data points  {t_dos * ms:7.2f} ms {m_dos * ms:7.2f} ms   {t_dos_backend * ms:6.2f} ms"
    )
    return {"mixture_s": m_mix, "dos_s": m_dos}


if __name__ == "__main__":
    main()
