r"""Multi-filament layouts: where the columns sit, and the array sum of their fields.

A layout is a plain tuple of :class:`~thzarray.filament.Filament`, so
:func:`thzarray.farfield.far_field` sums it as it is. The builders place column starts in
the plane transverse to a common beam axis (default +z) around ``center``: a line, a
rectangular grid, a hexagonal patch, a ring, or random points in a circular aperture with a
minimum separation; :func:`staggered` moves starts along the axis.

Element pattern times array factor
----------------------------------
When every column has the same length, axis and profile, column n's field is the field of
one *element* (that column started at the origin with delay 0 and weight 1) times
:math:`q_n e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)}`, so (Jackson, Classical
Electrodynamics, 3rd ed., sec. 9.2; C. A. Balanis, Antenna Theory, arrays chapter)

.. math:: \mathbf F(\omega, \hat r) = \mathbf F_{el}(\omega, \hat r)\, AF(\omega, \hat r),
          \qquad AF = \sum_n q_n e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)},
          \quad k = n_T\omega/c .

:func:`factored_far_field` uses this (one element evaluation plus a cheap array factor);
:func:`array_far_field` takes it when it applies and the general sum otherwise.

Layout tables
-------------
:func:`layout_to_csv` / :func:`layout_from_csv` turn a layout into text and back (columns
``x_m, y_m, z_m, axis_x, axis_y, axis_z, length_m, delay_s, weight``; floats written with
``repr`` so a round trip is exact). Reading and writing the files is :mod:`thzarray.tables` (the edge layer); here are the only
functions here that touch files.
"""

from __future__ import annotations

import numpy as np

from . import _array_kernels
from ._validate import as_float_array, check_scalar, check_vector3
from .farfield import FarField, check_directions, axis_frame, far_field
from .filament import Filament, as_sources
from .medium import Medium
from .plasma import Plasma

__all__ = [
    "CSV_COLUMNS",
    "array_factor",
    "array_far_field",
    "element_of",
    "factored_far_field",
    "filament_fields",
    "from_positions",
    "grid",
    "hexagonal",
    "identical_elements",
    "layout_from_csv",
    "layout_to_csv",
    "line",
    "random_aperture",
    "ring",
    "staggered",
    "with_delays",
]

CSV_COLUMNS = ("x_m", "y_m", "z_m", "axis_x", "axis_y", "axis_z", "length_m", "delay_s",
               "weight")

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


def from_positions(positions, length, *, axis=(0.0, 0.0, 1.0), delay=0.0, weight=1.0,
                   profile=None) -> tuple:
    """A layout from explicit start points.

    Parameters
    ----------
    positions : array_like, shape (N, 3)
        Column start points (m), N >= 1, no two closer than 1 nm.
    length : float or array_like, shape (N,)
        Column lengths (m).
    axis : 3-sequence of float
        Common beam axis (normalised).
    delay : float or array_like, shape (N,)
        Delays (s) at which the pulses pass the starts.
    weight : float or array_like, shape (N,)
        Current amplitude factors.
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
    _check_separation(pos)
    lengths = _per_column("length", length, count, low=0.0, low_open=True, unit="m")
    delays = _per_column("delay", delay, count, unit="s")
    weights = _per_column("weight", weight, count)
    ax = tuple(check_vector3("axis", axis, nonzero=True).tolist())
    return tuple(Filament(float(lengths[i]), tuple(pos[i].tolist()), ax, float(delays[i]),
                          float(weights[i]), profile) for i in range(count))


def _check_separation(pos):
    if pos.shape[0] < 2:
        return
    diff = pos[:, None, :] - pos[None, :, :]
    dist = np.sqrt((diff**2).sum(-1))
    dist[np.diag_indices(pos.shape[0])] = np.inf
    i, j = np.unravel_index(np.argmin(dist), dist.shape)
    if dist[i, j] < _COINCIDENT:
        raise ValueError(f"positions: columns {min(i, j)} and {max(i, j)} start {dist[i, j]:.3g} m "
                         f"apart; allowed: starts at least {_COINCIDENT:g} m apart "
                         "(coincident filaments)")


def _transverse(axis):
    """Two unit vectors spanning the plane transverse to ``axis`` (x and y for +z)."""
    a = check_vector3("axis", axis, nonzero=True)
    a = a / np.linalg.norm(a)
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


def _count(name, value, low=1):
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (int, np.integer)) \
            or value < low:
        raise ValueError(f"{name} = {value!r} is not allowed; allowed: an integer >= {low}")
    return int(value)


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
        ``delay``, ``weight``, ``profile`` as for :func:`from_positions`.
    """
    n = _count("count", count)
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
    nx, ny = _count("shape[0]", nx), _count("shape[1]", ny)
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
    r = _count("rings", rings, low=0)
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
    n = _count("count", count)
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
    n = _count("count", count)
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
        by ``n_group * offset / c``; when False the delays are kept.

    Returns
    -------
    tuple of Filament
    """
    from scipy.constants import c

    fils = as_sources(layout)
    dz = _per_column("offsets", offsets, len(fils), unit="m")
    ng = (Medium.vacuum() if medium is None else medium).n_group
    out = []
    for f, d in zip(fils, dz):
        start = tuple((np.asarray(f.start) + d * np.asarray(f.axis)).tolist())
        delay = f.delay + (ng * d / c if follow_pulse else 0.0)
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
    fils = as_sources(layout)
    d = _per_column("delays", delays, len(fils), unit="s")
    return tuple(f.replace(delay=float(t)) for f, t in zip(fils, d))


# --- the array sum -----------------------------------------------------------------------------

def _pack(fils):
    return (np.array([f.start for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.delay for f in fils], dtype=float),
            np.array([f.weight for f in fils], dtype=float))


def identical_elements(layout) -> bool:
    """True when all columns share length, axis and profile (the field then factors)."""
    fils = as_sources(layout)
    first = fils[0]
    for f in fils[1:]:
        if f.length != first.length or f.axis != first.axis or f.is_uniform != first.is_uniform:
            return False
        if not f.is_uniform and not (np.array_equal(f._breaks, first._breaks)
                                     and np.array_equal(f._coefs, first._coefs)):
            return False
    return True


def element_of(layout) -> Filament:
    """The common element: the first column moved to the origin with delay 0 and weight 1."""
    first = as_sources(layout)[0]
    return first.replace(start=(0.0, 0.0, 0.0), delay=0.0, weight=1.0)


def _grid_split(freq, theta, phi, shape):
    """Index k when freq varies only on axes < k and theta, phi only on axes >= k, else None."""
    nd = len(shape)
    fs = (1,) * (nd - freq.ndim) + freq.shape
    ts = (1,) * (nd - theta.ndim) + theta.shape
    ps = (1,) * (nd - phi.ndim) + phi.shape
    for k in range(nd + 1):
        if all(s == 1 for s in fs[k:]) and all(s == 1 for s in ts[:k] + ps[:k]):
            return k
    return None


def array_factor(sources, freq, theta, phi, medium: Medium | None = None, *,
                 compiled: bool = True) -> np.ndarray:
    r"""Array factor of the columns' starts, delays and weights.

    Parameters
    ----------
    sources : Filament or sequence of Filament
    freq : array_like
        Frequency (Hz), > 0.
    theta, phi : array_like
        Direction (rad); theta in [0, pi].
    medium : Medium, optional
        Defaults to vacuum (only ``n_thz`` enters).
    compiled : bool
        Numba kernels (default) or their numpy twins.

    Returns
    -------
    ndarray, complex, shape ``np.broadcast_shapes(freq.shape, theta.shape, phi.shape)``

    Notes
    -----
    .. math:: AF(\omega, \hat r) = \sum_n q_n e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)}

    (C. A. Balanis, Antenna Theory, arrays chapter). For a (freq, theta, phi) grid such as
    ``freq[:, None, None], theta[:, None], phi`` the frequencies are looped innermost.
    """
    fils = as_sources(sources)
    medium = Medium.vacuum() if medium is None else medium
    freq, theta, phi, shape = check_directions(freq, theta, phi)
    start, delay, weight = _pack(fils)
    k = _grid_split(freq, theta, phi, shape)
    if k is not None:
        nd = len(shape)
        fp, tp, pp = (x.reshape((1,) * (nd - x.ndim) + x.shape) for x in (freq, theta, phi))
        f_flat = np.broadcast_to(fp[(Ellipsis,) + (0,) * (nd - k)], shape[:k]).reshape(-1)
        th = np.broadcast_to(tp[(0,) * k], shape[k:]).reshape(-1)
        ph = np.broadcast_to(pp[(0,) * k], shape[k:]).reshape(-1)
        kernel = (_array_kernels.array_factor_grid if compiled
                  else _array_kernels.array_factor_grid_numpy)
        out = kernel(f_flat, th, ph, start, delay, weight, medium.n_thz)  # (M, F)
        return np.ascontiguousarray(out.T).reshape(shape)
    bf, bt, bp = (np.broadcast_to(x, shape).reshape(-1) for x in (freq, theta, phi))
    kernel = (_array_kernels.array_factor_points if compiled
              else _array_kernels.array_factor_points_numpy)
    return kernel(bf, bt, bp, start, delay, weight, medium.n_thz).reshape(shape)


def factored_far_field(sources, freq, theta, phi, medium: Medium | None = None,
                       plasma: Plasma | None = None, *, compiled: bool = True) -> FarField:
    r"""Far field of a layout of identical columns as element pattern times array factor.

    Parameters and returns as for :func:`thzarray.farfield.far_field`.

    Raises
    ------
    ValueError
        When the columns differ in length, axis or profile (see :func:`identical_elements`).

    Notes
    -----
    .. math:: \mathbf F = \mathbf F_{el}\, AF

    (module docstring). Equal to the general sum up to rounding.
    """
    fils = as_sources(sources)
    if not identical_elements(fils):
        raise ValueError("sources = columns of different length, axis or profile; allowed: "
                         "identical columns for the factored sum (use array_far_field)")
    medium = Medium.vacuum() if medium is None else medium
    el = far_field(element_of(fils), freq, theta, phi, medium, plasma, compiled=compiled)
    af = array_factor(fils, freq, theta, phi, medium, compiled=compiled)
    return FarField(el.freq, el.theta, el.phi, el.e_theta * af, el.e_phi * af, medium)


def array_far_field(sources, freq, theta, phi, medium: Medium | None = None,
                    plasma: Plasma | None = None, *, compiled: bool = True) -> FarField:
    """Far field of a layout: the factored sum when the columns are identical, else the general one.

    Parameters and returns as for :func:`thzarray.farfield.far_field`.
    """
    fils = as_sources(sources)
    if len(fils) > 1 and identical_elements(fils):
        return factored_far_field(fils, freq, theta, phi, medium, plasma, compiled=compiled)
    return far_field(fils, freq, theta, phi, medium, plasma, compiled=compiled)


def filament_fields(sources, freq, theta, phi, medium: Medium | None = None,
                    plasma: Plasma | None = None) -> np.ndarray:
    """Each column's field with its delay taken out: the terms of the array sum.

    Parameters
    ----------
    sources : Filament or sequence of Filament
    freq, theta, phi : array_like
        As for :func:`thzarray.farfield.far_field`.
    medium, plasma : optional

    Returns
    -------
    ndarray, complex, shape (N,) + broadcast shape + (2,)
        (theta, phi) components (V s) of column n with delay 0; the layout's field is
        ``sum_n g[n] * exp(i w t_n)``.
    """
    fils = as_sources(sources)
    parts = []
    for f in fils:
        ff = far_field(f.replace(delay=0.0), freq, theta, phi, medium, plasma)
        parts.append(np.stack([ff.e_theta, ff.e_phi], axis=-1))
    return np.stack(parts)


# --- tables -------------------------------------------------------------------------------------

def layout_to_csv(layout) -> str:
    """The layout as CSV text with a unit-bearing header (uniform columns only).

    Returns
    -------
    str
        Header ``x_m,y_m,z_m,axis_x,axis_y,axis_z,length_m,delay_s,weight`` and one row per
        column, floats written exactly (``repr``).
    """
    fils = as_sources(layout)
    for i, f in enumerate(fils):
        if not f.is_uniform:
            raise ValueError(f"layout[{i}] has a longitudinal profile; allowed: uniform columns "
                             "(profiles are not stored in layout tables)")
    rows = [",".join(CSV_COLUMNS)]
    for f in fils:
        vals = (*f.start, *f.axis, f.length, f.delay, f.weight)
        rows.append(",".join(repr(float(v)) for v in vals))
    return "\n".join(rows) + "\n"


def layout_from_csv(text: str) -> tuple:
    """Parse CSV text written by :func:`layout_to_csv` (lines starting with ``#`` are skipped).

    Raises
    ------
    ValueError
        On a wrong header, a short row or a bad number, naming the line and the column.
    """
    lines = [(i + 1, ln.strip()) for i, ln in enumerate(text.splitlines())]
    lines = [(i, ln) for i, ln in lines if ln and not ln.startswith("#")]
    if not lines:
        raise ValueError("layout table is empty; allowed: a header and at least one row")
    lineno, header = lines[0]
    names = tuple(h.strip() for h in header.split(","))
    if names != CSV_COLUMNS:
        raise ValueError(f"layout table header (line {lineno}) = {header!r}; allowed: "
                         f"{','.join(CSV_COLUMNS)}")
    fils = []
    for lineno, row in lines[1:]:
        cells = row.split(",")
        if len(cells) != len(CSV_COLUMNS):
            raise ValueError(f"layout table line {lineno} has {len(cells)} cells; allowed: "
                             f"{len(CSV_COLUMNS)}")
        vals = []
        for name, cell in zip(CSV_COLUMNS, cells):
            try:
                vals.append(float(cell))
            except ValueError:
                raise ValueError(f"layout table line {lineno}, {name} = {cell.strip()!r}; "
                                 "allowed: a real number") from None
        try:
            fils.append(Filament(vals[6], tuple(vals[0:3]), tuple(vals[3:6]), vals[7], vals[8]))
        except ValueError as exc:
            raise ValueError(f"layout table line {lineno}: {exc}") from None
    if not fils:
        raise ValueError("layout table has no rows; allowed: at least one column")
    _check_separation(np.array([f.start for f in fils]))
    return tuple(fils)

