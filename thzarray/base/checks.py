"""Argument checks shared by every layer.

Every failure raises ``ValueError`` whose message names the parameter, the value received
(shortened to about 80 characters) and the range allowed, so that the command line can
print it as one line.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "as_float_array",
    "check_count",
    "check_scalar",
    "check_vector3",
    "shorten",
    "unit_vector",
]

# Longest echo of a bad value in a message (characters).
MAX_ECHO = 80
# Smallest norm a direction vector may have after scaling by its largest component; below
# it the components are subnormal and the direction is not defined to working precision.
_TINY = np.finfo(float).tiny


def shorten(text, limit: int = MAX_ECHO) -> str:
    """``text`` (a string or any object's repr) cut to ``limit`` characters with '...'."""
    text = text if isinstance(text, str) else repr(text)
    return text if len(text) <= limit else text[:limit - 3] + "..."


def _describe(value) -> str:
    arr = np.asarray(value)
    if arr.ndim == 0:
        return shorten(repr(arr.item()))
    bad = arr.ravel()
    return f"array of shape {arr.shape} (e.g. {shorten(repr(bad[0].item()), 30)})"


def _first_bad(arr, bad) -> str:
    """The first offending element and where it sits, e.g. 'nan at index 3 of shape (20,)'."""
    if arr.ndim == 0:
        return repr(arr.item())
    index = tuple(int(i) for i in np.argwhere(bad)[0])
    where = index[0] if len(index) == 1 else index
    return f"{arr[index].item()!r} (at index {where} of an array of shape {arr.shape})"


def _fail(name: str, value, allowed: str) -> ValueError:
    return ValueError(f"{name} = {shorten(str(value))} is not allowed; allowed: {allowed}")


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
    except (TypeError, ValueError, OverflowError):
        raise _fail(name, shorten(repr(value)), f"real numbers{_unit(unit)}") from None
    allowed = _range_text(low, high, low_open, high_open, unit)
    if arr.size == 0:
        raise _fail(name, "an empty array", allowed)
    finite = np.isfinite(arr)
    if not finite.all():
        raise _fail(name, _first_bad(arr, ~finite), allowed)
    for bound, is_open, is_low in ((low, low_open, True), (high, high_open, False)):
        if bound is None:
            continue
        if is_low:
            bad = arr <= bound if is_open else arr < bound
        else:
            bad = arr >= bound if is_open else arr > bound
        if bad.any():
            raise _fail(name, _first_bad(arr, bad), allowed)
    return arr


def check_scalar(name: str, value, **kw) -> float:
    """Like :func:`as_float_array` for one real number; returns a Python float."""
    try:
        arr = np.asarray(value)
    except (TypeError, ValueError, OverflowError):
        raise _fail(name, shorten(repr(value)), "a single real number") from None
    if arr.ndim != 0:
        raise _fail(name, _describe(value), "a single real number")
    return float(as_float_array(name, value, **kw))


def check_count(name: str, value, low: int = 1, high: int | None = None) -> int:
    """A whole number (not a bool) from ``low`` to ``high``; returns a Python int."""
    ok = isinstance(value, (int, np.integer)) and not isinstance(value, (bool, np.bool_))
    if not ok or value < low or (high is not None and value > high):
        allowed = f"an integer >= {low}" if high is None else f"an integer from {low} to {high}"
        raise _fail(name, repr(value), allowed)
    return int(value)


def check_vector3(name: str, value, *, nonzero: bool = False) -> np.ndarray:
    """A finite Cartesian 3-vector; with ``nonzero`` a zero vector is rejected."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError, OverflowError):
        raise _fail(name, shorten(repr(value)), "three real numbers (x, y, z)") from None
    if arr.shape != (3,):
        raise _fail(name, shorten(repr(value)), "three real numbers (x, y, z)")
    if not np.isfinite(arr).all():
        raise _fail(name, tuple(arr.tolist()), "three finite numbers (x, y, z)")
    if nonzero and not np.any(arr):
        raise _fail(name, tuple(arr.tolist()), "a non-zero direction vector")
    return arr


def unit_vector(name: str, value) -> np.ndarray:
    """The unit vector along a finite, non-zero 3-vector, normalised without overflow.

    The vector is first divided by its largest absolute component (so 1e200 or 1e-300
    components neither overflow nor underflow when squared); a zero vector, or one whose
    components are subnormal (below about 2.2e-308), has no direction to working precision
    and is refused.
    """
    arr = check_vector3(name, value)
    scale = float(np.max(np.abs(arr)))
    if not scale >= _TINY:
        raise _fail(name, tuple(arr.tolist()), "a non-zero direction vector with a component "
                    f"of magnitude >= {_TINY:.3g}")
    scaled = arr / scale
    return scaled / np.sqrt(np.sum(scaled**2))


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
