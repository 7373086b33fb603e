"""Write the demonstration data of two invented materials from modeheat's spring models.

EVERYTHING HERE IS INVENTED FOR DEMONSTRATION: "zorbium lumide" (ZbLm) and "quellium"
(Ql) are not real materials, and no file written here is a measurement of any real
material.

* zorbium lumide — a rock-salt compound of a heavy atom A = Zb and a light atom B = Lm
  (:class:`modeheat.lattice.RockSalt`); its DOS, total and partials, in THz
  (``zorbium_lumide_dos.txt``, the README's Quick-start file), meV and cm⁻¹.
* quellium — a monatomic fcc metal (:class:`modeheat.lattice.CubicLattice`); its DOS
  in THz.
* for each, synthetic calorimetry C_p(T) from 2 to 300 K: the lattice C_v of its DOS
  (:func:`modeheat.thermo`), plus an electronic γT, plus a dilatation term by the
  Nernst–Lindemann relation C_p − C_v = A·C_p²·T, with seeded Gaussian noise.

Every parameter is in the constants below and is repeated in each file's header.
Run ``python demo_spectra/make_demo.py [FOLDER]`` to rewrite the files (into FOLDER,
default this folder); the output is deterministic (fixed k-mesh, fixed seeds, fixed
number formats), and tests/test_demo_spectra.py checks that the committed files are
what this script writes.
"""

from __future__ import annotations

import math
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent

try:
    import modeheat  # noqa: F401
except ImportError:  # run from a clone without installing: use the clone's package
    sys.path.insert(0, str(HERE.parent))

from modeheat import thermo  # noqa: E402
from modeheat.lattice import CubicLattice, DensityOfStates, RockSalt, debye_temperature, mesh_modes, tetrahedron_dos  # noqa: E402

FILENAME = "zorbium_lumide_dos.txt"  # the Quick-start file

MESH = 24  # Γ-centred k-mesh points per reciprocal vector
STEP = 0.025  # THz, frequency grid step (each value the mean over a bin this wide)
CONTINUATION = 0.15  # the calorimetry's ν² continuation starts at this fraction of the acoustic top
NOISE_RELATIVE = 0.005  # σ = NOISE_RELATIVE·C_p + NOISE_FLOOR
NOISE_FLOOR = 1.0e-5  # J/(mol K)
TEMPERATURES = np.round(np.geomspace(2.0, 300.0, 100), 2)  # K, denser at low T

INVENTED = "INVENTED FOR DEMONSTRATION: not a real material and not a measurement of any real material."


@dataclass(frozen=True)
class Material:
    """An invented material: its spring model, names and calorimetry parameters."""

    key: str  # file-name stem
    title: str
    formula: str
    model: RockSalt | CubicLattice
    species_note: str  # what the partial columns are
    model_note: tuple[str, ...]  # header lines describing the spring model
    gamma: float  # J/(mol K²), electronic coefficient per mole of formula units
    dilatation: float  # A in mol/J, Nernst–Lindemann
    seed: int


ZORBIUM_LUMIDE = Material(
    key="zorbium_lumide",
    title='"zorbium lumide"',
    formula="ZbLm",
    model=RockSalt(187.3, 21.4, 5.62, 30.0, 10.0, 5.0, species=("A", "B"), name="zorbium lumide"),
    species_note="2 atoms per formula unit: A = Zb (heavy, 187.3 u), B = Lm (light, 21.4 u).",
    model_note=(
        "Model: rock-salt spring model (modeheat.lattice.RockSalt), lattice constant 5.62 angstrom,",
        "  Zb-Lm nearest-neighbour spring 30 N/m, Zb-Zb 10 N/m and Lm-Lm 5 N/m next-nearest springs.",
    ),
    gamma=5.0e-5,
    dilatation=2.0e-6,
    seed=20240611,
)

QUELLIUM = Material(
    key="quellium",
    title='"quellium"',
    formula="Ql",
    model=CubicLattice("fcc", 71.3, 3.87, 21.0, 1.5, name="quellium", species="Ql"),
    species_note="1 atom per formula unit: a monatomic fcc metal, atomic mass 71.3 u.",
    model_note=(
        "Model: fcc spring model (modeheat.lattice.CubicLattice), lattice constant 3.87 angstrom,",
        "  nearest-neighbour spring 21 N/m, next-nearest-neighbour spring 1.5 N/m.",
    ),
    gamma=9.0e-4,
    dilatation=4.0e-6,
    seed=20240612,
)

MATERIALS = (ZORBIUM_LUMIDE, QUELLIUM)

#: Frequency units of the DOS files, with the number format of their frequency column.
DOS_UNITS = {
    "zorbium_lumide": (("THz", "{:8.4f}", ""), ("meV", "{:10.6f}", "_meV"), ("cm-1", "{:10.5f}", "_cm-1")),
    "quellium": (("THz", "{:8.4f}", ""),),
}


def density(material: Material) -> tuple[DensityOfStates, float]:
    """The material's tetrahedron DOS in THz and its acoustic top frequency in THz."""
    modes = mesh_modes(material.model, MESH)
    return tetrahedron_dos(modes, step=STEP, name=material.model.name), float(modes.frequency[:, :3].max())


def _number(x: float) -> str:
    return f"{x:.6e}"


def render_dos(material: Material, dos: DensityOfStates, unit: str, fmt: str) -> str:
    """One DOS file's text."""
    d = dos.to(unit)
    atoms = material.model.atoms
    names = list(d.partials)
    columns = f"frequency ({unit})  total" + "".join(f"  {n}" for n in names)
    lines = [
        f"# Phonon density of states of {material.title}, {material.formula}.",
        f"# {INVENTED} Use it only to try modeheat.",
        f"# {material.species_note}",
        *[f"# {line}" for line in material.model_note],
        f"#   Linear-tetrahedron DOS on a Gamma-centred {MESH}x{MESH}x{MESH} k-mesh (modeheat.lattice).",
        f"# Columns: frequency in {unit}; "
        + ("total, A and B partial DOS" if names else "total DOS")
        + f" in states per {unit} per formula unit,",
        f"#   each the mean over a bin of {STEP:g} THz centred on its frequency (half bins at the ends).",
        f"# The total integrates to {3 * atoms} (3 modes x {atoms} atom{'s' if atoms > 1 else ''})"
        + (", each partial to 3" if names else "")
        + ", by the trapezoid rule on this grid.",
        "# Written by demo_spectra/make_demo.py; rerun it to reproduce this file.",
        columns,
    ]
    rows = [
        "  ".join([fmt.format(f), _number(t)] + [_number(d.partials[n][i]) for n in names])
        for i, (f, t) in enumerate(zip(d.frequency, d.total))
    ]
    return "\n".join(lines + rows) + "\n"


def calorimetry(material: Material, dos: DensityOfStates, acoustic_top: float):
    """True C_p, noisy C and σ in J/(mol K) at TEMPERATURES, and θ_D(0) and the continuation start."""
    theta = debye_temperature(material.model)
    cutoff = CONTINUATION * acoustic_top
    spectrum = dos.spectrum(low_t=theta, low_t_cutoff=cutoff)
    T = TEMPERATURES
    cv = thermo(spectrum, T)["Cv"].to_numpy() + material.gamma * T
    a = material.dilatation
    cp = 2.0 * cv / (1.0 + np.sqrt(1.0 - 4.0 * a * T * cv))  # the root that → C_v as A → 0
    sigma = NOISE_RELATIVE * cp + NOISE_FLOOR
    noise = np.random.default_rng(material.seed).standard_normal(T.size)
    return cp, cp + sigma * noise, sigma, theta, cutoff


def render_calorimetry(material: Material, dos: DensityOfStates, acoustic_top: float) -> str:
    """One synthetic calorimetry file's text."""
    _, c, sigma, theta, cutoff = calorimetry(material, dos, acoustic_top)
    atoms = material.model.atoms
    lines = [
        f"# Synthetic heat capacity C_p(T) of {material.title}, {material.formula}, per mole of formula units"
        f" ({atoms} atom{'s' if atoms > 1 else ''}).",
        f"# {INVENTED} Computed from a model, with added random noise.",
        f"# {material.species_note}",
        f"# True C_p: C_v = C_v,lattice + gamma*T, then the Nernst-Lindemann relation C_p - C_v = A*C_p^2*T,",
        "#   solved as C_p = 2*C_v / (1 + sqrt(1 - 4*A*T*C_v)).",
        f"#   C_v,lattice: modeheat.thermo of the DOS in {material.key}_dos.txt, continued below"
        f" {cutoff:.4f} THz as nu^2 with the",
        f"#   elastic Debye temperature theta_D(0) = {theta:.2f} K (modeheat.lattice.debye_temperature).",
        f"#   gamma = {material.gamma:.2e} J/(mol K^2) (electronic), A = {material.dilatation:.2e} mol/J (dilatation).",
        f"# Noise: C = C_p + sigma*z, sigma = {NOISE_RELATIVE:g}*C_p + {NOISE_FLOOR:.1e} J/(mol K), z standard normal from",
        f"#   numpy.random.default_rng({material.seed}).standard_normal, one per row in order.",
        "# Columns: T in K; C, the noisy C_p, and sigma, its standard uncertainty, in J/(mol K) per mole of formula units.",
        "# Written by demo_spectra/make_demo.py; rerun it to reproduce this file.",
        "T (K)  C (J/(mol K))  sigma (J/(mol K))",
    ]
    rows = [f"{t:7.2f}  {_number(x)}  {_number(s)}" for t, x, s in zip(TEMPERATURES, c, sigma)]
    return "\n".join(lines + rows) + "\n"


def render_all() -> dict[str, str]:
    """Every file's name and text."""
    out = {}
    for material in MATERIALS:
        dos, top = density(material)
        for unit, fmt, suffix in DOS_UNITS[material.key]:
            out[f"{material.key}_dos{suffix}.txt"] = render_dos(material, dos, unit, fmt)
        out[f"{material.key}_cp.txt"] = render_calorimetry(material, dos, top)
    return out


def main(argv: list[str]) -> int:
    out = Path(argv[1]) if len(argv) > 1 else HERE
    out.mkdir(parents=True, exist_ok=True)
    for name, text in render_all().items():
        (out / name).write_text(text, encoding="utf-8")
        print(f"wrote {out / name}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
