"""Sessions of the quasi-harmonic objects: VolumeSet and the QuasiHarmonic term.

The reference of every round trip is the object before it: floats come back with the
same IEEE-754 bit pattern (compared as int64 views; common practice), spectra as they
were (their stored state), and the quasi-harmonic table computed from the object read
back is the table of the object before, bit for bit.  The volume sets are invented test
shapes (tests/volume_set_shapes.py).
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

import modeheat as mh
from modeheat.errors import InputError
from modeheat.io import sessions
from volume_set_shapes import volume_set

T = np.array([0.0, 5.0, 50.0, 300.0, 800.0])


def via_json(obj):
    """to_dict → strict JSON text → from_dict, as a session file carries it."""
    return sessions.from_dict(json.loads(json.dumps(sessions.to_dict(obj), allow_nan=False)))


def bits(values) -> np.ndarray:
    return np.asarray(values, dtype=float).view(np.int64)


@pytest.fixture(scope="module")
def vs():
    return volume_set()


def test_volume_set_round_trip_with_spectra(vs):
    back = via_json(vs)
    # reference: the volume set before the round trip
    assert back == vs and back is not vs and type(back) is mh.VolumeSet
    assert np.array_equal(bits(back.volumes), bits(vs.volumes)) and np.array_equal(bits(back.energies), bits(vs.energies))
    assert (back.volume_unit, back.energy_unit, back.name, back.atoms) == (vs.volume_unit, vs.energy_unit, vs.name, vs.atoms)
    assert all(a == b for a, b in zip(back.spectra, vs.spectra))
    assert mh.VolumeSet.from_dict(vs.to_dict()) == vs
    # what the set feeds is unchanged: the same table, bit for bit
    pd.testing.assert_frame_equal(mh.quasi_harmonic(back, T), mh.quasi_harmonic(vs, T), check_exact=True)


def test_volume_set_without_spectra_and_in_other_units():
    bare = mh.VolumeSet([10.0, 10.5, 11.0, 11.5], [-1.0, -1.2, -1.25, -1.2], volume_unit="cm3/mol",
                        energy_unit="kJ/mol", name="energies only")
    back = via_json(bare)
    assert back == bare and back.spectra is None and back.volume_unit == "cm3/mol" and back.energy_unit == "kJ/mol"
    assert sessions.to_dict(bare)["kind"] == "volume_set"


def test_quasi_harmonic_term_round_trip(vs):
    term = mh.QuasiHarmonic(vs, scale=1.03, pressure=2.5, eos="vinet", name="solid")
    back = via_json(term)
    # reference: the term before the round trip (dataclass equality, floats exact)
    assert back == term and type(back) is mh.QuasiHarmonic
    assert (back.scale, back.pressure, back.eos, back.name) == (1.03, 2.5, "vinet", "solid")
    assert mh.Component.from_dict(term.to_dict()) == term
    assert sessions.to_dict(term)["kind"] == "qh"


def test_mixture_holding_a_quasi_harmonic_term(vs):
    mix = mh.QuasiHarmonic(vs, scale=0.98) + mh.Electronic(gamma=8e-4)
    back = mh.Mixture.from_dict(json.loads(json.dumps(mix.to_dict())))
    # reference: the mixture before the round trip
    assert back == mix and [c.name for c in back] == ["qh", "electronic"]
    assert back["qh"].volumes == vs
    Tm = np.array([2.0, 20.0, 200.0, 600.0])
    a, b = mh.thermo(mix, Tm), mh.thermo(back, Tm)
    assert np.array_equal(bits(a.to_numpy()), bits(b.to_numpy()))


def test_session_file_with_a_volume_set_and_a_term(tmp_path, vs):
    objects = {"volumes": vs, "model": mh.QuasiHarmonic(vs) + mh.Electronic(gamma=1e-3)}
    loaded = mh.load_session(mh.save_session(tmp_path / "qh.json", objects))
    assert loaded["volumes"] == vs and loaded["model"] == objects["model"]


# --- damaged documents -----------------------------------------------------------------------------
def _damaged(doc, change, expect=None) -> str:
    doc = json.loads(json.dumps(doc))
    change(doc)
    with pytest.raises(InputError) as info:
        sessions.from_dict(doc, expect)
    return str(info.value)


def _swap(values: list, i: int, j: int) -> None:
    values[i], values[j] = values[j], values[i]


def test_damaged_volume_set_documents_name_the_place(vs):
    good = vs.to_dict()
    assert _damaged(good, lambda d: d["volumes"].pop()).startswith(
        "volumes: expected 6 numbers, one per energy and spectrum, not 5")
    assert _damaged(good, lambda d: d["energies"].pop()).startswith("energies: expected 6 numbers, as many as volumes")
    assert _damaged(good, lambda d: d["spectra"].pop()).startswith("spectra: expected 6 spectra, one per volume, not 5")
    assert _damaged(good, lambda d: _swap(d["volumes"], 2, 3)).startswith("volumes[3]: volume 4 (16 A3) is below volume 3")
    assert _damaged(good, lambda d: d["volumes"].__setitem__(4, d["volumes"][3])).startswith("volumes[4]: volume 5")
    assert _damaged(good, lambda d: d["volumes"].__setitem__(0, -1.0)).startswith("volumes[0]: volume 1 is -1")
    assert _damaged(good, lambda d: d["energies"].__setitem__(1, "nan")).startswith("energies[1]: expected a finite")
    assert _damaged(good, lambda d: d.update(volume_unit="furlong3")).startswith("volume_unit: expected one of")
    assert _damaged(good, lambda d: d.update(energy_unit="erg")).startswith("energy_unit: expected one of")
    assert _damaged(good, lambda d: d["spectra"][2].update(density="x")).startswith("spectra[2].density: expected a list")
    assert _damaged(good, lambda d: d.update(colour="red")).startswith("colour: unexpected key")
    # a shorter list of four volumes: refused by the set's own rule (at least 4 volumes holds)
    four = mh.VolumeSet(vs.volumes[:4], vs.energies[:4]).to_dict()
    assert "at least 4 volumes" in _damaged(four, lambda d: (d["volumes"].pop(), d["energies"].pop()))
    # spectra for different atom counts: the spectrum that differs is named
    two = volume_set(atoms=2.0).spectra[4].to_dict()
    assert _damaged(good, lambda d: d["spectra"].__setitem__(4, two)).startswith(
        "spectra[4]: the spectra are for different atoms per formula unit")


def test_damaged_quasi_harmonic_documents_name_the_place(vs):
    good = (mh.Debye(300.0) + mh.QuasiHarmonic(vs)).to_dict()
    assert _damaged(good, lambda d: _swap(d["components"][1]["volumes"]["volumes"], 0, 5)).startswith(
        "components[1].volumes.volumes[1]: volume 2")
    assert _damaged(good, lambda d: d["components"][1]["volumes"]["spectra"].pop()).startswith(
        "components[1].volumes.spectra: expected 6 spectra")
    assert _damaged(good, lambda d: d["components"][1].update(eos="cubic")).startswith("components[1].eos: expected one of")
    assert _damaged(good, lambda d: d["components"][1].update(scale=-1.0)).startswith("components[1]: qh: scale")
    assert _damaged(good, lambda d: d["components"][1]["volumes"].update(spectra=None)).startswith(
        "components[1].volumes.spectra: a quasi-harmonic term needs the spectra")
    assert _damaged(good, lambda d: d["components"][1].pop("pressure")) == "components[1].pressure: missing"
    assert "expected a VolumeSet document, not kind 'einstein'" in _damaged(
        good, lambda d: d["components"][1].update(volumes=mh.Einstein(300.0).to_dict()))
