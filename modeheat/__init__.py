"""modeheat — from a phonon density of states to heat capacity, entropy, energy and θ_D(T).

The public names are imported on first use (module ``__getattr__``, PEP 562): ``import
modeheat`` loads only the errors, and pandas, scipy.optimize, the fitting and the
lattice modules load when something first needs them, so the ``modeheat`` command and
scripts that use a part of the package start quickly.  ``__version__`` is looked up in
the package metadata on first use too (importlib.metadata alone costs tens of ms).

The subpackages follow the architecture: ``engine`` (mode sets, per-mode kernels) under
``spectrum`` and ``models``, ``thermo`` and ``cp_cv`` on those, ``io`` (files),
``fitting`` and ``lattice`` on top; the names users need are re-exported here.
"""

from __future__ import annotations

import importlib
import sys
import types

from .errors import AtomCountWarning, Cancelled, InputError, ModeheatError, ModeheatWarning, NoDebyeTemperatureWarning, SpectrumWarning

# The public API, by what a user does with it.
__all__ = [
    # sources: a spectrum, model components and their mixtures
    "Spectrum",
    "ReducedDensity",
    "debye_temperature_from_sound",
    "Component",
    "Mixture",
    "solid",
    "Debye",
    "SineChain",
    "Einstein",
    "Band",
    "Electronic",
    "Schottky",
    "Dilatation",
    "PhononDOS",
    "ModeCountWarning",
    # thermodynamics of any source
    "thermo",
    "heat_capacity",
    "entropy",
    "internal_energy",
    "free_energy",
    "zero_point_energy",
    "effective_debye_temperature",
    "CAUTION",
    # C_p <-> C_v
    "cp_from_cv",
    "cv_from_cp",
    "nernst_lindemann_coefficient",
    # files
    "read_spectrum",
    "read_heat_capacity",
    "HeatCapacityWarning",
    "write_table",
    # measured heat capacities: fits and analyses
    "low_temperature_fit",
    "LowTemperatureFit",
    "fit",
    "FitResult",
    "FitQuality",
    "FitWarning",
    "debye_breakdown",
    "DebyeBreakdown",
    # heat capacity back to a phonon DOS
    "invert_heat_capacity",
    "InversionResult",
    "InversionWarning",
    # quasi-harmonic: spectra at several volumes → C_p, V(T), α(T), Grüneisen
    "VolumeSet",
    "QuasiHarmonic",
    "QuasiHarmonicWarning",
    "quasi_harmonic",
    "moment_gruneisen",
    "fit_eos",
    "read_volume_set",
    "write_volume_set",
    # spring-model lattices (a subpackage); plot-ready curves for views and figures (a module)
    "lattice",
    "representations",
    # progress and cancellation of long work (fits, lattice DOS, batches): a module
    "progress",
    # sessions: every object above as a JSON-safe document, and session files
    "save_session",
    "load_session",
    # errors and warnings
    "ModeheatError",
    "InputError",
    "Cancelled",
    "ModeheatWarning",
    "SpectrumWarning",
    "AtomCountWarning",
    "NoDebyeTemperatureWarning",
]

# The module each lazily imported public name lives in.
_HOMES: dict[str, tuple[str, ...]] = {
    "spectrum": ("ReducedDensity", "Spectrum", "debye_temperature_from_sound"),
    "io.sessions": ("load_session", "save_session"),
    "models": (
        "Band",
        "Component",
        "Debye",
        "Dilatation",
        "Einstein",
        "Electronic",
        "Mixture",
        "ModeCountWarning",
        "PhononDOS",
        "Schottky",
        "SineChain",
        "solid",
    ),
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
    "inversion": ("InversionResult", "InversionWarning", "invert_heat_capacity"),
    "quasiharmonic": ("QuasiHarmonic", "QuasiHarmonicWarning", "VolumeSet", "fit_eos", "moment_gruneisen", "quasi_harmonic"),
    "cp_cv": ("cp_from_cv", "cv_from_cp", "nernst_lindemann_coefficient"),
    "io": ("HeatCapacityWarning", "read_heat_capacity", "read_spectrum", "read_volume_set", "write_table", "write_volume_set"),
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
}
_LAZY = {name: module for module, names in _HOMES.items() for name in names}
# Submodules and subpackages reachable as attributes (``modeheat.io``); lattice, representations and progress are in __all__.
_SUBMODULES = ("cp_cv", "engine", "errors", "figures", "fitting", "inversion", "io", "lattice", "models", "progress", "quasiharmonic", "representations", "spectrum", "units", "widgets")


def _version() -> str:
    """The installed distribution's version; in an uninstalled source tree, the one its
    pyproject.toml states (``0+unknown`` when neither exists)."""
    from importlib import metadata

    try:
        return metadata.version("modeheat")
    except metadata.PackageNotFoundError:
        import re
        from pathlib import Path

        pyproject = Path(__file__).resolve().parent.parent / "pyproject.toml"
        if not pyproject.is_file():
            return "0+unknown"
        found = re.search(r'^version\s*=\s*"([^"]+)"', pyproject.read_text(encoding="utf-8"), re.M)
        return found.group(1) if found else "0+unknown"


def __getattr__(name: str) -> object:
    if name == "__version__":
        value: object = _version()
    elif name in _LAZY:
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
