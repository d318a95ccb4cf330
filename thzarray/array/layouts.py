r"""Multi-filament layouts: where the columns sit, and the array sum of their fields.

A layout is a plain tuple of :class:`~thzarray.source.filament.Filament`, so
:func:`thzarray.field.farfield.far_field` sums it as it is. The builders place column starts in
the plane transverse to a common beam axis (default +z) around ``center``: a line, a
rectangular grid, a hexagonal patch, a ring, or random points in a circular aperture with a
minimum separation; :func:`staggered` moves starts along the axis.
"""

from __future__ import annotations

import numpy as np
from scipy.constants import c

from thzarray.air.medium import Medium
from thzarray.base.checks import (
    as_float_array,
    check_count,
    check_scalar,
    check_vector3,
    unit_vector,
)
from thzarray.base.geometry import axis_frame
from thzarray.source.filament import Filament, as_filaments

__all__ = [
    "check_separation",
    "from_positions",
    "grid",
    "hexagonal",
    "line",
    "random_aperture",
    "ring",
    "staggered",
    "with_delays",
]

# Two starts closer than this (m) are taken for the same column typed twice.
_COINCIDENT = 1e-9
# Draws per wanted column before random_aperture gives up.
_MAX_DRAWS_PER_COLUMN = 10_000


# --- builders ---------------------------------------------------------------------------------

def _per_column(name, value, count, **bounds):
    arr = as_float_array(name, value, **bounds)
    if arr.ndim == 0:
        return np.full(count, float(arr))
    if arr.shape != (count,):
        raise ValueError(f"{name} has shape {arr.shape}; allowed: a single number or one value "
                         f"per column, shape ({count},)")
    return arr


def from_positions(positions, length, *, axis=(0.0, 0.0, 1.0), delay=0.0, amplitude=1.0,
                   profile=None) -> tuple:
    """A layout from explicit start points.

    Parameters
    ----------
    positions : array_like, shape (N, 3)
        Column start points (m), N >= 1, no two closer than 1 nm.
    length : float or array_like, shape (N,)
        Column lengths (m).
    axis : 3-sequence of float
        Common beam axis (normalised stably: scaled first; zero or subnormal refused).
    delay : float or array_like, shape (N,)
        Delays (s) at which the pulses pass the starts.
    amplitude : float or array_like, shape (N,)
        Factors on the columns' currents.
    profile : optional
        Longitudinal profile shared by all columns (see :class:`Filament`).

    Returns
    -------
    tuple of Filament
    """
    pos = as_float_array("positions", positions, unit="m")
    if pos.ndim != 2 or pos.shape[1] != 3 or pos.shape[0] == 0:
        raise ValueError(f"positions has shape {pos.shape}; allowed: (N, 3) with N >= 1")
    count = pos.shape[0]
    check_separation(pos)
    lengths = _per_column("length", length, count, low=0.0, low_open=True, unit="m")
    delays = _per_column("delay", delay, count, unit="s")
    amplitudes = _per_column("amplitude", amplitude, count)
    ax = tuple(unit_vector("axis", axis).tolist())
    return tuple(Filament(float(lengths[i]), tuple(pos[i].tolist()), ax, float(delays[i]),
                          float(amplitudes[i]), profile) for i in range(count))


def check_separation(positions):
    """Refuse two start points (K, 3) closer than 1 nm (the same column typed twice).

    A k-d tree (scipy.spatial) finds close pairs in O(K log K) time and O(K) memory.
    """
    from scipy.spatial import cKDTree

    pos = np.asarray(positions, dtype=float).reshape(-1, 3)
    if pos.shape[0] < 2:
        return
    pairs = cKDTree(pos).query_pairs(_COINCIDENT, output_type="ndarray")
    if pairs.size:
        a, b = (int(v) for v in pairs[np.lexsort(pairs.T[::-1])][0])
        d = float(np.linalg.norm(pos[a] - pos[b]))
        raise ValueError(f"positions: columns {a} and {b} start {d:.3g} m apart; allowed: "
                         f"starts at least {_COINCIDENT:g} m apart (coincident filaments)")


def _transverse(axis):
    """Two unit vectors spanning the plane transverse to ``axis`` (x and y for +z)."""
    a = unit_vector("axis", axis)
    if np.allclose(a, (0.0, 0.0, 1.0), rtol=0.0, atol=1e-15):
        return np.array([1.0, 0.0, 0.0]), np.array([0.0, 1.0, 0.0])
    ex, ey, _ = axis_frame(a)
    return ex, ey


def _place(uv, center, axis, length, **kw):
    """Starts at transverse coordinates uv (K, 2) around center."""
    ex, ey = _transverse(axis)
    c0 = check_vector3("center", center)
    pos = c0 + uv[:, :1] * ex + uv[:, 1:2] * ey
    return from_positions(pos, length, axis=axis, **kw)


def line(count, spacing, length, *, center=(0.0, 0.0, 0.0), axis=(0.0, 0.0, 1.0), **kw):
    """``count`` columns on a line along the first transverse direction (x for a z axis).

    Parameters
    ----------
    count : int
        Number of columns, >= 1.
    spacing : float
        Centre-to-centre distance (m), > 0.
    length : float
        Column length (m).
    center : 3-sequence
        Centre of the line (m).
    axis : 3-sequence
        Beam axis.
    **kw
        ``delay``, ``amplitude``, ``profile`` as for :func:`from_positions`.
    """
    n = check_count("count", count)
    d = check_scalar("spacing", spacing, low=0.0, low_open=True, unit="m")
    u = (np.arange(n) - 0.5 * (n - 1)) * d
    return _place(np.stack([u, np.zeros(n)], -1), center, axis, length, **kw)


def grid(shape, spacing, length, *, center=(0.0, 0.0, 0.0), axis=(0.0, 0.0, 1.0), **kw):
    """A rectangular grid of ``shape = (nx, ny)`` columns, x index fastest.

    Parameters
    ----------
    shape : (int, int)
        Columns along the two transverse directions.
    spacing : float or (float, float)
        Pitch along each direction (m).
    length, center, axis, **kw
        As for :func:`line`.
    """
    try:
        nx, ny = shape
    except (TypeError, ValueError):
        raise ValueError(f"shape = {shape!r} is not allowed; allowed: two integers (nx, ny)") \
            from None
    nx, ny = check_count("shape[0]", nx), check_count("shape[1]", ny)
    pitch = as_float_array("spacing", spacing, low=0.0, low_open=True, unit="m")
    dx, dy = (float(pitch), float(pitch)) if pitch.ndim == 0 else tuple(pitch.tolist())
    u = (np.arange(nx) - 0.5 * (nx - 1)) * dx
    v = (np.arange(ny) - 0.5 * (ny - 1)) * dy
    uu, vv = np.meshgrid(u, v)
    return _place(np.stack([uu.ravel(), vv.ravel()], -1), center, axis, length, **kw)


def hexagonal(rings, spacing, length, *, center=(0.0, 0.0, 0.0), axis=(0.0, 0.0, 1.0), **kw):
    """A hexagonal patch: a centre column and ``rings`` hexagonal rings, 1 + 3 r (r + 1) columns.

    Parameters
    ----------
    rings : int
        Number of rings around the centre, >= 0.
    spacing : float
        Nearest-neighbour distance (m).
    length, center, axis, **kw
        As for :func:`line`.
    """
    r = check_count("rings", rings, low=0)
    d = check_scalar("spacing", spacing, low=0.0, low_open=True, unit="m")
    pts = [(i, j) for i in range(-r, r + 1) for j in range(-r, r + 1) if abs(i + j) <= r]
    ij = np.array(pts, dtype=float)
    uv = d * np.stack([ij[:, 0] + 0.5 * ij[:, 1], np.sqrt(3) / 2 * ij[:, 1]], -1)
    return _place(uv, center, axis, length, **kw)


def ring(count, radius, length, *, center_column=False, rotation=0.0,
         center=(0.0, 0.0, 0.0), axis=(0.0, 0.0, 1.0), **kw):
    """``count`` columns equally spaced on a circle, optionally one more at its centre.

    Parameters
    ----------
    count : int
        Columns on the circle, >= 1.
    radius : float
        Circle radius (m).
    center_column : bool
        Add a column at the centre (listed first).
    rotation : float
        Azimuth of the first column (rad).
    length, center, axis, **kw
        As for :func:`line`.
    """
    n = check_count("count", count)
    rad = check_scalar("radius", radius, low=0.0, low_open=True, unit="m")
    rot = check_scalar("rotation", rotation, unit="rad")
    az = rot + 2 * np.pi * np.arange(n) / n
    uv = rad * np.stack([np.cos(az), np.sin(az)], -1)
    if center_column:
        uv = np.vstack([[0.0, 0.0], uv])
    return _place(uv, center, axis, length, **kw)


def random_aperture(count, radius, min_separation, length, *, seed, center=(0.0, 0.0, 0.0),
                    axis=(0.0, 0.0, 1.0), **kw):
    """``count`` columns uniformly at random in a disc, no two closer than ``min_separation``.

    Sequential random addition (each candidate drawn uniformly in the disc and kept when it is
    far enough from those kept); reproducible for a given ``seed``.

    Parameters
    ----------
    count : int
        Number of columns.
    radius : float
        Aperture radius (m).
    min_separation : float
        Smallest allowed centre-to-centre distance (m), >= 0.
    seed : int
        Seed of ``numpy.random.default_rng``.
    length, center, axis, **kw
        As for :func:`line`.

    Raises
    ------
    ValueError
        When the columns do not fit (the draws run out).
    """
    n = check_count("count", count)
    rad = check_scalar("radius", radius, low=0.0, low_open=True, unit="m")
    sep = check_scalar("min_separation", min_separation, low=0.0, unit="m")
    rng = np.random.default_rng(seed)
    kept = []
    for _ in range(n * _MAX_DRAWS_PER_COLUMN):
        rho = rad * np.sqrt(rng.uniform())
        az = rng.uniform(0.0, 2 * np.pi)
        p = np.array([rho * np.cos(az), rho * np.sin(az)])
        if all(np.hypot(*(p - q)) >= max(sep, _COINCIDENT) for q in kept):
            kept.append(p)
            if len(kept) == n:
                return _place(np.array(kept), center, axis, length, **kw)
    raise ValueError(f"min_separation = {sep!r} m is not allowed with count = {n} in radius = "
                     f"{rad!r} m: only {len(kept)} columns fitted; allowed: a smaller separation "
                     "or a larger radius")


def staggered(layout, offsets, *, medium: Medium | None = None, follow_pulse: bool = True):
    """Move each column's start along its axis by ``offsets`` (longitudinally staggered starts).

    Parameters
    ----------
    layout : sequence of Filament
    offsets : float or array_like, shape (N,)
        Displacement of each start along its own axis (m).
    medium : Medium, optional
        Needed with ``follow_pulse`` (defaults to vacuum).
    follow_pulse : bool
        When True the same pulse is taken to reach the moved start later, so each delay grows
        by ``n_group * offset / c`` (the column's group index); when False the delays are
        kept.

    Returns
    -------
    tuple of Filament
    """
    fils = as_filaments(layout)
    dz = _per_column("offsets", offsets, len(fils), unit="m")
    medium = Medium.vacuum() if medium is None else medium
    out = []
    for f, d in zip(fils, dz):
        start = tuple((np.asarray(f.start) + d * np.asarray(f.axis)).tolist())
        delay = f.delay + (f.group_index_in(medium) * d / c if follow_pulse else 0.0)
        out.append(f.replace(start=start, delay=delay))
    return tuple(out)


def with_delays(layout, delays) -> tuple:
    """A copy of ``layout`` with new delays.

    Parameters
    ----------
    layout : sequence of Filament
    delays : array_like, shape (N,)
        Finite delays (s).
    """
    fils = as_filaments(layout)
    d = _per_column("delays", delays, len(fils), unit="s")
    return tuple(f.replace(delay=float(t)) for f, t in zip(fils, d))
