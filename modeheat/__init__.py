"""modeheat — from a phonon density of states to heat capacity, entropy, energy and θ_D(T).

The public names are imported on first use (module ``__getattr__``, PEP 562): ``import
modeheat`` loads only the errors, and pandas, scipy.optimize, the fitting and the
lattice modules load when something first needs them, so the ``modeheat`` command and
scripts that use a part of the package start quickly.
"""

from __future__ import annotations

import importlib
import sys
import types

from .errors import AtomCountWarning, InputError, ModeheatError, ModeheatWarning, NoDebyeTemperatureWarning, SpectrumWarning

__version__ = "0.1.0"

__all__ = [
    "AtomCountWarning",
    "DebyeBreakdown",
    "Dilatation",
    "FitQuality",
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
    "load_session",
    "save_session",
    "zero_point_energy",
]

# The module each lazily imported public name lives in.
_HOMES: dict[str, tuple[str, ...]] = {
    "data": (
        "HeatCapacityWarning",
        "cp_from_cv",
        "cv_from_cp",
        "nernst_lindemann_coefficient",
        "read_heat_capacity",
        "read_spectrum",
        "write_table",
    ),
    "io.sessions": ("load_session", "save_session"),
    "fitting": (
        "DebyeBreakdown",
        "FitQuality",
        "FitResult",
        "FitWarning",
        "LowTemperatureFit",
        "debye_breakdown",
        "fit",
        "low_temperature_fit",
    ),
    "models": (
        "Band",
        "Component",
        "Debye",
        "Dilatation",
        "Einstein",
        "Electronic",
        "Mixture",
        "ModeCountWarning",
        "Schottky",
        "SineChain",
        "solid",
    ),
    "spectrum": ("ReducedDensity", "Spectrum", "debye_temperature_from_sound"),
    "thermo": (
        "CAUTION",
        "effective_debye_temperature",
        "entropy",
        "free_energy",
        "heat_capacity",
        "internal_energy",
        "thermo",
        "zero_point_energy",
    ),
}
_LAZY = {name: module for module, names in _HOMES.items() for name in names}
# Submodules reachable as attributes (``modeheat.special``); only lattice is public API.
_SUBMODULES = ("data", "errors", "fitting", "lattice", "models", "special", "spectrum", "units")


def __getattr__(name: str) -> object:
    if name in _LAZY:
        value = getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
    elif name in _SUBMODULES:
        value = importlib.import_module(f".{name}", __name__)
    else:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    globals()[name] = value  # later look-ups skip __getattr__
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))


class _Package(types.ModuleType):
    """The package's module type: importing the submodule ``modeheat.thermo`` binds the
    package attribute ``thermo`` to that module, which would hide the function of the
    same name; that one binding is skipped, so ``modeheat.thermo`` stays the function."""

    def __setattr__(self, name: str, value: object) -> None:
        if isinstance(value, types.ModuleType) and _LAZY.get(name) == name:
            return
        super().__setattr__(name, value)


sys.modules[__name__].__class__ = _Package
