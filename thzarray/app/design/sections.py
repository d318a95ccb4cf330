"""Typed design sections: one frozen object per TOML section, SI values, built from the schema.

Each section class has one field per key of :data:`thzarray.app.design.schema.SCHEMA`
(``MediumSection.temperature``, ``SteeringSection.toward``, ...). Values are SI floats,
tuples for vectors and lists, :class:`~thzarray.app.design.checker.GridSpec` for
``{start, stop, points}`` tables, strings, ints and bools; ``None`` for an optional key
that was not given. Two sections are equal when every value is equal, so a design that is
written and loaded again compares equal to the original.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields, make_dataclass

from thzarray.app.design.schema import SCHEMA

__all__ = ["SECTION_TYPES", "Sections", "section_values"]


def _section_type(name: str):
    spec = SCHEMA[name]
    cls = make_dataclass(
        "".join(part.title() for part in name.split("_")) + "Section",
        [(key, object, field(default=None)) for key in spec],
        frozen=True)
    cls.__module__ = __name__
    cls.__doc__ = (f"The [{name}] section (SI values). Keys: "
                   + "; ".join(f"``{k}``: {s.doc or s.kind}" for k, s in spec.items()) + ".")
    return cls


SECTION_TYPES = {name: _section_type(name) for name in SCHEMA}
"""Section name -> its frozen dataclass."""

globals().update({cls.__name__: cls for cls in SECTION_TYPES.values()})


def section_values(section) -> dict:
    """A section's keys and values (SI), ``None`` values left out."""
    return {f.name: getattr(section, f.name) for f in fields(section)
            if getattr(section, f.name) is not None}


@dataclass(frozen=True)
class Sections:
    """Every section of a design as given in its file (None for a section not given).

    ``filaments`` holds the ``[[filaments]]`` tables as a tuple of filament sections.
    """

    design: object
    observe: object
    medium: object = None
    laser: object = None
    plasma: object = None
    source: object = None
    filament: object = None
    filaments: tuple | None = None
    layout: object = None
    steering: object = None
    tolerance: object = None
    cone: object = None
    receiver: object = None
    plane: object = None
    budget: object = None
    waveform: object = None
    calibration: object = None
    split: object = None
    bench: object = None
    outputs: object = None
