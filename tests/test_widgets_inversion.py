"""The Explorer's inversion panel on the kernel side, with a stand-in backend (and one
end-to-end test with the real one, last).

The inversion backend is written separately, so these tests put a stand-in module at
``modeheat.inversion`` whose ``invert_heat_capacity`` returns an object with the
contract's attributes, made of invented arrays (inputs, not references).  What is
checked is the view: the marks get the arrays, converted to the drawn unit — the
reference for THz → meV is h·10¹²/e·10³ from scipy.constants — Cancel stops the run,
and errors reach the status area.  Marks hold float32 (relative 2⁻²⁴ ≈ 6e-8, hence rtol=1e-7).
"""

from __future__ import annotations

import sys
import threading
import types
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import pytest
import scipy.constants

import modeheat as mh
from modeheat.progress import Progress, report
from modeheat.widgets import Explorer
from modeheat.widgets.inversion_panel import InversionPanel
from modeheat.widgets.status import StatusArea

F32 = 1e-7  # float32 rounding of the marks' arrays (module docstring)
MEV_PER_THZ = scipy.constants.h * 1e12 / scipy.constants.e * 1e3  # scipy.constants (CODATA)
# Invented recovered density (not a reference): 5 bins on 0–10 THz.
FREQ = np.array([1.0, 3.0, 5.0, 7.0, 9.0])
DENSITY = np.array([0.05, 0.3, 0.6, 0.2, 0.05])


@dataclass(frozen=True)
class FakeResult:
    """The contract's attributes, filled with invented values."""

    frequency: np.ndarray = field(default_factory=lambda: FREQ)
    density: np.ndarray = field(default_factory=lambda: DENSITY)
    band_low: np.ndarray = field(default_factory=lambda: 0.8 * DENSITY)
    band_high: np.ndarray = field(default_factory=lambda: 1.25 * DENSITY)
    band_method: str = "resampling within σ"
    spectrum: object = None
    fitted: pd.DataFrame = field(default_factory=pd.DataFrame)
    chi2_red: float = 1.04
    alpha: float = 3.2e-3
    alpha_method: str = "gcv"
    gamma: float = 1.5e-3
    moments: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        {"n": [-3, -2, -1, 1, 2], "theta_D": [301.0, 305.0, 310.0, 322.0, 330.0], "stderr": [4.0, 3.0, 2.5, 2.0, 2.0]}))
    resolution: str = "features narrower than about 1 THz below 4 THz are not resolved"

    def report(self) -> str:
        return "stand-in report"


class Backend:
    """A stand-in ``modeheat.inversion``: records its calls; steps through `steps` progress
    records, optionally pausing after the first until `go` is set."""

    def __init__(self, result=None, error: Exception | None = None, pause: bool = False, steps: int = 5):
        self.result = FakeResult() if result is None else result
        self.error, self.pause, self.steps = error, pause, steps
        self.calls: list[dict] = []
        self.started, self.go = threading.Event(), threading.Event()
        self.module = types.ModuleType("modeheat.inversion")
        self.module.invert_heat_capacity = self.invert_heat_capacity

    def invert_heat_capacity(self, data, *, progress=None, **options):
        self.calls.append({"data": data, **options})
        if self.error is not None:
            raise self.error
        for done in range(1, self.steps + 1):
            report(progress, Progress(done, self.steps, "band"))  # raises Cancelled when told to stop
            if done == 1 and self.pause:
                self.started.set()
                assert self.go.wait(10), "the test never released the stand-in backend"
        return self.result


@pytest.fixture
def backend(monkeypatch):
    fake = Backend()
    monkeypatch.setitem(sys.modules, "modeheat.inversion", fake.module)
    return fake


def _data():
    # Invented heat-capacity points (an input only)
    return pd.DataFrame({"T": [5.0, 10.0, 20.0, 40.0], "C": [0.01, 0.08, 0.6, 3.0]})


def _panel(get_data=None):
    status, got = StatusArea(), []
    panel = InversionPanel(get_data or (lambda: ([_data()], 2.0)), got.append, status)
    return panel, got, status


def test_dom_hooks_and_controls():
    panel, _, _ = _panel()
    assert "mh-invert" in panel.invert_button._dom_classes
    assert "mh-invert-cancel" in panel.cancel_button._dom_classes
    assert [v for _, v in panel.method.options] == ["gcv", "lcurve"]
    assert [v for _, v in panel.electronic.options] == ["fit", "none"]
    assert panel.cancel_button.disabled and not panel.invert_button.disabled


def test_run_passes_the_controls_and_shows_the_summary(backend):
    panel, got, status = _panel()
    panel.method.value, panel.electronic.value, panel.band.value = "lcurve", "none", False
    result = panel.run(wait=True)
    assert result is backend.result and got == [result] and panel.result is result
    call = backend.calls[0]
    assert call["method"] == "lcurve" and call["electronic"] == "none" and call["band"] == "none"
    assert call["atoms"] == 2.0 and len(call["data"]) == 1
    assert status.kind == "info" and "inversion done" in status.message
    text = panel.summary.value
    assert "3.2e-03" in text or "0.0032" in text
    assert "gcv" in text and "1.04" in text and "330" in text and "± 2" in text
    assert "not resolved" in text
    assert panel.progress.value == panel.progress.max == 5 and panel.progress.bar_style == "success"
    assert panel.cancel_button.disabled and not panel.invert_button.disabled


def test_cancel_stops_the_run_and_changes_nothing(monkeypatch):
    fake = Backend(pause=True)
    monkeypatch.setitem(sys.modules, "modeheat.inversion", fake.module)
    panel, got, status = _panel()
    assert panel.run() is None
    assert fake.started.wait(10) and panel.running
    panel.run()  # a second press while running is refused
    assert status.kind == "error" and "already running" in status.message
    panel.cancel()
    fake.go.set()
    panel._thread.join(10)
    assert not panel.running and got == [] and panel.result is None
    assert status.kind == "info" and "cancelled after 2 steps" in status.message  # step 2 was the one answered False
    assert panel.progress.bar_style == "warning" and not panel.invert_button.disabled


def test_errors_go_to_the_status(monkeypatch):
    fake = Backend(error=mh.InputError("too few points: 4 given, at least 20 needed"))
    monkeypatch.setitem(sys.modules, "modeheat.inversion", fake.module)
    panel, got, status = _panel()
    assert panel.run(wait=True) is None and got == []
    assert status.kind == "error" and "inverting C(T): too few points" in status.message
    fake.error = ZeroDivisionError("boom")  # an unexpected failure is named, not raised
    assert panel.run(wait=True) is None
    assert status.kind == "error" and "unexpected problem (ZeroDivisionError: boom)" in status.message
    panel, got, status = _panel(lambda: (_ for _ in ()).throw(mh.InputError("no data loaded")))
    assert panel.run(wait=True) is None and status.kind == "error" and "no data loaded" in status.message


def test_explorer_overlays_the_recovered_density_and_band(backend):
    e = Explorer(data=_data(), atoms=2)
    view = e.spectrum_view
    assert view.recovered_band.fill == "between"
    assert len(view.recovered_line.y) == 0 and len(view.recovered_band.y) == 0
    assert e.inversion_panel.run(wait=True) is backend.result and e.status.kind == "info"
    np.testing.assert_allclose(view.recovered_line.x, FREQ, rtol=F32)
    np.testing.assert_allclose(view.recovered_line.y, DENSITY, rtol=F32)
    np.testing.assert_allclose(view.recovered_band.y, [0.8 * DENSITY, 1.25 * DENSITY], rtol=F32)
    assert view.recovered_line in view.figure.marks and view.recovered_band in view.figure.marks
    view.unit.value = "meV"  # same modes over the same span: x × (meV per THz), g ÷ (meV per THz)
    np.testing.assert_allclose(view.recovered_line.x, FREQ * MEV_PER_THZ, rtol=F32)
    np.testing.assert_allclose(view.recovered_line.y, DENSITY / MEV_PER_THZ, rtol=F32)
    np.testing.assert_allclose(view.recovered_band.y[1], 1.25 * DENSITY / MEV_PER_THZ, rtol=F32)
    view.reduced.value = True  # g/ω² at the bin centres
    np.testing.assert_allclose(view.recovered_line.y, DENSITY / MEV_PER_THZ / (FREQ * MEV_PER_THZ) ** 2, rtol=2 * F32)


def test_no_band_is_not_drawn_and_no_data_is_refused(monkeypatch):
    nan = np.full_like(DENSITY, np.nan)
    fake = Backend(result=FakeResult(band_low=nan, band_high=nan, band_method="none", gamma=float("nan")))
    monkeypatch.setitem(sys.modules, "modeheat.inversion", fake.module)
    e = Explorer(data=_data(), atoms=2)
    e.inversion_panel.band.value = False
    e.inversion_panel.run(wait=True)
    assert len(e.spectrum_view.recovered_line.y) == len(DENSITY) and len(e.spectrum_view.recovered_band.y) == 0
    assert "γ =" not in e.inversion_panel.summary.value
    empty = Explorer()
    assert empty.inversion_panel.run(wait=True) is None
    assert empty.status.kind == "error" and "no heat-capacity data to invert" in empty.status.message


def test_real_inversion_of_the_demo_data_in_the_explorer():
    """End to end with the real backend: the Explorer's demo C_p (invented zorbium lumide),
    turned into C_v with the model's dilatation term, is inverted; the recovered DOS reaches
    the spectrum view's marks in the view's unit, with the mode count kept."""
    import modeheat.inversion as inversion

    explorer = Explorer.demo()
    panel = explorer.inversion_panel
    panel.band.value = False  # the band's resampling is tested in test_inversion.py
    result = panel.run(wait=True)
    assert result is not None and isinstance(result, inversion.InversionResult)
    assert explorer.status.kind != "error", explorer.status.message
    view = explorer.spectrum_view
    x = np.asarray(view.recovered_line.x, dtype=float)
    y = np.asarray(view.recovered_line.y, dtype=float)
    np.testing.assert_allclose(x, result.frequency, rtol=F32)  # the view is in THz
    np.testing.assert_allclose(y, result.density, rtol=F32)
    # common practice: 3 modes per atom, 2 atoms per formula unit of the demo compound
    assert float(np.sum(result.density * np.diff(result.edges))) == pytest.approx(6.0, rel=1e-6)
    assert "θ" in panel.summary.value and result.alpha_method.split()[0] in panel.summary.value


def test_inversion_gets_c_v_through_the_models_dilatation_term(backend):
    """With a Dilatation term in the model, the panel hands the measured C_p and the model's
    A to the backend as ``cp_to_cv`` (which inverts C_v = C_p − A·C_p²·T, tested in
    test_inversion.py against the Nernst–Lindemann closed form); the data are not converted here."""
    explorer = Explorer.demo()
    sets, atoms, conversion = explorer._inversion_data()
    A = explorer.state.model["dilatation"].A
    assert conversion == {"A": A} and atoms == 2 and "C_v = C_p" in explorer.status.message
    np.testing.assert_array_equal(sets[0]["C"].to_numpy(), explorer.state.data[0]["C"].to_numpy())
    explorer.inversion_panel.run(wait=True)
    assert backend.calls[-1]["cp_to_cv"] == {"A": A}
    e = Explorer(data=_data(), atoms=2)  # no dilatation term: nothing to convert
    assert e._inversion_data()[2] is None
