"""Strategies and the outcome check shared by tests/test_fuzz.py and tests/fuzz_campaign.py.

Not a test file.  The guarantee every fuzz target checks: a call either returns finite
results (NaN only where documented, with its NoDebyeTemperatureWarning; ±inf only as a documented
limit, e.g. θ_D(0) = ∞ of a gapped spectrum) or raises a
:class:`~modeheat.errors.ModeheatError`; never another exception type, never a numpy
RuntimeWarning.  The generated files and values are invented test shapes.
"""

from __future__ import annotations

import dataclasses
import json
import os
import traceback
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
from hypothesis import HealthCheck, settings
from hypothesis import strategies as st

import modeheat as mh
from modeheat.errors import ModeheatError, NoDebyeTemperatureWarning

__all__ = [
    "examples",
    "UnexpectedOutcome",
    "outcome",
    "checked_outcome",
    "dos_files",
    "cp_files",
    "write",
    "numbers",
    "models",
    "mixtures",
    "temperatures",
    "low_t_options",
    "heat_capacity_frames",
    "volume_tables",
    "volume_dos_files",
]


# tests/fuzz_campaign.py sets these: a log file to tally outcomes in (instead of failing at the
# first surprise) and a factor on every example count.
_CAMPAIGN_LOG = os.environ.get("MODEHEAT_FUZZ_LOG")
_SCALE = int(os.environ.get("MODEHEAT_FUZZ_SCALE", "1"))


def examples(n: int) -> settings:
    """Seeded settings with `n` examples (times the campaign's factor); no example database."""
    return settings(
        derandomize=True,
        database=None,
        deadline=None,
        max_examples=n * _SCALE,
        suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.filter_too_much],
    )


class UnexpectedOutcome(AssertionError):
    """A NaN result without a NoDebyeTemperatureWarning."""


# Result fields documented to be NaN in some cases (their docstrings say when).
_DOCUMENTED_NAN = {
    "LowTemperatureFit": {"delta", "delta_stderr", "chi2_red"},
    "FitResult": {"chi2_red"},
    "DebyeBreakdown": {"t3_below"},
    "InversionResult": {"band_low", "band_high", "gamma"},  # NaN with band="none" / electronic="none"
}


def _values(result) -> list[np.ndarray]:
    """Every numeric array or number a public result carries (documented NaN fields left out)."""
    if isinstance(result, pd.DataFrame):
        return [result[c].to_numpy(dtype=float) for c in result.columns]
    if isinstance(result, np.ndarray):
        return [result.astype(float)]
    if isinstance(result, (int, float, np.floating)):
        return [np.asarray(float(result))]
    if isinstance(result, mh.Spectrum):
        return [result.frequency, result.density, np.asarray(result.raw_integral)]
    if dataclasses.is_dataclass(result):
        out = []
        skip = _DOCUMENTED_NAN.get(type(result).__name__, set())
        for f in dataclasses.fields(result):
            if f.name in skip:
                continue
            v = getattr(result, f.name)
            if isinstance(v, (int, float, np.floating, np.ndarray)) and not isinstance(v, bool):
                out.append(np.asarray(v, dtype=float))
        return out
    return []


def outcome(call) -> str:
    """:func:`checked_outcome`; in a campaign, every outcome is logged and surprises do not raise."""
    if _CAMPAIGN_LOG is None:
        return checked_outcome(call)
    try:
        kind = checked_outcome(call)
    except Exception as exc:  # noqa: BLE001 — the campaign counts every kind of surprise
        frames = [f for f in traceback.extract_tb(exc.__traceback__) if Path(f.filename).parent.name == "modeheat"]
        where = f" [{Path(frames[-1].filename).name}:{frames[-1].lineno}]" if frames else ""
        kind = f"{type(exc).__name__}{where}: {str(exc).splitlines()[0][:120] if str(exc) else ''}"
    target = os.environ.get("PYTEST_CURRENT_TEST", "?").split("::")[-1].split(" ")[0]
    with open(_CAMPAIGN_LOG, "a", encoding="utf-8") as log:
        log.write(json.dumps({"target": target, "outcome": kind}) + "\n")
    return kind


def checked_outcome(call) -> str:
    """Run `call`: "ok", "warned" (NaN with a NoDebyeTemperatureWarning) or "rejected".

    A :class:`ModeheatError` is "rejected"; any other exception propagates, a numpy
    RuntimeWarning is raised as an error, and a NaN without that warning raises
    :class:`UnexpectedOutcome`.
    """
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        warnings.simplefilter("error", RuntimeWarning)
        try:
            result = call()
        except ModeheatError:
            return "rejected"
    # the only documented NaN: an effective Debye temperature that does not exist
    warned = any(issubclass(w.category, NoDebyeTemperatureWarning) for w in caught)
    bad = any(np.any(np.isnan(v)) for v in _values(result))
    if bad and not warned:
        raise UnexpectedOutcome(f"NaN without a NoDebyeTemperatureWarning: {result!r}")
    return "warned" if bad else "ok"


def _mostly(ordinary: st.SearchStrategy, rare: st.SearchStrategy, one_in: int) -> st.SearchStrategy:
    """`ordinary`, and `rare` once in `one_in` draws."""
    return st.integers(1, one_in).flatmap(lambda k: rare if k == 1 else ordinary)


# --- numbers ---------------------------------------------------------------------------------
_SPECIAL = [0.0, -0.0, 1e-320, 5e-324, 1e-200, 1e-100, 1e-30, 1e-8, 1e8, 1e30, 1e100, 1e200, 1e300, 1.7e308]

numbers = st.one_of(
    st.integers(-3, 50).map(float),
    st.floats(min_value=-1e3, max_value=1e3, allow_nan=False),
    st.sampled_from(_SPECIAL),
    st.sampled_from(_SPECIAL).map(lambda v: -v),
    st.floats(allow_nan=True, allow_infinity=True),
)
positive = st.one_of(
    st.floats(min_value=1e-3, max_value=1e4),
    st.sampled_from([1e-320, 1e-200, 1e-110, 1e-30, 1e-8, 1e8, 1e30, 1e100, 1e200, 1e300]),
)

_FORMATS = [repr, "{:g}".format, "{:.3e}".format, lambda v: str(int(v)) if np.isfinite(v) and abs(v) < 1e15 else repr(v)]


@st.composite
def _field(draw, value_strategy=numbers) -> str:
    v = draw(value_strategy)
    return draw(st.sampled_from(_FORMATS))(v) if draw(st.integers(0, 199)) else draw(
        st.sampled_from(["nan", "inf", "-inf", "", "x", "1,5", "1e", "--1", "0x10"])
    )


@st.composite
def _table(draw, headers: list[str], value_strategy) -> str:
    width = draw(_mostly(st.integers(2, 4), st.just(1), 10))
    rows = draw(st.integers(1, 10))
    sep = draw(st.sampled_from([" ", "\t", ", ", ";", "  "]))
    lines = []
    header = draw(st.sampled_from(headers))
    if header:
        lines.append(header)
    for _ in range(rows):
        n = width if draw(st.integers(0, 29)) else draw(st.integers(1, 5))
        lines.append(sep.join(draw(_field(value_strategy)) for _ in range(n)))
        if not draw(st.integers(0, 19)):
            lines.append(draw(st.sampled_from(["", "# comment", lines[-1]])))
    return draw(st.sampled_from(["\n", "\r\n"])).join(lines) + draw(st.sampled_from(["\n", ""]))


_DOS_HEADERS = [
    "",
    "# frequency (THz) density",
    "frequency (THz), total, A",
    "freq (meV) g",
    "w (cm-1)\tg",
    "frequency (K) density",
    "frequency (rad/s) density",
    "frequency () density",
    "frequency (THz) (x)",
    "a b c d",
]
_CP_HEADERS = [
    "",
    "T (K) C (J/(mol K))",
    "T (K), C (mJ/(mol K)), sigma (mJ/(mol K))",
    "T (K) C ()",
    "T () C (J/(mol K))",
    "T (K) C (J/(g K))",
    "T (K) C (cal/(mol-atom K)) sigma",
    "T C sigma",
]
_ascending = st.lists(st.floats(min_value=0, max_value=1e3), min_size=1, max_size=12).map(sorted)

@st.composite
def _plausible(draw, header: str, first: st.SearchStrategy, second: st.SearchStrategy) -> str:
    """An ascending first column and a second one, with a few extreme or repeated values mixed in."""
    n = draw(st.integers(2, 12))
    x = sorted(draw(st.lists(first, min_size=n, max_size=n)))
    y = draw(st.lists(second, min_size=n, max_size=n))
    for _ in range(draw(st.integers(0, 2))):
        i = draw(st.integers(0, n - 1))
        if draw(st.booleans()):
            x[i] = draw(numbers)
        else:
            y[i] = draw(numbers)
    if draw(st.booleans()):
        j = draw(st.integers(0, n - 1))
        x.insert(j, x[j])
        y.insert(j, y[j])
    fmt = draw(st.sampled_from(_FORMATS))
    return header + "\n" + "\n".join(f"{fmt(a)} {fmt(b)}" for a, b in zip(x, y)) + "\n"


_scale_free = _mostly(
    st.integers(0, 5000).map(lambda k: k / 100), st.sampled_from([0.0, 1e-320, 1e-200, 1e-30, 1e30, 1e300]), 12
)
dos_files = st.one_of(
    _table(_DOS_HEADERS, numbers),
    _plausible("# frequency (THz) density", _scale_free, _scale_free),
)
cp_files = st.one_of(
    _table(_CP_HEADERS, numbers),
    _plausible("T (K) C (J/(mol K))", _scale_free, _scale_free),
)
# --- volume sets ----------------------------------------------------------------------------------
_VOLUME_KEYS = ["# volume unit: A3", "# volume unit: cm3/mol", "# volume unit: litre", "# energy unit: kJ/mol",
                "# energy unit: Ry", "# energy unit: calorie", "# atoms: 1", "# atoms: 0", "# atoms: 2",
                "# frequency unit: THz", "# frequency unit: Hz", "# INVENTED: a fuzz table", "# volume unit:"]
_VOLUME_HEADERS = ["", "volume, energy, dos file", "volume (cm3/mol), energy (kJ/mol), dos file", "V () E () f",
                   "volume [A3] energy [Ry] file", "volume (x) energy dos"]
_VOLUME_DOS_NAMES = ["v1.txt", "v2.txt", "v3.txt", "v4.txt", "v5.txt", "fuzz_dos.txt", "missing.txt", "",
                     ".", "../v1.txt", "v 1.txt", "x" * 300]


@st.composite
def volume_tables(draw) -> str:
    """A volume-set table naming the DOS files :func:`volume_dos_files` writes (and others)."""
    lines = [draw(st.sampled_from(_VOLUME_KEYS)) for _ in range(draw(st.integers(0, 3)))]
    header = draw(st.sampled_from(_VOLUME_HEADERS))
    if header:
        lines.append(header)
    n = draw(_mostly(st.integers(4, 6), st.integers(0, 8), 6))
    volumes = sorted(draw(st.lists(st.floats(min_value=1.0, max_value=100.0), min_size=n, max_size=n)))
    energies = draw(st.lists(st.floats(min_value=-10.0, max_value=10.0), min_size=n, max_size=n))
    sep = draw(st.sampled_from([", ", ";", " ", "\t"]))
    fmt = draw(st.sampled_from(_FORMATS))
    for k in range(n):
        name = draw(_mostly(st.just(f"v{k % 5 + 1}.txt"), st.sampled_from(_VOLUME_DOS_NAMES), 8))
        v = draw(_mostly(st.just(fmt(volumes[k])), _field(), 10))
        e = draw(_mostly(st.just(fmt(energies[k])), _field(), 10))
        fields = [v, e, name][: draw(_mostly(st.just(3), st.integers(1, 4), 20))]
        lines.append(sep.join(fields))
    return "\n".join(lines) + "\n"


def volume_dos_files(folder: Path) -> None:
    """Five valid DOS files v1.txt … v5.txt in `folder` (invented ω² shapes), once."""
    for k in range(1, 6):
        path = folder / f"v{k}.txt"
        if not path.exists():
            f = np.linspace(0.0, 5.0 + 0.2 * k, 30)
            g = np.where(f <= 4.5 + 0.2 * k, f**2, 0.0)
            g = g * 3.0 / np.trapezoid(g, f)
            path.write_text("frequency (THz), total\n" + "".join(f"{x!r}, {y!r}\n" for x, y in zip(f.tolist(), g.tolist())),
                            encoding="utf-8")


low_t_options = _mostly(
    st.sampled_from(["fit", "off", "extrapolate", 300.0, 1.0]), st.sampled_from([1e-300, 1e300, -5.0, "bad"]), 6
)
temperatures = st.lists(
    st.one_of(st.floats(min_value=0, max_value=1e5), st.sampled_from([0.0, 1e-300, 1e-200, 1e-8, 1e8, 1e300])),
    min_size=1,
    max_size=6,
)


def write(folder: Path, text: str, name: str = "fuzz.txt") -> Path:
    """Write `text` to folder/name as UTF-8 bytes (line ends kept)."""
    path = folder / name
    path.write_bytes(text.encode("utf-8"))
    return path


# --- models ------------------------------------------------------------------------------------
_extreme = st.one_of(positive, st.sampled_from([0.0, -1.0, float("nan"), float("inf")]))


@st.composite
def models(draw):
    kind = draw(st.sampled_from(["debye", "sine", "einstein", "band", "electronic", "schottky", "dilatation"]))
    a, b = draw(_extreme), draw(_extreme)
    modes = draw(st.one_of(st.just(3.0), _extreme))
    dim = draw(st.sampled_from([1, 2, 3]))
    n = draw(_extreme)
    return {
        "debye": lambda: mh.Debye(a, modes=modes, dim=dim),
        "sine": lambda: mh.SineChain(a, modes=modes, dim=dim),
        "einstein": lambda: mh.Einstein(a, modes=modes),
        "band": lambda: mh.Band(a, b, modes=modes),
        "electronic": lambda: mh.Electronic(a),
        "schottky": lambda: mh.Schottky(a, g_ratio=b, n=n),
        "dilatation": lambda: mh.Dilatation(a),
    }[kind]


@st.composite
def mixtures(draw):
    """A callable building a component, a sum of components or a `solid`."""
    parts = draw(st.lists(models(), min_size=1, max_size=3))
    how = draw(st.sampled_from(["one", "sum", "solid"]))
    if how == "one":
        return parts[0]
    if how == "sum":
        return lambda: sum(p() for p in parts)
    atoms = draw(st.one_of(st.just(2.0), _extreme))
    return lambda: mh.solid(atoms, parts[0](), [p() for p in parts[1:]])


@st.composite
def heat_capacity_frames(draw) -> pd.DataFrame:
    """Measured-like T, C (and sometimes sigma): ascending, shared or extreme temperatures."""
    n = draw(st.integers(1, 12))
    kind = draw(st.sampled_from(["debye", "same", "extreme", "random"]))
    if kind == "same":
        T = np.full(n, draw(st.floats(min_value=0.5, max_value=20)))
    elif kind == "extreme":
        T = np.array(draw(st.lists(st.sampled_from([1e-300, 1e-200, 1e-8, 1.0, 1e8, 1e300]), min_size=n, max_size=n)))
    else:
        T = np.sort(np.array(draw(st.lists(st.floats(min_value=0.1, max_value=400), min_size=n, max_size=n))))
    if kind == "random":
        C = np.array(draw(st.lists(st.floats(min_value=0, max_value=100), min_size=n, max_size=n)))
    else:
        # an invented Debye-like solid: γT + βT³, capped at 3R
        C = np.minimum(1e-3 * T + 2e-4 * T**3 if np.all(T < 1e100) else np.full(n, 1.0), 24.9)
        C = C * (1 + 0.01 * np.array(draw(st.lists(st.floats(-1, 1), min_size=n, max_size=n))))
    frame = pd.DataFrame({"T": T, "C": C})
    if draw(st.booleans()):
        frame["sigma"] = np.maximum(0.01 * np.abs(C), draw(st.sampled_from([0.0, 1e-300, 1e-6])))
    return frame
