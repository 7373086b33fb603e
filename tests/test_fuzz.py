"""Seeded fuzz tests: no crash, no RuntimeWarning, no silent NaN.

Each target feeds generated input (invented test shapes, tests/fuzzing.py) to a public
reader or function and checks the guarantee of :func:`fuzzing.outcome`: finite results
(NaN only where documented, with a NoDebyeTemperatureWarning) or a ModeheatError, never another exception.  The
example counts keep the whole file near 30 s on two cores; tests/fuzz_campaign.py runs
the same targets with thousands of examples.
"""

from __future__ import annotations

import numpy as np
import pytest
from fuzzing import (
    cp_files,
    dos_files,
    examples,
    heat_capacity_frames,
    low_t_options,
    mixtures,
    numbers,
    outcome,
    temperatures,
    write,
)
from hypothesis import given
from hypothesis import strategies as st

import modeheat as mh

T_GRID = [0.0, 1e-3, 1.0, 30.0, 300.0, 3e4]


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    return tmp_path_factory.mktemp("fuzz")


def dos_then_thermo(path, unit, low_t):
    def call():
        spectrum = mh.read_spectrum(path, unit=unit, low_t=low_t)
        return mh.thermo(spectrum, T_GRID)

    return call


@examples(600)
@given(text=dos_files, unit=st.sampled_from([None, None, None, "THz", "K"]), low_t=low_t_options)
def test_dos_reader_and_table(folder, text, unit, low_t):
    outcome(dos_then_thermo(write(folder, text), unit, low_t))


@examples(600)
@given(text=cp_files, unit=st.sampled_from([None, "J/(mol K)"]), molar_mass=st.sampled_from([None, 50.0]))
def test_heat_capacity_reader(folder, text, unit, molar_mass):
    outcome(lambda: mh.read_heat_capacity(write(folder, text, "cp.txt"), unit=unit, molar_mass=molar_mass))


_arrays = st.lists(numbers, min_size=0, max_size=8)


@examples(480)
@given(
    kind=st.sampled_from(["sampled", "modes", "histogram"]),
    x=_arrays,
    y=_arrays,
    low_t=low_t_options,
    atoms=st.sampled_from([1.0, 2.0, 1e-300, 1e300]),
    T=temperatures,
)
def test_spectrum_constructors_and_thermo(kind, x, y, low_t, atoms, T):
    build = {
        "sampled": lambda: mh.Spectrum(x, y, atoms=atoms, low_t=low_t),
        "modes": lambda: mh.Spectrum.from_modes(x, y if len(y) == len(x) else None, atoms=atoms, low_t=low_t),
        "histogram": lambda: mh.Spectrum.from_histogram(np.sort(x), y[: max(len(x) - 1, 0)], atoms=atoms, low_t=low_t),
    }[kind]
    outcome(lambda: mh.thermo(build(), T))
    outcome(lambda: build().moment_debye_temperature(2))


@examples(600)
@given(model=mixtures(), T=temperatures, n=st.sampled_from([-3, -2, 0, 1, 2]))
def test_models_and_mixtures(model, T, n):
    outcome(lambda: mh.thermo(model(), T))
    outcome(lambda: model().moment_debye_temperature(n))
    outcome(lambda: mh.zero_point_energy(model()))


@examples(400)
@given(
    T=st.lists(numbers, min_size=0, max_size=6),
    c=st.lists(numbers, min_size=0, max_size=6),
    atoms=st.sampled_from([1.0, 3.0, 0.0, -1.0, None, float("nan"), 1e-300, 1e300]),
)
def test_effective_debye_temperature(T, c, atoms):
    outcome(lambda: mh.effective_debye_temperature(T, c, atoms=atoms))


@examples(400)
@given(
    T=st.lists(numbers, min_size=0, max_size=6),
    c=st.lists(numbers, min_size=0, max_size=6),
    form=st.sampled_from(["A", "gruneisen", "identity"]),
    k=numbers,
)
def test_cp_cv_conversions(T, c, form, k):
    kw = {"A": {"A": k}, "gruneisen": {"alpha": k, "gruneisen": 2.0}, "identity": {"alpha": k, "bulk_modulus": 1e11, "molar_volume": 1e-5}}[form]
    outcome(lambda: mh.cp_from_cv(T, c, **kw))
    outcome(lambda: mh.cv_from_cp(T, c, **kw))


@examples(400)
@given(
    data=heat_capacity_frames(),
    tmax=st.sampled_from([5.0, 20.0, 1e-300, 1e300]),
    terms=st.sampled_from([("gamma", "beta"), ("beta",), ("gamma", "beta", "delta")]),
)
def test_low_temperature_fit_and_breakdown(data, tmax, terms):
    outcome(lambda: mh.low_temperature_fit(data, tmax=tmax, terms=terms))
    outcome(lambda: mh.debye_breakdown(data, tmax=tmax))


@examples(160)
@given(data=heat_capacity_frames(), model=mixtures())
def test_model_fit(data, model):
    outcome(lambda: mh.fit(model(), data))


@examples(160)
@given(model=mixtures(), tolerance=st.sampled_from([0.01, 0.5, 0.0, 1e-300]))
def test_model_breakdown(model, tolerance):
    outcome(lambda: mh.debye_breakdown(model(), tolerance=tolerance))
