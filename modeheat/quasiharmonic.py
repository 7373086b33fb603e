"""Quasi-harmonic thermodynamics: spectra at several volumes → V(T), α(T), B_T(T), C_p(T).

A computed DOS is harmonic: it gives C_v at one volume.  With spectra at a few volumes
and the static energy E₀(V) of each, the Helmholtz energy

    F(V, T) = E₀(V) + F_vib(V, T)

is known on the sampled volumes at every temperature.  At each T an equation of state is
fitted to F(V_i, T); the equilibrium volume at pressure P minimises G = F + PV, and

    B_T = V ∂²F/∂V²,   α_V B_T = (∂S/∂V)_T,   C_p = C_v + α_V² B_T V T,
    γ = α_V B_T V / C_v   (the thermodynamic Grüneisen parameter)

follow at V(T) (common practice: the standard thermodynamic identities of a solid).

Numerics
--------
* F_vib, S and C_v at each sampled volume come from the engine (:meth:`ModeSet.evaluate`),
  zero point included, per mole of formula units.
* Third-order Birch–Murnaghan: its energy is exactly a cubic polynomial in V^(−2/3)
  (Birch 1947), so the fit at every temperature is one linear least-squares solve, done
  for all temperatures by one matrix product.  S(V) and C_v(V) at each T are fitted with
  the same basis, which makes the fitted F, S and C_v one consistent function of (V, T):
  S = −∂F/∂T and C_v = T ∂S/∂T hold exactly between the fits.
* Vinet (Vinet, Ferrante, Smith & Rose 1987, the universal form): fitted at each T by a
  damped Gauss–Newton solve vectorised over temperatures, started from the
  Birch–Murnaghan fit; it gives V(T), B_T and G, while S, ∂S/∂V and C_v are taken from
  the polynomial fits above (smooth interpolations of the sampled values).
* ``eos="auto"`` fits both and keeps the one with the smaller largest RMS misfit over
  the temperatures (Birch–Murnaghan on a tie, e.g. with 4 volumes, where both are exact);
  the choice and both misfits are in ``attrs``.

Units: volumes in Å³ per formula unit ("A3", default) or cm³/mol, static energies in eV
per formula unit ("eV", default), meV, Ry, Ha, J/mol or kJ/mol; pressure in GPa.  The
table gives V in the volume unit given, B_T in GPa, α_V in 1/K, C and S in J/(mol K),
G and H in J/mol (per mole of formula units).
"""

from __future__ import annotations

import functools
import math
import warnings
from dataclasses import dataclass
from typing import ClassVar, Sequence

import numpy as np
import pandas as pd
from scipy import constants as _c

from . import _checks
from ._document import Documented
from .errors import InputError, ModeheatWarning
from .models import Component, PhononDOS, _positive
from .spectrum import Spectrum
from .thermo import CAUTION
from .units import R, check_kelvin

__all__ = [
    "VolumeSet",
    "QuasiHarmonic",
    "QuasiHarmonicWarning",
    "quasi_harmonic",
    "moment_gruneisen",
    "birch_murnaghan_energy",
    "vinet_energy",
    "fit_eos",
    "EOS_FORMS",
    "VOLUME_UNITS",
    "ENERGY_UNITS",
    "MIN_VOLUMES",
]

#: Equations of state :func:`quasi_harmonic` fits (``eos="auto"`` picks one of them).
EOS_FORMS = ("birch-murnaghan", "vinet")

#: m³/mol per one of each volume unit (Å³ per formula unit, or molar).
VOLUME_UNITS: dict[str, float] = {"A3": 1e-30 * _c.N_A, "cm3/mol": 1e-6, "m3/mol": 1.0}
_VOLUME_ALIASES = {"a3": "A3", "å3": "A3", "å³": "A3", "a^3": "A3", "angstrom3": "A3", "cm3/mol": "cm3/mol",
                   "cm^3/mol": "cm3/mol", "m3/mol": "m3/mol"}

#: J/mol per one of each energy unit (per formula unit, or molar).
ENERGY_UNITS: dict[str, float] = {
    "eV": _c.e * _c.N_A,
    "meV": 1e-3 * _c.e * _c.N_A,
    "Ry": _c.physical_constants["Rydberg constant times hc in J"][0] * _c.N_A,
    "Ha": _c.physical_constants["Hartree energy"][0] * _c.N_A,
    "J/mol": 1.0,
    "kJ/mol": 1e3,
}
_ENERGY_ALIASES = {k.lower(): k for k in ENERGY_UNITS} | {"hartree": "Ha", "rydberg": "Ry"}

#: Fewest volumes a quasi-harmonic table takes: the equations of state have 4 parameters.
MIN_VOLUMES = 4
_LARGEST_RATIO = 4.0  # largest V_max/V_min: far beyond any compression a solid's EOS is fitted over
_LARGEST_ENERGY = 1e30  # in the set's unit; keeps molar energies and their cubic fits finite

_GPA = 1e9


class QuasiHarmonicWarning(ModeheatWarning):
    """The equilibrium volume left the sampled volumes, or no minimum of F + PV exists."""


def _unit(kind: str, unit: str, aliases: dict, known: dict) -> str:
    name = aliases.get(str(unit).strip().lower()) if isinstance(unit, str) else None
    if name is None:
        raise InputError(f"{kind} unit must be one of {', '.join(known)}, not {unit!r}")
    return name


def _pressure(value, prefix: str = "") -> float:
    """A pressure in GPa: finite and no larger in size than 10⁶ GPa (beyond any solid)."""
    p = _checks.number(f"{prefix}pressure (GPa)", value)
    if not (math.isfinite(p) and abs(p) <= 1e6):
        raise InputError(f"{prefix}pressure must be a finite number of GPa no larger than 1e6 in size, not {value!r}")
    return p


# --- equations of state (published forms) ---------------------------------------------------------

def birch_murnaghan_energy(V, E0: float, V0: float, B0: float, B0_prime: float) -> np.ndarray:
    """Third-order Birch–Murnaghan energy (Birch 1947).

    E(V) = E₀ + (9 V₀ B₀/16) {[(V₀/V)^(2/3) − 1]³ B₀′ + [(V₀/V)^(2/3) − 1]² [6 − 4 (V₀/V)^(2/3)]}

    Parameters
    ----------
    V : array_like — volume (any unit; V₀ in the same)
    E0 : float — energy at V₀ (the unit of B₀·V₀)
    V0 : float — volume at zero pressure
    B0 : float — bulk modulus at V₀ (energy unit per volume unit)
    B0_prime : float — its pressure derivative (dimensionless)
    """
    eta = (V0 / np.asarray(V, dtype=float)) ** (2.0 / 3.0) - 1.0
    return E0 + 9.0 * V0 * B0 / 16.0 * (eta**3 * B0_prime + eta**2 * (6.0 - 4.0 * (eta + 1.0)))


def vinet_energy(V, E0: float, V0: float, B0: float, B0_prime: float) -> np.ndarray:
    """Vinet energy (Vinet, Ferrante, Smith & Rose 1987).

    E(V) = E₀ + (2 B₀ V₀/(B₀′ − 1)²) {2 − [5 + 3 B₀′(x − 1) − 3x] exp[−η(x − 1)]},
    x = (V/V₀)^(1/3), η = 3(B₀′ − 1)/2; its pressure is P = 3B₀(1 − x)/x² · exp[η(1 − x)].

    Parameters as for :func:`birch_murnaghan_energy` (B₀′ ≠ 1).
    """
    x = (np.asarray(V, dtype=float) / V0) ** (1.0 / 3.0)
    eta = 1.5 * (B0_prime - 1.0)
    return E0 + 2.0 * B0 * V0 / (B0_prime - 1.0) ** 2 * (
        2.0 - (5.0 + 3.0 * B0_prime * (x - 1.0) - 3.0 * x) * np.exp(-eta * (x - 1.0)))


def _vinet_parts(V, V0, B0, Bp):
    """Vinet P(V) and B(V) = −V dP/dV (arrays broadcast)."""
    x = (V / V0) ** (1.0 / 3.0)
    eta = 1.5 * (Bp - 1.0)
    ex = np.exp(eta * (1.0 - x))
    P = 3.0 * B0 * (1.0 - x) / x**2 * ex
    dPdx = 3.0 * B0 * ex * (-1.0 / x**2 - 2.0 * (1.0 - x) / x**3 - eta * (1.0 - x) / x**2)
    return P, -(x / 3.0) * dPdx


# Birch–Murnaghan in the linear basis y = (V/V_ref)^(−2/3): E = Σ c_k y^k, k = 0…3.
_K = np.arange(4.0)


def _basis(V: np.ndarray, v_ref: float) -> np.ndarray:
    return ((V / v_ref) ** (-2.0 / 3.0))[..., None] ** _K


def _poly_derivatives(c: np.ndarray, V: np.ndarray, v_ref: float):
    """Value, dE/dV, d²E/dV² and d³E/dV³ of Σ c_k y^k at V (c: (..., 4), V: (...))."""
    yk = _basis(V, v_ref)
    a = -2.0 * _K / 3.0  # d y^k/dV = a_k y^k / V
    e0 = np.sum(c * yk, axis=-1)
    e1 = np.sum(c * a * yk, axis=-1) / V
    e2 = np.sum(c * a * (a - 1.0) * yk, axis=-1) / V**2
    e3 = np.sum(c * a * (a - 1.0) * (a - 2.0) * yk, axis=-1) / V**3
    return e0, e1, e2, e3


@dataclass(frozen=True)
class EOSFit:
    """An equation of state fitted to energies on sampled volumes, at one or many temperatures.

    Attributes (arrays over the fits; energies in J/mol, volumes in m³/mol, pressures in Pa)
    ----------
    form : str — "birch-murnaghan" or "vinet"
    E0, V0, B0, B0_prime : ndarray — the published form's parameters
    rms : ndarray — root-mean-square misfit in J/mol
    """

    form: str
    E0: np.ndarray
    V0: np.ndarray
    B0: np.ndarray
    B0_prime: np.ndarray
    rms: np.ndarray


def _fit_polynomial(V: np.ndarray, E: np.ndarray) -> tuple[np.ndarray, float, np.ndarray]:
    """Least-squares cubics in (V/V_ref)^(−2/3) through E (n_vol, n_fits): coefficients (n_fits, 4)."""
    v_ref = float(np.median(V))
    A = _basis(V, v_ref)
    coef = np.linalg.lstsq(A, E, rcond=None)[0].T
    rms = np.sqrt(np.mean((A @ coef.T - E) ** 2, axis=0))
    return coef, v_ref, rms


def _bm_parameters(coef: np.ndarray, v_ref: float, V: np.ndarray) -> tuple[np.ndarray, ...]:
    """E₀, V₀, B₀, B₀′ of fitted cubics: V₀ where dE/dV = 0 (Newton from the sampled minimum)."""
    V0 = _newton_volume(coef, v_ref, V, np.zeros(coef.shape[0]), form="birch-murnaghan")[0]
    e0, _, e2, e3 = _poly_derivatives(coef, V0, v_ref)
    B0 = V0 * e2
    # B′ = dB/dP = −(V/B) dB/dV with dB/dV = E'' + V E'''
    Bp = -(V0 / B0) * (e2 + V0 * e3)
    return e0, V0, B0, Bp


def _newton_volume(coef, v_ref, V, pressure, *, form, vinet=None):
    """Volumes where −dE/dV = P, one per fit, by damped Newton from the best sampled volume.

    Returns (V_eq, ok) with ok False where no minimum of E + PV was found (no stable root).
    """
    n = pressure.shape[0]
    if form == "birch-murnaghan":
        G = _basis(V, v_ref) @ coef.T + np.outer(V, pressure)  # (n_vol, n)
    else:
        G = vinet_energy(V[:, None], vinet[0], vinet[1], vinet[2], vinet[3]) + np.outer(V, pressure)
    v = V[np.argmin(G, axis=0)].astype(float)
    lo, hi = V[0] / 3.0, V[-1] * 3.0
    ok = np.zeros(n, dtype=bool)
    for _ in range(100):
        if form == "birch-murnaghan":
            _, e1, e2, _ = _poly_derivatives(coef, v, v_ref)
            g1, g2 = e1 + pressure, e2
        else:
            P, B = _vinet_parts(v, vinet[1], vinet[2], vinet[3])
            g1, g2 = pressure - P, B / v
        stable = g2 > 0
        step = np.where(stable, -g1 / np.where(stable, g2, 1.0), -np.sign(g1) * 0.05 * v)
        step = np.clip(step, -0.2 * v, 0.2 * v)
        v = np.clip(v + step, lo, hi)
        ok = stable & (np.abs(step) <= 1e-13 * v)
        if ok.all():
            break
    return v, ok


def _fit_vinet(V: np.ndarray, E: np.ndarray, start: tuple) -> EOSFit:
    """Vinet fits to E (n_vol, n_fits) by damped Gauss–Newton (Levenberg–Marquardt), E₀ linear.

    Starts from the Birch–Murnaghan parameters (the sampled minimum and a typical B₀′ = 4
    where those are unusable); a fit that ends non-finite or with V₀ far outside the
    volumes gets an infinite misfit.
    """
    _, V0, B0, Bp = (np.array(p, dtype=float) for p in start)
    usable = np.isfinite(V0) & np.isfinite(B0) & np.isfinite(Bp) & (B0 > 0) & (V0 > V[0] / 3) & (V0 < 3 * V[-1])
    V0 = np.where(usable, V0, V[np.argmin(E, axis=0)])
    B0 = np.where(usable, B0, np.maximum(np.ptp(E, axis=0), 1.0) / np.ptp(V) * 10.0)
    Bp = np.where(usable & (Bp > 1.0) & (Bp < 20.0), Bp, 4.0)
    p = np.stack([np.log(V0), np.log(np.maximum(B0, 1e-30)), Bp], axis=1)  # (n, 3)
    n = E.shape[1]

    def misfit(q, E):
        shape = vinet_energy(V[:, None], 0.0, np.exp(q[:, 0]), np.exp(q[:, 1]), q[:, 2])  # (n_vol, m)
        e0 = np.mean(E - shape, axis=0)
        return E - shape - e0, e0

    def jacobian(q):
        """∂(misfit)/∂(ln V₀, ln B₀, B₀′), (n_vol, m, 3): the Vinet form differentiated by hand,
        E₀ eliminated (each column minus its mean)."""
        V0, B0, Bp = np.exp(q[:, 0]), np.exp(q[:, 1]), q[:, 2]
        x = (V[:, None] / V0) ** (1.0 / 3.0)
        u, eta = x - 1.0, 1.5 * (Bp - 1.0)
        C = 2.0 * B0 * V0 / (Bp - 1.0) ** 2
        P = 5.0 + 3.0 * Bp * u - 3.0 * x
        Q = np.exp(-eta * u)
        f = 2.0 - P * Q
        d_lnV0 = C * f + C * Q * (3.0 * Bp - 3.0 - eta * P) * x / 3.0
        d_lnB0 = C * f
        d_Bp = -2.0 * C * f / (Bp - 1.0) - C * u * Q * (3.0 - 1.5 * P)
        J = -np.stack([d_lnV0, d_lnB0, d_Bp], axis=-1)
        return J - J.mean(axis=0)

    r, e0 = misfit(p, E)
    cost = np.sum(r**2, axis=0)
    lam = np.full(n, 1e-3)
    active = np.arange(n)  # the fits still moving: a converged one costs nothing more
    for _ in range(200):
        pa, ra, Ea, la = p[active], r[:, active], E[:, active], lam[active]
        J = jacobian(pa)
        JT = np.transpose(J, (1, 2, 0))  # (m, 3, n_vol)
        A = JT @ np.transpose(J, (1, 0, 2))  # (m, 3, 3)
        g = JT @ np.transpose(ra)[:, :, None]  # (m, 3, 1)
        A = A + la[:, None, None] * np.eye(3) * np.diagonal(A, axis1=1, axis2=2)[:, :, None].clip(1e-300)
        # a singular or non-finite system (a flat or broken misfit) takes no step at that T
        good = np.isfinite(A).all(axis=(1, 2)) & np.isfinite(g).all(axis=(1, 2))
        good[good] &= np.abs(np.linalg.det(A[good])) > 1e-300
        step = np.zeros_like(pa)
        if good.any():
            step[good] = -np.linalg.solve(A[good], g[good])[:, :, 0]
        q = pa + step
        q[:, 2] = np.where(np.abs(q[:, 2] - 1.0) < 1e-3, pa[:, 2], q[:, 2])
        r2, e02 = misfit(q, Ea)
        cost2 = np.sum(r2**2, axis=0)
        better = np.isfinite(cost2) & (cost2 <= cost[active])
        p[active] = np.where(better[:, None], q, pa)
        r[:, active] = np.where(better[None, :], r2, ra)
        e0[active] = np.where(better, e02, e0[active])
        cost[active] = np.where(better, cost2, cost[active])
        lam[active] = np.where(better, la * 0.3, la * 10.0)
        done = (np.max(np.abs(step), axis=1) < 1e-10) | (lam[active] > 1e12)  # log V0, log B0, B0′
        active = active[~done]
        if active.size == 0:
            break
    V0, B0 = np.exp(p[:, 0]), np.exp(p[:, 1])
    valid = np.isfinite(cost) & np.isfinite(p).all(axis=1) & (V0 > V[0] / 3.0) & (V0 < 3.0 * V[-1])
    return EOSFit("vinet", e0, V0, B0, p[:, 2], np.where(valid, np.sqrt(cost / V.size), np.inf))


def fit_eos(volumes, energies, form: str = "birch-murnaghan", *, volume_unit: str = "A3",
            energy_unit: str = "eV") -> dict[str, float]:
    """Fit an equation of state to energies at sampled volumes.

    Parameters
    ----------
    volumes : array_like — at least 4 distinct volumes, increasing, in `volume_unit`
    energies : array_like — energies there, in `energy_unit`
    form : {"birch-murnaghan", "vinet"} — third-order Birch–Murnaghan or Vinet
    volume_unit, energy_unit : str — as for :class:`VolumeSet`

    Returns
    -------
    dict
        ``E0`` [energy_unit], ``V0`` [volume_unit], ``B0`` [GPa], ``B0_prime`` and ``rms``
        (root-mean-square misfit, energy_unit).
    """
    vs = VolumeSet(volumes, energies, None, volume_unit=volume_unit, energy_unit=energy_unit)
    V, E = vs.molar_volumes(), vs.molar_energies()[:, None]
    with np.errstate(all="ignore"):
        fit = _fit_forms(V, E, form)
    if not (np.isfinite(fit.rms[0]) and fit.B0[0] > 0 and np.isfinite([fit.V0[0], fit.B0_prime[0]]).all()):
        raise InputError(f"the {form} form does not fit these energies: they need a minimum inside or near the volumes")
    ku, ke = VOLUME_UNITS[vs.volume_unit], ENERGY_UNITS[vs.energy_unit]
    return {"E0": float(fit.E0[0]) / ke, "V0": float(fit.V0[0]) / ku, "B0": float(fit.B0[0]) / _GPA,
            "B0_prime": float(fit.B0_prime[0]), "rms": float(fit.rms[0]) / ke}


def _fit_forms(V: np.ndarray, E: np.ndarray, form: str) -> EOSFit:
    coef, v_ref, rms = _fit_polynomial(V, E)
    e0, V0, B0, Bp = _bm_parameters(coef, v_ref, V)
    bm = EOSFit("birch-murnaghan", e0, V0, B0, Bp, rms)
    if form == "birch-murnaghan":
        return bm
    if form == "vinet":
        return _fit_vinet(V, E, (e0, V0, B0, Bp))
    raise InputError(f"eos must be one of {', '.join(EOS_FORMS)} or 'auto', not {form!r}")


# --- the input: spectra at volumes ----------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class VolumeSet(Documented):
    """Spectra of one solid at several volumes, with the static energy at each.

    Parameters
    ----------
    volumes : array_like — at least 4 distinct volumes in increasing order, in `volume_unit`
        (per formula unit for "A3")
    energies : array_like — static (lattice) energy E₀ at each volume, in `energy_unit`
        (per formula unit for "eV", "meV", "Ry", "Ha"); only differences matter
    spectra : sequence of Spectrum, or None — the DOS at each volume, all for the same
        atoms per formula unit (None: an energy–volume set alone, for :func:`fit_eos`)
    volume_unit : str — "A3" (Å³ per formula unit, default), "cm3/mol" or "m3/mol"
    energy_unit : str — "eV" (default), "meV", "Ry", "Ha" per formula unit, "J/mol" or "kJ/mol"
    name : str, optional

    Raises
    ------
    InputError
        Fewer than 4 volumes, volumes not increasing or repeated, non-finite or
        non-positive values, a spectrum count unlike the volume count, spectra with
        different atom counts.
    """

    volumes: np.ndarray
    energies: np.ndarray
    spectra: tuple | None = None
    volume_unit: str = "A3"
    energy_unit: str = "eV"
    name: str | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "volume_unit", _unit("volume", self.volume_unit, _VOLUME_ALIASES, VOLUME_UNITS))
        set_(self, "energy_unit", _unit("energy", self.energy_unit, _ENERGY_ALIASES, ENERGY_UNITS))
        try:
            V = np.array(self.volumes, dtype=float)
            E = np.array(self.energies, dtype=float)
        except (TypeError, ValueError):
            raise InputError("volumes and energies must be arrays of numbers") from None
        if V.ndim != 1 or E.ndim != 1 or V.size != E.size:
            raise InputError(f"volumes and energies must be 1-D and of one length, not {V.shape} and {E.shape}")
        if V.size < MIN_VOLUMES:
            raise InputError(f"a quasi-harmonic set needs at least {MIN_VOLUMES} volumes (the equations of state "
                             f"have 4 parameters), not {V.size}")
        for label, a in (("volume", V), ("energy", E)):
            bad = np.flatnonzero(~np.isfinite(a))
            if bad.size:
                raise InputError(f"{label} {bad[0] + 1} is not a finite number ({float(a[bad[0]])})", index=int(bad[0]))
        bad = np.flatnonzero(V <= 0)
        if bad.size:
            raise InputError(f"volume {bad[0] + 1} is {V[bad[0]]:g}: volumes must be > 0", index=int(bad[0]))
        bad = np.flatnonzero(np.abs(E) > _LARGEST_ENERGY)
        if bad.size:
            raise InputError(f"energy {bad[0] + 1} is {E[bad[0]]:g} {self.energy_unit}: beyond any static energy "
                             f"of a solid (at most {_LARGEST_ENERGY:g} in size)", index=int(bad[0]))
        steps = np.diff(V)
        bad = np.flatnonzero(steps <= 0)
        if bad.size:
            i = int(bad[0]) + 1
            word = "repeats" if steps[bad[0]] == 0 else "is below"
            raise InputError(f"volume {i + 1} ({V[i]:g} {self.volume_unit}) {word} volume {i} ({V[i - 1]:g}): "
                             "give each volume once, in increasing order", index=i)
        if V[-1] > _LARGEST_RATIO * V[0]:
            raise InputError(
                f"the volumes span {V[0]:g}–{V[-1]:g} {self.volume_unit}, more than a factor {_LARGEST_RATIO:g}: an "
                "equation of state fitted across that describes no solid (quasi-harmonic sets span a few per cent "
                "to some tens of per cent)")
        V.setflags(write=False)
        E.setflags(write=False)
        set_(self, "volumes", V)
        set_(self, "energies", E)
        if self.spectra is not None:
            spectra = tuple(self.spectra)
            if len(spectra) != V.size:
                raise InputError(f"{V.size} volumes but {len(spectra)} spectra: give one spectrum per volume")
            for i, sp in enumerate(spectra):
                if not isinstance(sp, Spectrum):
                    raise InputError(f"spectrum {i + 1} must be a Spectrum, not {type(sp).__name__}", index=i)
            atoms = [sp.atoms for sp in spectra]
            for i, a in enumerate(atoms):
                if not math.isclose(a, atoms[0], rel_tol=1e-9):
                    raise InputError(
                        f"the spectra are for different atoms per formula unit: spectrum 1 "
                        f"({spectra[0].name or 'volume 1'}) has {atoms[0]:g}, spectrum {i + 1} "
                        f"({spectra[i].name or f'volume {i + 1}'}) has {a:g}; one solid has one formula unit", index=i)
            set_(self, "spectra", spectra)
        if self.name is not None and not isinstance(self.name, str):
            raise InputError(f"name must be a string, not {self.name!r}")

    @property
    def atoms(self) -> float | None:
        """Atoms per formula unit of the spectra (None without spectra)."""
        return None if self.spectra is None else float(self.spectra[0].atoms)

    def molar_volumes(self) -> np.ndarray:
        """The volumes in m³ per mole of formula units."""
        return self.volumes * VOLUME_UNITS[self.volume_unit]

    def molar_energies(self) -> np.ndarray:
        """The static energies in J per mole of formula units."""
        return self.energies * ENERGY_UNITS[self.energy_unit]

    def __len__(self) -> int:
        return self.volumes.size

    def __eq__(self, other) -> bool:
        if not isinstance(other, VolumeSet):
            return NotImplemented
        return (np.array_equal(self.volumes, other.volumes) and np.array_equal(self.energies, other.energies)
                and self.volume_unit == other.volume_unit and self.energy_unit == other.energy_unit
                and self.name == other.name and self.spectra == other.spectra)

    __hash__ = None  # type: ignore[assignment]


# --- the table --------------------------------------------------------------------------------------

def _sampled(vs: VolumeSet, T: np.ndarray, scale: float) -> dict[str, np.ndarray]:
    """F, S, C_v (J/mol, J/(mol K)) of every volume at T: arrays (n_vol, n_T)."""
    out = {"F": [], "S": [], "Cv": []}
    for sp in vs.spectra:
        r = PhononDOS(sp, scale=scale).modeset().evaluate(T)
        out["F"].append(R * r["f"])
        out["S"].append(R * r["s"])
        out["Cv"].append(R * r["cv"])
    return {k: np.array(v) for k, v in out.items()}


def _solve(V, F, sampled, P, eos):
    """Fit the EOS at every T and solve for V(T): (form, rms by form, (V, ok, B, G, S, ∂S/∂V, C_v))."""
    coef_f, v_ref, rms_bm = _fit_polynomial(V, F)
    coef_s = _fit_polynomial(V, sampled["S"])[0]
    coef_c = _fit_polynomial(V, sampled["Cv"])[0]
    pressure = np.full(F.shape[1], P)
    rms = {"birch-murnaghan": float(np.max(rms_bm))}
    vin = None
    if eos in ("auto", "vinet"):
        vin = _fit_vinet(V, F, _bm_parameters(coef_f, v_ref, V))
        rms["vinet"] = float(np.max(vin.rms))
    form = eos
    if eos == "auto":  # Vinet only when clearly better: a tie (4 volumes, both exact) keeps BM3
        form = "vinet" if rms["vinet"] < rms["birch-murnaghan"] * (1.0 - 1e-6) - 1e-9 else "birch-murnaghan"
    if form == "birch-murnaghan":
        v_eq, ok = _newton_volume(coef_f, v_ref, V, pressure, form=form)
        g0, _, g2, _ = _poly_derivatives(coef_f, v_eq, v_ref)
        B, G = v_eq * g2, g0 + P * v_eq
    else:
        params = (vin.E0, vin.V0, vin.B0, vin.B0_prime)
        v_eq, ok = _newton_volume(None, v_ref, V, pressure, form=form, vinet=params)
        B = _vinet_parts(v_eq, vin.V0, vin.B0, vin.B0_prime)[1]
        G = vinet_energy(v_eq, *params) + P * v_eq
        ok &= np.isfinite(vin.rms)
    s0, s1, _, _ = _poly_derivatives(coef_s, v_eq, v_ref)
    cv = _poly_derivatives(coef_c, v_eq, v_ref)[0]
    return form, rms, (v_eq, ok, B, G, s0, s1, cv)


def quasi_harmonic(volume_set: VolumeSet, temperatures, *, pressure: float = 0.0, eos: str = "auto",
                   scale: float = 1.0, warn: bool = True) -> pd.DataFrame:
    """Quasi-harmonic thermodynamics at a pressure, per temperature.

    Parameters
    ----------
    volume_set : VolumeSet — spectra at ≥ 4 volumes with their static energies
    temperatures : array_like — T in K (0 allowed; each ≤ 1e12 K)
    pressure : float — in GPa (default 0)
    eos : {"auto", "birch-murnaghan", "vinet"} — the equation of state fitted to F(V) at
        each T; "auto" keeps the better fitting one (see the module notes)
    scale : float — frequency scale applied to every spectrum (1 = as given), as
        :class:`~modeheat.PhononDOS` does for one volume
    warn : bool — warn (:class:`QuasiHarmonicWarning`) where V(T) leaves the sampled volumes

    Returns
    -------
    pandas.DataFrame
        ``T`` [K], ``V`` [the set's volume unit], ``B_T`` [GPa], ``alpha_V`` [1/K],
        ``Cv`` (at V(T)) and ``Cp`` [J/(mol K)], ``S`` [J/(mol K)], ``G`` and ``H`` [J/mol]
        (static energy, zero point and pressure term included), ``gamma`` (thermodynamic
        Grüneisen parameter; at T = 0 its limit γ(−3), :func:`moment_gruneisen`) and ``extrapolated`` (V(T)
        outside the sampled volumes), per mole of formula units.  ``attrs``: ``units``,
        ``eos`` (the form used), ``eos_rms`` (largest RMS misfit of each form fitted, J/mol),
        ``pressure`` [GPa], ``scale``, ``atoms``, ``volume_unit``, ``extrapolated_from``
        (the first T in K with V(T) outside the sampled volumes, or None) and ``caution``.

    Raises
    ------
    InputError
        A set without spectra, temperatures out of range, an unknown EOS.

    Warns
    -----
    QuasiHarmonicWarning
        V(T) outside the sampled volumes (the table goes on, extrapolated; say from which
        T); no minimum of F + PV at some T (those rows are left out, the warning says from
        which T).
    """
    if not isinstance(volume_set, VolumeSet):
        raise InputError(f"quasi_harmonic needs a VolumeSet, not {type(volume_set).__name__}")
    if volume_set.spectra is None:
        raise InputError("this volume set has no spectra: quasi-harmonic results need the DOS at each volume")
    if eos not in ("auto", *EOS_FORMS):
        raise InputError(f"eos must be 'auto' or one of {', '.join(EOS_FORMS)}, not {eos!r}")
    P = _pressure(pressure) * _GPA
    scale = _positive("quasi-harmonic", "scale", scale)
    T = np.atleast_1d(np.asarray(temperatures, dtype=float))
    if T.ndim != 1 or T.size == 0:
        raise InputError("temperatures must be a non-empty 1-D array")
    for t in T[T != 0]:
        check_kelvin("temperature", float(t))
    if np.any(T < 0) or not np.all(np.isfinite(T)):
        raise InputError("temperatures must be finite and ≥ 0 K")

    V = volume_set.molar_volumes()
    sampled = _sampled(volume_set, T, scale)
    F = volume_set.molar_energies()[:, None] + sampled["F"]
    # Odd energy curves (no minimum, a maximum, a kink) make the fits and roots non-finite
    # there: such rows are found below and left out with a warning, never returned as NaN.
    with np.errstate(all="ignore"):
        form, rms, (v_eq, ok, B, G, s0, s1, cv) = _solve(V, F, sampled, P, eos)
        alpha = s1 / B
        cp = cv + alpha**2 * B * v_eq * T
        gamma = np.where(cv > 0, alpha * B * v_eq / np.where(cv > 0, cv, 1.0), 0.0)
        ok &= (B > 0) & np.isfinite(np.stack([v_eq, B, G, s0, alpha, cv, cp, gamma])).all(axis=0)
    if not ok.any():
        raise InputError(
            f"F + PV has no minimum near the sampled volumes at any temperature asked for ({pressure:g} GPa): "
            "the static energies must have a minimum inside or near the volumes (or the pressure must hold the solid)")
    cold = ok & ~(cv > 0)
    if cold.any():
        # at T → 0 only the ω² bottom is excited: γ_th → γ(−3) = −d ln θ(−3)/d ln V (common practice)
        gamma[cold] = _moment_gamma(volume_set, -3, v_eq[cold] / VOLUME_UNITS[volume_set.volume_unit])

    keep = np.ones(T.size, dtype=bool)
    if not ok.all():
        first = float(np.min(T[~ok]))
        keep = T < first
        warnings.warn(QuasiHarmonicWarning(
            f"no minimum of F + PV near the sampled volumes from T = {first:g} K at {pressure:g} GPa "
            f"(the solid is unstable in this model there): rows from {first:g} K are left out"), stacklevel=2)
    outside = (v_eq < V[0] * (1 - 1e-12)) | (v_eq > V[-1] * (1 + 1e-12))
    extrapolated_from = float(np.min(T[outside & keep])) if np.any(outside & keep) else None
    if warn and extrapolated_from is not None:
        side = "above the largest" if np.any(v_eq[outside & keep] > V[-1]) else "below the smallest"
        warnings.warn(QuasiHarmonicWarning(
            f"from T = {extrapolated_from:g} K the equilibrium volume lies {side} sampled volume "
            f"({volume_set.volumes[0]:g}–{volume_set.volumes[-1]:g} {volume_set.volume_unit}): the equation of "
            "state is extrapolated there (column 'extrapolated'); add volumes to cover it"), stacklevel=2)
    ku = VOLUME_UNITS[volume_set.volume_unit]
    frame = pd.DataFrame({
        "T": T, "V": v_eq / ku, "B_T": B / _GPA, "alpha_V": alpha, "Cv": cv, "Cp": cp, "S": s0,
        "G": G, "H": G + T * s0, "gamma": gamma, "extrapolated": outside,
    })[keep].reset_index(drop=True)
    frame.attrs.update(
        units={"T": "K", "V": volume_set.volume_unit + (" per formula unit" if volume_set.volume_unit == "A3" else ""),
               "B_T": "GPa", "alpha_V": "1/K", "Cv": "J/(mol K)", "Cp": "J/(mol K)", "S": "J/(mol K)",
               "G": "J/mol", "H": "J/mol", "gamma": "1", "extrapolated": "bool"},
        eos=form, eos_rms=rms, pressure=float(pressure), scale=float(scale), atoms=volume_set.atoms,
        volume_unit=volume_set.volume_unit, extrapolated_from=extrapolated_from,
        basis="per mole of formula units", caution=CAUTION,
    )
    return frame


def _moment_gamma(volume_set: VolumeSet, n: float, volumes: np.ndarray) -> np.ndarray:
    """γ(n) = −d ln θ(n)/d ln V at `volumes` (the set's unit) from a quadratic in ln V."""
    theta = np.array([sp.moment_debye_temperature(n) for sp in volume_set.spectra])
    if not np.all(np.isfinite(theta) & (theta > 0)):
        raise InputError(f"θ({n:g}) is not defined for every spectrum of the set")
    slope = np.polyder(np.polyfit(np.log(volume_set.volumes), np.log(theta), 2))
    return -np.polyval(slope, np.log(volumes))


def moment_gruneisen(volume_set: VolumeSet, orders: Sequence[float] = (-3, -2, -1, 0, 1, 2)) -> pd.DataFrame:
    """Moment Grüneisen parameters γ(n) = −d ln θ(n)/d ln V at each sampled volume.

    θ(n) is each spectrum's moment Debye temperature
    (:meth:`~modeheat.Spectrum.moment_debye_temperature`); ln θ(n) is fitted by a
    quadratic in ln V (a line with 4 volumes or fewer would do; the quadratic follows a
    slowly varying γ) and differentiated at each volume.

    Returns
    -------
    pandas.DataFrame
        ``V`` [volume unit] and, per order n, ``theta(n)`` [K] and ``gamma(n)``.
    """
    if not isinstance(volume_set, VolumeSet) or volume_set.spectra is None:
        raise InputError("moment_gruneisen needs a VolumeSet with spectra")
    out = {"V": volume_set.volumes.copy()}
    for n in orders:
        out[f"theta({n:g})"] = np.array([sp.moment_debye_temperature(n) for sp in volume_set.spectra])
        out[f"gamma({n:g})"] = _moment_gamma(volume_set, n, volume_set.volumes)
    frame = pd.DataFrame(out)
    frame.attrs["units"] = {"V": volume_set.volume_unit} | {k: ("K" if k.startswith("theta") else "1") for k in out if k != "V"}
    return frame


# --- as a model component ---------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class _QuasiHarmonicExcess:
    """What the quasi-harmonic solid adds to its reference spectrum: C_p − C_v,ref, S − S_ref,
    and the energies' rise from T = 0 minus the reference's (an engine extra)."""

    term: "QuasiHarmonic"

    def terms(self, T):
        q = self.term
        table = q.table(T)
        if len(table) < T.size:
            raise InputError(f"{q.name}: no minimum of F + PV from T = {float(T[len(table)]):g} K at "
                             f"{q.pressure:g} GPa; evaluate below that temperature")
        ref = q.reference_modes().evaluate(np.concatenate([[0.0], T]))
        zero = q.zero_kelvin
        u_ref, f_ref = ref["u"][1:] - ref["u"][0], ref["f"][1:] - ref["f"][0]
        return ((table["Cp"].to_numpy() / R - ref["cv"][1:]),
                (table["S"].to_numpy() / R - ref["s"][1:]),
                ((table["H"].to_numpy() - zero["H"].iloc[0]) / R - u_ref),
                ((table["G"].to_numpy() - zero["G"].iloc[0]) / R - f_ref))


@dataclass(frozen=True)
class QuasiHarmonic(Component):
    """A solid described by spectra at several volumes, as a model term giving C_p at a pressure.

    In a :class:`~modeheat.Mixture` the term contributes the quasi-harmonic C_p, S and the
    rise of H and G from T = 0 at its pressure (:func:`quasi_harmonic`), so a fit of
    measured C_p (:func:`modeheat.fit`) can vary its frequency scale ``"<name>.scale"``
    like any parameter; the heat capacity a mixture reports for it is therefore C_p, not
    C_v (do not add a :class:`~modeheat.models.Dilatation` term beside it).  It counts
    3·atoms modes, and is drawn (and its θ_D(T) taken) as the spectrum at the sampled
    volume nearest to the equilibrium volume at 0 K, its "reference".

    Parameters
    ----------
    volumes : VolumeSet — spectra at ≥ 4 volumes with their static energies
    scale : float — frequency scale applied to every spectrum (dimensionless, > 0)
    pressure : float — in GPa
    eos : {"auto", "birch-murnaghan", "vinet"} — as for :func:`quasi_harmonic`
    name : str, optional — default "qh"
    """

    volumes: VolumeSet
    scale: float = 1.0
    pressure: float = 0.0
    eos: str = "auto"
    name: str | None = None
    kind: ClassVar[str] = "qh"
    gives_cp: ClassVar[bool] = True
    _continuous: ClassVar[tuple[str, ...]] = ("scale",)
    _checks: ClassVar[dict] = {"scale": _positive}

    def __post_init__(self):
        if not isinstance(self.volumes, VolumeSet) or self.volumes.spectra is None:
            raise InputError(f"{self.kind}: volumes must be a VolumeSet with spectra")
        if self.eos not in ("auto", *EOS_FORMS):
            raise InputError(f"{self.kind}: eos must be 'auto' or one of {', '.join(EOS_FORMS)}, not {self.eos!r}")
        object.__setattr__(self, "pressure", _pressure(self.pressure, f"{self.kind}: "))
        super().__post_init__()

    @property
    def modes(self) -> float:
        return 3.0 * self.volumes.atoms

    @property
    def parameters(self) -> dict[str, float]:
        """``scale`` (the pressure is a condition, not a parameter to fit)."""
        return {"scale": float(self.scale)}

    def table(self, temperatures) -> pd.DataFrame:
        """:func:`quasi_harmonic` of this term at `temperatures` (K)."""
        return quasi_harmonic(self.volumes, temperatures, pressure=self.pressure, eos=self.eos, scale=self.scale)

    @functools.cached_property
    def zero_kelvin(self) -> pd.DataFrame:
        """The one-row table at T = 0 (computed once per term: the term is immutable)."""
        return self.table(np.zeros(1))

    def reference(self) -> Spectrum:
        """The spectrum at the sampled volume nearest to the equilibrium volume at 0 K."""
        v0 = float(self.zero_kelvin["V"].iloc[0])
        return self.volumes.spectra[int(np.argmin(np.abs(self.volumes.volumes - v0)))]

    def reference_modes(self):
        return PhononDOS(self.reference(), scale=self.scale).modeset()

    def _parts(self):
        ref = PhononDOS(self.reference(), scale=self.scale)
        _, _, branches, _ = ref._parts()
        return [], [], branches, [_QuasiHarmonicExcess(self)]

    def cumulative(self, theta):
        return PhononDOS(self.reference(), scale=self.scale).cumulative(theta)

    def _edges(self):
        return PhononDOS(self.reference(), scale=self.scale)._edges()
