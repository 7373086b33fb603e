"""Lossless sessions: JSON documents of modeheat objects, and session files.

:func:`to_dict` turns a spectrum, a model component, a mixture, a table (a DataFrame
with its ``attrs``, e.g. heat-capacity data from
:func:`~modeheat.io.read_heat_capacity`), a fit result or a low-temperature fit
result into a document of plain JSON values; :func:`from_dict` rebuilds the object.
:func:`save_session` and :func:`load_session` write and read several named objects as
one JSON file.

Document format (schema 1)
--------------------------
Every document is a JSON object with ``"kind"`` (what it holds: ``"spectrum"``,
``"debye"``, ``"sinechain"``, ``"einstein"``, ``"band"``, ``"electronic"``,
``"schottky"``, ``"dilatation"``, ``"dos"`` (a spectrum as a mixture's term), ``"mixture"``, ``"table"``, ``"fit_result"``,
``"fit_quality"``, ``"low_temperature_fit"``, ``"volume_set"`` (spectra at several
volumes with their static energies), ``"qh"`` (a quasi-harmonic term)), ``"schema"``
(the format version, 1) and the object's fields; objects inside objects (a mixture's
components, a fit's model and tables, a volume set's spectra) are documents of their own.

- Numbers are JSON numbers.  Python writes a float with its shortest exact
  representation, so a round trip gives the same float bit for bit.  JSON has no NaN
  or infinity: they are written as the strings ``"nan"``, ``"inf"`` and ``"-inf"``
  where a number belongs (in a table's ``attrs``, where any value may stand, as
  ``{"float": "nan"}``).
- Arrays are lists of numbers.
- A spectrum is stored as its internal state — grid, densities and partials as held,
  atom count and its origin, the continuation chosen and the engine's modes — so it
  is rebuilt as it was, without running the constructor again: the same numbers come
  out of :func:`modeheat.thermo`.
- A table stores its columns in order as ``{"name", "dtype", "values"}`` (dtypes
  float64, int64 and bool), its index (``null`` for the default 0, 1, …) and its
  ``attrs``, whose values may be None, booleans, numbers, strings, lists, and the
  tagged forms ``{"tuple": [...]}``, ``{"map": {...}}``, ``{"array": [...]}`` and
  ``{"float": "nan"}``.

Loading executes no code: a document is plain JSON, and its kind only selects an entry
of this module's fixed table of kinds (nothing is imported or evaluated by name).  An
unknown kind, a schema newer than this version reads, or a damaged document (a missing
or unexpected key, a value of the wrong type, arrays of different lengths) is an
:class:`~modeheat.errors.InputError` that names the place in the document, e.g.
``components[2].theta: expected a number``, and the file when there is one.

A session file is a JSON object ``{"format": "modeheat session", "schema": 1,
"caution": ..., "objects": {name: document, ...}}``.
"""

from __future__ import annotations

import json
import math
import os
from dataclasses import dataclass, fields, is_dataclass
from pathlib import Path
from typing import Any, Callable, Mapping

import numpy as np
import pandas as pd

from ..engine.modeset import DebyeBranch, ModeSet
from .columns import _read_text
from .tables import write_text_file
from ..errors import InputError, ModeheatError
from ..fitting import FitQuality, FitResult, LowTemperatureFit
from ..models import Band, Component, Debye, Dilatation, Einstein, Electronic, Mixture, PhononDOS, Schottky, SineChain
from ..quasiharmonic import ENERGY_UNITS, EOS_FORMS, VOLUME_UNITS, QuasiHarmonic, VolumeSet
from ..spectrum import LOW_T_CHOICES, Spectrum
from ..spectrum.continuation import _check_low_t, _Continuation
from ..thermo import CAUTION
from ..units import ATOMS_RANGE, KELVIN_RANGE, check_unit

__all__ = ["SCHEMA", "FORMAT", "to_dict", "from_dict", "save_session", "load_session", "spectrum_eq"]

#: The document format version this module writes and the newest it reads.
SCHEMA = 1
#: The ``"format"`` entry of a session file.
FORMAT = "modeheat session"

_NON_FINITE = {"nan": math.nan, "inf": math.inf, "-inf": -math.inf}


# --- places and failures --------------------------------------------------------------------
def _at(where: str, key: str) -> str:
    return f"{where}.{key}" if where else key


def _item(where: str, index: int | str) -> str:
    return f"{where}[{index!r}]" if isinstance(index, str) else f"{where}[{index}]"


def _fail(where: str, problem: str):
    raise InputError(f"{where}: {problem}" if where else problem)


def _what(raw: object) -> str:
    """A found value in words, for messages."""
    if isinstance(raw, str):
        return f"the string {raw[:40]!r}"
    if isinstance(raw, bool):
        return "a boolean"
    if isinstance(raw, (int, float)):
        return f"the number {raw!r}"
    return {dict: "an object", list: "a list", type(None): "null"}.get(type(raw), f"a {type(raw).__name__}")


# --- value codecs: encode(value) → JSON value, decode(JSON value, where) → value ---------------
def _float_out(x: float) -> float | str:
    x = float(x)
    if math.isfinite(x):
        return x
    return "nan" if math.isnan(x) else ("inf" if x > 0 else "-inf")


def _float_in(raw: object, where: str, finite: bool = False) -> float:
    if isinstance(raw, str) and raw in _NON_FINITE:
        value = _NON_FINITE[raw]
    elif isinstance(raw, (int, float)) and not isinstance(raw, bool):
        try:
            value = float(raw)
        except OverflowError:
            _fail(where, "expected a number within the range of a float")
    else:
        _fail(where, f"expected a number (or 'nan', 'inf', '-inf'), not {_what(raw)}")
    if finite and not math.isfinite(value):
        _fail(where, f"expected a finite number, not {raw!r}")
    return value


@dataclass(frozen=True)
class _Number:
    finite: bool = False

    def encode(self, value: Any) -> Any:
        return _float_out(value)

    def decode(self, raw: object, where: str) -> Any:
        return _float_in(raw, where, self.finite)


@dataclass(frozen=True)
class _Plain:
    """A JSON scalar of one Python type (int, bool, str)."""

    kind: type
    label: str

    def encode(self, value: Any) -> Any:
        return self.kind(value)

    def decode(self, raw: object, where: str) -> Any:
        if type(raw) is not self.kind:
            _fail(where, f"expected {self.label}, not {_what(raw)}")
        return raw


@dataclass(frozen=True)
class _Optional:
    inner: Any

    def encode(self, value: Any) -> Any:
        return None if value is None else self.inner.encode(value)

    def decode(self, raw: object, where: str) -> Any:
        return None if raw is None else self.inner.decode(raw, where)


@dataclass(frozen=True)
class _Tuple:
    inner: Any
    length: int | None = None

    def encode(self, value: Any) -> Any:
        return [self.inner.encode(v) for v in value]

    def decode(self, raw: object, where: str) -> Any:
        if not isinstance(raw, list):
            _fail(where, f"expected a list, not {_what(raw)}")
        if self.length is not None and len(raw) != self.length:
            _fail(where, f"expected a list of {self.length} values, not {len(raw)}")
        return tuple(self.inner.decode(v, _item(where, k)) for k, v in enumerate(raw))


@dataclass(frozen=True)
class _Map:
    """A mapping of names to values, in order."""

    inner: Any

    def encode(self, value: Any) -> Any:
        return {str(k): self.inner.encode(v) for k, v in value.items()}

    def decode(self, raw: object, where: str) -> Any:
        if not isinstance(raw, dict):
            _fail(where, f"expected an object of names to values, not {_what(raw)}")
        return {k: self.inner.decode(v, _item(where, k)) for k, v in raw.items()}


@dataclass(frozen=True)
class _Array:
    """A 1-D float64 array as a list of numbers."""

    finite: bool = True

    def encode(self, value: Any) -> Any:
        a = np.asarray(value, dtype=float)
        return a.tolist() if np.isfinite(a).all() else [_float_out(v) for v in a.tolist()]

    def decode(self, raw: object, where: str) -> Any:
        if not isinstance(raw, list):
            _fail(where, f"expected a list of numbers, not {_what(raw)}")
        kinds = {type(v) for v in raw}
        if kinds <= {float, int}:
            try:
                a = np.array(raw, dtype=float)
            except OverflowError:
                a = None
            if a is not None and (not self.finite or np.isfinite(a).all()):
                return a
        return np.array([_float_in(v, _item(where, k), self.finite) for k, v in enumerate(raw)], dtype=float)


@dataclass(frozen=True)
class _Object:
    """A nested document of a kind whose class is `expect` or derives from it."""

    expect: type

    def encode(self, value: Any) -> Any:
        return to_dict(value)

    def decode(self, raw: object, where: str) -> Any:
        return _decode(raw, where, self.expect)


class _Pass:
    """A value taken as it is, checked by its reader."""

    def encode(self, value: Any) -> Any:
        return value

    def decode(self, raw: object, where: str) -> Any:
        return raw


class _Value:
    """Any value a table's ``attrs`` may hold (module docstring)."""

    def encode(self, value: Any) -> Any:
        if value is None or isinstance(value, (bool, str, np.bool_)):
            return value if not isinstance(value, np.bool_) else bool(value)
        if isinstance(value, (int, np.integer)):
            return int(value)
        if isinstance(value, (float, np.floating)):
            out = _float_out(value)
            return out if isinstance(out, float) else {"float": out}
        if isinstance(value, np.ndarray) and value.ndim == 1 and value.dtype.kind in "fiu":
            return {"array": _Array(finite=False).encode(value)}
        if isinstance(value, list):
            return [self.encode(v) for v in value]
        if isinstance(value, tuple):
            return {"tuple": [self.encode(v) for v in value]}
        if isinstance(value, dict) and all(isinstance(k, str) for k in value):
            return {"map": {k: self.encode(v) for k, v in value.items()}}
        raise InputError(
            f"cannot store a value of type {type(value).__name__} in a session (attrs may hold None, booleans, numbers, "
            "strings, 1-D numeric arrays, and lists, tuples and string-keyed dicts of these)"
        )

    def decode(self, raw: object, where: str) -> Any:
        if raw is None or isinstance(raw, (bool, str, int, float)):
            return raw
        if isinstance(raw, list):
            return [self.decode(v, _item(where, k)) for k, v in enumerate(raw)]
        if not isinstance(raw, dict) or len(raw) != 1 or next(iter(raw)) not in self._TAGS:
            _fail(where, f"expected a JSON value or one of the tagged forms {', '.join(self._TAGS)}, not {_what(raw)}")
        tag, inner = next(iter(raw.items()))
        return self._TAGS[tag](self, inner, _at(where, tag))

    _TAGS: dict[str, Callable] = {
        "float": lambda self, raw, where: _float_in(raw, where),
        "array": lambda self, raw, where: _Array(finite=False).decode(raw, where),
        "tuple": lambda self, raw, where: _Tuple(self).decode(raw, where),
        "map": lambda self, raw, where: _Map(self).decode(raw, where),
    }


NUMBER = _Number()
FINITE = _Number(finite=True)
INT = _Plain(int, "a whole number")
BOOL = _Plain(bool, "true or false")
STR = _Plain(str, "a string")
ARRAY = _Array()
VALUE = _Value()


class _Reader:
    """Reads the fields of one document body and refuses keys it does not know."""

    def __init__(self, body: Mapping, where: str):
        self.body, self.where, self.used = body, where, set()

    def __call__(self, key: str, codec):
        self.used.add(key)
        if key not in self.body:
            _fail(_at(self.where, key), "missing")
        return codec.decode(self.body[key], _at(self.where, key))

    def finish(self) -> None:
        extra = [k for k in self.body if k not in self.used]
        if extra:
            _fail(_at(self.where, extra[0]), "unexpected key (not part of this kind of document)")


def _sub(raw, where: str) -> _Reader:
    if not isinstance(raw, dict):
        _fail(where, f"expected an object, not {_what(raw)}")
    return _Reader(raw, where)


def _built(where: str, make: Callable, **values):
    """make(**values), with the constructor's own validation errors placed in the document."""
    try:
        return make(**values)
    except InputError as exc:
        _fail(where, exc.problem)


# --- the table of kinds -------------------------------------------------------------------------
@dataclass(frozen=True)
class _Kind:
    cls: type
    encode: Callable[[Any], dict]
    decode: Callable[[_Reader], Any]


_KINDS: dict[str, _Kind] = {}


def _register(tag: str, cls: type, encode: Callable, decode: Callable) -> None:
    _KINDS[tag] = _Kind(cls, encode, decode)


def _register_dataclass(tag: str, cls: type, codecs: Mapping[str, Any]) -> None:
    """A frozen dataclass stored field by field; its constructor validates what it can."""

    def encode(obj):
        return {name: codec.encode(getattr(obj, name)) for name, codec in codecs.items()}

    def decode(read: _Reader):
        return _built(read.where, cls, **{name: read(name, codec) for name, codec in codecs.items()})

    _register(tag, cls, encode, decode)


def _component_codecs(cls: type) -> dict[str, Any]:
    special = {"name": _Optional(STR), "dim": INT}
    return {f.name: special.get(f.name, NUMBER) for f in fields(cls)}


for _cls in (Debye, SineChain, Einstein, Band, Electronic, Schottky, Dilatation):
    _register_dataclass(_cls.kind, _cls, _component_codecs(_cls))

# A spectrum term holds its spectrum as a document of its own (the "spectrum" kind below).
_register_dataclass(
    PhononDOS.kind,
    PhononDOS,
    {"spectrum": _Object(Spectrum), "scale": NUMBER, "modes": NUMBER, "name": _Optional(STR)},
)



# --- spectra at several volumes, and the quasi-harmonic term ------------------------------------
def _volume_set_out(vs: VolumeSet) -> dict:
    return {
        "volumes": ARRAY.encode(vs.volumes),
        "energies": ARRAY.encode(vs.energies),
        "spectra": None if vs.spectra is None else [to_dict(sp) for sp in vs.spectra],
        "volume_unit": vs.volume_unit,
        "energy_unit": vs.energy_unit,
        "name": vs.name,
    }


def _volume_set_in(read: _Reader) -> VolumeSet:
    w = read.where
    volumes = read("volumes", ARRAY)
    energies = read("energies", ARRAY)
    spectra = read("spectra", _Optional(_Tuple(_Object(Spectrum))))
    if spectra is not None and len(spectra) == energies.size != volumes.size:
        # energies and spectra agree: the volumes are the list that lost or gained an entry
        _fail(_at(w, "volumes"), f"expected {energies.size} numbers, one per energy and spectrum, not {volumes.size}")
    _same_length(_at(w, "energies"), energies, volumes.size, "volumes")
    if spectra is not None and len(spectra) != volumes.size:
        _fail(_at(w, "spectra"), f"expected {volumes.size} spectra, one per volume, not {len(spectra)}")
    units = {"volume_unit": _choice(read, "volume_unit", tuple(VOLUME_UNITS)),
             "energy_unit": _choice(read, "energy_unit", tuple(ENERGY_UNITS))}
    name = read("name", _Optional(STR))
    try:
        return VolumeSet(volumes, energies, spectra, name=name, **units)
    except InputError as exc:
        if exc.index is None:
            _fail(w, exc.problem)
        # A problem at a position is the volumes' (order, sign) unless the volumes alone pass: then the spectra's.
        field = "volumes"
        if spectra is not None:
            try:
                VolumeSet(volumes, energies, None, **units)
                field = "spectra"
            except InputError:
                pass
        _fail(_item(_at(w, field), exc.index), exc.problem)


_register("volume_set", VolumeSet, _volume_set_out, _volume_set_in)


def _quasi_harmonic_in(read: _Reader) -> QuasiHarmonic:
    volumes = read("volumes", _Object(VolumeSet))
    if volumes.spectra is None:
        _fail(_at(read.where, "volumes.spectra"), "a quasi-harmonic term needs the spectra, not null")
    eos = _choice(read, "eos", ("auto", *EOS_FORMS))
    values = {"scale": read("scale", NUMBER), "pressure": read("pressure", NUMBER), "name": read("name", _Optional(STR))}
    return _built(read.where, QuasiHarmonic, volumes=volumes, eos=eos, **values)


_QH_FIELDS = {"volumes": _Object(VolumeSet), "scale": NUMBER, "pressure": NUMBER, "eos": STR, "name": _Optional(STR)}
_register(
    QuasiHarmonic.kind,
    QuasiHarmonic,
    lambda q: {name: codec.encode(getattr(q, name)) for name, codec in _QH_FIELDS.items()},
    _quasi_harmonic_in,
)

_register_dataclass(
    "mixture",
    Mixture,
    {"components": _Tuple(_Object(Component)), "atoms": _Optional(NUMBER), "check": STR, "name": _Optional(STR)},
)

_WINDOW = _Tuple(_Optional(NUMBER), 2)
_PAIR = _Tuple(NUMBER, 2)
_NAMES = _Tuple(STR)
_TABLE = _Object(pd.DataFrame)

_register_dataclass(
    "fit_quality",
    FitQuality,
    {
        "verdict": STR,
        "level": NUMBER,
        "dof": INT,
        "chi2_red": NUMBER,
        "chi2_red_range": _PAIR,
        "runs": INT,
        "runs_expected": NUMBER,
        "runs_p_value": NUMBER,
        "lag1": NUMBER,
        "structured": BOOL,
        "worst": STR,
        "worst_range": _PAIR,
        "problems": _NAMES,
        "advice": _NAMES,
    },
)

_register_dataclass(
    "low_temperature_fit",
    LowTemperatureFit,
    {
        **{k: NUMBER for k in ("gamma", "gamma_stderr", "beta", "beta_stderr", "delta", "delta_stderr")},
        "theta_D0": NUMBER,
        "theta_D0_stderr": NUMBER,
        "covariance": _TABLE,
        "chi2_red": NUMBER,
        "scatter": NUMBER,
        "weighted": BOOL,
        "window": _WINDOW,
        "t_range": _PAIR,
        "n_points": INT,
        "atoms": FINITE,
        "terms": _NAMES,
        "table": _TABLE,
    },
)

_FIT_RESULT = {
    "model": _Object(Mixture),
    "params": _Map(NUMBER),
    "stderr": _Map(NUMBER),
    "varied": _NAMES,
    "fixed": _NAMES,
    "covariance": _TABLE,
    "correlation": _TABLE,
    "chi2_red": NUMBER,
    "scatter": NUMBER,
    "weighted": BOOL,
    "loss": STR,
    "f_scale": NUMBER,
    "window": _WINDOW,
    "n_points": INT,
    "residuals": _TABLE,
    "success": BOOL,
    "message": STR,
    "nfev": INT,
    "at_bound": _NAMES,
    "datasets": _NAMES,
}
_QUALITY = _Object(FitQuality)


def _fit_result_out(result: FitResult) -> dict:
    out = {name: codec.encode(getattr(result, name)) for name, codec in _FIT_RESULT.items()}
    out["quality"] = _QUALITY.encode(result.quality)
    return out


def _fit_result_in(read: _Reader) -> FitResult:
    result = FitResult(**{name: read(name, codec) for name, codec in _FIT_RESULT.items()})
    # The quality as it was judged when saved (a cached property of the result).
    result.__dict__["quality"] = read("quality", _QUALITY)
    return result


_register("fit_result", FitResult, _fit_result_out, _fit_result_in)


# --- tables -------------------------------------------------------------------------------------
_DTYPES = ("float64", "int64", "bool")


def _column_values(raw, dtype: str, where: str) -> np.ndarray:
    if dtype == "float64":
        return _Array(finite=False).decode(raw, where)
    codec = INT if dtype == "int64" else BOOL
    values = _Tuple(codec).decode(raw, where)
    try:
        return np.array(values, dtype=dtype)
    except OverflowError:
        _fail(where, "a whole number beyond the 64-bit range")


def _table_out(frame: pd.DataFrame) -> dict:
    columns = []
    for name in frame.columns:
        if not isinstance(name, str) or frame.columns.tolist().count(name) != 1:
            raise InputError(f"table column {name!r}: a session stores tables whose column names are distinct strings")
        dtype = str(frame[name].dtype)
        if dtype not in _DTYPES:
            raise InputError(f"table column {name!r} has dtype {dtype}; a session stores float64, int64 and bool columns")
        values = frame[name].to_numpy()
        encoded = _Array(finite=False).encode(values) if dtype == "float64" else values.tolist()
        columns.append({"name": name, "dtype": dtype, "values": encoded})
    index = frame.index
    default = isinstance(index, pd.RangeIndex) and index.start == 0 and index.step == 1 and index.name is None
    labels = None if default else [VALUE.encode(v) for v in index.tolist()]
    return {"columns": columns, "index": labels, "attrs": VALUE.encode(dict(frame.attrs))}


def _table_in(read: _Reader) -> pd.DataFrame:
    raw_columns = read("columns", _Tuple(_Pass()))
    data: dict[str, np.ndarray] = {}
    size = None
    for k, raw in enumerate(raw_columns):
        col = _sub(raw, _item(_at(read.where, "columns"), k))
        name = col("name", STR)
        dtype = col("dtype", STR)
        if dtype not in _DTYPES:
            _fail(_at(col.where, "dtype"), f"expected one of {', '.join(_DTYPES)}, not {dtype!r}")
        values = col("values", _Pass())
        col.finish()
        where = _at(col.where, "values")
        array = _column_values(values, dtype, where)
        if name in data:
            _fail(_at(col.where, "name"), f"column {name!r} appears twice")
        if size is not None and array.size != size:
            _fail(where, f"expected {size} values like the columns before, not {array.size}")
        size = array.size
        data[name] = array
    labels = read("index", _Optional(_Tuple(VALUE)))
    if labels is not None and size is not None and len(labels) != size:
        _fail(_at(read.where, "index"), f"expected {size} labels (one per row), not {len(labels)}")
    attrs = read("attrs", VALUE)
    if not isinstance(attrs, dict):
        _fail(_at(read.where, "attrs"), "expected a tagged map ({\"map\": {...}})")
    frame = pd.DataFrame(data, index=None if labels is None else list(labels))
    frame.attrs.update(attrs)
    return frame


_register("table", pd.DataFrame, _table_out, _table_in)


# --- spectra --------------------------------------------------------------------------------------
_SPECTRUM_KINDS = ("sampled", "modes", "histogram")
_LARGEST = 1e100  # mode counts beyond this have no meaning and would overflow the engine's sums
_ATOMS_SOURCES = ("given", "file", "integral")
_METHODS = ("auto", "fit", "extrapolate", "theta", "off")


def _spectrum_out(s: Spectrum) -> dict:
    p = s._parts()
    ms: ModeSet = p["modeset"]
    c: _Continuation = p["continuation"]
    if ms.extras or any(type(b) is not DebyeBranch for b in ms.branches):
        raise ModeheatError("this spectrum's engine holds parts a session cannot store (only Debye branches)")
    low_t = p["low_t"]
    return {
        "spectrum_kind": p["kind"],
        "name": p["name"],
        "unit": p["unit"],
        "atoms": _float_out(p["atoms"]),
        "atoms_source": p["atoms_source"],
        "mode_integral": _float_out(p["mode_integral"]),
        "raw_integral": _float_out(p["raw_integral"]),
        "low_t": low_t if isinstance(low_t, str) else _float_out(low_t),
        "frequency": ARRAY.encode(p["frequency"]),
        "density": ARRAY.encode(p["density"]),
        "partials": _Map(ARRAY).encode(p["partials"]),
        "continuation": {f.name: NUMBER.encode(getattr(c, f.name)) if f.name != "method" else c.method for f in fields(c)},
        "modeset": {
            "theta": ARRAY.encode(ms.theta),
            "weight": ARRAY.encode(ms.weight),
            "branches": [{"theta": _float_out(b.theta), "modes": _float_out(b.modes), "dim": b.dim} for b in ms.branches],
            "atoms": _float_out(ms.atoms),
        },
    }


def _choice(read: _Reader, key: str, choices: tuple) -> str:
    value = read(key, STR)
    if value not in choices:
        _fail(_at(read.where, key), f"expected one of {', '.join(map(repr, choices))}, not {value!r}")
    return value


def _same_length(where: str, array: np.ndarray, size: int, other: str) -> np.ndarray:
    if array.size != size:
        _fail(where, f"expected {size} numbers, as many as {other}, not {array.size}")
    return array


def _within(where: str, values: np.ndarray | float, lo: float, hi: float = math.inf) -> None:
    """Refuse values outside [lo, hi]: a stored spectrum held none, and the engine needs them."""
    bad = np.flatnonzero(~((np.asarray(values) >= lo) & (np.asarray(values) <= hi)))
    if bad.size:
        place = _item(where, int(bad[0])) if np.ndim(values) else where
        _fail(place, f"expected a value from {lo:g} to {hi:g}, not {float(np.ravel(values)[bad[0]])!r}")


def _spectrum_in(read: _Reader) -> Spectrum:
    w = read.where
    kind = _choice(read, "spectrum_kind", _SPECTRUM_KINDS)
    unit = _built(_at(w, "unit"), check_unit, unit=read("unit", STR))
    low_t = read("low_t", _Pass())
    if not (isinstance(low_t, str) and low_t in LOW_T_CHOICES):
        low_t = FINITE.decode(low_t, _at(w, "low_t"))  # a Debye temperature in K
    low_t = _built(_at(w, "low_t"), _check_low_t, low_t=low_t)
    frequency = read("frequency", ARRAY)
    _within(_at(w, "frequency"), frequency, 0.0)
    density = _same_length(_at(w, "density"), read("density", ARRAY), frequency.size, "frequency")
    _within(_at(w, "density"), density, 0.0)
    partials = read("partials", _Map(ARRAY))
    for name, values in partials.items():
        _same_length(_item(_at(w, "partials"), name), values, frequency.size, "frequency")
    cont = _sub(read("continuation", _Pass()), _at(w, "continuation"))
    continuation = _Continuation(
        method=_choice(cont, "method", _METHODS),
        cutoff=cont("cutoff", FINITE),
        a=cont("a", FINITE),
        b=cont("b", FINITE),
        theta=cont("theta", NUMBER),
    )
    cont.finish()
    engine = _sub(read("modeset", _Pass()), _at(w, "modeset"))
    theta = engine("theta", ARRAY)
    _within(_at(engine.where, "theta"), theta, *KELVIN_RANGE)
    weight = _same_length(_at(engine.where, "weight"), engine("weight", ARRAY), theta.size, "theta")
    # quadrature weights of the density's interpolation may be slightly negative
    _within(_at(engine.where, "weight"), weight, -_LARGEST, _LARGEST)
    branches = []
    for k, raw in enumerate(engine("branches", _Tuple(_Pass()))):
        b = _sub(raw, _item(_at(engine.where, "branches"), k))
        dim = b("dim", INT)
        if dim not in (1, 2, 3):
            _fail(_at(b.where, "dim"), f"expected 1, 2 or 3, not {dim}")
        branch = DebyeBranch(theta=b("theta", FINITE), modes=b("modes", FINITE), dim=dim)
        _within(_at(b.where, "theta"), branch.theta, *KELVIN_RANGE)
        _within(_at(b.where, "modes"), branch.modes, 0.0, _LARGEST)
        b.finish()
        branches.append(branch)
    modeset = ModeSet(theta, weight, branches=tuple(branches), atoms=engine("atoms", FINITE))
    _within(_at(engine.where, "atoms"), modeset.atoms, *ATOMS_RANGE)
    engine.finish()
    atoms = read("atoms", FINITE)
    _within(_at(w, "atoms"), atoms, *ATOMS_RANGE)
    _within(_at(w, "continuation.cutoff"), continuation.cutoff, 0.0, KELVIN_RANGE[1])
    return Spectrum._from_parts(
        kind=kind,
        frequency=frequency,
        density=density,
        partials=partials,
        unit=unit,
        atoms=atoms,
        name=read("name", _Optional(STR)),
        low_t=low_t,
        continuation=continuation,
        raw_integral=read("raw_integral", NUMBER),
        modeset=modeset,
        atoms_source=_choice(read, "atoms_source", _ATOMS_SOURCES),
        mode_integral=read("mode_integral", NUMBER),
    )


_register("spectrum", Spectrum, _spectrum_out, _spectrum_in)
_TAGS = {kind.cls: tag for tag, kind in _KINDS.items()}


def _same(x: object, y: object) -> bool:
    """Equal by value: arrays element by element, floats exactly (NaN equal to NaN)."""
    if isinstance(x, np.ndarray) or isinstance(y, np.ndarray):
        return (
            isinstance(x, np.ndarray)
            and isinstance(y, np.ndarray)
            and x.shape == y.shape
            and bool(np.array_equal(x, y, equal_nan=True))
        )
    if is_dataclass(x) and not isinstance(x, type):
        return type(x) is type(y) and all(_same(getattr(x, f.name), getattr(y, f.name)) for f in fields(x) if f.compare)
    if isinstance(x, dict):
        return isinstance(y, dict) and list(x) == list(y) and all(_same(x[k], y[k]) for k in x)
    if isinstance(x, tuple):
        return isinstance(y, tuple) and len(x) == len(y) and all(_same(a, b) for a, b in zip(x, y))
    if isinstance(x, float) and isinstance(y, float) and math.isnan(x):
        return math.isnan(y)
    return bool(x == y)


def spectrum_eq(a: Spectrum, b: object) -> bool:
    """``Spectrum.__eq__``: the same stored state — grids, densities, partials (in order),
    atom count and origin, continuation and engine modes — compared exactly."""
    if not isinstance(b, Spectrum):
        return NotImplemented
    pa, pb = a._parts(), b._parts()
    return all(_same(pa[k], pb[k]) for k in pa)


# --- documents ------------------------------------------------------------------------------------
def to_dict(obj: object) -> dict:
    """A JSON-safe document of a modeheat object (module docstring).

    Parameters
    ----------
    obj : Spectrum, Component (a QuasiHarmonic term included), Mixture, VolumeSet,
        pandas.DataFrame, FitResult, FitQuality or LowTemperatureFit

    Returns
    -------
    dict
        ``{"kind": ..., "schema": 1, ...}`` of JSON values only: ``json.dumps`` writes it.

    Raises
    ------
    InputError
        Another type of object, or a table with a column or ``attrs`` value a session
        cannot store.
    """
    tag = _TAGS.get(type(obj))
    if tag is None:
        raise InputError(
            f"cannot store a {type(obj).__name__} in a session; sessions hold spectra, model components, mixtures, "
            "volume sets, tables (DataFrames), fit results and low-temperature fit results"
        )
    return {"kind": tag, "schema": SCHEMA, **_KINDS[tag].encode(obj)}


def from_dict(document: Mapping, expect: type | None = None) -> Any:
    """Rebuild the object of a document written by :func:`to_dict`.

    Parameters
    ----------
    document : mapping — the document, e.g. from ``json.loads``
    expect : type, optional — the class (or a base class) the document must hold

    Raises
    ------
    InputError
        An unknown kind, a newer schema, another kind than `expect`, or a damaged
        document; the message names the place in the document.
    """
    return _decode(document, "", expect)


def _decode(doc: object, where: str, expect: type | None) -> Any:
    if not isinstance(doc, Mapping):
        _fail(where, f"expected a document (an object with a kind), not {_what(doc)}")
    read = _Reader(doc, where)
    tag = read("kind", STR)
    if tag not in _KINDS:
        _fail(_at(where, "kind"), f"unknown kind {tag!r}; known: {', '.join(_KINDS)}")
    schema = read("schema", INT)
    if schema > SCHEMA:
        _fail(
            _at(where, "schema"),
            f"written with schema {schema}, newer than this modeheat reads ({SCHEMA}); update modeheat to load it",
        )
    if schema < 1:
        _fail(_at(where, "schema"), f"expected a schema version from 1 to {SCHEMA}, not {schema}")
    kind = _KINDS[tag]
    if expect is not None and not issubclass(kind.cls, expect):
        _fail(where, f"expected a {expect.__name__} document, not kind {tag!r}")
    obj = kind.decode(read)
    read.finish()
    return obj


# --- session files --------------------------------------------------------------------------------
def save_session(path: str | os.PathLike, objects: Mapping[str, object], *, overwrite: bool = False) -> Path:
    """Write named objects to a JSON session file (atomically; the caution included).

    Parameters
    ----------
    path : str or os.PathLike — the file to write (``.json`` is customary)
    objects : mapping of str to object — what :func:`to_dict` stores, by name
    overwrite : bool — replace an existing file (by default that is an error)

    Returns
    -------
    pathlib.Path
        The file written.

    Raises
    ------
    InputError
        An object a session cannot store (the message names it), or a destination that
        exists or cannot be written (:func:`modeheat.io.tables.write_text_file`).
    """
    if not isinstance(objects, Mapping) or not all(isinstance(k, str) for k in objects):
        raise InputError("objects must be a dict of names (strings) to modeheat objects", path=path)
    documents = {}
    for name, obj in objects.items():
        try:
            documents[name] = to_dict(obj)
        except InputError as exc:
            raise InputError(f"{_item('objects', name)}: {exc.problem}", path=path) from None
    session = {"format": FORMAT, "schema": SCHEMA, "caution": CAUTION, "objects": documents}
    text = json.dumps(session, ensure_ascii=False, allow_nan=False, indent=1) + "\n"
    return write_text_file(path, text, overwrite=overwrite)


def _no_constant(name: str):
    raise InputError(f"{name} is not JSON; a session writes non-finite numbers as 'nan', 'inf' or '-inf'")


def load_session(path: str | os.PathLike) -> dict[str, Any]:
    """Read a session file written by :func:`save_session`.

    Parameters
    ----------
    path : str or os.PathLike — the file

    Returns
    -------
    dict
        The objects by name, in the order saved.

    Raises
    ------
    InputError
        The file cannot be read, is not JSON or not a session, has a newer schema, or
        holds a damaged document; the message names the file and the place (the line
        for invalid JSON).
    """
    text = _read_text(path)
    try:
        raw = json.loads(text, parse_constant=_no_constant)
    except json.JSONDecodeError as exc:
        raise InputError(f"not a session file: invalid JSON ({exc.msg}, column {exc.colno})", path=path, line=exc.lineno) from None
    except RecursionError:
        raise InputError("not a session file: JSON nested too deeply", path=path) from None
    except InputError as exc:
        raise InputError(exc.problem, path=path) from None
    try:
        if not isinstance(raw, dict) or raw.get("format") != FORMAT:
            raise InputError(f"not a session file: expected a JSON object with \"format\": {FORMAT!r}")
        read = _Reader(raw, "")
        read("format", STR)
        read("caution", STR)
        schema = read("schema", INT)
        if schema > SCHEMA:
            _fail("schema", f"written with schema {schema}, newer than this modeheat reads ({SCHEMA}); update modeheat")
        documents = read("objects", _Map(_Pass()))
        read.finish()
        return {name: _decode(doc, _item("objects", name), None) for name, doc in documents.items()}
    except InputError as exc:
        raise InputError(exc.problem, path=path) from None
