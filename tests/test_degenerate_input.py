"""Degenerate input: every case ends in an InputError naming the problem (and the file and
line where there is one) or a documented warning — never another exception, a numpy
RuntimeWarning (pytest errors on those) or a silent NaN.  The files are invented test shapes.
"""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest

import modeheat as mh
from modeheat.engine import special
from modeheat.errors import InputError, ModeheatError, NoDebyeTemperatureWarning

HEADER = "# frequency (THz) density\n"
T = [0.0, 1.0, 10.0, 300.0]


def _file(tmp_path, rows: str, name: str = "dos.txt"):
    path = tmp_path / name
    path.write_text(HEADER + rows, encoding="utf-8")
    return path


def _spectrum_error(tmp_path, rows: str, **kw) -> InputError:
    path = _file(tmp_path, rows)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", mh.SpectrumWarning)  # duplicate rows are merged with a warning first
        with pytest.raises(InputError) as info:
            mh.thermo(mh.read_spectrum(path, **{"atoms": 1, **kw}), T)
    assert str(info.value).startswith(str(path))
    return info.value


# --- DOS files ----------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "rows, kw, words",
    [
        ("0 1\n0 2\n0 3\n", {}, "same frequency"),
        ("0 1\n1 0\n", {}, "zero at every frequency above 0"),
        ("1 1\n2 2\n", {"low_t": 300}, "puts all modes below the cut-off"),
        ("1 1\n1 1\n", {"low_t": "off"}, "same frequency"),
        ("0 0\n1 1e-320\n", {}, "subnormal"),
        ("0 0\n1 1\n2 4\n3 9\n4 2\n", {"low_t": 1e-300}, "low_t = 1e-300 K lies outside"),
    ],
)
def test_degenerate_dos_file_is_an_input_error(tmp_path, rows, kw, words):
    err = _spectrum_error(tmp_path, rows, **kw)
    assert words in err.problem


def test_tiny_second_frequency_names_its_line(tmp_path):
    # was an all-NaN table
    err = _spectrum_error(tmp_path, "0 0\n1e-200 0\n1 1\n2 4\n3 9\n4 16\n5 10\n")
    assert err.line == 3 and "1e-200 THz" in err.problem


def test_frequency_near_1e300_names_its_line(tmp_path):
    err = _spectrum_error(tmp_path, "0 0\n1 1\n2 4\n1e300 2\n")
    assert err.line == 5 and "above the 1e+12 K" in err.problem


def test_huge_imaginary_frequency_is_an_input_error():
    with pytest.raises(InputError, match="-1e\\+300 THz"):
        mh.Spectrum([-1e300, 1, 2, 3], [1, 1, 4, 9])


def test_densities_differing_only_by_scale_give_one_spectrum():
    # Normalisation by a power of two: a density column ×1e-300 or ×1e300 is the same spectrum.
    f = np.linspace(0, 10, 41)
    g = f**2 * np.exp(-f / 3)
    ref = mh.thermo(mh.Spectrum(f, g, atoms=1), T)["Cv"].to_numpy()
    for factor in (1e-300, 1e300):
        out = mh.thermo(mh.Spectrum(f, g * factor, atoms=1), T)["Cv"].to_numpy()
        # Only rounding: normalising by a power of two is exact, but g·1e±300 carries one
        # rounding per value, which the continuation's least-squares fit amplifies (≈4e-14 seen).
        np.testing.assert_allclose(out, ref, rtol=1e-12)


def test_modes_with_weight_only_at_zero_frequency():
    with pytest.raises(InputError, match="no real modes"):
        mh.Spectrum.from_modes([0.0, 1.0], [1.0, 0.0], low_t="off")


# --- low-temperature analysis on one shared temperature ------------------------------------------
SAME_T = pd.DataFrame({"T": [2.0] * 5, "C": [1e-3, 1.1e-3, 0.9e-3, 1e-3, 1.05e-3]})


@pytest.mark.parametrize("call", [mh.low_temperature_fit, mh.debye_breakdown], ids=["low_t_fit", "breakdown"])
@pytest.mark.parametrize("C", [SAME_T["C"], np.full(5, 1e-3)], ids=["scattered", "identical"])
def test_points_sharing_one_temperature(call, C):
    # identical values used to give zero standard errors with no warning
    with pytest.raises(InputError, match="share 1 temperature"):
        call(SAME_T.assign(C=C), tmax=5.0)


def test_fit_at_1e_minus_200_kelvin():
    data = pd.DataFrame({"T": [1e-200, 2e-200, 3e-200], "C": [1e-3, 2e-3, 3e-3]})
    with pytest.raises(InputError, match="row 0 .*needs T in 1e-12–1e\\+12 K"):
        mh.fit(mh.Debye(300.0), data)


def test_sigma_far_below_the_data_scale():
    data = pd.DataFrame({"T": [1.0, 2.0, 3.0, 4.0], "C": [1e-3, 5e-3, 2e-2, 5e-2], "sigma": [1e-300] * 4})
    with pytest.raises(InputError, match="sigma"):
        mh.low_temperature_fit(data, tmax=5.0)


# --- models ----------------------------------------------------------------------------------------
def test_moment_debye_temperature_without_modes():
    with pytest.raises(InputError, match="no vibrational modes"):
        mh.Electronic(1e-3).moment_debye_temperature(0)


def test_theta_below_the_evaluable_range():
    with pytest.raises(InputError, match="theta = 1e-110 K lies outside"):
        mh.thermo(mh.Debye(1e-110), [1.0])


@pytest.mark.parametrize(
    "acoustic, optical, words",
    [
        (mh.Electronic(1e-3), [mh.Einstein(300.0)], "acoustic part"),
        (mh.Debye(300.0), [mh.Schottky(5.0)], "optical parts"),
    ],
)
def test_solid_of_non_vibrational_parts(acoustic, optical, words):
    with pytest.raises(InputError, match=words):
        mh.solid(2, acoustic, optical)


def test_divergent_negative_moment_of_a_chain_is_zero():
    # ⟨θ⁻¹⟩ of a flat (dim 1) density diverges at ω → 0, so θ(−1) → 0 (common practice: the
    # moment integral ∫ g(ω) ω⁻¹ dω diverges logarithmically for g → const)
    assert mh.Debye(300.0, dim=1).moment_debye_temperature(-1) == 0.0


def test_table_without_debye_temperature_warns():
    with pytest.warns(NoDebyeTemperatureWarning, match="no vibrational modes"):
        table = mh.thermo(mh.Electronic(1e-3), [1.0, 2.0])
    assert table["theta_D"].isna().all() and np.isfinite(table[["Cv", "S", "U", "F"]].to_numpy()).all()


# --- effective Debye temperature and C_p ↔ C_v ------------------------------------------------------
@pytest.mark.parametrize(
    "T, c, kw, words",
    [
        ([1.0, 2.0, 3.0], [1.0, 2.0], {}, "2 value"),
        ([1.0, 2.0], [1.0, 2.0], {"atoms": "two"}, "atoms"),
        ([-1.0, 2.0], [1.0, 2.0], {}, "temperature -1.0 K"),
        ([1.0, 2.0], [np.nan, 2.0], {}, "cv is nan"),
    ],
)
def test_effective_debye_temperature_bad_arguments(T, c, kw, words):
    with pytest.raises(InputError, match=words):
        mh.effective_debye_temperature(T, c, **kw)


@pytest.mark.parametrize("convert", [mh.cp_from_cv, mh.cv_from_cp])
def test_cp_cv_mismatched_lengths(convert):
    with pytest.raises(InputError, match="2 heat capacities for 3 temperatures"):
        convert([1.0, 2.0, 3.0], [1.0, 2.0], A=1e-5)


@pytest.mark.parametrize("convert", [mh.cp_from_cv, mh.cv_from_cp])
def test_cp_cv_overflowing_coefficients(convert):
    # α²·B·V·T overflows: was a numpy overflow warning and an infinite result
    with pytest.raises(InputError, match="not finite"):
        convert([300.0], [20.0], alpha=1e300, bulk_modulus=1e11, molar_volume=1e-5)


# --- heat-capacity files -----------------------------------------------------------------------------
def test_empty_heat_capacity_unit_names_its_line(tmp_path):
    path = tmp_path / "cp.txt"
    path.write_text("T (K), C ()\n1, 2\n2, 3\n", encoding="utf-8")
    with pytest.raises(InputError, match="unknown heat-capacity unit ''") as info:
        mh.read_heat_capacity(path)
    assert info.value.line == 1  # the header line that gives the empty unit


# --- one error type everywhere -----------------------------------------------------------------------
@pytest.mark.parametrize(
    "call",
    [
        lambda: special.debye_cv(-1.0),
        lambda: special.einstein_cv(np.nan),
        lambda: special.debye_cv(1.0, dim=4),
        lambda: mh.thermo(3, [1.0]),
    ],
    ids=["negative x", "nan x", "dim 4", "thermo of an int"],
)
def test_wrong_arguments_raise_input_error(call):
    with pytest.raises(InputError) as info:
        call()
    assert isinstance(info.value, ValueError) and isinstance(info.value, ModeheatError)


def test_density_only_at_zero_read_as_it_is():
    """'0 1 / 1 0' with low_t='off' crashed (ZeroDivisionError); read linearly it is a
    density falling from ω = 0, a flat plus a linear low-dimensional branch (invented)."""
    sp = mh.Spectrum([0.0, 1.0], [1.0, 0.0], atoms=1, low_t="off")
    table = mh.thermo(sp, [0.0, 2000.0])
    # common practice: Dulong–Petit, 3R per mole of atoms far above every mode (1 THz ≈ 48 K)
    assert table["Cv"].iloc[1] == pytest.approx(3 * mh.units.R, rel=1e-4)
    # a density finite at ω = 0 gives C ∝ T, so no finite Debye temperature as T → 0
    assert table["theta_D"].iloc[0] == 0.0 and sp.moment_debye_temperature(-3) == 0.0


# --- volume sets and pair potentials (found by tests/test_fuzz.py) --------------------------------
def test_volume_set_naming_a_dos_file_too_long_for_the_system(tmp_path):
    rows = "".join(f"{v}, -1.0, {'x' * 300}\n" for v in (1.0, 2.0, 3.0, 4.0))
    path = tmp_path / "set.txt"
    path.write_text(rows, encoding="utf-8")
    with pytest.raises(InputError, match=r"set\.txt, line 1: the DOS file 'x+' cannot be looked up"):
        mh.read_volume_set(path)


@pytest.mark.parametrize(
    "potential, r, calls",
    [
        (mh.lattice.LennardJones(1e300, 1e-320), 1e-300, ("force_constant",)),  # r² underflows: φ''/0
        (mh.lattice.Morse(0.3, 1e300, 1e300), 1.0, ("energy", "force_constant")),  # e^(huge)·(e^(huge) − 2)
    ],
)
def test_pair_potentials_overflowing_inside_the_core(potential, r, calls):
    for name in calls:
        with pytest.raises(InputError, match="overflows at the distances given"):
            getattr(potential, name)(r)
    with pytest.raises(ModeheatError):
        mh.lattice.pair_lattice(potential, "fcc", r, 1.0)


def test_breakdown_exit_between_repeated_temperatures_or_an_infinite_excess():
    # found by the fuzz campaign (scale 5): data with repeated temperatures made 0 × inf
    import numpy as np

    from modeheat.fitting.breakdown import _interpolated_exit

    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        assert _interpolated_exit(np.array([0.125, 0.5, 0.5]), np.array([-1.0, -np.inf, 2.0])) == 0.5
        assert _interpolated_exit(np.array([0.125, 0.5, 0.5]), np.array([-1.0, -0.5, 2.0])) == 0.5
        assert _interpolated_exit(np.array([1.0, 2.0]), np.array([-1.0, 1.0])) == 1.5
