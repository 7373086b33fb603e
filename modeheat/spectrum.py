"""Phonon density of states: grid, units, normalisation, partials, moments.

A :class:`Spectrum` is a vibrational density of states g(ω) per formula unit,
normalised to 3·atoms modes.  It comes either from a sampled density on a frequency
grid (``Spectrum(frequency, density)``) or from a list of mode frequencies
(:meth:`Spectrum.from_modes`, e.g. every mode of a q-mesh).

Between sampled points the density is taken linear in g/ω², so that an ω² spectrum is
represented exactly; with the low-temperature continuation off it is taken linear in g,
which suits any low-frequency shape (flat for chains, linear for layers).

**Low-temperature continuation.**  A grid, or a finite list of modes, does not resolve
the lowest frequencies, and they alone decide C_v at low T.  By default
(``low_t="fit"``) the spectrum below a cut-off ω_c is replaced by a ω² branch carrying
the same number of modes, so C_v follows the T³ law with the coefficient of the
spectrum's own low-frequency part.  ``low_t=θ`` (a float, K) sets the branch from a
Debye temperature instead (see :func:`debye_temperature_from_sound` for one from sound
velocities).  For a sampled spectrum, ``low_t="extrapolate"`` fits g = a·ω² + b·ω⁴ to
the lowest 2 % of the modes (least squares in g, so the poorly resolved lowest points
weigh little) and continues with a·ω² below the point where the data start to follow
that fit — the choice for a q-mesh DOS whose lowest shells are undercounted.
``low_t="off"`` uses the data as they are.  The default ω_c is the
third sampled point above the first one with positive density (what the grid
resolves); for a list of N modes it is the frequency of the max(20, N/10⁴)-th lowest
mode, and below 200 modes there is no continuation.

**Atom count.**  The spectrum is normalised to 3 modes per atom, 3·atoms per formula
unit.  When ``atoms`` is not given it is read from the data: a density normalised to
3·n modes says n (see :class:`Spectrum` for when that is clear); otherwise the
constructors refuse with an :class:`~modeheat.errors.InputError`.  A given count that
the data clearly contradict draws an :class:`~modeheat.errors.AtomCountWarning`.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass
from typing import Mapping

import numpy as np
from scipy import constants as _c

from ._engine import DebyeBranch, ModeSet
from .errors import AtomCountWarning, InputError, SpectrumWarning
from .units import ATOMS_RANGE, KELVIN_RANGE, check_kelvin, check_unit, kelvin_per

__all__ = ["Spectrum", "ReducedDensity", "debye_temperature_from_sound"]

_NOISE = 1e-2  # negative densities up to this fraction of the peak are clipped as noise
_GAUSS = np.polynomial.legendre.leggauss(4)
_MIN_MODES_FOR_FIT = 200
_FIT_MODES = 20
_FIT_FRACTION = 1e-4
_ATOMS_TOLERANCE = 0.01  # a mode count within 1 % of 3·n ...
_ATOMS_MODES = 0.1  # ... and within 0.1 mode of it names n
_MAX_INFERRED_ATOMS = 32  # raw counts of any q-mesh of ≥ 33 points (3·atoms·N_q) lie above
_FINEST_STEP = 1e-9  # sampled frequencies above 0 but below this fraction of the highest are unresolvable


@dataclass(frozen=True)
class ReducedDensity:
    """The reduced density of states g(ω)/ω² against the Debye level.

    Attributes
    ----------
    frequency : ndarray — in `unit`
    reduced : ndarray — g/ω² in modes per formula unit per unit³
    debye_level : float — 9·atoms/θ_D(0)³ in the same unit, the value for a Debye solid
        with the spectrum's own low-temperature Debye temperature
    unit : str
    """

    frequency: np.ndarray
    reduced: np.ndarray
    debye_level: float
    unit: str


def debye_temperature_from_sound(
    v_longitudinal: float,
    v_transverse: float | None = None,
    *,
    volume: float,
    atoms: float = 1,
) -> float:
    """Debye temperature in K from sound velocities.

    θ_D = (ħ/k)·v_m·(6π²·atoms/V)^(1/3), with the mean velocity
    3/v_m³ = 1/v_L³ + 2/v_T³ (or v_m = v_L when only one velocity is given).

    Parameters
    ----------
    v_longitudinal : float — longitudinal sound velocity in m/s
    v_transverse : float, optional — transverse sound velocity in m/s
    volume : float — volume per formula unit in Å³
    atoms : float — atoms per formula unit
    """
    for label, v in (("v_longitudinal", v_longitudinal), ("v_transverse", v_transverse), ("volume", volume)):
        if v is not None and not (np.isfinite(v) and v > 0):
            raise InputError(f"{label} must be a positive number, not {v!r}")
    if v_transverse is None:
        vm = v_longitudinal
    else:
        vm = (3.0 / (1.0 / v_longitudinal**3 + 2.0 / v_transverse**3)) ** (1.0 / 3.0)
    n = atoms / (volume * 1e-30)
    return _c.hbar / _c.k * vm * (6.0 * math.pi**2 * n) ** (1.0 / 3.0)


def _vector(name: str, values) -> np.ndarray:
    try:
        a = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be numbers ({exc})") from None
    if a.ndim != 1:
        raise InputError(f"{name} must be one-dimensional, not of shape {a.shape}")
    bad = np.flatnonzero(~np.isfinite(a))
    if bad.size:
        raise InputError(f"{name} is {float(a[bad[0]])!r}, not a finite number", index=int(bad[0]))
    return a


def _partial_vectors(partials, label: str, size: int, against: str) -> dict[str, np.ndarray]:
    """Validated per-species arrays, each as long as the `against` array."""
    parts = {}
    for key, values in (partials or {}).items():
        p = _vector(f"{label} {key!r}", values)
        if p.size != size:
            raise InputError(f"{label} {key!r} has {p.size} values but {against} has {size}")
        parts[str(key)] = p
    return parts


def _check_atoms(atoms) -> float:
    try:
        a = float(atoms)
    except (TypeError, ValueError):
        raise InputError(f"atoms must be a positive number, not {atoms!r}") from None
    if not (math.isfinite(a) and a > 0):
        raise InputError(f"atoms must be a positive number, not {atoms!r}")
    if not ATOMS_RANGE[0] <= a <= ATOMS_RANGE[1]:
        raise InputError(f"atoms = {a:g} per formula unit is outside {ATOMS_RANGE[0]:g}–{ATOMS_RANGE[1]:g}")
    return a


def _clear_atoms(modes: float) -> int | None:
    """The whole n (1 to 32) of which `modes` is clearly 3·n, or None."""
    n = round(modes / 3.0) if math.isfinite(modes) else 0
    if 1 <= n <= _MAX_INFERRED_ATOMS and abs(modes - 3.0 * n) <= min(_ATOMS_TOLERANCE * 3.0 * n, _ATOMS_MODES):
        return int(n)
    return None


def _resolve_atoms(atoms, modes: float, informative: bool, what: str, who: str) -> tuple[float, str]:
    """The atom count to use and how it was obtained ("given" or "integral").

    `modes` is the mode count of the data as given, `what` says in words how it was
    counted, and `informative` whether it can tell the atom count at all.
    """
    clear = _clear_atoms(modes) if informative else None
    if atoms is None:
        if clear is None:
            if informative:
                why = (
                    f"{what} {modes:.6g} modes, not within {_ATOMS_TOLERANCE:.0%} (and {_ATOMS_MODES:g} mode) of "
                    f"3·n for a whole n from 1 to {_MAX_INFERRED_ATOMS} (3 modes per atom)"
                )
            else:
                why = what
            raise InputError(
                f"the atoms per formula unit are not clear from the data: {why}; give them (atoms= in "
                "Python, --atoms on the command line, or an '# atoms: N' line in the file)"
            )
        return float(clear), "integral"
    given = _check_atoms(atoms)
    if clear is not None and clear != given:
        warnings.warn(
            f"{who}: {what} {modes:.6g} modes, 3 modes per atom for {_atoms_text(clear)}, but atoms={given:g} "
            f"was given; it is normalised to 3·{given:g} modes (pass atoms={clear} if the data are per formula "
            f"unit of {_atoms_text(clear)})",
            AtomCountWarning,
            stacklevel=3,
        )
    return given, "given"


def _atoms_text(n: float) -> str:
    return "1 atom" if n == 1 else f"{n:g} atoms"


def _check_frequency_range(name: str, values: np.ndarray, unit: str, *, sampled: bool) -> None:
    """Frequencies whose temperature equivalents modeheat can evaluate (K range, grid resolution).

    Imaginary (negative) frequencies count by their size.  For a sampled grid a positive
    frequency below 1e-9 of the highest one is an error too:
    a grid step that fine underflows in the ω² interpolation and resolves nothing.
    """
    with np.errstate(over="ignore"):  # an overflow to inf is caught just below
        theta = np.abs(values) * kelvin_per(unit)
    lo, hi = KELVIN_RANGE
    top = int(np.argmax(theta))
    if theta[top] > hi:
        raise InputError(
            f"{name} {values[top]:g} {unit} is {theta[top]:.3g} K, above the {hi:g} K modeheat can evaluate",
            index=top,
        )
    floor = max(lo, _FINEST_STEP * theta[top]) if sampled else lo
    tiny = np.flatnonzero((values > 0) & (theta < floor))
    if tiny.size:
        i = int(tiny[0])
        why = f"below {_FINEST_STEP:g} of the highest frequency" if sampled and floor > lo else f"below {lo:g} K"
        raise InputError(
            f"{name} {values[i]:g} {unit} is above 0 but {why}, too fine to resolve; write 0 or drop the row",
            index=i,
        )


def _normalised(name: str, values: np.ndarray) -> tuple[np.ndarray, int]:
    """`values` divided by a power of two near their peak (exact), and that exponent.

    Normalising first keeps integrals of tiny or huge densities, weights and counts
    from underflowing or overflowing; a peak below the smallest normal double carries
    too few digits to normalise.
    """
    peak = float(np.max(np.abs(values))) if values.size else 0.0
    if peak == 0.0:
        return values, 0
    if peak < np.finfo(float).tiny:
        raise InputError(
            f"every {name} value is subnormal (at most {peak:.3g}), too small to normalise with any "
            "precision; multiply the column by a large factor (the normalisation does not depend on it)"
        )
    exponent = math.frexp(peak)[1]
    return np.ldexp(values, -exponent), exponent


def _scaled_back(name: str, value: float, exponent: int) -> float:
    """`value`·2^exponent, the raw integral in the units given; an InputError if it overflows."""
    try:
        return math.ldexp(value, exponent)
    except OverflowError:
        raise InputError(f"the {name} values are so large that their total overflows; divide the column by a large factor") from None


def _label(name) -> str:
    return f"spectrum {name!r}" if name else "spectrum"


def _clip_noise(name: str, values: np.ndarray, who: str, order: np.ndarray) -> np.ndarray:
    """Clip tiny negative densities with a warning; large ones are an error."""
    if values.size == 0 or values.min() >= 0:
        return values
    peak = float(np.abs(values).max())
    worst = int(np.argmin(values))
    if -values[worst] > _NOISE * peak:
        raise InputError(
            f"{name} is negative ({values[worst]:.6g}, {-values[worst] / peak:.1%} of the peak); "
            f"a density of states cannot be negative",
            index=int(order[worst]),
        )
    n = int(np.count_nonzero(values < 0))
    warnings.warn(
        f"{who}: {n} slightly negative {name} value(s) (at most {-values[worst] / peak:.2%} of the "
        "peak) clipped to 0 as noise",
        SpectrumWarning,
        stacklevel=4,
    )
    return np.clip(values, 0.0, None)


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


class Spectrum:
    """A phonon density of states per formula unit, normalised to 3·atoms modes.

    Parameters
    ----------
    frequency : array_like — frequency grid in `unit`; negative values are imaginary
        modes, which are excluded with a warning
    density : array_like — g(ω) on that grid, any normalisation (modes per unit)
    unit : str — "THz", "meV", "cm-1", "rad/s" or "K" (temperature equivalent)
    atoms : float, optional — atoms per formula unit; by default read from the data
        (Notes), else an InputError
    partials : mapping of str to array_like, optional — partial densities (per species)
        on the same grid, in the same normalisation as `density`
    name : str, optional
    low_t : "fit", "extrapolate", "off" or float — low-temperature continuation (module
        docstring); a float is a Debye temperature in K
    low_t_cutoff : float, optional — the continuation's cut-off frequency in `unit`

    Raises
    ------
    InputError
        Non-finite values, negative densities beyond noise, no real modes, `atoms` not
        given and not clear from the data; ``index`` names the offending row.

    Warns
    -----
    AtomCountWarning
        `atoms` is given but the data clearly hold 3·n modes for another whole n.

    Notes
    -----
    **Atom count from the data.**  A density normalised per formula unit integrates to
    3 modes per atom (common practice).  The count is read from the data as given,
    before any repair or normalisation: the trapezoid integral over every sampled point,
    imaginary (negative) frequencies included, since a q-mesh density normalised to 3n
    with a small imaginary part still holds 3n in total; the trapezoid rule because that
    is how such files are normalised (on a grid that resolves the spectrum it differs
    from the spectrum's own quadrature by far less than the tolerance).  For
    :meth:`from_histogram` it is the sum of all counts, for :meth:`from_modes` the sum of
    all weights.  The count is *clear* when it lies within 1 % of 3·n, and within 0.1
    mode, for a whole n from 1 to 32; then ``atoms=None`` takes n (:attr:`atoms_source`
    "integral") and a different `atoms` draws an :class:`AtomCountWarning`.  Otherwise
    ``atoms=None`` is an InputError: a density normalised to 1, or an unnormalised one.
    The limits keep unnormalised data from being misread: a density of raw mode counts
    of a q-mesh of N_q ≥ 33 points (3·atoms·N_q modes) lies above 3·32, and an arbitrary
    total passes the 0.1-mode test by chance at most 1 time in 15; larger formula units
    need `atoms` (or a file's `# atoms:` line).  Whole-number counts or weights, and a
    mode list without weights, count modes of a q-mesh — 3·atoms·N_q for N_q q-points —
    and say nothing about atoms alone; only fractional ones (q-point weights summing to
    1, a normalised histogram) are read.
    """

    __slots__ = (
        "_kind",
        "_frequency",
        "_density",
        "_partials",
        "_unit",
        "_atoms",
        "_name",
        "_low_t",
        "_cutoff_k",
        "_fit_theta",
        "_raw_integral",
        "_modeset",
        "_atoms_source",
        "_mode_integral",
    )

    def __init__(
        self,
        frequency,
        density,
        *,
        unit: str = "THz",
        atoms: float | None = None,
        partials: Mapping[str, object] | None = None,
        name: str | None = None,
        low_t: str | float = "fit",
        low_t_cutoff: float | None = None,
    ):
        unit = check_unit(unit)
        low_t = _check_low_t(low_t)
        who = _label(name)
        f = _vector("frequency", frequency)
        g = _vector("density", density)
        if g.shape != f.shape:
            raise InputError(f"density has {g.size} values but frequency has {f.size}")
        if f.size:
            _check_frequency_range("frequency", f, unit, sampled=True)
        parts = _partial_vectors(partials, "partial density", f.size, "frequency")
        if f.size < 2:
            raise InputError(f"a sampled spectrum needs at least 2 points, got {f.size}")

        order = np.argsort(f, kind="stable")
        if np.any(np.diff(f) < 0):
            warnings.warn(f"{who}: frequencies were not in increasing order; sorted", SpectrumWarning, stacklevel=2)
        f, g = f[order], g[order]
        parts = {k: v[order] for k, v in parts.items()}
        scaled, exponent = _normalised("density", g)
        mode_integral = _scaled_back("density", float(np.trapezoid(scaled, f)), exponent)
        g = _clip_noise("density", g, who, order)
        parts = {k: _clip_noise(f"partial density {k!r}", v, who, order) for k, v in parts.items()}

        f, g, parts = _merge_duplicates(f, g, parts, who)
        f, g, parts = _drop_imaginary(f, g, parts, who, order)
        if not np.any(g > 0):
            raise InputError("density is zero everywhere: no modes")
        if f.size < 2:
            raise InputError(f"every row has the same frequency ({f[0]:g} {unit}): a sampled spectrum needs 2 distinct ones")
        if low_t != "off" and not np.any(g[f > 0] > 0):
            raise InputError(
                "the density is zero at every frequency above 0: with the ω² low-temperature continuation a "
                "density at ω = 0 alone carries no modes (low_t='off' reads the data as they are)"
            )
        g, exponent = _normalised("density", g)
        parts = {k: np.ldexp(v, -exponent) for k, v in parts.items()}
        what = "the density integrates (trapezoid rule, imaginary part included) to"
        atoms, atoms_source = _resolve_atoms(atoms, mode_integral, True, what, who)

        theta = f * kelvin_per(unit)
        ms, scale, cutoff_k, fit_theta = _sampled_modeset(theta, g, atoms, low_t, low_t_cutoff, unit, who)
        scale *= kelvin_per(unit)  # the engine integrates over θ in K, the density is per `unit`
        self._set(
            kind="sampled",
            frequency=f,
            density=g * scale,
            partials={k: v * scale for k, v in parts.items()},
            unit=unit,
            atoms=atoms,
            name=name,
            low_t=low_t,
            cutoff_k=cutoff_k,
            fit_theta=fit_theta,
            raw_integral=_scaled_back("density", float(np.trapezoid(g, f)), exponent),
            modeset=ms,
            atoms_source=atoms_source,
            mode_integral=mode_integral,
        )

    # --- construction helpers --------------------------------------------------------
    def _set(self, **kw) -> None:
        for key, value in kw.items():
            if isinstance(value, np.ndarray):
                value = value.copy()
                value.flags.writeable = False
            elif isinstance(value, dict):
                value = {k: _readonly(v) for k, v in value.items()}
            object.__setattr__(self, "_" + key, value)

    def __setattr__(self, key, value):
        raise AttributeError("Spectrum is immutable; use .to(), .with_low_t() or build a new one")

    @classmethod
    def _from_parts(cls, **kw) -> "Spectrum":
        obj = cls.__new__(cls)
        obj._set(**kw)
        return obj

    def _parts(self) -> dict:
        return {key[1:]: object.__getattribute__(self, key) for key in self.__slots__}

    def _with(self, **changes) -> "Spectrum":
        """A copy with some stored parts replaced (no recomputation)."""
        parts = self._parts()
        parts.update(changes)
        return Spectrum._from_parts(**parts)

    @classmethod
    def from_modes(
        cls,
        frequencies,
        weights=None,
        *,
        unit: str = "THz",
        atoms: float | None = None,
        partials: Mapping[str, object] | None = None,
        name: str | None = None,
        low_t: str | float = "fit",
        low_t_cutoff: float | None = None,
        bins: int | None = None,
    ) -> "Spectrum":
        """A spectrum from individual mode frequencies, e.g. every mode of a q-mesh.

        The modes themselves drive the thermodynamics (no binning error); a histogram
        with `bins` bins is kept for display.

        Parameters
        ----------
        frequencies : array_like — mode frequencies in `unit`; negative ones are
            imaginary modes, excluded with a warning
        weights : array_like, optional — weight of each mode (e.g. q-point weights)
        atoms : float, optional — atoms per formula unit; by default read from
            fractional weights that sum clearly to 3·n (:class:`Spectrum`, Notes); a
            list without weights or with whole-number weights needs it
        unit, name, low_t, low_t_cutoff : as for :class:`Spectrum`
        partials : mapping of str to array_like, optional — per-mode weight fractions
            of each species (e.g. eigenvector weights), summing to 1 per mode
        bins : int, optional — histogram bins for display (default from the mode count)
        """
        unit = check_unit(unit)
        low_t = _check_low_t(low_t)
        if low_t == "extrapolate":
            raise InputError("low_t='extrapolate' works on sampled spectra; use 'fit' or a Debye temperature")
        who = _label(name)
        f = _vector("frequencies", frequencies)
        w = np.ones_like(f) if weights is None else _vector("weights", weights)
        if w.shape != f.shape:
            raise InputError(f"weights has {w.size} values but frequencies has {f.size}")
        neg_w = np.flatnonzero(w < 0)
        if neg_w.size:
            raise InputError(f"weight {w[neg_w[0]]!r} is negative", index=int(neg_w[0]))
        parts = _partial_vectors(partials, "partial weights", f.size, "frequencies")
        if f.size == 0 or not np.any(w > 0):
            raise InputError("no modes given")
        _check_frequency_range("frequency", f, unit, sampled=False)
        if not np.any(w[f > 0] > 0):
            raise InputError("every mode with weight has zero or negative frequency: no real modes")
        counted = weights is None or bool(np.all(w == np.round(w)))
        w, exponent = _normalised("weight", w)
        mode_integral = _scaled_back("weight", float(w.sum()), exponent)
        if counted:
            # Counted modes: a q-mesh of N_q points gives 3·atoms·N_q, which does not tell atoms.
            what = (
                f"a mode list with whole-number weights or none counts modes ({mode_integral:.6g}), "
                "3·atoms·N_q for a mesh of N_q q-points, which does not tell the atoms"
            )
            atoms, atoms_source = _resolve_atoms(atoms, mode_integral, False, what, who)
        else:
            what = "the mode weights sum (imaginary modes included) to"
            atoms, atoms_source = _resolve_atoms(atoms, mode_integral, True, what, who)
        imag = f < 0
        if imag.all():
            raise InputError("all modes are imaginary (negative frequencies): no real modes")
        if imag.any():
            frac = float(w[imag].sum() / w.sum())
            warnings.warn(
                f"{who}: {int(imag.sum())} imaginary mode(s) (negative frequencies), {frac:.3%} of the "
                "modes by weight, excluded",
                SpectrumWarning,
                stacklevel=2,
            )
            f, w = f[~imag], w[~imag]
            parts = {k: v[~imag] for k, v in parts.items()}
        theta = f * kelvin_per(unit)
        total_w = float(w.sum())
        scale = 3.0 * atoms / total_w
        ms, cutoff_k, fit_theta = _modes_modeset(theta, w * scale, atoms, low_t, low_t_cutoff, unit, who)

        nbins = bins or int(np.clip(2 * math.sqrt(f.size), 50, 2000))
        top = float(f.max()) if f.max() > 0 else 1.0
        width = top / nbins
        idx = np.minimum((f / width).astype(np.int64), nbins - 1)
        hist = np.bincount(idx, weights=w * scale, minlength=nbins) / width
        centres = (np.arange(nbins) + 0.5) * width
        phist = {k: np.bincount(idx, weights=w * scale * v, minlength=nbins) / width for k, v in parts.items()}
        return cls._from_parts(
            kind="modes",
            frequency=centres,
            density=hist,
            partials=phist,
            unit=unit,
            atoms=atoms,
            name=name,
            low_t=low_t,
            cutoff_k=cutoff_k,
            fit_theta=fit_theta,
            raw_integral=_scaled_back("weight", total_w, exponent),
            modeset=ms,
            atoms_source=atoms_source,
            mode_integral=mode_integral,
        )

    @classmethod
    def from_histogram(
        cls,
        edges,
        counts,
        *,
        unit: str = "THz",
        atoms: float | None = None,
        partials: Mapping[str, object] | None = None,
        name: str | None = None,
        low_t: str | float = "fit",
        low_t_cutoff: float | None = None,
    ) -> "Spectrum":
        """A spectrum from mode counts in frequency bins (flat density inside each bin).

        The count of every bin is kept exactly, which suits histograms of measured
        spectra and model densities with integrable singularities.

        Parameters
        ----------
        edges : array_like — n + 1 increasing bin edges in `unit`; bins below 0
            (imaginary modes) are excluded with a warning
        counts : array_like — n mode counts (any normalisation), ≥ 0
        atoms : float, optional — atoms per formula unit; by default read from
            fractional counts that sum clearly to 3·n (:class:`Spectrum`, Notes);
            whole-number counts need it
        unit, name, low_t : as for :class:`Spectrum`
        partials : mapping of str to array_like, optional — per-species counts per bin
        low_t_cutoff : float, optional — in `unit`; default the upper edge of the third
            bin above the first non-empty one
        """
        unit = check_unit(unit)
        low_t = _check_low_t(low_t)
        if low_t == "extrapolate":
            raise InputError("low_t='extrapolate' works on sampled spectra; use 'fit' or a Debye temperature")
        who = _label(name)
        e = _vector("edges", edges)
        c = _vector("counts", counts)
        if e.size != c.size + 1 or c.size == 0:
            raise InputError(f"a histogram needs n + 1 edges for n counts, got {e.size} edges and {c.size} counts")
        step = np.flatnonzero(np.diff(e) <= 0)
        if step.size:
            raise InputError("bin edges must increase strictly", index=int(step[0]) + 1)
        _check_frequency_range("bin edge", e, unit, sampled=True)
        parts = _partial_vectors(partials, "partial counts", c.size, "counts")
        order = np.arange(c.size)
        counted = bool(np.all(c == np.round(c)))
        scaled, exponent = _normalised("count", c)
        mode_integral = _scaled_back("count", float(scaled.sum()), exponent)
        c = _clip_noise("counts", c, who, order)
        parts = {k: _clip_noise(f"partial counts {k!r}", v, who, order) for k, v in parts.items()}
        if e[-1] <= 0 or not np.any(c[e[1:] > 0] > 0):
            raise InputError("no real modes: every non-empty bin lies at negative (imaginary) frequencies")
        if e[0] < 0:
            # keep the positive share of a bin that straddles 0
            share = np.clip(e[1:], 0, None) - np.clip(e[:-1], 0, None)
            frac_kept = share / np.diff(e)
            lost = float(np.sum(c * (1 - frac_kept)) / np.sum(c))
            warnings.warn(
                f"{who}: imaginary modes (negative frequencies) excluded: {lost:.3%} of the modes",
                SpectrumWarning,
                stacklevel=2,
            )
            keep = share > 0
            c = (c * frac_kept)[keep]
            parts = {k: (v * frac_kept)[keep] for k, v in parts.items()}
            e = np.concatenate(([max(e[0], 0.0)], e[1:][keep]))
            e[0] = max(e[0], 0.0)
        if not np.any(c > 0):
            raise InputError("counts are zero everywhere: no modes")
        c, exponent = _normalised("count", c)
        parts = {k: np.ldexp(v, -exponent) for k, v in parts.items()}
        if counted:
            what = (
                f"whole-number counts ({mode_integral:.6g} modes in all) count the modes of a q-mesh, "
                "3·atoms·N_q for N_q q-points, and do not tell the atoms"
            )
            atoms, atoms_source = _resolve_atoms(atoms, mode_integral, False, what, who)
        else:
            what = "the counts (imaginary bins included) sum to"
            atoms, atoms_source = _resolve_atoms(atoms, mode_integral, True, what, who)
        theta = e * kelvin_per(unit)
        total = float(c.sum())
        ms, cutoff_k, fit_theta = _histogram_modeset(theta, c * (3.0 * atoms / total), atoms, low_t, low_t_cutoff, unit)
        width = np.diff(e)
        scale = 3.0 * atoms / total
        return cls._from_parts(
            kind="histogram",
            frequency=0.5 * (e[:-1] + e[1:]),
            density=c * scale / width,
            partials={k: v * scale / width for k, v in parts.items()},
            unit=unit,
            atoms=atoms,
            name=name,
            low_t=low_t,
            cutoff_k=cutoff_k,
            fit_theta=fit_theta,
            raw_integral=_scaled_back("count", total, exponent),
            modeset=ms,
            atoms_source=atoms_source,
            mode_integral=mode_integral,
        )

    # --- properties -----------------------------------------------------------------
    @property
    def frequency(self) -> np.ndarray:
        """Frequency grid in :attr:`unit` (read-only)."""
        return self._frequency

    @property
    def density(self) -> np.ndarray:
        """g(ω) in modes per formula unit per :attr:`unit`, integrating to 3·atoms (read-only)."""
        return self._density

    @property
    def partials(self) -> dict[str, np.ndarray]:
        """Partial densities in the same normalisation as :attr:`density`."""
        return dict(self._partials)

    @property
    def unit(self) -> str:
        return self._unit

    @property
    def atoms(self) -> float:
        """Atoms per formula unit."""
        return self._atoms

    @property
    def atoms_source(self) -> str:
        """How :attr:`atoms` was obtained: "given" (the argument), "file" (an ``# atoms:``
        line of the file read) or "integral" (the data's clear mode count, :attr:`mode_integral`)."""
        return self._atoms_source

    @property
    def mode_integral(self) -> float:
        """Modes in the data as given, before any repair or normalisation (class Notes):
        the trapezoid integral over every point, the sum of all counts, or of all weights."""
        return self._mode_integral

    @property
    def modes(self) -> float:
        """Vibrational modes per formula unit (3·atoms)."""
        return 3.0 * self._atoms

    @property
    def name(self) -> str | None:
        return self._name

    @property
    def raw_integral(self) -> float:
        """Trapezoid integral of the density as given (before normalisation), in its units × :attr:`unit`;
        for a spectrum from modes, the sum of the weights kept."""
        return self._raw_integral

    @property
    def low_t(self) -> str | float:
        """The low-temperature continuation: "fit", "off" or a Debye temperature in K."""
        return self._low_t

    @property
    def low_t_cutoff(self) -> float:
        """Cut-off frequency of the low-temperature continuation, in :attr:`unit` (0 when off)."""
        return self._cutoff_k / kelvin_per(self._unit)

    def modeset(self) -> ModeSet:
        """The evaluation engine's view of this spectrum (used by :func:`modeheat.thermo`)."""
        return self._modeset

    # --- conversions ------------------------------------------------------------------
    def to(self, unit: str) -> "Spectrum":
        """The same spectrum on a grid in another frequency unit."""
        unit = check_unit(unit)
        r = kelvin_per(self._unit) / kelvin_per(unit)
        parts = self._parts()
        parts.update(
            frequency=self._frequency * r,
            density=self._density / r,
            partials={k: v / r for k, v in self._partials.items()},
            unit=unit,
            raw_integral=self._raw_integral,
        )
        return Spectrum._from_parts(**parts)

    def with_low_t(self, low_t: str | float = "fit", low_t_cutoff: float | None = None) -> "Spectrum":
        """The same sampled data with another low-temperature continuation (sampled spectra only)."""
        if self._kind != "sampled":
            raise InputError(f"with_low_t needs sampled data; build this {self._kind} spectrum again instead")
        rebuilt = Spectrum(
            self._frequency,
            self._density,
            unit=self._unit,
            atoms=self._atoms,
            partials=self._partials,
            name=self._name,
            low_t=low_t,
            low_t_cutoff=low_t_cutoff,
        )
        return rebuilt._with(atoms_source=self._atoms_source, mode_integral=self._mode_integral)

    # --- moments ----------------------------------------------------------------------
    def moment_debye_temperature(self, n: float) -> float:
        """Moment Debye temperature θ(n) in K.

        θ(n) = [(n+3)/3 · ⟨θⁿ⟩]^(1/n) for n ≠ 0, θ(0) = exp(1/3 + ⟨ln θ⟩), and θ(−3) the
        low-temperature limit from the ω² coefficient.  Every θ(n) equals θ_D for a Debye
        spectrum.  θ(−3) is the T → 0 Debye temperature, θ(−2) governs the mean-square
        displacement, θ(0) the high-T entropy and θ(2) the high-T heat capacity.

        Parameters
        ----------
        n : float — order, n ≥ −3
        """
        if not n >= -3:
            raise InputError(f"moment order must be ≥ −3, not {n!r}")
        if n == -3 and self._low_t == "off":
            return self._fit_theta
        return self._modeset.moment_theta(n)

    def reduced_density(self) -> ReducedDensity:
        """g(ω)/ω² on the positive-frequency grid, with the Debye level 9·atoms/θ_D(0)³."""
        f = self._frequency
        pos = f > 0
        theta0 = self.moment_debye_temperature(-3) / kelvin_per(self._unit)
        level = 9.0 * self._atoms / theta0**3 if np.isfinite(theta0) and theta0 > 0 else math.nan
        return ReducedDensity(f[pos].copy(), self._density[pos] / f[pos] ** 2, level, self._unit)

    def __repr__(self) -> str:
        name = f"{self._name!r}, " if self._name else ""
        return (
            f"Spectrum({name}{self._frequency.size} points, 0–{self._frequency.max():.4g} {self._unit}, "
            f"atoms={self._atoms:g}, low_t={self._low_t!r})"
        )


def _readonly(a: np.ndarray) -> np.ndarray:
    a = np.array(a, dtype=float)
    a.flags.writeable = False
    return a


def _check_low_t(low_t):
    if isinstance(low_t, str):
        if low_t in ("fit", "off", "extrapolate"):
            return low_t
        raise InputError(f"low_t must be 'fit', 'extrapolate', 'off' or a Debye temperature in K, not {low_t!r}")
    try:
        value = float(low_t)
    except (TypeError, ValueError):
        raise InputError(f"low_t must be 'fit', 'off' or a Debye temperature in K, not {low_t!r}") from None
    if not (math.isfinite(value) and value > 0):
        raise InputError(f"a Debye temperature for low_t must be positive, not {low_t!r}")
    return check_kelvin("low_t", value)


def _merge_duplicates(f, g, parts, who):
    """Average densities given twice at the same frequency."""
    dup = np.diff(f) == 0
    if not dup.any():
        return f, g, parts
    uniq, inverse, counts = np.unique(f, return_inverse=True, return_counts=True)
    warnings.warn(
        f"{who}: {int(dup.sum())} duplicate frequency value(s); their densities were averaged",
        SpectrumWarning,
        stacklevel=3,
    )

    def avg(v):
        return np.bincount(inverse, weights=v) / counts

    return uniq, avg(g), {k: avg(v) for k, v in parts.items()}


def _drop_imaginary(f, g, parts, who, order):
    """Remove negative (imaginary) frequencies, saying which fraction of modes went."""
    neg = f < 0
    if not neg.any():
        return f, g, parts
    if np.all(f <= 0):
        raise InputError("all frequencies are zero or negative (imaginary modes): no real modes")
    total = np.trapezoid(g, f)
    keep_from = int(np.argmax(~neg))
    lost = np.trapezoid(g[: keep_from + 1], f[: keep_from + 1])
    frac = lost / total if total > 0 else 1.0
    warnings.warn(
        f"{who}: imaginary modes (negative frequencies) excluded: {frac:.3%} of the modes",
        SpectrumWarning,
        stacklevel=3,
    )
    sl = slice(keep_from, None)
    return f[sl], g[sl], {k: v[sl] for k, v in parts.items()}


def _sampled_modeset(theta, g, atoms, low_t, cutoff, unit, who):
    """Nodes of a sampled density and its continuation.

    Returns (ModeSet, scale from the given density to the normalised one, ω_c in K,
    θ_D(0) of the fit in K).
    """
    # With the ω² continuation the data are read as ω²-like (linear in g/ω²); without it,
    # as they are (linear in g), which is right for any low-frequency shape.
    ratio_form = np.full(theta.size - 1, low_t != "off")
    if low_t != "off" and theta[0] > 0:
        # Below the first sample the density continues as ω² (g/ω² constant) down to 0.
        theta, g = np.concatenate(([0.0], theta)), np.concatenate(([0.0], g))
        ratio_form = np.ones(theta.size - 1, dtype=bool)
    positive = np.flatnonzero(g > 0)
    if cutoff is None:
        wc = float(theta[min(int(positive[0]) + 3, theta.size - 1)])
    else:
        wc = float(cutoff) * kelvin_per(unit)
        if not (math.isfinite(wc) and 0 < wc < theta[-1]):
            raise InputError(f"low_t_cutoff must lie inside the frequency grid, not {cutoff!r}")
    nodes_all, w_all = _interval_nodes(theta, g, 0.0, ratio_form)
    raw = float(w_all.sum())
    below = float(w_all[nodes_all < wc].sum())
    # n_c = 3·atoms·below/raw modes below ω_c ⇒ θ_D(0) = ω_c·(3·atoms/n_c)^(1/3)
    fit_theta = wc * (raw / below) ** (1.0 / 3.0) if below > 0 else math.inf
    if low_t == "off":
        scale = 3.0 * atoms / raw
        if theta[0] > 0:
            return ModeSet(nodes_all, w_all * scale, atoms=atoms), scale, 0.0, fit_theta
        # The interval from ω = 0, linear in g, is exactly a flat (dim 1) plus a linear
        # (dim 2) Debye branch; quadrature nodes would miss the ln ω of S and F there.
        nodes, w = _interval_nodes(theta, g, theta[1], ratio_form)
        w1, g0, g1 = theta[1], g[0], g[1]
        branches = tuple(
            DebyeBranch(w1, m * scale, d) for m, d in ((g0 * w1, 1), (0.5 * (g1 - g0) * w1, 2)) if m != 0
        )
        return ModeSet(nodes, w * scale, branches=branches, atoms=atoms), scale, 0.0, fit_theta
    if low_t == "extrapolate":
        return _extrapolated_modeset(theta, g, atoms, cutoff, unit, ratio_form, positive)
    nodes, w = _interval_nodes(theta, g, wc, ratio_form)
    if low_t == "fit":
        if below <= 0:
            warnings.warn(
                f"{who}: no modes below the low-temperature cut-off {wc:.4g} K, so the ω² continuation "
                "is empty and C_v falls faster than T³; pass low_t=θ_D to set one",
                SpectrumWarning,
                stacklevel=3,
            )
        scale = 3.0 * atoms / raw
        n_c = below * scale
    else:
        n_c = 3.0 * atoms * (wc / low_t) ** 3
        if n_c >= 3.0 * atoms or not w.sum() > 0:
            raise InputError(f"low_t = {low_t:g} K puts all modes below the cut-off {wc:.4g} K")
        scale = (3.0 * atoms - n_c) / float(w.sum())
    branches = (DebyeBranch(wc, n_c),) if n_c > 0 else ()
    return ModeSet(nodes, w * scale, branches=branches, atoms=atoms), scale, wc, fit_theta


_EXTRAPOLATE_FRACTION = 0.02  # the fit window holds the lowest 2 % of the modes
_EXTRAPOLATE_AGREE = 0.05  # data above ω_c follow the fitted g/ω² within 5 %


def _extrapolated_modeset(theta, g, atoms, cutoff, unit, ratio_form, positive):
    """The ω² branch extrapolated from the resolved low-frequency part.

    g = a·ω² + b·ω⁴ is fitted by least squares in g over the lowest 2 % of the modes, so
    the poorly resolved lowest points (small g) weigh little; a is the T → 0 coefficient.
    The branch replaces the data below ω_c, the lowest point from which every point of
    the window follows the fit within 5 % (or `cutoff`).
    """
    counts = np.concatenate(([0.0], np.cumsum(0.5 * (g[1:] + g[:-1]) * np.diff(theta))))
    first = int(positive[0])
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
    if cutoff is None:
        model = a + b * t**2
        off = np.abs(g[idx] / t**2 - model) > _EXTRAPOLATE_AGREE * np.abs(model)
        j = int(np.flatnonzero(off)[-1]) + 1 if off.any() else 0
        wc = float(t[min(j, t.size - 1)])
    else:
        wc = float(cutoff) * kelvin_per(unit)
        if not (math.isfinite(wc) and 0 < wc < theta[-1]):
            raise InputError(f"low_t_cutoff must lie inside the frequency grid, not {cutoff!r}")
    nodes, w = _interval_nodes(theta, g, wc, ratio_form)
    n_c_raw = a * wc**3 / 3.0
    scale = 3.0 * atoms / (float(w.sum()) + n_c_raw)
    n_c = n_c_raw * scale
    fit_theta = wc * (3.0 * atoms / n_c) ** (1.0 / 3.0)
    return ModeSet(nodes, w * scale, branches=(DebyeBranch(wc, n_c),), atoms=atoms), scale, wc, fit_theta


def _modes_modeset(theta, w, atoms, low_t, cutoff, unit, who):
    """ModeSet of individual (normalised) modes with the continuation; returns (ModeSet, ω_c, θ fit)."""
    n = theta.size
    fit_theta = math.inf
    if n >= _MIN_MODES_FOR_FIT:
        k = max(_FIT_MODES, math.ceil(_FIT_FRACTION * n))
        wc = float(np.partition(theta, k - 1)[k - 1])
    else:
        positive = theta[theta > 0]
        wc = float(positive.min()) if positive.size else 0.0
    if cutoff is not None:
        wc = float(cutoff) * kelvin_per(unit)
        if not (math.isfinite(wc) and wc > 0):
            raise InputError(f"low_t_cutoff must be a positive frequency, not {cutoff!r}")
    low = theta <= wc
    n_c = float(w[low].sum())
    theta_c = 0.0
    if n_c > 0 and wc > 0:
        # Modes of an ω² branch have θ³ uniform on [0, θ_c³]: θ_c³ = 2⟨θ³⟩ uses all of them.
        theta_c = (2.0 * float(np.dot(w[low], theta[low] ** 3)) / n_c) ** (1.0 / 3.0)
        if theta_c > 0:
            fit_theta = theta_c * (3.0 * atoms / n_c) ** (1.0 / 3.0)
    few = low_t == "fit" and n < _MIN_MODES_FOR_FIT and cutoff is None
    if few:
        warnings.warn(
            f"{who}: only {n} modes, too few to fit a low-temperature ω² continuation; none used "
            "(pass low_t=θ_D to set one)",
            SpectrumWarning,
            stacklevel=3,
        )
    if low_t == "off" or few or wc == 0.0:
        zero = theta <= 0
        if zero.any():
            warnings.warn(
                f"{who}: {int(zero.sum())} zero-frequency mode(s) dropped (infinite entropy without a "
                "low-temperature continuation)",
                SpectrumWarning,
                stacklevel=3,
            )
        keep = ~zero
        return ModeSet(theta[keep], w[keep] * (3.0 * atoms / w[keep].sum()), atoms=atoms), 0.0, fit_theta
    rest = w[~low]
    if low_t == "fit":
        branches = (DebyeBranch(theta_c, n_c),) if theta_c > 0 else ()
        return ModeSet(theta[~low], rest, branches=branches, atoms=atoms), wc, fit_theta
    n_c = 3.0 * atoms * (wc / low_t) ** 3
    if n_c >= 3.0 * atoms or rest.sum() <= 0:
        raise InputError(f"low_t = {low_t:g} K puts all modes below the cut-off {wc:.4g} K")
    rest = rest * ((3.0 * atoms - n_c) / rest.sum())
    return ModeSet(theta[~low], rest, branches=(DebyeBranch(wc, n_c),), atoms=atoms), wc, fit_theta


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


def _histogram_modeset(theta, counts, atoms, low_t, cutoff, unit):
    """ModeSet of normalised bin counts with the continuation; returns (ModeSet, ω_c, θ fit)."""
    filled = np.flatnonzero(counts > 0)
    if cutoff is None:
        wc = float(theta[min(int(filled[0]) + 3, theta.size - 1)])
    else:
        wc = float(cutoff) * kelvin_per(unit)
        if not (math.isfinite(wc) and theta[0] < wc < theta[-1]):
            raise InputError(f"low_t_cutoff must lie inside the histogram, not {cutoff!r}")
    nodes_all, w_all = _bin_nodes(theta, counts, theta[0])
    below = float(np.sum(counts * np.clip((wc - theta[:-1]) / np.diff(theta), 0, 1)))
    fit_theta = wc * (3.0 * atoms / below) ** (1.0 / 3.0) if below > 0 else math.inf
    if low_t == "off":
        if theta[0] > 0 or counts[0] == 0:
            return ModeSet(nodes_all, w_all, atoms=atoms), 0.0, fit_theta
        # A flat bin from ω = 0 is exactly a one-dimensional Debye branch.
        nodes, w = _bin_nodes(theta, counts, theta[1])
        return ModeSet(nodes, w, branches=(DebyeBranch(theta[1], counts[0], 1),), atoms=atoms), 0.0, fit_theta
    nodes, w = _bin_nodes(theta, counts, wc)
    if low_t == "fit":
        n_c = below
    else:
        n_c = 3.0 * atoms * (wc / low_t) ** 3
        if n_c >= 3.0 * atoms or not w.sum() > 0:
            raise InputError(f"low_t = {low_t:g} K puts all modes below the cut-off {wc:.4g} K")
        w = w * ((3.0 * atoms - n_c) / w.sum())
    branches = (DebyeBranch(wc, n_c),) if n_c > 0 else ()
    return ModeSet(nodes, w, branches=branches, atoms=atoms), wc, fit_theta
