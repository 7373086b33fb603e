"""modeheat — from a phonon density of states to heat capacity, entropy, energy and θ_D(T)."""

from . import lattice
from .data import (
    HeatCapacityWarning,
    cp_from_cv,
    cv_from_cp,
    nernst_lindemann_coefficient,
    read_heat_capacity,
    read_spectrum,
    write_table,
)
from .fitting import DebyeBreakdown, FitResult, FitWarning, LowTemperatureFit, debye_breakdown, fit, low_temperature_fit
from .errors import AtomCountWarning, InputError, ModeheatError, ModeheatWarning, NoDebyeTemperatureWarning, SpectrumWarning
from .models import Band, Component, Debye, Dilatation, Einstein, Electronic, Mixture, ModeCountWarning, Schottky, SineChain, solid
from .spectrum import ReducedDensity, Spectrum, debye_temperature_from_sound
from .thermo import (
    CAUTION,
    effective_debye_temperature,
    entropy,
    free_energy,
    heat_capacity,
    internal_energy,
    thermo,
    zero_point_energy,
)

__version__ = "0.1.0"

__all__ = [
    "AtomCountWarning",
    "DebyeBreakdown",
    "Dilatation",
    "FitResult",
    "FitWarning",
    "HeatCapacityWarning",
    "LowTemperatureFit",
    "cp_from_cv",
    "cv_from_cp",
    "debye_breakdown",
    "fit",
    "low_temperature_fit",
    "nernst_lindemann_coefficient",
    "read_heat_capacity",
    "Band",
    "Component",
    "Debye",
    "Einstein",
    "Electronic",
    "Mixture",
    "ModeCountWarning",
    "Schottky",
    "SineChain",
    "solid",
    "lattice",
    "CAUTION",
    "InputError",
    "ModeheatError",
    "ModeheatWarning",
    "NoDebyeTemperatureWarning",
    "SpectrumWarning",
    "ReducedDensity",
    "Spectrum",
    "debye_temperature_from_sound",
    "effective_debye_temperature",
    "entropy",
    "free_energy",
    "heat_capacity",
    "internal_energy",
    "thermo",
    "read_spectrum",
    "write_table",
    "zero_point_energy",
]
