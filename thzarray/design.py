"""Design files: one TOML file that states the medium, plasma, filaments, what to observe.

The schema is documented in designs/README.md. Loading converts every quantity to SI
once (strings with units are parsed by :mod:`thzarray.units`) and builds the physics
objects. Validation reports every problem at once, each with its key path, the value
found and what is allowed; unknown keys are rejected with a did-you-mean suggestion.
"""

from __future__ import annotations

import difflib
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .filament import Filament
from .medium import Medium
from .plasma import Plasma
from .units import UnitError, parse_quantity

__all__ = ["Checker", "Design", "DesignError", "Grid", "MAX_GRID_POINTS", "SCHEMA",
           "Spec", "load_design", "parse_design", "read_toml", "suggest"]

# Largest observation grid a design may request (points x frequencies); larger requests
# are refused before any memory is allocated.
MAX_GRID_POINTS = 50_000_000


class DesignError(ValueError):
    """A design file with problems; ``problems`` lists them, one line each."""

    def __init__(self, problems):
        self.problems = list(problems)
        super().__init__("\n".join(self.problems))


@dataclass(frozen=True)
class Spec:
    """One key of the schema."""

    kind: str                 # a units.DIMENSIONS kind, or str/int/bool/choice/vector/...
    default: object = None
    required: bool = False
    low: float | None = None
    high: float | None = None
    low_open: bool = False
    choices: tuple = ()
    doc: str = ""


_Q = Spec  # short alias for the table below

SCHEMA: dict[str, dict[str, Spec]] = {
    "design": {
        "name": _Q("str", required=True, doc="short name used in titles and file names"),
        "description": _Q("str", "", doc="free text"),
    },
    "medium": {
        "kind": _Q("choice", "air", choices=("air", "vacuum", "custom"),
                   doc="air (Ciddor + ITU-R P.453), vacuum, or custom indices"),
        "temperature": _Q("temperature", 15.0, low=-40, high=100, doc="air temperature"),
        "pressure": _Q("pressure", 101325.0, low=1e4, high=1.2e5, doc="total pressure"),
        "relative_humidity": _Q("fraction", 0.0, low=0.0, high=1.0, doc="0 to 100 %"),
        "co2": _Q("fraction", 450e-6, low=0.0, high=2e-3, doc="CO2 fraction, e.g. '450 ppm'"),
        "laser_wavelength": _Q("length", 800e-9, low=0.3e-6, high=1.7e-6,
                               doc="vacuum wavelength of the driving laser"),
        "n_group": _Q("number", None, low=1.0, high=2.0, doc="custom: optical group index"),
        "n_thz": _Q("number", None, low=1.0, high=4.0, doc="custom: THz phase index"),
    },
    "plasma": {
        "electron_density": _Q("density", required=True, low=1e18, high=1e26),
        "collision_rate": _Q("rate", required=True, low=0.0, high=1e15),
        "pulse_duration": _Q("time", 50e-15, low=1e-15, high=1e-11, doc="intensity FWHM"),
        "peak_intensity": _Q("intensity", 5e17, low=1e12, high=1e21),
        "radius": _Q("length", 50e-6, low=1e-7, high=1e-2, doc="plasma core radius"),
    },
    "filament": {
        "length": _Q("length", required=True, low=0.0, high=1e3, low_open=True),
        "start": _Q("vector:length", (0.0, 0.0, 0.0), doc="[x, y, z]"),
        "axis": _Q("vector:number", (0.0, 0.0, 1.0), doc="[x, y, z], normalised"),
        "delay": _Q("time", 0.0, low=-1e-6, high=1e-6),
        "weight": _Q("number", 1.0, low=-1e6, high=1e6),
        "profile_z": _Q("list:length", None, doc="sample positions from the start"),
        "profile_w": _Q("list:number", None, doc="longitudinal weights at profile_z"),
    },
    "layout": {
        "kind": _Q("choice", required=True,
                   choices=("line", "grid", "hexagonal", "ring", "random", "csv"),
                   doc="array builder"),
        "length": _Q("length", None, low=0.0, low_open=True, high=1e3, doc="column length"),
        "count": _Q("int", None, low=1, high=4096, doc="line, ring, random: columns"),
        "shape": _Q("list:int", None, doc="grid: [nx, ny]"),
        "rings": _Q("int", None, low=0, high=30, doc="hexagonal: rings around the centre"),
        "spacing": _Q("length", None, low=0.0, low_open=True, high=10.0, doc="pitch"),
        "radius": _Q("length", None, low=0.0, low_open=True, high=10.0, doc="ring, random"),
        "min_separation": _Q("length", 0.0, low=0.0, high=10.0, doc="random"),
        "seed": _Q("int", 0, low=0, high=2**32 - 1, doc="random: generator seed"),
        "center_column": _Q("bool", False, doc="ring: add a column at the centre"),
        "center": _Q("vector:length", (0.0, 0.0, 0.0)),
        "axis": _Q("vector:number", (0.0, 0.0, 1.0)),
        "csv": _Q("str", None, doc="csv: layout table (path relative to the design)"),
    },
    "steering": {
        "toward": _Q("list:angle", None, doc="[theta, phi] target direction"),
        "method": _Q("choice", "true-time", choices=("true-time", "phase-only", "optimise"),
                     doc="true-time delays, delays folded into one period, or optimised"),
        "design_freq": _Q("frequency", None, low=0.0, low_open=True, high=1e14,
                          doc="phase-only: design frequency"),
        "max_delay": _Q("time", None, low=0.0, low_open=True, high=1e-6,
                        doc="optimise: largest realisable delay"),
        "receiver_radius": _Q("length", None, low=0.0, low_open=True, high=1e3,
                              doc="target aperture radius (with receiver_distance)"),
        "receiver_distance": _Q("length", None, low=0.0, low_open=True, high=1e6),
        "band": _Q("list:frequency", None, doc="[low, high] band for gains and optimisation"),
        "band_points": _Q("int", 9, low=2, high=1024),
    },
    "tolerance": {
        "timing_jitter": _Q("time", 0.0, low=0.0, high=1e-9, doc="rms timing error"),
        "transverse_error": _Q("length", 0.0, low=0.0, high=1.0, doc="rms placement error"),
        "longitudinal_error": _Q("length", 0.0, low=0.0, high=10.0, doc="rms onset error"),
        "shots": _Q("int", 1000, low=2, high=10**6, doc="Monte Carlo builds"),
        "percentile": _Q("number", 10.0, low=0.0, high=100.0),
        "seed": _Q("int", 0, low=0, high=2**32 - 1),
    },
    "observe": {
        "freq": _Q("grid:frequency", required=True, low=0.0, low_open=True, high=1e14,
                   doc="a list, or {start, stop, points}"),
        "theta": _Q("grid:angle", {"start": 0.0, "stop": 0.2, "points": 201}, low=0.0,
                    high=math.pi, doc="polar angles"),
        "phi": _Q("grid:angle", {"start": 0.0, "stop": 2 * math.pi, "points": 73},
                  low=-10 * math.pi, high=10 * math.pi, doc="azimuths"),
    },
    "cone": {
        "target_angle": _Q("angle", None, low=0.0, high=math.pi / 2, low_open=True,
                           doc="wanted cone angle for the design chart"),
        "band": _Q("list:frequency", None, doc="[low, high] detection band"),
        "lengths": _Q("grid:length", {"start": 0.01, "stop": 2.0, "points": 200},
                      low=0.0, low_open=True, high=1e3, doc="plasma lengths of the chart"),
    },
    "receiver": {
        "kind": _Q("choice", "narrowband", choices=("narrowband", "broadband"),
                   doc="narrowband (one linear polarization) or broadband power detector"),
        "center_freq": _Q("frequency", None, low=0.0, low_open=True, high=1e14),
        "bandwidth": _Q("frequency", None, low=0.0, low_open=True, high=1e14),
        "polarization": _Q("vector:number", (1.0, 0.0, 0.0), doc="narrowband: [x, y, z]"),
        "area": _Q("area", None, low=0.0, low_open=True, high=1.0, doc="effective area"),
        "beam_waist": _Q("length", None, low=0.0, low_open=True, high=1.0,
                         doc="Gaussian acceptance beam waist (1/e^2 intensity radius)"),
        "response_csv": _Q("str", None, doc="broadband: CSV of the spectral response"),
        "band_points": _Q("int", 11, low=2, high=4096, doc="frequencies sampling the band"),
    },
    "plane": {
        "distance": _Q("length", required=True, low=0.0, low_open=True, high=1e5,
                       doc="distance of the plane's centre from origin along normal"),
        "normal": _Q("vector:number", (0.0, 0.0, 1.0)),
        "origin": _Q("vector:length", (0.0, 0.0, 0.0)),
        "x": _Q("grid:length", {"start": -0.1, "stop": 0.1, "points": 81}, low=-1e4, high=1e4),
        "y": _Q("grid:length", {"start": -0.1, "stop": 0.1, "points": 81}, low=-1e4, high=1e4),
    },
    "budget": {
        "distances": _Q("grid:length", {"start": 1.0, "stop": 50.0, "points": 50},
                        low=0.0, low_open=True, high=1e6),
        "relative_humidity": _Q("list:fraction", (0.0, 0.5, 1.0), low=0.0, high=1.0),
        "theta": _Q("angle", None, low=0.0, high=math.pi,
                    doc="receiver direction; default the cone angle at the band centre"),
        "phi": _Q("angle", 0.0, low=-10 * math.pi, high=10 * math.pi),
    },
    "outputs": {
        "formats": _Q("list:str", ("png", "html", "csv"),
                      doc="any of png, pdf, html, csv, netcdf"),
    },
}

_GRID_KEYS = ("start", "stop", "points")
_OUTPUT_FORMATS = ("png", "pdf", "html", "csv", "netcdf")
_MAX_FILAMENTS = 4096


@dataclass(frozen=True, eq=False)
class Grid:
    """Observation coordinates (SI): freq (Hz), theta and phi (rad), 1-D arrays."""

    freq: np.ndarray
    theta: np.ndarray
    phi: np.ndarray


@dataclass(frozen=True, eq=False)
class Design:
    """A validated design, everything in SI units."""

    name: str
    description: str
    medium: Medium
    plasma: Plasma | None
    sources: tuple
    grid: Grid
    cone_target: float | None = None
    cone_band: tuple | None = None
    cone_lengths: np.ndarray | None = None
    formats: tuple = ("png", "html", "csv")
    receiver: object = None
    band: np.ndarray | None = None
    plane: dict | None = None
    budget: dict | None = None
    steering: dict | None = None
    tolerance: dict | None = None
    path: Path | None = None
    raw: dict = field(default_factory=dict, repr=False)


def suggest(key, known):
    """' (did you mean ...?)' for the closest known name, or ''."""
    close = difflib.get_close_matches(key, known, n=1, cutoff=0.6)
    return f" (did you mean {close[0]!r}?)" if close else ""


def _fmt(value):
    text = repr(value)
    return text if len(text) < 60 else text[:57] + "..."


class Checker:
    """Collects problems (one line each: key path, value found, what is allowed)."""

    def __init__(self):
        self.problems: list[str] = []

    def fail(self, path, value, allowed):
        self.problems.append(f"{path}: {_fmt(value)} is not allowed; allowed: {allowed}")

    def _range(self, spec, unit):
        parts = []
        if spec.low is not None:
            parts.append(f"{'>' if spec.low_open else '>='} {spec.low:g}")
        if spec.high is not None:
            parts.append(f"<= {spec.high:g}")
        u = f" {unit}" if unit else ""
        return " and ".join(parts) + u if parts else "finite values"

    def scalar(self, path, value, spec, kind):
        from .units import DIMENSIONS

        try:
            out = parse_quantity(value, kind)
        except UnitError as exc:
            self.problems.append(f"{path}: {exc}")
            return None
        unit = DIMENSIONS[kind][1]
        if kind == "angle" and isinstance(value, str):
            shown = f"{_fmt(value)} (= {out:.6g} rad)"
        else:
            shown = _fmt(value)
        bad = ((spec.low is not None and (out <= spec.low if spec.low_open else out < spec.low))
               or (spec.high is not None and out > spec.high))
        if bad:
            self.problems.append(f"{path}: {shown} is out of range; allowed: "
                                 f"{self._range(spec, unit)}")
            return None
        return out

    def value(self, path, value, spec):
        kind = spec.kind
        if kind == "str":
            if not isinstance(value, str):
                self.fail(path, value, "a string")
                return None
            return value
        if kind == "int":
            if not isinstance(value, int) or isinstance(value, bool) or not (
                    spec.low <= value <= spec.high):
                self.fail(path, value, f"a whole number from {spec.low:g} to {spec.high:g}")
                return None
            return value
        if kind == "bool":
            if not isinstance(value, bool):
                self.fail(path, value, "true or false")
                return None
            return value
        if kind == "list:int":
            if (not isinstance(value, list) or not value
                    or not all(isinstance(v, int) and not isinstance(v, bool) and 1 <= v <= 4096
                               for v in value)):
                self.fail(path, value, "a list of whole numbers from 1 to 4096")
                return None
            return tuple(value)
        if kind == "choice":
            if value not in spec.choices:
                self.fail(path, value, "one of " + ", ".join(spec.choices))
                return None
            return value
        if kind.startswith("vector:"):
            if not isinstance(value, list) or len(value) != 3:
                self.fail(path, value, "a list of three values [x, y, z]")
                return None
            sub = kind.split(":", 1)[1]
            out = [self.scalar(f"{path}[{i}]", v, Spec(sub), sub) for i, v in enumerate(value)]
            return None if any(o is None for o in out) else tuple(out)
        if kind.startswith("list:"):
            sub = kind.split(":", 1)[1]
            if not isinstance(value, list) or not value:
                self.fail(path, value, "a non-empty list")
                return None
            if sub == "str":
                if not all(isinstance(v, str) for v in value):
                    self.fail(path, value, "a list of strings")
                    return None
                return tuple(value)
            out = [self.scalar(f"{path}[{i}]", v, spec, sub) for i, v in enumerate(value)]
            return None if any(o is None for o in out) else np.array(out)
        if kind.startswith("grid:"):
            return self.grid(path, value, spec, kind.split(":", 1)[1])
        return self.scalar(path, value, spec, kind)

    def grid(self, path, value, spec, sub):
        if isinstance(value, list):
            return self.value(path, value, Spec(f"list:{sub}", low=spec.low, high=spec.high,
                                                low_open=spec.low_open))
        if not isinstance(value, dict):
            self.fail(path, value, "a list of values or a table {start, stop, points}")
            return None
        unknown = [k for k in value if k not in _GRID_KEYS]
        for k in unknown:
            self.problems.append(f"{path}.{k}: unknown key{suggest(k, _GRID_KEYS)}; "
                                 f"allowed: a grid table of exactly {', '.join(_GRID_KEYS)}")
        missing = [] if unknown else [k for k in _GRID_KEYS if k not in value]
        for k in missing:
            self.problems.append(f"{path}.{k}: missing; allowed: a grid needs start, stop, "
                                 "points")
        if unknown or missing:
            return None
        start = self.scalar(f"{path}.start", value["start"], spec, sub)
        stop = self.scalar(f"{path}.stop", value["stop"], spec, sub)
        points = value["points"]
        if not isinstance(points, int) or isinstance(points, bool) or not 1 <= points <= 10**7:
            self.fail(f"{path}.points", points, "a whole number from 1 to 10000000")
            return None
        if start is None or stop is None:
            return None
        if points > 1 and stop <= start:
            self.fail(f"{path}.stop", value["stop"], f"a value above start ({value['start']!r})")
            return None
        return np.linspace(start, stop, points)


def _section(checker, data, name, required=False):
    table = data.get(name)
    if table is None:
        if required:
            checker.problems.append(f"{name}: missing section; allowed: a [{name}] table")
        return None
    if not isinstance(table, dict):
        checker.fail(name, table, f"a [{name}] table")
        return None
    spec = SCHEMA[name]
    out = {}
    for key in table:
        if key not in spec:
            checker.problems.append(f"{name}.{key}: unknown key{suggest(key, list(spec))}; "
                                    f"allowed: {', '.join(spec)}")
    for key, s in spec.items():
        if key in table:
            out[key] = checker.value(f"{name}.{key}", table[key], s)
        elif s.required:
            checker.problems.append(f"{name}.{key}: missing; allowed: {s.kind} value"
                                    f"{' (' + s.doc + ')' if s.doc else ''}")
            out[key] = None
        elif isinstance(s.default, dict):
            out[key] = checker.value(f"{name}.{key}", s.default, s)
        else:
            out[key] = s.default
    return out


def _build(checker, path, builder, *args, **kwargs):
    """Call a physics constructor; its ValueError becomes a problem at ``path``."""
    try:
        return builder(*args, **kwargs)
    except ValueError as exc:
        checker.problems.append(f"{path}: {exc}")
        return None


def _medium(checker, m):
    if m is None:
        return Medium.air()
    if any(m[k] is None for k in ("temperature", "pressure", "relative_humidity", "co2",
                                  "laser_wavelength")):
        return None
    if m["kind"] == "vacuum":
        return Medium.vacuum()
    if m["kind"] == "custom":
        if m["n_group"] is None or m["n_thz"] is None:
            checker.problems.append("medium: kind 'custom' needs n_group and n_thz; allowed: "
                                    "both given")
            return None
        return _build(checker, "medium", Medium, m["n_group"], m["n_thz"])
    return _build(checker, "medium", Medium.air, temperature_c=m["temperature"],
                  pressure_hpa=m["pressure"] / 100.0, relative_humidity=m["relative_humidity"],
                  co2_ppm=m["co2"] * 1e6, laser_wavelength_m=m["laser_wavelength"])


def _filament(checker, path, f):
    if f is None or any(f[k] is None for k in ("length", "start", "axis", "delay", "weight")):
        return None
    profile = None
    if (f["profile_z"] is None) != (f["profile_w"] is None):
        checker.problems.append(f"{path}: profile_z and profile_w go together; allowed: both "
                                "or neither")
        return None
    if f["profile_z"] is not None:
        profile = (f["profile_z"], f["profile_w"])
    return _build(checker, path, Filament, f["length"], start=f["start"], axis=f["axis"],
                  delay=f["delay"], weight=f["weight"], profile=profile)


_LAYOUT_NEEDS = {"line": ("count", "spacing", "length"), "grid": ("shape", "spacing", "length"),
                 "hexagonal": ("rings", "spacing", "length"), "ring": ("count", "radius", "length"),
                 "random": ("count", "radius", "length"), "csv": ("csv",)}


def _layout(checker, lay, path, raw):
    """Filaments from a [layout] builder (None on problems, already reported)."""
    from . import layouts

    if lay is None or lay.get("kind") is None:
        return None
    kind = lay["kind"]
    missing = [k for k in _LAYOUT_NEEDS[kind] if k not in raw]
    for k in missing:
        checker.problems.append(f"layout.{k}: missing; allowed: layout kind {kind!r} needs "
                                + ", ".join(_LAYOUT_NEEDS[kind]))
    invalid = any(lay.get(k) is None for k in _LAYOUT_NEEDS[kind] + ("center", "axis"))
    if missing or invalid:
        return None
    common = dict(center=lay["center"], axis=lay["axis"])
    if kind == "csv":
        csv = Path(lay["csv"])
        if not csv.is_absolute() and path is not None:
            csv = Path(path).parent / csv
        from .tables import read_layout

        return _build(checker, "layout.csv", read_layout, csv)
    if kind == "grid" and len(lay["shape"]) != 2:
        checker.fail("layout.shape", list(lay["shape"]), "[nx, ny]")
        return None
    if kind == "grid" and lay["shape"][0] * lay["shape"][1] > _MAX_FILAMENTS:
        checker.fail("layout.shape", list(lay["shape"]), f"at most {_MAX_FILAMENTS} columns")
        return None
    calls = {
        "line": lambda: layouts.line(lay["count"], lay["spacing"], lay["length"], **common),
        "grid": lambda: layouts.grid(tuple(lay["shape"]), lay["spacing"], lay["length"], **common),
        "hexagonal": lambda: layouts.hexagonal(lay["rings"], lay["spacing"], lay["length"],
                                               **common),
        "ring": lambda: layouts.ring(lay["count"], lay["radius"], lay["length"],
                                     center_column=lay["center_column"], **common),
        "random": lambda: layouts.random_aperture(lay["count"], lay["radius"],
                                                  lay["min_separation"], lay["length"],
                                                  seed=lay["seed"], **common),
    }
    return _build(checker, "layout", calls[kind])


def _check_steering(checker, st, raw):
    toward = st.get("toward")
    if toward is not None:
        if len(toward) != 2:
            checker.fail("steering.toward", raw.get("toward"), "[theta, phi], e.g. "
                         "['5 deg', '0 deg']")
        elif not 0 <= toward[0] <= math.pi:
            checker.fail("steering.toward[0]", raw["toward"][0], "a polar angle from 0 to 180 deg")
    if (st.get("receiver_radius") is None) != (st.get("receiver_distance") is None):
        checker.problems.append("steering: receiver_radius and receiver_distance go together; "
                                "allowed: both or neither")
    elif st.get("receiver_radius") is not None and st["receiver_radius"] >= st["receiver_distance"]:
        checker.fail("steering.receiver_radius", raw.get("receiver_radius"),
                     "less than receiver_distance")
    if st.get("method") == "phase-only" and st.get("design_freq") is None:
        checker.problems.append("steering.design_freq: missing; allowed: method 'phase-only' "
                                "needs a design frequency, e.g. '0.3 THz'")
    band = st.get("band")
    if band is not None and (band.size != 2 or band[1] <= band[0]):
        checker.fail("steering.band", raw.get("band"), "[low, high] with low < high")


def _receiver(checker, data, path):
    """The receiver object and the frequencies sampling its band (None, None if absent)."""
    if "receiver" not in data:
        return None, None
    r = _section(checker, data, "receiver")
    if r is None or r["center_freq"] is None or r["bandwidth"] is None:
        if r is not None and (r["center_freq"] is None or r["bandwidth"] is None):
            checker.problems.append("receiver: needs center_freq and bandwidth; allowed: both "
                                    "given, e.g. '0.1 THz' and '10 GHz'")
        return None, None
    lo, hi = r["center_freq"] - r["bandwidth"] / 2, r["center_freq"] + r["bandwidth"] / 2
    if lo <= 0:
        checker.problems.append(f"receiver.bandwidth: {data['receiver']['bandwidth']!r} is not "
                                "allowed; allowed: less than twice center_freq")
        return None, None
    band = np.linspace(lo, hi, r["band_points"] or 11)
    from .detectors import NarrowbandReceiver
    from .tables import response_detector

    if r["kind"] == "broadband":
        if r["response_csv"] is None:
            checker.problems.append("receiver.response_csv: missing; allowed: a CSV file of "
                                    "the detector's spectral response (broadband kind)")
            return None, None
        if r["area"] is None:
            checker.problems.append("receiver.area: missing; allowed: the broadband detector's "
                                    "effective area, e.g. '1 cm^2'")
            return None, None
        csv = Path(r["response_csv"])
        if not csv.is_absolute() and path is not None:
            csv = Path(path).parent / csv
        return _build(checker, "receiver.response_csv", response_detector, csv,
                      area=r["area"]), band
    if (r["area"] is None) == (r["beam_waist"] is None):
        checker.problems.append("receiver: give exactly one of area and beam_waist; allowed: "
                                "e.g. area = '1 mm^2' or beam_waist = '5 mm'")
        return None, None
    if r["polarization"] is None:
        return None, None
    return _build(checker, "receiver", NarrowbandReceiver, r["center_freq"], r["bandwidth"],
                  polarization=r["polarization"], area=r["area"], beam_waist=r["beam_waist"]), band


def parse_design(data: dict, path: Path | None = None) -> Design:
    """Validate a parsed TOML document and build the design (raises DesignError)."""
    checker = Checker()
    if not isinstance(data, dict):
        raise DesignError(["design: not a TOML table"])
    known = set(SCHEMA) | {"filaments"}
    for key in ("layout", "steering", "tolerance", "receiver", "plane"):
        if key in data and not isinstance(data[key], dict):
            checker.fail(key, data[key], f"a [{key}] table")
    for key in data:
        if key not in known:
            checker.problems.append(f"{key}: unknown section{suggest(key, sorted(known))}; "
                                    f"allowed: {', '.join(sorted(known))}")
    head = _section(checker, data, "design", required=True)
    medium = _medium(checker, _section(checker, data, "medium"))
    plasma_t = _section(checker, data, "plasma")
    plasma = None
    if plasma_t is not None and all(v is not None for v in plasma_t.values()):
        lw = (data.get("medium") or {}).get("laser_wavelength", 800e-9)
        try:
            lw = parse_quantity(lw, "length")
        except UnitError:
            lw = 800e-9  # already reported under medium.laser_wavelength
        plasma = _build(checker, "plasma", Plasma, laser_wavelength=lw, **plasma_t)
    sources = []
    given = [k for k in ("filament", "filaments", "layout") if k in data]
    if len(given) > 1:
        checker.problems.append(f"{given[1]}: both [{given[0]}] and [{given[1]}] given; "
                                "allowed: one of [filament], [[filaments]], [layout]")
    elif "layout" in data and isinstance(data["layout"], dict):
        sources += list(_layout(checker, _section(checker, data, "layout"), path,
                                data["layout"]) or [None])
    elif "filament" in data:
        sources.append(_filament(checker, "filament", _section(checker, data, "filament")))
    elif "filaments" in data:
        items = data["filaments"]
        if not isinstance(items, list) or not items:
            checker.fail("filaments", items, "a non-empty array of tables [[filaments]]")
        elif len(items) > _MAX_FILAMENTS:
            checker.fail("filaments", f"{len(items)} filaments", f"at most {_MAX_FILAMENTS}")
        else:
            for i, item in enumerate(items):
                sub = Checker()
                table = _section(sub, {"filament": item}, "filament")
                checker.problems += [p.replace("filament", f"filaments[{i}]", 1)
                                     for p in sub.problems]
                sources.append(_filament(checker, f"filaments[{i}]", table))
    else:
        checker.problems.append("filament: missing; allowed: a [filament] table or "
                                "[[filaments]] tables")
    observe = _section(checker, data, "observe", required=True)
    grid = None
    if observe is not None and all(observe[k] is not None for k in ("freq", "theta", "phi")):
        size = observe["freq"].size * observe["theta"].size * observe["phi"].size
        if size > MAX_GRID_POINTS:
            checker.fail("observe", f"{size} grid points",
                         f"at most {MAX_GRID_POINTS} (freq x theta x phi)")
        else:
            grid = Grid(observe["freq"], observe["theta"], observe["phi"])
    cone = _section(checker, {"cone": data.get("cone", {})}, "cone") or {}
    band = cone.get("band")
    if band is not None and (band.size != 2 or band[1] <= band[0]):
        checker.fail("cone.band", data["cone"]["band"], "[low, high] with low < high")
    outputs = _section(checker, {"outputs": data.get("outputs", {})}, "outputs") or {}
    formats = outputs.get("formats") or ()
    for fmt in formats:
        if fmt not in _OUTPUT_FORMATS:
            checker.problems.append(f"outputs.formats: {fmt!r} is not allowed{suggest(fmt, _OUTPUT_FORMATS)}; "
                                    f"allowed: {', '.join(_OUTPUT_FORMATS)}")
    receiver, band = _receiver(checker, data, path)
    steering = None
    if isinstance(data.get("steering"), dict):
        steering = _section(checker, data, "steering")
        if steering is not None:
            _check_steering(checker, steering, data["steering"])
    tol = None
    if isinstance(data.get("tolerance"), dict):
        tol = _section(checker, data, "tolerance")
    plane = _section(checker, data, "plane") if "plane" in data else None
    budget = _section(checker, {"budget": data.get("budget", {})}, "budget")
    if checker.problems:
        raise DesignError(checker.problems)
    if any(s is None for s in sources) or medium is None or grid is None or head is None:
        raise DesignError(["design: incomplete (see the other messages)"])
    lengths = cone.get("lengths")
    return Design(name=head["name"], description=head["description"], medium=medium,
                  plasma=plasma, sources=tuple(sources), grid=grid,
                  cone_target=cone.get("target_angle"),
                  cone_band=None if band is None else (float(band[0]), float(band[1])),
                  cone_lengths=lengths, formats=tuple(formats), receiver=receiver, band=band,
                  plane=plane, budget=budget, steering=steering, tolerance=tol, path=path,
                  raw=data)


def read_toml(path) -> dict:
    """Parse a TOML file; unreadable or invalid files raise DesignError (one line)."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise DesignError([f"{path}: cannot be read ({exc.strerror}); allowed: a readable "
                           "TOML file"]) from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError([f"{path}: not valid TOML ({exc})"]) from None


def load_design(path) -> Design:
    """Read and validate a TOML design file (raises DesignError with every problem)."""
    return parse_design(read_toml(path), Path(path))
