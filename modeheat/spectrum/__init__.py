"""Phonon densities of states: :class:`Spectrum` and what is built from it.

:mod:`~modeheat.spectrum.core` holds the :class:`Spectrum` class and its three
constructors (sampled density, list of modes, histogram);
:mod:`~modeheat.spectrum.continuation` the one low-temperature resolver they share.
"""

from __future__ import annotations

from .continuation import LOW_T_CHOICES
from .core import ReducedDensity, Spectrum, debye_temperature_from_sound

__all__ = ["Spectrum", "ReducedDensity", "debye_temperature_from_sound", "LOW_T_CHOICES"]
