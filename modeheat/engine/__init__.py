"""The evaluation engine every source reduces to.

:mod:`~modeheat.engine.modeset` holds :class:`ModeSet` (Einstein-like nodes, branches
that evaluate themselves, non-vibrational extras, :class:`ScaledModes` — a whole set
scaled in frequency as one branch) and the FFT correlation on the ln θ grid;
:mod:`~modeheat.engine.special` the per-mode Debye and Einstein functions of x = θ/T
and their inverses.  No I/O and no pandas here: spectra, models, lattices and
fits all stand on this layer.
"""

from __future__ import annotations

from . import special
from .modeset import Branch, DebyeBranch, Extra, ModeSet, ScaledModes

__all__ = ["Branch", "DebyeBranch", "Extra", "ModeSet", "ScaledModes", "special"]
