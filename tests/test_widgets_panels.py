"""The Explorer's data and fit panels, kernel side: uploads good and bad, fits run and cancelled.

Reference of the fit test: the Debye heat capacity C_v = 9R(T/θ)³ ∫₀^{θ/T} x⁴eˣ/(eˣ−1)² dx
evaluated by mpmath quadrature (mpmath), R from scipy.constants, plus γT; the noise on
it is seeded.  The uploaded files are the invented demo compound's files and small
invented files written here (inputs, not references).
"""

from __future__ import annotations

import datetime
import threading
from pathlib import Path

import mpmath
import numpy as np
import pandas as pd
import pytest
import scipy.constants

import modeheat as mh
from modeheat.widgets.data_panel import DataPanel
from modeheat.widgets.fit_panel import FitPanel
from modeheat.widgets.status import StatusArea

DEMO = Path(__file__).resolve().parent.parent / "demo_spectra"

# Invented heat-capacity runs (not references): a second data set, and one with text on line 4.
RUN_B = b"# invented run\nT (K)  C (J/(mol K))\n3.0  0.004\n4.0  0.009\n5.0  0.018\n"
RUN_BAD = b"# invented run\nT (K)  C (J/(mol K))\n3.0  0.004\nfour  0.009\n"
# Invented DOS whose trapezoid integral is 4.5 modes: 3·n for no whole n, so the atom count is unclear.
DOS_UNCLEAR = b"frequency (THz)  total\n0  0\n1  1.5\n2  3\n3  0\n"


def make_panel():
    spectra, data = [], []
    status = StatusArea()
    return DataPanel(spectra.append, data.append, status), spectra, data, status


def upload_value(*files: tuple[str, bytes]) -> tuple[dict, ...]:
    """The FileUpload widget's value (ipywidgets 8) for these files."""
    stamp = datetime.datetime(2026, 1, 1, tzinfo=datetime.timezone.utc)
    return tuple(
        {"name": name, "type": "text/plain", "size": len(b), "content": memoryview(b), "last_modified": stamp}
        for name, b in files
    )


# --- data panel -----------------------------------------------------------------------------
def test_load_bytes_reads_a_spectrum_named_like_the_upload():
    panel, spectra, data, status = make_panel()
    content = (DEMO / "zorbium_lumide_dos.txt").read_bytes()
    spectrum = panel.load_bytes("spectrum", "zorbium_lumide_dos.txt", content)
    assert spectra == [spectrum] and data == []
    assert spectrum.name == "zorbium_lumide_dos.txt"
    assert spectrum.atoms == 2.0  # the file holds 6 modes per formula unit: 2 atoms
    expected = mh.read_spectrum(DEMO / "zorbium_lumide_dos.txt")
    np.testing.assert_array_equal(spectrum.frequency, expected.frequency)
    assert status.kind == "info" and "zorbium_lumide_dos.txt" in status.message


def test_data_sets_accumulate_through_the_upload_widget():
    panel, spectra, data, status = make_panel()
    cp = (DEMO / "zorbium_lumide_cp.txt").read_bytes()
    panel.data_upload.value = upload_value(("zorbium_lumide_cp.txt", cp))
    panel.data_upload.value = upload_value(("run_b.txt", RUN_B))
    assert [d.attrs["name"] for d in data] == ["zorbium_lumide_cp.txt", "run_b.txt"]
    assert data[1].attrs["source"] == "run_b.txt"  # the upload, not the deleted temporary file
    np.testing.assert_array_equal(data[1]["C"], [0.004, 0.009, 0.018])
    assert panel.data_upload.value == ()  # emptied, so the same file can be chosen again
    assert status.kind == "info" and spectra == []


def test_several_files_in_one_upload_each_get_a_call():
    panel, _, data, _ = make_panel()
    cp = (DEMO / "zorbium_lumide_cp.txt").read_bytes()
    panel.data_upload.value = upload_value(("zorbium_lumide_cp.txt", cp), ("run_b.txt", RUN_B))
    assert len(data) == 2


def test_a_bad_line_names_file_and_line_and_changes_nothing():
    panel, _, data, status = make_panel()
    panel.load_bytes("data", "run_b.txt", RUN_B)
    assert panel.load_bytes("data", "run_bad.txt", RUN_BAD) is None
    assert len(data) == 1  # what the user had is kept
    assert status.kind == "error"
    assert "run_bad.txt, line 4" in status.message and "Traceback" not in status.value
    assert "modeheat-upload-" not in status.message  # the temporary file is never named


def test_one_bad_file_in_an_upload_passes_none_of_them_on():
    panel, _, data, status = make_panel()
    panel.data_upload.value = upload_value(("run_b.txt", RUN_B), ("run_bad.txt", RUN_BAD))
    assert data == []
    assert status.kind == "error" and "run_bad.txt, line 4" in status.message


def test_a_heat_capacity_file_is_refused_as_a_spectrum():
    panel, spectra, _, status = make_panel()
    cp = (DEMO / "zorbium_lumide_cp.txt").read_bytes()
    panel.spectrum_upload.value = upload_value(("zorbium_lumide_cp.txt", cp))
    assert spectra == []
    assert status.kind == "error"
    assert "zorbium_lumide_cp.txt, line" in status.message and "heat-capacity file" in status.message


def test_an_unclear_atom_count_asks_for_it_and_the_atoms_box_gives_it():
    panel, spectra, _, status = make_panel()
    assert panel.load_bytes("spectrum", "odd.txt", DOS_UNCLEAR) is None
    assert status.kind == "error" and "odd.txt" in status.message and "atoms" in status.message
    panel.atoms.value = "2"
    spectrum = panel.load_bytes("spectrum", "odd.txt", DOS_UNCLEAR)
    assert spectra == [spectrum] and spectrum.atoms == 2.0


def test_unusable_control_entries_are_reported():
    panel, spectra, data, status = make_panel()
    panel.atoms.value = "two"
    assert panel.load_bytes("spectrum", "dos.txt", (DEMO / "zorbium_lumide_dos.txt").read_bytes()) is None
    assert status.kind == "error" and "atoms" in status.message and "'two'" in status.message
    panel.atoms.value = ""
    panel.molar_mass.value = "-3"
    assert panel.load_bytes("data", "run_b.txt", RUN_B) is None
    assert status.kind == "error" and "molar mass" in status.message
    assert spectra == [] and data == []


def test_the_unit_control_reaches_the_reader():
    panel, spectra, _, status = make_panel()
    # Invented: no unit in the file, rows out of order, 6 modes once sorted → 2 atoms.
    headerless = b"0 0\n2 3\n1 1.5\n3 1.5\n4 0\n"
    assert panel.load_bytes("spectrum", "bare.txt", headerless) is None
    assert status.kind == "error" and "bare.txt" in status.message
    panel.unit.value = "meV"
    spectrum = panel.load_bytes("spectrum", "bare.txt", headerless)
    assert spectrum.unit == "meV"
    # The reader's warning about the sorting becomes a note naming the upload.
    assert status.kind == "info"
    assert "note: spectrum 'bare.txt': frequencies were not in increasing order" in status.message
    assert "modeheat-upload-" not in status.message


# --- fit panel ------------------------------------------------------------------------------
THETA, GAMMA = 240.0, 1.2e-3  # K, J/(mol K²): the synthetic solid (invented parameters)


def debye_cv(T: float, theta: float) -> float:
    """C_v of 3 Debye modes in J/(mol K) by mpmath quadrature (mpmath; R from scipy.constants)."""
    mpmath.mp.dps = 30
    x = mpmath.mpf(theta) / T
    integral = mpmath.quad(lambda u: u**4 * mpmath.exp(u) / mpmath.expm1(u) ** 2, [0, x])
    return float(9 * scipy.constants.R * integral / x**3)


@pytest.fixture(scope="module")
def synthetic() -> pd.DataFrame:
    T = np.geomspace(2.0, 80.0, 40)
    C = np.array([debye_cv(t, THETA) for t in T]) + GAMMA * T
    sigma = 0.003 * C
    noisy = C + sigma * np.random.default_rng(20260101).standard_normal(T.size)
    frame = pd.DataFrame({"T": T, "C": noisy, "sigma": sigma})
    frame.attrs["name"] = "synthetic"
    return frame


def problem(data, start=200.0):
    model = mh.Debye(theta=start) + mh.Electronic(gamma=1e-3)
    return lambda: (model, [data], (None, 60.0), ["debye.theta", "electronic.gamma"])


def test_a_fit_recovers_theta_within_its_standard_error(synthetic):
    results: list = []
    status = StatusArea()
    panel = FitPanel(problem(synthetic), results.append, status)
    result = panel.run(wait=True)
    assert results == [result] and panel.result is result
    theta, err = result.params["debye.theta"], result.stderr["debye.theta"]
    # Seeded 0.3 % noise: the fit lands within 2 standard errors of the θ the data were made with.
    assert abs(theta - THETA) <= 2 * err
    assert f"{theta:.6g}" in panel.table.value and f"± {err:.3g}" in panel.table.value
    assert "mh-fit-correlation" in panel.table.value and "electronic.gamma" in panel.table.value
    assert "caution:" in panel.report.value and "<pre>" in panel.report.value
    assert status.kind == "info" and status.message.startswith("fit done")
    assert panel.progress.value == panel.progress.max > 0
    assert not panel.fit_button.disabled and panel.cancel_button.disabled


def test_cancel_during_a_fit_changes_nothing(synthetic):
    results: list = []
    status = StatusArea()
    panel = FitPanel(problem(synthetic), results.append, status)
    seen: dict = {}

    def at_step(change):
        if change["new"] == 3:
            # A second fit is refused while this one runs.
            seen["second"] = panel.run()
            seen["message"] = status.message
            panel.cancel()

    panel.progress.observe(at_step, names="value")
    assert panel.run(wait=True) is None
    assert seen == {"second": None, "message": "a fit is already running: wait for it to end or press Cancel"}
    assert results == [] and panel.result is None
    assert "cancelled after 3 evaluations" in status.message
    assert panel.table.value == "" and panel.report.value == ""
    assert not panel.running and not panel.fit_button.disabled


def test_the_panel_stays_responsive_while_fitting(synthetic):
    status = StatusArea()
    release = threading.Event()
    panel = FitPanel(problem(synthetic), lambda result: None, status)
    panel.progress.observe(lambda change: release.wait(10) if change["new"] == 1 else None, names="value")
    panel.run()  # returns at once: the fit waits in its thread on its first evaluation
    assert panel.running and panel.cancel_button.disabled is False
    panel.cancel()
    release.set()
    panel._thread.join(10)
    assert not panel.running and "cancelled" in status.message


def test_fit_errors_go_to_the_status(synthetic):
    results: list = []
    status = StatusArea()
    model = mh.Debye(theta=200.0)
    panel = FitPanel(lambda: (model, [synthetic], (None, None), ["einstein.theta"]), results.append, status)
    assert panel.run(wait=True) is None
    assert status.kind == "error" and status.message.startswith("fitting: ") and "einstein.theta" in status.message
    assert results == []

    def broken():
        raise mh.InputError("no data loaded: upload a heat-capacity file first")

    panel = FitPanel(broken, results.append, status)
    assert panel.run(wait=True) is None
    assert status.message == "preparing the fit: no data loaded: upload a heat-capacity file first"
    assert not panel.running
