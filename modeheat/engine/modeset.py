"""The evaluation engine behind every thermodynamic quantity.

Any source (a sampled spectrum, a list of modes, a model mixture) reduces to a
:class:`ModeSet`: Einstein-like nodes (θ_j, w_j), branches that evaluate themselves
(closed-form Debye branches, quadratures of model continua) and non-vibrational
extras (electronic, two-level terms).  Its heat capacity, entropy,
energy and free energy are sums over nodes of a kernel that depends on θ/T alone.

On logarithmic grids u = ln θ and v = ln T that kernel depends only on u − v, so the
node sum is a correlation.  Nodes are spread onto a uniform ln θ grid (step
``DELTA``) with ``SPREAD``-point Lagrange weights, which is exact for any kernel that
is a polynomial of degree < SPREAD over the stencil; the correlation is one FFT per
kernel, and values at the requested temperatures come from ``GATHER``-point
Lagrange interpolation in ln T.  The spreading is cached per ModeSet.  Small
problems, temperatures so low that every node is frozen out (θ_min/T > ``FROZEN``), and
temperatures where the heat capacity (nodes and branches) is so small that the FFT's
absolute rounding error would show (C/R below ``NOISE_FLOOR`` of the node modes) are
summed directly over the nodes that matter, which keeps the relative accuracy of
exponentially small values.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Protocol

import numpy as np
from scipy import fft as _fft

from . import special

__all__ = ["ModeSet", "Branch", "DebyeBranch", "Extra", "ScaledModes"]

DELTA = 1.0 / 256.0  # ln-grid step for θ and T
SPREAD = 6  # points per node on the ln θ grid
GATHER = 8  # points per temperature on the ln T grid
FROZEN = 12.0  # θ_min/T above which the node sum is done directly
NOISE_FLOOR = 1e-6  # node C/R below this fraction of the node modes is summed directly
DIRECT_LIMIT = 40_000  # nodes × temperatures below which the direct sum is cheaper
_CHUNK = 2_000_000  # elements per block in the direct sum


class Extra(Protocol):
    """A non-vibrational term: C/R, S/R, U/R [K] and F/R [K] per formula unit at T > 0."""

    def terms(self, T: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]: ...


def _lagrange_weights(t: np.ndarray, offsets: np.ndarray) -> list[np.ndarray]:
    """Lagrange basis polynomials on the points `offsets`, each evaluated at t."""
    p = len(offsets)
    out = []
    for m in range(p):
        denom = math.prod(offsets[m] - offsets[j] for j in range(p) if j != m)
        acc = np.full_like(t, 1.0 / denom)
        for j in range(p):
            if j != m:
                acc *= t - offsets[j]
        out.append(acc)
    return out


_SPREAD_OFFSETS = np.arange(SPREAD, dtype=float) - (SPREAD // 2 - 1)
_GATHER_OFFSETS = np.arange(GATHER, dtype=float) - (GATHER // 2 - 1)


class Branch(Protocol):
    """A vibrational branch evaluated in closed form or by its own quadrature."""

    modes: float
    theta_max: float

    def terms(self, T: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """C/R, U_th/(RT), F_th/(RT) per formula unit at T > 0."""
        ...

    def zero_point(self) -> float:
        """U_0/R in K."""
        ...

    def moment_sum(self, n: float) -> float:
        """Σ modes·⟨θⁿ⟩ (n = 0: Σ modes·⟨ln θ⟩)."""
        ...

    def low_frequency_law(self) -> tuple[int, float] | None:
        """(dim, modes/θ_eff^dim) of the branch's low-frequency power law, None if gapped."""
        ...


@dataclass(frozen=True)
class DebyeBranch:
    """g ∝ ω^(dim−1) up to θ (K), carrying `modes` modes."""

    theta: float
    modes: float
    dim: int = 3

    @property
    def theta_max(self) -> float:
        return self.theta

    def terms(self, T):
        cv, e, f = special.debye_terms(self.theta / T, self.dim)
        return self.modes * cv, self.modes * e, self.modes * f

    def zero_point(self) -> float:
        return 0.5 * self.modes * self.theta * self.dim / (self.dim + 1)

    def moment_sum(self, n: float) -> float:
        d = self.dim
        if n == 0:
            return self.modes * (math.log(self.theta) - 1.0 / d)
        if n <= -d:
            return math.inf  # ∫ω^(d−1+n) dω diverges at ω → 0, so θ(n) → 0
        return self.modes * d / (d + n) * self.theta**n

    def low_frequency_law(self):
        return self.dim, self.modes / self.theta**self.dim


@dataclass(frozen=True, eq=False)
class ScaledModes:
    """A whole mode set as one branch, every temperature equivalent × `scale` and every
    mode count × `factor` (a computed spectrum a few per cent too stiff or soft).

    Every kernel depends on θ/T alone, so θ → s·θ (a shift by ln s on the ln θ grid) is
    the unscaled set at T/s: C(T; s) = C₀(T/s), U_th(T; s) = s·U_th,0(T/s) and
    F_th(T; s) = s·F_th,0(T/s), hence U_th/(RT) and F_th/(RT) are those of T/s too; the
    zero point scales as s and Σ modes·⟨θⁿ⟩ as sⁿ (n = 0: + modes·ln s).  Branches (the
    ω² continuation) scale the same way.  Evaluating the base at T/s reuses its cached
    node spreading, so any scale costs one correlation, like a Debye branch's θ.

    Parameters
    ----------
    base : ModeSet — the unscaled modes (its extras, if any, are not part of the branch)
    scale : float — frequency scale factor s > 0
    factor : float — mode-count factor ≥ 0
    """

    base: "ModeSet"
    scale: float = 1.0
    factor: float = 1.0

    @property
    def modes(self) -> float:
        return self.factor * self.base.modes

    @property
    def theta_max(self) -> float:
        return self.scale * self.base.theta_max

    def terms(self, T):
        cv, e, f = self.base.thermal(T / self.scale)
        return self.factor * cv, self.factor * e, self.factor * f

    def zero_point(self) -> float:
        return self.factor * self.scale * self.base.zero_point()

    def moment_sum(self, n: float) -> float:
        total = self.base.modes * self.base.moment(n)  # Σ modes·⟨θⁿ⟩ of the base
        if n == 0:
            return self.factor * (total + self.base.modes * math.log(self.scale))
        return self.factor * self.scale**n * total

    def low_frequency_law(self):
        # The base's low-frequency laws (dim, modes/θ^dim): the lowest power dominates.
        laws = [law for law in (b.low_frequency_law() for b in self.base.branches) if law is not None and law[1] > 0]
        if not laws:
            return None
        dim = min(d for d, _ in laws)
        return dim, self.factor * sum(a for d, a in laws if d == dim) / self.scale**dim


@dataclass(frozen=True, eq=False)
class ModeSet:
    """Everything the engine needs to know about a source, per formula unit.

    Parameters
    ----------
    theta : ndarray — node temperature equivalents in K (> 0)
    weight : ndarray — modes carried by each node (≥ 0)
    branches : tuple of Branch — vibrational branches with their own evaluation
    extras : tuple of Extra — non-vibrational terms
    atoms : float — atoms per formula unit
    """

    theta: np.ndarray
    weight: np.ndarray
    branches: tuple = ()
    extras: tuple = ()
    atoms: float = 1.0
    _cache: dict = field(default_factory=dict, repr=False, compare=False)

    # --- summaries -----------------------------------------------------------
    @property
    def modes(self) -> float:
        """Vibrational modes per formula unit."""
        return float(np.sum(self.weight)) + sum(b.modes for b in self.branches)

    @property
    def theta_max(self) -> float:
        """Highest temperature equivalent of any mode, K."""
        top = [float(self.theta.max())] if self.theta.size else []
        return max(top + [b.theta_max for b in self.branches], default=0.0)

    def zero_point(self) -> float:
        """Zero-point energy U_0/R in K per formula unit."""
        if "zero_point" not in self._cache:
            nodes = 0.5 * float(np.dot(self.weight, self.theta))
            self._cache["zero_point"] = nodes + sum(b.zero_point() for b in self.branches)
        return self._cache["zero_point"]

    def moment(self, n: float) -> float:
        """Mean of θⁿ over all modes, K**n; n = 0 gives ⟨ln θ⟩."""
        if n == 0:
            nodes = float(np.dot(self.weight, np.log(self.theta)))
        else:
            nodes = float(np.dot(self.weight, self.theta**n))
        return (nodes + sum(b.moment_sum(n) for b in self.branches)) / self.modes

    @property
    def theta_D0(self) -> float:
        """Limit of the effective Debye temperature as T → 0, in K.

        From the ω² branches: (3·atoms / Σ modes·θ⁻³)^(1/3), scaled to the mode count.
        Lower-dimensional branches make C fall slower than T³ (limit 0); without any
        low-frequency branch it falls faster (limit ∞).
        """
        laws = [b.low_frequency_law() for b in self.branches]
        laws = [law for law in laws if law is not None and law[1] > 0]
        if any(d < 3 for d, _ in laws):
            return 0.0
        s = sum(a for _, a in laws)
        if s <= 0:
            return math.inf
        return (self.modes / s) ** (1.0 / 3.0)

    def moment_debye_temperature(self, n: float) -> float:
        """Moment Debye temperature θ(n) in K (Barron, Berg & Morrison 1957).

        θ(n) = [(n+3)/3 · ⟨θⁿ⟩]^(1/n) for n ≠ 0, θ(0) = exp(1/3 + ⟨ln θ⟩), θ(−3) the
        T → 0 Debye temperature.
        """
        if n == -3:
            return self.theta_D0
        if n == 0:
            return math.exp(1.0 / 3.0 + self.moment(0))
        return ((n + 3.0) / 3.0 * self.moment(n)) ** (1.0 / n)

    def effective_debye_temperature(self, T: np.ndarray, cv_lattice: np.ndarray | None = None) -> np.ndarray:
        """Effective Debye temperature θ_D(T) in K of the vibrational part, at each T ≥ 0 (K).

        Inverts the lattice C_v with the Debye heat capacity of ``modes`` modes; the
        limits are exact: θ_D(0) is :attr:`theta_D0`, and far above every
        mode (T > 20·θ_max, where 1 − C/C_max is lost to rounding) the Thirring moment
        series takes over, whose leading term is θ_∞² = (5/3)⟨θ²⟩.  NaN where no θ
        exists (no vibrational modes, or a lattice C_v that cannot be inverted).

        Parameters
        ----------
        T : ndarray — temperatures in K, each 0 or > 0
        cv_lattice : ndarray, optional — the lattice C/R at `T` (``evaluate(T)["cv_lattice"]``),
            when the caller has it already; evaluated here otherwise
        """
        T = np.asarray(T, dtype=float)
        theta = np.full(T.shape, np.nan)
        modes = self.modes
        if modes <= 0:
            return theta
        theta[T == 0] = self.theta_D0
        classical = T > 20.0 * self.theta_max
        if np.any(classical):
            theta[classical] = self._thirring_theta(T[classical])
        rest = (T > 0) & ~classical
        if np.any(rest):
            c = (self.evaluate(T[rest])["cv_lattice"] if cv_lattice is None else np.asarray(cv_lattice)[rest]) / modes
            theta[rest] = T[rest] * special.debye_cv_inverse(c)
        return theta

    def _thirring_theta(self, T: np.ndarray) -> np.ndarray:
        """θ_D(T) for T ≫ every mode: match 1 − C/C_max of the Debye model to the moment series."""
        if "thirring" not in self._cache:
            _, coeffs = special._series_coefficients(3)
            # 1 − C_E = x²/12 − x⁴/240 + x⁶/6048 − … for one Einstein mode, summed over the modes by moments
            e = (1 / 12, -1 / 240, 1 / 6048, -1 / 172800)
            self._cache["thirring"] = (
                -coeffs[::-1][1:5],  # 1 − C_D/C_max = Σ a_j y^(2j), j = 1..4
                [e[j] * self.moment(2 * j + 2) for j in range(4)],
            )
        a, b = self._cache["thirring"]
        deficit = sum(b[j] / T ** (2 * j + 2) for j in range(4))
        y = np.sqrt(deficit / a[0])
        # A deficit that underflows (absurdly few modes) gives y = 0 and 0/0: NaN, which callers report.
        with np.errstate(invalid="ignore", divide="ignore"):
            for _ in range(4):
                g = sum(a[j] * y ** (2 * j + 2) for j in range(4)) - deficit
                dg = sum((2 * j + 2) * a[j] * y ** (2 * j + 1) for j in range(4))
                y = y - g / dg
        return T * y

    # --- evaluation ------------------------------------------------------------
    def evaluate(self, T: np.ndarray) -> dict[str, np.ndarray]:
        """C/R, S/R, U/R [K], F/R [K] per formula unit, and the lattice part of C/R.

        T must be ≥ 0 (K); T = 0 gives the limits C = S = 0, U = F = U_0.
        """
        T = np.asarray(T, dtype=float)
        shape = T.shape
        T = T.ravel()
        cv = np.zeros_like(T)
        s = np.zeros_like(T)
        e = np.zeros_like(T)  # U_th/(RT)
        f = np.zeros_like(T)  # F_th/(RT)
        hot = T > 0
        Th = T[hot]
        if Th.size:
            c1, e1, f1 = self.thermal(Th)
            cv[hot], e[hot], f[hot] = c1, e1, f1
            s[hot] = e1 - f1
        u0 = self.zero_point()
        out = {
            "cv_lattice": cv.copy(),
            "cv": cv,
            "s": s,
            "u": u0 + T * e,
            "f": u0 + T * f,
        }
        if self.extras and Th.size:
            for extra in self.extras:
                ce, se, ue, fe = extra.terms(Th)
                out["cv"][hot] += ce
                out["s"][hot] += se
                out["u"][hot] += ue
                out["f"][hot] += fe
        return {k: v.reshape(shape) for k, v in out.items()}

    def thermal(self, T: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """C/R, U_th/(RT) and F_th/(RT) of the vibrational modes (nodes and branches)
        per formula unit at T > 0 (K, 1-D); the zero point and the extras excluded."""
        bc, be, bf = np.zeros_like(T), np.zeros_like(T), np.zeros_like(T)
        for branch in self.branches:
            dc, de, df = branch.terms(T)
            bc, be, bf = bc + dc, be + de, bf + df
        c1, e1, f1 = self._nodes(T, bc)
        return c1 + bc, e1 + be, f1 + bf

    # --- node sums -----------------------------------------------------------------
    def _nodes(self, T: np.ndarray, branch_cv: np.ndarray):
        """Node sums at T; `branch_cv` is the branches' C/R there, part of what the FFT's
        rounding error is measured against."""
        n = self.theta.size
        zeros = np.zeros_like(T)
        if n == 0:
            return zeros, zeros.copy(), zeros.copy()
        if n * T.size <= DIRECT_LIMIT:
            return _direct(self.theta, self.weight, T)
        cv, e, f = zeros, zeros.copy(), zeros.copy()
        tmin = float(self.theta.min())
        frozen = T < tmin / FROZEN
        warm = ~frozen
        if np.any(warm):
            cv[warm], e[warm], f[warm] = self._correlate(T[warm])
            # The FFT's rounding error is absolute (~1e-16 of the whole sum); where the
            # heat capacity (nodes and branches) is tiny it would show, so those
            # temperatures are summed directly.  Where a branch (the ω² continuation)
            # carries the heat capacity, the node sum's rounding is negligible beside it.
            frozen |= warm & (cv + branch_cv < NOISE_FLOOR * float(np.sum(self.weight)))
        if np.any(frozen):
            # Nodes more than ~50 kT above the lowest one contribute < e^(−50) per mode.
            keep = self.theta < tmin + 50.0 * float(T[frozen].max())
            cv[frozen], e[frozen], f[frozen] = _direct(self.theta[keep], self.weight[keep], T[frozen])
        return cv, e, f

    def _spread(self) -> tuple[int, np.ndarray]:
        """Node weights on the ln θ grid u_i = i·DELTA: (first index, weights)."""
        if "spread" not in self._cache:
            pos = np.log(self.theta) / DELTA
            base = np.floor(pos)
            lw = _lagrange_weights(pos - base, _SPREAD_OFFSETS)
            ibase = base.astype(np.int64)
            first = int(ibase.min()) + int(_SPREAD_OFFSETS[0])
            size = int(ibase.max()) + int(_SPREAD_OFFSETS[-1]) - first + 1
            ibase -= first
            grid = np.zeros(size)
            for off, l in zip(_SPREAD_OFFSETS.astype(np.int64), lw):
                l *= self.weight
                grid += np.bincount(ibase + off, weights=l, minlength=size)
            self._cache["spread"] = (first, grid)
        return self._cache["spread"]

    def _correlate(self, T: np.ndarray):
        first, grid = self._spread()
        pos = np.log(T) / DELTA
        base = np.floor(pos)
        kmin = int(base.min()) + int(_GATHER_OFFSETS[0])
        kmax = int(base.max()) + int(_GATHER_OFFSETS[-1])
        lw, lv = grid.size, kmax - kmin + 1
        # kernel at s = (i − k)·DELTA for every node index i and temperature index k
        m = np.arange(first - kmax, first + lw - 1 - kmin + 1)
        kern = special.einstein_terms(np.exp(m * DELTA))
        # Only the lv outputs where the node grid lies wholly inside the kernel are
        # needed, and circular wrap-around cannot reach them at this size.
        size = _fft.next_fast_len(m.size, real=True)
        key = ("rfft", size)
        if key not in self._cache:
            self._cache[key] = _fft.rfft(grid[::-1], size)
        a = self._cache[key]
        rows = []
        for kk in kern:
            conv = _fft.irfft(a * _fft.rfft(kk, size), size)
            # corr[l] = Σ_i grid[i] kk[i + l] with l = kmax − k
            corr = conv[lw - 1 : lw - 1 + lv]
            rows.append(corr[::-1])  # index k − kmin
        table = np.stack(rows)
        lg = _lagrange_weights(pos - base, _GATHER_OFFSETS)
        ibase = base.astype(np.int64) - kmin
        vals = np.zeros((3, T.size))
        for off, l in zip(_GATHER_OFFSETS.astype(np.int64), lg):
            vals += table[:, ibase + off] * l
        return vals[0], vals[1], vals[2]


def _direct(theta: np.ndarray, weight: np.ndarray, T: np.ndarray):
    """Σ_j w_j K(θ_j/T) by blocks of temperatures."""
    cv = np.empty_like(T)
    e = np.empty_like(T)
    f = np.empty_like(T)
    step = max(1, _CHUNK // max(theta.size, 1))
    for lo in range(0, T.size, step):
        x = theta[None, :] / T[lo : lo + step, None]
        k_cv, k_e, k_f = special.einstein_terms(x)
        cv[lo : lo + step] = k_cv @ weight
        e[lo : lo + step] = k_e @ weight
        f[lo : lo + step] = k_f @ weight
    return cv, e, f
