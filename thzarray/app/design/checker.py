"""Reading and checking design-like TOML files: every problem at once, one line each.

:class:`Checker` converts values to SI through :mod:`thzarray.app.units` and collects
problems (key path, value found, what is allowed); :func:`suggest` gives the did-you-mean of
unknown keys. Sweep files share both. Files are read through :func:`read_toml`, which
refuses special and oversized files before reading them.
"""

from __future__ import annotations

import difflib
import tomllib
from dataclasses import dataclass

import numpy as np

from thzarray.app.design.schema import Spec
from thzarray.app.files import read_text_capped
from thzarray.app.units import DIMENSIONS, UnitError, parse_quantity, suggest_unit
from thzarray.base.checks import shorten, unit_vector

__all__ = ["Checker", "DesignError", "GridSpec", "MAX_TOML_BYTES", "read_toml", "suggest"]

GRID_KEYS = ("start", "stop", "points")
MAX_TOML_BYTES = 1 << 20
"""Largest design or sweep file read (1 MiB)."""
MAX_GRID_VALUES = 10**7


class DesignError(ValueError):
    """A design file with problems; ``problems`` lists them, one line each."""

    def __init__(self, problems):
        self.problems = list(problems)
        super().__init__("\n".join(self.problems))


@dataclass(frozen=True)
class GridSpec:
    """Evenly spaced values written as {start, stop, points} (SI)."""

    start: float
    stop: float
    points: int

    def values(self) -> np.ndarray:
        """The values, ``numpy.linspace(start, stop, points)``."""
        return np.linspace(self.start, self.stop, self.points)

    @property
    def size(self) -> int:
        return self.points


def grid_values(value) -> np.ndarray:
    """The 1-D array of a grid-kind value (a GridSpec or a tuple of values)."""
    return value.values() if isinstance(value, GridSpec) else np.asarray(value, dtype=float)


def suggest(key, known):
    """' (did you mean ...?)' for the closest known name, or ''."""
    close = difflib.get_close_matches(str(key)[:80], known, n=1, cutoff=0.6)
    return f" (did you mean {close[0]!r}?)" if close else ""


def _fmt(value):
    return shorten(repr(value), 60)


class Checker:
    """Collects problems (one line each: key path, value found, what is allowed)."""

    def __init__(self):
        self.problems: list[str] = []

    def fail(self, path, value, allowed):
        self.problems.append(f"{path}: {_fmt(value)} is not allowed; allowed: {allowed}")

    @staticmethod
    def range_text(spec, unit):
        parts = []
        if spec.low is not None:
            parts.append(f"{'>' if spec.low_open else '>='} {spec.low:g}")
        if spec.high is not None:
            parts.append(f"<= {spec.high:g}")
        u = f" {unit}" if unit else ""
        return " and ".join(parts) + u if parts else "finite values"

    def scalar(self, path, value, spec, kind):
        try:
            out = parse_quantity(value, kind)
        except UnitError as exc:
            self.problems.append(f"{path}: {exc}")
            return None
        unit = DIMENSIONS[kind][1]
        bad = ((spec.low is not None and (out <= spec.low if spec.low_open else out < spec.low))
               or (spec.high is not None and out > spec.high))
        if bad:
            if isinstance(value, str) and kind == "angle":
                shown = f"{_fmt(value)} (= {out:.6g} rad)"
            else:
                shown = _fmt(value) + suggest_unit(kind, value, spec.low, spec.high,
                                                   spec.low_open)
            self.problems.append(f"{path}: {shown} is out of range; allowed: "
                                 f"{self.range_text(spec, unit)}")
            return None
        return out

    def value(self, path, value, spec):
        kind = spec.kind
        if kind == "str":
            if not isinstance(value, str) or len(value) > 1000:
                self.fail(path, value, "a string (up to 1000 characters)")
                return None
            if not all(c.isprintable() or c in "\t\n" for c in value):
                # NUL and terminal escapes would reach file names, netCDF and the terminal.
                self.fail(path, value, "printable text (no control characters)")
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
            if (not isinstance(value, list) or not value or len(value) > 16
                    or not all(isinstance(v, int) and not isinstance(v, bool)
                               and spec.low <= v <= spec.high for v in value)):
                self.fail(path, value, f"a list of whole numbers from {spec.low:g} to "
                                       f"{spec.high:g}")
                return None
            return tuple(value)
        if kind == "choice":
            if not isinstance(value, str) or value not in spec.choices:
                self.fail(path, value, "one of " + ", ".join(spec.choices)
                          + (suggest(value, spec.choices) if isinstance(value, str) else ""))
                return None
            return value
        if kind.startswith("vector:"):
            if not isinstance(value, list) or len(value) != 3:
                self.fail(path, value, "a list of three values [x, y, z]")
                return None
            sub = kind.split(":", 1)[1]
            out = [self.scalar(f"{path}[{i}]", v, spec, sub) for i, v in enumerate(value)]
            if any(o is None for o in out):
                return None
            if sub == "number":  # a direction: refused when it has none (zero, subnormal)
                try:
                    unit_vector(path, out)
                except ValueError as exc:
                    self.problems.append(str(exc))
                    return None
            return tuple(out)
        if kind.startswith("list:"):
            sub = kind.split(":", 1)[1]
            if not isinstance(value, list) or not value:
                self.fail(path, value, "a non-empty list")
                return None
            if len(value) > MAX_GRID_VALUES:
                self.fail(path, f"a list of {len(value)} values",
                          f"at most {MAX_GRID_VALUES} values")
                return None
            if sub == "str":
                if not all(isinstance(v, str) and len(v) <= 100 for v in value):
                    self.fail(path, value, "a list of short strings")
                    return None
                return tuple(value)
            out = [self.scalar(f"{path}[{i}]", v, spec, sub) for i, v in enumerate(value)]
            return None if any(o is None for o in out) else tuple(out)
        if kind.startswith("grid:"):
            return self.grid(path, value, spec, kind.split(":", 1)[1])
        return self.scalar(path, value, spec, kind)

    def grid(self, path, value, spec, sub):
        if isinstance(value, GridSpec):
            return value
        if isinstance(value, list):
            return self.value(path, value, Spec(f"list:{sub}", low=spec.low, high=spec.high,
                                                low_open=spec.low_open))
        if not isinstance(value, dict):
            self.fail(path, value, "a list of values or a table {start, stop, points}")
            return None
        unknown = [k for k in value if k not in GRID_KEYS]
        for k in unknown:
            self.problems.append(f"{path}.{shorten(str(k), 40)}: unknown key"
                                 f"{suggest(k, GRID_KEYS)}; allowed: a grid table of exactly "
                                 f"{', '.join(GRID_KEYS)}")
        missing = [] if unknown else [k for k in GRID_KEYS if k not in value]
        for k in missing:
            self.problems.append(f"{path}.{k}: missing; allowed: a grid needs start, stop, "
                                 "points")
        if unknown or missing:
            return None
        start = self.scalar(f"{path}.start", value["start"], spec, sub)
        stop = self.scalar(f"{path}.stop", value["stop"], spec, sub)
        points = value["points"]
        if (not isinstance(points, int) or isinstance(points, bool)
                or not 1 <= points <= MAX_GRID_VALUES):
            self.fail(f"{path}.points", points, f"a whole number from 1 to {MAX_GRID_VALUES}")
            return None
        if start is None or stop is None:
            return None
        if points > 1 and stop <= start:
            self.fail(f"{path}.stop", value["stop"], f"a value above start ({value['start']!r})")
            return None
        if points == 1 and stop != start:
            self.fail(f"{path}.stop", value["stop"], "equal to start for a single point")
            return None
        return GridSpec(float(start), float(stop), int(points))


def read_toml(path, what: str = "design") -> dict:
    """Parse a TOML file; unreadable, special, oversized or invalid files raise DesignError.

    A UTF-8 byte-order mark (as spreadsheets and some editors write) is accepted.
    """
    try:
        text = read_text_capped(path, MAX_TOML_BYTES, what)
    except ValueError as exc:
        raise DesignError([str(exc)]) from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError([f"{shorten(str(path))}: not valid TOML ({shorten(str(exc), 120)})"]) \
            from None
    except RecursionError:
        raise DesignError([f"{shorten(str(path))}: not valid TOML (nested too deeply); allowed: "
                           "a design of tables and values"]) from None
