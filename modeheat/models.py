"""Model spectra that mix into one solid.

Components (θ always a temperature equivalent in K; ``modes`` = vibrational modes per
formula unit the component carries):

- :class:`Debye` — g ∝ ω^(dim−1) up to the cut-off (chains, layers, bulk: dim 1, 2, 3);
- :class:`SineChain` — ω = ω_max·sin(πk/2k_max) filling a dim-dimensional Debye sphere;
- :class:`Einstein` — all modes at one frequency;
- :class:`Band` — a flat optical continuum between two frequencies;
- :class:`Electronic` — the γT term of conduction electrons (no vibrational modes);
- :class:`Schottky` — a two-level anomaly (no vibrational modes);
- :class:`PhononDOS` — a computed or measured :class:`~modeheat.Spectrum` as a term,
  with a frequency scale factor and its mode count.

Components add with ``+`` into a :class:`Mixture` (a :class:`~modeheat.Spectrum` in a
sum becomes a :class:`PhononDOS` term: ``dos + Electronic(5e-5)``); :func:`solid` builds
the usual solid (3 acoustic + 3(atoms − 1) optical modes).  Every component and mixture works
with :func:`modeheat.thermo` like a :class:`~modeheat.Spectrum`, and
``.spectrum()`` renders the vibrational part as one.

Closed forms serve the Debye, Einstein, electronic and two-level terms.  Sine chains
and bands are integrated per temperature by Gauss–Legendre panels placed where the
kernel lives (θ/T from 0 to 60 above the lower edge), with the logarithm of
ln(1 − e^(−x)) at x → 0 taken out analytically; both reach ≤ 1e-10 relative.
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from dataclasses import dataclass
from functools import lru_cache
from typing import ClassVar, Iterable, Mapping

import numpy as np
from scipy import integrate

from . import _checks
from ._document import Documented
from .cp_cv import cp_from_cv
from .engine import special
from .engine.modeset import DebyeBranch, ModeSet, ScaledModes
from .errors import InputError, ModeheatWarning
from .spectrum import Spectrum
from .units import R, check_kelvin, check_unit, kelvin_per

__all__ = [
    "Component",
    "Debye",
    "SineChain",
    "Einstein",
    "Band",
    "Electronic",
    "Schottky",
    "PhononDOS",
    "Mixture",
    "ModeCountWarning",
    "solid",
]


class ModeCountWarning(ModeheatWarning):
    """A mixture's mode count differs from 3·atoms (when asked to warn, not raise)."""


# Larger mode counts, γ, n or A than this have no physical meaning and would overflow
# the tables (U ~ modes·T at T up to 1e12 K).
_LARGEST = 1e100


def _number(kind: str, label: str, value) -> float:
    v = _checks.number(f"{kind}: {label}", value)
    if math.isfinite(v) and v > _LARGEST:
        raise InputError(f"{kind}: {label} = {v:g} is beyond any meaningful size (at most {_LARGEST:g})")
    return v


def _positive(kind: str, label: str, value) -> float:
    return _checks.positive(f"{kind}: {label}", _number(kind, label, value))


def _non_negative(kind: str, label: str, value) -> float:
    return _checks.non_negative(f"{kind}: {label}", _number(kind, label, value))


def _kelvin(kind: str, label: str, value) -> float:
    """A temperature equivalent in K inside :data:`~modeheat.units.KELVIN_RANGE`."""
    return check_kelvin(f"{kind}: {label}", _positive(kind, label, value))


def _kelvin_or_zero(kind: str, label: str, value) -> float:
    v = _non_negative(kind, label, value)
    return v if v == 0 else _kelvin(kind, label, v)


def _dim(kind: str, label: str, dim) -> int:
    if dim not in (1, 2, 3):
        raise InputError(f"{kind}: dim must be 1, 2 or 3, not {dim!r}")
    return int(dim)


# --- per-temperature quadrature of continua ------------------------------------------------

_PANEL_EDGES = np.array([0.0, 4.0, 12.0, 28.0, 60.0])  # in units of x above the lower edge
_GL_PANELS = [np.polynomial.legendre.leggauss(n) for n in (16, 14, 10, 8)]


def _gl_panels(edges: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """GL nodes and weights, shape (n_T, Σ nodes), for the panels between `edges` (n_T, 5).

    Outer panels hold exponentially less weight and get fewer nodes.
    """
    nodes, weights = [], []
    for k, (t, w) in enumerate(_GL_PANELS):
        a, b = edges[:, k : k + 1], edges[:, k + 1 : k + 2]
        half = 0.5 * (b - a)
        nodes.append(0.5 * (a + b) + half * t)
        weights.append(half * w)
    return np.hstack(nodes), np.hstack(weights)


def _smooth_log_part(x: np.ndarray) -> np.ndarray:
    """ln((1 − e^(−x))/x), analytic at x = 0."""
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.log(-np.expm1(-x) / x)
    return np.where(x < 1e-8, -x / 2, out)


def _x_log_x_minus_x(v: np.ndarray) -> np.ndarray:
    """v·ln v − v, an antiderivative of ln v (0 at v = 0)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(v > 0, v * np.log(np.where(v > 0, v, 1.0)) - v, 0.0)


_FIRST = slice(0, _GL_PANELS[0][0].size)  # the nodes of the first panel


@dataclass(frozen=True)
class _BandBranch:
    """Flat density of `modes` modes between θ_low and θ_high (K)."""

    theta_low: float
    theta_high: float
    modes: float

    @property
    def theta_max(self) -> float:
        return self.theta_high

    def terms(self, T):
        a, b = self.theta_low / T, self.theta_high / T
        edges = np.minimum(a[:, None] + _PANEL_EDGES[None, :], b[:, None])
        x, w = _gl_panels(edges)
        cv, e, f = special.einstein_terms(x)
        # Near x = 0, ln(1 − e^(−x)) has a log singularity: integrate ln x exactly on
        # the first panel and only the smooth rest by quadrature.
        near = a < 1.0
        first = f[:, _FIRST]
        first[near] = _smooth_log_part(x[near, _FIRST])
        fsum = np.sum(w * f, axis=1)
        fsum[near] += _x_log_x_minus_x(edges[near, 1]) - _x_log_x_minus_x(a[near])
        scale = self.modes / (b - a)
        return scale * np.sum(w * cv, axis=1), scale * np.sum(w * e, axis=1), scale * fsum

    def zero_point(self) -> float:
        return 0.25 * self.modes * (self.theta_low + self.theta_high)

    def moment_sum(self, n: float) -> float:
        a, b = self.theta_low, self.theta_high
        if n == 0:
            xl = lambda v: v * math.log(v) if v > 0 else 0.0  # noqa: E731
            return self.modes * ((xl(b) - xl(a)) / (b - a) - 1.0)
        if n == -1:
            return self.modes * math.log(b / a) / (b - a)
        return self.modes * (b ** (n + 1) - a ** (n + 1)) / ((n + 1) * (b - a))

    def low_frequency_law(self):
        return (1, self.modes / self.theta_high) if self.theta_low == 0 else None


@lru_cache(maxsize=None)
def _sine_moment(dim: int, n: float) -> float:
    """⟨sinⁿ(πs/2)⟩ over s with weight d·s^(d−1) (n = 0: ⟨ln sin(πs/2)⟩)."""
    if n == 0:
        f = lambda s: dim * s ** (dim - 1) * math.log(math.sin(math.pi * s / 2))  # noqa: E731
    else:
        f = lambda s: dim * s ** (dim - 1) * math.sin(math.pi * s / 2) ** n  # noqa: E731
    value, _ = integrate.quad(f, 0.0, 1.0, epsabs=0, epsrel=1e-13, limit=200)
    return value


@dataclass(frozen=True)
class _SineBranch:
    """ω = θ·sin(πs/2) over a dim-dimensional Debye sphere, s = k/k_max."""

    theta: float
    modes: float
    dim: int

    @property
    def theta_max(self) -> float:
        return self.theta

    def terms(self, T):
        d = self.dim
        r = self.theta / T
        # Panels at x = r·sin(πs/2) ∈ {0, 4, 12, 28, 60}, integrated in s where the
        # integrand is smooth (the edge singularity of g(ω) is gone in s).
        x_edges = np.minimum(_PANEL_EDGES[None, :], r[:, None])
        edges = (2 / math.pi) * np.arcsin(np.minimum(x_edges / r[:, None], 1.0))
        s, w = _gl_panels(edges)
        w = w * d * s ** (d - 1)
        x = r[:, None] * np.sin(0.5 * math.pi * s)
        cv, e, f = special.einstein_terms(x)
        # First panel: ln(1 − e^(−x)) = ln(r·πs/2) + ln(sin(πs/2)/(πs/2)) + ln((1 − e^(−x))/x),
        # the first term integrated exactly, the rest smooth.
        sf = s[:, _FIRST]
        f[:, _FIRST] = np.log(np.sin(0.5 * math.pi * sf) / (0.5 * math.pi * sf)) + _smooth_log_part(x[:, _FIRST])
        s1 = edges[:, 1]
        exact = s1**d * (np.log(r * 0.5 * math.pi * s1) - 1.0 / d)
        m = self.modes
        return m * np.sum(w * cv, axis=1), m * np.sum(w * e, axis=1), m * (np.sum(w * f, axis=1) + exact)

    def zero_point(self) -> float:
        return 0.5 * self.modes * self.theta * _sine_moment(self.dim, 1)

    def moment_sum(self, n: float) -> float:
        if n == 0:
            return self.modes * (math.log(self.theta) + _sine_moment(self.dim, 0))
        return self.modes * self.theta**n * _sine_moment(self.dim, n)

    def low_frequency_law(self):
        # small k: ω ≈ θ·πs/2, a Debye branch with cut-off πθ/2
        return self.dim, self.modes / (0.5 * math.pi * self.theta) ** self.dim


@dataclass(frozen=True)
class _ElectronicTerm:
    gamma: float  # J/(mol K²)

    def terms(self, T):
        g = self.gamma / R
        return g * T, g * T, 0.5 * g * T * T, -0.5 * g * T * T


@dataclass(frozen=True)
class _SchottkyTerm:
    delta: float
    g_ratio: float
    n: float

    def terms(self, T):
        y = self.delta / T
        r = self.g_ratio * np.exp(-y)
        z = 1.0 + r
        lnz = np.log1p(r)
        occ = r / z
        n = self.n
        return n * y * y * occ / z, n * (lnz + y * occ), n * self.delta * occ, -n * T * lnz


# Render bins: geometric from 1e-5 of a cut-off (flat bins of ratio 1 + r err by O(r²):
# r ≈ 1.2e-3 keeps the thermodynamics to ~1e-6) plus an even grid for display.
_RENDER_FRACTIONS = np.union1d(np.geomspace(1e-5, 1.0, 10_000), np.linspace(0.0, 1.0, 1001)[1:])


# --- components -------------------------------------------------------------------------------

@dataclass(frozen=True)
class Component(Documented):
    """Base of every model component: a frozen, validated parameter object.

    Subclasses name their continuous parameters in ``_continuous`` (what a fit varies
    by default) and return their engine parts from ``_parts``.
    """

    kind: ClassVar[str] = "component"
    #: True for a term whose heat capacity is already C_p (a quasi-harmonic solid)
    gives_cp: ClassVar[bool] = False
    _continuous: ClassVar[tuple[str, ...]] = ()
    _checks: ClassVar[dict] = {}  # field → validator(kind, label, value) returning the clean value

    def __post_init__(self):
        for label, check in self._checks.items():
            object.__setattr__(self, label, check(self.kind, label, getattr(self, label)))
        if self.name is None:
            object.__setattr__(self, "name", self.kind)
        elif not isinstance(self.name, str) or not self.name or "." in self.name:
            raise InputError(f"{self.kind}: name must be a non-empty string without '.', not {self.name!r}")

    # combination
    def __add__(self, other) -> "Mixture":
        return Mixture((self,)) + other

    def __radd__(self, other) -> "Mixture":
        if isinstance(other, Spectrum):  # spectrum + component
            return Mixture((PhononDOS(other), self))
        if other == 0:  # sum([...]) starts from 0
            return Mixture((self,))
        return NotImplemented

    def replace(self, **changes) -> "Component":
        """A copy with some fields changed (validated again)."""
        return dataclasses.replace(self, **changes)

    @property
    def modes(self) -> float:
        """Vibrational modes per formula unit (vibrational components override it with a field)."""
        return 0.0

    @property
    def parameters(self) -> dict[str, float]:
        """Numeric parameters by field name (mode counts included)."""
        out = {}
        for f in dataclasses.fields(self):
            if f.name in ("name", "dim"):
                continue
            out[f.name] = float(getattr(self, f.name))
        return out

    def _parts(self) -> tuple[list, list, list, list]:
        """(node θ list, node weight list, branches, extras)."""
        raise NotImplementedError

    def modeset(self) -> ModeSet:
        """The evaluation engine's view of this component (one signature for every source)."""
        return Mixture((self,)).modeset()

    def spectrum(self, **kw) -> Spectrum:
        """The vibrational part rendered as a :class:`~modeheat.Spectrum` (see :meth:`Mixture.spectrum`)."""
        return Mixture((self,)).spectrum(**kw)

    def moment_debye_temperature(self, n: float) -> float:
        """Moment Debye temperature θ(n) in K (see :meth:`Mixture.moment_debye_temperature`)."""
        return Mixture((self,)).moment_debye_temperature(n)

    def cumulative(self, theta: np.ndarray) -> np.ndarray:
        """Modes with temperature equivalent below θ (K)."""
        return np.zeros_like(np.asarray(theta, dtype=float))

    def _edges(self) -> np.ndarray:
        """Natural bin edges (K) for rendering."""
        return np.array([])


@dataclass(frozen=True)
class Debye(Component):
    """Debye branch: g ∝ ω^(dim−1) up to θ.

    Parameters
    ----------
    theta : float — cut-off (Debye temperature) in K
    modes : float — modes per formula unit (3 for the acoustic branches of a solid)
    dim : int — 1, 2 or 3; the low-T law is C ∝ T^dim
    name : str, optional
    """

    theta: float
    modes: float = 3.0
    dim: int = 3
    name: str | None = None
    kind: ClassVar[str] = "debye"
    _continuous: ClassVar[tuple[str, ...]] = ("theta",)

    _checks: ClassVar[dict] = {"theta": _kelvin, "modes": _non_negative, "dim": _dim}

    def _parts(self):
        return [], [], [DebyeBranch(self.theta, self.modes, self.dim)], []

    def cumulative(self, theta):
        t = np.clip(np.asarray(theta, dtype=float) / self.theta, 0, 1)
        return self.modes * t**self.dim

    def _edges(self):
        return self.theta * _RENDER_FRACTIONS


@dataclass(frozen=True)
class SineChain(Component):
    """Sine dispersion ω = ω_max·sin(πk/2k_max) filling a dim-dimensional Debye sphere.

    dim = 1 is exactly the nearest-neighbour linear chain, g(ω) = (2/π)/√(ω_max² − ω²).

    Parameters
    ----------
    theta : float — ω_max as a temperature equivalent in K
    modes : float — modes per formula unit
    dim : int — 1, 2 or 3
    name : str, optional
    """

    theta: float
    modes: float = 3.0
    dim: int = 3
    name: str | None = None
    kind: ClassVar[str] = "sinechain"
    _continuous: ClassVar[tuple[str, ...]] = ("theta",)

    _checks: ClassVar[dict] = {"theta": _kelvin, "modes": _non_negative, "dim": _dim}

    def _parts(self):
        return [], [], [_SineBranch(self.theta, self.modes, self.dim)], []

    def cumulative(self, theta):
        t = np.clip(np.asarray(theta, dtype=float) / self.theta, 0, 1)
        return self.modes * ((2 / math.pi) * np.arcsin(t)) ** self.dim

    def _edges(self):
        return self.theta * np.sin(0.5 * math.pi * _RENDER_FRACTIONS)


@dataclass(frozen=True)
class Einstein(Component):
    """Einstein modes: all at temperature equivalent θ.

    Parameters
    ----------
    theta : float — Einstein temperature in K
    modes : float — modes per formula unit
    name : str, optional
    """

    theta: float
    modes: float = 3.0
    name: str | None = None
    kind: ClassVar[str] = "einstein"
    _continuous: ClassVar[tuple[str, ...]] = ("theta",)

    _checks: ClassVar[dict] = {"theta": _kelvin, "modes": _non_negative}

    def _parts(self):
        return [self.theta], [self.modes], [], []

    def cumulative(self, theta):
        return np.where(np.asarray(theta, dtype=float) > self.theta, self.modes, 0.0)

    def _edges(self):
        return self.theta * np.array([1 - 1e-6, 1 + 1e-6])


@dataclass(frozen=True)
class Band(Component):
    """A flat optical continuum: `modes` modes spread evenly over [θ_low, θ_high].

    Reduces to :class:`Einstein` as the width goes to 0.

    Parameters
    ----------
    theta_low, theta_high : float — band edges as temperature equivalents in K
    modes : float — modes per formula unit
    name : str, optional
    """

    theta_low: float
    theta_high: float
    modes: float = 3.0
    name: str | None = None
    kind: ClassVar[str] = "band"
    _continuous: ClassVar[tuple[str, ...]] = ("theta_low", "theta_high")

    _checks: ClassVar[dict] = {"theta_low": _kelvin_or_zero, "theta_high": _kelvin, "modes": _non_negative}

    def __post_init__(self):
        super().__post_init__()
        if self.theta_high < self.theta_low:
            raise InputError(f"band: theta_high ({self.theta_high:g} K) is below theta_low ({self.theta_low:g} K)")

    def _parts(self):
        if self.theta_high == self.theta_low:
            return [self.theta_low], [self.modes], [], []
        return [], [], [_BandBranch(self.theta_low, self.theta_high, self.modes)], []

    def cumulative(self, theta):
        lo, hi = self.theta_low, self.theta_high
        t = np.asarray(theta, dtype=float)
        if hi == lo:
            return np.where(t > lo, self.modes, 0.0)
        return self.modes * np.clip((t - lo) / (hi - lo), 0, 1)

    def _edges(self):
        lo, hi = self.theta_low, self.theta_high
        if hi == lo:
            return lo * np.array([1 - 1e-6, 1 + 1e-6])
        return np.linspace(lo, hi, 400)


@dataclass(frozen=True)
class Electronic(Component):
    """The conduction-electron term: C = S = γT, U = γT²/2, F = −γT²/2; no modes.

    Parameters
    ----------
    gamma : float — Sommerfeld coefficient in J/(mol K²) per formula unit
    name : str, optional
    """

    gamma: float
    name: str | None = None
    kind: ClassVar[str] = "electronic"
    _continuous: ClassVar[tuple[str, ...]] = ("gamma",)

    _checks: ClassVar[dict] = {"gamma": _non_negative}

    def _parts(self):
        return [], [], [], [_ElectronicTerm(self.gamma)]


@dataclass(frozen=True)
class Schottky(Component):
    """Two-level (Schottky) anomaly: n systems per formula unit with splitting Δ.

    C = n·R·(Δ/T)²·g·e^(−Δ/T)/(1 + g·e^(−Δ/T))², g = g_ratio (upper/lower degeneracy).

    Parameters
    ----------
    delta : float — level splitting Δ/k in K
    g_ratio : float — degeneracy of the upper level over the lower one
    n : float — two-level systems per formula unit
    name : str, optional
    """

    delta: float
    g_ratio: float = 1.0
    n: float = 1.0
    name: str | None = None
    kind: ClassVar[str] = "schottky"
    _continuous: ClassVar[tuple[str, ...]] = ("delta", "n")

    _checks: ClassVar[dict] = {"delta": _kelvin, "g_ratio": _positive, "n": _non_negative}

    def _parts(self):
        return [], [], [], [_SchottkyTerm(self.delta, self.g_ratio, self.n)]


def _linear_cumulative(x: np.ndarray, y: np.ndarray, at: np.ndarray) -> np.ndarray:
    """∫ y dx from x[0] to each point of `at` for y linear between samples (0 below x[0])."""
    h = np.diff(x)
    cum = np.concatenate(([0.0], np.cumsum(0.5 * h * (y[:-1] + y[1:]))))
    k = np.clip(np.searchsorted(x, at, side="right") - 1, 0, x.size - 2)
    d = np.clip(at - x[k], 0.0, h[k])
    slope = (y[k + 1] - y[k]) / h[k]
    return cum[k] + y[k] * d + 0.5 * slope * d * d


@dataclass(frozen=True)
class PhononDOS(Component):
    """A computed or measured spectrum as a term of a mixture, with a frequency scale.

    A computed DOS is often a few per cent too stiff or soft: every frequency is
    multiplied by `scale`, and a fit can vary it (``"<name>.scale"``) like a Debye θ.
    The term is evaluated as the unscaled spectrum at T/scale (an exact identity of the
    kernels of x = ħω/kT; :class:`~modeheat.engine.ScaledModes`), with the spectrum's own
    low-temperature continuation, scaled the same way.  ``spectrum + component``,
    ``component + spectrum``, :class:`Mixture` and :func:`solid` wrap a
    :class:`~modeheat.Spectrum` in this term on their own.

    Parameters
    ----------
    spectrum : Spectrum — the density of states, per formula unit
    scale : float — frequency scale factor (dimensionless, > 0; 1 = as given)
    modes : float, optional — vibrational modes per formula unit the term carries
        (default: the spectrum's 3·atoms); another count scales the density
    name : str, optional — default "dos"
    """

    spectrum: Spectrum
    scale: float = 1.0
    modes: float | None = None
    name: str | None = None
    kind: ClassVar[str] = "dos"
    _continuous: ClassVar[tuple[str, ...]] = ("scale",)

    _checks: ClassVar[dict] = {"scale": _positive, "modes": _non_negative}

    def __post_init__(self):
        if not isinstance(self.spectrum, Spectrum):
            raise InputError(f"{self.kind}: spectrum must be a Spectrum, not {type(self.spectrum).__name__}")
        if self.modes is None:
            object.__setattr__(self, "modes", self.spectrum.modes)
        super().__post_init__()
        # the scaled modes must stay within the temperature equivalents the engine takes
        check_kelvin(f"{self.kind}: scale × the highest mode", self.scale * self.spectrum.modeset().theta_max)

    def __hash__(self) -> int:
        # by value, like equality (a Spectrum compares by value but is not hashable)
        sp = self.spectrum
        return hash((self.kind, self.scale, self.modes, self.name, sp.atoms, sp.unit, sp.frequency.tobytes()))

    @property
    def parameters(self) -> dict[str, float]:
        """``scale`` and ``modes`` (the spectrum itself is not a number)."""
        return {"scale": float(self.scale), "modes": float(self.modes)}

    def _parts(self):
        base = self.spectrum.modeset()
        return [], [], [ScaledModes(base, self.scale, self.modes / base.modes)], []

    def _kelvin_samples(self) -> tuple[np.ndarray, np.ndarray]:
        """The stored density as θ [K] (unscaled) and modes per K."""
        k = kelvin_per(self.spectrum.unit)
        return self.spectrum.frequency * k, self.spectrum.density / k

    def cumulative(self, theta):
        # The density as stored, linear between samples (as views draw it), scaled to
        # exactly the term's modes.
        x, y = self._kelvin_samples()
        at = np.asarray(theta, dtype=float) / self.scale
        total = float(_linear_cumulative(x, y, x[-1:])[0])
        return self.modes / total * _linear_cumulative(x, y, at)

    def _edges(self):
        x, _ = self._kelvin_samples()
        return np.union1d(self.scale * x, self.scale * x[-1] * _RENDER_FRACTIONS)


def _as_component(c) -> Component:
    """A component as given; a Spectrum wrapped as a :class:`PhononDOS` term."""
    return PhononDOS(c) if isinstance(c, Spectrum) else c


def _mode_count(c: Component) -> float:
    return float(c.modes)


# --- mixtures -----------------------------------------------------------------------------------

@dataclass(frozen=True)
class Mixture(Documented):
    """Components that add into one solid.

    Parameters
    ----------
    components : iterable of Component — repeated names get ``_2``, ``_3`` … suffixes;
        a :class:`~modeheat.Spectrum` becomes a :class:`PhononDOS` term
    atoms : float, optional — atoms per formula unit; when given, the mode count must
        equal 3·atoms
    check : {"error", "warn"} — what a mode-count mismatch does
    name : str, optional
    """

    components: tuple = ()
    atoms: float | None = None
    check: str = "error"
    name: str | None = None
    _tol: ClassVar[float] = 1e-9

    def __post_init__(self):
        comps = tuple(_as_component(c) for c in self.components)
        for c in comps:
            if not isinstance(c, Component):
                raise InputError(f"a mixture holds model components, not {type(c).__name__}")
        used: set[str] = set()
        named = []
        for c in comps:
            base, label, k = c.name, c.name, 1
            while label in used:
                k += 1
                label = f"{base}_{k}"
            used.add(label)
            named.append(c if label == c.name else dataclasses.replace(c, name=label))
        object.__setattr__(self, "components", tuple(named))
        gives_cp = [c.name for c in named if c.gives_cp]
        if gives_cp and any(isinstance(c, Dilatation) for c in named):
            raise InputError(
                f"{gives_cp[0]} already gives C_p (its own C_p − C_v); a Dilatation term beside it would count "
                "C_p − C_v twice: remove one of them"
            )
        if self.check not in ("error", "warn"):
            raise InputError(f"check must be 'error' or 'warn', not {self.check!r}")
        if self.atoms is not None:
            object.__setattr__(self, "atoms", _positive("mixture", "atoms", self.atoms))
            want = 3.0 * self.atoms
            if abs(self.modes - want) > self._tol * max(1.0, want):
                message = (
                    f"the mixture carries {self.modes:g} vibrational modes but {self.atoms:g} atoms per "
                    f"formula unit need 3·atoms = {want:g}; adjust the components' modes"
                )
                if self.check == "error":
                    raise InputError(message)
                warnings.warn(message, ModeCountWarning, stacklevel=3)

    def __add__(self, other) -> "Mixture":
        if isinstance(other, (Component, Spectrum)):
            return Mixture(self.components + (other,))
        if isinstance(other, Mixture):
            return Mixture(self.components + other.components)
        return NotImplemented

    def __radd__(self, other):
        if isinstance(other, Spectrum):  # spectrum + mixture
            return Mixture((other,) + self.components)
        if other == 0:
            return self
        return NotImplemented

    def __iter__(self):
        return iter(self.components)

    def __len__(self) -> int:
        return len(self.components)

    def __getitem__(self, name: str) -> Component:
        for c in self.components:
            if c.name == name:
                return c
        raise KeyError(f"no component named {name!r}; the mixture has {[c.name for c in self.components]}")

    @property
    def modes(self) -> float:
        """Vibrational modes per formula unit."""
        return sum(_mode_count(c) for c in self.components)

    @property
    def parameters(self) -> dict[str, float]:
        """Every numeric parameter as ``{"name.param": value}``."""
        return {f"{c.name}.{k}": v for c in self.components for k, v in c.parameters.items()}

    def continuous_parameters(self) -> list[str]:
        """Keys of the parameters a fit varies by default (mode counts excluded)."""
        return [f"{c.name}.{k}" for c in self.components for k in c._continuous]

    def with_parameters(self, values: Mapping[str, float]) -> "Mixture":
        """A copy with some parameters changed, keyed like :attr:`parameters`."""
        changes: dict[str, dict[str, float]] = {}
        known = self.parameters
        for key, value in values.items():
            if key not in known:
                raise InputError(f"unknown parameter {key!r}; known: {', '.join(known)}")
            cname, pname = key.split(".", 1)
            changes.setdefault(cname, {})[pname] = value
        comps = tuple(c.replace(**changes[c.name]) if c.name in changes else c for c in self.components)
        return dataclasses.replace(self, components=comps)

    def with_atoms(self, atoms: float | None, check: str = "error") -> "Mixture":
        """The same components with the mode count checked against 3·atoms."""
        return dataclasses.replace(self, atoms=atoms, check=check)

    def modeset(self) -> ModeSet:
        """The evaluation engine's view of the mixture (used by :func:`modeheat.thermo`)."""
        thetas, weights, branches, extras = [], [], [], []
        for c in self.components:
            t, w, b, e = c._parts()
            thetas += t
            weights += w
            branches += b
            extras += e
        modes = self.modes
        atoms = self.atoms if self.atoms is not None else (modes / 3.0 if modes > 0 else 1.0)
        keep = [i for i, w in enumerate(weights) if w > 0]
        return ModeSet(
            np.array([thetas[i] for i in keep], dtype=float),
            np.array([weights[i] for i in keep], dtype=float),
            branches=tuple(b for b in branches if b.modes > 0),
            extras=tuple(extras),
            atoms=atoms,
        )

    def moment_debye_temperature(self, n: float) -> float:
        """Moment Debye temperature θ(n) in K of the vibrational part (see
        :meth:`modeheat.Spectrum.moment_debye_temperature`); θ(−3) is the T → 0 limit."""
        if not n >= -3:
            raise InputError(f"moment order must be ≥ −3, not {n!r}")
        ms = self.modeset()
        if ms.modes <= 0:
            raise InputError("the mixture has no vibrational modes, so it has no moment Debye temperature")
        return ms.moment_debye_temperature(n)

    def cumulative(self, theta) -> np.ndarray:
        """Vibrational modes per formula unit below θ (K)."""
        return sum((c.cumulative(theta) for c in self.components), np.zeros_like(np.asarray(theta, float)))

    def spectrum(self, *, unit: str = "THz", low_t: str | float | None = None, name: str | None = None) -> Spectrum:
        """The vibrational part as a :class:`~modeheat.Spectrum` with one partial per component.

        Bins follow each component (geometric from 1e-5 of its cut-off, and at its
        edges), and each bin holds exactly the modes the model puts there, so the
        thermodynamics of the rendering match the mixture's to ~1e-6 relative.
        Electronic and two-level terms have no modes and are left out.  `low_t`
        defaults to "fit" (ω² continuation) unless a branch is lower-dimensional or a
        band reaches 0, whose low-frequency density is not ω² ("off" then).
        """
        if low_t is None:
            flat = any(getattr(c, "dim", 3) < 3 or getattr(c, "theta_low", 1.0) == 0 for c in self.components)
            low_t = "off" if flat else "fit"
        unit = check_unit(unit)
        vib = [c for c in self.components if _mode_count(c) > 0]
        if not vib:
            raise InputError("the mixture has no vibrational modes to render")
        edges = np.unique(np.concatenate([[0.0]] + [c._edges() for c in vib]))
        # Edges of different components a rounding apart would merge in another unit.
        edges = edges[np.concatenate(([True], np.diff(edges) > 1e-12 * edges[1:]))]
        counts = {c.name: np.diff(c.cumulative(edges)) for c in vib}
        total = sum(counts.values())
        atoms = self.atoms if self.atoms is not None else self.modes / 3.0
        return Spectrum.from_histogram(
            edges / kelvin_per(unit),
            total,
            unit=unit,
            atoms=atoms,
            partials=counts,
            name=name or self.name,
            low_t=low_t,
        )

    def __repr__(self) -> str:
        inner = " + ".join(repr(c) for c in self.components)
        extra = "" if self.atoms is None else f", atoms={self.atoms:g}"
        return f"Mixture({inner}{extra})"


def solid(
    atoms: float,
    acoustic: Component,
    optical: Iterable[Component] = (),
    *,
    split: Iterable[float] | None = None,
    extras: Iterable[Component] = (),
    name: str | None = None,
) -> Mixture:
    """The usual solid: 3 acoustic modes and 3(atoms − 1) optical modes.

    Parameters
    ----------
    atoms : float — atoms per formula unit
    acoustic : Component or Spectrum — Debye, SineChain or a spectrum of the acoustic
        branches (a :class:`PhononDOS` term); given 3 modes
    optical : iterable of Component or Spectrum — Einstein, Band or spectrum terms
        sharing 3(atoms − 1) modes
    split : iterable of float, optional — relative shares of the optical modes
        (default: equal)
    extras : iterable of Component — non-vibrational terms (Electronic, Schottky)
    name : str, optional
    """
    atoms = _positive("solid", "atoms", atoms)
    acoustic = _as_component(acoustic)
    optical = [_as_component(c) for c in optical]
    if not isinstance(acoustic, (Debye, SineChain, PhononDOS)):
        raise InputError(
            f"solid: the acoustic part must be a Debye, SineChain or spectrum (PhononDOS) term, not {acoustic!r}"
        )
    for c in optical:
        if not isinstance(c, Component) or "modes" not in {f.name for f in dataclasses.fields(c)}:
            raise InputError(f"solid: optical parts must be vibrational components (Einstein, Band …), not {c!r}")
    n_opt = 3.0 * (atoms - 1.0)
    if optical and n_opt <= 0:
        raise InputError("a solid with one atom per formula unit has no optical modes")
    if n_opt > 0 and not optical:
        raise InputError(f"{atoms:g} atoms per formula unit need optical components for {n_opt:g} modes")
    try:
        shares = np.ones(len(optical)) if split is None else np.asarray(list(split), dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"split needs numbers, not {split!r}") from None
    if shares.shape != (len(optical),) or not np.all(np.isfinite(shares) & (shares >= 0)) or (optical and shares.sum() <= 0):
        raise InputError("split needs one non-negative share per optical component")
    comps = [acoustic.replace(modes=3.0)]
    comps += [c.replace(modes=n_opt * s / shares.sum()) for c, s in zip(optical, shares)]
    comps += list(extras)
    return Mixture(tuple(comps), atoms=atoms, name=name)


# --- C_p − C_v as a component -------------------------------------------------------------------

@dataclass(frozen=True)
class Dilatation(Component):
    """The dilatation term C_p − C_v in the Nernst–Lindemann form C_p − C_v = A·C_p²·T.

    Nernst & Lindemann (1911).  The component carries no modes and adds nothing to
    C_v (:func:`modeheat.thermo` and :func:`modeheat.heat_capacity` ignore it); it
    turns a mixture's C_v into C_p, so that a fit of measured C_p
    (:func:`modeheat.fitting.fit`) can vary A like any other parameter.

    Parameters
    ----------
    A : float — Nernst–Lindemann coefficient in mol/J (per mole of formula units), ≥ 0
    name : str, optional
    """

    A: float
    name: str | None = None
    kind: ClassVar[str] = "dilatation"
    _continuous: ClassVar[tuple[str, ...]] = ("A",)

    def __post_init__(self):
        object.__setattr__(self, "A", _non_negative(self.kind, "A", self.A))
        super().__post_init__()

    def _parts(self):
        return [], [], [], []

    def cp_from_cv(self, temperatures, cv) -> np.ndarray:
        """C_p in J/(mol K) from C_v in J/(mol K) at temperatures in K.

        C_p = 2·C_v/(1 + √(1 − 4·A·T·C_v)), the root of C_p − C_v = A·C_p²·T that goes
        to C_v as A → 0; an :class:`~modeheat.errors.InputError` where 4·A·T·C_v > 1.
        """
        return cp_from_cv(temperatures, cv, A=self.A)


__all__.append("Dilatation")
