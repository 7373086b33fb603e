"""Measured heat capacity: low-temperature analysis, model fits and where Debye breaks down.

Data are DataFrames with columns ``T`` [K], ``C`` [J/(mol K) per mole of formula
units] and optionally ``sigma`` (the standard uncertainty of C, same unit), as
:func:`modeheat.read_heat_capacity` returns them.

- :func:`low_temperature_fit` — linear least squares of C/T = γ + βT² (+ δT⁴), the
  Sommerfeld coefficient γ and θ_D(0) from β;
- :func:`fit` — non-linear least squares of any model component or mixture to C_p(T),
  one data set or several at once, with standard errors, correlations and a
  :class:`FitQuality` (χ²_red against its χ² band, a runs test on the residual signs,
  a verdict and advice);
- :func:`debye_breakdown` — the temperature below which the T³ law holds and the
  range over which θ_D(T) stays at θ_D(0), for a spectrum, a model or measured data.

A measured heat capacity is C_p.  A model predicts C_v; a :class:`~modeheat.models.Dilatation`
component in the mixture turns it into C_p (Nernst–Lindemann), otherwise the model's
C_v is compared with the data as it is, which is fine at low temperature where
C_p − C_v is negligible.

Modules: :mod:`~modeheat.fitting.low_t`, :mod:`~modeheat.fitting.model_fit`,
:mod:`~modeheat.fitting.quality` (:class:`FitQuality`, the runs test),
:mod:`~modeheat.fitting.breakdown`; the reading of data points they share is in
``_points.py``.
"""

from __future__ import annotations

from .breakdown import DebyeBreakdown, debye_breakdown
from .low_t import LowTemperatureFit, low_temperature_fit
from .model_fit import FitResult, FitWarning, fit
from .quality import FitQuality

__all__ = [
    "FitWarning",
    "LowTemperatureFit",
    "low_temperature_fit",
    "FitResult",
    "FitQuality",
    "fit",
    "DebyeBreakdown",
    "debye_breakdown",
]
