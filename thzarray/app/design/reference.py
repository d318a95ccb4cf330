"""The key reference of designs/README.md, generated from the schema (one source of truth).

``python -m thzarray.app.design.reference`` prints it; a test checks that the README holds
exactly this text between its ``<!-- keys -->`` markers.
"""

from __future__ import annotations

import math

from thzarray.app.design.schema import SCHEMA
from thzarray.app.units import DIMENSIONS

__all__ = ["keys_markdown"]

_KIND_WORDS = {"str": "text", "int": "whole number", "bool": "true / false",
               "number": "number", "fraction": "fraction"}


def _kind(spec) -> str:
    if spec.kind == "choice":
        return " / ".join(f"`{c}`" for c in spec.choices)
    head, _, sub = spec.kind.partition(":")
    base = sub or head
    unit = DIMENSIONS.get(base, (None, ""))[1]
    word = _KIND_WORDS.get(base, base)
    word = f"{word} ({unit})" if unit and base not in ("number", "fraction") else word
    if head == "vector":
        return f"[x, y, z] of {word}"
    if head == "list":
        return f"list of {word}"
    if head == "grid":
        return f"grid of {word}"
    return word


def _number(v) -> str:
    if isinstance(v, float) and v == math.pi:
        return "pi"
    return f"{v:g}"


def _default(spec) -> str:
    if spec.required:
        return "required"
    d = spec.default
    if d is None:
        return "-"
    if isinstance(d, dict):
        return f"{_number(d['start'])} to {_number(d['stop'])}, {d['points']} points"
    if isinstance(d, (tuple, list)):
        return "[" + ", ".join(_number(v) if not isinstance(v, str) else v for v in d) + "]"
    if isinstance(d, bool):
        return "true" if d else "false"
    if isinstance(d, float):
        return _number(d)
    return str(d) if d != "" else '""'


def _allowed(spec) -> str:
    if spec.kind in ("str", "bool", "choice") or spec.kind.endswith(":str"):
        return ""
    parts = []
    if spec.low is not None:
        parts.append(f"{'>' if spec.low_open else '>='} {_number(spec.low)}")
    if spec.high is not None:
        parts.append(f"<= {_number(spec.high)}")
    base = spec.kind.partition(":")[2] or spec.kind
    unit = DIMENSIONS.get(base, (None, ""))[1]
    return " and ".join(parts) + (f" {unit}" if unit and parts else "")


def keys_markdown() -> str:
    """One table per section: key, kind (SI unit), default, allowed range, meaning, example."""
    out = []
    for section, keys in SCHEMA.items():
        out.append(f"### [{section}]\n")
        out.append("| key | kind (SI unit) | default | allowed (SI) | meaning | example |")
        out.append("| --- | --- | --- | --- | --- | --- |")
        for key, spec in keys.items():
            out.append(f"| `{key}` | {_kind(spec)} | {_default(spec)} | {_allowed(spec)} | "
                       f"{spec.doc} | `{spec.example}` |")
        out.append("")
    return "\n".join(out)


if __name__ == "__main__":
    print(keys_markdown())
