"""Write an invented quasi-harmonic demonstration: "quellium" at six lattice constants.

EVERYTHING HERE IS INVENTED FOR DEMONSTRATION: "quellium" (Ql) is not a real material,
its pair potential is made up, and no file written here is a measurement or a
calculation of any real material.

* quellium — the monatomic fcc metal of ``make_demo.py`` (atomic mass 71.3 u), here
  held together by an invented Morse pair potential whose springs at the lattice
  constant 3.87 Å are close to that demo's (about 21 N/m to the nearest neighbours).
* At six lattice constants spanning ±2 % around 3.87 Å: the fcc spring lattice of the
  potential (:func:`modeheat.lattice.pair_lattice`: K1 = φ''(r₁), K2 = φ''(r₂), central
  springs only) and its static energy per atom (½ Σ φ over all neighbours); the DOS by
  the linear-tetrahedron method on a Γ-centred k-mesh.
* Written with :func:`modeheat.write_volume_set`: ``quellium_volumes.txt`` (volumes in
  Å³ per atom, a³/4, static energies in eV per atom) and ``quellium_volumes_v1.txt`` …
  ``_v6.txt`` (the DOS at each volume, in THz).

Every parameter is in the constants below and is repeated in each file's header.
Run ``python demo_spectra/make_volume_demo.py [FOLDER]`` to rewrite the files (into
FOLDER, default this folder) and print a short quasi-harmonic summary of them
(:func:`modeheat.quasi_harmonic`); the output is deterministic (fixed k-mesh, fixed
number formats), and tests/test_demo_spectra.py checks that the committed files are
what this script writes.
"""

from __future__ import annotations

import importlib.util
import sys
import warnings
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent

if importlib.util.find_spec("modeheat") is None:  # run from a clone without installing: use the clone's package
    sys.path.insert(0, str(HERE.parent))

from modeheat import QuasiHarmonicWarning, VolumeSet, quasi_harmonic, read_volume_set, write_volume_set  # noqa: E402
from modeheat.lattice import Morse, mesh_modes, pair_lattice, tetrahedron_dos  # noqa: E402

TABLE = "quellium_volumes.txt"

MASS = 71.3  # u, as in make_demo.py
STRUCTURE = "fcc"
DEPTH = 0.115  # eV, Morse well depth D (invented)
WIDTH = 1.0  # 1/Å, Morse a (invented)
R0 = 3.40  # Å, Morse r0 (invented)
CENTRE = 3.87  # Å, the lattice constant of make_demo.py's quellium
LATTICE_CONSTANTS = tuple(round(CENTRE * (1.0 + x), 4) for x in np.linspace(-0.02, 0.02, 6))  # Å
MESH = 24  # Γ-centred k-mesh points per reciprocal vector
STEP = 0.025  # THz, frequency grid step (each value the mean over a bin this wide)
SUMMARY_TEMPERATURES = (1.0, 10.0, 50.0, 100.0, 200.0, 300.0, 400.0, 500.0, 600.0)  # K

INVENTED = "INVENTED FOR DEMONSTRATION: not a real material and not a measurement of any real material."


def volume_set() -> VolumeSet:
    """Quellium's spectra and static energies at LATTICE_CONSTANTS (volumes in Å³ per atom, eV per atom)."""
    potential = Morse(DEPTH, WIDTH, R0)
    spectra, energies = [], []
    for a in LATTICE_CONSTANTS:
        lattice, energy = pair_lattice(potential, STRUCTURE, a, MASS, name=f"quellium at a = {a:.4f} angstrom",
                                       species="Ql")
        spectra.append(tetrahedron_dos(mesh_modes(lattice, MESH), step=STEP, name=lattice.name).spectrum())
        energies.append(energy)
    volumes = [a**3 / 4.0 for a in LATTICE_CONSTANTS]
    return VolumeSet(volumes, energies, spectra, volume_unit="A3", energy_unit="eV", name="quellium")


def comments() -> list[str]:
    """The header lines every file carries (before the writer's own)."""
    springs = [pair_lattice(Morse(DEPTH, WIDTH, R0), STRUCTURE, a, MASS)[0] for a in LATTICE_CONSTANTS]
    return [
        f'"quellium", Ql, at six lattice constants. {INVENTED} Use it only to try modeheat.',
        f"1 atom per formula unit: a monatomic fcc metal, atomic mass {MASS:g} u (as in make_demo.py).",
        "Model: an invented Morse pair potential phi(r) = D*[exp(-2*w*(r - r0)) - 2*exp(-w*(r - r0))],",
        f"  D = {DEPTH:g} eV, w = {WIDTH:g} 1/angstrom, r0 = {R0:.2f} angstrom; at each lattice constant the fcc",
        "  spring model (modeheat.lattice.pair_lattice) with K1 = phi''(r1), K2 = phi''(r2) of the first two",
        "  neighbour shells (central springs only, the tension term phi'(r)/r dropped), and the static energy",
        "  per atom, half the sum of phi over all neighbours.",
        "Lattice constants (angstrom): " + ", ".join(f"{a:.4f}" for a in LATTICE_CONSTANTS) + ";",
        "  K1 (N/m): " + ", ".join(f"{s.k1:.3f}" for s in springs) + ";",
        "  K2 (N/m): " + ", ".join(f"{s.k2:.3f}" for s in springs) + ".",
        f"Linear-tetrahedron DOS on a Gamma-centred {MESH}x{MESH}x{MESH} k-mesh, each value the mean over a bin of",
        f"  {STEP:g} THz centred on its frequency (modeheat.lattice).",
        "Volumes in angstrom^3 per atom (a^3/4), static energies in eV per atom.",
        "Written by demo_spectra/make_volume_demo.py; rerun it to reproduce this file.",
    ]


def summary(folder: Path) -> str:
    """The quasi-harmonic table of the files written, at SUMMARY_TEMPERATURES, as text."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", QuasiHarmonicWarning)
        table = quasi_harmonic(read_volume_set(folder / TABLE), SUMMARY_TEMPERATURES)
    lines = [f"quasi-harmonic quellium at 0 GPa ({table.attrs['eos']} fits; INVENTED data):",
             "    T (K)   V (A^3)   B_T (GPa)   alpha_V (1/K)   gamma   Cp - Cv (J/(mol K))"]
    for row in table.itertuples():
        lines.append(f"  {row.T:7.1f}  {row.V:8.4f}  {row.B_T:10.3f}  {row.alpha_V:14.4e}  {row.gamma:6.3f}  "
                     f"{row.Cp - row.Cv:10.4f}")
    vs = read_volume_set(folder / TABLE)
    lines.append(f"  sampled volumes {vs.volumes[0]:.4f}–{vs.volumes[-1]:.4f} A^3; "
                 + ("; ".join(str(w.message) for w in caught) if caught else "V(T) stays inside them"))
    return "\n".join(lines)


def main(argv: list[str]) -> int:
    out = Path(argv[1]) if len(argv) > 1 else HERE
    out.mkdir(parents=True, exist_ok=True)
    for path in write_volume_set(out / TABLE, volume_set(), overwrite=True, comments=comments()):
        print(f"wrote {path}")
    print(summary(out))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
