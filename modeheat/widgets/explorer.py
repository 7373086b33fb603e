"""The Explorer: mix branches with a computed DOS and watch C, C/T³, θ_D(T) and S against data.

Everything the Explorer shows is one frozen :class:`ExplorerState`; every edit makes a
new state (``dataclasses.replace``), :meth:`Explorer.set_state` keeps the old one for
undo and redraws the views.  The components are immutable, so a state costs a few
references and undo is a list.  A set of spectra at several volumes (a
:class:`~modeheat.VolumeSet`, given as ``Explorer(volumes=...)`` or uploaded in the
quasi-harmonic panel) is part of the state too, and "use as the lattice" there puts a
:class:`~modeheat.QuasiHarmonic` term in the model, in place of its vibrational and
dilatation terms, as one more undoable edit.
"""

from __future__ import annotations

import dataclasses
import math
import os
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import ipywidgets as widgets
import numpy as np
import pandas as pd

from ..errors import InputError
from ..io import read_heat_capacity, read_spectrum
from ..io.sessions import load_session, save_session, to_dict
from ..io.tables import write_table, write_text_file
from ..thermo import CAUTION
from ..models import Component, Dilatation, Electronic, Mixture, PhononDOS
from ..quasiharmonic import QuasiHarmonic, VolumeSet
from ..representations import temperature_curves
from ..spectrum import Spectrum
from .curves_view import COMPONENT_VIEWS, REPRESENTATIONS, HeatCapacityView
from .editor import BranchEditor
from .spectrum_view import UNITS, SpectrumView
from .status import StatusArea

__all__ = ["Explorer", "ExplorerState"]

#: Temperatures of the drawn curves: this many, evenly on a log scale over the view's range.
CURVE_POINTS = 400
#: The view's range without data, K.
DEFAULT_RANGE = (1.0, 1000.0)
#: Undo keeps at most this many states.
UNDO_DEPTH = 200
_VIEW = "view settings"
_VOLUMES = "volumes"
#: The curves view's representation → the kind modeheat.figures draws it as.
_FIGURE_KINDS = {"C": "C", "C/T³": "C/T3", "C/T vs T²": "C/T vs T2", "θ_D(T)": "theta_D", "S": "S"}
_START = "To start: load a DOS or heat-capacity file below, or add a branch (Debye, Einstein, …) with “Add”."


@dataclass(frozen=True, eq=False)
class ExplorerState:
    """All an Explorer shows, as one immutable value.

    Parameters
    ----------
    model : Mixture or None — the model (its ``atoms`` left unset: the mode counter
        compares its modes with 3·`atoms` instead of refusing an edit)
    spectra : tuple of Spectrum — loaded densities of states
    data : tuple of DataFrame — heat-capacity data sets as read by ``read_heat_capacity``
    atoms : float or None — atoms per formula unit
    unit : str — frequency unit of the spectrum view: "THz", "meV", "cm-1" or "K"
    reduced : bool — the spectrum view shows g/ω² and the Debye level
    representation : str — one of :data:`~modeheat.widgets.curves_view.REPRESENTATIONS`
    log_t, log_y : bool — log temperature axis; log axis of C and S
    show_components : str — each component's C or S: "off", "overlaid" (each on its own)
        or "stacked" (running sums, the last equal to the model); ``True``/``False`` from
        sessions saved before stacking existed read as "overlaid"/"off"
    window : (float, float) — the fit's temperature window in K
    vary : frozenset of str — parameters the fit varies, keyed "name.field"
    volumes : VolumeSet or None — spectra at several volumes with their static energies,
        drawn by the quasi-harmonic panel (a session stores it as the object "volumes")
    """

    model: Mixture | None = None
    spectra: tuple = ()
    data: tuple = ()
    atoms: float | None = None
    unit: str = "THz"
    reduced: bool = False
    representation: str = "C"
    log_t: bool = True
    log_y: bool = False
    show_components: str = "off"
    window: tuple = DEFAULT_RANGE
    vary: frozenset = frozenset()
    volumes: VolumeSet | None = None

    def __post_init__(self):
        if self.model is not None and not isinstance(self.model, Mixture):
            raise InputError(f"the Explorer's model must be a Mixture, not {type(self.model).__name__}")
        if not all(isinstance(s, Spectrum) for s in self.spectra):
            raise InputError("the Explorer's spectra must be Spectrum objects")
        if not all(isinstance(d, pd.DataFrame) for d in self.data):
            raise InputError("the Explorer's data sets must be tables as read_heat_capacity returns")
        if self.unit not in UNITS:
            raise InputError(f"unit must be one of {', '.join(UNITS)}, not {self.unit!r}")
        if self.representation not in REPRESENTATIONS:
            raise InputError(f"representation must be one of {', '.join(REPRESENTATIONS)}, not {self.representation!r}")
        lo, hi = (float(v) for v in self.window)
        if not 0 < lo < hi < math.inf:
            raise InputError(f"the temperature window must be 0 < from < to, not {lo:g}–{hi:g} K")
        object.__setattr__(self, "window", (lo, hi))
        object.__setattr__(self, "vary", frozenset(self.vary))
        shown = self.show_components
        if isinstance(shown, bool):  # a session saved before "stacked" existed
            shown = "overlaid" if shown else "off"
        if shown not in COMPONENT_VIEWS:
            raise InputError(f"show_components must be one of {', '.join(COMPONENT_VIEWS)}, not {self.show_components!r}")
        object.__setattr__(self, "show_components", shown)
        if self.atoms is not None and not 0 < self.atoms < math.inf:
            raise InputError(f"atoms per formula unit must be a positive number, not {self.atoms!r}")
        if self.volumes is not None and (not isinstance(self.volumes, VolumeSet) or self.volumes.spectra is None):
            raise InputError("the Explorer's volumes must be a VolumeSet with spectra")

    def temperatures(self) -> np.ndarray:
        """T in K of the drawn curves: the data's range (with a margin) or 1–1000 K."""
        lo, hi = self.temperature_range()
        return np.geomspace(lo, hi, CURVE_POINTS)

    def temperature_range(self) -> tuple[float, float]:
        """(lowest, highest) T in K the curves cover."""
        if not self.data:
            return DEFAULT_RANGE
        lo = min(float(d["T"].min()) for d in self.data)
        hi = max(float(d["T"].max()) for d in self.data)
        return lo / 1.5, hi * 1.5

    def settings(self) -> dict:
        """The view settings as plain values (what a session stores beside the objects)."""
        return {
            "atoms": self.atoms, "unit": self.unit, "reduced": self.reduced,
            "representation": self.representation, "log_t": self.log_t, "log_y": self.log_y,
            "show_components": self.show_components, "window": self.window, "vary": sorted(self.vary),
        }

    def objects(self) -> dict:
        """The objects of a session file: model, spectra, data sets, the volume set and the view settings."""
        out: dict = {} if self.model is None else {"model": self.model}
        out |= {f"spectrum {i + 1}": s for i, s in enumerate(self.spectra)}
        out |= {f"data {i + 1}": d for i, d in enumerate(self.data)}
        out |= {} if self.volumes is None else {_VOLUMES: self.volumes}
        view = pd.DataFrame()
        view.attrs.update(self.settings())
        return out | {_VIEW: view}

    @classmethod
    def from_objects(cls, objects: dict) -> "ExplorerState":
        """The state a session's objects describe (:meth:`objects` read back).

        Raises
        ------
        InputError
            An object of the wrong kind, or view settings missing or out of range.
        """
        view = objects.get(_VIEW)
        if not isinstance(view, pd.DataFrame):
            raise InputError(f"not an Explorer session: no {_VIEW!r} table")
        model = objects.get("model")
        spectra = tuple(v for k, v in objects.items() if k.startswith("spectrum "))
        data = tuple(v for k, v in objects.items() if k.startswith("data "))
        unknown = set(objects) - {_VIEW, "model", _VOLUMES} - {k for k in objects if k.startswith(("spectrum ", "data "))}
        if unknown:
            raise InputError(f"not an Explorer session: unexpected objects {sorted(unknown)}")
        settings = dict(view.attrs)
        names = {f.name for f in dataclasses.fields(cls)} - {"model", "spectra", "data", "volumes"}
        if set(settings) != names:
            raise InputError(f"the view settings must name exactly {sorted(names)}")
        try:
            return cls(model=model, spectra=spectra, data=data, volumes=objects.get(_VOLUMES), **settings)
        except (TypeError, ValueError) as exc:
            raise InputError(f"the view settings are damaged: {exc}") from None

    def __eq__(self, other: object) -> bool:
        # equal when a session stores the same: the objects' documents and the settings
        if not isinstance(other, ExplorerState):
            return NotImplemented
        mine, theirs = self.objects(), other.objects()
        return list(mine) == list(theirs) and all(
            (mine[k].attrs == theirs[k].attrs) if k == _VIEW else to_dict(mine[k]) == to_dict(theirs[k]) for k in mine
        )

    __hash__ = None  # type: ignore[assignment]


def _without_atoms(model) -> Mixture | None:
    if model is None:
        return None
    if isinstance(model, (Component, Spectrum)):
        model = Mixture((model,))
    if not isinstance(model, Mixture):
        raise InputError(f"model must be a component or a Mixture, not {type(model).__name__}")
    return model.with_atoms(None)


def _demo_file(name: str):
    # shipped inside the package, so an installed modeheat finds it
    return resources.files("modeheat.widgets") / "demo" / name


class Explorer(widgets.VBox):
    """Mix acoustic and optical branches with a DOS and compare C, C/T³, θ_D(T), S with data.

    Parameters
    ----------
    spectrum : Spectrum or list of Spectrum, optional — loaded densities of states; with
        no model, the first becomes the model's term "dos" (frequency scale 1)
    model : component or Mixture, optional
    data : DataFrame or list of DataFrame, optional — heat-capacity data as read by
        :func:`~modeheat.read_heat_capacity` (T in K, C and σ in J/(mol K))
    atoms : float, optional — atoms per formula unit (default: the model's, else the first
        spectrum's, else the volume set's)
    volumes : VolumeSet, optional — spectra at several volumes with their static energies,
        shown in the quasi-harmonic panel (V(T), α(T), C_p and C_v against the data), whose
        "use as the lattice" puts them in the model as a :class:`~modeheat.QuasiHarmonic` term (in place of its vibrational and dilatation terms);
        a volume table and its DOS files can be uploaded there instead
    """

    def __init__(self, spectrum=None, model=None, data=None, *, atoms: float | None = None,
                 volumes: VolumeSet | None = None):
        super().__init__()
        self.add_class("mh-explorer")
        self.status = StatusArea()
        self._undo: list[ExplorerState] = []
        self._redo: list[ExplorerState] = []
        self._syncing = False
        spectra = tuple(spectrum) if isinstance(spectrum, (list, tuple)) else (() if spectrum is None else (spectrum,))
        sets = tuple(data) if isinstance(data, (list, tuple)) else (() if data is None else (data,))
        if atoms is None and isinstance(model, Mixture):
            atoms = model.atoms
        if atoms is None and spectra:
            atoms = spectra[0].atoms
        if atoms is None and isinstance(volumes, VolumeSet):
            atoms = volumes.atoms
        mixture = _without_atoms(model)
        if mixture is None and spectra:
            mixture = Mixture((PhononDOS(spectra[0], name="dos"),))
        state = ExplorerState(model=mixture, spectra=spectra, data=sets, atoms=atoms, volumes=volumes)
        if sets:
            state = dataclasses.replace(state, window=_data_window(sets))
        self.state = state
        self.spectrum_view = SpectrumView()
        self.curves_view = HeatCapacityView()
        self.editor = BranchEditor(self._on_values, self._on_vary, self._on_add, self._on_remove)
        self.undo_button = widgets.Button(description="undo", icon="undo")
        self.redo_button = widgets.Button(description="redo", icon="repeat")
        self.undo_button.on_click(lambda _: self.undo())
        self.redo_button.on_click(lambda _: self.redo())
        self.figure_name = widgets.Text(value="modeheat_figure.pdf", description="figure file",
                                        tooltip="a .pdf, .svg or .png name, or a stem for all three")
        self.figure_name.add_class("mh-figure-name")
        self.save_figure_button = widgets.Button(description="save figure", icon="save")
        self.save_figure_button.add_class("mh-save-figure")
        self.save_figure_button.on_click(lambda _: self._on_save_figure())
        self._watch_controls()
        self.panels = self._build_panels()
        for view in (self.spectrum_view, self.curves_view):
            view.layout.flex = "0 0 auto"  # each as wide as its figure, so the two fit side by side
        self.children = [
            widgets.HTML("<b>modeheat Explorer</b> — heat capacity from branches and a density of states"),
            widgets.HBox([self.undo_button, self.redo_button, self.figure_name, self.save_figure_button]),
            # side by side where the notebook is wide enough, one under the other where not
            widgets.Box([self.spectrum_view, self.curves_view], layout=widgets.Layout(flex_flow="row wrap",
                                                                                      align_items="flex-start")),
            self.editor,
            *self.panels,
            self.status,
        ]
        self._refresh()
        if state.model is None and state.volumes is not None:
            if not self.status.message:  # a note of the panel's (V(T) extrapolated) goes first
                self.status.info("a volume set is loaded: see V(T), α(T) and C_p in the quasi-harmonic panel below, "
                                 "and press “use as the lattice” there to compare its C_p with data")
        elif state.model is None and not state.data:
            self.status.info(_START)

    # --- state, undo and redo ---------------------------------------------------------------
    def set_state(self, new: ExplorerState) -> None:
        """Show a new state; the current one goes on the undo stack (redo is cleared)."""
        if new is self.state:
            return
        self._undo = (self._undo + [self.state])[-UNDO_DEPTH:]
        self._redo = []
        self.state = new
        self._refresh()

    def undo(self) -> None:
        """Go back one edit (nothing happens when there is none)."""
        if self._undo:
            self._redo.append(self.state)
            self.state = self._undo.pop()
            self._refresh()

    def redo(self) -> None:
        """Repeat an undone edit (nothing happens when there is none)."""
        if self._redo:
            self._undo.append(self.state)
            self.state = self._redo.pop()
            self._refresh()

    def _edit(self, action: str, **changes) -> None:
        """Make and show a new state; a refused edit says why and puts the controls back."""
        with self.status.guard(action):
            self.set_state(dataclasses.replace(self.state, **changes))
            return
        self._refresh()

    def _refresh(self) -> None:
        s = self.state
        self._syncing = True
        try:
            with self.status.guard("drawing the curves"):
                # The heat-capacity figure first: the browser applies messages in the order
                # sent, so the curve the user watches is redrawn before the DOS (a 2,000-point
                # line) and the editor's boxes are even decoded.
                self.curves_view.show(s)
                self.spectrum_view.show(s)
                self.editor.show(s.model, s.spectra, s.atoms, s.vary)
                self.qh_panel.show(s)
        finally:
            self._syncing = False
        self.undo_button.disabled, self.redo_button.disabled = not self._undo, not self._redo

    # --- controls → new states ------------------------------------------------------------------
    def _watch_controls(self) -> None:
        links = [
            (self.spectrum_view.unit, "unit"), (self.spectrum_view.reduced, "reduced"),
            (self.curves_view.representation, "representation"), (self.curves_view.log_t, "log_t"),
            (self.curves_view.log_y, "log_y"), (self.curves_view.components, "show_components"),
        ]
        for control, name in links:
            control.observe(lambda change, name=name: self._control(name, change["new"]), "value")
        for box in (self.curves_view.tmin, self.curves_view.tmax):
            box.observe(lambda _: self._control("window", (self.curves_view.tmin.value, self.curves_view.tmax.value)),
                        "value")

    def _control(self, name: str, value) -> None:
        if not self._syncing:
            self._edit(f"changing {name}", **{name: value})

    def _on_values(self, values: dict) -> None:
        with self.status.guard("changing " + ", ".join(values)):
            model = self.state.model.with_parameters(values)
            self.set_state(dataclasses.replace(self.state, model=model))
            return
        self._refresh()

    def _on_vary(self, key: str, checked: bool) -> None:
        vary = self.state.vary | {key} if checked else self.state.vary - {key}
        self._edit(f"choosing {key} for the fit", vary=vary)

    def _on_add(self, component: Component) -> None:
        model = self.state.model
        self._edit(f"adding {component.name}", model=Mixture((component,)) if model is None else model + component)

    def _on_remove(self, name: str) -> None:
        model = self.state.model
        kept = tuple(c for c in model.components if c.name != name)
        vary = frozenset(k for k in self.state.vary if not k.startswith(name + "."))
        self._edit(f"removing {name}", model=Mixture(kept) if kept else None, vary=vary)

    # --- the data and fit panels ----------------------------------------------------------------
    def _build_panels(self) -> list:
        from .data_panel import DataPanel
        from .fit_panel import FitPanel
        from .inversion_panel import InversionPanel
        from .qh_panel import QuasiHarmonicPanel

        self.data_panel = DataPanel(self._on_spectrum, self._on_data, self.status)
        self.fit_panel = FitPanel(self._fit_problem, self._on_fit_result, self.status)
        self.inversion_panel = InversionPanel(self._inversion_data, self.spectrum_view.show_recovered, self.status)
        self.qh_panel = QuasiHarmonicPanel(self._on_volumes, self._on_add_quasi_harmonic, self.status)
        return [self.data_panel, self.fit_panel, self.inversion_panel, self.qh_panel]

    def _on_spectrum(self, spectrum: Spectrum) -> None:
        """A loaded DOS: shown in the spectrum view, offered as a branch; with no model yet,
        it becomes the model's term "dos"."""
        s = self.state
        model = s.model if s.model is not None else Mixture((PhononDOS(spectrum, name="dos"),))
        atoms = s.atoms if s.atoms is not None else spectrum.atoms
        self._edit(f"adding the DOS {spectrum.name or ''}".rstrip(), spectra=s.spectra + (spectrum,),
                   model=model, atoms=atoms)
        if self.status.kind != "error":
            self.status.info(f"loaded the DOS {spectrum.name or ''} ({spectrum.atoms:g} atoms per formula unit)")

    def _on_data(self, frame: pd.DataFrame) -> None:
        """A heat-capacity data set: drawn, and the fit window widened to cover every set."""
        sets = self.state.data + (frame,)
        self._edit("adding heat-capacity data", data=sets, window=_data_window(sets))
        if self.status.kind != "error":
            self.status.info(f"loaded {len(frame)} heat-capacity points {frame.attrs.get('name') or ''}".rstrip())

    def _on_volumes(self, volumes: VolumeSet) -> None:
        """A volume set read from an upload: shown in the quasi-harmonic panel (an undoable edit)."""
        atoms = self.state.atoms if self.state.atoms is not None else volumes.atoms
        self._edit(f"loading the volume set {volumes.name or ''}".rstrip(), volumes=volumes, atoms=atoms)

    def _on_add_quasi_harmonic(self, term: QuasiHarmonic) -> None:
        """The quasi-harmonic solid as the model's lattice (one edit: undo puts the old model back).

        The term carries all 3·atoms modes and gives C_p itself, so it takes the place of
        every vibrational component and of a Dilatation term; electronic and two-level
        terms stay.  Its C_p is what the heat-capacity view then draws against the data.
        """
        s = self.state
        atoms = s.atoms if s.atoms is not None else term.volumes.atoms
        kept = [] if s.model is None else [c for c in s.model.components
                                           if c.modes == 0 and not isinstance(c, Dilatation)]
        replaced = [] if s.model is None else [c.name for c in s.model.components if c not in kept]
        model = Mixture((term, *kept))
        self._edit(f"adding {term.name}", model=model, atoms=atoms)
        if self.state.model is model:
            note = f"{model.components[0].name}: C_p of the volume set at {term.pressure:g} GPa ({term.eos} equation of state)"
            if replaced:
                note += f", in place of {', '.join(replaced)} (it carries every mode and C_p − C_v itself; undo puts them back)"
            self.status.info(note)

    def _fit_problem(self) -> tuple:
        """(model, data sets, (tmin, tmax) in K, parameters to vary) for the fit panel."""
        s = self.state
        if s.model is None:
            raise InputError("there is no model to fit: add a branch or load a DOS first")
        if not s.data:
            raise InputError("there are no heat-capacity data to fit: load a data file first")
        if not s.vary:
            raise InputError("tick “vary in fit” for at least one parameter")
        model = s.model if s.atoms is None else s.model.with_atoms(s.atoms)
        return model, list(s.data), s.window, sorted(s.vary)

    def _inversion_data(self) -> tuple:
        """(data sets, atoms per formula unit or None, C_p → C_v keywords or None) for the inversion panel."""
        if not self.state.data:
            raise InputError("there are no heat-capacity data to invert: load a data file first")
        model = self.state.model
        dilatation = [c for c in (model.components if model is not None else ()) if isinstance(c, Dilatation)]
        if not dilatation:
            return list(self.state.data), self.state.atoms, None
        # Measured C_p becomes C_v inside the backend with the model's dilatation term (Nernst–Lindemann
        # form): the inversion recovers a harmonic DOS, whose heat capacity is C_v.
        A = dilatation[0].A
        self.status.info(f"inverting C_v = C_p − A·C_p²·T with the model's A = {A:.3g} mol/J")
        return list(self.state.data), self.state.atoms, {"A": A}

    def _on_fit_result(self, result) -> None:
        """Move the sliders to the fitted model (one edit, so undo returns to before the fit)."""
        self._edit("taking the fit result", model=_without_atoms(result.model))

    # --- keep what you see ------------------------------------------------------------------------
    def save(self, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
        """Write the session — model, spectra, data and view settings — as one JSON file.

        Parameters
        ----------
        path : str or os.PathLike — the file (``.json`` is customary)
        overwrite : bool — replace an existing file

        Raises
        ------
        InputError
            The file exists (without `overwrite`) or cannot be written.
        """
        return save_session(path, self.state.objects(), overwrite=overwrite)

    @classmethod
    def from_session(cls, path: str | os.PathLike) -> "Explorer":
        """An Explorer exactly as saved by :meth:`save` (loading runs no code).

        Raises
        ------
        InputError
            The file is missing, damaged or not an Explorer session; the message says why.
        """
        state = _read_state(path)
        explorer = cls()
        explorer.state = state
        explorer._refresh()
        explorer.status.info(f"opened the session {Path(path).name}")
        return explorer

    def load(self, path: str | os.PathLike) -> None:
        """Open a session in this Explorer (an undoable edit); a damaged file changes
        nothing and the status says why."""
        with self.status.guard(f"opening the session {Path(path).name}"):
            self.set_state(_read_state(path))
            self.status.info(f"opened the session {Path(path).name}")

    def curves(self) -> pd.DataFrame:
        """The model's curves as drawn: T [K], C, C/T³, C/T, T², θ_D, S, U, F (per mole of formula units)."""
        if self.state.model is None:
            raise InputError("there is no model to export: add a branch or load a DOS first")
        return temperature_curves(self.state.model, self.state.temperatures())

    def export_csv(self, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
        """Write :meth:`curves` as CSV with a commented header (caution, units, basis).

        Raises
        ------
        InputError
            No model, or a destination that exists or cannot be written.
        """
        return write_table(self.curves(), path, overwrite=overwrite)

    def save_figure(self, path: str | os.PathLike, *, overwrite: bool = False) -> list[Path]:
        """Draw the current representation of the model, the loaded spectra and the data
        as a paper figure (:func:`~modeheat.figures.curve_figure`, single column) and write
        it (:func:`~modeheat.figures.save_figure`: a .pdf, .svg or .png name, or a stem for all three).

        Raises
        ------
        InputError
            Nothing to draw, or a destination that exists or cannot be written.
        """
        from ..figures import curve_figure, save_figure

        s = self.state
        sources = {} if s.model is None else {"model": s.model}
        sources |= {sp.name or f"DOS {i + 1}": sp for i, sp in enumerate(s.spectra)}
        fig = curve_figure(sources, _FIGURE_KINDS[s.representation], data=list(s.data),
                           temperatures=s.temperatures(), log_t=s.log_t)
        return save_figure(fig, path, overwrite=overwrite)

    def _on_save_figure(self) -> None:
        with self.status.guard("saving the figure"):
            written = self.save_figure(self.figure_name.value.strip())
            self.status.info("saved the figure: " + ", ".join(p.name for p in written))

    def export_fit_csv(self, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
        """Write the last fit's parameter table (value, standard error, unit, status) as CSV,
        with the fit's components, χ²_red, quality and the caution as ``#`` lines.

        Raises
        ------
        InputError
            No fit has finished yet, or a destination that exists or cannot be written.
        """
        result = getattr(self, "fit_panel", None) and self.fit_panel.result
        if result is None:
            raise InputError("there is no fit to export yet: tick parameters to vary and press Fit")
        head = [
            "# modeheat fit parameters",
            f"# caution: {CAUTION}",
            f"# model: {' + '.join(c.name for c in result.model.components)}",
            f"# chi2_red: {result.chi2_red:.6g}; quality: {result.quality.verdict}; points: {result.n_points}",
        ]
        text = "\n".join(head) + "\n" + result.parameter_table().to_csv(index=False, lineterminator="\n")
        return write_text_file(path, text, overwrite=overwrite)

    # --- the demo -----------------------------------------------------------------------------------
    @classmethod
    def demo(cls) -> "Explorer":
        """The invented compound zorbium lumide (not a real material): its computed DOS as
        the term "dos" with electronic and dilatation terms, and its invented C_p data."""
        with resources.as_file(_demo_file("zorbium_lumide_dos.txt")) as p:
            dos = read_spectrum(p)
        with resources.as_file(_demo_file("zorbium_lumide_cp.txt")) as p:
            cp = read_heat_capacity(p, atoms=2)
        # γ and A as the demo's data were made with (demo_spectra/make_demo.py)
        model = PhononDOS(dos, name="dos") + Electronic(gamma=5e-5) + Dilatation(A=2e-6)
        explorer = cls(spectrum=dos, model=model, data=cp, atoms=2)
        explorer.state = dataclasses.replace(explorer.state, vary=frozenset({"dos.scale"}))
        explorer._refresh()
        explorer.status.info("demo: zorbium lumide, an invented compound — drag the DOS frequency scale")
        return explorer


def _data_window(sets) -> tuple[float, float]:
    return min(float(d["T"].min()) for d in sets), max(float(d["T"].max()) for d in sets)


def _read_state(path) -> ExplorerState:
    try:
        return ExplorerState.from_objects(load_session(path))
    except InputError as exc:
        if exc.path is None:
            raise InputError(exc.problem, path=path) from None
        raise
