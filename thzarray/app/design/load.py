"""Design files: one TOML file that states the medium, plasma, filaments, what to observe.

The schema is :mod:`thzarray.app.design.schema` (documented in designs/README.md). Loading
converts every quantity to SI once (strings with units are parsed by
:mod:`thzarray.app.units`) and builds the physics objects. Validation reports every
problem at once, each with its key path, the value found and what is allowed; unknown keys
are rejected with a did-you-mean suggestion.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from thzarray.air.medium import Medium
from thzarray.app.design.checker import Checker, DesignError, read_toml, suggest
from thzarray.app.design.schema import (
    MAX_FILAMENTS,
    MAX_GRID_POINTS,
    OUTPUT_FORMATS,
    SCHEMA,
)
from thzarray.app.units import UnitError, parse_quantity
from thzarray.source.filament import Filament
from thzarray.source.plasma import Plasma

__all__ = ["Design", "Grid", "load_design", "parse_design"]


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
    filaments: tuple
    grid: Grid
    cone_target: float | None = None
    cone_band: tuple | None = None
    cone_lengths: np.ndarray | None = None
    formats: tuple = ("png", "html", "csv")
    receiver: object = None
    receiver_band: np.ndarray | None = None
    plane: dict | None = None
    budget: dict | None = None
    steering: dict | None = None
    tolerance: dict | None = None
    path: Path | None = None
    raw: dict = field(default_factory=dict, repr=False)


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
                  pressure=m["pressure"], relative_humidity=m["relative_humidity"],
                  co2_fraction=m["co2"], laser_wavelength=m["laser_wavelength"])


def _filament(checker, path, f):
    if f is None or any(f[k] is None for k in ("length", "start", "axis", "delay", "amplitude")):
        return None
    profile = None
    if (f["profile_z"] is None) != (f["profile_w"] is None):
        checker.problems.append(f"{path}: profile_z and profile_w go together; allowed: both "
                                "or neither")
        return None
    if f["profile_z"] is not None:
        profile = (f["profile_z"], f["profile_w"])
    return _build(checker, path, Filament, f["length"], start=f["start"], axis=f["axis"],
                  delay=f["delay"], amplitude=f["amplitude"], profile=profile)


_LAYOUT_NEEDS = {"line": ("count", "spacing", "length"), "grid": ("shape", "spacing", "length"),
                 "hexagonal": ("rings", "spacing", "length"), "ring": ("count", "radius", "length"),
                 "random": ("count", "radius", "length"), "csv": ("csv",)}


def _layout(checker, lay, path, raw):
    """Filaments from a [layout] builder (None on problems, already reported)."""
    from thzarray.array import layouts

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
        from thzarray.app.tables import read_layout

        return _build(checker, "layout.csv", read_layout, csv)
    if kind == "grid" and len(lay["shape"]) != 2:
        checker.fail("layout.shape", list(lay["shape"]), "[nx, ny]")
        return None
    if kind == "grid" and lay["shape"][0] * lay["shape"][1] > MAX_FILAMENTS:
        checker.fail("layout.shape", list(lay["shape"]), f"at most {MAX_FILAMENTS} columns")
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
    if (st.get("aperture_radius") is None) != (st.get("aperture_distance") is None):
        checker.problems.append("steering: aperture_radius and aperture_distance go together; "
                                "allowed: both or neither")
    elif st.get("aperture_radius") is not None and st["aperture_radius"] >= st["aperture_distance"]:
        checker.fail("steering.aperture_radius", raw.get("aperture_radius"),
                     "less than aperture_distance")
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
    from thzarray.app.tables import response_detector
    from thzarray.detect.receivers import NarrowbandReceiver

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
        elif len(items) > MAX_FILAMENTS:
            checker.fail("filaments", f"{len(items)} filaments", f"at most {MAX_FILAMENTS}")
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
    cone_band = cone.get("band")
    if cone_band is not None and (cone_band.size != 2 or cone_band[1] <= cone_band[0]):
        checker.fail("cone.band", data["cone"]["band"], "[low, high] with low < high")
    outputs = _section(checker, {"outputs": data.get("outputs", {})}, "outputs") or {}
    formats = outputs.get("formats") or ()
    for fmt in formats:
        if fmt not in OUTPUT_FORMATS:
            checker.problems.append(f"outputs.formats: {fmt!r} is not allowed{suggest(fmt, OUTPUT_FORMATS)}; "
                                    f"allowed: {', '.join(OUTPUT_FORMATS)}")
    receiver, receiver_band = _receiver(checker, data, path)
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
                  plasma=plasma, filaments=tuple(sources), grid=grid,
                  cone_target=cone.get("target_angle"),
                  cone_band=(None if cone_band is None
                             else (float(cone_band[0]), float(cone_band[1]))),
                  cone_lengths=lengths, formats=tuple(formats), receiver=receiver,
                  receiver_band=receiver_band,
                  plane=plane, budget=budget, steering=steering, tolerance=tol, path=path,
                  raw=data)


def load_design(path) -> Design:
    """Read and validate a TOML design file (raises DesignError with every problem)."""
    return parse_design(read_toml(path), Path(path))
