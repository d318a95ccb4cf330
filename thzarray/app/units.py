"""Unit-bearing strings at the edges (design files, command-line flags) -> SI floats.

Parsing is done by `pint` (a well-kept units library); the physics core never sees a unit
string. A quantity is a plain number, taken as SI (radians for angles, degrees Celsius for
temperatures, a fraction 0..1 for fractions), or a string with one number and a unit of
exactly the expected dimension: "30 cm", "0.3 THz", "120 fs", "2 deg", "50 %",
"1e16 cm^-3". Doubled or powered units ("9.91 deg deg", "50 %^2", "3 deg^2"), units of
another kind ("3 sr" for an angle, "30 cm deg" for a length) and non-finite numbers are
refused with a message naming the kind expected.

When a value is read correctly but lies outside the allowed range, :func:`suggest_unit`
finds the unit the user probably meant ("0.1" read as 0.1 Hz -> did you mean '0.1 THz'?).
"""

from __future__ import annotations

import math
import re
from functools import lru_cache

__all__ = ["DIMENSIONS", "UnitError", "format_si", "kind_name", "parse_quantity", "si_text",
           "suggest_unit"]


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
    "n2": ("[time]**3/[mass]", "m^2/W", "3.2e-19 cm^2/W"),
    "nep": ("[length]**2*[mass]/[time]**2.5", "W/Hz^0.5", "1e-10 W/Hz^0.5"),
    "field": ("[length]*[mass]/[current]/[time]**3", "V/m", "300 V/m"),
    "number": ("", "", "1.5"),
}

# The only units a dimensionless kind may carry (exactly one, to the first power).
_ANGLE_UNITS = {"radian", "degree", "milliradian", "microradian", "arcminute", "arcsecond",
                "turn"}
_FRACTION_UNITS = {"percent", "ppm", "ppb", "permille"}
_TEMPERATURE_UNITS = {"degree_Celsius", "kelvin", "degree_Fahrenheit"}

# Units tried, in order, when a value is out of range: the first that brings it into range
# is suggested.
_SUGGEST = {
    "length": ("mm", "cm", "um", "nm", "km"),
    "time": ("ps", "fs", "ns", "us"),
    "frequency": ("THz", "GHz", "MHz"),
    "rate": ("THz", "GHz"),
    "angle": ("deg", "mrad"),
    "fraction": ("%", "ppm"),
    "density": ("cm^-3",),
    "intensity": ("W/cm^2",),
    "pressure": ("hPa", "kPa"),
    "energy": ("mJ", "uJ", "nJ"),
    "power": ("GW", "MW", "TW"),
    "area": ("mm^2", "cm^2"),
    "n2": ("cm^2/W",),
    "nep": ("nW/Hz^0.5", "pW/Hz^0.5"),
    "field": ("kV/m", "V/cm"),
}

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")
_MAX_TEXT = 200


@lru_cache(maxsize=1)
def _registry():
    import pint

    return pint.UnitRegistry(autoconvert_offset_to_baseunit=True)


def _short(value) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


_NAMES = {"n2": "Kerr index (area per power)", "nep": "noise-equivalent power",
          "field": "field strength", "rate": "rate (per time)",
          "density": "density (per volume)", "intensity": "intensity (power per area)"}


def kind_name(kind: str) -> str:
    """The kind as a noun phrase with its article, e.g. 'an angle', 'a length'."""
    name = _NAMES.get(kind, kind)
    return f"{'an' if name[0] in 'aeiou' else 'a'} {name}"


def _expected(kind: str) -> str:
    example = DIMENSIONS[kind][2]
    if kind == "number":
        return "a plain number, e.g. 1.5"
    if kind == "fraction":
        return "a fraction (plain number 0..1, or with %, ppm), e.g. '50 %'"
    return f"{kind_name(kind)} (plain number in {DIMENSIONS[kind][1] or 'SI'}, or with a " \
           f"unit), e.g. {example!r}"


def parse_quantity(value, kind: str) -> float:
    """Convert a design-file or flag value to the SI float of dimension ``kind``.

    Parameters
    ----------
    value : str or float or int
        "30 cm", "0.3 THz", "50 %", ... or a plain number (taken as SI; for ``angle`` a plain
        number is radians, for ``temperature`` degrees Celsius, for ``fraction`` 0..1).
    kind : str
        A key of :data:`DIMENSIONS`.

    Returns
    -------
    float
        The value in SI (finite).

    Raises
    ------
    UnitError
        With the value found (shortened) and the kind allowed.
    """
    if kind not in DIMENSIONS:
        raise UnitError(f"kind = {kind!r} is not allowed; allowed: {', '.join(DIMENSIONS)}")
    if isinstance(value, bool):
        raise UnitError(f"{value!r} is not a quantity; allowed: {_expected(kind)}")
    if isinstance(value, (int, float)):
        out = float(value) if not isinstance(value, int) or abs(value) < 2**1023 else math.inf
    elif isinstance(value, str):
        if len(value) > _MAX_TEXT:
            raise UnitError(f"{_short(value)} is too long ({len(value)} characters); allowed: "
                            f"{_expected(kind)}")
        match = _NUMBER.match(value)
        if not match:
            raise UnitError(f"{_short(value)} is not a number with a unit; allowed: "
                            f"{_expected(kind)}")
        number = float(match.group(1))
        out = _convert(number, match.group(2), kind, value) if math.isfinite(number) else number
    else:
        raise UnitError(f"{_short(value)} is not a quantity; allowed: {_expected(kind)}")
    if not math.isfinite(out):
        raise UnitError(f"{_short(value)} is not finite; allowed: {_expected(kind)}")
    return out


def _unit_entries(unit: str):
    """pint's parsed unit as {name: power}, or UnitError for text pint cannot read."""
    import pint

    ureg = _registry()
    try:
        parsed = ureg.parse_units(unit.replace("%", "percent"))
    except (pint.errors.UndefinedUnitError, pint.errors.DimensionalityError, AttributeError,
            TypeError, ValueError, AssertionError, SyntaxError, KeyError) as exc:
        raise UnitError(f"unknown unit {unit!r}") from exc
    return parsed, dict(parsed._units)


def _convert(number, unit, kind, original):
    if not unit:
        return number
    dim = DIMENSIONS[kind][0]
    try:
        parsed, entries = _unit_entries(unit)
    except UnitError:
        raise UnitError(f"{_short(original)} has an unknown unit {unit!r}; allowed: "
                        f"{_expected(kind)}") from None
    ureg = _registry()
    wrong = UnitError(f"{_short(original)} has the unit {unit!r}, which is not "
                      f"{kind_name(kind)}; allowed: {_expected(kind)}")
    single = len(entries) == 1 and next(iter(entries.values())) == 1
    name = next(iter(entries)) if single else None
    if kind == "number":
        raise wrong
    if kind == "angle":
        if not (single and name in _ANGLE_UNITS):
            raise wrong
        return float(ureg.Quantity(number, parsed).to("radian").magnitude)
    if kind == "fraction":
        if not (single and name in _FRACTION_UNITS):
            raise wrong
        return float(ureg.Quantity(number, parsed).to("dimensionless").magnitude)
    if kind == "temperature":
        if not (single and name in _TEMPERATURE_UNITS):
            raise wrong
        return float(ureg.Quantity(number, parsed).to("degC").magnitude)
    # Dimensioned kinds: the dimension must match and no dimensionless unit (deg, %, sr,
    # ppm...) may ride along, since pint would silently scale by it.
    for entry in entries:
        if ureg.parse_units(entry).dimensionless:
            raise wrong
    q = ureg.Quantity(number, parsed)
    if not q.check(dim):
        raise wrong
    return float(q.to_base_units().magnitude)


def si_text(kind: str) -> str:
    """The SI unit a plain number of ``kind`` is read in ('' for dimensionless kinds)."""
    return DIMENSIONS[kind][1]


def suggest_unit(kind: str, value, low=None, high=None, low_open=False) -> str:
    """A hint for an out-of-range plain number: how it was read and the unit probably meant.

    Parameters
    ----------
    kind : str
        A key of :data:`DIMENSIONS`.
    value : str or float
        The value as the user wrote it.
    low, high : float, optional
        The allowed range in SI.
    low_open : bool
        Whether ``low`` itself is excluded.

    Returns
    -------
    str
        E.g. " (read as 0.1 Hz; did you mean '0.1 THz'?)", or '' when the value carried a
        unit or no unit brings it into range.
    """
    if isinstance(value, bool):
        return ""
    if isinstance(value, str):
        match = _NUMBER.match(value)
        if not match or match.group(2):
            return ""
        number = float(match.group(1))
    elif isinstance(value, (int, float)):
        number = float(value)
    else:
        return ""
    si = DIMENSIONS[kind][1]
    read = f" (read as {number:g}{' ' + si if si else ''}"
    for unit in _SUGGEST.get(kind, ()):
        try:
            candidate = parse_quantity(f"{number:g} {unit}", kind)
        except UnitError:
            continue
        above = low is None or (candidate > low if low_open else candidate >= low)
        below = high is None or candidate <= high
        if above and below:
            return f"{read}; did you mean '{number:g} {unit}'?)"
    return read + ")" if si else ""


def format_si(value: float, unit: str, digits: int = 4) -> str:
    """A short human string with an SI prefix, e.g. format_si(3e11, 'Hz') -> '300 GHz'."""
    if value == 0 or not math.isfinite(value):
        return f"{value:g} {unit}"
    prefixes = {-15: "f", -12: "p", -9: "n", -6: "u", -3: "m", 0: "", 3: "k", 6: "M",
                9: "G", 12: "T"}
    exp3 = int(math.floor(math.log10(abs(value)) / 3) * 3)
    exp3 = min(max(exp3, -15), 12)
    return f"{value / 10**exp3:.{digits}g} {prefixes[exp3]}{unit}"
