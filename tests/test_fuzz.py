"""Seeded fuzz tests: no crash, no RuntimeWarning, no silent NaN.

Each target feeds generated input (invented test shapes, tests/fuzzing.py) to a public
reader or function and checks the guarantee of :func:`fuzzing.outcome`: finite results
(NaN only where documented, with a NoDebyeTemperatureWarning) or a ModeheatError, never another exception.  The
example counts keep the whole file near 30 s on two cores; tests/fuzz_campaign.py runs
the same targets with thousands of examples.
"""

from __future__ import annotations

import json
from functools import lru_cache
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from fuzzing import (
    _mostly,
    cp_files,
    dos_files,
    examples,
    heat_capacity_frames,
    low_t_options,
    mixtures,
    numbers,
    outcome,
    temperatures,
    volume_dos_files,
    volume_tables,
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
    outcome(lambda: mh.effective_debye_temperature(model(), T))
    outcome(lambda: model().moment_debye_temperature(n))
    outcome(lambda: mh.zero_point_energy(model()))


@lru_cache(maxsize=None)
def _small_spectrum(low_t) -> mh.Spectrum:
    """An invented ω² density with a hump, 1 atom."""
    nu = np.linspace(0.0, 6.0, 61)
    return mh.Spectrum(nu, nu**2 * (1.0 + np.exp(-((nu - 4.0) ** 2))), atoms=1, low_t=low_t)


@examples(300)
@given(
    low_t=st.sampled_from(["auto", "fit", "off", 250.0]),
    scale=numbers,
    modes=st.one_of(st.none(), numbers),
    T=temperatures,
    n=st.sampled_from([-3, -2, 0, 2]),
)
def test_spectrum_terms(low_t, scale, modes, T, n):
    term = lambda: mh.PhononDOS(_small_spectrum(low_t), scale=scale, modes=modes)  # noqa: E731
    outcome(lambda: mh.thermo(term() + mh.Electronic(1e-3), T))
    outcome(lambda: term().moment_debye_temperature(n))
    outcome(lambda: mh.representations.plot_dos(term(), points=50))


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


@lru_cache(maxsize=None)
def _session_text(folder: Path) -> str:
    """A small valid session (invented test shapes): a spectrum, a mixture, data and a low-T fit."""
    nu = np.linspace(0.0, 6.0, 13)
    data = pd.DataFrame({"T": [2.0, 3.0, 4.0, 5.0], "C": [0.0021, 0.0055, 0.0118, 0.0215], "sigma": [1e-4] * 4})
    objects = {
        "dos": mh.Spectrum(nu, nu**2, atoms=1, partials={"a": nu**2}),
        "mix": mh.Debye(300.0, modes=1.5) + mh.Einstein(400.0, modes=1.5) + mh.Electronic(1e-3),
        "data": data,
        "low": mh.low_temperature_fit(data, tmax=5.0),
    }
    return mh.save_session(folder / "session.json", objects).read_text(encoding="utf-8")


def _places(value, path=()):
    """The path of every value inside a JSON document, containers and their items."""
    yield path
    items = value.items() if isinstance(value, dict) else enumerate(value) if isinstance(value, list) else ()
    for key, item in items:
        yield from _places(item, path + (key,))


_json_values = st.recursive(
    st.one_of(
        st.none(),
        st.booleans(),
        st.integers(-(10**30), 10**30),
        numbers,
        st.sampled_from(["nan", "inf", "-inf", "", "spectrum", "debye", "mixture", "table", "auto", "float64"]),
    ),
    lambda inner: st.lists(inner, max_size=3) | st.dictionaries(st.sampled_from(["kind", "schema", "map", "x"]), inner, max_size=2),
    max_leaves=6,
)


@examples(300)
@given(data=st.data())
def test_damaged_session_files(folder, data):
    doc = json.loads(_session_text(folder))
    places = list(_places(doc))[1:]
    path = data.draw(st.sampled_from(places))
    parent = doc
    for key in path[:-1]:
        parent = parent[key]
    if data.draw(st.booleans()):
        del parent[path[-1]]
    else:
        parent[path[-1]] = data.draw(_json_values)
    file = write(folder, json.dumps(doc), "session.json")

    def load_and_use():
        loaded = mh.load_session(file)
        return [mh.thermo(v, T_GRID) for v in loaded.values() if isinstance(v, (mh.Spectrum, mh.Mixture))]

    outcome(load_and_use)


@examples(80)
@given(data=heat_capacity_frames(), model=mixtures(), stop=st.integers(1, 30))
def test_model_fit_cancelled_by_its_progress_callback(data, model, stop):
    # a cancelled fit is a ModeheatError (Cancelled) like any refusal, never another exception
    outcome(lambda: mh.fit(model(), data, progress=lambda step: step.done < stop))


@examples(200)
@given(
    done=st.one_of(st.integers(-3, 5), numbers, st.booleans(), st.none(), st.just(np.int64(2))),
    total=st.one_of(st.integers(-3, 5), numbers, st.booleans(), st.none(), st.just(np.int64(4))),
    stage=st.one_of(st.text(max_size=3), st.none(), st.integers()),
)
def test_progress_record(done, total, stage):
    outcome(lambda: mh.progress.Progress(done, total, stage))


@examples(40)
@given(
    data=heat_capacity_frames(),
    method=st.sampled_from(["gcv", "lcurve"]),
    electronic=st.sampled_from(["fit", "none", 1e-3]),
    cp_to_cv=st.sampled_from([None, {"A": 1e-6}, {"A": 1.0}, {"alpha": 1e-5, "gruneisen": 2.0}]),
)
def test_invert_heat_capacity(data, method, electronic, cp_to_cv):
    # few examples: each inversion scans 17 strengths; band="none" keeps it to one solve each
    outcome(lambda: mh.invert_heat_capacity(data, method=method, electronic=electronic, band="none",
                                            cp_to_cv=cp_to_cv))


@lru_cache(maxsize=None)
def _debye_like(theta: float) -> mh.Spectrum:
    nu = np.linspace(0.0, theta / 47.99, 200)  # THz; an invented ν² shape, 3 modes
    return mh.Spectrum(nu, 9.0 * nu**2 / nu[-1] ** 3, unit="THz", atoms=1)


@examples(150)
@given(
    volumes=_mostly(  # a valid set, mostly: the numerics are the target, not only the checks
        st.tuples(st.floats(min_value=1e-3, max_value=1e4),
                  st.lists(st.floats(min_value=0.0, max_value=0.6), min_size=4, max_size=7, unique=True)).map(
            lambda b: [b[0] * (1.0 + f) for f in sorted(b[1])]),
        st.lists(st.one_of(st.floats(min_value=1e-3, max_value=1e4), numbers), min_size=0, max_size=7),
        4,
    ),
    energies=_mostly(st.one_of(  # a bowl (a solid), or anything finite
        st.tuples(st.floats(min_value=-10.0, max_value=10.0), st.floats(min_value=0.05, max_value=20.0),
                  st.floats(min_value=0.0, max_value=1.0)).map(
            lambda p: [p[0] + p[1] * (k / 6.0 - p[2]) ** 2 for k in range(7)]),
        st.lists(st.floats(min_value=-1e3, max_value=1e3), min_size=7, max_size=7)),
        st.lists(numbers, min_size=7, max_size=7), 4),
    thetas=st.one_of(  # a smooth family, or anything
        st.sampled_from([1.0, 2.0, 3.0]).map(lambda g: [300.0 * (1.0 + 0.02 * k) ** -g for k in range(7)]),
        st.lists(st.sampled_from([5.0, 150.0, 300.0, 300.5, 2e4]), min_size=7, max_size=7),
    ),
    pressure=st.sampled_from([0.0, 0.0, 5.0, -2.0, 1e3, float("nan")]),
    eos=st.sampled_from(["auto", "birch-murnaghan", "vinet"]),
    T=temperatures,
)
def test_quasi_harmonic(volumes, energies, thetas, pressure, eos, T):
    def call():
        spectra = [_debye_like(t) for t in thetas[: len(volumes)]]
        volume_set = mh.VolumeSet(volumes, energies[: len(volumes)], spectra)
        return mh.quasi_harmonic(volume_set, T, pressure=pressure, eos=eos, warn=False)

    outcome(call)


@examples(300)
@given(table=volume_tables(), dos=dos_files, low_t=low_t_options)
def test_volume_set_reader_and_writer(folder, table, dos, low_t):
    # what reads, writes and reads back: same volumes, energies and grids
    volume_dos_files(folder)
    write(folder, dos, "fuzz_dos.txt")
    path = write(folder, table, "volumes.txt")
    (folder / "out").mkdir(exist_ok=True)

    def read_write_read():
        first = mh.read_volume_set(path, low_t=low_t)
        mh.write_volume_set(folder / "out" / "w.txt", first, overwrite=True)
        again = mh.read_volume_set(folder / "out" / "w.txt", low_t=low_t)
        assert np.array_equal(again.volumes, first.volumes) and np.array_equal(again.energies, first.energies)
        assert all(np.array_equal(a.frequency, b.frequency) for a, b in zip(first.spectra, again.spectra))
        return again

    outcome(read_write_read)


_potential_numbers = st.one_of(numbers, st.floats(min_value=0.05, max_value=5.0))


@examples(300)
@given(
    kind=st.sampled_from(["Morse", "LennardJones"]),
    parameters=st.lists(_potential_numbers, min_size=3, max_size=3),
    structure=st.sampled_from(["sc", "bcc", "fcc", "hcp"]),
    a=_potential_numbers,
    mass=st.sampled_from([1.0, 50.0, 0.0, 1e300]),
    shells=st.sampled_from([1, 2, 3, True]),
    r=st.lists(numbers, min_size=0, max_size=4),
)
def test_pair_potentials(kind, parameters, structure, a, mass, shells, r):
    def potential():
        return getattr(mh.lattice, kind)(*parameters[: 3 if kind == "Morse" else 2])

    outcome(lambda: np.concatenate([np.atleast_1d(potential().energy(r)), np.atleast_1d(potential().force_constant(r))]))

    def lattice():
        springs, energy = mh.lattice.pair_lattice(potential(), structure, a, mass, shells)
        return np.array([springs.k1, springs.k2, energy])

    outcome(lattice)
