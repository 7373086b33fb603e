"""Volume sets for the quasi-harmonic views' tests (a helper, not a test file).

Invented test shapes, built without modeheat's own models or equations of state:

* each spectrum is a Debye density g(ν) = 9·atoms·ν²/ν_D³ below ν_D (common practice:
  3·atoms modes with an ω² density), sampled as plain arrays, with
  ν_D(V) = ν_D0·(V/V₀)^(−γ) — a constant Grüneisen parameter γ;
* the static energy is the third-order Birch–Murnaghan form (Birch 1947, written out
  here, not taken from modeheat): E(V) = E₀ + (9V₀B₀/16){[(V₀/V)^(2/3) − 1]³B₀′ +
  [(V₀/V)^(2/3) − 1]²[6 − 4(V₀/V)^(2/3)]}.

:func:`write_volume_files` writes such a set in the volume-table format of the
quasi-harmonic contract (a table of volume, energy, DOS file name and one DOS file per
volume), by hand, so tests of the views need not use the writer under test.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import scipy.constants as sc

import modeheat as mh

#: eV/Å³ per GPa (scipy.constants: 1 GPa = 1e9 Pa; 1 eV/Å³ = e·1e30 Pa).
EV_PER_A3_PER_GPA = 1e9 / (sc.e * 1e30)
#: The invented solid: V₀ in Å³ per formula unit, E₀ in eV, B₀ in GPa, B₀′, ν_D at V₀ in THz, γ.
SHAPE = {"V0": 16.0, "E0": -3.4, "B0": 100.0, "B0_prime": 4.5, "nu_D0": 8.0, "gamma": 2.0}
#: Six volumes around V₀ that hold V(T) up to 1000 K at 0 GPa for :data:`SHAPE`.
VOLUMES = np.linspace(15.0, 17.5, 6)


def birch_murnaghan(V, E0: float, V0: float, B0: float, B0_prime: float) -> np.ndarray:
    """Third-order Birch–Murnaghan energy (Birch 1947); B₀ in energy per volume unit."""
    r = (V0 / np.asarray(V, dtype=float)) ** (2.0 / 3.0)
    return E0 + 9.0 * V0 * B0 / 16.0 * ((r - 1.0) ** 3 * B0_prime + (r - 1.0) ** 2 * (6.0 - 4.0 * r))


def debye_density(nu_D: float, atoms: float = 1.0, points: int = 201) -> tuple[np.ndarray, np.ndarray]:
    """(ν in THz, g in modes per THz per formula unit) of a Debye density with cut-off ν_D."""
    nu = np.linspace(0.0, nu_D, points)
    return nu, 9.0 * atoms * nu**2 / nu_D**3


def volume_set(volumes=VOLUMES, *, atoms: float = 1.0, gamma: float = SHAPE["gamma"], name: str = "invented"):
    """A :class:`modeheat.VolumeSet` of the invented solid (module docstring), Å³ and eV."""
    V0 = SHAPE["V0"]
    spectra = []
    for k, V in enumerate(volumes):
        nu, g = debye_density(SHAPE["nu_D0"] * (V / V0) ** (-gamma), atoms)
        spectra.append(mh.Spectrum(nu, g, unit="THz", atoms=atoms, name=f"{name} v{k + 1}"))
    energies = birch_murnaghan(volumes, SHAPE["E0"], V0, SHAPE["B0"] * EV_PER_A3_PER_GPA, SHAPE["B0_prime"])
    return mh.VolumeSet(np.asarray(volumes, dtype=float), energies, spectra, name=name)


def write_volume_files(folder: Path, stem: str = "invented_qh", volumes=VOLUMES, *, atoms: float = 1.0,
                       missing: int | None = None) -> tuple[Path, list[Path]]:
    """Write the invented set as a volume table and its DOS files (the contract's format).

    Parameters
    ----------
    folder : Path — where to write
    stem : str — the table is ``<stem>.txt``, the DOS files ``<stem>_v<k>.txt``
    missing : int, optional — leave out the DOS file of this 1-based volume (a broken set)

    Returns
    -------
    (table, DOS files written)
    """
    energies = birch_murnaghan(volumes, SHAPE["E0"], SHAPE["V0"], SHAPE["B0"] * EV_PER_A3_PER_GPA, SHAPE["B0_prime"])
    rows, written = [], []
    for k, (V, E) in enumerate(zip(volumes, energies), start=1):
        dos_name = f"{stem}_v{k}.txt"
        rows.append(f"{float(V)!r}, {float(E)!r}, {dos_name}")
        if k == missing:
            continue
        nu, g = debye_density(SHAPE["nu_D0"] * (V / SHAPE["V0"]) ** (-SHAPE["gamma"]), atoms)
        body = "".join(f"{float(a)!r}  {float(b)!r}\n" for a, b in zip(nu, g))
        path = folder / dos_name
        path.write_text(f"# INVENTED test shape: a Debye density\n# atoms: {atoms:g}\nfrequency (THz)  total\n{body}",
                        encoding="utf-8")
        written.append(path)
    table = folder / f"{stem}.txt"
    table.write_text(
        "# INVENTED: a Debye solid at six volumes — not a real material\n"
        "# volume unit: A3\n# energy unit: eV\nvolume, energy, dos file\n" + "\n".join(rows) + "\n",
        encoding="utf-8",
    )
    return table, written
