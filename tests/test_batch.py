"""Streamed batches (modeheat.batch): the same tables from every engine, failures listed,
good results kept, reruns that skip what is done.

The spectra are generated here: invented ν² shapes with a peak, 3 modes per atom.  The
reference for every engine's table is the serial engine's, and for the serial engine
:func:`modeheat.thermo` of the same file (the per-file work the batch wraps), compared
bit for bit; the thermodynamics themselves are tested against outside references elsewhere.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import modeheat as mh
from modeheat.batch import COLUMNS, ENGINES, read_errors, tabulate_files
from modeheat.cli import main

pytest.importorskip("pyarrow")

FILES = 1000
T = np.array([0.0, 2.0, 10.0, 50.0, 150.0, 300.0, 700.0])
BAD = {  # file name → what is wrong with it (each must be listed with a message naming it)
    "bad_text.txt": "frequency, total\n0, 0\n1, one\n",
    "bad_empty.txt": "",
    "bad_all_imaginary.txt": "frequency (THz), total\n-2, 1\n-1, 1\n",
    "bad_binary.txt": "\x00\x01\x02",
}


def _spectrum_text(k: int, rng) -> str:
    top = 4.0 + 6.0 * rng.random()
    nu = np.linspace(0.0, top, 40 + k % 23)
    g = nu**2 * (1.0 + rng.random() * np.exp(-(((nu - 0.8 * top) / (0.05 * top)) ** 2)))
    atoms = 1 + k % 3
    g *= 3.0 * atoms / np.trapezoid(g, nu)
    rows = "\n".join(f"{float(a)!r}, {float(b)!r}" for a, b in zip(nu, g))
    return f"# invented spectrum {k} (not a material)\n# atoms: {atoms}\nfrequency (THz), total\n{rows}\n"


@pytest.fixture(scope="module")
def corpus(tmp_path_factory) -> list[str]:
    """1,000 generated DOS files, 4 of them bad, in a stable order."""
    folder = tmp_path_factory.mktemp("corpus")
    rng = np.random.default_rng(20261202)
    paths = []
    for k in range(FILES - len(BAD)):
        path = folder / f"dos_{k:04d}.txt"
        path.write_text(_spectrum_text(k, rng), encoding="utf-8")
        paths.append(str(path))
    for i, (name, text) in enumerate(BAD.items()):
        path = folder / name
        path.write_bytes(text.encode("utf-8"))
        paths.insert(100 + 200 * i, str(path))
    return paths


@pytest.fixture(scope="module")
def serial(corpus, tmp_path_factory):
    out = tmp_path_factory.mktemp("serial") / "table.parquet"
    summary = tabulate_files(corpus, T, out, engine="serial", chunk=128)
    return out, summary


def test_serial_rows_are_the_per_file_tables(corpus, serial):
    out, summary = serial
    assert (summary.written, summary.failed, summary.skipped) == (FILES - len(BAD), len(BAD), 0)
    table = pd.read_parquet(out)
    assert list(table.columns) == list(COLUMNS) and summary.rows == len(table) == (FILES - len(BAD)) * T.size
    assert list(dict.fromkeys(table["source"])) == [p for p in corpus if Path(p).name not in BAD]  # files' order
    for path in (corpus[0], corpus[517], corpus[-1]):
        # reference: the single-file table of modeheat.thermo, bit for bit
        want = mh.thermo(mh.read_spectrum(path), T)
        rows = table[table["source"] == path]
        for column in ("T", "Cv", "S", "U", "F", "theta_D"):
            np.testing.assert_array_equal(rows[column].to_numpy(), want[column].to_numpy())
        assert rows["atoms"].iloc[0] == want.attrs["atoms"]
        assert rows["zero_point_energy"].iloc[0] == want.attrs["zero_point_energy"]
        assert rows["low_t_method"].iloc[0] == want.attrs["low_t_method"]


def test_bad_files_are_listed_and_good_ones_kept(serial):
    out, summary = serial
    errors = read_errors(out)
    assert sorted(Path(s).name for s in errors["source"]) == sorted(BAD)
    for source, message in zip(errors["source"], errors["error"]):
        assert message.startswith(source)  # each line names its file
    assert "Traceback" not in "".join(errors["error"])
    readme = (out / "_README.txt").read_text(encoding="utf-8")
    assert "Verify against measurements" in readme and "J/(mol K)" in readme


@pytest.mark.parametrize("engine", [e for e in ENGINES if e != "serial"])
def test_every_engine_gives_the_same_table_bit_for_bit(corpus, serial, tmp_path, engine):
    out = tmp_path / f"{engine}.parquet"
    if engine == "dask":  # a local Dask cluster started and stopped here, reached by its address
        distributed = pytest.importorskip("distributed")
        with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None,
                                      silence_logs=40) as cluster:
            summary = tabulate_files(corpus, T, out, engine="dask", scheduler=cluster.scheduler_address, chunk=128)
    else:
        summary = tabulate_files(corpus, T, out, engine=engine, workers=2, chunk=128)
    assert summary.engine == engine and (summary.written, summary.failed) == (FILES - len(BAD), len(BAD))
    pd.testing.assert_frame_equal(pd.read_parquet(out), pd.read_parquet(serial[0]), check_exact=True)
    pd.testing.assert_frame_equal(read_errors(out), read_errors(serial[0]), check_exact=True)


def test_a_rerun_skips_what_is_done_and_tries_the_failures_again(corpus, tmp_path):
    out = tmp_path / "rerun.parquet"
    first = tabulate_files(corpus[:300], T, out, engine="serial", chunk=64)
    computed = []
    again = tabulate_files(corpus, T, out, engine="serial", chunk=64,
                           progress=lambda step: computed.append(step.message) if step.result is None else None)
    good_first = first.written
    assert again.skipped == good_first  # done sources are not computed again …
    assert again.written == FILES - len(BAD) - good_first  # … the new ones are
    assert again.failed == len(BAD)  # the failed ones were tried again (and fail again)
    assert len(computed) == FILES - good_first
    table = pd.read_parquet(out)
    assert table["source"].nunique() == FILES - len(BAD) and len(table) == (FILES - len(BAD)) * T.size
    nothing = tabulate_files(corpus, T, out, engine="serial")
    assert (nothing.written, nothing.skipped) == (0, FILES - len(BAD))
    assert len(pd.read_parquet(out)) == len(table)  # nothing written twice


def test_a_cancelled_batch_keeps_its_chunks_and_a_rerun_finishes_it(corpus, tmp_path):
    out = tmp_path / "cancelled.parquet"
    with pytest.raises(mh.Cancelled):
        tabulate_files(corpus[:200], T, out, engine="serial", chunk=50, progress=lambda step: step.done < 120)
    kept = pd.read_parquet(out)["source"].nunique()
    assert 100 <= kept < 200  # whole chunks only
    summary = tabulate_files(corpus[:200], T, out, engine="serial", chunk=50)
    assert summary.skipped == kept and pd.read_parquet(out)["source"].nunique() == 199  # one bad file in 200


def test_other_settings_or_a_foreign_folder_are_refused(corpus, tmp_path):
    out = tmp_path / "settings.parquet"
    tabulate_files(corpus[:20], T, out, engine="serial")
    with pytest.raises(mh.InputError, match="other temperatures or reading options"):
        tabulate_files(corpus[:20], T[:-1], out, engine="serial")
    with pytest.raises(mh.InputError, match="other temperatures or reading options"):
        tabulate_files(corpus[:20], T, out, engine="serial", low_t="off")
    with pytest.raises(mh.InputError, match="resume"):
        tabulate_files(corpus[:20], T, out, engine="serial", resume=False)
    foreign = tmp_path / "mine"
    foreign.mkdir()
    (foreign / "notes.txt").write_text("precious", encoding="utf-8")
    with pytest.raises(mh.InputError, match="not a modeheat dataset"):
        tabulate_files(corpus[:20], T, foreign, engine="serial")
    assert (foreign / "notes.txt").read_text(encoding="utf-8") == "precious"
    assert json.loads((out / "_settings.json").read_text(encoding="utf-8"))["low_t"] == "auto"
    with pytest.raises(mh.InputError, match="listed twice"):
        tabulate_files([corpus[0], corpus[0]], T, tmp_path / "twice.parquet")
    with pytest.raises(mh.InputError, match="engine"):
        tabulate_files(corpus[:2], T, tmp_path / "x.parquet", engine="gpu")


def test_csv_output_is_the_table_command_s_csv(corpus, tmp_path):
    files = corpus[95:105]  # holds one bad file
    api = tabulate_files(files, T, tmp_path / "api.csv", engine="serial")
    assert api.failed == 1
    assert main(["table", *files, "--temperatures", ",".join(f"{t:g}" for t in T), "--jobs", "1",
                 "-o", str(tmp_path / "cli.csv")]) == 1
    assert (tmp_path / "api.csv").read_text(encoding="utf-8") == (tmp_path / "cli.csv").read_text(encoding="utf-8")


def test_the_table_command_streams_a_dataset_from_a_list_of_files(corpus, serial, tmp_path, capsys):
    listing = tmp_path / "files.txt"
    listing.write_text("# a database\n" + "\n".join(corpus[:150]) + "\n\n", encoding="utf-8")
    out = tmp_path / "cli.parquet"
    temperatures = ",".join(f"{t:g}" for t in T)
    code = main(["table", "--files-from", str(listing), "--temperatures", temperatures, "--engine", "serial",
                 "--chunk", "40", "-o", str(out)])
    captured = capsys.readouterr()
    assert code == 1  # one bad file among the first 150
    assert f"from 149 of 150 files to the dataset {out}" in captured.out
    assert sum(line.startswith("modeheat: error: ") for line in captured.err.splitlines()) == 1
    want = pd.read_parquet(serial[0])
    want = want[want["source"].isin(corpus[:150])].reset_index(drop=True)
    pd.testing.assert_frame_equal(pd.read_parquet(out), want, check_exact=True)
    assert main(["table", "--files-from", str(listing), "--temperatures", temperatures, "--engine", "serial",
                 "-o", str(out)]) == 1
    assert "149 already there, skipped" in capsys.readouterr().out
    assert main(["table", "--files-from", str(tmp_path / "missing.txt"), "-o", str(out)]) == 1
    assert "cannot read the list of files" in capsys.readouterr().err


def test_progress_goes_through_the_backend_mechanism(corpus, tmp_path):
    steps = []
    tabulate_files(corpus[:30], T, tmp_path / "p.parquet", engine="serial", chunk=7, progress=steps.append)
    assert [s.done for s in steps[:-1]] == list(range(1, 31)) and all(s.total == 30 for s in steps)
    assert steps[-1].result is not None and steps[-1].result.written == 30
    assert os.path.basename(corpus[0]) == steps[0].message


def test_failures_of_an_earlier_run_stay_listed_until_tried_again(corpus, tmp_path):
    out = tmp_path / "errors.parquet"
    files = corpus[90:110] + corpus[290:310]  # two bad files, one in each half
    tabulate_files(files, T, out, engine="serial", chunk=5)
    assert len(read_errors(out)) == 2
    more = corpus[90:110] + corpus[120:140] + corpus[290:310]  # new files between the two bad ones
    with pytest.raises(mh.Cancelled):  # a rerun stopped before it reaches the second bad file
        tabulate_files(more, T, out, engine="serial", chunk=5, progress=lambda step: step.done < 3)
    assert sorted(read_errors(out)["source"]) == sorted(p for p in files if Path(p).name in BAD)


def test_the_dask_engine_starts_its_own_local_cluster(corpus, serial, tmp_path):
    pytest.importorskip("distributed")
    out = tmp_path / "own.parquet"
    summary = tabulate_files(corpus[:200], T, out, engine="dask", workers=2, chunk=64)
    assert summary.engine == "dask" and summary.written == 199
    want = pd.read_parquet(serial[0])
    want = want[want["source"].isin(corpus[:200])].reset_index(drop=True)
    pd.testing.assert_frame_equal(pd.read_parquet(out), want, check_exact=True)
    with pytest.raises(mh.InputError, match="cannot reach the Dask scheduler"):
        tabulate_files(corpus[:2], T, tmp_path / "none.parquet", engine="dask", scheduler="tcp://127.0.0.1:9")
