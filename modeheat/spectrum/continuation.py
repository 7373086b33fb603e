"""The low-temperature continuation of a spectrum: one resolver for every kind of input.

The three :class:`~modeheat.spectrum.Spectrum` constructors (sampled density, list of
modes, histogram) hand the bottom of their data to one resolver here; the method and its
measured accuracy are described in :mod:`modeheat.spectrum.core`.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np

from ..engine.modeset import DebyeBranch, ModeSet
from ..errors import InputError, SpectrumWarning
from ..units import check_kelvin, kelvin_per

__all__ = ["LOW_T_CHOICES"]

_GAUSS = np.polynomial.legendre.leggauss(4)  # Gauss–Legendre nodes per sampled interval

#: The low-temperature continuations that can be asked for by name (else a θ_D(0) in K).
LOW_T_CHOICES = ("auto", "fit", "extrapolate", "off")


def _check_low_t(low_t):
    if isinstance(low_t, str):
        if low_t in LOW_T_CHOICES:
            return low_t
        raise InputError(
            f"low_t must be 'auto', 'fit', 'extrapolate', 'off' or a Debye temperature in K, not {low_t!r}"
        )
    try:
        value = float(low_t)
    except (TypeError, ValueError):
        raise InputError(
            f"low_t must be 'auto', 'fit', 'extrapolate', 'off' or a Debye temperature in K, not {low_t!r}"
        ) from None
    if not (math.isfinite(value) and value > 0):
        raise InputError(f"a Debye temperature for low_t must be positive, not {low_t!r}")
    return check_kelvin("low_t", value)


def _interval_nodes(x: np.ndarray, g: np.ndarray, lo: float, ratio_form: np.ndarray):
    """Gauss–Legendre nodes and weights of ∫ g over the sampled intervals above `lo`.

    Interval i spans [x_i, x_i+1]; where ratio_form[i] the density is linear in g/x²,
    else linear in g.  Parts of intervals below `lo` are left out.
    """
    a, b = x[:-1], x[1:]
    ga, gb = g[:-1], g[1:]
    a_eff = np.maximum(a, lo)
    keep = b > a_eff
    a, b, ga, gb, a_eff, ratio_form = a[keep], b[keep], ga[keep], gb[keep], a_eff[keep], ratio_form[keep]
    t, w = _GAUSS
    half = 0.5 * (b - a_eff)
    nodes = (0.5 * (a_eff + b))[:, None] + half[:, None] * t[None, :]
    frac = (nodes - a[:, None]) / (b - a)[:, None]
    with np.errstate(divide="ignore", invalid="ignore"):
        rb = gb / b**2
        # An interval that starts at ω = 0 has no g/ω² there: it continues the right end's.
        ra = np.where(a > 0, ga / np.where(a > 0, a, 1.0) ** 2, rb)
    dens_ratio = nodes**2 * (ra[:, None] + (rb - ra)[:, None] * frac)
    dens_lin = ga[:, None] + (gb - ga)[:, None] * frac
    dens = np.where(ratio_form[:, None], dens_ratio, dens_lin)
    return nodes.ravel(), (dens * half[:, None] * w[None, :]).ravel()

# --- the low-temperature continuation: one resolver for every kind of input -------------------
#
# Each constructor hands the bottom of its data to `_resolve` as mode counts at sample
# points (`_LowEnd`), gets back a `_Continuation` (method, cut-off ω_c and the law below it),
# keeps its own nodes above ω_c and lets `_continued` add the branch below.

_WINDOW_TOPS = (0.008, 0.011, 0.015, 0.020, 0.025)  # fit windows end where the data hold these fractions of 3 modes
_WINDOW_STARTS = (0.20, 0.25, 0.30, 0.35, 0.40)  # ... and start at these fractions of their end
_ARTEFACT = 0.03  # ω_c of a density: its fitted resolution term is below 3 % of the ω² law's mode count
_EXPONENT = (2.4, 4.5)  # N(ω) ∝ ω^p with p in this range passes for an ω² bottom
_MIN_POSITIVE = 4  # sample points holding modes needed to judge the bottom at all
_MAX_MODE_POINTS = 2048  # a list of modes is counted at about this many frequencies


def _octave_nodes(octaves: int = 6) -> tuple[np.ndarray, np.ndarray]:
    """Nodes t and weights of ∫₀¹ t⁴ dt by Gauss–Legendre on each octave [2^-(j+1), 2^-j].

    Below the last octave lies 2^-(5·octaves) of the integral; the weights are scaled to
    sum to 1/5 exactly, so the law's nodes carry exactly its modes.
    """
    t, w = _GAUSS
    lo = 0.5 ** np.arange(1, octaves + 1)
    half = 0.5 * lo  # each octave [lo, 2·lo] has half-width lo/2
    nodes = (1.5 * lo)[:, None] + half[:, None] * t[None, :]
    weights = (nodes**4 * half[:, None] * w[None, :]).ravel()
    return nodes.ravel(), weights * (0.2 / weights.sum())


_LAW_NODES = _octave_nodes()  # the ω⁴ part of the law on [0, ω_c], in units of ω_c


@dataclass(frozen=True)
class _LowEnd:
    """The bottom of a spectrum as the resolver sees it.

    theta : ndarray — sample points in K, increasing; theta[0] = 0 where the data reach 0
    count : ndarray — modes below each point, normalised to 3·atoms in all
    kind : str — how the counts came about, which decides the resolution term fitted
        with the law:

        * "density" — a density interpolated between the points: the fit takes each
          interval's mean density, plus a free constant density for what the unresolved
          bottom spreads upwards (a tetrahedron DOS undercounts it, a smeared one leaks
          states down into it; either way a constant in g to first order);
        * "bins" — exact counts at bin edges: the fit takes the counts, plus a free
          constant count for what the first bins hold beyond the law (Γ's zero modes);
        * "modes" — a list of modes, counted at each distinct frequency up to half its
          own weight: the count at ω = 0 (zero modes) is known, so the fit takes the
          counts above it with no free constant.
    """

    theta: np.ndarray
    count: np.ndarray
    kind: str


@dataclass(frozen=True)
class _Continuation:
    """What the resolver chose.

    method : "auto" (the ω² law fitted above the unresolved bottom), "fit" (an ω² branch
        with the data's own mode count below ω_c), "extrapolate", "theta" (θ_D(0) given)
        or "off"
    cutoff : float — ω_c in K (0 when off)
    a, b : float — below ω_c, g = a·θ² + b·θ⁴ in modes per K (normalised); unused by "fit"
    theta : float — θ_D(0) in K: the one given, or for "off" the data's own estimate
    """

    method: str
    cutoff: float = 0.0
    a: float = 0.0
    b: float = 0.0
    theta: float = math.inf


@dataclass(frozen=True)
class _BottomFit:
    """A fit of the law: g = a·θ² + b·θ⁴ (modes per K, normalised) below ω_c = `cutoff` in K."""

    a: float
    b: float
    cutoff: float


def _acoustic_doubt(low: _LowEnd) -> str | None:
    """Why the bottom of the data is not an ω² rise (None when it is, or when too coarse to tell).

    With enough points below the top of the fit range, the mode count's exponent between
    half that top and the top decides; finely sampled data with no modes below half the
    top have a gap; coarse data have one when at least two sample points above 0 come
    before the first modes.
    """
    x, n = low.theta, low.count
    pos = np.flatnonzero(n > n[0])
    if pos.size < _MIN_POSITIVE:
        return f"too few sampled modes ({pos.size} point(s) with modes) to judge the low-frequency end"
    gap = f"no modes below {x[pos[0] - 1] if pos[0] > 0 else x[pos[0]]:.4g} K (a gap, or an optical peak at the bottom)"
    top = float(np.interp(3.0 * _WINDOW_TOPS[-1], n, x))
    lower_half = np.count_nonzero(x[pos] < 0.5 * top)
    if lower_half >= 4:
        upper = float(np.interp(top, x, n)) - n[0]
        lower = float(np.interp(0.5 * top, x, n)) - n[0]
        p = math.log2(upper / lower) if lower > 0 else math.inf
        if not _EXPONENT[0] <= p <= _EXPONENT[1]:
            return f"the mode count below {top:.4g} K grows as ω^{p:.2g}, not as ω³ (a gap or no acoustic branch)"
        return None
    if lower_half == 0 and np.count_nonzero(x[pos] <= top) >= 4:
        return gap
    if pos[0] > 2 and x[pos[0] - 2] > 0:
        return gap
    return None


def _fit_bottom(low: _LowEnd, a_fixed: float | None) -> _BottomFit | None:
    """The ω² + ω⁴ law fitted above the unresolved bottom, or None if the data are too coarse.

    Each window [r·top, top] (top where the data hold a fraction q of 3 modes, for every
    q in _WINDOW_TOPS and r in _WINDOW_STARTS) gets a least-squares fit of the law plus
    the resolution term of `low.kind`, with weights t^(−3/2) on counts (∝ t³) and on mean
    densities (∝ t²), t = θ/top (mid-interval for a density); measured on fcc q-mesh DOS,
    these weigh the scattered lowest shells better than 1/t or 1/t².  The result is the fit with the
    median a (median b when a is given), over the windows with enough points; there must
    be more such windows than not.  All windows are solved as one batch.
    """
    tops = np.interp(3.0 * np.asarray(_WINDOW_TOPS), low.count, low.theta)
    scale = float(tops.max())
    if not scale > 0:
        return None
    # only the points around the windows matter (one below, for the density's intervals)
    i0 = max(int(np.searchsorted(low.theta, min(_WINDOW_STARTS) * tops.min())) - 1, 0)
    i1 = int(np.searchsorted(low.theta, scale, side="right")) + 1
    x, n = low.theta[i0:i1], low.count[i0:i1]
    if low.kind == "density":
        lo_x, hi_x = x[:-1], x[1:]
        ta, tb = lo_x / scale, hi_x / scale
        dt = tb - ta
        y = np.diff(n) / (dt * scale)
        law = [(tb**3 - ta**3) / (3.0 * dt), (tb**5 - ta**5) / (5.0 * dt)]
        with np.errstate(divide="ignore"):
            # relative residuals (g ∝ t²), with the scatter of a mesh DOS taken to fall as
            # t^(−1/2) as more of the mesh's shells overlap
            weight = (0.5 * (ta + tb)) ** -1.5
        powers = (2, 4)
        free = [np.ones(y.size)]
    else:
        lo_x = hi_x = x
        t = x / scale
        y = n - (low.count[0] if low.kind == "modes" else 0.0)
        law = [t**3 / 3.0, t**5 / 5.0]
        with np.errstate(divide="ignore"):
            weight = t**-1.5  # as for a density: between absolute and relative residuals
        powers = (3, 5)
        free = [np.ones(y.size)] if low.kind == "bins" else []
    if a_fixed is not None:
        y = y - a_fixed * scale ** powers[0] * law[0]
        law = law[1:]
    cols = np.column_stack(free + law)
    hi = np.repeat(tops, len(_WINDOW_STARTS))
    lo = hi * np.tile(_WINDOW_STARTS, len(_WINDOW_TOPS))
    inside = (lo_x[None, :] >= lo[:, None]) & (hi_x[None, :] <= hi[:, None]) & (lo_x[None, :] > 0)
    enough = inside.sum(axis=1) >= cols.shape[1] + 2
    if np.count_nonzero(enough) <= enough.size // 2:
        return None
    inside, lo, hi = inside[enough], lo[enough], hi[enough]
    w = np.where(inside, weight[None, :], 0.0)  # rows outside a window weigh nothing
    coef = _batched_lstsq(cols, y, w)
    if low.kind == "bins":
        # The constant stands for what the first bins hold beyond the law (Γ's zero
        # modes) or lack (empty first bins of a mesh without Γ): no more, either way,
        # than the first non-empty bin's count.  Beyond that it would only soak up the
        # scatter of the shells; such windows are fitted again with it held at the bound.
        first = float(low.count[np.flatnonzero(low.count > 0)[0]])
        held = np.clip(coef[:, 0], -first, first)
        out = held != coef[:, 0]
        if out.any():
            again = _batched_lstsq(cols[:, 1:], y[None, :] - held[out, None], w[out])
            coef[out] = np.column_stack([held[out], again])
    a = np.full(coef.shape[0], a_fixed) if a_fixed is not None else coef[:, len(free)] / scale ** powers[0]
    b = coef[:, -1] / scale ** powers[1]
    good = a > 0
    if np.count_nonzero(good) <= enough.size // 2:
        return None
    order = np.flatnonzero(good)[np.argsort((b if a_fixed is not None else a)[good], kind="stable")]
    k = int(order[order.size // 2])
    a_k, b_k = float(a[k]), float(b[k])
    if low.kind == "density":
        # a density is kept from where its resolution term (c₀·ω in the count) is small
        wc = min(max(math.sqrt(3.0 * abs(float(coef[k, 0])) / (_ARTEFACT * a_k)), lo[k]), hi[k])
    elif low.kind == "bins":
        # counts scatter with the mesh's shells: the law replaces the whole window, up to
        # its last bin edge (whole bins stay above)
        wc = float(x[np.searchsorted(x, hi[k], side="right") - 1])
    else:
        wc = float(hi[k])  # between two modes, as the law's count there is
    if b_k < 0:
        wc = min(wc, math.sqrt(0.5 * a_k / -b_k))  # keep a·θ² + b·θ⁴ ≥ a·θ²/2 below ω_c
    return _BottomFit(a_k, b_k, float(wc))


def _batched_lstsq(cols: np.ndarray, y: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Weighted least squares of y (rows, or windows × rows) on the columns `cols` (rows ×
    p), one fit per row of the weights `w` (windows × rows); returns windows × p."""
    A = cols[None, :, :] * w[:, :, None]
    A /= (norm := np.linalg.norm(A, axis=1))[:, None, :]  # equilibrated columns
    At = A.transpose(0, 2, 1)
    rhs = (np.broadcast_to(y, w.shape) * w)[:, :, None]
    # normal equations, and one step of refinement on the residual for full accuracy
    gram = At @ A
    coef = np.linalg.solve(gram, At @ rhs)
    coef += np.linalg.solve(gram, At @ (rhs - A @ coef))
    return coef[:, :, 0] / norm


def _first_points_cutoff(low: _LowEnd) -> float:
    """The third sample point above the first one holding modes (the cut-off of coarse data)."""
    j = int(np.flatnonzero(low.count > 0)[0])
    return float(low.theta[min(j + 3, low.theta.size - 1)])


def _resolve(low: _LowEnd, atoms: float, low_t: str | float, cutoff_k: float | None, who: str) -> _Continuation:
    """The low-temperature continuation of one spectrum (rules in the module docstring)."""
    given = not isinstance(low_t, str)
    doubt = _acoustic_doubt(low)
    if low_t == "off":
        fit = None if doubt else _fit_bottom(low, None)
        return _Continuation("off", theta=(9.0 * atoms / fit.a) ** (1.0 / 3.0) if fit else math.inf)
    if doubt and low_t == "auto":
        warnings.warn(
            f"{who}: {doubt}: no ω² low-temperature continuation, the data are used as they are "
            "(pass low_t=θ_D(0) if the lowest modes are acoustic)",
            SpectrumWarning,
            stacklevel=4,
        )
        return _Continuation("off")
    a_fixed = 9.0 * atoms / low_t**3 if given else None
    needed = not doubt and (cutoff_k is None or low_t == "auto")
    fit = _fit_bottom(low, a_fixed) if needed else None
    if cutoff_k is not None:
        wc, b = cutoff_k, 0.0
    elif fit is not None:
        wc, b = fit.cutoff, fit.b
    else:
        wc, b = _first_points_cutoff(low), 0.0
    if given:
        return _Continuation("theta", wc, a_fixed, b, theta=low_t)
    if low_t == "fit" or fit is None:
        return _Continuation("fit", wc)
    return _Continuation("auto", wc, fit.a, b, theta=(9.0 * atoms / fit.a) ** (1.0 / 3.0))


def _continued(
    nodes: np.ndarray, weights: np.ndarray, atoms: float, cont: _Continuation, who: str
) -> tuple[ModeSet, float]:
    """ModeSet of the data above ω_c plus the law below it; returns (ModeSet, scale of the data).

    `weights` are normalised so that all of the data hold 3·atoms modes.  With θ_D(0)
    given the law's modes are fixed and the data above fill the rest; otherwise the law
    and the data above are scaled together to 3·atoms.
    """
    wc = cont.cutoff
    above = float(weights.sum())
    n4 = 0.0
    if cont.method == "fit":
        scale = 1.0
        n2 = 3.0 * atoms - above
        if n2 <= 1e-12 * atoms:
            warnings.warn(
                f"{who}: no modes below the low-temperature cut-off {wc:.4g} K, so the ω² continuation "
                "is empty and C_v falls faster than T³; pass low_t=θ_D to set one",
                SpectrumWarning,
                stacklevel=4,
            )
            n2 = 0.0
    else:
        n2 = cont.a * wc**3 / 3.0
        n4 = cont.b * wc**5 / 5.0
        if cont.method == "theta":
            if n2 + n4 >= 3.0 * atoms or above <= 0:
                raise InputError(f"low_t = {cont.theta:g} K puts all modes below the cut-off {wc:.4g} K")
            scale = (3.0 * atoms - n2 - n4) / above
        else:
            scale = 3.0 * atoms / (above + n2 + n4)
            n2, n4 = n2 * scale, n4 * scale
    branches = (DebyeBranch(wc, n2),) if n2 > 0 else ()
    theta, weight = nodes, weights * scale
    if n4 != 0.0:
        # The ω⁴ part of the law: Gauss–Legendre nodes on the octaves [ω_c/2^(j+1), ω_c/2^j],
        # so the quadrature follows the kernel down to T ≈ ω_c/100; below the last octave
        # lie 2^-30 of its modes.
        law, dens = _LAW_NODES
        law, dens = law * wc, dens * (5.0 * n4)
        theta = np.concatenate((theta, law))
        weight = np.concatenate((weight, dens))
    return ModeSet(theta, weight, branches=branches, atoms=atoms), scale


def _cutoff_kelvin(cutoff: float | None, unit: str, lo: float, hi: float, where: str) -> float | None:
    """A given cut-off in K, checked to lie in (lo, hi) K."""
    if cutoff is None:
        return None
    wc = float(cutoff) * kelvin_per(unit)
    if not (math.isfinite(wc) and lo < wc < hi):
        raise InputError(f"low_t_cutoff must lie inside {where}, not {cutoff!r}")
    return wc


def _sampled_modeset(
    theta: np.ndarray, g: np.ndarray, atoms: float, low_t: str | float, cutoff: float | None, unit: str, who: str
) -> tuple[ModeSet, float, _Continuation]:
    """Nodes of a sampled density and its continuation.

    Returns (ModeSet, scale from the given density to the normalised one, _Continuation).
    """
    cutoff_k = _cutoff_kelvin(cutoff, unit, 0.0, theta[-1], "the frequency grid")
    # With the ω² continuation the data are read as ω²-like (linear in g/ω²), and below the
    # first sample the density continues as ω² (g/ω² constant) down to 0.
    th, gg = (theta, g) if theta[0] == 0 else (np.concatenate(([0.0], theta)), np.concatenate(([0.0], g)))
    ratio_form = np.ones(th.size - 1, dtype=bool)
    nodes_all, w_all = _interval_nodes(th, gg, 0.0, ratio_form)
    if not w_all.sum() > 0:
        # Only a density at ω = 0 (allowed with low_t="off" alone): read linearly, it is a
        # flat and a linear low-dimensional branch, and there is no ω² bottom to estimate.
        return (*_sampled_as_is(theta, g, atoms), _Continuation("off", theta=0.0))
    norm = 3.0 * atoms / float(w_all.sum())
    per_interval = w_all.reshape(-1, _GAUSS[0].size).sum(axis=1) * norm
    low = _LowEnd(th, np.concatenate(([0.0], np.cumsum(per_interval))), "density")
    if low_t == "extrapolate":
        cont = _extrapolated(th, gg * norm, atoms, cutoff_k)
    else:
        cont = _resolve(low, atoms, low_t, cutoff_k, who)
    if cont.method == "off":
        return (*_sampled_as_is(theta, g, atoms), cont)
    nodes, w = _interval_nodes(th, gg, cont.cutoff, ratio_form)
    ms, scale = _continued(nodes, w * norm, atoms, cont, who)
    return ms, scale * norm, cont


def _sampled_as_is(theta: np.ndarray, g: np.ndarray, atoms: float) -> tuple[ModeSet, float]:
    """ModeSet of a sampled density read linearly in g, without continuation; and its scale."""
    ratio_form = np.zeros(theta.size - 1, dtype=bool)
    nodes_all, w_all = _interval_nodes(theta, g, 0.0, ratio_form)
    scale = 3.0 * atoms / float(w_all.sum())
    if theta[0] > 0:
        return ModeSet(nodes_all, w_all * scale, atoms=atoms), scale
    # The interval from ω = 0, linear in g, is exactly a flat (dim 1) plus a linear
    # (dim 2) Debye branch; quadrature nodes would miss the ln ω of S and F there.
    nodes, w = _interval_nodes(theta, g, theta[1], ratio_form)
    w1, g0, g1 = theta[1], g[0], g[1]
    branches = tuple(
        DebyeBranch(w1, m * scale, d) for m, d in ((g0 * w1, 1), (0.5 * (g1 - g0) * w1, 2)) if m != 0
    )
    return ModeSet(nodes, w * scale, branches=branches, atoms=atoms), scale


_EXTRAPOLATE_FRACTION = 0.02  # the fit window holds the lowest 2 % of the modes
_EXTRAPOLATE_AGREE = 0.05  # data above ω_c follow the fitted g/ω² within 5 %


def _extrapolated(theta: np.ndarray, g: np.ndarray, atoms: float, cutoff_k: float | None) -> _Continuation:
    """low_t="extrapolate": the ω² coefficient extrapolated from the resolved low-frequency part.

    g = a·ω² + b·ω⁴ is fitted by least squares in g over the lowest 2 % of the modes, so
    the poorly resolved lowest points (small g) weigh little; a is the T → 0 coefficient.
    The branch a·ω² replaces the data below ω_c, the lowest point from which every point
    of the window follows the fit within 5 % (or the cut-off given).
    """
    counts = np.concatenate(([0.0], np.cumsum(0.5 * (g[1:] + g[:-1]) * np.diff(theta))))
    first = int(np.flatnonzero(g > 0)[0])
    i_hi = max(int(np.searchsorted(counts, _EXTRAPOLATE_FRACTION * counts[-1])), first + 8)
    idx = np.arange(max(first, 1), min(i_hi, theta.size - 1) + 1)
    idx = idx[theta[idx] > 0]
    if idx.size < 4:
        raise InputError("low_t='extrapolate' needs at least 4 sampled points in the lowest 2 % of the modes")
    t = theta[idx]
    (a, b), *_ = np.linalg.lstsq(np.column_stack([t**2, t**4]), g[idx], rcond=None)
    if not a > 0:
        raise InputError(
            "low_t='extrapolate': the low-frequency density does not extrapolate to a positive ω² "
            "coefficient; pass low_t=θ_D(0) instead"
        )
    if cutoff_k is None:
        model = a + b * t**2
        off = np.abs(g[idx] / t**2 - model) > _EXTRAPOLATE_AGREE * np.abs(model)
        j = int(np.flatnonzero(off)[-1]) + 1 if off.any() else 0
        wc = float(t[min(j, t.size - 1)])
    else:
        wc = cutoff_k
    return _Continuation("extrapolate", wc, float(a), 0.0, theta=(9.0 * atoms / a) ** (1.0 / 3.0))


def _mode_low_end(theta: np.ndarray, w: np.ndarray) -> _LowEnd:
    """Counts of a list of modes: at each distinct frequency, the modes below plus half of its own.

    Only the lowest modes matter: about three times as many as the resolver looks at
    (if the weights were equal) are taken by partition, not a full sort, unless they
    hold less than twice what it looks at; the highest frequency taken is left out
    (modes at that frequency may lie beyond the part).
    """
    needed = 3.0 * _WINDOW_TOPS[-1] / float(w.sum())  # the fraction of the weight looked at
    k = max(4096, int(3.0 * needed * theta.size))
    if k < theta.size:
        part = np.argpartition(theta, k)[:k]
        if float(w[part].sum()) >= 2.0 * needed * float(w.sum()):
            theta, w = theta[part], w[part]
            below = theta < theta.max()
            theta, w = theta[below], w[below]
    uniq, inverse = np.unique(theta, return_inverse=True)
    own = np.bincount(inverse, weights=w)
    mid = np.cumsum(own) - 0.5 * own
    zero = float(own[0]) if uniq[0] == 0 else 0.0
    pos = np.flatnonzero(uniq > 0)
    # counts at every k-th distinct frequency are as exact, and enough for the fits
    pos = pos[:: max(1, pos.size // _MAX_MODE_POINTS)]
    return _LowEnd(np.concatenate(([0.0], uniq[pos])), np.concatenate(([zero], mid[pos])), "modes")


def _modes_modeset(
    theta: np.ndarray, w: np.ndarray, atoms: float, low_t: str | float, cutoff: float | None, unit: str, who: str
) -> tuple[ModeSet, _Continuation]:
    """ModeSet of individual (normalised) modes with the continuation; returns (ModeSet, _Continuation)."""
    cutoff_k = _cutoff_kelvin(cutoff, unit, 0.0, math.inf, "(0, ∞)")
    cont = _resolve(_mode_low_end(theta, w), atoms, low_t, cutoff_k, who)
    if cont.method == "off":
        zero = theta <= 0
        if zero.any():
            warnings.warn(
                f"{who}: {int(zero.sum())} zero-frequency mode(s) dropped (infinite entropy without a "
                "low-temperature continuation)",
                SpectrumWarning,
                stacklevel=3,
            )
        keep = ~zero
        return ModeSet(theta[keep], w[keep] * (3.0 * atoms / w[keep].sum()), atoms=atoms), cont
    above = theta > cont.cutoff
    ms, _ = _continued(theta[above], w[above], atoms, cont, who)
    return ms, cont


def _bin_nodes(edges: np.ndarray, counts: np.ndarray, lo: float):
    """Gauss–Legendre nodes of flat bins above `lo` (parts below it left out)."""
    a, b = np.maximum(edges[:-1], lo), edges[1:]
    keep = b > a
    dens = counts[keep] / np.diff(edges)[keep]
    a, b = a[keep], b[keep]
    t, w = _GAUSS
    half = 0.5 * (b - a)
    nodes = (0.5 * (a + b))[:, None] + half[:, None] * t[None, :]
    return nodes.ravel(), (dens[:, None] * half[:, None] * w[None, :]).ravel()


def _histogram_modeset(
    theta: np.ndarray, counts: np.ndarray, atoms: float, low_t: str | float, cutoff: float | None, unit: str, who: str
) -> tuple[ModeSet, _Continuation]:
    """ModeSet of normalised bin counts with the continuation; returns (ModeSet, _Continuation)."""
    cutoff_k = _cutoff_kelvin(cutoff, unit, theta[0], theta[-1], "the histogram")
    low = _LowEnd(theta, np.concatenate(([0.0], np.cumsum(counts))), "bins")
    cont = _resolve(low, atoms, low_t, cutoff_k, who)
    if cont.method == "off":
        nodes_all, w_all = _bin_nodes(theta, counts, theta[0])
        if theta[0] > 0 or counts[0] == 0:
            return ModeSet(nodes_all, w_all, atoms=atoms), cont
        # A flat bin from ω = 0 is exactly a one-dimensional Debye branch.
        nodes, w = _bin_nodes(theta, counts, theta[1])
        return ModeSet(nodes, w, branches=(DebyeBranch(theta[1], counts[0], 1),), atoms=atoms), cont
    nodes, w = _bin_nodes(theta, counts, cont.cutoff)
    ms, _ = _continued(nodes, w, atoms, cont, who)
    return ms, cont
