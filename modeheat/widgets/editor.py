"""The branch editor: one row of sliders per model component, add and remove, a mode counter.

The editor only shows a model and reports what the user asked for through three
callbacks; the :class:`~modeheat.widgets.Explorer` turns each request into a new state.
"""

from __future__ import annotations

import math
from typing import Callable

import ipywidgets as widgets

from ..models import Band, Component, Debye, Dilatation, Einstein, Electronic, Mixture, PhononDOS, Schottky, SineChain

__all__ = ["BranchEditor", "NEW_COMPONENTS"]

#: What "Add" makes for each kind: starting values a user then drags into place (K, J/(mol K²), mol/J).
NEW_COMPONENTS: dict[str, Callable[[], Component]] = {
    "Debye (acoustic)": lambda: Debye(theta=300.0, modes=3.0),
    "sine chain (acoustic)": lambda: SineChain(theta=300.0, modes=3.0),
    "Einstein (optical mode)": lambda: Einstein(theta=400.0, modes=3.0),
    "band (optical)": lambda: Band(theta_low=300.0, theta_high=500.0, modes=3.0),
    "electronic γT": lambda: Electronic(gamma=1e-3),
    "two-level (Schottky)": lambda: Schottky(delta=10.0),
    "dilatation (C_p − C_v)": lambda: Dilatation(A=1e-6),
}

#: Words for each field beside its slider, with its unit.
_LABELS = {
    "theta": "θ (K)",
    "theta_low": "θ low (K)",
    "theta_high": "θ high (K)",
    "modes": "modes",
    "scale": "frequency scale",
    "gamma": "γ (J/mol K²)",
    "delta": "Δ (K)",
    "g_ratio": "degeneracy ratio",
    "n": "systems",
    "A": "A (mol/J)",
}
_TEMPERATURES = ("theta", "theta_low", "theta_high", "delta", "g_ratio")


def _slider(field: str, value: float, atoms: float) -> widgets.widget_float._Float:
    """A slider whose range suits the field: θ-like on a log range of a decade either side,
    a frequency scale 0.8–1.2, modes 0–3·atoms, small coefficients 0 to ten times the value."""
    common = dict(value=value, continuous_update=True, readout_format=".4g",
                  layout=widgets.Layout(width="340px"))
    if field == "scale":
        return widgets.FloatSlider(min=min(0.8, value), max=max(1.2, value), step=0.001, **common)
    if field in ("modes", "n"):
        top = max(3.0 * atoms, value, 1.0)
        return widgets.FloatSlider(min=0.0, max=top, step=top / 600.0, **common)
    if field in _TEMPERATURES and value > 0:
        centre = math.log10(value)
        return widgets.FloatLogSlider(base=10.0, min=centre - 1.0, max=centre + 1.0, step=0.002, **common)
    top = 10.0 * value if value > 0 else 1.0
    return widgets.FloatSlider(min=0.0, max=top, step=top / 1000.0, **common)


def _fit_range(slider, value: float) -> None:
    """Widen the slider's range so that `value` fits (a value set from a fit or undo)."""
    if isinstance(slider, widgets.FloatLogSlider):
        exponent = math.log10(value) if value > 0 else slider.min
        slider.min, slider.max = min(slider.min, exponent), max(slider.max, exponent)
    else:
        slider.min, slider.max = min(slider.min, value), max(slider.max, value)


class BranchEditor(widgets.VBox):
    """Rows of sliders for a mixture's components.

    Parameters
    ----------
    on_values : callable — called with ``{"name.field": value}`` when a slider moves
    on_vary : callable — called with ``("name.field", checked)`` when a "vary in fit" box changes
    on_add : callable — called with a new :class:`~modeheat.models.Component`
    on_remove : callable — called with the name of the component to remove
    """

    def __init__(self, on_values, on_vary, on_add, on_remove, **kwargs):
        super().__init__(**kwargs)
        self.add_class("mh-editor")
        self._on_values, self._on_vary, self._on_add, self._on_remove = on_values, on_vary, on_add, on_remove
        self._spectra: tuple = ()
        self._quiet = False
        self._layout_key: tuple | None = None
        #: Sliders, number boxes and check boxes by parameter key "name.field".
        self.sliders: dict[str, widgets.Widget] = {}
        self.numbers: dict[str, widgets.FloatText] = {}
        self.vary: dict[str, widgets.Checkbox] = {}
        #: The "remove" button of each component, by name.
        self.remove_buttons: dict[str, widgets.Button] = {}
        self.kind = widgets.Dropdown(options=list(NEW_COMPONENTS), description="new branch")
        self.add_button = widgets.Button(description="Add", icon="plus")
        self.add_button.add_class("mh-add")
        self.add_button.on_click(lambda _: self._on_add(self.new_component()))
        self.counter = widgets.HTML()
        self.counter.add_class("mh-mode-counter")
        self.rows = widgets.VBox()
        self.children = [widgets.HBox([self.kind, self.add_button, self.counter]), self.rows]

    def new_component(self) -> Component:
        """The component the "new branch" choice stands for (a loaded spectrum by its index)."""
        choice = self.kind.value
        if isinstance(choice, int):
            return PhononDOS(self._spectra[choice], name="dos")
        return NEW_COMPONENTS[choice]()

    def show(self, model: Mixture | None, spectra: tuple, atoms: float | None, vary: frozenset) -> None:
        """Show a model: rebuild the rows when its components changed, else move the sliders."""
        self._quiet = True
        try:
            if spectra is not self._spectra:
                self._spectra = spectra
                self.kind.options = [(k, k) for k in NEW_COMPONENTS] + [
                    (f"loaded DOS: {sp.name or i + 1}", i) for i, sp in enumerate(spectra)
                ]
            comps = model.components if model is not None else ()
            key = tuple((c.name, type(c).__name__) for c in comps)
            n_atoms = atoms if atoms is not None else (model.modes / 3.0 if model is not None and model.modes > 0 else 1.0)
            if key != self._layout_key:
                self._layout_key = key
                self._build(comps, n_atoms)
            for c in comps:
                for field, value in c.parameters.items():
                    name = f"{c.name}.{field}"
                    slider = self.sliders[name]
                    if slider.value != value:
                        _fit_range(slider, value)
                        slider.value = value
                    self.numbers[name].value = value
                    self.vary[name].value = name in vary
            self._count(model, atoms)
        finally:
            self._quiet = False

    def _count(self, model: Mixture | None, atoms: float | None) -> None:
        modes = model.modes if model is not None else 0.0
        if atoms is None:
            self.counter.value = f"modes: {modes:.4g} (atoms per formula unit not set)"
            return
        want = 3.0 * atoms
        ok = abs(modes - want) <= 1e-9 * max(1.0, want)
        colour = "#1b5e20" if ok else "#a3261b"
        words = "" if ok else " — mismatch: adjust the modes"
        self.counter.value = f'<span style="color:{colour}">modes: {modes:.4g} of 3·atoms = {want:.4g}{words}</span>'
        if ok:
            self.counter.remove_class("mh-mismatch")
        else:
            self.counter.add_class("mh-mismatch")

    def _build(self, comps, atoms: float) -> None:
        self.sliders, self.numbers, self.vary, self.remove_buttons = {}, {}, {}, {}
        rows = []
        for c in comps:
            remove = widgets.Button(description="remove", icon="trash", layout=widgets.Layout(width="100px"))
            remove.on_click(lambda _, name=c.name: self._on_remove(name))
            self.remove_buttons[c.name] = remove
            lines = [widgets.HBox([widgets.HTML(f"<b>{c.name}</b> ({c.kind})"), remove])]
            for field, value in c.parameters.items():
                lines.append(self._parameter(c.name, field, value, atoms))
            rows.append(widgets.VBox(lines, layout=widgets.Layout(border="1px solid #dddddd", padding="2px")))
        self.rows.children = rows

    def _parameter(self, cname: str, field: str, value: float, atoms: float) -> widgets.HBox:
        key = f"{cname}.{field}"
        slider = _slider(field, value, atoms)
        slider.add_class("mh-slider")
        slider.add_class(f"mh-param-{cname}-{field}")
        number = widgets.FloatText(value=value, layout=widgets.Layout(width="110px"))
        number.add_class("mh-number")
        widgets.jslink((slider, "value"), (number, "value"))
        vary = widgets.Checkbox(value=False, description="vary in fit", indent=False)
        slider.observe(lambda change: self._moved(key, change["new"]), "value")
        vary.observe(lambda change: self._quiet or self._on_vary(key, change["new"]), "value")
        self.sliders[key], self.numbers[key], self.vary[key] = slider, number, vary
        return widgets.HBox([widgets.Label(_LABELS.get(field, field), layout=widgets.Layout(width="130px")),
                             slider, number, vary])

    def _moved(self, key: str, value: float) -> None:
        if not self._quiet:
            self._on_values({key: value})
