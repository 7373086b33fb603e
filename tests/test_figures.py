"""modeheat.figures: files of each format, their size in inches, embedded fonts, one
image compared with a committed baseline, the paper figure, the quasi-harmonic figure,
the Explorer's save button.

The baseline ``tests/data/figure_debye_c.png`` is written by :func:`write_baseline`;
regenerate it only deliberately (after a change to the figures' look), with
``PYTHONPATH=. python tests/test_figures.py`` from the repository root, and look at it before committing.
"""

from __future__ import annotations

import io
import re
import struct
import sys
from pathlib import Path

import numpy as np
import pytest

pytest.importorskip("matplotlib")

from matplotlib.image import imread  # noqa: E402

from modeheat import CAUTION, InputError, quasi_harmonic, read_heat_capacity, read_spectrum  # noqa: E402
from modeheat.figures import (  # noqa: E402
    KINDS,
    WIDTHS,
    curve_figure,
    paper_figure,
    quasi_harmonic_figure,
    save_figure,
)
from modeheat.models import Debye, Dilatation, Electronic, Einstein, PhononDOS  # noqa: E402
from modeheat.quasiharmonic import QuasiHarmonicWarning  # noqa: E402
from volume_set_shapes import volume_set  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
BASELINE = ROOT / "tests" / "data" / "figure_debye_c.png"
#: Dots per inch of the compared image: small, so the baseline stays a few kB.
COMPARE_DPI = 60
#: RMS over pixels and RGB channels (0–1 scale) a rendering may differ from the baseline:
#: room for anti-aliasing differences between FreeType/Agg builds, well below what a
#: changed curve gives (measured: 0.0 against itself, 0.042 for θ 310 K, 0.064 for 330 K).
RMS_TOLERANCE = 0.01


def _debye_figure(theta: float = 300.0):
    """A deterministic figure: C of a Debye solid (3 modes, θ_D in K), single column."""
    return curve_figure(Debye(theta=theta), "C", width="single", temperatures=np.geomspace(1.0, 1000.0, 200))


def _png(fig, dpi: int = COMPARE_DPI) -> np.ndarray:
    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=dpi)
    buffer.seek(0)
    return imread(buffer)[..., :3]


def write_baseline() -> Path:
    """Write the image-comparison baseline (deliberately; see the module docstring)."""
    buffer = io.BytesIO()
    _debye_figure().savefig(buffer, format="png", dpi=COMPARE_DPI)
    BASELINE.write_bytes(buffer.getvalue())
    return BASELINE


def _rms(a: np.ndarray, b: np.ndarray) -> float:
    assert a.shape == b.shape, f"image sizes differ: {a.shape} vs {b.shape}"
    return float(np.sqrt(np.mean((a.astype(float) - b.astype(float)) ** 2)))


def _png_size(path: Path) -> tuple[int, int]:
    # PNG: 8-byte signature, then the IHDR chunk whose data start with width, height (big-endian)
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def _pdf_media_box(path: Path) -> tuple[float, float]:
    m = re.search(rb"/MediaBox\s*\[\s*0\s+0\s+([\d.]+)\s+([\d.]+)\s*\]", path.read_bytes())
    assert m, "no MediaBox in the PDF"
    return float(m.group(1)), float(m.group(2))


@pytest.fixture(scope="module")
def demo():
    dos = read_spectrum(ROOT / "demo_spectra" / "zorbium_lumide_dos.txt")
    cp = read_heat_capacity(ROOT / "demo_spectra" / "zorbium_lumide_cp.txt", atoms=2)
    # γ and A as the invented demo data were made with (demo_spectra/make_demo.py)
    model = PhononDOS(dos, name="dos") + Electronic(gamma=5e-5) + Dilatation(A=2e-6)
    return dos, model, cp


def test_stem_writes_pdf_svg_png_of_the_figure_size(tmp_path):
    fig = _debye_figure()
    written = save_figure(fig, tmp_path / "debye")
    assert [p.name for p in written] == ["debye.pdf", "debye.svg", "debye.png"]
    assert all(p.is_file() and p.stat().st_size > 0 for p in written)
    w, h = fig.get_size_inches()
    assert w == WIDTHS["single"]
    # PNG at 300 dpi: pixels / 300 = inches (rounding to whole pixels: ±1 px)
    px, py = _png_size(written[2])
    assert abs(px / 300 - w) <= 1 / 300 and abs(py / 300 - h) <= 1 / 300
    # PDF page in points, 72 per inch (common practice: the PostScript point)
    bw, bh = _pdf_media_box(written[0])
    assert bw / 72 == pytest.approx(w, abs=1e-3) and bh / 72 == pytest.approx(h, abs=1e-3)
    svg = written[1].read_text(encoding="utf-8")
    assert re.search(r'width="244\.8pt"', svg)  # 3.4 in × 72 pt/in


def test_pdf_embeds_truetype_fonts_and_no_type3(tmp_path):
    # mathtext labels included: C_V, θ_D, superscripts
    fig = curve_figure(Debye(theta=300.0), "theta_D", width="double", temperatures=[5.0, 50.0, 500.0])
    (pdf,) = save_figure(fig, tmp_path / "fonts.pdf")
    data = pdf.read_bytes()
    assert fig.get_size_inches()[0] == WIDTHS["double"]
    assert b"/FontFile2" in data  # TrueType font programs embedded (pdf.fonttype 42)
    assert b"/Type3" not in data and b"/Subtype /Type3" not in data
    assert CAUTION.encode("ascii") in data or b"Harmonic-model estimates" in data


def test_svg_draws_glyphs_as_paths_and_carries_the_caution(tmp_path):
    (svg,) = save_figure(_debye_figure(), tmp_path / "c.svg")
    text = svg.read_text(encoding="utf-8")
    assert "<text" not in text  # svg.fonttype "path": no font needed to view it
    assert "Harmonic-model estimates" in text


def test_never_overwrites_unless_asked(tmp_path):
    target = tmp_path / "fig.png"
    target.write_bytes(b"the user's file")
    with pytest.raises(InputError, match="exists"):
        save_figure(_debye_figure(), target)
    assert target.read_bytes() == b"the user's file"
    # a stem: one existing member refuses all, before anything is written
    with pytest.raises(InputError, match="exists"):
        save_figure(_debye_figure(), tmp_path / "fig")
    assert not (tmp_path / "fig.pdf").exists()
    save_figure(_debye_figure(), target, overwrite=True)
    assert target.read_bytes()[:4] == b"\x89PNG"


@pytest.mark.parametrize(
    "path, formats, problem",
    [("f.jpg", None, "unknown figure format"), ("f.png", ["pdf"], "either"), ("f", ["eps"], "formats")],
)
def test_bad_destinations_are_refused(tmp_path, path, formats, problem):
    with pytest.raises(InputError, match=problem):
        save_figure(_debye_figure(), tmp_path / path, formats=formats)


def test_image_matches_the_baseline():
    rms = _rms(_png(_debye_figure()), imread(BASELINE)[..., :3])
    assert rms <= RMS_TOLERANCE, f"RMS {rms:.4f} above {RMS_TOLERANCE} (regenerate only if the change is deliberate)"


def test_image_comparison_is_sensitive():
    # a Debye solid 10 % stiffer must fail the comparison, or the tolerance proves nothing
    assert _rms(_png(_debye_figure(330.0)), imread(BASELINE)[..., :3]) > 2 * RMS_TOLERANCE


@pytest.mark.parametrize("kind", KINDS)
def test_every_kind_draws_labelled_axes(kind):
    sources = {"Debye": Debye(theta=300.0), "Einstein": Einstein(theta=200.0, modes=3.0)}
    fig = curve_figure(sources, kind, temperatures=np.geomspace(2.0, 600.0, 60))
    (ax,) = fig.axes
    assert ax.get_xlabel() and ax.get_ylabel() and len(ax.get_lines()) >= 2
    assert ax.get_legend() is not None


def test_reference_lines_of_c():
    # 3·atoms·R (common practice: Dulong–Petit) and the T³ law, for a 1-atom Debye solid
    fig = curve_figure(Debye(theta=300.0), "C", temperatures=np.geomspace(1.0, 1000.0, 100))
    levels = [line.get_ydata()[0] for line in fig.axes[0].get_lines() if line.get_linestyle() == ":"]
    assert levels == [pytest.approx(3 * 8.314462618, rel=1e-9)]  # R from CODATA 2018 (scipy.constants)
    assert any(line.get_label() == "$T^3$ law" for line in fig.axes[0].get_lines())


def test_curve_figure_refuses_what_it_cannot_draw(demo):
    dos, _, cp = demo
    with pytest.raises(InputError, match="kind"):
        curve_figure(dos, "Cp")
    with pytest.raises(InputError, match="no DOS"):
        curve_figure(dos, "DOS", data=cp)
    with pytest.raises(InputError, match="formula"):
        curve_figure(dos, "C", data=cp, per="atom")
    with pytest.raises(InputError, match="width"):
        curve_figure(dos, "C", width="triple")
    with pytest.raises(InputError, match="nothing to draw"):
        curve_figure({}, "C")


def test_data_with_error_bars(demo):
    _, model, cp = demo
    fig = curve_figure(model, "C/T3", data=cp)
    ax = fig.axes[0]
    assert len(ax.containers) == 1 and ax.containers[0].has_yerr


def test_paper_figure_with_and_without_data(demo, tmp_path):
    dos, model, cp = demo
    bare = paper_figure(spectrum=dos)
    assert len(bare.axes) == 4 and bare.get_size_inches()[0] == WIDTHS["double"]
    full = paper_figure(dos, model, cp)
    assert len(full.axes) == 5  # DOS, reduced DOS, C/T³, residuals, θ_D
    residual_ax = [ax for ax in full.axes if "model" in ax.get_ylabel()]
    assert len(residual_ax) == 1 and residual_ax[0].containers
    single = paper_figure(model=model, data=[cp], width="single")
    assert single.get_size_inches()[0] == WIDTHS["single"]
    (png,) = save_figure(full, tmp_path / "paper.png")
    assert _png_size(png)[0] == round(WIDTHS["double"] * 300)
    with pytest.raises(InputError, match="spectrum, a model"):
        paper_figure()


# --- the quasi-harmonic figure ------------------------------------------------------------------------
QH_T = np.linspace(5.0, 900.0, 120)


@pytest.fixture(scope="module")
def qh_table():
    # reference for every drawn array: the backend's table (an invented Debye-like set, tests/volume_set_shapes.py)
    return quasi_harmonic(volume_set(), QH_T)


def _line(ax, gid):
    (line,) = [ln for ln in ax.get_lines() if ln.get_gid() == gid]
    return line


def test_quasi_harmonic_figure_draws_the_tables_columns(qh_table, demo):
    cp = read_heat_capacity(ROOT / "demo_spectra" / "quellium_cp.txt", atoms=1)  # invented data: a shape only
    fig = quasi_harmonic_figure(qh_table, data=cp)
    v_ax, a_ax, c_ax, d_ax = fig.axes
    assert fig.get_size_inches()[0] == WIDTHS["double"]
    T = qh_table["T"].to_numpy()
    # reference: the quasi_harmonic table's columns, exactly
    for ax, gid, column in ((v_ax, "V", qh_table["V"]), (a_ax, "alpha_V", qh_table["alpha_V"]),
                            (c_ax, "Cp", qh_table["Cp"]), (c_ax, "Cv", qh_table["Cv"]),
                            (d_ax, "Cp-Cv", qh_table["Cp"] - qh_table["Cv"])):
        line = _line(ax, gid)
        np.testing.assert_array_equal(line.get_xdata(), T)
        np.testing.assert_array_equal(line.get_ydata(), column.to_numpy())
    # the data with their error bars, as read
    assert len(c_ax.containers) == 1 and c_ax.containers[0].has_yerr
    np.testing.assert_array_equal(c_ax.containers[0].lines[0].get_xdata(), cp["T"].to_numpy())
    np.testing.assert_array_equal(c_ax.containers[0].lines[0].get_ydata(), cp["C"].to_numpy())
    assert "Å" in v_ax.get_ylabel() and all(ax.get_xlabel() == "$T$ (K)" for ax in fig.axes)
    # nothing extrapolated in this table: no mark
    assert qh_table.attrs["extrapolated_from"] is None
    assert not any(ln.get_gid() == "extrapolated_from" for ax in fig.axes for ln in ax.get_lines())


def test_quasi_harmonic_figure_marks_the_extrapolation(tmp_path):
    # volumes up to 16.6 Å³ only: V(T) of this shape passes it below 900 K
    with pytest.warns(QuasiHarmonicWarning, match="extrapolated"):
        table = quasi_harmonic(volume_set(np.linspace(15.0, 16.6, 6)), QH_T)
    start = table.attrs["extrapolated_from"]
    assert start is not None and table["extrapolated"].any()
    # reference: the first T of the table's own 'extrapolated' column
    assert start == table.loc[table["extrapolated"], "T"].iloc[0]
    fig = quasi_harmonic_figure(table, width="single")
    assert fig.get_size_inches()[0] == WIDTHS["single"] and len(fig.axes) == 4
    for ax in fig.axes:
        mark = _line(ax, "extrapolated_from")
        assert list(mark.get_xdata()) == [start, start]
    written = save_figure(fig, tmp_path / "qh")
    assert [p.suffix for p in written] == [".pdf", ".svg", ".png"]
    assert written[0].read_bytes()[:4] == b"%PDF" and b"/FontFile2" in written[0].read_bytes()
    assert "<text" not in written[1].read_text(encoding="utf-8")
    px, _ = _png_size(written[2])
    assert abs(px / 300 - WIDTHS["single"]) <= 1 / 300


def test_quasi_harmonic_figure_refuses_what_it_cannot_draw(qh_table):
    with pytest.raises(InputError, match="quasi_harmonic"):
        quasi_harmonic_figure(qh_table.drop(columns="alpha_V"))
    with pytest.raises(InputError, match="quasi_harmonic"):
        quasi_harmonic_figure(Debye(theta=300.0))
    with pytest.raises(InputError, match="no rows"):
        quasi_harmonic_figure(qh_table.iloc[:0])
    with pytest.raises(InputError, match="heat-capacity table"):
        quasi_harmonic_figure(qh_table, data=[1, 2])
    with pytest.raises(InputError, match="width"):
        quasi_harmonic_figure(qh_table, width="triple")


def test_explorer_save_figure_button_writes_a_file(tmp_path):
    pytest.importorskip("ipywidgets")
    from modeheat.widgets.explorer import Explorer

    explorer = Explorer(model=Debye(theta=300.0), atoms=1)
    explorer.figure_name.value = str(tmp_path / "view.svg")
    explorer.save_figure_button.click()
    assert (tmp_path / "view.svg").is_file(), explorer.status.message
    assert "saved" in explorer.status.message
    explorer.save_figure_button.click()  # the same name again: refused in words, file kept
    assert explorer.status.kind == "error" and "exists" in explorer.status.message
    assert "mh-save-figure" in explorer.save_figure_button._dom_classes


if __name__ == "__main__":
    sys.exit(print(f"wrote {write_baseline()}"))
