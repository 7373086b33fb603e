"""The Explorer's quasi-harmonic panel: spectra at several volumes → V(T), α(T), C_p and C_v
against the data, and the solid as a model term."""

from __future__ import annotations

import html
import math
import os
import tempfile
import warnings
from collections.abc import Callable
from pathlib import Path

import bqplot as bq
import ipywidgets as widgets
import numpy as np

from ..errors import InputError, ModeheatError, ModeheatWarning
from ..quasiharmonic import EOS_FORMS, QuasiHarmonic, VolumeSet, quasi_harmonic
from .curves_view import PALETTE, _bars, compact, same_objects
from .status import StatusArea

__all__ = ["QuasiHarmonicPanel", "QH_REPRESENTATIONS", "EOS_CHOICES"]

#: Representation label → (columns of the quasi-harmonic table drawn as lines, y label).
QH_REPRESENTATIONS: dict[str, tuple[tuple[str, ...], str]] = {
    "V(T)": (("V",), "V"),
    "α(T)": (("alpha_V",), "α_V (1/K)"),
    "C_p and C_v": (("Cp", "Cv"), "C (J/mol K)"),
}
#: The equation-of-state choices: label → the backend's ``eos``.
EOS_CHOICES: tuple[tuple[str, str], ...] = (("auto", "auto"), ("Birch–Murnaghan", EOS_FORMS[0]), ("Vinet", EOS_FORMS[1]))
_VOLUME_LABELS = {"A3": "V (Å³ per formula unit)", "cm3/mol": "V (cm³/mol)", "m3/mol": "V (m³/mol)"}
_START = "load a volume table together with its DOS files (several files at once)"


class QuasiHarmonicPanel(widgets.VBox):
    """Spectra at several volumes: V(T), α_V(T) or C_p and C_v with the data, and "use as the lattice".

    The panel draws what the Explorer's state holds (:meth:`show`): its volume set
    (``state.volumes``), its data sets and its temperatures.  Each line is a column of
    :func:`modeheat.quasi_harmonic` at the panel's pressure and equation of state,
    computed again only when the set, the pressure, the equation of state or the
    temperatures change; the warnings of that call (V(T) extrapolated, no minimum of
    F + PV) go to `status` as notes, and the temperature from which V(T) is
    extrapolated is marked by a vertical line.

    An upload of several files — the volume table and the DOS files it names — is written
    to a private temporary folder and read with :func:`modeheat.io.read_volume_set`;
    the table is the upload that names the others, and its own ``# atoms:`` and
    ``# frequency unit:`` lines apply.  Problems name the uploaded file, not the
    temporary one, and a failed upload changes nothing.

    Parameters
    ----------
    on_volumes : callable — receives each :class:`~modeheat.VolumeSet` read from an upload
    on_add : callable — receives the :class:`~modeheat.QuasiHarmonic` term "use as the lattice" makes
    status : StatusArea — where problems and notes are shown

    Attributes
    ----------
    upload : FileUpload — the volume table and its DOS files (DOM class ``mh-upload-volumes``)
    pressure : FloatText — pressure in GPa (``mh-qh-pressure``)
    eos : Dropdown — "auto", "birch-murnaghan" or "vinet" (``mh-qh-eos``)
    representation : Dropdown — one of :data:`QH_REPRESENTATIONS` (``mh-qh-representation``)
    add_button : Button — "use as the lattice" (``mh-qh-add``), enabled while a set is shown
    figure : bqplot.Figure — ``mh-qh-figure``; its first mark, :attr:`lines`, holds the
        table's columns of the representation as rows
    summary : HTML — the set, the equation of state and its misfit (``mh-qh-summary``)
    table : DataFrame or None — the quasi-harmonic table drawn
    """

    def __init__(
        self,
        on_volumes: Callable[[VolumeSet], object],
        on_add: Callable[[QuasiHarmonic], object],
        status: StatusArea,
    ) -> None:
        self.on_volumes, self.on_add, self.status = on_volumes, on_add, status
        self.upload = widgets.FileUpload(description="volume set", multiple=True,
                                         tooltip="the volume table and every DOS file it names, chosen together")
        self.upload.add_class("mh-upload-volumes")
        self.pressure = widgets.FloatText(value=0.0, description="P (GPa)", layout=widgets.Layout(width="170px"))
        self.pressure.add_class("mh-qh-pressure")
        self.eos = widgets.Dropdown(options=list(EOS_CHOICES), value="auto", description="EOS",
                                    layout=widgets.Layout(width="220px"))
        self.eos.add_class("mh-qh-eos")
        self.representation = widgets.Dropdown(options=list(QH_REPRESENTATIONS), value="V(T)", description="show",
                                               layout=widgets.Layout(width="200px"))
        self.representation.add_class("mh-qh-representation")
        self.add_button = widgets.Button(description="use as the lattice", icon="plus", disabled=True,
                                         tooltip="this solid's C_p (quasi-harmonic, at this pressure) in place of the "
                                                 "model's vibrational and dilatation terms (undo puts them back)",
                                         layout=widgets.Layout(width="160px"))
        self.add_button.add_class("mh-qh-add")
        self.summary = widgets.HTML(value=_START)
        self.summary.add_class("mh-qh-summary")
        sc = {"x": bq.LinearScale(), "y": bq.LinearScale()}
        self.lines = bq.Lines(x=[], y=[], scales=sc, colors=[PALETTE[0], PALETTE[1]], stroke_width=2,
                              line_style="solid", labels=["V"], display_legend=False)
        self.extrapolated_line = bq.Lines(x=[], y=[], scales=sc, colors=["#888888"], line_style="dashed",
                                          labels=["V extrapolated from here"])
        self.data_points: list[bq.Scatter] = []
        self.error_bars: list[bq.Lines] = []
        self.x_axis = bq.Axis(scale=sc["x"], label="T (K)", tick_format=".3~g")
        self.y_axis = bq.Axis(scale=sc["y"], side="left", label="V", tick_format=".4~g")
        self.figure = bq.Figure(marks=self._marks(), axes=[self.x_axis, self.y_axis], title="quasi-harmonic",
                                fig_margin=dict(top=30, bottom=45, left=80, right=15),
                                layout=widgets.Layout(width="480px", height="320px"))
        self.figure.add_class("mh-qh-figure")
        self.table = None
        self._volumes: VolumeSet | None = None
        self._data: tuple = ()
        self._temperatures = np.empty(0)
        self._computed: tuple | None = None  # (key, table, notes)
        self._drawn: tuple | None = None
        self.upload.observe(self._on_upload, names="value")
        for control in (self.pressure, self.eos, self.representation):
            control.observe(lambda _: self._redraw(), "value")
        self.add_button.on_click(lambda _: self._on_add_click())
        super().__init__([
            widgets.HTML("<b>quasi-harmonic</b> — spectra at several volumes: V(T), α(T), C_p against C_v"),
            widgets.HBox([self.upload, self.pressure, self.eos]),
            widgets.HBox([self.representation, self.add_button]),
            self.figure,
            self.summary,
        ])
        self.add_class("mh-qh-panel")

    def _marks(self) -> list:
        # the table's lines first: tests and the browser find them as the first line
        return [self.lines, self.extrapolated_line, *self.error_bars, *self.data_points]

    # --- what the Explorer calls ---------------------------------------------------------------
    def show(self, state) -> None:
        """Draw an :class:`~modeheat.widgets.explorer.ExplorerState`'s volume set against its data."""
        self._volumes, self._data, self._temperatures = state.volumes, state.data, state.temperatures()
        self._redraw()

    def component(self) -> QuasiHarmonic:
        """The term "use as the lattice" makes: the shown set at the panel's pressure and equation of state.

        Raises
        ------
        InputError
            No volume set is shown, or the pressure is not a number.
        """
        if self._volumes is None:
            raise InputError(f"there is no volume set yet: {_START}")
        return QuasiHarmonic(self._volumes, pressure=self.pressure.value, eos=self.eos.value)

    def load_files(self, files: list[tuple[str, bytes]]) -> VolumeSet | None:
        """Read uploaded files — a volume table and its DOS files — and pass the set on,
        as an upload through the widget would.

        Parameters
        ----------
        files : list of (name, bytes) — each file's name and contents

        Returns
        -------
        VolumeSet or None
            What was read and passed on; None when it failed (the status says why).
        """
        names = ", ".join(name for name, _ in files)
        read = None
        with self.status.guard(f"reading {names}"):
            read = _read_volume_upload(files)
        if read is None:
            return None
        volume_set, table_name, notes = read
        with self.status.guard(f"using {names}"):
            self.on_volumes(volume_set)
            self.status.info(f"read the volume set {table_name}: {len(volume_set)} volumes, "
                             f"{volume_set.atoms:g} atom(s) per formula unit" + "".join(f"; note: {n}" for n in notes))
            return volume_set
        return None

    # --- callbacks --------------------------------------------------------------------------------
    def _on_upload(self, change) -> None:
        if not change["new"]:
            return  # the reset below, or an empty choice
        self.load_files([(item["name"], bytes(item["content"])) for item in change["new"]])
        # Emptied so that choosing the same files again (after editing them) is seen as a change.
        self.upload.value = ()

    def _on_add_click(self) -> None:
        with self.status.guard("adding the quasi-harmonic solid"):
            self.on_add(self.component())

    # --- drawing -----------------------------------------------------------------------------------
    def _table(self):
        """The quasi-harmonic table of the shown set at the controls' pressure and EOS, or None
        when it has no rows there (cached either way: the problem is said once, in `status`)."""
        T = self._temperatures
        key = (self._volumes, float(self.pressure.value), self.eos.value, float(T[0]), float(T[-1]), float(T.size))
        if self._computed is not None and same_objects(key, self._computed[0]):
            return self._computed[1]
        self._computed = None
        problem = None
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", ModeheatWarning)
            try:
                table = quasi_harmonic(self._volumes, T, pressure=self.pressure.value, eos=self.eos.value)
            except ModeheatError as exc:
                table, problem = None, str(exc)
        if table is not None and len(table) == 0:
            table, problem = None, (f"F + PV has no minimum near the sampled volumes at any temperature shown "
                                    f"({self.pressure.value:g} GPa)")
        self._computed = (key, table)
        for w in caught:
            if issubclass(w.category, ModeheatWarning) and problem is None:
                self.status.info(f"quasi-harmonic: {w.message}")
        if problem is not None:
            self.status.error(f"quasi-harmonic: {problem}")
            self.summary.value = html.escape(f"no quasi-harmonic table at these settings: {problem}")
        return table

    def _redraw(self) -> None:
        with self.status.guard("drawing the quasi-harmonic curves"):
            self._draw()
            return
        self.table = None
        self._clear()

    def _clear(self) -> None:
        self._drawn = None
        for mark in (self.lines, self.extrapolated_line):
            with mark.hold_sync():
                mark.x, mark.y = [], []
        self.add_button.disabled = self._volumes is None

    def _draw(self) -> None:
        columns, ylabel = QH_REPRESENTATIONS[self.representation.value]
        self._set_data_marks(len(self._data) if columns[0] == "Cp" else 0)
        if self._volumes is None:
            self.table = None
            self._clear()
            self.summary.value = _START
            return
        table = self._table()
        self.table = table
        if table is None:  # the status and summary say why
            self._clear()
            self.add_button.disabled = True
            return
        self.add_button.disabled = False
        # A slider elsewhere in the Explorer redraws everything: send the marks only when
        # what they show changed (the table, the representation or the data).
        drawn = (table, self.representation.value, *self._data, *self.data_points)
        if same_objects(drawn, self._drawn):
            return
        self._drawn = drawn
        unit = self._volumes.volume_unit
        self.y_axis.label = _VOLUME_LABELS.get(unit, "V") if columns[0] == "V" else ylabel
        T = table["T"].to_numpy()
        with self.lines.hold_sync():
            self.lines.x = compact(T)
            self.lines.y = compact(np.vstack([table[c].to_numpy() for c in columns]))
            self.lines.labels = list(columns)
        start = table.attrs.get("extrapolated_from")
        with self.extrapolated_line.hold_sync():
            if start is not None and len(table):
                ys = np.vstack([table[c].to_numpy() for c in columns])
                self.extrapolated_line.x = compact([start, start])
                self.extrapolated_line.y = compact([np.nanmin(ys), np.nanmax(ys)])
            else:
                self.extrapolated_line.x, self.extrapolated_line.y = [], []
        for d, points, bars in zip(self._data, self.data_points, self.error_bars):
            with points.hold_sync():
                points.x, points.y = compact(d["T"]), compact(d["C"])
            with bars.hold_sync():
                if "sigma" in d.columns:
                    bx, by = _bars(d["T"].to_numpy(dtype=float), d["C"].to_numpy(dtype=float),
                                   d["sigma"].to_numpy(dtype=float))
                    bars.x, bars.y = compact(bx), compact(by)
                else:
                    bars.x, bars.y = [], []
        self.summary.value = _summary(self._volumes, table)

    def _set_data_marks(self, n: int) -> None:
        if n == len(self.data_points):
            return
        sc = dict(self.lines.scales)
        colours = [PALETTE[(2 * i + 3) % len(PALETTE)] for i in range(n)]
        self.data_points = [bq.Scatter(x=[], y=[], scales=sc, colors=[c], default_size=14, stroke="#ffffff",
                                       labels=[f"data {i + 1}"]) for i, c in enumerate(colours)]
        self.error_bars = [bq.Lines(x=[], y=[], scales=sc, colors=[c]) for c in colours]
        self.figure.marks = self._marks()


def _summary(volumes: VolumeSet, table) -> str:
    """The set and the fit in words: volumes, equation of state and misfit, extrapolation."""
    attrs = table.attrs
    rms = ", ".join(f"{html.escape(form)} {value:.3g} J/mol" for form, value in attrs["eos_rms"].items())
    lines = [
        f"{html.escape(volumes.name or 'volume set')}: {len(volumes)} volumes "
        f"{volumes.volumes[0]:g}–{volumes.volumes[-1]:g} {html.escape(volumes.volume_unit)}, "
        f"{volumes.atoms:g} atom(s) per formula unit",
        f"equation of state: {html.escape(attrs['eos'])} (largest RMS misfit: {rms}) at {attrs['pressure']:g} GPa",
    ]
    start = attrs.get("extrapolated_from")
    if start is not None:
        lines.append(f"V(T) extrapolated beyond the sampled volumes from {start:g} K (dashed line)")
    if len(table) and math.isfinite(float(table["T"].iloc[-1])):
        lines.append(f"{len(table)} temperatures, {table['T'].iloc[0]:.3g}–{table['T'].iloc[-1]:.4g} K")
    return "<br>".join(lines)


def _read_volume_upload(files: list[tuple[str, bytes]]) -> tuple[VolumeSet, str, list[str]]:
    """Read an upload of a volume table and its DOS files through a private temporary folder.

    Returns the set, the table's name and the readers' warnings as text; errors and
    warnings name the uploaded files, not the temporary ones.
    """
    from ..io.volume_sets import read_volume_set  # beside its own module; loaded only when asked for

    if not files:
        raise InputError(f"no files: {_START}")
    # bare names: an upload never chooses where it is written
    names = [Path(name).name or f"upload {k + 1}.txt" for k, (name, _) in enumerate(files)]
    repeated = sorted({n for n in names if names.count(n) > 1})
    if repeated:
        raise InputError(f"two uploads are named {repeated[0]!r}: a volume set names each DOS file once")
    table = _table_of(names, [content for _, content in files])
    with tempfile.TemporaryDirectory(prefix="modeheat-volumes-") as folder:
        for name, (_, content) in zip(names, files):
            (Path(folder) / name).write_bytes(content)
        with warnings.catch_warnings(record=True) as caught:
            # Only our own warnings are shown as notes; others keep the filters they had.
            warnings.simplefilter("always", ModeheatWarning)
            try:
                volume_set = read_volume_set(Path(folder) / table, name=Path(table).stem)
            except InputError as exc:
                raise _as_uploaded(exc, folder) from None
        notes = [_without(str(w.message), folder) for w in caught if issubclass(w.category, ModeheatWarning)]
    return volume_set, table, notes


def _table_of(names: list[str], contents: list[bytes]) -> str:
    """Which upload is the volume table: the one file, or the one that names the most of the others."""
    if len(names) == 1:
        return names[0]
    counts = []
    for name, content in zip(names, contents):
        text = content.decode("utf-8", errors="replace")
        counts.append(sum(other in text for other in names if other != name))
    best = max(counts)
    if best == 0 or counts.count(best) > 1:
        raise InputError(f"cannot tell which of {', '.join(names)} is the volume table: upload the table "
                         "(volume, energy, DOS file per row) together with the DOS files it names")
    return names[counts.index(best)]


def _without(text: str, folder: str) -> str:
    """A message with the temporary folder taken out of the file names it quotes."""
    return text.replace(folder + os.sep, "").replace(folder, "the upload")


def _as_uploaded(exc: InputError, folder: str) -> InputError:
    """The reader's error naming the uploaded file (and line) instead of the temporary one."""
    path = exc.path
    if path is not None and (path == folder or path.startswith(folder + os.sep)):
        path = Path(path).name
    problem = _without(exc.problem, folder)
    if any(words in problem for words in ("missing", "does not exist", "no such file")):
        problem += "; upload the table together with every DOS file it names"
    return InputError(problem, path=path, line=exc.line, index=exc.index)
