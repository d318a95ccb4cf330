"""Design files: one TOML file that states the medium, the source, the layout, the target,
the receiver and what to observe, loaded once into typed sections and physics objects.

Loading converts every quantity to SI once (strings with units through
:mod:`thzarray.app.units`), keeps every section as a frozen object
(:mod:`thzarray.app.design.sections`) and builds the physics objects the commands use: the
:class:`~thzarray.air.medium.Medium`, the :class:`~thzarray.source.plasma.Plasma`, the
filaments (from ``[filament]``, ``[[filaments]]`` or ``[layout]``, with ``[laser]`` setting
their length, position and plasma), the receiver. Validation reports every problem at once,
each with its key path, the value found and what is allowed; unknown keys are rejected with
a did-you-mean suggestion. Commands receive the :class:`Design` and never read the file
again.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from thzarray.air.medium import Medium
from thzarray.app.design.checker import Checker, DesignError, grid_values, read_toml, suggest
from thzarray.app.design.detection import (
    check_calibration,
    check_waveform,
    line_list,
    receiver_of,
)
from thzarray.app.design.feasibility import size_problems, two_colour_problems
from thzarray.app.design.schema import (
    KIND_KEYS,
    MAX_FILAMENTS,
    MAX_GRID_POINTS,
    OUTPUT_FORMATS,
    SCHEMA,
    SOURCE_SECTIONS,
    applies,
)
from thzarray.app.design.sections import SECTION_TYPES, Sections
from thzarray.app.design.source import apply_source
from thzarray.app.files import resolve_beside
from thzarray.base.checks import shorten
from thzarray.source.filament import Filament
from thzarray.source.plasma import Plasma

__all__ = ["Design", "Grid", "load_design", "parse_design"]

_DEFAULT_WAVELENGTH = 800e-9


@dataclass(frozen=True, eq=False)
class Grid:
    """Observation coordinates (SI): freq (Hz), theta and phi (rad), 1-D arrays."""

    freq: np.ndarray
    theta: np.ndarray
    phi: np.ndarray

    @property
    def size(self) -> int:
        return self.freq.size * self.theta.size * self.phi.size


@dataclass(frozen=True)
class Design:
    """A validated design: its typed sections and the physics objects built from them (SI).

    Two designs are equal when their sections are equal (the built objects follow from
    them). ``notes`` are what the loader's physics said about the design (e.g. the laser
    model's validity notes); every command prints them.
    """

    sections: Sections
    path: Path | None = field(default=None, compare=False)
    medium: Medium = field(default=None, compare=False)
    plasma: Plasma | None = field(default=None, compare=False)
    filaments: tuple = field(default=(), compare=False, repr=False)
    estimate: object = field(default=None, compare=False, repr=False)
    receiver: object = field(default=None, compare=False)
    receiver_band: np.ndarray | None = field(default=None, compare=False, repr=False)
    lines: object = field(default=None, compare=False, repr=False)
    source: object = field(default=None, compare=False, repr=False)
    grid: Grid = field(default=None, compare=False, repr=False)
    notes: tuple = field(default=(), compare=False)

    @property
    def name(self) -> str:
        return self.sections.design.name

    @property
    def description(self) -> str:
        return self.sections.design.description

    @property
    def steering(self):
        return self.sections.steering

    @property
    def tolerance(self):
        return self.sections.tolerance

    @property
    def plane(self):
        return self.sections.plane

    @property
    def budget(self):
        return self.sections.budget

    @property
    def cone(self):
        return self.sections.cone

    @property
    def laser(self):
        return self.sections.laser

    @property
    def formats(self) -> tuple:
        out = self.sections.outputs
        return SCHEMA["outputs"]["formats"].default if out is None else out.formats

    def replace_sections(self, **changes) -> "Design":
        """The design with some sections replaced, validated and built again."""
        from thzarray.app.design.write import design_data

        return parse_design(design_data(replace(self, sections=replace(self.sections,
                                                                         **changes))),
                            self.path)


def _section(checker, data, name, required=False):
    """The typed section ``name`` of ``data`` (None when absent or unusable)."""
    table = data.get(name)
    if table is None:
        if required:
            checker.problems.append(f"{name}: missing section; allowed: a [{name}] table")
        return None
    if not isinstance(table, dict):
        checker.fail(name, table, f"a [{name}] table")
        return None
    spec = SCHEMA[name]
    values, bad = {}, False
    for key in table:
        if key not in spec:
            checker.problems.append(f"{name}.{shorten(str(key), 40)}: unknown key"
                                    f"{suggest(key, list(spec))}; allowed: {', '.join(spec)}")
    kind = None
    if name in KIND_KEYS:
        selector = KIND_KEYS[name][0]
        kind = table.get(selector, spec[selector].default)
        known_kind = isinstance(kind, str) and kind in KIND_KEYS[name][1]
        for key in (table if known_kind else ()):
            if key in spec and not applies(name, key, kind):
                used = sorted(KIND_KEYS[name][1].get(kind, ()))
                checker.problems.append(
                    f"{name}.{key}: not used when {selector} = {shorten(repr(kind), 30)}; "
                    f"allowed: {', '.join(used) or 'none of the kind-specific keys'} with that "
                    f"{selector}")
                bad = True
    for key, s in spec.items():
        if not applies(name, key, kind):
            values[key] = None
        elif key in table:
            values[key] = checker.value(f"{name}.{key}", table[key], s)
            bad |= values[key] is None
        elif s.required:
            checker.problems.append(f"{name}.{key}: missing; allowed: {s.kind} value"
                                    f"{' (' + s.doc + ')' if s.doc else ''}")
            bad = True
        elif isinstance(s.default, dict):
            values[key] = checker.value(f"{name}.{key}", s.default, s)
        else:
            values[key] = s.default
    return None if bad else SECTION_TYPES[name](**values)


def _build(checker, path, builder, *args, **kwargs):
    """Call a physics constructor; its ValueError becomes a problem at ``path``."""
    try:
        return builder(*args, **kwargs)
    except ValueError as exc:
        checker.problems.append(f"{path}: {exc}")
        return None


def _wavelength(checker, sec):
    """The laser wavelength: [laser].wavelength, else [medium].laser_wavelength, else 800 nm."""
    given = None if sec.medium is None else sec.medium.laser_wavelength
    if sec.laser is not None:
        if given is not None and given != sec.laser.wavelength:
            checker.problems.append(
                f"medium.laser_wavelength: {given:g} m differs from laser.wavelength "
                f"{sec.laser.wavelength:g} m; allowed: the same wavelength, or omit "
                "medium.laser_wavelength")
        return sec.laser.wavelength
    return _DEFAULT_WAVELENGTH if given is None else given


def _medium(checker, sec, wavelength):
    m = sec.medium
    if m is None:
        return Medium.air(laser_wavelength=wavelength)
    if m.kind == "vacuum":
        return Medium.vacuum()
    if m.kind == "custom":
        if m.n_group is None or m.n_thz is None:
            checker.problems.append("medium: kind 'custom' needs n_group and n_thz; allowed: "
                                    "both given")
            return None
        return _build(checker, "medium", Medium, m.n_group, m.n_thz)
    return _build(checker, "medium", Medium.air, temperature_c=m.temperature,
                  pressure=m.pressure, relative_humidity=m.relative_humidity,
                  co2_fraction=m.co2, laser_wavelength=wavelength)


def _laser(checker, laser):
    """(Filament, Plasma, PlasmaEstimate) from [laser] through the laser model."""
    from thzarray.source.laser import FilamentationModel, Pulse, plasma_from_laser

    def run():
        pulse = Pulse(laser.energy, laser.duration, laser.beam_radius, laser.wavelength,
                      laser.focal_length)
        model = FilamentationModel(laser.n2, laser.clamped_intensity, laser.core_radius,
                                   laser.collision_rate)
        return plasma_from_laser(pulse, model)

    return _build(checker, "laser", run)


def laser_summary(estimate) -> str:
    """One line: what [laser] implies (P/P_cr, where the column is, the density)."""
    return (f"[laser] implies P/P_cr = {estimate.power_ratio:.3g}; plasma from "
            f"{estimate.onset:.4g} m to {estimate.end:.4g} m ({100 * estimate.length:.3g} cm, "
            f"{estimate.limited_by}); n_e = {estimate.electron_density * 1e-6:.2g} cm^-3")


def _filament(checker, path, f):
    profile = None
    if (f.profile_z is None) != (f.profile_w is None):
        checker.problems.append(f"{path}: profile_z and profile_w go together; allowed: both "
                                "or neither")
        return None
    if f.profile_z is not None:
        profile = (np.asarray(f.profile_z), np.asarray(f.profile_w))
    return _build(checker, path, Filament, f.length, start=f.start, axis=f.axis,
                  delay=f.delay, amplitude=f.amplitude, profile=profile)


_LAYOUT_NEEDS = {"line": ("count", "spacing"), "grid": ("shape", "spacing"),
                 "hexagonal": ("rings", "spacing"), "ring": ("count", "radius"),
                 "random": ("count", "radius"), "csv": ("csv",)}


def _layout(checker, lay, path, laser_column):
    """Filaments from a [layout] builder (None on problems, already reported)."""
    from thzarray.app.tables import read_layout
    from thzarray.array import layouts

    kind = lay.kind
    missing = [k for k in _LAYOUT_NEEDS[kind] if getattr(lay, k) is None]
    length, center = lay.length, lay.center
    if laser_column is not None:
        if lay.length is not None:
            checker.problems.append("layout.length: given with [laser]; allowed: one of them "
                                    "(the laser model sets the column length)")
            return None
        length = laser_column.length
        center = (center[0], center[1], center[2] + laser_column.start[2])
    elif kind != "csv" and length is None:
        missing.append("length")
    for k in missing:
        checker.problems.append(f"layout.{k}: missing; allowed: layout kind {kind!r} needs "
                                + ", ".join(_LAYOUT_NEEDS[kind] + ("length",)))
    if missing:
        return None
    if kind == "csv":
        return _build(checker, "layout.csv", read_layout, resolve_beside(lay.csv, path),
                      default_length=length, center=center)
    if kind == "grid" and len(lay.shape) != 2:
        checker.fail("layout.shape", list(lay.shape), "[nx, ny]")
        return None
    count = {"grid": lambda: lay.shape[0] * lay.shape[1],
             "hexagonal": lambda: 1 + 3 * lay.rings * (lay.rings + 1)}.get(
        kind, lambda: lay.count + (1 if kind == "ring" and lay.center_column else 0))()
    if count > MAX_FILAMENTS:
        checker.fail(f"layout.{'shape' if kind == 'grid' else 'rings'}", f"{count} columns",
                     f"at most {MAX_FILAMENTS} columns")
        return None
    common = dict(center=center, axis=lay.axis)
    calls = {
        "line": lambda: layouts.line(lay.count, lay.spacing, length, **common),
        "grid": lambda: layouts.grid(tuple(lay.shape), lay.spacing, length, **common),
        "hexagonal": lambda: layouts.hexagonal(lay.rings, lay.spacing, length, **common),
        "ring": lambda: layouts.ring(lay.count, lay.radius, length,
                                     center_column=lay.center_column, **common),
        "random": lambda: layouts.random_aperture(lay.count, lay.radius, lay.min_separation,
                                                  length, seed=lay.seed, **common),
    }
    return _build(checker, "layout", calls[kind])


def _sources(checker, data, sec, path, laser_column):
    given = [k for k in SOURCE_SECTIONS if k in data]
    if len(given) > 1:
        checker.problems.append(f"{given[1]}: both [{given[0]}] and [{given[1]}] given; "
                                "allowed: one of [filament], [[filaments]], [layout]")
        return None
    if laser_column is not None and given and given[0] != "layout":
        checker.problems.append(f"{given[0]}: given with [laser]; allowed: [laser] alone (one "
                                "column) or [laser] with [layout] (an array of such columns)")
        return None
    if sec.layout is not None:
        return _layout(checker, sec.layout, path, laser_column)
    if sec.filament is not None:
        fil = _filament(checker, "filament", sec.filament)
        return None if fil is None else (fil,)
    if sec.filaments is not None:
        out = [_filament(checker, f"filaments[{i}]", f) for i, f in enumerate(sec.filaments)]
        return None if any(f is None for f in out) else tuple(out)
    if laser_column is not None:
        return (laser_column,)
    if not given:
        checker.problems.append("filament: missing; allowed: a [filament] table, "
                                "[[filaments]] tables, a [layout], or a [laser]")
    return None


def _filament_list(checker, data):
    items = data.get("filaments")
    if items is None:
        return None
    if not isinstance(items, list) or not items or not all(isinstance(i, dict) for i in items):
        checker.fail("filaments", items, "a non-empty array of tables [[filaments]]")
        return None
    if len(items) > MAX_FILAMENTS:
        checker.fail("filaments", f"{len(items)} filaments", f"at most {MAX_FILAMENTS}")
        return None
    out = []
    for i, item in enumerate(items):
        sub = Checker()
        out.append(_section(sub, {"filament": item}, "filament"))
        checker.problems += [p.replace("filament", f"filaments[{i}]", 1) for p in sub.problems]
    return None if any(o is None for o in out) else tuple(out)


def _check_steering(checker, st, filaments):
    if st.toward is not None:
        if len(st.toward) != 2:
            checker.fail("steering.toward", list(st.toward), "[theta, phi], e.g. "
                         "['5 deg', '0 deg']")
        elif not 0 <= st.toward[0] <= np.pi:
            checker.fail("steering.toward[0]", st.toward[0], "a polar angle from 0 to pi rad "
                         "(0 to 180 deg)")
    if (st.aperture_radius is None) != (st.aperture_distance is None):
        checker.problems.append("steering: aperture_radius and aperture_distance go together; "
                                "allowed: both or neither")
    elif st.aperture_radius is not None and st.aperture_radius >= st.aperture_distance:
        checker.fail("steering.aperture_radius", st.aperture_radius,
                     "less than aperture_distance")
    if st.method == "phase-only" and st.design_freq is None:
        checker.problems.append("steering.design_freq: missing; allowed: method 'phase-only' "
                                "needs a design frequency, e.g. '0.3 THz'")
    if st.band is not None and (len(st.band) > 2 or (len(st.band) == 2
                                                    and st.band[1] <= st.band[0])):
        checker.fail("steering.band", list(st.band), "[low, high] with low < high, or one "
                     "frequency")
    if st.delays is not None and filaments is not None and len(st.delays) != len(filaments):
        checker.fail("steering.delays", f"{len(st.delays)} delays",
                     f"one delay per column ({len(filaments)})")


def _band_pair(checker, name, band):
    if band is not None and (len(band) > 2 or (len(band) == 2 and band[1] <= band[0])):
        checker.fail(name, list(band), "[low, high] with low < high, or one frequency")


def parse_design(data: dict, path: Path | None = None) -> Design:
    """Validate a parsed TOML document and build the design (raises DesignError)."""
    checker = Checker()
    if not isinstance(data, dict):
        raise DesignError(["design: not a TOML table"])
    known = set(SCHEMA) | {"filaments"}
    for key in data:
        if key not in known:
            checker.problems.append(f"{shorten(str(key), 40)}: unknown section"
                                    f"{suggest(key, sorted(known))}; allowed: "
                                    f"{', '.join(sorted(known))}")
    for key in known - {"filaments"}:
        if key in data and not isinstance(data[key], dict):
            checker.fail(key, data[key], f"a [{key}] table")
    typed = {name: (_section(checker, data, name, required=name in ("design", "observe"))
                    if isinstance(data.get(name, {}), dict) else None) for name in SCHEMA}
    sec = Sections(**{k: v for k, v in typed.items()},
                   filaments=_filament_list(checker, data))
    if sec.laser is not None and sec.plasma is not None:
        checker.problems.append("plasma: given with [laser]; allowed: one of them (the laser "
                                "model sets the plasma)")
    wavelength = _wavelength(checker, sec) if (sec.laser or sec.medium) else _DEFAULT_WAVELENGTH
    medium = _medium(checker, sec, wavelength)
    laser_fil, plasma, estimate, notes = None, None, None, []
    if sec.laser is not None:
        made = _laser(checker, sec.laser)
        if made is not None:
            laser_fil, plasma, estimate = made
            notes = [laser_summary(estimate)] + [f"[laser]: {n}" for n in estimate.notes]
    elif sec.plasma is not None:
        plasma = _build(checker, "plasma", Plasma, laser_wavelength=wavelength,
                        electron_density=sec.plasma.electron_density,
                        collision_rate=sec.plasma.collision_rate,
                        pulse_duration=sec.plasma.pulse_duration,
                        peak_intensity=sec.plasma.peak_intensity, radius=sec.plasma.radius)
    if sec.laser is None and isinstance(plasma, Plasma):
        from thzarray.source.plasma import finite_radius_note

        thin = finite_radius_note(plasma)
        notes += [f"[plasma]: {thin}"] if thin else []
    filaments = _sources(checker, data, sec, path, laser_fil)
    if laser_fil is not None and filaments is not None and len(filaments) > 1:
        notes.append(f"[laser] describes each beam: each of the {len(filaments)} columns is "
                     f"made by the whole {1e3 * sec.laser.energy:.3g} mJ pulse (to share one "
                     "pulse among the columns, see the split command)")
    if sec.steering is not None:
        _check_steering(checker, sec.steering, filaments)
    grid = None
    if sec.observe is not None:
        freq, theta, phi = (grid_values(getattr(sec.observe, k))
                            for k in ("freq", "theta", "phi"))
        grid = Grid(freq, theta, phi)
        if grid.size > MAX_GRID_POINTS:
            checker.fail("observe", f"{grid.size} grid points",
                         f"at most {MAX_GRID_POINTS} (freq x theta x phi)")
    if sec.cone is not None:
        _band_pair(checker, "cone.band", sec.cone.band)
    if sec.outputs is not None:
        for fmt in sec.outputs.formats:
            if fmt not in OUTPUT_FORMATS:
                checker.problems.append(f"outputs.formats: {shorten(repr(fmt), 40)} is not "
                                        f"allowed{suggest(fmt, OUTPUT_FORMATS)}; allowed: "
                                        f"{', '.join(OUTPUT_FORMATS)}")
    receiver, receiver_band = (None, None)
    if sec.receiver is not None:
        receiver, receiver_band = receiver_of(sec.receiver, path, checker.problems)
    lines = line_list(sec.medium, path, checker.problems)
    check_waveform(sec.waveform, checker.problems)
    check_calibration(sec.calibration, sec, checker.problems)
    if not checker.problems:
        checker.problems += size_problems(sec, receiver_band, filaments=filaments,
                                          medium=medium)
    source = None
    if filaments is not None and medium is not None and not checker.problems:
        source = apply_source(sec.source, filaments, medium, plasma, wavelength, estimate,
                              checker.problems)
        if source is not None:
            filaments, plasma = source.filaments, source.plasma
            notes += list(source.notes)
            if source.dephasing_length is not None:
                checker.problems += two_colour_problems(sec, filaments,
                                                        source.dephasing_length)
    if checker.problems:
        raise DesignError(checker.problems)
    if filaments is None or medium is None or grid is None or sec.design is None:
        raise DesignError(["design: incomplete (see the other messages)"])
    return Design(sections=sec, path=None if path is None else Path(path), medium=medium,
                  plasma=plasma, filaments=tuple(filaments), estimate=estimate,
                  receiver=receiver, receiver_band=receiver_band, lines=lines, source=source,
                  grid=grid, notes=tuple(notes))


def load_design(path) -> Design:
    """Read and validate a TOML design file (raises DesignError with every problem)."""
    return parse_design(read_toml(path), Path(path))
