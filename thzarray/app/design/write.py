"""Writing a design back to TOML, so that it loads to an equal design.

Every quantity is written as its SI value followed by its SI unit (``"0.03 m"``,
``"1e-12 s"``, ``"3e+11 Hz"``), angles in radians, fractions and plain numbers as numbers:
the reader converts each with a factor of exactly one, so ``load(write(design)) ==
design`` for every key. TOML is written by ``tomli_w``.
"""

from __future__ import annotations

from dataclasses import fields

from thzarray.app.design.checker import GridSpec
from thzarray.app.design.schema import SCHEMA
from thzarray.app.units import DIMENSIONS

__all__ = ["design_data", "design_to_toml"]

_ORDER = tuple(SCHEMA)  # the schema's order: design, medium, laser, plasma, source, ...


def _quantity(value, kind):
    if kind in ("number", "fraction"):
        return float(value)
    unit = DIMENSIONS[kind][1]
    return f"{float(value)!r} {unit}"


def _value(value, kind):
    if kind in ("str", "int", "bool", "choice"):
        return value
    if kind == "list:int":
        return list(value)
    head, _, sub = kind.partition(":")
    if head in ("vector", "list"):
        return list(value) if sub == "str" else [_quantity(v, sub) for v in value]
    if head == "grid":
        if isinstance(value, GridSpec):
            return {"start": _quantity(value.start, sub), "stop": _quantity(value.stop, sub),
                    "points": value.points}
        return [_quantity(v, sub) for v in value]
    return _quantity(value, kind)


def _table(name, section) -> dict:
    spec = SCHEMA[name]
    out = {}
    for f in fields(section):
        value = getattr(section, f.name)
        if value is not None:
            out[f.name] = _value(value, spec[f.name].kind)
    return out


def design_data(design) -> dict:
    """The design as a TOML-ready dict (every present section, every key given a value)."""
    sec = design.sections
    data = {}
    for name in _ORDER:
        section = getattr(sec, name)
        if section is not None:
            data[name] = _table(name, section)
    if sec.filaments is not None:
        data["filaments"] = [_table("filament", f) for f in sec.filaments]
    return data


def design_to_toml(design, header: str = "") -> str:
    """TOML text of a design; ``header`` (one or more lines) is written as comments first."""
    import tomli_w

    lines = "".join(f"# {line}\n" for line in header.splitlines())
    return lines + tomli_w.dumps(design_data(design))
