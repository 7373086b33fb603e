"""Phonon density of states: grid, units, normalisation, partials, moments.

A :class:`Spectrum` is a vibrational density of states g(ω) per formula unit,
normalised to 3·atoms modes.  It comes either from a sampled density on a frequency
grid (``Spectrum(frequency, density)``) or from a list of mode frequencies
(:meth:`Spectrum.from_modes`, e.g. every mode of a q-mesh).

Between sampled points the density is taken linear in g/ω², so that an ω² spectrum is
represented exactly; with the low-temperature continuation off it is taken linear in g,
which suits any low-frequency shape (flat for chains, linear for layers).

**Low-temperature continuation.**  A grid, a histogram or a finite list of modes does not
resolve the lowest frequencies, and they alone decide C_v at low T.  A q-mesh DOS is
wrong there in a way of its own: a tetrahedron DOS undercounts the first shells around
Γ (linear interpolation of the cone ω ∝ |q|), a histogram holds Γ's three zero modes in
its first bin and scatters with the mesh's shells, a Gaussian-smeared DOS leaks states
down to ω = 0.  One resolver, shared by all three constructors, handles the bottom:

* ``low_t="auto"`` (the default) first asks whether the bottom rises as ω² at all: a
  gap, an optical peak at the bottom, or a mode count that grows other than as ω³
  (exponent outside 2.4–4.5 between half the fit range and its top) gets no Debye
  branch, with a :class:`~modeheat.SpectrumWarning`, and the data are used as with
  ``"off"``.  Otherwise it fits g = a·ω² + b·ω⁴ plus a resolution term — a constant
  density for an interpolated or smeared DOS (what the unresolved bottom spreads
  upwards, to first order), a constant count for bins (Γ's zero modes or empty first
  bins, at most the first non-empty bin's count) and none for a list of modes (its
  count at ω = 0 is known) — by weighted least squares (weights t^(−3/2), t = ω/top),
  over 25 windows [r·top, top]: top where the data hold 0.8–2.5 % of three modes,
  r = 0.2–0.4.  The window fit with the median a is kept.  Below the cut-off
  ω_c the data are replaced by a·ω² + b·ω⁴ (a Debye branch and nodes for the ω⁴ part);
  ω_c is where the fitted resolution term of a density falls below 3 % of the law's
  mode count (within the window), and the top of the window for counts, which scatter
  with the mesh's shells.  Law and data above ω_c are scaled together to 3·atoms.
  θ_D(0) = (9·atoms/a)^(1/3).  Too coarse data for the windows fall back on ``"fit"``.
* ``low_t=θ`` (a float, K; see :func:`debye_temperature_from_sound`) fixes a =
  9·atoms/θ³ and chooses ω_c and b the same way; the data above ω_c hold the rest of
  the modes.
* ``low_t="fit"``: an ω² branch with the data's own mode count below the same ω_c.
* ``low_t="extrapolate"`` (sampled spectra): g = a·ω² + b·ω⁴ fitted to the lowest 2 %
  of the modes, continued as a·ω² below the point where the data follow that fit.
* ``low_t="off"``: the data as they are.

A cut-off given as ``low_t_cutoff`` replaces the chosen ω_c, with a pure ω² law below
it.  :attr:`Spectrum.low_t_method`, :attr:`Spectrum.low_t_cutoff` and
:attr:`Spectrum.low_t_summary` say what was applied.  Measured on an fcc spring
lattice (tests/test_low_t_continuation.py): with ``"auto"``, C_v at θ_D(0)/100 within
1.3 % of a converged zone sum from a 16³ to a 48³ tetrahedron DOS (the former default,
``"fit"`` below the third grid point, was 37 % / 16 % low).

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

from .. import _checks
from .._document import Documented
from ..engine.modeset import ModeSet
from ..errors import AtomCountWarning, InputError, SpectrumWarning
from ..units import KELVIN_RANGE, check_unit, kelvin_per
from .continuation import _check_low_t, _histogram_modeset, _modes_modeset, _sampled_modeset

__all__ = ["Spectrum", "ReducedDensity", "debye_temperature_from_sound"]

_NOISE = 1e-2  # negative densities up to this fraction of the peak are clipped as noise
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


_check_atoms = _checks.atoms


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


class Spectrum(Documented):
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
    low_t : "auto", "fit", "extrapolate", "off" or float — low-temperature continuation
        (module docstring; default "auto"); a float is a Debye temperature θ_D(0) in K
    low_t_cutoff : float, optional — the continuation's cut-off frequency in `unit`
        (default: chosen above the unresolved bottom of the data)

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
        "_continuation",
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
        low_t: str | float = "auto",
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
        ms, scale, cont = _sampled_modeset(theta, g, atoms, low_t, low_t_cutoff, unit, who)
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
            continuation=cont,
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
        low_t: str | float = "auto",
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
            raise InputError("low_t='extrapolate' works on sampled spectra; use 'auto', 'fit' or a Debye temperature")
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
        ms, cont = _modes_modeset(theta, w * scale, atoms, low_t, low_t_cutoff, unit, who)

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
            continuation=cont,
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
        low_t: str | float = "auto",
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
        low_t_cutoff : float, optional — in `unit` (default: chosen above the unresolved
            bottom of the counts)
        """
        unit = check_unit(unit)
        low_t = _check_low_t(low_t)
        if low_t == "extrapolate":
            raise InputError("low_t='extrapolate' works on sampled spectra; use 'auto', 'fit' or a Debye temperature")
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
        ms, cont = _histogram_modeset(theta, c * (3.0 * atoms / total), atoms, low_t, low_t_cutoff, unit, who)
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
            continuation=cont,
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
        """The low-temperature continuation asked for: "auto", "fit", "extrapolate", "off" or a
        Debye temperature in K."""
        return self._low_t

    @property
    def low_t_method(self) -> str:
        """The low-temperature continuation applied (module docstring): "auto" (the ω² law
        fitted above the unresolved bottom), "fit", "extrapolate", "theta" (θ_D(0) given)
        or "off" (none: asked for, or the data have no ω² bottom)."""
        return self._continuation.method

    @property
    def low_t_cutoff(self) -> float:
        """Cut-off frequency of the low-temperature continuation, in :attr:`unit` (0 when off)."""
        return self._continuation.cutoff / kelvin_per(self._unit)

    @property
    def low_t_summary(self) -> str:
        """The continuation applied, in words (as tables and their files state it)."""
        c = self._continuation
        if c.method == "off":
            return "off (no continuation: the data as they are)"
        law = {
            "auto": f"ω² law fitted above the unresolved bottom, θ_D(0) = {c.theta:.5g} K",
            "fit": "ω² branch with the data's own modes",
            "extrapolate": f"ω² extrapolated from the lowest 2 % of the modes, θ_D(0) = {c.theta:.5g} K",
            "theta": f"ω² law of the θ_D(0) = {c.theta:.5g} K given",
        }[c.method]
        return f"{c.method} ({law}) below {self.low_t_cutoff:.5g} {self._unit}"

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

    def with_low_t(self, low_t: str | float = "auto", low_t_cutoff: float | None = None) -> "Spectrum":
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
        if n == -3 and self._continuation.method == "off":
            return self._continuation.theta
        return self._modeset.moment_debye_temperature(n)

    def reduced_density(self) -> ReducedDensity:
        """g(ω)/ω² on the positive-frequency grid, with the Debye level 9·atoms/θ_D(0)³."""
        f = self._frequency
        pos = f > 0
        theta0 = self.moment_debye_temperature(-3) / kelvin_per(self._unit)
        level = 9.0 * self._atoms / theta0**3 if np.isfinite(theta0) and theta0 > 0 else math.nan
        return ReducedDensity(f[pos].copy(), self._density[pos] / f[pos] ** 2, level, self._unit)

    # --- sessions: documents, pickling, copies and equality (modeheat/io/sessions.py) --------
    def __reduce__(self):
        from ..io import sessions

        return sessions.from_dict, (sessions.to_dict(self),)

    def __add__(self, other):
        """Two spectra make a mixture of two :class:`~modeheat.PhononDOS` terms ("dos", "dos_2");
        a spectrum plus a component or mixture is handled by those (their ``__radd__``)."""
        if not isinstance(other, Spectrum):
            return NotImplemented
        from ..models import Mixture, PhononDOS  # models import this module

        return Mixture((PhononDOS(self), PhononDOS(other)))

    def __eq__(self, other) -> bool:
        from ..io import sessions

        return sessions.spectrum_eq(self, other)

    __hash__ = None  # equal by value and immutable by convention only, like an array

    def __repr__(self) -> str:
        name = f"{self._name!r}, " if self._name else ""
        return (
            f"Spectrum({name}{self._frequency.size} points, 0–{self._frequency.max():.4g} {self._unit}, "
            f"atoms={self._atoms:g}, low_t={self._low_t!r}: {self.low_t_summary})"
        )


def _readonly(a: np.ndarray) -> np.ndarray:
    a = np.array(a, dtype=float)
    a.flags.writeable = False
    return a


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
