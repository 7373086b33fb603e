"""The Explorer's data panel: upload DOS and heat-capacity files, read them with the backend readers."""

from __future__ import annotations

import tempfile
import warnings
from collections.abc import Callable
from pathlib import Path

import ipywidgets as widgets
import pandas as pd

from .. import _checks
from ..errors import InputError, ModeheatWarning
from ..io import read_heat_capacity, read_spectrum
from ..spectrum import Spectrum
from .status import StatusArea

__all__ = ["DataPanel", "SPECTRUM_UNITS"]

#: The unit choices of uploaded DOS files: label → the reader's `unit` (None: the file's header says).
SPECTRUM_UNITS: dict[str, str | None] = {"from file": None, "THz": "THz", "meV": "meV", "cm-1": "cm-1", "K": "K"}

_KINDS = ("spectrum", "data")


class DataPanel(widgets.VBox):
    """Uploads of DOS and heat-capacity files, with their unit, atom count and molar mass.

    Each upload is written to a private temporary file named like the upload and read
    with :func:`~modeheat.read_spectrum` or :func:`~modeheat.read_heat_capacity`; the
    result goes to `on_spectrum` or `on_data` (one call per data set).  An upload of
    several files is read whole before any callback: when one file fails, none is
    passed on, so a failed upload changes nothing.  Problems appear in `status` in
    plain words naming the file and line; the readers' warnings appear there too.

    Parameters
    ----------
    on_spectrum : callable — receives each :class:`~modeheat.Spectrum` read
    on_data : callable — receives each heat-capacity DataFrame read (``T`` in K, ``C``
        and ``sigma`` in J/(mol K) per mole of formula units)
    status : StatusArea — where problems and notes are shown

    Attributes
    ----------
    spectrum_upload, data_upload : FileUpload — DOS files (one at a time) and
        heat-capacity files (several at once)
    unit : Dropdown — frequency unit of DOS files (:data:`SPECTRUM_UNITS`)
    atoms : Text — atoms per formula unit; empty: from the file (or the DOS's integral)
    molar_mass : Text — molar mass in g/mol of formula units, for per-mass data; empty: none
    """

    def __init__(
        self,
        on_spectrum: Callable[[Spectrum], object],
        on_data: Callable[[pd.DataFrame], object],
        status: StatusArea,
    ) -> None:
        self.on_spectrum = on_spectrum
        self.on_data = on_data
        self.status = status
        self.spectrum_upload = widgets.FileUpload(description="DOS file", multiple=False)
        self.spectrum_upload.add_class("mh-upload-spectrum")
        self.data_upload = widgets.FileUpload(description="C data files", multiple=True)
        self.data_upload.add_class("mh-upload-data")
        self.unit = widgets.Dropdown(options=list(SPECTRUM_UNITS), value="from file", description="DOS unit")
        self.atoms = widgets.Text(value="", placeholder="from the file", description="atoms")
        self.molar_mass = widgets.Text(value="", placeholder="only for per-gram data", description="g/mol")
        self.spectrum_upload.observe(self._on_spectrum_upload, names="value")
        self.data_upload.observe(self._on_data_upload, names="value")
        super().__init__(
            [
                widgets.HBox([self.spectrum_upload, self.unit]),
                widgets.HBox([self.data_upload, self.molar_mass]),
                self.atoms,
            ]
        )
        self.add_class("mh-data-panel")

    def load_bytes(self, kind: str, name: str, content: bytes) -> Spectrum | pd.DataFrame | None:
        """Read one uploaded file and pass it on, as an upload through the widget would.

        Parameters
        ----------
        kind : {"spectrum", "data"} — a DOS file or a heat-capacity file
        name : str — the file's name (messages and the spectrum's name quote it)
        content : bytes — the file's contents

        Returns
        -------
        Spectrum, DataFrame or None
            What was read and passed on; None when it failed (the status says why).
        """
        loaded = self._load(kind, [(name, bytes(content))])
        return loaded[0] if loaded else None

    # --- widget callbacks ---------------------------------------------------------------------
    def _on_spectrum_upload(self, change) -> None:
        self._take_upload("spectrum", self.spectrum_upload, change["new"])

    def _on_data_upload(self, change) -> None:
        self._take_upload("data", self.data_upload, change["new"])

    def _take_upload(self, kind: str, upload: widgets.FileUpload, value) -> None:
        if not value:
            return  # the reset below, or an empty choice
        self._load(kind, [(item["name"], bytes(item["content"])) for item in value])
        # Emptied so that choosing the same file again (after editing it) is seen as a change.
        upload.value = ()

    # --- reading ------------------------------------------------------------------------------
    def _load(self, kind: str, files: list[tuple[str, bytes]]) -> list:
        """Read every file, then pass each on; on any failure pass nothing and say why."""
        if kind not in _KINDS:
            raise InputError(f"kind must be one of {', '.join(_KINDS)}, not {kind!r}")
        names = ", ".join(name for name, _ in files)
        read: list = []
        notes: list[str] = []
        with self.status.guard(f"reading {names}"):
            options = self._options(kind)
            for name, content in files:
                obj, file_notes = _read_upload(kind, name, content, options)
                read.append(obj)
                notes += file_notes
        if len(read) != len(files):
            return []
        with self.status.guard(f"using {names}"):
            for obj in read:
                (self.on_spectrum if kind == "spectrum" else self.on_data)(obj)
            self.status.info(f"read {names}" + "".join(f"; note: {n}" for n in notes))
            return read
        return []

    def _options(self, kind: str) -> dict:
        """The reader's keyword arguments from the controls (InputError for unusable entries)."""
        options: dict = {}
        if self.atoms.value.strip():
            options["atoms"] = _checks.atoms(self.atoms.value.strip())
        if kind == "spectrum":
            options["unit"] = SPECTRUM_UNITS[self.unit.value]
        elif self.molar_mass.value.strip():
            options["molar_mass"] = _checks.positive("the molar mass (g/mol)", self.molar_mass.value.strip())
        return options


def _read_upload(kind: str, name: str, content: bytes, options: dict) -> tuple[object, list[str]]:
    """Read uploaded bytes through a temporary file named like the upload.

    Returns the spectrum or data set and the readers' warnings as text; errors and
    warnings name the upload, not the temporary file.
    """
    shown = Path(name).name or "upload.txt"  # a bare name: an upload never chooses where it is written
    with tempfile.TemporaryDirectory(prefix="modeheat-upload-") as folder:
        path = Path(folder) / shown
        path.write_bytes(content)
        with warnings.catch_warnings(record=True) as caught:
            # Only our own warnings are shown as notes; others keep the filters they had.
            warnings.simplefilter("always", ModeheatWarning)
            try:
                if kind == "spectrum":
                    obj = read_spectrum(path, name=shown, **options)
                else:
                    obj = read_heat_capacity(path, **options)
                    obj.attrs["source"] = shown
            except InputError as exc:
                if exc.path != str(path):
                    raise
                raise InputError(exc.problem, path=shown, line=exc.line, index=exc.index) from None
    notes = [str(w.message).replace(str(path), shown) for w in caught if issubclass(w.category, ModeheatWarning)]
    return obj, notes
