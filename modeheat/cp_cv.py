"""C_p ↔ C_v: the dilatation term between the heat capacities at constant pressure and volume.

Beside the models rather than the file readers, so that models never import I/O.
"""

from __future__ import annotations

import numpy as np

from .errors import InputError
from .units import KELVIN_RANGE

__all__ = ["cp_from_cv", "cv_from_cp", "nernst_lindemann_coefficient"]


# --- C_p ↔ C_v ----------------------------------------------------------------------------------
def _of_temperature(value, T: np.ndarray, label: str) -> np.ndarray:
    """A number, an array matching T, or a callable of T (K) → array like T."""
    v = value(T) if callable(value) else value
    try:
        out = np.broadcast_to(np.asarray(v, dtype=float), T.shape)
    except (TypeError, ValueError):
        raise InputError(f"{label} must be a number, an array like the temperatures or a callable of T") from None
    if not np.all(np.isfinite(out)):
        raise InputError(f"{label} must be finite")
    return out


def _dilatation(T, c, alpha, bulk_modulus, molar_volume, gruneisen, A, who):
    try:
        T = np.asarray(T, dtype=float)
        c = np.asarray(c, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{who}: temperatures and heat capacities must be numbers") from None
    if T.shape != c.shape and T.ndim and c.ndim:
        raise InputError(f"{who}: {c.size} heat capacities for {T.size} temperatures; give one per temperature")
    T, c = np.broadcast_arrays(T, c)
    if np.any(~np.isfinite(T) | (T < 0) | (T > KELVIN_RANGE[1])):
        raise InputError(f"{who}: temperatures must be finite, ≥ 0 K and at most {KELVIN_RANGE[1]:g} K")
    if np.any(~np.isfinite(c)):
        raise InputError(f"{who}: heat capacities must be finite")
    identity = bulk_modulus is not None or molar_volume is not None
    forms = [identity, gruneisen is not None, A is not None]
    if sum(forms) != 1:
        raise InputError(
            f"{who}: give one form: alpha, bulk_modulus and molar_volume (thermodynamic identity); "
            "alpha and gruneisen (Grüneisen); or A (Nernst–Lindemann)"
        )
    if identity:
        if alpha is None or bulk_modulus is None or molar_volume is None:
            raise InputError(f"{who}: the thermodynamic identity needs alpha, bulk_modulus and molar_volume")
        b = _of_temperature(bulk_modulus, T, "bulk_modulus")
        v = _of_temperature(molar_volume, T, "molar_volume")
        a = _of_temperature(alpha, T, "alpha")
        with np.errstate(over="ignore", invalid="ignore"):  # the callers reject non-finite results
            return T, c, "identity", a**2 * b * v * T
    if gruneisen is not None:
        if alpha is None:
            raise InputError(f"{who}: the Grüneisen form needs alpha and gruneisen")
        a, g = _of_temperature(alpha, T, "alpha"), _of_temperature(gruneisen, T, "gruneisen")
        with np.errstate(over="ignore", invalid="ignore"):
            return T, c, "gruneisen", 1.0 + a * g * T
    if alpha is not None:
        raise InputError(f"{who}: the Nernst–Lindemann form takes A alone, not alpha")
    a = _of_temperature(A, T, "A")
    with np.errstate(over="ignore", invalid="ignore"):
        return T, c, "nernst-lindemann", a * T


def cp_from_cv(
    temperatures,
    cv,
    *,
    alpha=None,
    bulk_modulus=None,
    molar_volume=None,
    gruneisen=None,
    A=None,
) -> np.ndarray:
    """C_p from C_v, in the same unit (J/(mol K) per mole of formula units).

    One of three forms, chosen by the arguments given:

    * the thermodynamic identity C_p − C_v = α_V²·B_T·V_m·T (``alpha``,
      ``bulk_modulus``, ``molar_volume``);
    * the Grüneisen form C_p = C_v·(1 + α_V·γ_G·T) (``alpha``, ``gruneisen``), exact
      with the thermodynamic Grüneisen parameter γ_G = α_V·B_T·V_m/C_v;
    * the Nernst–Lindemann form C_p − C_v = A·C_p²·T (Nernst & Lindemann, 1911)
      (``A``), solved for C_p: C_p = 2·C_v/(1 + √(1 − 4·A·T·C_v)).

    Every coefficient may be a number, an array like the temperatures or a callable
    of T (K) returning one.

    Parameters
    ----------
    temperatures : array_like — T in K, ≥ 0
    cv : array_like — C_v in J/(mol K)
    alpha : float, array or callable — volumetric thermal expansion coefficient α_V in
        1/K (three times the linear coefficient of a cubic solid)
    bulk_modulus : float, array or callable — isothermal bulk modulus B_T in Pa
    molar_volume : float, array or callable — molar volume V_m in m³/mol (per mole of
        the same units as the heat capacity)
    gruneisen : float, array or callable — Grüneisen parameter γ_G, dimensionless
    A : float, array or callable — Nernst–Lindemann coefficient in mol/J

    Returns
    -------
    numpy.ndarray — C_p in J/(mol K)

    Raises
    ------
    InputError
        Not exactly one form is given, a coefficient is missing or not finite, or
        4·A·T·C_v > 1 (no C_p satisfies the Nernst–Lindemann form).
    """
    T, c, form, k = _dilatation(temperatures, cv, alpha, bulk_modulus, molar_volume, gruneisen, A, "cp_from_cv")
    with np.errstate(over="ignore", invalid="ignore"):  # overflows are caught as non-finite results
        if form == "identity":
            return _finite(c + k, T, "cp_from_cv")
        if form == "gruneisen":
            return _finite(c * k, T, "cp_from_cv")
        disc = 1.0 - 4.0 * k * c
    if np.any(~(disc >= 0)):
        i = int(np.flatnonzero(~(disc.ravel() >= 0))[0])
        raise InputError(
            f"cp_from_cv: no C_p satisfies C_p − C_v = A·C_p²·T at T = {float(T.ravel()[i]):g} K: "
            f"4·A·T·C_v = {float(1 - disc.ravel()[i]):.6g} exceeds 1 (A too large)",
            index=i,
        )
    # This form of the root keeps full precision as A·T·C_v → 0.
    return 2.0 * c / (1.0 + np.sqrt(disc))


def cv_from_cp(
    temperatures,
    cp,
    *,
    alpha=None,
    bulk_modulus=None,
    molar_volume=None,
    gruneisen=None,
    A=None,
) -> np.ndarray:
    """C_v from C_p, in the same unit: the inverse of :func:`cp_from_cv`.

    Thermodynamic identity C_v = C_p − α_V²·B_T·V_m·T; Grüneisen form
    C_v = C_p/(1 + α_V·γ_G·T); Nernst–Lindemann form (Nernst & Lindemann, 1911)
    C_v = C_p − A·C_p²·T.  Parameters as for :func:`cp_from_cv`, with `cp` the
    heat capacity at constant pressure in J/(mol K).
    """
    T, c, form, k = _dilatation(temperatures, cp, alpha, bulk_modulus, molar_volume, gruneisen, A, "cv_from_cp")
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # caught as non-finite results
        if form == "identity":
            out = c - k
        elif form == "gruneisen":
            out = c / k
        else:
            out = c - k * c * c
    return _finite(out, T, "cv_from_cp")


def _finite(values: np.ndarray, T: np.ndarray, who: str) -> np.ndarray:
    """`values`, or an InputError naming the first temperature where they are not finite."""
    bad = np.flatnonzero(~np.isfinite(values.ravel()))
    if bad.size:
        i = int(bad[0])
        raise InputError(
            f"{who}: the result is not finite at T = {float(T.ravel()[i]):g} K; the coefficients are far too large",
            index=i,
        )
    return values


def nernst_lindemann_coefficient(temperature: float, cp: float, *, alpha, bulk_modulus, molar_volume) -> float:
    """The Nernst–Lindemann coefficient A in mol/J from expansion data at one temperature.

    Equating the thermodynamic identity C_p − C_v = α_V²·B_T·V_m·T with the
    Nernst–Lindemann form C_p − C_v = A·C_p²·T at a reference temperature gives
    A = α_V²·B_T·V_m / C_p².  Elsewhere A·C_p²·T then scales C_p − C_v with
    temperature; it is close to constant because α_V follows C_v (Grüneisen's rule).

    Parameters
    ----------
    temperature : float — the reference temperature in K (the relation holds at any
        T; it is an argument so that callables of T can be given)
    cp : float — C_p at that temperature in J/(mol K)
    alpha : float or callable — volumetric expansion coefficient α_V in 1/K
    bulk_modulus : float or callable — isothermal bulk modulus B_T in Pa
    molar_volume : float or callable — molar volume V_m in m³/mol
    """
    T = np.asarray(float(temperature))
    if not (np.isfinite(T) and T > 0):
        raise InputError(f"temperature must be positive and finite, not {temperature!r}")
    if not (np.isfinite(cp) and cp > 0):
        raise InputError(f"cp must be positive and finite, not {cp!r}")
    a = _of_temperature(alpha, T, "alpha")
    b = _of_temperature(bulk_modulus, T, "bulk_modulus")
    v = _of_temperature(molar_volume, T, "molar_volume")
    return float(a * a * b * v / (cp * cp))
