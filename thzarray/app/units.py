"""Unit-bearing strings at the edges (design files, command-line flags) -> SI floats.

Parsing is done by `pint` (a well-kept units library); the physics core never sees a unit
string. Quantities may be given as strings with units ("30 cm", "0.3 THz", "120 fs",
"2 deg", "50 %", "1e16 cm^-3") or as plain numbers, which are taken as SI.
"""

from __future__ import annotations

import math
import re
from functools import lru_cache

__all__ = ["DIMENSIONS", "UnitError", "parse_quantity", "format_si"]


class UnitError(ValueError):
    """A quantity string that cannot be read or has the wrong dimension."""


# name -> (pint dimensionality, SI unit used inside, human example)
DIMENSIONS = {
    "length": ("[length]", "m", "30 cm"),
    "time": ("[time]", "s", "120 fs"),
    "frequency": ("1/[time]", "Hz", "0.3 THz"),
    "rate": ("1/[time]", "1/s", "2e12 1/s"),
    "angle": ("", "rad", "2 deg"),
    "fraction": ("", "", "50 %"),
    "density": ("1/[length]**3", "m^-3", "1e16 cm^-3"),
    "intensity": ("[mass]/[time]**3", "W/m^2", "5e13 W/cm^2"),
    "pressure": ("[mass]/[length]/[time]**2", "Pa", "1013.25 hPa"),
    "temperature": ("[temperature]", "degC", "20 degC"),
    "energy": ("[length]**2*[mass]/[time]**2", "J", "5 mJ"),
    "power": ("[length]**2*[mass]/[time]**3", "W", "10 GW"),
    "area": ("[length]**2", "m^2", "1 cm^2"),
    "n2": ("[length]**2*[time]**3/[mass]", "m^2/W", "3.2e-19 cm^2/W"),
    "number": ("", "", "1.5"),
}

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


@lru_cache(maxsize=1)
def _registry():
    import pint

    return pint.UnitRegistry(autoconvert_offset_to_baseunit=True)


def parse_quantity(value, kind: str) -> float:
    """Convert a design-file or flag value to the SI float of dimension ``kind``.

    Parameters
    ----------
    value : str or float or int
        "30 cm", "0.3 THz", "50 %", ... or a plain number (taken as SI; for ``angle`` a plain
        number is radians, for ``temperature`` degrees Celsius, for ``fraction`` 0..1).
    kind : str
        A key of :data:`DIMENSIONS`.

    Raises
    ------
    UnitError
        With the value found and what is allowed.
    """
    dim, si, example = DIMENSIONS[kind]
    if isinstance(value, bool):
        raise UnitError(f"{value!r} is not a quantity; allowed: a number or a string like "
                        f"{example!r}")
    if isinstance(value, (int, float)):
        out = float(value)
    elif isinstance(value, str):
        match = _NUMBER.match(value)
        if not match:
            raise UnitError(f"{value!r} is not a number with a unit; allowed: e.g. {example!r}")
        number, unit = float(match.group(1)), match.group(2)
        out = _convert(number, unit, kind, dim, si, example, value)
    else:
        raise UnitError(f"{value!r} is not a quantity; allowed: a number or a string like "
                        f"{example!r}")
    if not math.isfinite(out):
        raise UnitError(f"{value!r} is not finite; allowed: finite numbers like {example!r}")
    return out


def _convert(number, unit, kind, dim, si, example, original):
    if not unit:
        return number
    ureg = _registry()
    import pint

    try:
        if kind == "temperature":
            return float(ureg.Quantity(number, unit).to("degC").magnitude)
        q = ureg.Quantity(number, ureg.parse_units(unit.replace("%", "percent")))
    except (pint.errors.UndefinedUnitError, pint.errors.DimensionalityError,
            AttributeError, TypeError, ValueError, AssertionError) as exc:
        raise UnitError(f"{original!r} has an unknown unit {unit!r}; allowed: e.g. "
                        f"{example!r}") from exc
    if dim and not q.check(dim):
        raise UnitError(f"{original!r} is not a {kind}; allowed: e.g. {example!r}")
    if not dim and not q.dimensionless:
        raise UnitError(f"{original!r} is not a {kind}; allowed: e.g. {example!r}")
    if kind == "angle":
        return float(q.to("radian").magnitude)
    return float(q.to_base_units().magnitude)


def format_si(value: float, unit: str, digits: int = 4) -> str:
    """A short human string with an SI prefix, e.g. format_si(3e11, 'Hz') -> '300 GHz'."""
    if value == 0 or not math.isfinite(value):
        return f"{value:g} {unit}"
    prefixes = {-15: "f", -12: "p", -9: "n", -6: "u", -3: "m", 0: "", 3: "k", 6: "M",
                9: "G", 12: "T"}
    exp3 = int(math.floor(math.log10(abs(value)) / 3) * 3)
    exp3 = min(max(exp3, -15), 12)
    return f"{value / 10**exp3:.{digits}g} {prefixes[exp3]}{unit}"
