"""Lossless sessions: documents, session files, pickling, copies and equality.

The reference of every round trip is the object before it: floats must come back with
the same IEEE-754 bit pattern (compared as int64 views; common practice), arrays
element for element, text as it was.  Python's json module writes a float with its
shortest repr, which reads back as the same double (common practice); the hypothesis
test checks that over random floats, subnormals and signed zeros included.  Spectra,
models and data here are invented test shapes or the invented demo files.
"""

from __future__ import annotations

import copy
import json
import math
import pickle
import warnings

import numpy as np
import pandas as pd
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

import modeheat as mh
from modeheat.errors import InputError
from modeheat.io import sessions

T_GRID = np.concatenate(([0.0], np.geomspace(0.05, 3000.0, 120)))
DEMO = "demo_spectra"


def via_json(obj):
    """to_dict → JSON text (strict: no NaN literals) → from_dict, as a file would carry it."""
    text = json.dumps(sessions.to_dict(obj), allow_nan=False)
    return sessions.from_dict(json.loads(text))


def bits(values) -> np.ndarray:
    return np.asarray(values, dtype=float).view(np.int64)


def same_floats(a, b) -> bool:
    """Bit for bit, except that every NaN equals every NaN (its payload is not kept)."""
    a, b = np.asarray(a, dtype=float), np.asarray(b, dtype=float)
    nan = np.isnan(a)
    return a.shape == b.shape and bool(np.array_equal(nan, np.isnan(b))) and bool(np.all(bits(a[~nan]) == bits(b[~nan])))


def same_mapping(a: dict, b: dict) -> bool:
    return list(a) == list(b) and same_floats(list(a.values()), list(b.values()))


def assert_same_table(a: pd.DataFrame, b: pd.DataFrame) -> None:
    # reference: the table before the round trip, every value exactly (check_exact)
    pd.testing.assert_frame_equal(a, b, check_exact=True)
    assert list(a.attrs) == list(b.attrs)
    for key, value in a.attrs.items():
        if isinstance(value, float):
            assert same_floats(value, b.attrs[key]), key
        else:
            assert b.attrs[key] == value and type(b.attrs[key]) is type(value), key


# --- floats ---------------------------------------------------------------------------------------
@settings(derandomize=True, database=None, max_examples=300, deadline=None)
@given(st.lists(st.floats(allow_nan=True, allow_infinity=True, allow_subnormal=True), min_size=1, max_size=40))
@example([5e-324, -5e-324, 2.2250738585072009e-308, 2.2250738585072014e-308, -0.0, 0.0])
@example([1.7976931348623157e308, -1.7976931348623157e308, math.inf, -math.inf, math.nan, 0.1, 1 / 3])
def test_random_floats_round_trip_bit_for_bit(values):
    frame = pd.DataFrame({"x": np.array(values, dtype=float)})
    frame.attrs.update(first=values[0], each=list(values), pair=(values[0], values[-1]))
    back = via_json(frame)
    # reference: the IEEE-754 bit patterns before the round trip (common practice)
    assert same_floats(back["x"], frame["x"])
    assert same_floats(back.attrs["each"], values)
    assert same_floats(back.attrs["first"], values[0])
    assert isinstance(back.attrs["pair"], tuple) and same_floats(back.attrs["pair"], (values[0], values[-1]))


def test_non_finite_numbers_are_written_as_documented_strings():
    doc = sessions.to_dict(pd.DataFrame({"x": [math.nan, math.inf, -math.inf, 1.5]}))
    assert doc["columns"][0]["values"] == ["nan", "inf", "-inf", 1.5]
    assert doc["kind"] == "table" and doc["schema"] == sessions.SCHEMA


# --- spectra ----------------------------------------------------------------------------------------
def _sampled(**kw):
    nu = np.linspace(0.0, 8.0, 161)
    g = np.where(nu < 6.0, nu**2, 0.0) + np.where((nu > 6.5) & (nu < 7.5), 20.0, 0.0)
    return mh.Spectrum(nu, g, unit="THz", partials={"heavy": 0.7 * g, "light": 0.3 * g}, name="invented", **kw)


def _modes(**kw):
    rng = np.random.default_rng(7)
    # invented test shape: an ω² spectrum as a list of modes with q-point weights
    f = 5.0 * rng.random(4000) ** (1 / 3)
    w = rng.uniform(0.5, 1.5, f.size)
    return mh.Spectrum.from_modes(f, w / w.sum() * 3.0, unit="meV", partials={"a": np.full(f.size, 0.5)}, **kw)


def _histogram(**kw):
    mix = mh.solid(2, mh.Debye(260.0), [mh.Einstein(480.0), mh.Band(520.0, 600.0)])
    return mix.spectrum(unit="cm-1", **kw)


SPECTRA = {
    "sampled auto": lambda: _sampled(atoms=2),
    "sampled off": lambda: _sampled(atoms=2, low_t="off"),
    "sampled theta": lambda: _sampled(atoms=2, low_t=210.0),
    "sampled extrapolate": lambda: _sampled(atoms=2, low_t="extrapolate"),
    "sampled fit cutoff": lambda: _sampled(atoms=2, low_t="fit", low_t_cutoff=1.0),
    "modes auto": lambda: _modes(),
    "modes off": lambda: _modes(low_t="off"),
    "histogram fit": lambda: _histogram(),
    "histogram auto": lambda: _histogram(low_t="auto"),
    "demo sampled (atoms from the integral)": lambda: mh.read_spectrum(f"{DEMO}/zorbium_lumide_dos.txt"),
    "demo meV": lambda: mh.read_spectrum(f"{DEMO}/zorbium_lumide_dos_meV.txt", atoms=2),
    "demo quellium": lambda: mh.read_spectrum(f"{DEMO}/quellium_dos.txt"),
}


@pytest.mark.parametrize("build", SPECTRA.values(), ids=SPECTRA.keys())
def test_spectrum_round_trip_is_the_same_spectrum(build):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", mh.SpectrumWarning)  # invented shapes; the warnings are not the point
        s = build()
    back = via_json(s)
    # reference: the spectrum before the round trip
    assert back == s and back is not s and type(back) is mh.Spectrum
    for attribute in ("frequency", "density"):
        assert same_floats(getattr(back, attribute), getattr(s, attribute))
    assert list(back.partials) == list(s.partials)
    assert all(same_floats(back.partials[k], v) for k, v in s.partials.items())
    for attribute in ("unit", "name", "atoms_source", "low_t", "low_t_method", "low_t_summary"):
        assert getattr(back, attribute) == getattr(s, attribute)
    for attribute in ("atoms", "mode_integral", "raw_integral", "low_t_cutoff", "modes"):
        assert same_floats(getattr(back, attribute), getattr(s, attribute))
    assert same_floats(back.moment_debye_temperature(-3), s.moment_debye_temperature(-3))
    assert repr(back) == repr(s)
    # the same numbers from thermo, bit for bit (the engine's modes are stored, not rebuilt)
    a, b = mh.thermo(s, T_GRID), mh.thermo(back, T_GRID)
    assert same_floats(a.to_numpy(), b.to_numpy())
    assert a.attrs == b.attrs


def test_spectrum_kind_is_kept_for_with_low_t():
    hist = _histogram()
    back = mh.Spectrum.from_dict(hist.to_dict())
    with pytest.raises(InputError, match="histogram"):
        back.with_low_t("off")  # a histogram stays a histogram
    sampled = mh.Spectrum.from_dict(_sampled(atoms=2).to_dict())
    assert sampled.with_low_t("off") == _sampled(atoms=2).with_low_t("off")


def test_spectrum_pickles_and_deep_copies():
    s = _sampled(atoms=2)
    for other in (pickle.loads(pickle.dumps(s)), copy.deepcopy(s), copy.copy(s)):
        # reference: the spectrum before pickling or copying
        assert other == s
        assert same_floats(mh.heat_capacity(other, T_GRID), mh.heat_capacity(s, T_GRID))
    holder = copy.deepcopy({"dos": s, "list": [s]})
    assert holder["dos"] == s and holder["list"][0] == s


def test_spectrum_equality_is_by_value():
    s = _sampled(atoms=2)
    assert s == _sampled(atoms=2)  # built twice from the same data
    assert s != _sampled(atoms=2, low_t="off")
    assert s != s.to("meV")
    assert s != _sampled(atoms=2.5)
    assert (s == "a spectrum") is False and s != 1.0
    with pytest.raises(TypeError):
        hash(s)


# --- models and mixtures --------------------------------------------------------------------------------
COMPONENTS = [
    mh.Debye(312.5, modes=1.5, dim=2, name="layers"),
    mh.SineChain(250.0, modes=1.5),
    mh.Einstein(480.0, modes=3.0),
    mh.Band(0.0, 600.0, modes=1.0),
    mh.Band(520.0, 520.0, modes=2.0),
    mh.Electronic(9e-4),
    mh.Schottky(8.25, g_ratio=3.0, n=0.01),
    mh.Dilatation(4e-6),
]


@pytest.mark.parametrize("component", COMPONENTS, ids=lambda c: c.name)
def test_component_round_trip(component):
    back = via_json(component)
    # reference: the component before the round trip (dataclass equality, floats exact)
    assert back == component and type(back) is type(component)
    assert same_mapping(back.parameters, component.parameters)
    assert type(component).from_dict(component.to_dict()) == component
    assert mh.Component.from_dict(component.to_dict()) == component


def test_mixture_keeps_names_order_atoms_and_numbers():
    mix = mh.solid(
        2, mh.Debye(260.0), [mh.Einstein(480.0), mh.Einstein(510.0), mh.Band(520.0, 600.0)], extras=[mh.Electronic(5e-4)]
    ) + mh.Dilatation(3e-6)
    mix = mix.with_atoms(2.0)
    back = mh.Mixture.from_dict(json.loads(json.dumps(mix.to_dict())))
    # reference: the mixture before the round trip
    assert back == mix
    assert [c.name for c in back] == ["debye", "einstein", "einstein_2", "band", "electronic", "dilatation"]
    assert back.atoms == 2.0 and back.check == "error"
    assert same_floats(mh.thermo(back, T_GRID).to_numpy(), mh.thermo(mix, T_GRID).to_numpy())


# --- data and fits ---------------------------------------------------------------------------------------
@pytest.fixture(scope="module")
def cp_data():
    return mh.read_heat_capacity(f"{DEMO}/quellium_cp.txt", atoms=1)


def test_heat_capacity_data_keep_their_attrs(cp_data):
    back = via_json(cp_data)
    assert_same_table(cp_data, back)
    assert back.attrs["units"] == {"T": "K", "C": "J/(mol K)", "sigma": "J/(mol K)"}
    assert back.attrs["lines"] == cp_data.attrs["lines"] and back.attrs["molar_mass"] is None
    # what the data feed is unchanged: the same low-temperature fit, bit for bit
    a = mh.low_temperature_fit(cp_data, tmax=6.0)
    b = mh.low_temperature_fit(back, tmax=6.0)
    assert same_floats([a.gamma, a.beta, a.theta_D0_stderr], [b.gamma, b.beta, b.theta_D0_stderr])


def test_thermo_table_and_index_round_trip():
    table = mh.thermo(_sampled(atoms=2), [1.0, 10.0, 300.0])
    assert_same_table(table, via_json(table))
    labelled = pd.DataFrame({"x": [1.0, 2.0], "n": [3, 4], "ok": [True, False]}, index=["a", "b"])
    assert_same_table(labelled, via_json(labelled))
    empty = pd.DataFrame({"x": np.array([], dtype=float)})
    assert_same_table(empty, via_json(empty))


def test_low_temperature_fit_round_trip(cp_data):
    low = mh.low_temperature_fit(cp_data, tmax=6.0, terms=("gamma", "beta", "delta"))
    back = mh.LowTemperatureFit.from_dict(json.loads(json.dumps(low.to_dict())))
    # reference: the fit result before the round trip
    names = ("gamma", "gamma_stderr", "beta", "beta_stderr", "delta", "delta_stderr", "theta_D0", "theta_D0_stderr")
    assert same_floats([getattr(back, n) for n in names], [getattr(low, n) for n in names])
    assert_same_table(low.covariance, back.covariance)
    assert_same_table(low.table, back.table)
    assert (back.window, back.t_range, back.terms, back.n_points) == (low.window, low.t_range, low.terms, low.n_points)
    assert back.report() == low.report() and repr(back) == repr(low)


@pytest.fixture(scope="module")
def fitted(cp_data):
    model = mh.Debye(300.0) + mh.Electronic(1e-3) + mh.Dilatation(1e-6)
    return mh.fit(model, cp_data, tmin=2.0, tmax=120.0)


def test_fit_result_round_trip(fitted):
    back = mh.FitResult.from_dict(json.loads(json.dumps(fitted.to_dict())))
    # reference: the fit result before the round trip
    assert back.model == fitted.model
    assert same_mapping(back.params, fitted.params) and same_mapping(back.stderr, fitted.stderr)
    assert any(math.isnan(v) for v in back.stderr.values()) or not fitted.fixed
    for name in ("covariance", "correlation", "residuals"):
        assert_same_table(getattr(fitted, name), getattr(back, name))
    assert back.quality == fitted.quality
    assert back.report() == fitted.report() and repr(back) == repr(fitted)
    assert (back.varied, back.fixed, back.window, back.datasets, back.nfev) == (
        fitted.varied,
        fitted.fixed,
        fitted.window,
        fitted.datasets,
        fitted.nfev,
    )


# --- session files -----------------------------------------------------------------------------------------
def test_save_and_load_session(tmp_path, cp_data, fitted):
    objects = {
        "dos": _sampled(atoms=2),
        "model": fitted.model,
        "einstein": mh.Einstein(480.0),
        "data": cp_data,
        "fit": fitted,
        "low": mh.low_temperature_fit(cp_data, tmax=6.0),
    }
    path = mh.save_session(tmp_path / "s.json", objects)
    text = path.read_text(encoding="utf-8")
    assert mh.CAUTION in text and "NaN" not in text and "Infinity" not in text
    loaded = mh.load_session(path)
    assert list(loaded) == list(objects)
    assert loaded["dos"] == objects["dos"] and loaded["model"] == objects["model"]
    assert loaded["einstein"] == objects["einstein"]
    assert_same_table(loaded["data"], cp_data)
    assert loaded["fit"].report() == fitted.report() and loaded["low"].report() == objects["low"].report()


def test_session_never_overwrites_without_permission(tmp_path):
    path = tmp_path / "s.json"
    path.write_text("earlier work\n", encoding="utf-8")
    with pytest.raises(InputError, match="exists") as info:
        mh.save_session(path, {"e": mh.Einstein(400.0)})
    assert str(path) in str(info.value)
    assert path.read_text(encoding="utf-8") == "earlier work\n"
    mh.save_session(path, {"e": mh.Einstein(400.0)}, overwrite=True)
    assert mh.load_session(path)["e"] == mh.Einstein(400.0)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["s.json"]  # no temporary file left


def test_unstorable_objects_are_named(tmp_path):
    with pytest.raises(InputError, match=r"objects\['bad'\]: cannot store a set"):
        mh.save_session(tmp_path / "s.json", {"ok": mh.Einstein(400.0), "bad": {1, 2}})
    frame = pd.DataFrame({"x": [1.0]})
    frame.attrs["when"] = object()
    with pytest.raises(InputError, match="cannot store a value of type object"):
        mh.save_session(tmp_path / "s.json", {"t": frame})
    with pytest.raises(InputError, match="column 'x' has dtype"):
        sessions.to_dict(pd.DataFrame({"x": ["text"]}))
    assert not (tmp_path / "s.json").exists()


# --- damaged documents -----------------------------------------------------------------------------------------
def _mixture_doc():
    return (mh.Debye(300.0) + mh.Einstein(400.0) + mh.Einstein(500.0)).to_dict()


def _damaged(change):
    doc = _mixture_doc()
    change(doc)
    with pytest.raises(InputError) as info:
        sessions.from_dict(doc)
    return str(info.value)


def test_damaged_documents_name_the_place():
    assert _damaged(lambda d: d["components"][2].update(theta="hot")).startswith(
        "components[2].theta: expected a number"
    )
    assert _damaged(lambda d: d["components"][1].pop("modes")) == "components[1].modes: missing"
    assert _damaged(lambda d: d["components"][0].update(dim=2.5)).startswith("components[0].dim: expected a whole number")
    assert _damaged(lambda d: d["components"][0].update(colour="red")).startswith("components[0].colour: unexpected key")
    assert _damaged(lambda d: d["components"][0].update(theta=-5.0)).startswith("components[0]: debye: theta must be")
    assert _damaged(lambda d: d.update(components={"a": 1})).startswith("components: expected a list")
    assert _damaged(lambda d: d.update(atoms=True)).startswith("atoms: expected a number")
    assert "unknown kind 'os.system'" in _damaged(lambda d: d["components"][1].update(kind="os.system"))
    assert _damaged(lambda d: d.update(schema=2)).startswith("schema: written with schema 2, newer than")
    assert _damaged(lambda d: d.update(schema="1")).startswith("schema: expected a whole number")
    assert _damaged(lambda d: d["components"].append(mh.Einstein(1.0).to_dict() | {"kind": "mixture"})).startswith(
        "components[3]: expected a Component document, not kind 'mixture'"
    )


def test_damaged_spectrum_documents():
    good = _sampled(atoms=2).to_dict()

    def damaged(change) -> str:
        doc = json.loads(json.dumps(good))
        change(doc)
        with pytest.raises(InputError) as info:
            mh.Spectrum.from_dict(doc)
        return str(info.value)

    assert damaged(lambda d: d["density"].pop()).startswith("density: expected 161 numbers, as many as frequency, not 160")
    assert damaged(lambda d: d["partials"]["heavy"].append(1.0)).startswith("partials['heavy']: expected 161 numbers")
    assert damaged(lambda d: d["frequency"].__setitem__(3, "x")).startswith("frequency[3]: expected a number")
    assert damaged(lambda d: d["frequency"].__setitem__(3, "nan")).startswith("frequency[3]: expected a finite number")
    assert damaged(lambda d: d["modeset"]["theta"].__setitem__(0, -1.0)).startswith("modeset.theta[0]: expected a value")
    assert damaged(lambda d: d["modeset"]["branches"][0].update(dim=4)).startswith("modeset.branches[0].dim: expected 1, 2 or 3")
    assert damaged(lambda d: d["continuation"].update(method="magic")).startswith("continuation.method: expected one of")
    assert damaged(lambda d: d.update(low_t="warm")).startswith("low_t: expected a number")
    assert damaged(lambda d: d.update(unit="furlong")).startswith("unit: ")
    assert damaged(lambda d: d.update(atoms=0.0)).startswith("atoms: expected a value from")
    with pytest.raises(InputError, match="expected a Spectrum document, not kind 'einstein'"):
        mh.Spectrum.from_dict(mh.Einstein(300.0).to_dict())
    with pytest.raises(InputError, match="expected a Debye document, not kind 'einstein'"):
        mh.Debye.from_dict(mh.Einstein(300.0).to_dict())
    with pytest.raises(InputError, match="expected a document"):
        sessions.from_dict([1, 2])


def test_damaged_table_documents():
    good = sessions.to_dict(pd.DataFrame({"T": [1.0, 2.0], "n": [1, 2]}))

    def damaged(change) -> str:
        doc = json.loads(json.dumps(good))
        change(doc)
        with pytest.raises(InputError) as info:
            sessions.from_dict(doc)
        return str(info.value)

    assert damaged(lambda d: d["columns"][1]["values"].pop()).startswith("columns[1].values: expected 2 values")
    assert damaged(lambda d: d["columns"][1].update(dtype="complex")).startswith("columns[1].dtype: expected one of")
    assert damaged(lambda d: d["columns"][1]["values"].__setitem__(0, 1.5)).startswith("columns[1].values[0]: expected a whole")
    assert damaged(lambda d: d["columns"][1].update(name="T")).startswith("columns[1].name: column 'T' appears twice")
    assert damaged(lambda d: d.update(index=["a"])).startswith("index: expected 2 labels")
    assert damaged(lambda d: d.update(attrs={"x": 1, "y": 2})).startswith("attrs: expected a JSON value or one of")
    assert damaged(lambda d: d.update(attrs=[1])).startswith("attrs: expected a tagged map")


def test_damaged_session_files_name_the_file(tmp_path):
    path = tmp_path / "s.json"
    mh.save_session(path, {"mix": (mh.Debye(300.0) + mh.Einstein(400.0) + mh.Einstein(500.0))})
    raw = json.loads(path.read_text(encoding="utf-8"))

    def load(text: str) -> str:
        bad = tmp_path / "bad.json"
        bad.write_text(text, encoding="utf-8")
        with pytest.raises(InputError) as info:
            mh.load_session(bad)
        assert str(bad) in str(info.value)
        return str(info.value)

    raw["objects"]["mix"]["components"][2]["theta"] = "hot"
    assert "objects['mix'].components[2].theta: expected a number" in load(json.dumps(raw))
    assert ", line 3: not a session file: invalid JSON" in load('{\n "format": "modeheat session",\n oops\n}')
    assert "NaN is not JSON" in load('{"format": "modeheat session", "schema": 1, "objects": {"x": NaN}}')
    assert "expected a JSON object with \"format\"" in load('[1, 2, 3]')
    assert "schema: written with schema 7" in load('{"format": "modeheat session", "schema": 7, "caution": "", "objects": {}}')
    assert "the file is empty" in load("")
    with pytest.raises(InputError, match="no such file"):
        mh.load_session(tmp_path / "missing.json")
