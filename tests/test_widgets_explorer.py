"""The Explorer on the kernel side (no browser): controls set from Python, marks read back.

The reference for every drawn array is the backend call the view makes
(``modeheat.representations``), itself tested against mpmath and NIST-JANAF in
test_representations.py; marks hold float32, so arrays agree to float32 rounding
(relative 2⁻²⁴ ≈ 6e-8, hence rtol=1e-7).  Data are the invented demo compound, used
only as a shape: never as a reference.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import modeheat as mh
from modeheat.representations import contributions, plot_dos, reduced_dos, temperature_curves
from modeheat.widgets import Explorer, ExplorerState
from modeheat.widgets.curves_view import model_cp
from modeheat.widgets.spectrum_view import POINTS

ROOT = Path(__file__).resolve().parents[1]
F32 = 1e-7  # float32 rounding of the marks' arrays (module docstring)
TINY = float(np.finfo(np.float32).tiny)  # below it float32 flushes to 0: far below any screen pixel


def _two_branch() -> Explorer:
    return Explorer(model=mh.Debye(theta=300.0) + mh.Einstein(theta=500.0, modes=3), atoms=2)


def _model_y(e: Explorer) -> np.ndarray:
    return np.asarray(e.curves_view.model_line.y, dtype=float)


def test_empty_explorer_says_how_to_start():
    e = Explorer()
    assert "load a DOS" in e.status.message and e.status.kind == "info"
    assert len(e.curves_view.model_line.y) == 0 and len(e.spectrum_view.model_line.y) == 0
    assert e.state.model is None and e.undo_button.disabled
    with pytest.raises(mh.InputError, match="no model"):
        e.curves()


def test_dom_hooks_the_browser_test_relies_on():
    e = Explorer.demo()
    assert "mh-heat-capacity" in e.curves_view.figure._dom_classes
    assert e.curves_view.figure.marks[0] is e.curves_view.model_line  # first Lines = model total
    assert "mh-spectrum" in e.spectrum_view.figure._dom_classes
    assert "mh-representation" in e.curves_view.representation._dom_classes
    assert [label for label in e.curves_view.representation.options] == ["C", "C/T³", "C/T vs T²", "θ_D(T)", "S"]
    slider = e.editor.sliders["dos.scale"]
    assert {"mh-slider", "mh-param-dos-scale"} <= set(slider._dom_classes)
    assert "mh-number" in e.editor.numbers["dos.scale"]._dom_classes
    assert "mh-status" in e.status._dom_classes


def test_model_line_is_the_backends_heat_capacity():
    e = _two_branch()
    T = e.state.temperatures()
    # reference: the backend's temperature_curves (module docstring)
    want = temperature_curves(e.state.model, T)
    np.testing.assert_allclose(e.curves_view.model_line.x, T, rtol=F32)
    np.testing.assert_allclose(_model_y(e), want["C"], rtol=F32)
    # 3·atoms·R, the classical limit (common practice), with atoms = 2
    np.testing.assert_allclose(e.curves_view.dulong_petit.y, 6.0 * 8.314462618, rtol=F32)
    # the T³ law (Debye, common practice), drawn where it stays below the model's highest C
    law = want["T"].to_numpy() ** 3 * want.attrs["t3_level"]
    law = np.where(law <= want["C"].max(), law, np.nan)
    np.testing.assert_allclose(e.curves_view.t3_law.y, law, rtol=F32)
    assert np.isnan(law[-1]) and np.isfinite(law[0])


def test_slider_moves_the_model_and_undo_redo_return():
    e = _two_branch()
    before = e.state
    e.editor.sliders["debye.theta"].value = 350.0
    assert e.state.model["debye"].theta == pytest.approx(350.0)
    want = temperature_curves(mh.Debye(theta=350.0) + mh.Einstein(theta=500.0, modes=3), e.state.temperatures())
    np.testing.assert_allclose(_model_y(e), want["C"], rtol=F32)  # reference: the backend
    e.undo()
    assert e.state is before and e.editor.sliders["debye.theta"].value == pytest.approx(300.0)
    np.testing.assert_allclose(_model_y(e), temperature_curves(before.model, before.temperatures())["C"], rtol=F32)
    e.redo()
    assert e.state.model["debye"].theta == pytest.approx(350.0)
    e.undo_button.click()
    assert e.state is before and not e.redo_button.disabled


def test_add_and_remove_branches_with_the_mode_counter():
    e = _two_branch()
    assert "mismatch" not in e.editor.counter.value
    e.editor.kind.value = "Einstein (optical mode)"
    e.editor.add_button.click()
    assert [c.name for c in e.state.model] == ["debye", "einstein", "einstein_2"]
    # 9 modes against 3·atoms = 6 (common practice: 3 modes per atom): flagged
    assert "mismatch" in e.editor.counter.value and "mh-mismatch" in e.editor.counter._dom_classes
    assert "mh-param-einstein_2-theta" in e.editor.sliders["einstein_2.theta"]._dom_classes
    e.editor.vary["einstein_2.theta"].value = True
    assert "einstein_2.theta" in e.state.vary
    e.editor.remove_buttons["einstein_2"].click()
    assert [c.name for c in e.state.model] == ["debye", "einstein"] and not e.state.vary
    assert "mismatch" not in e.editor.counter.value
    for name in ("debye", "einstein"):
        e.editor.remove_buttons[name].click()
    assert e.state.model is None and len(e.curves_view.model_line.y) == 0
    for kind in e.editor.kind.options:  # every kind can be added to an empty model
        e.editor.kind.value = kind
        e.editor.add_button.click()
        assert e.status.kind == "info", e.status.message
    assert len(e.state.model) == 7


def test_representations_follow_the_selector():
    e = _two_branch()
    e.curves_view.components.value = "overlaid"
    T = e.state.temperatures()
    want = temperature_curves(e.state.model, T)  # reference: the backend
    parts = contributions(e.state.model, T)
    ys = np.asarray(e.curves_view.component_lines.y, dtype=float)
    for row, name in zip(ys, ["debye", "einstein"]):
        np.testing.assert_allclose(row, parts.loc[parts["component"] == name, "C"], rtol=F32, atol=TINY)
    for label, (xcol, ycol) in {"C/T³": ("T", "C_over_T3"), "C/T vs T²": ("T2", "C_over_T"),
                                "θ_D(T)": ("T", "theta_D"), "S": ("T", "S")}.items():
        e.curves_view.representation.value = label
        assert e.state.representation == label
        np.testing.assert_allclose(e.curves_view.model_line.x, want[xcol], rtol=F32)
        np.testing.assert_allclose(_model_y(e), want[ycol], rtol=F32)
    e.curves_view.representation.value = "C/T³"
    np.testing.assert_allclose(e.curves_view.t3_law.y, want.attrs["t3_level"], rtol=F32)
    e.curves_view.representation.value = "C"
    e.curves_view.log_y.value = True
    assert type(e.curves_view.figure.axes[1].scale).__name__ == "LogScale"
    e.undo()
    assert not e.state.log_y


def test_stacked_components_are_running_sums_up_to_the_model():
    e = Explorer(model=mh.Debye(theta=300.0) + mh.Einstein(theta=500.0, modes=3) + mh.Electronic(gamma=0.01),
                 atoms=2)
    e.curves_view.components.value = "stacked"
    assert e.state.show_components == "stacked"
    T = e.state.temperatures()
    parts = contributions(e.state.model, T)  # reference: the backend's per-component table
    c = {n: parts.loc[parts["component"] == n, "C"].to_numpy() for n in ("debye", "einstein", "electronic")}
    ys = np.atleast_2d(np.asarray(e.curves_view.component_lines.y, dtype=float))
    np.testing.assert_allclose(ys[0], c["debye"], rtol=F32, atol=TINY)
    np.testing.assert_allclose(ys[1], c["debye"] + c["einstein"], rtol=F32, atol=TINY)
    assert list(e.curves_view.component_lines.labels) == ["debye", "debye + einstein"]
    # the last running sum is the model's own line, drawn once
    np.testing.assert_allclose(ys[1] + c["electronic"], _model_y(e), rtol=1e-5, atol=TINY)
    e.curves_view.components.value = "off"
    assert len(e.curves_view.component_lines.y) == 0


def test_sessions_saved_with_a_components_check_box_still_load():
    assert ExplorerState(show_components=True).show_components == "overlaid"
    assert ExplorerState(show_components=False).show_components == "off"
    with pytest.raises(mh.InputError, match="show_components"):
        ExplorerState(show_components="sideways")


def test_unit_and_reduced_dos_in_the_spectrum_view():
    e = Explorer.demo()
    sv = e.spectrum_view
    model = e.state.model
    want = plot_dos(model, unit="THz", points=POINTS)  # reference: the backend, on the view's grid
    np.testing.assert_allclose(sv.model_line.y, want["total"], rtol=F32)
    assert len(sv.spectrum_lines) == 1 and np.asarray(sv.spectrum_lines[0].y).shape[0] == 3  # total, A, B
    sv.unit.value = "meV"
    np.testing.assert_allclose(sv.model_line.x, plot_dos(model, unit="meV", points=POINTS)["frequency"], rtol=F32)
    sv.reduced.value = True
    red = reduced_dos(model, unit="meV", points=POINTS)
    np.testing.assert_allclose(sv.model_line.y, red["reduced"], rtol=F32)
    np.testing.assert_allclose(sv.debye_level.y, red.attrs["debye_level"], rtol=F32)
    assert e.state.unit == "meV" and e.state.reduced


def test_demo_scale_slider_lowers_c_and_moves_the_dos():
    e = Explorer.demo()
    assert e.state.atoms == 2 and [c.name for c in e.state.model] == ["dos", "electronic", "dilatation"]
    slider = e.editor.sliders["dos.scale"]
    T = e.state.temperatures()
    before = _model_y(e)
    slider.value = slider.value + slider.step  # what one ArrowRight does in the browser
    assert e.state.model["dos"].scale == pytest.approx(1.001)
    after = _model_y(e)
    # stiffer modes lower C_v at every T (common practice: C_v falls as θ rises at fixed T)
    below = T <= 300.0
    assert np.all(after[below] < before[below])
    np.testing.assert_allclose(after, temperature_curves(e.state.model, T)["C"], rtol=F32)
    np.testing.assert_allclose(e.spectrum_view.model_line.y, plot_dos(e.state.model, points=POINTS)["total"], rtol=F32)
    # the loaded spectrum's own curve stays as loaded (reference: the backend)
    own = temperature_curves(e.state.spectra[0], T)["C"]
    np.testing.assert_allclose(np.atleast_2d(e.curves_view.spectrum_lines.y)[0], own, rtol=F32)  # one row: bqplot keeps 1-D


def test_data_error_bars_and_residuals():
    e = Explorer.demo()
    data = e.state.data[0]
    cv = e.curves_view
    assert len(cv.data_points) == 1 and len(cv.error_bars) == 1
    np.testing.assert_allclose(cv.data_points[0].y, data["C"], rtol=F32)
    bars_y = np.asarray(cv.error_bars[0].y, dtype=float).reshape(-1, 3)
    np.testing.assert_allclose(bars_y[:, 1] - bars_y[:, 0], 2 * data["sigma"], rtol=1e-5)  # float32 difference
    assert np.all(np.isnan(bars_y[:, 2]))  # one mark, NaN-separated segments
    assert cv.residual_figure.layout.display is None
    # reference: data − the model's C_p at the data's temperatures (the fit's comparison)
    T = data["T"].to_numpy()
    np.testing.assert_allclose(cv.residual_points.y, data["C"] - model_cp(e.state.model, T), rtol=1e-5, atol=1e-6)
    assert e.state.window == (2.0, 300.0)
    cv.tmin.value = 5.0
    assert e.state.window == (5.0, 300.0)


def test_spectrum_and_data_callbacks_on_an_empty_explorer():
    e = Explorer()
    sp = mh.read_spectrum(ROOT / "demo_spectra" / "zorbium_lumide_dos.txt")
    e._on_spectrum(sp)
    assert [c.name for c in e.state.model] == ["dos"] and e.state.atoms == 2
    assert "loaded the DOS" in e.status.message
    cp = mh.read_heat_capacity(ROOT / "demo_spectra" / "zorbium_lumide_cp.txt", atoms=2)
    e._on_data(cp)
    e._on_data(cp.iloc[:10].copy())
    assert len(e.curves_view.data_points) == 2 and e.state.window == (2.0, 300.0)
    np.testing.assert_allclose(e.curves_view.data_points[1].y, cp["C"].iloc[:10], rtol=F32)
    e.undo()
    assert len(e.curves_view.data_points) == 1 and len(e.state.data) == 1
    np.testing.assert_allclose(e.curves_view.data_points[0].y, cp["C"], rtol=F32)
    # the loaded DOS is offered as a branch
    e.editor.kind.value = 0
    e.editor.add_button.click()
    assert [c.name for c in e.state.model] == ["dos", "dos_2"]


def test_fit_problem_and_result():
    e = Explorer.demo()
    model, data, window, vary = e._fit_problem()
    assert model.atoms == 2 and len(data) == 1 and window == (2.0, 300.0) and vary == ["dos.scale"]
    before = e.state
    result = mh.fit(model, data, tmin=window[0], tmax=window[1], vary=vary)
    e._on_fit_result(result)
    assert e.editor.sliders["dos.scale"].value == pytest.approx(result.params["dos.scale"])
    e.undo()
    assert e.state is before
    with pytest.raises(mh.InputError, match="no heat-capacity data"):
        _two_branch()._fit_problem()


def test_bad_edit_reports_and_keeps_the_state():
    e = _two_branch()
    before = e.state
    e._on_values({"debye.theta": -5.0})
    assert e.status.kind == "error" and "debye" in e.status.message
    assert e.state is before
    e.curves_view.tmin.value = 2000.0  # above the window's top: refused, and the box goes back
    assert e.status.kind == "error" and "window" in e.status.message
    assert e.state is before and e.curves_view.tmin.value == 1.0


def test_session_round_trip(tmp_path):
    e = Explorer.demo()
    e.editor.sliders["dos.scale"].value = 1.05
    e.curves_view.representation.value = "θ_D(T)"
    e.spectrum_view.unit.value = "cm-1"
    path = e.save(tmp_path / "zorbium.json")
    back = Explorer.from_session(path)
    assert back.state == e.state
    assert back.editor.sliders["dos.scale"].value == pytest.approx(1.05)
    np.testing.assert_array_equal(back.curves_view.model_line.y, e.curves_view.model_line.y)
    assert back.state != Explorer().state
    with pytest.raises(mh.InputError, match="exists"):
        e.save(path)


def test_damaged_session_changes_nothing(tmp_path):
    good = tmp_path / "good.json"
    Explorer.demo().save(good)
    e = _two_branch()
    before = e.state
    broken = tmp_path / "broken.json"
    broken.write_text(good.read_text()[:500])
    e.load(broken)
    assert e.status.kind == "error" and "broken.json" in e.status.message and e.state is before
    doc = json.loads(good.read_text())
    doc["objects"]["view settings"]["attrs"]["map"]["unit"] = "furlongs"
    wrong = tmp_path / "wrong.json"
    wrong.write_text(json.dumps(doc))
    e.load(wrong)
    assert e.status.kind == "error" and "furlongs" in e.status.message and e.state is before
    with pytest.raises(mh.InputError, match="wrong.json"):
        Explorer.from_session(wrong)
    e.load(good)
    assert e.state.atoms == 2 and e.status.kind == "info"


def test_export_csv(tmp_path):
    e = _two_branch()
    path = e.export_csv(tmp_path / "curves.csv")
    text = path.read_text()
    assert text.startswith("#") and "T" in text
    rows = [line for line in text.splitlines() if line and not line.startswith("#")]
    assert len(rows) == 1 + 400


def test_state_validates():
    with pytest.raises(mh.InputError, match="representation"):
        ExplorerState(representation="C/T^3")
    with pytest.raises(mh.InputError, match="window"):
        ExplorerState(window=(300.0, 2.0))
    assert not math.isnan(ExplorerState().temperatures()[0])


def test_demo_files_in_the_package_match_the_repository():
    shipped = sorted(p.name for p in (ROOT / "modeheat" / "widgets" / "demo").glob("*.txt"))
    assert "quellium_volumes.txt" in shipped and len(shipped) >= 11
    for name in shipped:
        shipped = (ROOT / "modeheat" / "widgets" / "demo" / name).read_bytes()
        assert shipped == (ROOT / "demo_spectra" / name).read_bytes()


def test_axes_stay_put_while_a_slider_moves():
    """The frame follows what is shown, not a parameter: moving a slider moves the curve
    against fixed axes (so a user, and the browser test, see the change); switching the
    representation or pressing "fit axes" frames every curve again."""
    e = Explorer.demo()
    x_scale, y_scale = e.curves_view.x_axis.scale, e.curves_view.y_axis.scale
    frame = (x_scale.min, x_scale.max, y_scale.min, y_scale.max)
    y = np.concatenate([_model_y(e), np.asarray(e.curves_view.data_points[0].y, dtype=float)])
    assert frame[2] < np.nanmin(y) and np.nanmax(y) < frame[3]  # every point inside the frame
    for _ in range(5):
        e.editor.sliders["dos.scale"].value += 0.01
    assert (x_scale.min, x_scale.max, y_scale.min, y_scale.max) == frame
    e.curves_view.representation.value = "θ_D(T)"
    theta = e.curves_view.y_axis.scale
    finite = _model_y(e)[np.isfinite(_model_y(e))]
    assert theta.min < finite.min() and finite.max() < theta.max
    e.curves_view.representation.value = "C"
    e.curves_view.fit_axes.click()
    assert e.curves_view.y_axis.scale.max < frame[3] or e.curves_view.y_axis.scale.max == pytest.approx(frame[3])


def test_panels_wired_upload_fit_and_export(tmp_path):
    """The real data and fit panels inside the Explorer: an upload adds a data set, a fit
    from the panel moves the sliders, and its parameter table and curves export as CSV."""
    e = Explorer.demo()
    text = (ROOT / "demo_spectra" / "zorbium_lumide_cp.txt").read_bytes()
    e.data_panel.load_bytes("data", "second_run.txt", text)
    assert len(e.state.data) == 2 and "second_run.txt" in e.status.message
    e.data_panel.load_bytes("data", "broken.txt", b"T C\n1 0.1\n2 x\n")
    assert e.status.kind == "error" and "broken.txt, line 3" in e.status.message
    assert len(e.state.data) == 2  # a failed upload changes nothing
    result = e.fit_panel.run(wait=True)
    assert result is not None and e.fit_panel.result is result
    assert e.editor.sliders["dos.scale"].value == pytest.approx(result.params["dos.scale"])
    assert e.state.model["dos"].scale == pytest.approx(result.params["dos.scale"])
    written = e.export_fit_csv(tmp_path / "fit.csv")
    lines = written.read_text(encoding="utf-8").splitlines()
    assert any(line.startswith("# caution: ") for line in lines)
    table = pd.read_csv(written, comment="#")
    assert list(table.columns) == ["parameter", "value", "stderr", "unit", "status"]
    row = table.set_index("parameter").loc["dos.scale"]
    assert row["value"] == pytest.approx(result.params["dos.scale"]) and row["status"] == "varied"
    curves = pd.read_csv(e.export_csv(tmp_path / "curves.csv"), comment="#")
    np.testing.assert_allclose(curves["C"], temperature_curves(e.state.model, e.state.temperatures())["C"], rtol=1e-10)
    with pytest.raises(mh.InputError, match="no fit to export"):
        Explorer().export_fit_csv(tmp_path / "none.csv")
