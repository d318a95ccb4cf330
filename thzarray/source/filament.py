r"""One filament: a straight plasma column carrying a current that travels with the pulse.

Conventions shared by the whole package
---------------------------------------
- The column starts at ``start`` and runs a distance ``length`` along the unit vector
  ``axis``; ``s`` is the distance from ``start`` (0 <= s <= length).
- The pulse passes ``start`` at time ``delay`` and moves at c / n_group, so the current at s
  is ``amplitude * w(s) * I(t - delay - s n_group / c)``.
- ``w(s)`` is the longitudinal profile (1 for a uniform column), real or complex (a complex
  profile carries a phase along the column, e.g. a two-colour photocurrent
  :math:`\propto \sin(\varphi_0 + 2\pi s/L_d)` or a measured complex source distribution).
  A callable is sampled at
  ``PROFILE_SAMPLES`` equidistant points and interpolated by a not-a-knot cubic spline
  (interpolation error at most ``(5/384) h^4 max|w''''|``, h = length / (PROFILE_SAMPLES - 1));
  sampled ``(z, w)`` arrays are interpolated by a shape-preserving monotone cubic (PCHIP),
  which never overshoots measured data (complex data: real and imaginary parts each by
  PCHIP). Either way the profile becomes a piecewise cubic whose Fourier transform the
  far-field code evaluates exactly.
- ``current_direction`` is the direction in which the current flows. ``None`` means along
  the axis: the single-colour column, whose ponderomotive current flows with the pulse and
  radiates a radially polarized cone. A unit vector perpendicular to the axis means a
  transverse current (the two-colour photocurrent flows along the laser polarization): it
  still travels with the pulse, but flows across the column and radiates linearly
  polarized along the projection of that vector.
- ``group_index`` is the driver's group index in this column: the pulse, and the current
  it drives, moves at c / group_index. ``None`` means the medium's optical group index
  ``medium.n_group``; a number (1 to 2) overrides it for this column (in a filament the
  plasma adds about n_e / (2 n_c) to the group index of the neutral air).
"""

from __future__ import annotations

import copy
import math
from dataclasses import dataclass, field

import numpy as np
from scipy.interpolate import CubicSpline, PchipInterpolator

from thzarray.base.checks import (
    as_float_array,
    check_scalar,
    check_vector3,
    shorten,
    unit_vector,
)
from thzarray.base.geometry import extent

__all__ = [
    "Filament",
    "MAX_DELAY",
    "MAX_POSITION",
    "MAX_WEIGHT",
    "PERPENDICULAR_TOLERANCE",
    "PROFILE_SAMPLES",
    "ProfilePieces",
    "as_filaments",
    "layout_extent",
]

PROFILE_SAMPLES = 1025

# Longest column accepted (m) and shortest; both generous bounds against typing errors.
_MAX_LENGTH = 1e3
_MIN_LENGTH = 1e-9
# Physical bounds that keep every phase and |F|^2 finite in double precision: a start within
# 1000 km of the origin, a delay within 1 s, |amplitude| and |profile values| up to 1e30.
MAX_POSITION = 1e6
MAX_DELAY = 1.0
MAX_WEIGHT = 1e30
# Largest |d . axis| of a transverse current direction (after normalising d).
PERPENDICULAR_TOLERANCE = 1e-9
# Gauss-Legendre nodes per piece for the centroid of |w| of a complex or sign-changing profile.
_CENTROID_NODES = 8
# A real profile counts as of one sign when |int w| >= (1 - _ONE_SIGN) int |w|.
_ONE_SIGN = 1e-6


@dataclass(frozen=True, eq=False)
class ProfilePieces:
    """A column's longitudinal profile as exact piecewise cubics.

    Attributes
    ----------
    breaks : ndarray, shape (P + 1,)
        Piece boundaries from 0 to the length (m).
    coefs : ndarray, float or complex, shape (P, 4)
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
        Length of the column (m), 1e-9 to 1e3.
    start : 3-sequence of float
        Position where the column begins (m), each component within +-MAX_POSITION (1e6).
    axis : 3-sequence of float
        Direction of propagation of the pulse; normalised here (scaled first, so huge or
        tiny components are fine); must not be zero.
    delay : float
        Time at which the pulse passes ``start`` (s), within +-MAX_DELAY (1 s).
    amplitude : float
        Factor on this column's current (dimensionless, 1 by default), within +-MAX_WEIGHT
        (1e30); profile values have the same bound.
    profile : callable or (z, w) pair of arrays, optional
        Longitudinal profile w(s) along the column, s in metres from ``start``, real or
        complex. A callable must accept an array of s and return an array of the same
        shape. Sampled data must have strictly increasing z from 0 to ``length``.
    current_direction : 3-sequence of float, optional
        Direction of the current. None (default): along the axis (single colour, radially
        polarized cone). Otherwise a vector perpendicular to the axis, normalised here
        (``|d . axis| <= PERPENDICULAR_TOLERANCE`` after normalising; the residue is
        projected out): a transverse current, linearly polarized along it (two colour).
    group_index : float, optional
        Group index of the driver in this column, 1 to 2 (the pulse moves at
        c / group_index). None (default): the medium's ``n_group``.
    """

    length: float
    start: tuple = (0.0, 0.0, 0.0)
    axis: tuple = (0.0, 0.0, 1.0)
    delay: float = 0.0
    amplitude: float = 1.0
    profile: object = field(default=None, compare=False)
    current_direction: tuple | None = None
    group_index: float | None = None
    _breaks: np.ndarray | None = field(default=None, init=False, repr=False, compare=False)
    _coefs: np.ndarray | None = field(default=None, init=False, repr=False, compare=False)

    def __post_init__(self):
        set_ = object.__setattr__
        length = check_scalar("length", self.length, low=_MIN_LENGTH, high=_MAX_LENGTH, unit="m")
        set_(self, "length", length)
        start = check_vector3("start", self.start)
        as_float_array("start", start, low=-MAX_POSITION, high=MAX_POSITION, unit="m")
        set_(self, "start", tuple(start.tolist()))
        set_(self, "axis", tuple(unit_vector("axis", self.axis).tolist()))
        set_(self, "delay", check_scalar("delay", self.delay, low=-MAX_DELAY, high=MAX_DELAY,
                                         unit="s"))
        set_(self, "amplitude", check_scalar("amplitude", self.amplitude, low=-MAX_WEIGHT,
                                             high=MAX_WEIGHT))
        if self.current_direction is not None:
            set_(self, "current_direction", _transverse_direction(self.current_direction,
                                                                  np.asarray(self.axis)))
        if self.group_index is not None:
            set_(self, "group_index", check_scalar("group_index", self.group_index, low=1.0,
                                                   high=2.0))
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
    def is_axial(self) -> bool:
        """True when the current flows along the axis (``current_direction`` is None)."""
        return self.current_direction is None

    @property
    def current(self) -> tuple:
        """Unit vector along which the current flows (the axis when ``current_direction`` is
        None)."""
        return self.axis if self.current_direction is None else self.current_direction

    @property
    def is_complex(self) -> bool:
        """True when the profile has complex values."""
        return self._coefs is not None and np.iscomplexobj(self._coefs)

    def group_index_in(self, medium) -> float:
        """The driver's group index in this column: ``group_index``, else ``medium.n_group``."""
        return medium.n_group if self.group_index is None else self.group_index

    @property
    def emission_centre(self) -> float:
        """Centroid of the profile along the axis (m from ``start``); L/2 when uniform.

        For a real profile of one sign (the usual case) the centroid of w, from the exact
        moments of its pieces (used when :math:`|\\int w| \\ge (1 - 10^{-6})\\int |w|`),

        .. math:: s_c = \\int s\\,w(s)\\,ds \\Big/ \\int w(s)\\,ds ;

        for a complex profile, or a real one that changes sign (whose signed centroid can lie
        outside the column), the centroid of ``|w|``,

        .. math:: s_c = \\int s\\,|w(s)|\\,ds \\Big/ \\int |w(s)|\\,ds ,

        by 8-point Gauss-Legendre quadrature on each piece: where the current's magnitude
        sits, whatever its phase. The two agree for a profile of one sign. L/2 as well when
        the profile vanishes. True-time steering uses this point; for identical columns any
        common choice brings them in phase, since it enters every column alike.
        """
        if self.is_uniform:
            return 0.5 * self.length
        h = np.diff(self._breaks)
        x, wts = np.polynomial.legendre.leggauss(_CENTROID_NODES)
        s_nodes = self._breaks[:-1, None] + 0.5 * h[:, None] * (x[None, :] + 1.0)
        weight = np.abs(self.profile_values(s_nodes)) * (0.5 * h[:, None] * wts[None, :])
        magnitude = weight.sum()
        if not magnitude > 0:
            return 0.5 * self.length
        if not self.is_complex:
            powers = np.arange(4)
            m0 = np.sum(self._coefs * h[:, None] ** (powers + 1) / (powers + 1), axis=1)
            total = m0.sum()
            if abs(total) >= (1.0 - _ONE_SIGN) * magnitude:
                m1 = np.sum(self._coefs * h[:, None] ** (powers + 2) / (powers + 2), axis=1)
                return float((np.sum(self._breaks[:-1] * m0) + m1.sum()) / total)
        return float(np.sum(weight * s_nodes) / magnitude)

    @property
    def end(self) -> np.ndarray:
        """Position where the column ends (m)."""
        return np.asarray(self.start) + self.length * np.asarray(self.axis)

    def profile_values(self, s):
        """The profile value w(s) (1 for a uniform column, 0 outside; complex for a complex
        profile)."""
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
        """A copy with some parameters changed (validated again).

        Changing only ``delay`` and/or ``amplitude`` (what steering and Monte-Carlo builds
        do to every column, many times) checks just those two and shares the rest, profile
        pieces included, instead of rebuilding the column.
        """
        if changes and set(changes) <= _CHEAP_CHANGES.keys():
            values = {k: _plain_float(v) for k, v in changes.items()}
            if all(v is not None and abs(v) <= _CHEAP_CHANGES[k] for k, v in values.items()):
                new = copy.copy(self)
                for k, v in values.items():
                    object.__setattr__(new, k, v)
                return new
        args = dict(length=self.length, start=self.start, axis=self.axis, delay=self.delay,
                    amplitude=self.amplitude, profile=self.profile,
                    current_direction=self.current_direction, group_index=self.group_index)
        args.update(changes)
        return Filament(**args)


# Keys that Filament.replace may change without rebuilding, with their bounds.
_CHEAP_CHANGES = {"delay": MAX_DELAY, "amplitude": MAX_WEIGHT}


def _plain_float(value):
    """``value`` as a finite float when it is a real Python or numpy scalar, else None (the
    full check then reports it)."""
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (int, float, np.integer,
                                                                    np.floating)):
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def _profile_to_cubic(profile, length):
    """Piecewise-cubic coefficients (ascending powers of s - s_j) for a profile."""
    if callable(profile):
        z = np.linspace(0.0, length, PROFILE_SAMPLES)
        try:
            w = np.asarray(profile(z))
        except Exception as exc:  # the user's function failed: report it as bad input
            raise ValueError(f"profile: calling the profile function failed ({exc})") from None
        if w.shape != z.shape:
            raise ValueError(f"profile: the function returned shape {w.shape}; allowed: the "
                             f"shape of its argument {z.shape}")
        w = _as_values("profile values", w)
        poly = CubicSpline(z, w, bc_type="not-a-knot")
    else:
        try:
            z, w = profile
        except (TypeError, ValueError):
            raise ValueError("profile = an object that is neither a function nor a (z, w) "
                             "pair; allowed: a callable of s (m) or two equal-length arrays") from None
        z = as_float_array("profile z", z, low=0.0, high=length, unit="m")
        w = _as_values("profile w", w)
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
        if z.size == 2:
            slope = (w[1] - w[0]) / length
            return z, np.array([[w[0], slope, 0.0, 0.0]], dtype=w.dtype)
        if np.iscomplexobj(w):
            re, im = PchipInterpolator(z, w.real), PchipInterpolator(z, w.imag)
            coefs = re.c[::-1].T + 1j * im.c[::-1].T
            return np.ascontiguousarray(re.x, dtype=float), np.ascontiguousarray(coefs)
        poly = PchipInterpolator(z, w)
    coefs = np.ascontiguousarray(poly.c[::-1].T)  # (pieces, 4), ascending powers
    return np.ascontiguousarray(poly.x, dtype=float), coefs


def _as_values(name, value):
    """Finite real or complex profile values (float or complex ndarray)."""
    arr = np.asarray(value)
    bounds = {"low": -MAX_WEIGHT, "high": MAX_WEIGHT}
    if np.iscomplexobj(arr):
        re = as_float_array(f"{name} (real part)", arr.real, **bounds)
        im = as_float_array(f"{name} (imaginary part)", arr.imag, **bounds)
        return re + 1j * im if np.any(im) else re
    return as_float_array(name, arr, **bounds)


def _transverse_direction(value, axis):
    """The unit current direction, checked perpendicular to ``axis``."""
    d = unit_vector("current_direction", value)
    along = float(d @ axis)
    if abs(along) > PERPENDICULAR_TOLERANCE:
        raise ValueError(f"current_direction = {shorten(tuple(np.asarray(value).tolist()))} "
                         f"makes |d . axis| = {abs(along):.3g} with the axis; allowed: None "
                         "(current along the axis) or a vector perpendicular to the axis "
                         f"(|d . axis| <= {PERPENDICULAR_TOLERANCE:g} after normalising)")
    d = d - along * axis
    return tuple((d / np.linalg.norm(d)).tolist())


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
