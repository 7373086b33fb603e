"""Speed of debye_breakdown on a mixture, beside one thermo() call (printed, not a timed test).

Run:  python tests/benchmarks/bench_breakdown.py      (or: python -m pytest -m benchmark -s)

Target (issue 8): ``debye_breakdown`` of a 6-component mixture (Debye + SineChain + 2
Einstein + Band + Electronic) in ≤ 15 ms (126 ms when the issue was filed; 14.6 ms
measured just before this change, when every root-finding step still built a thermo()
table; 4.3 ms after, on the same shared 2-core machine).  Beside it: ``thermo`` and ``effective_debye_temperature`` of
the same mixture on the same 400 temperatures the breakdown examines, so the cost of
its two root searches shows as the difference.  The mixture is an invented test shape.
"""

from __future__ import annotations

import numpy as np

from modeheat import Band, Debye, Einstein, Electronic, SineChain, effective_debye_temperature, thermo
from modeheat.fitting import debye_breakdown
from bench_thermo import best_of  # one timing rule for every benchmark

MIXTURE = (
    Debye(300.0, modes=3)
    + SineChain(250.0, modes=3)
    + Einstein(180.0, modes=3)
    + Einstein(420.0, modes=3)
    + Band(500.0, 700.0, modes=3)
    + Electronic(1e-3)
)


def main() -> dict[str, float]:
    # A fresh parameter each call, so no cache of an earlier mixture is reused.
    steps = iter(np.linspace(170.0, 190.0, 10_000))

    def changed():
        return MIXTURE.with_parameters({"einstein.theta": float(next(steps))})

    result = debye_breakdown(MIXTURE)
    T = result.table["T"].to_numpy()
    repeat = 20
    t_change, _ = best_of(changed, repeat)
    t_breakdown, _ = best_of(lambda: debye_breakdown(changed()), repeat)
    t_thermo, _ = best_of(lambda: thermo(changed(), T), repeat)
    t_theta, _ = best_of(lambda: effective_debye_temperature(changed(), T), repeat)
    ms = 1e3
    print(
        f"6-component mixture, {T.size} temperatures {T[0]:.3g}–{T[-1]:.4g} K  [target: debye_breakdown <= 15 ms; 126 ms before]\n"
        f"    debye_breakdown                          {t_breakdown * ms:7.3f} ms\n"
        "  beside it, on the same temperatures:\n"
        f"    thermo (C, S, U, F, θ_D table)           {t_thermo * ms:7.3f} ms\n"
        f"    effective_debye_temperature(mixture, T)  {t_theta * ms:7.3f} ms\n"
        f"    with_parameters (in every line above)    {t_change * ms:7.3f} ms\n"
        f"    breakdown / thermo = {t_breakdown / t_thermo:.2f}; the two root searches cost "
        f"{(t_breakdown - t_theta) * ms:.3f} ms beyond θ_D(T) on the grid\n"
        f"  result: {result!r}"
    )
    return {
        "breakdown_s": t_breakdown,
        "thermo_s": t_thermo,
        "theta_s": t_theta,
        "same_theta": float(np.array_equal(effective_debye_temperature(MIXTURE, T), result.table["theta_D"].to_numpy())),
    }


if __name__ == "__main__":
    main()
