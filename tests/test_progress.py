"""Progress and cancellation: one record, one callback contract, for fits, lattice DOS and the CLI.

These are behaviour checks (no numeric oracle is involved): a callback sees `done` never
decrease and end at `total`; a reporting run returns exactly what a silent one does; a
cancelled run raises Cancelled at once, returns nothing and leaves its inputs as they were.
The data and models here are invented test shapes.
"""

from __future__ import annotations

import io
import sys

import numpy as np
import pandas as pd
import pytest

import modeheat
from modeheat import Cancelled, Debye, Electronic, ModeheatError, heat_capacity
from modeheat.cli import main
from modeheat.errors import InputError
from modeheat.fitting import fit
from modeheat.lattice import CubicLattice, dos, iter_dos, mesh_modes
from modeheat.progress import Progress, ProgressLine, drive, report

FCC = CubicLattice("fcc", 63.5, 3.61, 28.0)  # invented test shape (copper-like scale)
TRUE = Debye(320.0) + Electronic(1.0e-3)  # invented
START = Debye(280.0) + Electronic(2.0e-3)
T_FIT = np.geomspace(2.0, 120.0, 40)


def _data() -> pd.DataFrame:
    # invented data: the model's C_v with a smooth 1 % ripple, so the fit has work to do
    return pd.DataFrame({"T": T_FIT, "C": heat_capacity(TRUE, T_FIT) * (1 + 0.01 * np.sin(T_FIT))})


class _Recorder:
    """A callback that keeps every record and cancels at record `stop` (never when None)."""

    def __init__(self, stop: int | None = None, *, by_raising: bool = False):
        self.seen: list[Progress] = []
        self.stop, self.by_raising = stop, by_raising

    def __call__(self, step: Progress):
        self.seen.append(step)
        if self.stop is not None and len(self.seen) >= self.stop:
            if self.by_raising:
                raise Cancelled("stopped by the test")
            return False
        return None


def _monotone_to_total(seen: list[Progress]) -> None:
    done = [p.done for p in seen]
    assert done == sorted(done) and done[0] >= 0
    assert seen[-1].total is not None and seen[-1].done == seen[-1].total


# --- the record and the helpers ---------------------------------------------------------------------
def test_progress_record_validates_itself():
    step = Progress(3, 4, "files", "a.csv")
    assert step.fraction == 0.75 and Progress(0, 0, "files").fraction == 1.0 and Progress(2, None, "fit").fraction is None
    with pytest.raises(AttributeError):
        step.done = 4  # frozen
    counted = Progress(np.int64(2), np.int64(4), "x")
    assert type(counted.done) is int and type(counted.total) is int and counted == Progress(2, 4, "x")
    for bad in ((-1, 4, "x"), (5, 4, "x"), (True, 4, "x"), (1.5, None, "x"), (1, 2, 3)):
        with pytest.raises(InputError):
            Progress(*bad)
    assert issubclass(Cancelled, ModeheatError) and modeheat.progress.Cancelled is Cancelled


def test_report_turns_false_into_cancelled_and_passes_other_errors():
    report(None, Progress(1, 2, "x"))
    report(lambda p: None, Progress(1, 2, "x"))
    report(lambda p: 0, Progress(1, 2, "x"))  # only False itself cancels
    with pytest.raises(Cancelled, match="after 1 of 2"):
        report(lambda p: False, Progress(1, 2, "x"))

    def broken(step):
        raise KeyError("the callback's own bug")

    with pytest.raises(KeyError):
        report(broken, Progress(1, 2, "x"))


def test_drive_closes_the_generator_when_cancelled():
    closed = []

    def steps():
        try:
            for k in range(1, 6):
                yield Progress(k, 5, "count", result="done" if k == 5 else None)
        finally:
            closed.append(True)

    assert drive(steps()) == "done" and closed == [True]
    seen = _Recorder(stop=2)
    with pytest.raises(Cancelled):
        drive(steps(), seen)
    assert [p.done for p in seen.seen] == [1, 2] and closed == [True, True]


# --- the lattice DOS ----------------------------------------------------------------------------------
def test_lattice_dos_reports_every_batch_and_returns_the_same_spectrum():
    seen = _Recorder()
    spectrum = dos(FCC, 10, progress=seen)
    _monotone_to_total(seen.seen)
    assert [p.done for p in seen.seen] == list(range(1, len(seen.seen) + 1))
    assert [p.stage for p in seen.seen] == [p.stage for p in iter_dos(FCC, 10)]
    np.testing.assert_array_equal(spectrum.density, dos(FCC, 10).density)
    modes = _Recorder()
    mesh_modes(FCC, 10, batch=300, progress=modes)
    _monotone_to_total(modes.seen)


@pytest.mark.parametrize("by_raising", [False, True])
def test_cancelling_the_lattice_dos_stops_at_once(by_raising):
    seen = _Recorder(stop=2, by_raising=by_raising)
    with pytest.raises(Cancelled):
        mesh_modes(FCC, 10, batch=100, progress=seen)
    assert len(seen.seen) == 2  # 10 batches in all; none computed after the answer


# --- the fit ------------------------------------------------------------------------------------------
def test_fit_reports_each_evaluation_and_returns_the_same_result():
    data = _data()
    seen = _Recorder()
    reported = fit(START, data, progress=seen)
    silent = fit(START, data)
    assert reported.params == silent.params and reported.stderr == silent.stderr
    _monotone_to_total(seen.seen)
    assert [p.done for p in seen.seen[:-1]] == list(range(1, len(seen.seen)))
    assert {p.stage for p in seen.seen} == {"fit", "uncertainties"}
    assert all(p.total is None for p in seen.seen[:-1]) and seen.seen[-1].message == "finished"
    # the search's evaluations come first, then those at the solution: the residuals, the
    # Jacobian's centre and 2 central differences per varied parameter
    stages = [p.stage for p in seen.seen[:-1]]
    assert stages.count("uncertainties") == 2 * len(silent.varied) + 2 and stages[-1] == "uncertainties"
    assert seen.seen[0].message.startswith("χ² = ")


@pytest.mark.parametrize("by_raising", [False, True])
def test_cancelling_a_fit_after_k_evaluations(by_raising):
    data = _data()
    before_data, before_model = data.copy(deep=True), START
    params = dict(START.parameters)
    seen = _Recorder(stop=5, by_raising=by_raising)
    with pytest.raises(Cancelled):
        fit(START, data, progress=seen)
    assert len(seen.seen) == 5  # no evaluation after the answer
    pd.testing.assert_frame_equal(data, before_data)
    assert START is before_model and START.parameters == params


def test_cancelling_a_robust_fit_in_its_first_pass():
    seen = _Recorder(stop=3)
    with pytest.raises(Cancelled):
        fit(START, _data(), loss="huber", progress=seen)
    assert len(seen.seen) == 3


# --- the command line ---------------------------------------------------------------------------------
class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_line_draws_only_on_a_terminal():
    quiet = io.StringIO()
    ProgressLine(quiet)(Progress(1, 2, "files", "a.csv"))
    assert quiet.getvalue() == ""
    screen = _Terminal()
    line = ProgressLine(screen)
    for step in (Progress(1, 2, "files", "a.csv"), Progress(3, None, "fit", "χ² = 2"), Progress(2, 2, "files", "b.csv")):
        line(step)
    assert screen.getvalue() == "\r[1/2] a.csv\x1b[K\r[3] fit χ² = 2\x1b[K\r[2/2] b.csv\x1b[K\r\x1b[K"


def test_cli_batch_progress_goes_through_progress_records(monkeypatch, capsys):
    good = str(__import__("pathlib").Path(__file__).parent / "data" / "debye_bump.csv")
    seen: list[Progress] = []
    draw = ProgressLine.__call__

    def spy(self, step):
        seen.append(step)
        draw(self, step)

    monkeypatch.setattr(ProgressLine, "__call__", spy)
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)
    assert main(["table", *[good] * 4, "--temperatures", "300", "--jobs", "1", "--atoms", "1"]) == 0
    err = capsys.readouterr().err
    assert [(p.done, p.total, p.stage, p.message) for p in seen] == [(k, 4, "files", "debye_bump.csv") for k in range(1, 5)]
    assert "\r[1/4] debye_bump.csv\x1b[K" in err and err.count("\r\x1b[K") == 1
