"""Reading heat-capacity files: the bad-input corpus, units, basis, columns and sorting."""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pytest
from corpus import BAD_CP, CP_CASES, cases, check_manifest
from scipy import constants

from modeheat import HeatCapacityWarning, read_heat_capacity
from modeheat.errors import InputError

DEMO = Path(__file__).resolve().parent.parent / "demo_spectra"
# Invented test values: T in K and C in J/(mol K) per mole of formula units.
T_REF = np.array([2.0, 5.0, 10.0, 50.0, 300.0])
C_REF = np.array([2.31e-3, 0.0411, 0.393, 13.2, 24.9])


def _ids(case):
    return case.file


# --- the corpus -------------------------------------------------------------------------------------
def test_manifest_lists_every_file_once():
    check_manifest(BAD_CP, CP_CASES)


@pytest.mark.parametrize("case", cases("error", CP_CASES), ids=_ids)
def test_bad_file_gives_input_error_naming_file_and_line(case):
    with pytest.raises(InputError) as info:
        read_heat_capacity(case.path)
    err = info.value
    message = str(err)
    assert isinstance(err, ValueError)
    assert message.startswith(str(case.path))
    assert err.line == case.line
    if case.line is not None:
        assert message.startswith(f"{case.path}, line {case.line}: ")
    assert case.fragment.lower() in message.lower()


@pytest.mark.parametrize("case", cases("warning", CP_CASES), ids=_ids)
def test_repairable_file_warns_and_is_usable(case):
    with pytest.warns(HeatCapacityWarning) as record:
        frame = read_heat_capacity(case.path)
    texts = [str(w.message) for w in record if issubclass(w.category, HeatCapacityWarning)]
    assert any(case.fragment.lower() in text.lower() for text in texts), texts
    assert all(case.file in text for text in texts), "each warning should name the file"
    assert np.all(np.diff(frame["T"]) >= 0)


@pytest.mark.parametrize("case", cases("valid", CP_CASES), ids=_ids)
def test_valid_file_reads_silently(case):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        frame = read_heat_capacity(case.path)
    assert frame.attrs["name"] == case.file
    assert list(frame.columns[:2]) == ["T", "C"]
    assert np.isfinite(frame.to_numpy()).all()


def test_bad_file_is_left_as_it_was():
    # Reading never writes: the bad file's bytes are unchanged after the error.
    path = BAD_CP / "negative_c.txt"
    before = path.read_bytes()
    with pytest.raises(InputError):
        read_heat_capacity(path)
    assert path.read_bytes() == before


# --- what valid files hold --------------------------------------------------------------------------
def test_unsorted_rows_are_sorted_and_lines_follow_them():
    with pytest.warns(HeatCapacityWarning, match="line 5"):
        frame = read_heat_capacity(BAD_CP / "unsorted.txt")
    np.testing.assert_array_equal(frame["T"], [2.0, 3.0, 4.0])
    np.testing.assert_array_equal(frame["C"], [0.0023, 0.0051, 0.012])
    assert frame.attrs["lines"] == [3, 5, 4]


def test_repeated_temperatures_are_kept_in_file_order():
    frame = read_heat_capacity(BAD_CP / "duplicate_temperatures.txt")
    np.testing.assert_array_equal(frame["T"], [2.0, 3.0, 3.0, 4.0])
    np.testing.assert_array_equal(frame["C"], [0.0023, 0.0051, 0.0052, 0.012])


def test_bom_crlf_and_comma_files_read_the_same_numbers():
    a = read_heat_capacity(BAD_CP / "utf8_bom_crlf.txt")
    b = read_heat_capacity(BAD_CP / "comma_separated.csv")
    for frame in (a, b):
        np.testing.assert_array_equal(frame["T"], [2.0, 3.0])
        np.testing.assert_array_equal(frame["C"], [0.0023, 0.0051])
        np.testing.assert_array_equal(frame["sigma"], [0.0001, 0.0001])
        assert frame.attrs["units"] == {"T": "K", "C": "J/(mol K)", "sigma": "J/(mol K)"}


def test_comment_header_in_millijoule():
    # scipy.constants.milli (SI prefix)
    frame = read_heat_capacity(BAD_CP / "comment_header.txt")
    np.testing.assert_allclose(frame["C"], np.array([2.3, 5.1]) * constants.milli, rtol=1e-15)
    assert frame.attrs["unit"] == "mJ/(mol K)"


def test_per_atom_unit_multiplies_by_atoms():
    # common practice: C per mole of formula units = atoms × C per mole of atoms
    frame = read_heat_capacity(BAD_CP / "mol_atom_unit.txt", atoms=3)
    np.testing.assert_allclose(frame["C"], [3 * 0.0023, 3 * 0.0051], rtol=1e-15)
    assert frame.attrs["per"] == "formula" and frame.attrs["atoms"] == 3.0


def test_sigma_without_unit_takes_that_of_c():
    # scipy.constants.calorie: the thermochemical calorie, 4.184 J
    frame = read_heat_capacity(BAD_CP / "calories_no_sigma_unit.txt")
    assert constants.calorie == 4.184
    np.testing.assert_allclose(frame["C"], np.array([0.00055, 0.00122]) * 4.184, rtol=1e-15)
    np.testing.assert_allclose(frame["sigma"], np.array([0.00002, 0.00003]) * 4.184, rtol=1e-15)


# --- units round trip -------------------------------------------------------------------------------
MOLAR_MASS = 63.546  # g/mol, copper (from memory; any value serves the conversion check)

# unit text → its size in J/(mol K) per mole of formula units, from scipy.constants (CODATA / SI)
UNITS = {
    "J/(mol K)": 1.0,
    "J mol-1 K-1": 1.0,
    "J/mol/K": 1.0,
    "J/(mol·K)": 1.0,
    "mJ/(mol K)": constants.milli,
    "cal/(mol K)": constants.calorie,
    "mcal/(mol K)": constants.milli * constants.calorie,
    "J/(g K)": MOLAR_MASS,
    "J/(kg K)": MOLAR_MASS / constants.kilo,
    "J/(g·K)": MOLAR_MASS,
}


@pytest.mark.parametrize("unit", list(UNITS))
@pytest.mark.parametrize("where", ["header", "argument"])
def test_unit_round_trip(tmp_path, unit, where):
    # reference: scipy.constants (calorie = 4.184 J thermochemical; milli, kilo SI prefixes)
    values = C_REF / UNITS[unit]
    body = "".join(f"{float(t)!r}  {float(v)!r}\n" for t, v in zip(T_REF, values))
    path = tmp_path / "data.txt"
    if where == "header":
        path.write_text(f"T (K)  C ({unit})\n" + body, encoding="utf-8")
        frame = read_heat_capacity(path, molar_mass=MOLAR_MASS)
    else:
        path.write_text(body, encoding="utf-8")
        frame = read_heat_capacity(path, unit=unit, molar_mass=MOLAR_MASS)
    np.testing.assert_allclose(frame["C"], C_REF, rtol=1e-14)
    np.testing.assert_array_equal(frame["T"], T_REF)
    assert frame.attrs["unit"] == unit


def test_per_atom_argument_matches_per_atom_unit(tmp_path):
    path = tmp_path / "data.txt"
    path.write_text("T (K)  C (J/(mol K))\n2.0  1.5\n3.0  2.5\n", encoding="utf-8")
    frame = read_heat_capacity(path, per="atom", atoms=2)
    np.testing.assert_array_equal(frame["C"], [3.0, 5.0])
    # per="formula" is the default: the same file read plainly
    np.testing.assert_array_equal(read_heat_capacity(path, atoms=2)["C"], [1.5, 2.5])


def test_contradictions_are_errors(tmp_path):
    path = tmp_path / "data.txt"
    path.write_text("T (K)  C (J/(mol-atom K))\n2.0  1.5\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"per mole of atoms but per='formula'"):
        read_heat_capacity(path, per="formula")
    with pytest.raises(InputError, match="the header gives the heat capacities in J/\\(mol-atom K\\)"):
        read_heat_capacity(path, unit="J/(mol K)")
    mass = tmp_path / "mass.txt"
    mass.write_text("T (K)  C (J/(g K))\n2.0  1.5\n", encoding="utf-8")
    with pytest.raises(InputError, match="per='atom' applies to molar units"):
        read_heat_capacity(mass, per="atom", molar_mass=10.0)
    with pytest.raises(InputError, match="molar_mass must be a positive number"):
        read_heat_capacity(mass, molar_mass=-1)
    with pytest.raises(InputError, match="unknown heat-capacity unit 'W'"):
        read_heat_capacity(mass, unit="W")


def test_columns_choose_and_reorder(tmp_path):
    path = tmp_path / "wide.txt"
    path.write_text(
        "field (T)  T (K)  sigma (mJ/(mol K))  C (J/(mol K))\n0  2.0  0.1  0.0023\n0  3.0  0.2  0.0051\n",
        encoding="utf-8",
    )
    frame = read_heat_capacity(path, columns=["T", "C", "sigma"])
    np.testing.assert_array_equal(frame["C"], [0.0023, 0.0051])
    # the sigma column's own unit converts it: scipy.constants.milli
    np.testing.assert_allclose(frame["sigma"], [0.1e-3, 0.2e-3], rtol=1e-15)
    same = read_heat_capacity(path, columns=[1, 3])
    assert list(same.columns) == ["T", "C"]
    with pytest.raises(InputError, match="2 or 3 columns, not 1"):
        read_heat_capacity(path, columns=["T"])
    with pytest.raises(InputError, match="no column named 'Cp'"):
        read_heat_capacity(path, columns=["T", "Cp"])


def test_spectrum_reader_keeps_its_own_messages():
    # One tokeniser serves both readers; each says what its columns should be.
    from corpus import BAD

    from modeheat import read_spectrum

    with pytest.raises(InputError, match="expected the frequency followed by at least one density column"):
        read_spectrum(BAD / "one_column.txt")


@pytest.mark.parametrize("path", sorted(DEMO.glob("*_cp.txt")), ids=lambda p: p.name)
def test_demo_heat_capacities_read(path):
    # The demo files (invented materials) read silently, with uncertainties.
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        frame = read_heat_capacity(path)
    assert list(frame.columns) == ["T", "C", "sigma"]
    assert len(frame) > 10 and (frame["C"] > 0).all()
