"""Parameter sweeps: one design, some of its keys over lists or ranges, run in parallel.

A sweep file (TOML, format in ``designs/sweeps/README.md``) names a base design file, the
measures to compute (a registry, :data:`MEASURES`), the design keys to vary and, for
Monte-Carlo measures, the seeds. The varied keys form an outer-product grid; every grid
point, measure and seed is one task. Tasks run serially (:func:`run_serial`) or on
dask.distributed (:func:`run_sweep`): a local cluster of worker processes on 127.0.0.1, or a
running cluster given by its scheduler address.

Each finished task is kept as one small ``.npz`` file under ``<out>/<name>.parts/``, written
atomically and named by a hash of everything that reaches the task (the design after
substitution, the measure and its options, the seed, the package version). A sweep that
was interrupted resumes where it stopped; a sweep that is extended (more values) reuses the
points it already has. The results are gathered into one labelled :class:`xarray.Dataset`
(a dimension per varied key with SI coordinates and units, ``seed`` for Monte-Carlo
measures, then the measure's own dimensions) and written to ``<out>/<name>.nc``.

Adding a measure
----------------
>>> @register_measure("peak", doc="largest energy density")      # doctest: +SKIP
... def peak(design, seed):
...     ...                                   # return an xarray.Dataset

A measure receives the validated :class:`~thzarray.design.Design`, the task's seed (``None``
for measures that do not draw random numbers) and its options in SI units, and returns a
Dataset whose dimensions are its own (``freq``, ``theta``...).
"""

from __future__ import annotations

import copy
import hashlib
import json
import math
import re
import sys
import zipfile
from contextlib import contextmanager, nullcontext
from dataclasses import dataclass, field, replace
from itertools import product
from pathlib import Path
from typing import Callable, Iterator, Mapping

import numpy as np

from . import __version__
from .cone import cone_angle
# Checker and suggest give sweep files the messages and did-you-mean of design files.
from .design import (SCHEMA, Checker, Design, DesignError, Spec, load_design, parse_design,
                     read_toml, suggest)
from .farfield import far_field, spectral_energy
from .output import atomic_path, check_writable
from .report import write_netcdf
from .units import DIMENSIONS

__all__ = ["MAX_TASKS", "MEASURES", "Axis", "Measure", "Sweep", "SweepResult", "Task",
           "gather", "load_sweep", "measure_cone", "measure_cut", "measure_energy_density",
           "measure_jittered_cut", "measure_spectral_energy", "output_paths", "parse_sweep",
           "register_measure", "run_serial", "run_sweep"]

# Largest number of tasks a sweep may have; larger sweeps are refused before any work.
MAX_TASKS = 100_000

# Bumped when the layout of a part file changes, so that old parts are not reused.
_PART_FORMAT = 1

_SWEEP_KEYS = {"name": "a short name (file names are made from it)",
               "description": "free text",
               "design": "path of the base design file, relative to the sweep file",
               "seeds": "a count n (seeds 0 to n-1) or a list of distinct integers >= 0",
               "every_seed": "true to compute seedless measures for every seed too"}
_SECTIONS = ("sweep", "measures", "vary")
_FIXED_SECTIONS = {"design": "names the design", "observe": "sets the measures' own axes",
                   "outputs": "chooses output files"}
_SOURCE_SECTIONS = ("filament", "filaments", "layout")   # a design has one of them
_KEY_PATH = re.compile(r"^(?P<section>[a-z_]+)(?:\[(?P<index>\*|\d+)\])?\.(?P<key>[a-z_0-9]+)$")
_RANGE_KEYS = ("start", "stop", "points")


# --- measures -----------------------------------------------------------------------------

@dataclass(frozen=True)
class Measure:
    """One quantity a sweep can compute for each design.

    Attributes
    ----------
    name : str
        Name used in sweep files.
    compute : callable
        ``compute(design, seed, **options) -> xarray.Dataset``.
    seeded : bool
        True when the result depends on ``seed`` (Monte Carlo); such measures get one task
        per seed, the others one task per grid point.
    options : mapping of str to Spec
        Options a sweep file may set under ``[measures.<name>]``, with their kinds and ranges
        (the design-file schema's :class:`~thzarray.design.Spec`).
    doc : str
        One line for listings.
    """

    name: str
    compute: Callable
    seeded: bool = False
    options: Mapping[str, Spec] = field(default_factory=dict)
    doc: str = ""


MEASURES: dict[str, Measure] = {}


def register_measure(name: str, *, seeded: bool = False, options=None, doc: str = "",
                     replace_existing: bool = False):
    """Decorator adding ``compute(design, seed, **options) -> Dataset`` to :data:`MEASURES`.

    Parameters
    ----------
    name : str
        Measure name in sweep files (letters, digits, underscores).
    seeded : bool
        The measure draws random numbers from ``numpy.random.default_rng(seed)``.
    options : mapping of str to Spec, optional
        Options with their kinds, defaults and ranges.
    doc : str
        One line; defaults to the first line of the function's docstring.
    replace_existing : bool
        Allow replacing a measure of the same name.
    """
    if not isinstance(name, str) or not re.fullmatch(r"[a-z][a-z0-9_]*", name):
        raise ValueError(f"measure name = {name!r} is not allowed; allowed: lower-case "
                         "letters, digits and underscores, starting with a letter")
    if name in MEASURES and not replace_existing:
        raise ValueError(f"measure name = {name!r} is taken; allowed: a new name, or "
                         "replace_existing=True")

    def add(compute):
        text = doc or (compute.__doc__ or "").strip().split("\n")[0]
        MEASURES[name] = Measure(name, compute, seeded, dict(options or {}), text)
        return compute

    return add


def _energy_unit(design):
    return "J/(Hz sr)" if design.plasma is not None else "J/(Hz sr) per (A s)^2"


def _coords(design, names):
    g = design.grid
    table = {"freq": ("freq", g.freq, {"units": "Hz"}),
             "theta": ("theta", g.theta, {"units": "rad", "long_name": "polar angle"}),
             "phi": ("phi", g.phi, {"units": "rad", "long_name": "azimuth"})}
    return {n: table[n] for n in names}


def _energy_density(design, sources):
    """Energy density (F, T, P) of ``sources`` on the design's (freq, theta, phi) grid."""
    g = design.grid
    return far_field(sources, g.freq[:, None, None], g.theta[:, None], g.phi, design.medium,
                     design.plasma).energy_density


def _cut_dataset(design, sources, prefix):
    import xarray as xr

    g = design.grid
    cut = _energy_density(design, sources).mean(axis=2)
    cone = g.theta[np.argmax(cut, axis=1)]
    return xr.Dataset(
        {f"{prefix}cut": (("freq", "theta"), cut,
                          {"units": _energy_unit(design),
                           "long_name": "azimuth-averaged spectral-angular energy density"}),
         f"{prefix}cone_angle": (("freq",), cone,
                                 {"units": "rad",
                                  "long_name": "polar angle of the azimuth-averaged maximum"})},
        coords=_coords(design, ("freq", "theta")))


@register_measure("cut")
def measure_cut(design: Design, seed):
    """Azimuth-averaged energy density (freq, theta) and the polar angle of its maximum.

    .. math:: \\bar u(f, \\theta) = \\langle 2 n_T \\varepsilon_0 c |\\mathbf F|^2
              \\rangle_\\phi ,\\qquad \\theta_c(f) = \\arg\\max_\\theta \\bar u

    on the design's observation grid (Jackson secs. 9.1-9.2 through
    :func:`~thzarray.farfield.far_field`).
    """
    return _cut_dataset(design, design.sources, "")


@register_measure("energy_density")
def measure_energy_density(design: Design, seed):
    """Spectral-angular energy density on the full (freq, theta, phi) grid, J/(Hz sr)."""
    import xarray as xr

    return xr.Dataset(
        {"energy_density": (("freq", "theta", "phi"), _energy_density(design, design.sources),
                            {"units": _energy_unit(design),
                             "long_name": "spectral-angular energy density"})},
        coords=_coords(design, ("freq", "theta", "phi")))


@register_measure("spectral_energy")
def measure_spectral_energy(design: Design, seed):
    """Radiated energy per unit frequency dW/df (freq,), J/Hz, integrated over the sphere."""
    import xarray as xr

    unit = "J/Hz" if design.plasma is not None else "J/Hz per (A s)^2"
    dw = spectral_energy(design.sources, design.grid.freq, design.medium, design.plasma)
    return xr.Dataset({"spectral_energy": (("freq",), dw, {"units": unit,
                                                          "long_name": "dW/df over the sphere"})},
                      coords=_coords(design, ("freq",)))


@register_measure("cone")
def measure_cone(design: Design, seed):
    """Cone angle of a uniform column of each source's length (source, freq), rad.

    Exact maximum of the single-column pattern, :func:`~thzarray.cone.cone_angle`.
    """
    import xarray as xr

    lengths = np.array([s.length for s in design.sources])
    angle = cone_angle(lengths[:, None], design.grid.freq[None, :], design.medium)
    return xr.Dataset(
        {"cone_angle_uniform": (("source", "freq"), angle,
                                {"units": "rad",
                                 "long_name": "cone angle of a uniform column of this length"})},
        coords=dict(_coords(design, ("freq",)),
                    source=("source", np.arange(lengths.size), {"long_name": "source index"})))


@register_measure("jittered_cut", seeded=True,
                  options={"timing_jitter": Spec("time", required=True, low=0.0, high=1e-9,
                                                 doc="rms error of each column's delay")})
def measure_jittered_cut(design: Design, seed, timing_jitter):
    """The cut of one simulated build whose column delays carry Gaussian timing errors.

    Each column's delay becomes :math:`t_n + \\sigma_t\\,\\xi_n` with independent
    :math:`\\xi_n \\sim N(0, 1)` drawn from ``numpy.random.default_rng(seed)``; the
    azimuth-averaged cut and its maximum are then those of :func:`measure_cut`
    (common practice, no source).
    """
    rng = np.random.default_rng(seed)
    shifts = timing_jitter * rng.standard_normal(len(design.sources))
    sources = tuple(replace(s, delay=s.delay + float(d)) for s, d in zip(design.sources, shifts))
    return _cut_dataset(design, sources, "jittered_")


@register_measure("tolerance", seeded=True,
                  doc="Monte Carlo of the design's [tolerance] errors on its steered layout")
def measure_tolerance(design: Design, seed):
    """Mean, spread and percentile of the delivered gain (:func:`thzarray.tolerance.tolerance`)
    for the design's [steering] target and [tolerance] errors, with the task's seed."""
    import xarray as xr

    from .jobs import tolerance_study

    if design.tolerance is None:
        raise ValueError(f"design {design.name!r}: the tolerance measure needs a [tolerance] "
                         "section; allowed: add it")
    design = replace(design, tolerance=dict(design.tolerance, seed=int(seed)))
    t, _ = tolerance_study(design)
    return xr.Dataset({
        "gain_mean": ((), t.mean, {"units": "1", "long_name": "mean delivered gain"}),
        "gain_std": ((), t.std, {"units": "1"}),
        "gain_percentile": ((), t.percentile_value,
                            {"units": "1", "percentile": float(t.percentile)}),
        "gain_expected": ((), t.expected, {"units": "1", "long_name": "exact random-phase mean"}),
    })


# --- sweep files --------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class Axis:
    """One varied design key: its path, its values (SI floats or integers) and their unit."""

    key: str
    values: np.ndarray
    unit: str
    doc: str = ""

    def value(self, i):
        """The i-th value as the design file takes it (float, or int for counts)."""
        v = self.values[i]
        return int(v) if self.values.dtype.kind == "i" else float(v)

    def text(self, i) -> str:
        """The i-th value with its unit, e.g. ``0.2 m``."""
        return f"{self.values[i]:.6g}{'' if self.unit == '1' else ' ' + self.unit}"


@dataclass(frozen=True, eq=False)
class Task:
    """One grid point, measure and seed; ``key`` names its part file."""

    index: tuple
    measure: str
    seed: int | None
    key: str
    data: dict = field(repr=False)


@dataclass(frozen=True, eq=False)
class Sweep:
    """A validated sweep: base design, varied axes, measures with SI options, seeds."""

    name: str
    description: str
    design: Design
    axes: tuple
    measures: tuple          # ((Measure, {option: SI value}), ...)
    seeds: tuple = ()
    every_seed: bool = False
    path: Path | None = None

    @property
    def shape(self) -> tuple:
        """Number of values along each axis."""
        return tuple(a.values.size for a in self.axes)

    def choice(self, name: str) -> tuple:
        """The :class:`Measure` of that name and its options (SI)."""
        return next((m, o) for m, o in self.measures if m.name == name)

    def seeds_of(self, name: str) -> tuple:
        """The seeds a measure runs with: ``(None,)`` for a seedless one."""
        return self.seeds if self.choice(name)[0].seeded or self.every_seed else (None,)

    @property
    def size(self) -> int:
        """Number of tasks."""
        return math.prod(self.shape) * sum(len(self.seeds_of(m.name)) for m, _ in self.measures)

    def data_at(self, index) -> dict:
        """The base design's TOML data with the axis values at ``index`` substituted."""
        data = copy.deepcopy(self.design.raw)
        for axis, i in zip(self.axes, index):
            _substitute(data, axis.key, axis.value(i))
        return data

    def tasks(self) -> Iterator[Task]:
        """Every task, grid point by grid point (last axis fastest), then measure and seed."""
        for index in product(*(range(n) for n in self.shape)):
            data = self.data_at(index)
            design_hash = _digest(data)
            for measure, options in self.measures:
                for seed in self.seeds_of(measure.name):
                    key = _digest({"design": design_hash, "measure": measure.name,
                                   "options": options, "seed": seed})
                    yield Task(index, measure.name, seed, key, data)

    def describe(self, task: Task) -> str:
        """The task's parameters as one line, e.g. ``filament.length = 0.2 m, seed 3``."""
        parts = [f"{a.key} = {a.text(i)}" for a, i in zip(self.axes, task.index)]
        parts.append(f"measure {task.measure}")
        if task.seed is not None:
            parts.append(f"seed {task.seed}")
        return ", ".join(parts)


def _digest(inputs) -> str:
    """Hash of a task's inputs (plain TOML-like data), the part layout and the version."""
    text = json.dumps({"format": _PART_FORMAT, "thzarray": __version__, "inputs": inputs},
                      sort_keys=True, separators=(",", ":"), default=str)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:40]


def _substitute(data, key, value):
    m = _KEY_PATH.match(key)
    section, index, name = m["section"], m["index"], m["key"]
    if section == "filaments":
        items = data["filaments"] if index == "*" else [data["filaments"][int(index)]]
        for item in items:
            item[name] = value
    else:
        data.setdefault(section, {})[name] = value


def _flatten(table, prefix=""):
    """[vary] as {key path: value}; a table holding start/stop/points is a range."""
    out = []
    for key, value in table.items():
        path = f"{prefix}{key}"
        if isinstance(value, dict) and value and not any(k in value for k in _RANGE_KEYS):
            out += _flatten(value, path + ".")
        else:
            out.append((path, value))
    return out


def _schema_of(section):
    return SCHEMA.get("filament" if section == "filaments" else section)


def _is_sweepable(spec):
    return spec.kind in DIMENSIONS or spec.kind == "int"


def _sweepable(section):
    """Key paths of one section that hold a single quantity or whole number."""
    schema = _schema_of(section) or {}
    head = "filaments[*]" if section == "filaments" else section
    return [f"{head}.{k}" for k, spec in schema.items() if _is_sweepable(spec)]


def _vary_sections():
    return [s for s in list(SCHEMA) + ["filaments"] if s not in _FIXED_SECTIONS]


def _axis_spec(problems, key, design: Design):
    """The schema entry a key path addresses, or None with the problem recorded."""
    sections = _vary_sections()
    m = _KEY_PATH.match(key)
    if m is None:
        problems.append(f"vary.{key}: not a key path; allowed: section.key such as "
                        "medium.relative_humidity, filament.length, filaments[*].delay")
        return None
    section, index, name = m["section"], m["index"], m["key"]
    if section in _FIXED_SECTIONS:
        problems.append(f"vary.{key}: [{section}] {_FIXED_SECTIONS[section]} and cannot be "
                        f"varied; allowed: keys of {', '.join(sections)}")
        return None
    schema = _schema_of(section)
    if schema is None:
        problems.append(f"vary.{key}: unknown section {section!r}{suggest(section, sections)};"
                        f" allowed: {', '.join(sections)}")
        return None
    allowed = ", ".join(_sweepable(section)) or "none"
    if name not in schema:
        problems.append(f"vary.{key}: unknown key {name!r}{suggest(name, list(schema))}; "
                        f"allowed: {allowed}")
        return None
    spec = schema[name]
    if not _is_sweepable(spec):
        problems.append(f"vary.{key}: {spec.kind.replace(':', ' of ')} values cannot be "
                        f"varied; allowed: {allowed}")
        return None
    raw = design.raw
    if section in _SOURCE_SECTIONS and section not in raw:
        has = next(s for s in _SOURCE_SECTIONS if s in raw)
        hint = {"filament": f"filament.{name}", "layout": f"layout.{name}",
                "filaments": f"filaments[*].{name} (every column) or filaments[i].{name}"}[has]
        problems.append(f"vary.{key}: the design has [{has}], not [{section}]; allowed: "
                        f"{hint}")
        return None
    if section != "filaments" and index is not None:
        problems.append(f"vary.{key}: [{section}] takes no index; allowed: {section}.{name}")
        return None
    if section == "filaments":
        count = len(raw["filaments"])
        if index is None:
            problems.append(f"vary.{key}: which column?; allowed: filaments[*].{name} or "
                            f"filaments[i].{name} with i from 0 to {count - 1}")
            return None
        if index != "*" and int(index) >= count:
            problems.append(f"vary.{key}: column {index} does not exist; allowed: 0 to "
                            f"{count - 1} or *")
            return None
    return spec


def _count(value) -> int | None:
    if isinstance(value, list):
        return len(value)
    if isinstance(value, dict) and isinstance(value.get("points"), int):
        return value["points"]
    return None


def _axis_values(checker, key, value, spec):
    if spec.kind == "int":
        if not isinstance(value, list) or not value:
            checker.fail(f"vary.{key}", value, "a list of whole numbers")
            return None
        out = [checker.value(f"vary.{key}[{i}]", v, spec) for i, v in enumerate(value)]
        return None if any(o is None for o in out) else np.array(out, dtype=np.int64)
    grid = Spec(f"grid:{spec.kind}", low=spec.low, high=spec.high, low_open=spec.low_open)
    out = checker.value(f"vary.{key}", value, grid)
    return None if out is None else np.asarray(out, dtype=float)


def _axis(problems, key, value, spec, design):
    checker = Checker()
    values = _axis_values(checker, key, value, spec)
    problems += checker.problems
    if values is None:
        return None
    unit = DIMENSIONS[spec.kind][1] if spec.kind in DIMENSIONS else ""
    axis = Axis(key, values, unit or "1", spec.doc)
    if np.unique(values).size != values.size:
        problems.append(f"vary.{key}: {value!r} repeats a value; allowed: distinct values")
        return None
    for i in sorted({0, values.size - 1}):
        data = copy.deepcopy(design.raw)
        _substitute(data, key, axis.value(i))
        try:
            parse_design(data, design.path)
        except DesignError as exc:
            problems += [f"vary.{key} = {axis.text(i)}: {p}" for p in exc.problems]
            return None
    return axis


def _measures(problems, table):
    if not isinstance(table, dict) or not table:
        problems.append(f"measures: {table!r} is not allowed; allowed: a [measures] table "
                        f"naming one or more of {', '.join(MEASURES)}")
        return ()
    out = []
    for name, options in table.items():
        if name not in MEASURES:
            problems.append(f"measures.{name}: unknown measure{suggest(name, list(MEASURES))}; "
                            f"allowed: {', '.join(MEASURES)}")
            continue
        if not isinstance(options, dict):
            problems.append(f"measures.{name}: {options!r} is not allowed; allowed: a table "
                            "of options, e.g. {} for none")
            continue
        specs = MEASURES[name].options
        for key in options:
            if key not in specs:
                known = ", ".join(specs) or "none"
                problems.append(f"measures.{name}.{key}: unknown option"
                                f"{suggest(key, list(specs))}; allowed: {known}")
        checker = Checker()
        values = {}
        for key, spec in specs.items():
            if key in options:
                values[key] = checker.value(f"measures.{name}.{key}", options[key], spec)
            elif spec.required:
                checker.problems.append(f"measures.{name}.{key}: missing; allowed: a "
                                        f"{spec.kind} ({spec.doc})")
            else:
                values[key] = spec.default
        problems += checker.problems
        out.append((MEASURES[name], values))
    return tuple(out)


def _seeds(problems, value):
    if value is None:
        return ()
    if isinstance(value, int) and not isinstance(value, bool):
        if not 1 <= value <= MAX_TASKS:
            problems.append(f"sweep.seeds: {value!r} is out of range; allowed: 1 to {MAX_TASKS}")
            return ()
        return tuple(range(value))
    ok = (isinstance(value, list) and value
          and all(isinstance(s, int) and not isinstance(s, bool) and s >= 0 for s in value))
    if not ok or len(set(value)) != len(value):
        problems.append(f"sweep.seeds: {value!r} is not allowed; allowed: "
                        f"{_SWEEP_KEYS['seeds']}")
        return ()
    return tuple(value)


def parse_sweep(data: dict, path: Path | None = None) -> Sweep:
    """Validate a parsed sweep file; every problem is reported at once (DesignError).

    Parameters
    ----------
    data : dict
        The parsed TOML document.
    path : Path, optional
        The sweep file; the base design path is relative to its directory (else to the
        current directory).
    """
    problems: list[str] = []
    if not isinstance(data, dict):
        raise DesignError(["sweep: not a TOML table"])
    for key in data:
        if key not in _SECTIONS:
            problems.append(f"{key}: unknown section{suggest(key, _SECTIONS)}; allowed: "
                            f"{', '.join(_SECTIONS)}")
    head = data.get("sweep")
    if not isinstance(head, dict):
        raise DesignError(problems + [f"sweep: {head!r} is not allowed; allowed: a [sweep] "
                                      "table with name and design"])
    for key in head:
        if key not in _SWEEP_KEYS:
            problems.append(f"sweep.{key}: unknown key{suggest(key, list(_SWEEP_KEYS))}; "
                            f"allowed: {', '.join(_SWEEP_KEYS)}")
    for key in ("name", "design"):
        if not isinstance(head.get(key), str) or not head.get(key, "").strip():
            problems.append(f"sweep.{key}: {head.get(key)!r} is not allowed; allowed: "
                            f"{_SWEEP_KEYS[key]}")
    description = head.get("description", "")
    if not isinstance(description, str):
        problems.append(f"sweep.description: {description!r} is not allowed; allowed: a string")
    every_seed = head.get("every_seed", False)
    if not isinstance(every_seed, bool):
        problems.append(f"sweep.every_seed: {every_seed!r} is not allowed; allowed: true or "
                        "false")
        every_seed = False
    seeds = _seeds(problems, head.get("seeds"))
    measures = _measures(problems, data.get("measures"))
    seeded = [m.name for m, _ in measures if m.seeded]
    if seeded and not seeds and "seeds" not in head:
        problems.append(f"sweep.seeds: missing; allowed: {_SWEEP_KEYS['seeds']} (measure "
                        f"{seeded[0]!r} draws random numbers)")
    if seeds and not seeded and not every_seed:
        problems.append(f"sweep.seeds: {head['seeds']!r} is not used; allowed: a seeded "
                        f"measure ({', '.join(m for m in MEASURES if MEASURES[m].seeded)}) "
                        "or every_seed = true")
    if every_seed and "seeds" not in head:
        problems.append("sweep.every_seed: true needs seeds; allowed: set sweep.seeds")
    design = None
    if isinstance(head.get("design"), str) and head["design"].strip():
        base = (path.parent if path is not None else Path.cwd()) / head["design"]
        try:
            design = load_design(base)
        except DesignError as exc:
            problems += [f"sweep.design ({base}): {p}" for p in exc.problems]
    vary = data.get("vary", {})
    if not isinstance(vary, dict):
        problems.append(f"vary: {vary!r} is not allowed; allowed: a [vary] table of key paths")
        vary = {}
    entries = _flatten(vary)
    counts = [_count(v) for _, v in entries]
    if all(c is not None for c in counts):
        per_point = sum(max(len(seeds), 1) if (m.seeded or every_seed) else 1
                        for m, _ in measures)
        size = math.prod(counts) * max(per_point, 1)
        if size > MAX_TASKS:
            problems.append(f"sweep: {size} tasks is too many; allowed: at most {MAX_TASKS} "
                            "(product of the value counts x measures x seeds)")
            raise DesignError(problems)
    axes = []
    keys = [k for k, _ in entries]
    for i, (key, value) in enumerate(entries):
        if key in keys[:i]:
            problems.append(f"vary.{key}: given more than once (as a quoted and a dotted key); "
                            "allowed: once")
            continue
        if design is None:
            continue
        spec = _axis_spec(problems, key, design)
        if spec is not None:
            axes.append(_axis(problems, key, value, spec, design))
    _check_overlap(problems, keys)
    if problems:
        raise DesignError(problems)
    return Sweep(name=head["name"].strip(), description=description, design=design,
                 axes=tuple(axes), measures=measures, seeds=seeds, every_seed=every_seed,
                 path=path)


def _check_overlap(problems, keys):
    for key in keys:
        m = _KEY_PATH.match(key)
        if m and m["section"] == "filaments" and m["index"] == "*":
            for other in keys:
                o = _KEY_PATH.match(other)
                if (o and other != key and o["section"] == "filaments"
                        and o["key"] == m["key"]):
                    problems.append(f"vary.{other}: overlaps vary.{key}; allowed: one of them")


def load_sweep(path) -> Sweep:
    """Read and validate a TOML sweep file (raises DesignError with every problem)."""
    return parse_sweep(read_toml(path), Path(path))


# --- running ------------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class SweepResult:
    """A finished sweep: the gathered Dataset, where it was written, what was (re)used."""

    dataset: object
    path: Path
    parts: Path
    computed: int
    reused: int

    def summary(self) -> dict:
        ds = self.dataset
        return {"sweep": ds.attrs["sweep"], "file": str(self.path), "parts": str(self.parts),
                "tasks": self.computed + self.reused, "computed": self.computed,
                "reused": self.reused, "dims": dict(ds.sizes),
                "variables": sorted(ds.data_vars)}


@dataclass(frozen=True)
class _Failure:
    problems: tuple


def _compute(data, path, compute, options, seed):
    """Run one task (on a worker); bad input comes back as a _Failure, not an exception."""
    try:
        return compute(parse_design(data, path), seed, **options)
    except DesignError as exc:
        return _Failure(tuple(exc.problems))
    except ValueError as exc:
        return _Failure(tuple(str(exc).splitlines()))


def _slug(name):
    return re.sub(r"[^a-z0-9]+", "_", name.lower()).strip("_") or "sweep"


def output_paths(sweep: Sweep, out_dir) -> tuple[Path, Path]:
    """The gathered netCDF file and the directory of finished parts."""
    out_dir = Path(out_dir)
    slug = _slug(sweep.name)
    return out_dir / f"{slug}.nc", out_dir / f"{slug}.parts"


def _jsonable(obj):
    if isinstance(obj, np.generic):
        return obj.item()
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    raise TypeError(f"attribute value {obj!r} cannot be stored; allowed: numbers, strings")


def _write_part(dataset, path: Path, key: str, task: str):
    """One task's Dataset as .npz: its arrays plus a JSON header of names, dims, attrs."""
    arrays, entries = {}, []
    for i, (name, var) in enumerate(dataset.variables.items()):
        arrays[f"a{i}"] = np.asarray(var.values)
        entries.append({"name": name, "dims": list(var.dims), "attrs": dict(var.attrs),
                        "coord": name in dataset.coords})
    header = {"format": _PART_FORMAT, "key": key, "task": task, "variables": entries}
    arrays["header"] = np.array(json.dumps(header, default=_jsonable))
    with atomic_path(path, force=True) as tmp, open(tmp, "wb") as fh:
        np.savez(fh, **arrays)


def _read_part(path: Path, key: str):
    """The Dataset of a finished task, or None when missing, unreadable or not this task's."""
    import xarray as xr

    try:
        with open(path, "rb") as fh, np.load(fh, allow_pickle=False) as npz:
            header = json.loads(str(npz["header"]))
            if header.get("key") != key or header.get("format") != _PART_FORMAT:
                return None
            items = [(e, npz[f"a{i}"]) for i, e in enumerate(header["variables"])]
    except (OSError, ValueError, KeyError, EOFError, zipfile.BadZipFile):
        return None  # absent, cut short, or of another layout: computed again
    coords = {e["name"]: (e["dims"], a, e["attrs"]) for e, a in items if e["coord"]}
    data = {e["name"]: (e["dims"], a, e["attrs"]) for e, a in items if not e["coord"]}
    return xr.Dataset(data, coords=coords)


def _serial(sweep, pending):
    for task in pending:
        measure, options = sweep.choice(task.measure)
        yield task, _compute(task.data, sweep.design.path, measure.compute, options, task.seed)


@contextmanager
def _client(scheduler, n_workers, connect_timeout):
    import logging

    from distributed import Client, LocalCluster

    if scheduler is not None:
        try:
            client = Client(scheduler, timeout=connect_timeout)
        except (OSError, TypeError, ValueError) as exc:
            raise ValueError(f"scheduler = {scheduler!r}: cannot connect ({exc}); allowed: the "
                             "address of a running dask scheduler, e.g. "
                             "tcp://127.0.0.1:8786") from None
        with client:
            yield client
        return
    # Loopback only, dashboard on a free loopback port; one thread per worker process and
    # one numba thread each, so that n_workers processes use n_workers cores.
    with LocalCluster(n_workers=n_workers, threads_per_worker=1, processes=True,
                      host="127.0.0.1", dashboard_address="127.0.0.1:0",
                      silence_logs=logging.ERROR, env={"NUMBA_NUM_THREADS": "1"}) as cluster, \
            Client(cluster) as client:
        yield client


@contextmanager
def _distributed(sweep, pending, scheduler, n_workers, connect_timeout):
    from distributed import as_completed

    with _client(scheduler, n_workers, connect_timeout) as client:
        futures = {}
        for task in pending:
            measure, options = sweep.choice(task.measure)
            fut = client.submit(_compute, task.data, sweep.design.path, measure.compute,
                                options, task.seed,
                                key=f"thzarray-sweep-{task.key}", pure=False)
            futures[fut] = task

        def results():
            for fut in as_completed(list(futures)):
                yield futures.pop(fut), fut.result()

        try:
            yield results()
        finally:
            client.cancel(list(futures))


def _progress(total, initial, name, enabled):
    from tqdm import tqdm

    return tqdm(total=total, initial=initial, desc=name, unit="task", file=sys.stderr,
                disable=not (enabled and sys.stderr.isatty()))


def _execute(sweep, out_dir, force, recompute, progress, runner):
    final, parts = output_paths(sweep, out_dir)
    check_writable(final, force)  # refuse before computing anything
    tasks = list(sweep.tasks())
    pending = [t for t in tasks
               if recompute or _read_part(parts / f"{t.key}.npz", t.key) is None]
    reused = len(tasks) - len(pending)
    run = runner(pending) if pending else nullcontext(())
    with _progress(len(tasks), reused, sweep.name, progress) as bar, run as results:
        parts.mkdir(parents=True, exist_ok=True)
        for task, out in results:
            if isinstance(out, _Failure):
                raise DesignError([f"task ({sweep.describe(task)}): {p}" for p in out.problems])
            _check_result(sweep, task, out)
            _write_part(out, parts / f"{task.key}.npz", task.key, sweep.describe(task))
            bar.update(1)
    dataset = gather(sweep, parts, tasks)
    write_netcdf(dataset, final, force)
    return SweepResult(dataset, final, parts, len(pending), reused)


def _check_result(sweep, task, out):
    import xarray as xr

    if not isinstance(out, xr.Dataset):
        raise TypeError(f"measure {task.measure!r} returned {type(out).__name__}; allowed: an "
                        "xarray.Dataset")
    taken = {a.key for a in sweep.axes} | {"seed"}
    clash = taken & (set(out.dims) | set(out.variables))
    if clash:
        raise ValueError(f"measure {task.measure!r} uses the name(s) {sorted(clash)} of the "
                         "sweep's own dimensions; allowed: other names")


def run_serial(sweep: Sweep, out_dir, *, force: bool = False, recompute: bool = False,
               progress: bool = True) -> SweepResult:
    """Run a sweep in this process, one task after another (the reference for run_sweep).

    Parameters and returns as for :func:`run_sweep`, without the cluster.
    """
    return _execute(sweep, out_dir, force, recompute, progress,
                    lambda pending: nullcontext(_serial(sweep, pending)))


def run_sweep(sweep: Sweep, out_dir, *, scheduler: str | None = None, n_workers: int = 2,
              force: bool = False, recompute: bool = False, progress: bool = True,
              connect_timeout: float = 10.0) -> SweepResult:
    """Run a sweep on dask.distributed, keeping every finished task, and gather the results.

    Parameters
    ----------
    sweep : Sweep
    out_dir : path
        Directory of ``<name>.nc`` and ``<name>.parts/``.
    scheduler : str, optional
        Address of a running dask scheduler (e.g. ``tcp://10.0.0.5:8786``); by default a
        local cluster of ``n_workers`` processes on 127.0.0.1 is started and closed.
    n_workers : int
        Worker processes of the local cluster, 1 to 256.
    force : bool
        Overwrite an existing ``<name>.nc``. Finished parts are reused either way.
    recompute : bool
        Compute every task again, replacing its part.
    progress : bool
        Show a progress bar of finished tasks on stderr when it is a terminal.
    connect_timeout : float
        Seconds to wait for the scheduler given by ``scheduler``.

    Returns
    -------
    SweepResult
        ``dataset``: variables of shape (axis values..., [seed], measure dims...), one
        coordinate per varied key (SI values, ``units`` attribute).
    """
    if scheduler is None and (not isinstance(n_workers, int) or isinstance(n_workers, bool)
                              or not 1 <= n_workers <= 256):
        raise ValueError(f"n_workers = {n_workers!r} is not allowed; allowed: an integer from "
                         "1 to 256")
    return _execute(sweep, out_dir, force, recompute, progress,
                    lambda pending: _distributed(sweep, pending, scheduler, n_workers,
                                                 connect_timeout))


def gather(sweep: Sweep, parts: Path, tasks=None):
    """Stack the finished parts of a sweep into one labelled Dataset (all must exist).

    Returns
    -------
    xarray.Dataset
        Each measure variable has dimensions (varied keys..., ``seed`` if the measure runs
        per seed, the measure's own dimensions).
    """
    import xarray as xr

    tasks = list(sweep.tasks()) if tasks is None else tasks
    seed_pos = {s: i for i, s in enumerate(sweep.seeds)}
    arrays, dims, attrs, coords, owner, expected = {}, {}, {}, {}, {}, {}
    for task in tasks:
        part = _read_part(parts / f"{task.key}.npz", task.key)
        if part is None:
            raise ValueError(f"part of task ({sweep.describe(task)}) is missing from "
                             f"{str(parts)!r}; allowed: run the sweep to finish it")
        seeded = task.seed is not None
        where = task.index + ((seed_pos[task.seed],) if seeded else ())
        for name, coord in part.coords.items():
            if name not in coords:
                coords[name] = coord
            elif not np.array_equal(coords[name].values, coord.values):
                raise ValueError(f"measure {task.measure!r} at ({sweep.describe(task)}) gives "
                                 f"coordinate {name!r} other values than before; allowed: the "
                                 "same coordinates at every point")
        names = expected.setdefault(task.measure, set(part.data_vars))
        if set(part.data_vars) != names:
            raise ValueError(f"measure {task.measure!r} at ({sweep.describe(task)}) gives "
                             f"variables {sorted(part.data_vars)}, before {sorted(names)}; "
                             "allowed: the same variables at every point")
        for name, var in part.data_vars.items():
            if owner.setdefault(name, task.measure) != task.measure:
                raise ValueError(f"variable {name!r} is made by measures {owner[name]!r} and "
                                 f"{task.measure!r}; allowed: one measure per variable name")
            if name not in arrays:
                lead = sweep.shape + ((len(sweep.seeds),) if seeded else ())
                arrays[name] = np.zeros(lead + var.shape, dtype=var.dtype)
                axis_dims = tuple(a.key for a in sweep.axes) + (("seed",) if seeded else ())
                dims[name] = axis_dims + var.dims
                attrs[name] = dict(var.attrs)
            arrays[name][where] = var.values
    for axis in sweep.axes:
        coords[axis.key] = (axis.key, axis.values,
                            {"units": axis.unit, "long_name": axis.doc or axis.key,
                             "key": axis.key})
    if any("seed" in d for d in dims.values()):
        coords["seed"] = ("seed", np.array(sweep.seeds, dtype=np.int64),
                          {"long_name": "seed of numpy.random.default_rng"})
    attrs_ds = {"sweep": sweep.name, "description": sweep.description,
                "design": sweep.design.name,
                "measures": ", ".join(m.name for m, _ in sweep.measures),
                "thzarray_version": __version__, "source": "thzarray parameter sweep"}
    for measure, options in sweep.measures:
        for key, value in options.items():
            if value is not None:
                attrs_ds[f"{measure.name}.{key}"] = value
    return xr.Dataset({n: (dims[n], arrays[n], attrs[n]) for n in arrays}, coords=coords,
                      attrs=attrs_ds)
