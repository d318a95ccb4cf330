"""Reading and checking design-like TOML files: every problem at once, one line each.

:class:`Checker` converts values to SI through :mod:`thzarray.app.units` and collects
problems (key path, value found, what is allowed); :func:`suggest` gives the did-you-mean of
unknown keys. Sweep files share both.
"""

from __future__ import annotations

import difflib
import tomllib
from pathlib import Path

import numpy as np

from thzarray.app.design.schema import Spec
from thzarray.app.units import DIMENSIONS, UnitError, parse_quantity

__all__ = ["Checker", "DesignError", "read_toml", "suggest"]

GRID_KEYS = ("start", "stop", "points")


class DesignError(ValueError):
    """A design file with problems; ``problems`` lists them, one line each."""

    def __init__(self, problems):
        self.problems = list(problems)
        super().__init__("\n".join(self.problems))


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
        unknown = [k for k in value if k not in GRID_KEYS]
        for k in unknown:
            self.problems.append(f"{path}.{k}: unknown key{suggest(k, GRID_KEYS)}; "
                                 f"allowed: a grid table of exactly {', '.join(GRID_KEYS)}")
        missing = [] if unknown else [k for k in GRID_KEYS if k not in value]
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
