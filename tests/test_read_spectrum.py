"""Reading spectrum files: the bad-input corpus, headers, columns, totals and units."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from corpus import BAD, CASES, DATA, cases, check_manifest

from modeheat import read_spectrum
from modeheat.errors import InputError, SpectrumWarning
from modeheat.spectrum import Spectrum
from modeheat.thermo import thermo
from modeheat.units import kelvin_per

GOOD = DATA / "debye_bump.csv"
TEMPERATURES = [2.0, 20.0, 100.0, 300.0, 1000.0]


def _ids(case):
    return case.file


# --- the corpus -------------------------------------------------------------------------------------
def test_manifest_lists_every_file_once():
    check_manifest(BAD, CASES)


@pytest.mark.parametrize("case", cases("error"), ids=_ids)
def test_bad_file_gives_input_error_naming_file_and_line(case):
    with pytest.raises(InputError) as info:
        read_spectrum(case.path)
    err = info.value
    message = str(err)
    assert isinstance(err, ValueError)
    assert message.startswith(str(case.path))
    assert err.line == case.line
    if case.line is not None:
        assert message.startswith(f"{case.path}, line {case.line}: ")
    assert case.fragment.lower() in message.lower()


@pytest.mark.parametrize("case", cases("warning"), ids=_ids)
def test_repairable_file_warns_and_is_usable(case):
    with pytest.warns(SpectrumWarning) as record:
        spectrum = read_spectrum(case.path)
    texts = [str(w.message) for w in record if issubclass(w.category, SpectrumWarning)]
    assert any(case.fragment.lower() in text.lower() for text in texts), texts
    assert all(case.file in text for text in texts), "each warning should name the file"
    table = thermo(spectrum, TEMPERATURES)
    assert np.isfinite(table[["Cv", "S", "U", "F"]].to_numpy()).all()
    # Oracle: the Dulong–Petit limit 3R per atom bounds C_v of any harmonic spectrum.
    assert (table["Cv"] > 0).all() and (table["Cv"] < 3 * 8.314462618 + 1e-9).all()


@pytest.mark.parametrize("case", cases("valid"), ids=_ids)
def test_valid_file_reads_silently(case):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        spectrum = read_spectrum(case.path)
    assert spectrum.name == case.file
    assert np.isfinite(thermo(spectrum, TEMPERATURES)["Cv"]).all()


@pytest.mark.parametrize("file", ["utf8_bom.txt", "crlf_line_endings.txt", "semicolons.txt"])
def test_encoding_and_separator_variants_read_the_same_numbers(file):
    spectrum = read_spectrum(BAD / file)
    reference = Spectrum([0.0, 1.0, 2.0, 3.0, 4.0], [0.0, 0.5, 2.0, 4.5, 1.0], unit="THz", atoms=1)
    assert spectrum.unit == "THz"
    np.testing.assert_array_equal(spectrum.frequency, reference.frequency)
    np.testing.assert_array_equal(spectrum.density, reference.density)


def test_comment_header_and_bracketed_unit():
    assert read_spectrum(BAD / "comment_header.txt").unit == "meV"
    assert read_spectrum(BAD / "trailing_comments.txt").unit == "cm-1"


def test_which_comment_is_a_header(tmp_path):
    path = tmp_path / "comments.txt"
    rows = "0 0 0\n1 1 2\n2 4 3\n"
    path.write_text("# frequency (THz) A B\n" + rows, encoding="utf-8")
    assert set(read_spectrum(path, atoms=1).partials) == {"A", "B"}
    # A blank line, or a field count unlike the data's, keeps a comment a comment.
    path.write_text("# frequency (THz) A B\n\n" + rows, encoding="utf-8")
    with pytest.raises(InputError, match="the frequency unit is not given"):
        read_spectrum(path, atoms=1)
    path.write_text("# invented data, three columns\n" + rows, encoding="utf-8")
    assert set(read_spectrum(path, atoms=1, unit="THz").partials) == {"column 1", "column 2"}


def test_spectrum_error_is_mapped_to_the_file_line(tmp_path):
    path = tmp_path / "gaps.txt"
    path.write_text(
        "frequency (THz) total\n0 0\n\n# a comment between rows\n1 1\n2 4   # fine\n\n3 -5\n4 1\n",
        encoding="utf-8",
    )
    with pytest.raises(InputError, match=r"gaps\.txt, line 8: density is negative"):
        read_spectrum(path)


def test_missing_file_and_folder(tmp_path):
    with pytest.raises(InputError, match="no such file") as info:
        read_spectrum(tmp_path / "absent.txt")
    assert str(tmp_path / "absent.txt") in str(info.value)
    with pytest.raises(InputError, match="is a folder"):
        read_spectrum(tmp_path)


# --- header, columns, total and partials -----------------------------------------------------
def test_header_with_units_total_and_partials():
    spectrum = read_spectrum(GOOD, atoms=2)
    assert spectrum.unit == "THz"
    assert spectrum.name == "debye_bump.csv"
    assert set(spectrum.partials) == {"A", "B"}
    # The file's total is A + B rounded to 6 decimals.
    parts = spectrum.partials["A"] + spectrum.partials["B"]
    np.testing.assert_allclose(parts, spectrum.density, rtol=0, atol=2e-5 * spectrum.density.max())
    # 3 modes per atom (common practice); the trapezoid rule differs from the spectrum's
    # own g/ω² integration by ~1e-4 on this 0.1 THz grid.
    assert np.trapezoid(spectrum.density, spectrum.frequency) == pytest.approx(6.0, rel=1e-3)


def test_total_column_is_used_rather_than_the_sum():
    default = read_spectrum(GOOD, atoms=1)
    total_only = read_spectrum(GOOD, atoms=1, columns=["frequency", "TOTAL"])
    np.testing.assert_array_equal(default.density, total_only.density)
    assert total_only.partials == {}


def test_without_total_column_the_sum_is_the_total(tmp_path):
    path = tmp_path / "two.csv"
    path.write_text("frequency (THz), A, B\n0, 0, 0\n1, 1, 3\n2, 4, 2\n3, 1, 1\n", encoding="utf-8")
    spectrum = read_spectrum(path, atoms=1, low_t="off")
    assert set(spectrum.partials) == {"A", "B"}
    summed = Spectrum([0, 1, 2, 3], [0, 4, 6, 2], unit="THz", atoms=1, low_t="off")
    np.testing.assert_allclose(spectrum.density, summed.density, rtol=1e-15)


def test_total_by_name_and_forced_sum():
    named = read_spectrum(GOOD, atoms=1, total="a")
    assert set(named.partials) == {"total", "B"}
    by_columns = read_spectrum(GOOD, atoms=1, columns=[0, 2])
    np.testing.assert_array_equal(named.density, by_columns.density)

    summed = read_spectrum(GOOD, atoms=1, columns=["frequency", "A", "B"], total="sum")
    np.testing.assert_allclose(summed.density, read_spectrum(GOOD, atoms=1).density, rtol=0, atol=1e-4)
    with pytest.raises(InputError, match="total='sum' would add the 'total' column"):
        read_spectrum(GOOD, atoms=1, total="sum")
    with pytest.raises(InputError, match="no density column named 'C'; the density columns are total, A, B"):
        read_spectrum(GOOD, atoms=1, total="C")


def test_columns_by_index_and_name():
    spectrum = read_spectrum(GOOD, atoms=1, columns=[0, 3, 2])
    assert set(spectrum.partials) == {"B", "A"}
    assert read_spectrum(GOOD, atoms=1, columns=["Frequency", "b"]).partials == {}


@pytest.mark.parametrize(
    ("columns", "fragment"),
    [
        (["frequency", "Ga"], "no column named 'Ga'; the header (line 6) names frequency, total, A, B"),
        ([0, 7], "index 7 is outside the file's columns 0 to 3"),
        ([0, 1, 1], "column 'total' is chosen twice"),
        ([0], "at least one density column"),
        ([0, 1.5], "column names or 0-based indices"),
    ],
)
def test_bad_column_choice(columns, fragment):
    with pytest.raises(InputError, match=fragment.replace("(", r"\(").replace(")", r"\)")) as info:
        read_spectrum(GOOD, atoms=1, columns=columns)
    assert str(GOOD) in str(info.value)


def test_columns_by_name_need_a_header(tmp_path):
    path = tmp_path / "bare.txt"
    path.write_text("0 0 0\n1 1 2\n2 4 3\n", encoding="utf-8")
    with pytest.raises(InputError, match="no header row, so choose columns by 0-based index"):
        read_spectrum(path, atoms=1, unit="THz", columns=["frequency", "column 1"])
    assert read_spectrum(path, atoms=1, unit="THz", columns=[0, 2]).partials == {}


# --- units ---------------------------------------------------------------------------------------
def test_unit_argument_must_agree_with_header():
    assert read_spectrum(GOOD, atoms=1, unit="thz").unit == "THz"
    with pytest.raises(InputError, match=r"debye_bump\.csv, line 6: the header gives the frequencies in THz but"):
        read_spectrum(GOOD, atoms=1, unit="meV")
    with pytest.raises(InputError, match="unknown frequency unit 'parsec'"):
        read_spectrum(GOOD, atoms=1, unit="parsec")


def test_headerless_file_needs_unit(tmp_path):
    path = tmp_path / "bare.txt"
    path.write_text("0 0\n1 1\n2 4\n3 9\n4 2\n", encoding="utf-8")
    with pytest.raises(InputError, match="bare.txt: the frequency unit is not given"):
        read_spectrum(path)
    assert read_spectrum(path, unit="meV").unit == "meV"


def _write(path, frequency, density, unit, sep):
    rows = "\n".join(f"{f:.17g}{sep}{g:.17g}" for f, g in zip(frequency, density))
    path.write_text(f"# invented test spectrum\nfrequency ({unit}){sep}total\n{rows}\n", encoding="utf-8")


def test_same_spectrum_in_three_units_gives_equal_tables(tmp_path):
    # An invented ω² spectrum with a bump, written in THz, meV and cm-1.
    f_thz = np.linspace(0.0, 9.0, 91)
    g_thz = np.where(f_thz < 8.0, f_thz**2, 0.0) + 30.0 * np.exp(-0.5 * ((f_thz - 6.0) / 0.5) ** 2)
    tables = []
    for unit, sep in (("THz", ", "), ("meV", "; "), ("cm-1", "\t")):
        ratio = kelvin_per("THz") / kelvin_per(unit)
        path = tmp_path / f"spectrum_{unit}.txt"
        _write(path, f_thz * ratio, g_thz / ratio, unit, sep)
        tables.append(thermo(read_spectrum(path, atoms=1), TEMPERATURES))
    for other in tables[1:]:
        for column in ("Cv", "S", "U", "F", "theta_D"):
            reference = tables[0][column].to_numpy()
            scale = np.abs(reference).max()
            np.testing.assert_allclose(other[column], reference, rtol=1e-9, atol=1e-9 * scale)
