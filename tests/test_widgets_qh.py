"""The Explorer's quasi-harmonic panel on the kernel side (no browser): controls set from
Python, marks read back.

The reference of every drawn array is the backend call the panel makes,
:func:`modeheat.quasi_harmonic`, on a volume set built here from plain arrays
(tests/volume_set_shapes.py: Debye densities with θ ∝ V^(−γ) and the published
Birch–Murnaghan E₀(V), an invented test shape).  Marks hold float32, so arrays agree to
float32 rounding (relative 2⁻²⁴ ≈ 6e-8, hence rtol=1e-7).  The heat-capacity data are the
invented demo compound quellium, used only as a shape.  Upload tests need
``modeheat.io.volume_sets`` and are skipped without it.
"""

from __future__ import annotations

import datetime
import warnings
from pathlib import Path

import bqplot as bq
import ipywidgets as widgets
import numpy as np
import pytest

import modeheat as mh
from modeheat.representations import temperature_curves
from modeheat.widgets import Explorer
from volume_set_shapes import volume_set, write_volume_files

ROOT = Path(__file__).resolve().parents[1]
F32 = 1e-7  # float32 rounding of the marks' arrays (module docstring)


@pytest.fixture(scope="module")
def vs():
    return volume_set()


@pytest.fixture(scope="module")
def cp():
    return mh.read_heat_capacity(ROOT / "demo_spectra" / "quellium_cp.txt", atoms=1)


def upload_value(*files: tuple[str, bytes]) -> tuple[dict, ...]:
    """The FileUpload widget's value (ipywidgets 8) for these files."""
    stamp = datetime.datetime(2026, 1, 1, tzinfo=datetime.timezone.utc)
    return tuple({"name": name, "type": "text/plain", "size": len(b), "content": memoryview(b), "last_modified": stamp}
                 for name, b in files)


def _rows(mark) -> np.ndarray:
    return np.atleast_2d(np.asarray(mark.y, dtype=float))


def _figures(widget) -> list:
    """Every bqplot Figure inside a widget, in the order the page shows them."""
    if isinstance(widget, bq.Figure):
        return [widget]
    return [f for child in getattr(widget, "children", ()) for f in _figures(child)]


# --- what the panel draws -------------------------------------------------------------------------
def test_marks_are_the_backends_table(vs):
    e = Explorer(volumes=vs)
    p = e.qh_panel
    T = e.state.temperatures()
    # reference: the backend's quasi_harmonic at the panel's defaults (0 GPa, eos "auto")
    want = mh.quasi_harmonic(vs, T)
    expected = {"V(T)": ["V"], "α(T)": ["alpha_V"], "C_p and C_v": ["Cp", "Cv"]}
    for label, columns in expected.items():
        p.representation.value = label
        np.testing.assert_allclose(p.lines.x, want["T"], rtol=F32)
        np.testing.assert_allclose(_rows(p.lines), np.vstack([want[c] for c in columns]), rtol=F32)
        assert list(p.lines.labels) == columns
    assert p.figure.marks[0] is p.lines and not p.add_button.disabled
    assert "Å³" in p.y_axis.label or p.representation.value != "V(T)"
    assert "birch-murnaghan" in p.summary.value and "6 volumes" in p.summary.value
    assert "volume set is loaded" in e.status.message


def test_pressure_and_equation_of_state_follow_the_controls(vs):
    e = Explorer(volumes=vs)
    p = e.qh_panel
    p.pressure.value = 3.0
    p.eos.value = "vinet"
    T = e.state.temperatures()
    # reference: the backend at 3 GPa with the Vinet form
    want = mh.quasi_harmonic(vs, T, pressure=3.0, eos="vinet")
    np.testing.assert_allclose(_rows(p.lines)[0], want["V"], rtol=F32)
    assert p.table.attrs["eos"] == "vinet" and p.table.attrs["pressure"] == 3.0
    # compressed by the pressure (common practice: V falls as P rises)
    assert _rows(p.lines)[0][0] < mh.quasi_harmonic(vs, T[:1])["V"].iloc[0]


def test_data_sets_are_drawn_with_c_p(vs, cp):
    e = Explorer(volumes=vs, data=cp)
    p = e.qh_panel
    assert p.data_points == []  # V(T): no data
    p.representation.value = "C_p and C_v"
    assert len(p.data_points) == 1 and p.figure.marks[0] is p.lines
    # reference: the data as read
    np.testing.assert_allclose(p.data_points[0].x, cp["T"], rtol=F32)
    np.testing.assert_allclose(p.data_points[0].y, cp["C"], rtol=F32)
    bars = np.asarray(p.error_bars[0].y, dtype=float).reshape(-1, 3)
    np.testing.assert_allclose(bars[:, 1] - bars[:, 0], 2 * cp["sigma"], rtol=1e-5, atol=1e-6)
    # the temperatures follow the data's range, as the Explorer's curves do
    want = mh.quasi_harmonic(vs, e.state.temperatures())
    np.testing.assert_allclose(_rows(p.lines), np.vstack([want["Cp"], want["Cv"]]), rtol=F32)


def test_extrapolation_is_marked_and_noted():
    narrow = volume_set(np.linspace(15.0, 16.6, 6))
    e = Explorer(volumes=narrow)
    p = e.qh_panel
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        want = mh.quasi_harmonic(narrow, e.state.temperatures())
    start = want.attrs["extrapolated_from"]
    # reference: the backend's attrs["extrapolated_from"]
    assert start is not None
    np.testing.assert_allclose(p.extrapolated_line.x, [start, start], rtol=F32)
    assert "extrapolated" in p.summary.value
    assert "quasi-harmonic: from T = " in e.status.message and e.status.kind == "info"


def test_a_pressure_without_a_minimum_says_so_and_draws_nothing(vs):
    e = Explorer(volumes=vs)
    p = e.qh_panel
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        p.pressure.value = -500.0  # a tension far beyond the invented solid's strength
    assert e.status.kind == "error" and "no minimum" in e.status.message and "Traceback" not in e.status.message
    assert len(p.lines.x) == 0 and p.add_button.disabled and p.table is None
    assert "no quasi-harmonic table" in p.summary.value
    p.pressure.value = 0.0
    want = mh.quasi_harmonic(vs, e.state.temperatures())
    np.testing.assert_allclose(_rows(p.lines)[0], want["V"], rtol=F32)
    assert not p.add_button.disabled


def test_without_a_volume_set_the_panel_says_how_to_start():
    e = Explorer(model=mh.Debye(300.0), atoms=1)
    p = e.qh_panel
    assert p.add_button.disabled and len(p.lines.x) == 0 and "volume table" in p.summary.value
    p.add_button.disabled = False  # as if clicked regardless
    p.add_button.click()
    assert e.status.kind == "error" and "no volume set" in e.status.message
    assert [c.name for c in e.state.model] == ["debye"]


# --- the model -----------------------------------------------------------------------------------------
def test_add_to_model_and_undo(vs, cp):
    e = Explorer(volumes=vs, data=cp)
    before = e.state
    p = e.qh_panel
    p.pressure.value = 1.5
    p.add_button.click()
    term = e.state.model["qh"]
    assert isinstance(term, mh.QuasiHarmonic) and term.volumes is vs and term.pressure == 1.5 and term.eos == "auto"
    assert e.state.atoms == 1 and "qh: C_p of the volume set" in e.status.message
    T = e.state.temperatures()
    # the heat-capacity view draws the term's C_p against the data; reference: the backend's
    # curves of the model, and the quasi-harmonic table's C_p itself
    np.testing.assert_allclose(e.curves_view.model_line.y, temperature_curves(e.state.model, T)["C"], rtol=F32)
    cp_table = mh.quasi_harmonic(vs, T, pressure=1.5)["Cp"].to_numpy()
    np.testing.assert_allclose(np.asarray(e.curves_view.model_line.y, dtype=float), cp_table, rtol=1e-6, atol=1e-9)
    assert "qh.scale" in e.editor.sliders
    e.undo()
    assert e.state is before and e.state.model is None
    e.redo()
    assert isinstance(e.state.model["qh"], mh.QuasiHarmonic)


def test_marks_are_not_sent_again_while_a_slider_elsewhere_moves(vs):
    e = Explorer(volumes=vs)
    e.qh_panel.add_button.click()
    sent = []
    e.qh_panel.lines.observe(lambda change: sent.append(change["name"]), "y")
    e.editor.sliders["qh.scale"].value = 1.01  # the model changes, the volume set does not
    assert sent == []
    e.qh_panel.representation.value = "α(T)"
    assert sent == ["y"]


def test_the_lattice_term_replaces_vibrational_and_dilatation_terms_and_undo_restores_them(vs):
    model = mh.PhononDOS(vs.spectra[2], name="dos") + mh.Electronic(1e-3) + mh.Dilatation(2e-6)
    e = Explorer(model=model, volumes=vs)
    before = e.state
    e.qh_panel.add_button.click()
    # the term carries every mode and C_p − C_v itself: the DOS and the dilatation go, γT stays
    assert [c.name for c in e.state.model] == ["qh", "electronic"]
    assert "in place of dos, dilatation" in e.status.message and e.status.kind == "info"
    assert e.state.model.modes == 3 * vs.atoms  # common practice: 3 modes per atom
    e.undo()
    assert e.state is before


def test_session_round_trip_with_a_quasi_harmonic_term(tmp_path, vs, cp):
    e = Explorer(volumes=vs, data=cp)
    e.qh_panel.add_button.click()
    e.editor.sliders["qh.scale"].value = 1.02
    path = e.save(tmp_path / "qh.json")
    back = Explorer.from_session(path)
    # reference: the state before saving
    assert back.state == e.state
    assert back.state.volumes == vs and back.state.model["qh"].scale == pytest.approx(1.02)
    np.testing.assert_array_equal(back.curves_view.model_line.y, e.curves_view.model_line.y)
    np.testing.assert_array_equal(back.qh_panel.lines.y, e.qh_panel.lines.y)
    # a session saved before volume sets existed (no "volumes" object) still loads
    old = tmp_path / "old.json"
    Explorer(model=mh.Debye(300.0), atoms=1).save(old)
    assert Explorer.from_session(old).state.volumes is None


def test_dom_classes_and_figure_order(vs):
    e = Explorer(spectrum=vs.spectra[0], volumes=vs)
    p = e.qh_panel
    assert "mh-qh-panel" in p._dom_classes and p in e.children
    hooks = {"mh-upload-volumes": p.upload, "mh-qh-pressure": p.pressure, "mh-qh-eos": p.eos,
             "mh-qh-representation": p.representation, "mh-qh-add": p.add_button, "mh-qh-figure": p.figure,
             "mh-qh-summary": p.summary}
    for name, widget in hooks.items():
        assert name in widget._dom_classes, name
    assert list(p.representation.options) == ["V(T)", "α(T)", "C_p and C_v"]
    # the browser test relies on the heat-capacity figure coming first, its first mark the model
    figures = _figures(e)
    assert figures[:2] == [e.spectrum_view.figure, e.curves_view.figure] and figures[-1] is p.figure
    assert [f for f in figures if "mh-heat-capacity" in f._dom_classes] == [e.curves_view.figure]
    assert e.curves_view.figure.marks[0] is e.curves_view.model_line
    assert e.children.index(p) > e.children.index(e.inversion_panel)
    assert isinstance(p.upload, widgets.FileUpload) and p.upload.multiple


def test_state_refuses_a_volume_set_without_spectra():
    bare = mh.VolumeSet([10.0, 10.5, 11.0, 11.5], [-1.0, -1.2, -1.25, -1.2])
    with pytest.raises(mh.InputError, match="VolumeSet with spectra"):
        Explorer(volumes=bare)


# --- uploads (need the volume-set reader) --------------------------------------------------------------
@pytest.fixture
def reader():
    return pytest.importorskip("modeheat.io.volume_sets")


def _upload_files(folder: Path, **kw) -> list[tuple[str, bytes]]:
    table, dos = write_volume_files(folder, **kw)
    return [(path.name, path.read_bytes()) for path in (*dos, table)]  # the table last: found by its content


def test_upload_of_a_table_and_its_dos_files(tmp_path, reader, vs):
    e = Explorer()
    e.qh_panel.upload.value = upload_value(*_upload_files(tmp_path))
    assert e.qh_panel.upload.value == ()  # emptied, so the same files can be chosen again
    assert e.status.kind == "info" and "read the volume set invented_qh.txt: 6 volumes" in e.status.message
    loaded = e.state.volumes
    assert loaded is not None and loaded.name == "invented_qh" and e.state.atoms == 1
    # reference: the same set built in memory from the same arrays
    np.testing.assert_array_equal(loaded.volumes, vs.volumes)
    np.testing.assert_array_equal(loaded.energies, vs.energies)
    want = mh.quasi_harmonic(vs, e.state.temperatures())
    np.testing.assert_allclose(_rows(e.qh_panel.lines)[0], want["V"], rtol=F32)
    e.undo()
    assert e.state.volumes is None and len(e.qh_panel.lines.x) == 0


def test_bad_upload_names_the_uploaded_file(tmp_path, reader):
    e = Explorer(model=mh.Debye(300.0), atoms=1)
    before = e.state
    files = _upload_files(tmp_path, missing=3)
    assert e.qh_panel.load_files(files) is None
    message = e.status.message
    assert e.status.kind == "error" and "invented_qh.txt" in message and "invented_qh_v3.txt" in message
    assert "upload the table together with every DOS file it names" in message
    assert "modeheat-volumes-" not in message and "Traceback" not in message
    assert e.state is before
    # DOS files alone: no table among them
    assert e.qh_panel.load_files(files[:2]) is None
    assert e.status.kind == "error" and "cannot tell which" in e.status.message and e.state is before
    # a table with too few rows: the reader's own error, naming the upload and its line
    (tmp_path / "few").mkdir()
    assert e.qh_panel.load_files(_upload_files(tmp_path / "few", volumes=np.linspace(15.0, 16.0, 3), stem="few")) is None
    assert e.status.kind == "error" and "few.txt" in e.status.message and "at least 4 volumes" in e.status.message
    assert str(tmp_path) not in e.status.message and e.state is before


def test_the_fit_panel_fits_the_quasi_harmonic_scale_to_the_data(vs):
    # invented "measured" C_p: the set's own quasi-harmonic C_p with every frequency 3 % higher
    T = np.linspace(5.0, 300.0, 40)
    data = mh.quasi_harmonic(vs, T, scale=1.03)[["T", "Cp"]].rename(columns={"Cp": "C"})
    data.attrs["atoms"] = vs.atoms
    e = Explorer(volumes=vs, data=data)
    e.qh_panel.add_button.click()
    e.editor.vary["qh.scale"].value = True
    result = e.fit_panel.run(wait=True)
    assert result is not None and result.params["qh.scale"] == pytest.approx(1.03, rel=1e-6)
    assert e.editor.sliders["qh.scale"].value == pytest.approx(1.03, rel=1e-6)  # the slider moved to it
    assert "qh gives C_p itself" in result.report()
