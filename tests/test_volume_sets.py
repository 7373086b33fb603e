"""Volume-set files (modeheat/io/volume_sets.py): the table format, its errors, the writer.

The spectra here are invented test shapes (ω² densities with a cut-off that moves with
the volume); the checks are about the files: what is written reads back, and every bad
input is an InputError naming the file and the line.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

import numpy as np
import pytest

import modeheat as mh
from modeheat import InputError, Spectrum, VolumeSet, read_spectrum, read_volume_set, write_volume_set

VOLUMES = [14.0, 14.5, 15.0, 15.5, 16.0]  # invented test shape
ENERGIES = [-3.02, -3.11, -3.14, -3.12, -3.07]


def _density(cutoff: float, atoms: int = 1, points: int = 41) -> tuple[np.ndarray, np.ndarray]:
    """A density rising as ω² (1 + ω/ω_c) up to ω_c = `cutoff` THz, holding 3·atoms modes by
    the trapezoid rule (common practice: 3 modes per atom)."""
    f = np.linspace(0.0, cutoff * 1.1, points)
    g = np.where(f <= cutoff, f**2 * (1.0 + f / cutoff), 0.0)
    return f, g * 3.0 * atoms / np.trapezoid(g, f)


def _spectrum(k: int, unit: str = "THz", partials: bool = False) -> Spectrum:
    f, g = _density(5.0 * (15.0 / VOLUMES[k]) ** 2)
    parts = {"A": 0.25 * g, "B": 0.75 * g} if partials else None
    return Spectrum(f, g, unit="THz", atoms=1, partials=parts, name=f"shape {k}").to(unit)


def _set(**kw) -> VolumeSet:
    unit = kw.pop("unit", "THz")
    partials = kw.pop("partials", False)
    # scipy.constants/CODATA: 1 Å³ per formula unit = 0.602214076 cm³/mol, 1 eV = 96.48533212 kJ/mol
    v = np.array(VOLUMES) * (0.602214076 if kw.get("volume_unit") == "cm3/mol" else 1.0)
    e = np.array(ENERGIES) * (96.48533212 if kw.get("energy_unit") == "kJ/mol" else 1.0)
    return VolumeSet(v, e, [_spectrum(k, unit, partials) for k in range(len(VOLUMES))], **kw)


def _dos_file(path: Path, cutoff: float = 5.0, atoms: int = 1, atoms_line: bool = True) -> Path:
    f, g = _density(cutoff, atoms)
    head = f"# atoms: {atoms}\n" if atoms_line else ""
    path.write_text(head + "frequency (THz), total\n" + "".join(f"{x!r}, {y!r}\n" for x, y in zip(f.tolist(), g.tolist())),
                    encoding="utf-8")
    return path


def _table(folder: Path, body: str, name: str = "set.txt", dos: int = 5) -> Path:
    """A table written by hand (independent of the writer), with DOS files d1.txt … beside it."""
    for k in range(1, dos + 1):
        _dos_file(folder / f"d{k}.txt", cutoff=5.0 + 0.1 * k)
    path = folder / name
    path.write_text(body, encoding="utf-8")
    return path


GOOD = """# INVENTED: a test shape, not a material
# volume unit: A3
# energy unit: eV
volume, energy, dos file
14.0, -3.02, d1.txt
14.5, -3.11, d2.txt   # a trailing comment
15.0, -3.14, d3.txt

15.5, -3.12, d4.txt
16.0, -3.07, d5.txt
"""


# --- round trip -----------------------------------------------------------------------------
@pytest.mark.parametrize(
    "options",
    [{}, {"unit": "meV", "partials": True}, {"volume_unit": "cm3/mol", "energy_unit": "kJ/mol"}, {"unit": "K"}],
)
def test_write_then_read_gives_the_same_set(tmp_path, options):
    # reference: the set written (exact volumes, energies and units; grids exact, densities
    # to a few units of the last bit: reading normalises them again)
    original = _set(**options)
    paths = write_volume_set(tmp_path / "qh.txt", original, comments=["INVENTED: a test shape"])
    assert paths == [tmp_path / "qh.txt", *(tmp_path / f"qh_v{k}.txt" for k in range(1, 6))]
    back = read_volume_set(tmp_path / "qh.txt")
    assert np.array_equal(back.volumes, original.volumes) and np.array_equal(back.energies, original.energies)
    assert (back.volume_unit, back.energy_unit, back.name) == (original.volume_unit, original.energy_unit, "qh.txt")
    for k, (a, b) in enumerate(zip(original.spectra, back.spectra), start=1):
        assert b.name == f"qh_v{k}.txt" and b.unit == a.unit and b.atoms == a.atoms and b.atoms_source == "given"
        assert np.array_equal(b.frequency, a.frequency)
        np.testing.assert_allclose(b.density, a.density, rtol=1e-15, atol=0.0)
        assert list(b.partials) == list(a.partials)
        for name in a.partials:
            np.testing.assert_allclose(b.partials[name], a.partials[name], rtol=1e-15, atol=0.0)
        assert b.low_t_cutoff == pytest.approx(a.low_t_cutoff, rel=1e-12)  # the same continuation
        assert b == read_spectrum(tmp_path / f"qh_v{k}.txt", atoms=1)  # the spectra are the DOS files as read
    # the thermodynamics do not see the last-bit differences
    T = [5.0, 50.0, 500.0]
    np.testing.assert_allclose(mh.quasi_harmonic(back, T)["Cp"], mh.quasi_harmonic(original, T)["Cp"], rtol=1e-12)
    # and a second round trip keeps what the first read
    (tmp_path / "again").mkdir()
    write_volume_set(tmp_path / "again" / "qh.txt", back)
    again = read_volume_set(tmp_path / "again" / "qh.txt")
    assert np.array_equal(again.volumes, back.volumes) and np.array_equal(again.energies, back.energies)
    for a, b in zip(back.spectra, again.spectra):
        assert a.name == b.name and np.array_equal(a.frequency, b.frequency)
        np.testing.assert_allclose(b.density, a.density, rtol=1e-15, atol=0.0)


def test_written_files_state_units_atoms_and_comments(tmp_path):
    write_volume_set(tmp_path / "qh.txt", _set(), comments="INVENTED: a test shape\nsecond line")
    table = (tmp_path / "qh.txt").read_text(encoding="utf-8").splitlines()
    assert table[:2] == ["# INVENTED: a test shape", "# second line"]
    assert {"# volume unit: A3", "# energy unit: eV", "# atoms: 1.0", "volume, energy, dos file"} <= set(table)
    assert table[-1] == "16.0, -3.07, qh_v5.txt"
    dos = (tmp_path / "qh_v2.txt").read_text(encoding="utf-8").splitlines()
    assert dos[:2] == ["# INVENTED: a test shape", "# second line"]
    assert "# atoms: 1.0" in dos and "frequency (THz), total" in dos


def test_a_table_name_with_a_comma_is_written_with_semicolons(tmp_path):
    paths = write_volume_set(tmp_path / "run 1, final.txt", _set())
    assert paths[1].name == "run 1, final_v1.txt"
    assert (tmp_path / "run 1, final.txt").read_text(encoding="utf-8").splitlines()[-1] == (
        "16.0; -3.07; run 1, final_v5.txt")
    assert np.array_equal(read_volume_set(paths[0]).volumes, VOLUMES)


# --- reading: the format ----------------------------------------------------------------------
def test_a_hand_written_table(tmp_path):
    vs = read_volume_set(_table(tmp_path, GOOD), name="hand")
    assert vs.name == "hand" and vs.volume_unit == "A3" and vs.energy_unit == "eV" and vs.atoms == 1.0
    assert list(vs.volumes) == VOLUMES and list(vs.energies) == ENERGIES
    assert [sp.name for sp in vs.spectra] == [f"d{k}.txt" for k in range(1, 6)]


@pytest.mark.parametrize(
    "rows",
    [
        "14 -3.02 d1.txt\n14.5 -3.11 d2.txt\n15 -3.14 d3.txt\n15.5\t-3.12\td4.txt\n16 -3.07 d5.txt\n",
        "14;-3.02;d1.txt\n14.5; -3.11; d2.txt\n15;-3.14;d3.txt\n15.5;-3.12;d4.txt\n16;-3.07;d5.txt\n",
    ],
)
def test_separators_and_no_header(tmp_path, rows):
    vs = read_volume_set(_table(tmp_path, rows))
    assert list(vs.volumes) == VOLUMES and vs.volume_unit == "A3"


def test_semicolons_let_file_names_hold_spaces_and_paths_be_absolute(tmp_path):
    (tmp_path / "sub").mkdir()
    _dos_file(tmp_path / "sub" / "dos at v1.txt")
    absolute = _dos_file(tmp_path / "elsewhere.txt", cutoff=5.2)
    rows = [f"{v}; {e}; d{k}.txt" for k, (v, e) in enumerate(zip(VOLUMES, ENERGIES), start=1)]
    rows[0] = "14.0; -3.02; sub/dos at v1.txt"
    rows[1] = f"14.5; -3.11; {absolute}"
    vs = read_volume_set(_table(tmp_path, "\n".join(rows) + "\n"))
    assert [sp.name for sp in vs.spectra[:2]] == ["dos at v1.txt", "elsewhere.txt"]


def test_units_from_key_lines_or_the_header(tmp_path):
    # scipy.constants/CODATA: 1 Å³ per formula unit is N_A·1e-24 cm³/mol
    rows = "".join(f"{v * 0.602214076}, {e * 96.48533212}, d{k}.txt\n"
                   for k, (v, e) in enumerate(zip(VOLUMES, ENERGIES), start=1))
    by_keys = read_volume_set(_table(tmp_path, "# Volume Unit: cm3/mol\n# ENERGY UNIT: kJ/mol\n" + rows))
    by_header = read_volume_set(_table(tmp_path, "volume (cm3/mol), energy [kJ/mol], dos file\n" + rows))
    plain = read_volume_set(_table(tmp_path, GOOD))
    for vs in (by_keys, by_header):
        assert (vs.volume_unit, vs.energy_unit) == ("cm3/mol", "kJ/mol")
        np.testing.assert_allclose(vs.molar_volumes(), plain.molar_volumes(), rtol=1e-9)
        np.testing.assert_allclose(vs.molar_energies(), plain.molar_energies(), rtol=1e-9)


def test_frequency_unit_and_atoms_keys_reach_every_dos_read(tmp_path):
    for k in range(1, 6):
        f, g = _density(5.0 + 0.1 * k)
        (tmp_path / f"m{k}.txt").write_text(
            "frequency, total\n" + "".join(f"{x!r} {y!r}\n" for x, y in zip(f.tolist(), g.tolist())), encoding="utf-8")
    rows = "".join(f"{v}, {e}, m{k}.txt\n" for k, (v, e) in enumerate(zip(VOLUMES, ENERGIES), start=1))
    path = tmp_path / "set.txt"
    path.write_text("# frequency unit: meV\n# atoms: 1\n" + rows, encoding="utf-8")
    vs = read_volume_set(path)
    assert all(sp.unit == "meV" and sp.atoms_source == "given" for sp in vs.spectra)
    assert read_volume_set(path, unit="mev", atoms=1.0).volumes.size == 5  # agreeing arguments are fine
    path.write_text(rows, encoding="utf-8")
    assert all(sp.unit == "THz" for sp in read_volume_set(path, unit="THz").spectra)


# --- reading: every error names the file and the line -------------------------------------------------
def _message(excinfo) -> str:
    return str(excinfo.value)


ROWS = [f"{v}, {e}, d{k}.txt" for k, (v, e) in enumerate(zip(VOLUMES, ENERGIES), start=1)]


def _with(row: int, text: str) -> str:
    rows = list(ROWS)
    rows[row] = text
    return "volume, energy, dos file\n" + "\n".join(rows) + "\n"


BAD_TABLES = {
    # name: (table text, line named, words in the message)
    "wrong field count": (_with(2, "15.0, -3.14"), 4, "2 fields, expected 3"),
    "blank-separated name with a space": ("14 -3 d 1.txt\n", 1, "cannot hold spaces"),
    "text for a number": (_with(1, "14.5, low, d2.txt"), 3, "field 2 (energy) is 'low', not a number"),
    "empty file field": (_with(3, "15.5, -3.12, "), 5, "field 3 (dos file) is empty"),
    "decimal commas": ("14,0 -3,02 d1.txt\n", 1, "decimal commas"),
    "unknown volume unit": ("# volume unit: litre\n" + _with(0, ROWS[0]), 1, "volume unit must be one of"),
    "unknown energy unit": ("# energy unit: calories\n" + _with(0, ROWS[0]), 1, "energy unit must be one of"),
    "unknown frequency unit": ("# frequency unit: Hz\n" + _with(0, ROWS[0]), 1, "unknown frequency unit 'Hz'"),
    "bad atom count": ("# atoms: two\n" + _with(0, ROWS[0]), 1, "atom count 'two' is not a positive number"),
    "a key given twice": ("# volume unit: A3\n# energy unit: eV\n# volume unit: cm3/mol\n" + _with(0, ROWS[0]), 3,
                          "differs from the 'A3' of line 1"),
    "header unit against key": ("# volume unit: A3\n" + _with(0, ROWS[0]).replace("volume,", "volume (m3/mol),"), 2,
                                "differs from the 'A3' of line 1"),
    "unknown header unit": (_with(0, ROWS[0]).replace("energy,", "energy (kcal),"), 1, "header field 'energy (kcal)'"),
    "missing DOS file": (_with(3, "15.5, -3.12, nowhere.txt"), 5, "the DOS file 'nowhere.txt' does not exist"),
    "a folder for a DOS file": (_with(3, "15.5, -3.12, ."), 5, "is not a file"),
    "a DOS file name too long": (_with(3, "15.5, -3.12, " + "x" * 300), 5, "cannot be looked up (File name too long)"),
    "fewer than 4 volumes": ("volume, energy, dos file\n" + "\n".join(ROWS[:3]) + "\n", 4,
                             "3 data rows (one volume each): a volume set needs at least 4 volumes"),
    "unsorted volumes": (_with(3, "14.8, -3.12, d4.txt"), 5, "volume 4 (14.8 A3) is below volume 3"),
    "duplicated volumes": (_with(4, "15.5, -3.07, d5.txt"), 6, "volume 5 (15.5 A3) repeats volume 4"),
    "a volume of zero": (_with(0, "0, -3.02, d1.txt"), 2, "volumes must be > 0"),
    "a non-finite energy": (_with(2, "15.0, nan, d3.txt"), 4, "field 2 (energy) is 'nan': volumes and energies must be finite"),
    "header only": ("# just a header\nvolume, energy, dos file\n", 2, "a header row but no data rows"),
}


@pytest.mark.parametrize("case", sorted(BAD_TABLES))
def test_bad_tables_name_file_and_line(tmp_path, case):
    text, line, words = BAD_TABLES[case]
    path = _table(tmp_path, text)
    with pytest.raises(InputError) as excinfo:
        read_volume_set(path)
    assert excinfo.value.path == str(path) and excinfo.value.line == line
    assert _message(excinfo).startswith(f"{path}, line {line}: "), _message(excinfo)
    assert words in _message(excinfo)


def test_a_missing_or_empty_table_names_the_file(tmp_path):
    with pytest.raises(InputError, match=re.escape(f"{tmp_path / 'none.txt'}: no such file")):
        read_volume_set(tmp_path / "none.txt")
    path = _table(tmp_path, "# only comments\n\n# nothing else\n")
    with pytest.raises(InputError, match=re.escape(f"{path}: no data rows")):
        read_volume_set(path)


def test_dos_files_for_different_atom_counts(tmp_path):
    # common practice: a density per formula unit holds 3 modes per atom; d4 holds 6
    path = _table(tmp_path, "\n".join(ROWS) + "\n")
    _dos_file(tmp_path / "d4.txt", atoms=2, atoms_line=False)
    with pytest.raises(InputError) as excinfo:
        read_volume_set(path)
    assert excinfo.value.path == str(path) and excinfo.value.line == 4
    assert "different atoms per formula unit" in _message(excinfo) and "d4.txt" in _message(excinfo)
    # with the table's atom count, the DOS file's own line disagrees: its error names the DOS file
    _dos_file(tmp_path / "d4.txt", atoms=2)
    path.write_text("# atoms: 1\n" + "\n".join(ROWS) + "\n", encoding="utf-8")
    with pytest.raises(InputError) as excinfo:
        read_volume_set(path)
    assert excinfo.value.path == str(tmp_path / "d4.txt") and excinfo.value.line == 1
    assert "atoms=1 was asked for but the file says atoms: 2" in _message(excinfo)


def test_a_dos_file_error_passes_through_naming_the_dos_file(tmp_path):
    path = _table(tmp_path, "\n".join(ROWS) + "\n")
    (tmp_path / "d2.txt").write_text("frequency (THz), total\n0, 0\n1, x\n", encoding="utf-8")
    with pytest.raises(InputError) as excinfo:
        read_volume_set(path)
    assert excinfo.value.path == str(tmp_path / "d2.txt") and excinfo.value.line == 3


def test_arguments_that_contradict_the_table(tmp_path):
    path = _table(tmp_path, "# frequency unit: THz\n# atoms: 1\n" + "\n".join(ROWS) + "\n")
    with pytest.raises(InputError, match=re.escape(f"{path}, line 1: frequency unit 'meV' was asked for")):
        read_volume_set(path, unit="meV")
    with pytest.raises(InputError, match=re.escape(f"{path}, line 2: atoms 2.0 was asked for")):
        read_volume_set(path, atoms=2)
    with pytest.raises(InputError, match=re.escape(f"{path}: unknown frequency unit 'furlongs'")):
        read_volume_set(path, unit="furlongs")
    with pytest.raises(InputError, match=re.escape(f"{path}: atoms must be a positive number")):
        read_volume_set(path, atoms=-1)


# --- writing: refusals --------------------------------------------------------------------------
def _listing(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


def test_overwrite_refused_then_allowed(tmp_path):
    (tmp_path / "qh_v3.txt").write_text("my own notes\n", encoding="utf-8")
    before = _listing(tmp_path)
    with pytest.raises(InputError) as excinfo:
        write_volume_set(tmp_path / "qh.txt", _set())
    assert excinfo.value.path == str(tmp_path / "qh_v3.txt") and "nothing was written" in _message(excinfo)
    assert _listing(tmp_path) == before  # nothing written, nothing lost
    write_volume_set(tmp_path / "qh.txt", _set(), overwrite=True)
    assert sorted(_listing(tmp_path)) == ["qh.txt", *(f"qh_v{k}.txt" for k in range(1, 6))]
    assert read_volume_set(tmp_path / "qh.txt").spectra[2].name == "qh_v3.txt"
    # the table itself is protected too
    before = _listing(tmp_path)
    with pytest.raises(InputError, match="the file exists"):
        write_volume_set(tmp_path / "qh.txt", _set(energy_unit="meV"))
    assert _listing(tmp_path) == before


def test_a_file_appearing_meanwhile_leaves_nothing_behind(tmp_path, monkeypatch):
    from modeheat.io import volume_sets

    real = volume_sets.write_text_file

    def racing(path, text, *, overwrite=False):
        if Path(path).name == "qh_v4.txt":
            Path(path).write_text("someone else's\n", encoding="utf-8")
        return real(path, text, overwrite=overwrite)

    monkeypatch.setattr(volume_sets, "write_text_file", racing)
    with pytest.raises(InputError, match="the file exists"):
        write_volume_set(tmp_path / "qh.txt", _set())
    assert _listing(tmp_path) == {"qh_v4.txt": b"someone else's\n"}


def test_write_refusals(tmp_path):
    with pytest.raises(InputError, match="no spectra"):
        write_volume_set(tmp_path / "a.txt", VolumeSet(VOLUMES, ENERGIES))
    with pytest.raises(InputError, match="needs a VolumeSet"):
        write_volume_set(tmp_path / "a.txt", [1, 2, 3])
    with pytest.raises(InputError, match="would spoil the DOS file names"):
        write_volume_set(tmp_path / "run#2.txt", _set())
    with pytest.raises(InputError, match="would read as a key line"):
        write_volume_set(tmp_path / "a.txt", _set(), comments=["Volume unit: cm3/mol"])
    modes = [Spectrum.from_modes([1.0, 2.0, 3.0 + k], unit="THz", atoms=1, low_t="off") for k in range(5)]
    with pytest.raises(InputError, match="built from modes"):
        write_volume_set(tmp_path / "a.txt", VolumeSet(VOLUMES, ENERGIES, modes))
    f, g = _density(5.0)
    odd = [Spectrum(f, g, atoms=1, partials={"Total": g}) for _ in range(5)]
    with pytest.raises(InputError, match="cannot be a column name"):
        write_volume_set(tmp_path / "a.txt", VolumeSet(VOLUMES, ENERGIES, odd))
    with pytest.raises(InputError, match="folder .* does not exist"):
        write_volume_set(tmp_path / "missing" / "a.txt", _set())
    assert os.listdir(tmp_path) == []
