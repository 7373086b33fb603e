"""Print the error table of the low-temperature continuation (a script, not a timed test).

C_v of q-mesh DOS of the fcc nearest-neighbour spring lattice (tests/lowt_inputs.py),
handed to modeheat as plain arrays, against the direct Brillouin-zone sum cached in
tests/data/fcc_nn_reference.json (tests/fcc_reference.py), at T = θ_D(0)/100, /50 and
/20, for 16³, 32³ and 48³ meshes and tetrahedron, histogram, smeared and mode-list
input; with the default continuation and with the elastic θ_D(0) given.  Then the demo
spectra's θ_D(T → 0) against their models' elastic value.

Run from the worktree root: ``python tests/benchmarks/lowt_error_table.py [low_t ...]``
(default: the default continuation and θ_D(0) given).
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path[:0] = [str(ROOT), str(ROOT / "tests")]

import fcc_reference  # noqa: E402
import lowt_inputs  # noqa: E402

from modeheat import Spectrum, heat_capacity  # noqa: E402
from modeheat import read_spectrum  # noqa: E402
from modeheat.units import R  # noqa: E402

MESHES = (16, 32, 48)
KINDS = ("tetrahedron", "histogram", "smeared", "modes")


def spectrum(kind: str, n: int, low_t) -> Spectrum:
    """The n³ input of one kind as a Spectrum with the continuation `low_t` (None: default)."""
    kw = {} if low_t is None else {"low_t": low_t}
    if kind == "tetrahedron":
        f, g = lowt_inputs.tetrahedron(n)
        return Spectrum(f, g, unit="THz", atoms=1, **kw)
    if kind == "histogram":
        e, c = lowt_inputs.histogram(n)
        return Spectrum.from_histogram(e, c, unit="THz", atoms=1, **kw)
    if kind == "smeared":
        f, g = lowt_inputs.smeared(n)
        return Spectrum(f, g, unit="THz", atoms=1, **kw)
    return Spectrum.from_modes(lowt_inputs.mesh_modes(n), unit="THz", atoms=1, **kw)


def errors(kind: str, n: int, low_t) -> tuple[np.ndarray, Spectrum]:
    ref = fcc_reference.load_reference()
    T = np.array(ref["T_K"][:3])
    sp = spectrum(kind, n, low_t)
    return heat_capacity(sp, T) / (3 * R) / np.array(ref["cv_over_3R"][:3]) - 1, sp


def demo_rows() -> list[tuple[str, float, float]]:
    spec = importlib.util.spec_from_file_location("make_demo", ROOT / "demo_spectra" / "make_demo.py")
    make_demo = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = make_demo
    spec.loader.exec_module(make_demo)
    from modeheat.lattice import debye_temperature

    rows = []
    for material in make_demo.MATERIALS:
        sp = read_spectrum(ROOT / "demo_spectra" / f"{material.key}_dos.txt", atoms=material.model.atoms)
        rows.append((material.key, sp.moment_debye_temperature(-3), debye_temperature(material.model), sp))
    return rows


def main(argv: list[str]) -> int:
    theta = fcc_reference.load_reference()["theta_D0_K"]
    settings = [None if a == "default" else (float(a) if a[0].isdigit() else a) for a in argv[1:]]
    settings = settings or [None, theta]
    print(f"C_v error against the 96³ direct sum, fcc NN spring lattice, θ_D(0) = {theta:.2f} K")
    print(f"{'input':12s} {'mesh':>5s} {'low_t':>9s} {'θ/100':>8s} {'θ/50':>8s} {'θ/20':>8s}  {'θ_D(0)':>8s}  method, cut-off")
    for low_t in settings:
        label = "default" if low_t is None else (f"{low_t:.2f}" if isinstance(low_t, float) else low_t)
        for kind in KINDS:
            for n in MESHES:
                err, sp = errors(kind, n, low_t)
                t0 = sp.moment_debye_temperature(-3) / theta - 1
                method = getattr(sp, "low_t_method", sp.low_t)
                print(
                    f"{kind:12s} {n:4d}³ {label:>9s} "
                    + " ".join(f"{100 * e:+7.2f}%" for e in err)
                    + f"  {100 * t0:+7.2f}%  {method}, {sp.low_t_cutoff:.4g} THz"
                )
    print("\nDemo spectra, default continuation: θ_D(T → 0) against the elastic θ_D(0)")
    for key, got, elastic, sp in demo_rows():
        method = getattr(sp, "low_t_method", sp.low_t)
        print(f"{key:16s} {got:8.2f} K  elastic {elastic:8.2f} K  {100 * (got / elastic - 1):+6.2f}%  {method}, {sp.low_t_cutoff:.4g} THz")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
