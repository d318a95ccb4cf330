"""Argument checks shared by the physics core.

Every failure raises ``ValueError`` whose message names the parameter, the value received
and the range allowed, so that the command line can print it as one line.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "as_float_array",
    "check_scalar",
    "check_vector3",
]


def _describe(value) -> str:
    arr = np.asarray(value)
    if arr.ndim == 0:
        return repr(arr.item())
    bad = arr.ravel()
    return f"array of shape {arr.shape} (e.g. {bad[0].item()!r})"


def _fail(name: str, value, allowed: str) -> ValueError:
    return ValueError(f"{name} = {value} is not allowed; allowed: {allowed}")


def as_float_array(
    name: str,
    value,
    *,
    low: float | None = None,
    high: float | None = None,
    low_open: bool = False,
    high_open: bool = False,
    unit: str = "",
) -> np.ndarray:
    """Convert ``value`` to a finite float array and check ``low <= value <= high``.

    ``low_open`` / ``high_open`` make the bound strict. ``unit`` is only used in the
    message.
    """
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise _fail(name, repr(value), f"real numbers{_unit(unit)}") from None
    allowed = _range_text(low, high, low_open, high_open, unit)
    if arr.size == 0:
        raise _fail(name, "an empty array", allowed)
    finite = np.isfinite(arr)
    if not finite.all():
        first = arr[~finite].ravel()[0].item()
        raise _fail(name, repr(first) if arr.ndim == 0 else f"{first!r} (in {_describe(arr)})",
                    allowed)
    for bound, is_open, is_low in ((low, low_open, True), (high, high_open, False)):
        if bound is None:
            continue
        if is_low:
            bad = arr <= bound if is_open else arr < bound
        else:
            bad = arr >= bound if is_open else arr > bound
        if bad.any():
            first = arr[bad].ravel()[0].item()
            where = "" if arr.ndim == 0 else f" (in {_describe(arr)})"
            raise _fail(name, f"{first!r}{where}", allowed)
    return arr


def check_scalar(name: str, value, **kw) -> float:
    """Like :func:`as_float_array` for one real number; returns a Python float."""
    arr = np.asarray(value)
    if arr.ndim != 0:
        raise _fail(name, _describe(value), "a single real number")
    return float(as_float_array(name, value, **kw))


def check_vector3(name: str, value, *, nonzero: bool = False) -> np.ndarray:
    """A finite Cartesian 3-vector; with ``nonzero`` a zero vector is rejected."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise _fail(name, repr(value), "three real numbers (x, y, z)") from None
    if arr.shape != (3,):
        raise _fail(name, repr(value), "three real numbers (x, y, z)")
    if not np.isfinite(arr).all():
        raise _fail(name, tuple(arr.tolist()), "three finite numbers (x, y, z)")
    if nonzero and not np.any(arr):
        raise _fail(name, tuple(arr.tolist()), "a non-zero direction vector")
    return arr


def _unit(unit: str) -> str:
    return f" in {unit}" if unit else ""


def _range_text(low, high, low_open, high_open, unit) -> str:
    u = f" {unit}" if unit else ""
    parts = []
    if low is not None:
        parts.append(f"{'>' if low_open else '>='} {low:g}{u}")
    if high is not None:
        parts.append(f"{'<' if high_open else '<='} {high:g}{u}")
    if not parts:
        return f"finite real numbers{_unit(unit)}"
    return "finite numbers " + " and ".join(parts)
