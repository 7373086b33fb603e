"""Goodness of a model fit: χ²_red against its band, a runs test on the residual signs, a verdict."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from scipy.special import chdtri, gammaln

from .._document import Documented
from ..errors import InputError
from ..models import Dilatation, Electronic
from ._points import _window_text

if TYPE_CHECKING:  # FitResult holds its FitQuality: the import at run time would be circular
    from .model_fit import FitResult

__all__ = ["FitQuality"]


# --- goodness of fit --------------------------------------------------------------------------------
# Every check of FitQuality is made at this significance level: a correct model with the
# right sigma trips any one of them in only 0.1 % of fits.
_LEVEL = 1e-3


def _log_comb(n: int, k: np.ndarray) -> np.ndarray:
    """ln C(n, k) elementwise, −inf where k < 0 or k > n."""
    k = np.asarray(k, dtype=float)
    ok = (k >= 0) & (k <= n)
    kk = np.where(ok, k, 0.0)
    value = gammaln(n + 1.0) - gammaln(kk + 1.0) - gammaln(n - kk + 1.0)
    return np.where(ok, value, -np.inf)


def _runs_test(signs: np.ndarray) -> tuple[int, float, float]:
    """Wald–Wolfowitz runs test on a sequence of signs (True: positive).

    Returns the number of runs R, its expectation 1 + 2·n₊·n₋/n for random order, and
    P(runs ≤ R), exact: for n₊ positives and n₋ negatives in random order,
    P(R = 2k) = 2·C(n₊−1, k−1)·C(n₋−1, k−1)/C(n, n₊) and
    P(R = 2k+1) = [C(n₊−1, k)·C(n₋−1, k−1) + C(n₊−1, k−1)·C(n₋−1, k)]/C(n, n₊).
    Too few runs means residuals of one sign come in blocks: structure.  With only one
    sign present the p-value is 0.5^(n−1), the chance that n independent fair signs agree.
    """
    s = np.asarray(signs, dtype=bool)
    n = s.size
    n_pos = int(np.count_nonzero(s))
    n_neg = n - n_pos
    runs = 1 + int(np.count_nonzero(s[1:] != s[:-1]))
    expected = 1.0 + 2.0 * n_pos * n_neg / n
    if n_pos == 0 or n_neg == 0:
        return runs, expected, 0.5 ** (n - 1)
    r = np.arange(2, runs + 1)
    k = r // 2
    even = 2.0 * np.exp(_log_comb(n_pos - 1, k - 1) + _log_comb(n_neg - 1, k - 1) - _log_comb(n, n_pos))
    odd = np.exp(_log_comb(n_pos - 1, k) + _log_comb(n_neg - 1, k - 1) - _log_comb(n, n_pos)) + np.exp(
        _log_comb(n_pos - 1, k - 1) + _log_comb(n_neg - 1, k) - _log_comb(n, n_pos)
    )
    return runs, expected, float(min(np.sum(np.where(r % 2 == 0, even, odd)), 1.0))


_REGIONS = ("low-T end", "middle", "high-T end")


@dataclass(frozen=True)
class FitQuality(Documented):
    """How well a fit describes its data, in numbers and words (:attr:`FitResult.quality`).

    Attributes
    ----------
    verdict : str — "good", "poor" (χ²_red too high or structured residuals) or
        "sigma overestimated" (χ²_red too low)
    level : float — significance level of every check (0.001)
    dof : int — degrees of freedom ν = n − p
    chi2_red : float — χ²/ν (NaN when unweighted: no sigma to judge it by)
    chi2_red_range : tuple of float — the central 1 − 2·level interval of χ²_red for a
        correct model with the right sigma, χ²_ν quantiles / ν (NaN when unweighted)
    runs : int — runs of equal sign among the residuals in order of T (zeros dropped)
    runs_expected : float — their expectation for random signs, 1 + 2·n₊·n₋/n
    runs_p_value : float — P(this few runs or fewer) for random signs (Wald–Wolfowitz
        runs test, exact); small: residuals of one sign come in blocks
    lag1 : float — lag-1 autocorrelation Σ r_i·r_{i+1}/Σ r_i² of the normalised
        residuals in order of T (≈ 0 for independent noise; the Durbin–Watson statistic
        is ≈ 2·(1 − lag1))
    structured : bool — runs_p_value below `level`
    worst : str — "low-T end", "middle" or "high-T end": the third of the points (in
        order of T) with the largest mean squared normalised residual
    worst_range : tuple of float — lowest and highest T of that third, K
    problems : tuple of str — what is wrong, in words (empty when good)
    advice : tuple of str — what to try, tailored to the model and to `worst`
    """

    verdict: str
    level: float
    dof: int
    chi2_red: float
    chi2_red_range: tuple
    runs: int
    runs_expected: float
    runs_p_value: float
    lag1: float
    structured: bool
    worst: str
    worst_range: tuple
    problems: tuple
    advice: tuple

    def __post_init__(self):
        if self.verdict not in ("good", "poor", "sigma overestimated"):
            raise InputError(f"verdict must be 'good', 'poor' or 'sigma overestimated', not {self.verdict!r}")
        if not 0 < self.level < 0.5 or self.dof < 1:
            raise InputError(f"need 0 < level < 0.5 and dof ≥ 1, not {self.level!r} and {self.dof!r}")


def _quality(result: FitResult) -> FitQuality:
    """The goodness-of-fit checks of a fit result (see :class:`FitQuality`)."""
    res = result.residuals
    order = np.argsort(res["T"].to_numpy(), kind="stable")
    T = res["T"].to_numpy()[order]
    z = res["normalised"].to_numpy()[order]
    dof = result.dof
    if result.weighted:
        chi2_red = result.chi2_red
        # chdtri(ν, q): the χ² with ν degrees of freedom exceeded with probability q
        band = (float(chdtri(dof, 1.0 - _LEVEL) / dof), float(chdtri(dof, _LEVEL) / dof))
    else:
        chi2_red, band = math.nan, (math.nan, math.nan)
    nonzero = z != 0
    if np.count_nonzero(nonzero) >= 2:
        runs, expected, p_runs = _runs_test(z[nonzero] > 0)
    else:  # an exact fit: no signs to test
        runs, expected, p_runs = 0, math.nan, 1.0
    ss = float(z @ z)
    lag1 = float(z[1:] @ z[:-1] / ss) if ss > 0 else 0.0
    thirds = [part for part in np.array_split(np.arange(z.size), 3) if part.size]
    names = _REGIONS if len(thirds) == 3 else (_REGIONS[0], _REGIONS[2])  # n = 2: two halves
    k = int(np.argmax([np.mean(z[part] ** 2) for part in thirds]))
    worst, worst_range = names[k], (float(T[thirds[k][0]]), float(T[thirds[k][-1]]))

    high = chi2_red > band[1]
    low = chi2_red < band[0]
    structured = p_runs < _LEVEL
    problems, advice = [], []
    if high:
        problems.append(
            f"χ²_red = {chi2_red:.3g} is above {band[1]:.3g}, which a correct model with the given sigma exceeds "
            f"in only {100 * _LEVEL:g} % of fits (χ² with {dof} degrees of freedom)"
        )
    if structured:
        problems.append(
            f"the residuals are structured: {runs} runs of equal sign where {expected:.3g} are expected "
            f"(runs test p = {p_runs:.2g}; lag-1 autocorrelation {lag1:+.2f})"
        )
    if high or structured:
        where = "in the middle" if worst == "middle" else f"at the {worst}"
        problems.append(f"the misfit is largest {where} ({worst_range[0]:.3g}–{worst_range[1]:.3g} K)")
        advice += _advice(result, worst) if structured else []
        if high and not structured:
            advice.append(
                f"the residuals look random: sigma may be underestimated (by about ×{math.sqrt(chi2_red):.2g})"
            )
    if low:
        problems.append(
            f"χ²_red = {chi2_red:.3g} is below {band[0]:.3g}, which a correct model with the given sigma falls "
            f"under in only {100 * _LEVEL:g} % of fits"
        )
        advice.append(
            f"sigma is probably overestimated (by about ×{1 / math.sqrt(chi2_red):.2g}), so the standard errors "
            "are too large; or the points are not independent (smoothed or interpolated data)"
        )
    verdict = "poor" if high or structured else "sigma overestimated" if low else "good"
    return FitQuality(
        verdict=verdict,
        level=_LEVEL,
        dof=int(dof),
        chi2_red=float(chi2_red),
        chi2_red_range=band,
        runs=int(runs),
        runs_expected=float(expected),
        runs_p_value=float(p_runs),
        lag1=lag1,
        structured=bool(structured),
        worst=worst,
        worst_range=worst_range,
        problems=tuple(problems),
        advice=tuple(advice),
    )


def _advice(result: FitResult, worst: str) -> list[str]:
    """What to try against a systematic misfit, by where it is largest and what the model holds."""
    kinds = {type(c) for c in result.model.components}
    if worst == "low-T end":
        tips = []
        if not 0 < result.model.modeset().theta_D0 < math.inf:
            tips.append("an acoustic Debye or SineChain branch (no branch of the model gives the T³ law)")
        if Electronic not in kinds:
            tips.append("an Electronic term (γT dominates a metal's C at the lowest T)")
        tips.append(
            "a low-lying Einstein or Schottky term if C/T³ rises there, or a higher tmin "
            f"(window {_window_text(*result.window)})"
        )
    elif worst == "middle":
        tips = [
            "another component (an Einstein or Band term for optical modes, a SineChain for dispersion), or free "
            "mode counts (name two or more '.modes' keys in vary)"
        ]
    else:
        dil = [c for c in result.model.components if isinstance(c, Dilatation)]
        if not dil:
            tips = ["a Dilatation component (C_p − C_v grows at high T)"]
        elif f"{dil[0].name}.A" not in result.varied:
            tips = [f"let {dil[0].name}.A vary (C_p − C_v)"]
        else:
            tips = []
        tips.append(f"a lower tmax (window {_window_text(*result.window)}): anharmonicity grows at high T")
    return tips
