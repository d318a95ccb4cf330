"""One filament: a straight plasma column carrying a current that travels with the pulse.

Conventions shared by the whole package
---------------------------------------
- The column starts at ``start`` and runs a distance ``length`` along the unit vector
  ``axis``; ``s`` is the distance from ``start`` (0 <= s <= length).
- The pulse passes ``start`` at time ``delay`` and moves at c / n_group, so the current at s
  is ``amplitude * w(s) * I(t - delay - s n_group / c)``.
- ``w(s)`` is the longitudinal profile (1 for a uniform column). A callable is sampled at
  ``PROFILE_SAMPLES`` equidistant points and interpolated by a not-a-knot cubic spline
  (interpolation error at most ``(5/384) h^4 max|w''''|``, h = length / (PROFILE_SAMPLES - 1));
  sampled ``(z, w)`` arrays are interpolated by a shape-preserving monotone cubic (PCHIP),
  which never overshoots measured data. Either way the profile becomes a piecewise cubic
  whose Fourier transform the far-field code evaluates exactly.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.interpolate import CubicSpline, PchipInterpolator

from thzarray.base.checks import (
    as_float_array,
    check_scalar,
    check_vector3,
    unit_vector,
)
from thzarray.base.geometry import extent

__all__ = ["Filament", "PROFILE_SAMPLES", "ProfilePieces", "as_filaments", "layout_extent"]

PROFILE_SAMPLES = 1025

# Longest column accepted (m) and shortest; both generous bounds against typing errors.
_MAX_LENGTH = 1e3
_MIN_LENGTH = 1e-9


@dataclass(frozen=True, eq=False)
class ProfilePieces:
    """A column's longitudinal profile as exact piecewise cubics.

    Attributes
    ----------
    breaks : ndarray, shape (P + 1,)
        Piece boundaries from 0 to the length (m).
    coefs : ndarray, shape (P, 4)
        Ascending-power coefficients of each piece in ``s - breaks[j]``.
    """

    breaks: np.ndarray
    coefs: np.ndarray

    def key(self) -> tuple:
        """A hashable key: equal for equal pieces."""
        return (self.breaks.tobytes(), self.coefs.tobytes())


@dataclass(frozen=True)
class Filament:
    """A straight plasma column.

    Parameters
    ----------
    length : float
        Length of the column (m), > 0.
    start : 3-sequence of float
        Position where the column begins (m).
    axis : 3-sequence of float
        Direction of propagation of the pulse; normalised here (scaled first, so huge or
        tiny components are fine); must not be zero.
    delay : float
        Time at which the pulse passes ``start`` (s).
    amplitude : float
        Factor on this column's current (dimensionless, 1 by default).
    profile : callable or (z, w) pair of arrays, optional
        Longitudinal profile w(s) along the column, s in metres from ``start``. A callable
        must accept an array of s and return an array of the same shape. Sampled data must
        have strictly increasing z from 0 to ``length``.
    """

    length: float
    start: tuple = (0.0, 0.0, 0.0)
    axis: tuple = (0.0, 0.0, 1.0)
    delay: float = 0.0
    amplitude: float = 1.0
    profile: object = field(default=None, compare=False)
    _breaks: np.ndarray | None = field(default=None, init=False, repr=False, compare=False)
    _coefs: np.ndarray | None = field(default=None, init=False, repr=False, compare=False)

    def __post_init__(self):
        set_ = object.__setattr__
        length = check_scalar("length", self.length, low=_MIN_LENGTH, high=_MAX_LENGTH, unit="m")
        set_(self, "length", length)
        set_(self, "start", tuple(check_vector3("start", self.start).tolist()))
        set_(self, "axis", tuple(unit_vector("axis", self.axis).tolist()))
        set_(self, "delay", check_scalar("delay", self.delay, unit="s"))
        set_(self, "amplitude", check_scalar("amplitude", self.amplitude))
        if self.profile is not None:
            breaks, coefs = _profile_to_cubic(self.profile, length)
            set_(self, "_breaks", breaks)
            set_(self, "_coefs", coefs)

    @property
    def is_uniform(self) -> bool:
        """True when the column has no longitudinal profile (w = 1)."""
        return self._breaks is None

    @property
    def pieces(self) -> ProfilePieces:
        """The profile as piecewise cubics (one piece w = 1 for a uniform column)."""
        if self.is_uniform:
            return ProfilePieces(np.array([0.0, self.length]), np.array([[1.0, 0.0, 0.0, 0.0]]))
        return ProfilePieces(self._breaks, self._coefs)

    @property
    def emission_centre(self) -> float:
        """Centroid of the profile along the axis (m from ``start``); L/2 when uniform.

        .. math:: s_c = \\int s\\,w(s)\\,ds \\Big/ \\int w(s)\\,ds

        (L/2 as well when the profile integrates to zero).
        """
        if self.is_uniform:
            return 0.5 * self.length
        h = np.diff(self._breaks)
        powers = np.arange(4)
        m0 = np.sum(self._coefs * h[:, None] ** (powers + 1) / (powers + 1), axis=1)
        m1 = np.sum(self._coefs * h[:, None] ** (powers + 2) / (powers + 2), axis=1)
        total = m0.sum()
        if abs(total) < 1e-12 * np.sum(np.abs(m0)):
            return 0.5 * self.length
        return float((np.sum(self._breaks[:-1] * m0) + m1.sum()) / total)

    @property
    def end(self) -> np.ndarray:
        """Position where the column ends (m)."""
        return np.asarray(self.start) + self.length * np.asarray(self.axis)

    def profile_values(self, s):
        """The profile value w(s) (1 for a uniform column, 0 outside the column)."""
        s = np.asarray(s, dtype=float)
        inside = (s >= 0) & (s <= self.length)
        if self.is_uniform:
            return np.where(inside, 1.0, 0.0)
        idx = np.clip(np.searchsorted(self._breaks, s, side="right") - 1, 0, len(self._coefs) - 1)
        t = s - self._breaks[idx]
        c = self._coefs[idx]
        val = c[..., 0] + t * (c[..., 1] + t * (c[..., 2] + t * c[..., 3]))
        return np.where(inside, val, 0.0)

    def replace(self, **changes) -> "Filament":
        """A copy with some parameters changed (validated again)."""
        args = dict(length=self.length, start=self.start, axis=self.axis, delay=self.delay,
                    amplitude=self.amplitude, profile=self.profile)
        args.update(changes)
        return Filament(**args)


def _profile_to_cubic(profile, length):
    """Piecewise-cubic coefficients (ascending powers of s - s_j) for a profile."""
    if callable(profile):
        z = np.linspace(0.0, length, PROFILE_SAMPLES)
        try:
            w = np.asarray(profile(z), dtype=float)
        except Exception as exc:  # the user's function failed: report it as bad input
            raise ValueError(f"profile: calling the profile function failed ({exc})") from None
        if w.shape != z.shape:
            raise ValueError(f"profile: the function returned shape {w.shape}; allowed: the "
                             f"shape of its argument {z.shape}")
        as_float_array("profile values", w)
        poly = CubicSpline(z, w, bc_type="not-a-knot")
    else:
        try:
            z, w = profile
        except (TypeError, ValueError):
            raise ValueError("profile = an object that is neither a function nor a (z, w) "
                             "pair; allowed: a callable of s (m) or two equal-length arrays") from None
        z = as_float_array("profile z", z, low=0.0, high=length, unit="m")
        w = as_float_array("profile w", w)
        if z.ndim != 1 or w.shape != z.shape or z.size < 2:
            raise ValueError(f"profile = arrays of shapes {z.shape} and {w.shape}; allowed: two "
                             "1-D arrays of equal length >= 2")
        if np.any(np.diff(z) <= 0):
            raise ValueError("profile z is not strictly increasing; allowed: strictly "
                             "increasing positions from 0 to length")
        tol = 1e-9 * length
        if abs(z[0]) > tol or abs(z[-1] - length) > tol:
            raise ValueError(f"profile z spans [{z[0]:g}, {z[-1]:g}] m; allowed: exactly "
                             f"[0, {length:g}] m (the column's length)")
        z = z.copy()
        z[0], z[-1] = 0.0, length
        poly = PchipInterpolator(z, w) if z.size > 2 else None
        if poly is None:
            slope = (w[1] - w[0]) / length
            return z, np.array([[w[0], slope, 0.0, 0.0]])
    coefs = np.ascontiguousarray(poly.c[::-1].T)  # (pieces, 4), ascending powers
    return np.ascontiguousarray(poly.x, dtype=float), coefs


def as_filaments(filaments) -> tuple:
    """A tuple of Filaments from one Filament or a sequence of them (non-empty)."""
    if isinstance(filaments, Filament):
        return (filaments,)
    try:
        items = tuple(filaments)
    except TypeError:
        raise ValueError(f"filaments = {type(filaments).__name__}; allowed: a Filament or a "
                         "sequence of Filaments") from None
    if not items:
        raise ValueError("filaments = an empty sequence; allowed: at least one Filament")
    for i, item in enumerate(items):
        if not isinstance(item, Filament):
            raise ValueError(f"filaments[{i}] = {type(item).__name__}; allowed: Filament")
    return items


def layout_extent(filaments) -> float:
    """Largest distance between any two column ends (m); the scale of the finest pattern."""
    fils = as_filaments(filaments)
    return extent([p for f in fils for p in (np.asarray(f.start), f.end)])
