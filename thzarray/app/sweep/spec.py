"""Sweep files: the base design, the keys to vary, the measures and the seeds.

A sweep file (TOML, format in ``designs/sweeps/README.md``) names a base design file, the
measures to compute (:mod:`thzarray.app.sweep.measures`), the design keys to vary and, for
Monte-Carlo measures, the seeds. The varied keys form an outer-product grid; every grid
point, measure and seed is one :class:`Task`. A task's ``key`` is a hash of everything its
result depends on: the design after substitution, the bytes of every file the design refers
to (layout table, detector response, line list), the measure and its options, the seed and
the package version. Its ``slot`` (the part file's name) hashes only where it sits in the
sweep (the varied values, the measure, the seed), so that a part whose inputs changed is found,
rejected and computed again rather than silently left beside a new one.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import re
import stat
from dataclasses import dataclass, field
from itertools import product
from pathlib import Path
from typing import Iterator

import numpy as np

from thzarray._version import __version__
from thzarray.app.design import (
    SCHEMA,
    Checker,
    Design,
    DesignError,
    Spec,
    design_data,
    load_design,
    parse_design,
    read_toml,
    suggest,
)
from thzarray.app.design.checker import grid_values
from thzarray.app.files import resolve_beside
from thzarray.app.sweep.measures import MEASURES
from thzarray.app.units import DIMENSIONS

__all__ = ["FILE_KEYS", "MAX_TASKS", "PART_FORMAT", "Axis", "Sweep", "Task", "file_digests",
           "load_sweep", "parse_sweep"]

# Largest number of tasks a sweep may have; larger sweeps are refused before any work.
MAX_TASKS = 100_000

# Bumped when the layout of a part file changes, so that old parts are not reused.
PART_FORMAT = 2

# Design keys that name a file whose content reaches the result (hashed into every task).
FILE_KEYS = (("layout", "csv"), ("receiver", "response_csv"), ("medium", "line_list"))
_MAX_HASHED_BYTES = 1 << 30

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
    """One grid point, measure and seed.

    ``key`` hashes everything the result depends on (recorded in the part); ``slot`` names
    the part file (the task's place in the sweep: varied values, measure, seed).
    """

    index: tuple
    measure: str
    seed: int | None
    key: str
    data: dict = field(repr=False)
    slot: str = ""


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
        data = design_data(self.design)
        for axis, i in zip(self.axes, index):
            _substitute(data, axis.key, axis.value(i))
        return data

    def tasks(self) -> Iterator[Task]:
        """Every task, grid point by grid point (last axis fastest), then measure and seed."""
        base = self.design.path
        for index in product(*(range(n) for n in self.shape)):
            data = self.data_at(index)
            design_hash = _digest({"design": data, "files": file_digests(data, base)})
            point = {a.key: a.value(i) for a, i in zip(self.axes, index)}
            for measure, options in self.measures:
                for seed in self.seeds_of(measure.name):
                    key = _digest({"design": design_hash, "measure": measure.name,
                                   "options": options, "seed": seed})
                    slot = _digest({"point": point, "measure": measure.name, "seed": seed},
                                   versioned=False)
                    yield Task(index, measure.name, seed, key, data, slot)

    def describe(self, task: Task) -> str:
        """The task's parameters as one line, e.g. ``filament.length = 0.2 m, seed 3``."""
        parts = [f"{a.key} = {a.text(i)}" for a, i in zip(self.axes, task.index)]
        parts.append(f"measure {task.measure}")
        if task.seed is not None:
            parts.append(f"seed {task.seed}")
        return ", ".join(parts)


def _digest(inputs, versioned: bool = True) -> str:
    """Hash of a task's inputs (plain TOML-like data), the part layout and the version."""
    head = {"format": PART_FORMAT, "thzarray": __version__} if versioned else {}
    text = json.dumps({**head, "inputs": inputs}, sort_keys=True, separators=(",", ":"),
                      default=str)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:40]


def _file_digest(path) -> str:
    """SHA-256 of a regular file's bytes (a special, unreadable or huge file: its reason)."""
    try:
        fd = os.open(str(path), os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        return f"unreadable: {exc.strerror}"
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode) or info.st_size > _MAX_HASHED_BYTES:
            return f"not hashed: mode {info.st_mode:o}, {info.st_size} bytes"
        h, done = hashlib.sha256(), 0
        while chunk := os.read(fd, 1 << 20):
            h.update(chunk)
            done += len(chunk)
            if done > _MAX_HASHED_BYTES:
                return "not hashed: grew while read"
        return h.hexdigest()
    finally:
        os.close(fd)


def file_digests(data: dict, base) -> dict:
    """{``section.key``: SHA-256 of the file's bytes} for every file a design refers to.

    Parameters
    ----------
    data : dict
        The design's TOML data.
    base : path or None
        The design file; relative file names are taken beside it.
    """
    out = {}
    for section, key in FILE_KEYS:
        table = data.get(section)
        name = table.get(key) if isinstance(table, dict) else None
        if isinstance(name, str):
            out[f"{section}.{key}"] = _file_digest(resolve_beside(name, base))
    return out


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
    raw = design_data(design)
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
    return None if out is None else grid_values(out)


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
        data = design_data(design)
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
