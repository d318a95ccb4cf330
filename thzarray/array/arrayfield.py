r"""The array sum: element pattern times array factor, and the general sum.

When every column has the same length, axis and profile, column n's field is the field of
one *element* (that column started at the origin with delay 0 and amplitude 1) times
:math:`q_n e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)}`, so (Jackson, Classical
Electrodynamics, 3rd ed., sec. 9.2; C. A. Balanis, Antenna Theory, arrays chapter)

.. math:: \mathbf F(\omega, \hat r) = \mathbf F_{el}(\omega, \hat r)\, AF(\omega, \hat r),
          \qquad AF = \sum_n q_n e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)},
          \quad k = n_T\omega/c .

:func:`factored_far_field` uses this (one element evaluation plus a cheap array factor);
:func:`array_far_field` takes it when it applies and the general sum otherwise.
"""

from __future__ import annotations

import numpy as np
from scipy.constants import c

from thzarray.air.medium import Medium
from thzarray.array import _kernels as _array_kernels
from thzarray.array import _lattice_kernels
from thzarray.array.lattice import find_lattice, lattice_far_field, site_phasors
from thzarray.base.checks import check_scalar, shorten
from thzarray.base.geometry import unit_vectors
from thzarray.field.farfield import FarField, check_directions, far_field
from thzarray.field.nufft import DEFAULT_RTOL, nufft_far_field, point_sums
from thzarray.source.filament import Filament, as_filaments
from thzarray.source.plasma import Plasma

__all__ = [
    "METHODS",
    "NUFFT_CROSSOVER",
    "NUFFT_MIN_POINTS",
    "array_factor",
    "array_far_field",
    "check_method",
    "element_of",
    "factored_far_field",
    "filament_fields",
    "identical_elements",
]


METHODS = ("auto", "direct", "nufft")
# method="auto" takes the non-uniform FFT for a layout whose columns differ when there are
# more than this many columns per distinct frequency (identical columns always take element
# x array factor). Measured on the project's 2-core machine by benchmarks/bench_speed.py
# (README, Speed where users wait), random positions, rtol 1e-9, with the vectorised direct
# sum: at one frequency the two break even near 256 columns on 256 x 256 directions and near
# 1024 on 128 x 128; at 4 and 16 equally spaced frequencies the direct sum is still faster
# at 1024 columns (it steps through equally spaced frequencies by a recurrence; the
# transform is redone for each frequency).
NUFFT_CROSSOVER = 512
# ... and only with at least this many evaluation points per distinct frequency: a transform
# has a fixed cost of 0.03 to 0.05 s here (the bare finufft call on 16 columns, same
# benchmark), which the direct sum of a thousand columns reaches near 16384 points.
NUFFT_MIN_POINTS = 16384


def _nufft_pays(columns: int, n_freq: int, shape: tuple) -> bool:
    """Whether method="auto" takes the non-uniform FFT (see NUFFT_CROSSOVER)."""
    points = int(np.prod(shape))
    return columns > NUFFT_CROSSOVER * n_freq and points >= NUFFT_MIN_POINTS * n_freq


def check_method(method) -> str:
    """``method`` as given when it is one of :data:`METHODS`, else ValueError."""
    if not isinstance(method, str) or method not in METHODS:
        raise ValueError(f"method = {shorten(repr(method))} is not allowed; allowed: one of "
                         f"{', '.join(repr(m) for m in METHODS)}")
    return method


def _pack(fils):
    return (np.array([f.start for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.delay for f in fils], dtype=float),
            np.array([f.amplitude for f in fils], dtype=float))


def identical_elements(layout) -> bool:
    """True when all columns share length, axis, current direction, group index and profile
    (the field then factors)."""
    fils = as_filaments(layout)
    first = fils[0]
    for f in fils[1:]:
        if f.length != first.length or f.axis != first.axis or f.is_uniform != first.is_uniform:
            return False
        if f.current_direction != first.current_direction or f.group_index != first.group_index:
            return False
        if not f.is_uniform and f.pieces.key() != first.pieces.key():
            return False
    return True


def element_of(layout) -> Filament:
    """The common element: the first column moved to the origin with delay 0 and amplitude 1."""
    first = as_filaments(layout)[0]
    return first.replace(start=(0.0, 0.0, 0.0), delay=0.0, amplitude=1.0)


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


def array_factor(filaments, freq, theta, phi, medium: Medium | None = None, *,
                 compiled: bool = True, method: str = "auto",
                 rtol: float = DEFAULT_RTOL) -> np.ndarray:
    r"""Array factor of the columns' starts, delays and amplitudes.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    freq : array_like
        Frequency (Hz), > 0.
    theta, phi : array_like
        Direction (rad); theta in [0, pi].
    medium : Medium, optional
        Defaults to vacuum (only ``n_thz`` enters).
    compiled : bool
        Numba kernels (default) or their numpy twins.
    method : {"auto", "direct", "nufft"}
        ``"nufft"``: one type-3 non-uniform FFT per distinct frequency
        (:func:`thzarray.field.nufft.point_sums`, error within ``rtol`` of the sum of
        ``|q_n|``); ``"auto"``: the lattice path at one frequency where it applies, the
        non-uniform FFT above :data:`NUFFT_CROSSOVER` columns and from
        :data:`NUFFT_MIN_POINTS` evaluation points per distinct frequency, the
        direct sum otherwise; ``"direct"``: never the non-uniform FFT.
    rtol : float
        Tolerance of the non-uniform FFT path.

    Returns
    -------
    ndarray, complex, shape ``np.broadcast_shapes(freq.shape, theta.shape, phi.shape)``

    Notes
    -----
    .. math:: AF(\omega, \hat r) = \sum_n q_n e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)}

    (C. A. Balanis, Antenna Theory, arrays chapter). For a (freq, theta, phi) grid such as
    ``freq[:, None, None], theta[:, None], phi`` the frequencies are looped innermost. At one
    frequency, columns on a lattice (line, rectangular or hexagonal grid) take the row and
    column factors of :mod:`thzarray.array.lattice`, one frequency at a time while there are
    fewer than a third as many frequencies as columns (compiled path only).
    """
    fils = as_filaments(filaments)
    method = check_method(method)
    medium = Medium.vacuum() if medium is None else medium
    freq, theta, phi, shape = check_directions(freq, theta, phi)
    start, delay, amplitude = _pack(fils)
    values = np.unique(freq)
    # Horner on a lattice costs 6 sines and cosines per direction and frequency, the direct
    # sum 2 per direction and column: the lattice wins while 3 F < N.
    lattice = (find_lattice(start) if compiled and len(fils) > 2 and 3 * values.size < len(fils)
               else None)
    if method == "nufft" or (method == "auto" and lattice is None
                             and _nufft_pays(len(fils), values.size, shape)):
        check_scalar("rtol", rtol, low=1e-13, high=1e-2)
        bf = np.broadcast_to(freq, shape).reshape(-1)
        r, _, _ = unit_vectors(np.broadcast_to(theta, shape).reshape(-1),
                               np.broadcast_to(phi, shape).reshape(-1))
        return point_sums(bf, r, start, delay, amplitude, medium.n_thz, rtol).reshape(shape)
    if lattice is not None:
        bf, bt, bp = (np.broadcast_to(x, shape).reshape(-1) for x in (freq, theta, phi))
        out = np.empty(bf.size, dtype=complex)
        for fj in values:
            idx = np.flatnonzero(bf == fj) if values.size > 1 else slice(None)
            omega = 2 * np.pi * fj
            out[idx] = _lattice_kernels.lattice_factor(
                omega * medium.n_thz / c, bt[idx], bp[idx], lattice.origin, lattice.a1,
                lattice.a2, site_phasors(lattice, delay, amplitude, omega))
        return out.reshape(shape)
    k = _grid_split(freq, theta, phi, shape)
    if k is not None:
        nd = len(shape)
        fp, tp, pp = (x.reshape((1,) * (nd - x.ndim) + x.shape) for x in (freq, theta, phi))
        f_flat = np.broadcast_to(fp[(Ellipsis,) + (0,) * (nd - k)], shape[:k]).reshape(-1)
        th = np.broadcast_to(tp[(0,) * k], shape[k:]).reshape(-1)
        ph = np.broadcast_to(pp[(0,) * k], shape[k:]).reshape(-1)
        kernel = (_array_kernels.array_factor_grid if compiled
                  else _array_kernels.array_factor_grid_numpy)
        out = kernel(f_flat, th, ph, start, delay, amplitude, medium.n_thz)  # (M, F)
        return np.ascontiguousarray(out.T).reshape(shape)
    bf, bt, bp = (np.broadcast_to(x, shape).reshape(-1) for x in (freq, theta, phi))
    kernel = (_array_kernels.array_factor_points if compiled
              else _array_kernels.array_factor_points_numpy)
    return kernel(bf, bt, bp, start, delay, amplitude, medium.n_thz).reshape(shape)


def factored_far_field(filaments, freq, theta, phi, medium: Medium | None = None,
                       plasma: Plasma | None = None, *, compiled: bool = True,
                       method: str = "auto", rtol: float = DEFAULT_RTOL) -> FarField:
    r"""Far field of a layout of identical columns as element pattern times array factor.

    Parameters and returns as for :func:`thzarray.field.farfield.far_field`; ``method`` and
    ``rtol`` choose how the array factor is summed (:func:`array_factor`).

    Raises
    ------
    ValueError
        When the columns differ in length, axis, current direction, group index or profile
        (see :func:`identical_elements`).

    Notes
    -----
    .. math:: \mathbf F = \mathbf F_{el}\, AF

    (module docstring). Equal to the general sum up to rounding.
    """
    fils = as_filaments(filaments)
    if not identical_elements(fils):
        raise ValueError("filaments = columns of different length, axis, current direction, "
                         "group index or profile; allowed: identical columns for the factored "
                         "sum (use array_far_field)")
    medium = Medium.vacuum() if medium is None else medium
    element = element_of(fils)
    af = array_factor(fils, freq, theta, phi, medium, compiled=compiled, method=method,
                      rtol=rtol)
    if _about_z(element):
        # Axis and current along z, start at the origin: r.a = cos(theta), theta-hat.z =
        # -sin(theta) and phi-hat.z = 0, so the element's field does not depend on phi.
        el = far_field(element, freq, theta, 0.0, medium, plasma, compiled=compiled)
        e_t, e_p = (np.broadcast_to(x, af.shape) for x in (el.e_theta, el.e_phi))
    else:
        el = far_field(element, freq, theta, phi, medium, plasma, compiled=compiled)
        e_t, e_p = el.e_theta, el.e_phi
    return FarField(freq, theta, phi, e_t * af, e_p * af, medium)


def _about_z(element: Filament) -> bool:
    """True when the element's axis and current direction are +-z exactly."""
    return (abs(element.axis[2]) == 1.0 and abs(element.current[2]) == 1.0)


def array_far_field(filaments, freq, theta, phi, medium: Medium | None = None,
                    plasma: Plasma | None = None, *, compiled: bool = True,
                    method: str = "auto", rtol: float = DEFAULT_RTOL) -> FarField:
    """Far field of a layout: the factored sum when the columns are identical, else the general
    one, directly or by non-uniform FFT.

    Parameters
    ----------
    filaments, freq, theta, phi, medium, plasma, compiled
        As for :func:`thzarray.field.farfield.far_field`.
    method : {"auto", "direct", "nufft"}
        ``"direct"``: element x array factor for identical columns; at one frequency,
        uniform +z columns with starts on a lattice by row factors
        (:func:`thzarray.array.lattice.lattice_far_field`); else the general sum.
        ``"nufft"``: :func:`thzarray.field.nufft.nufft_far_field` (within ``rtol``).
        ``"auto"`` (default): the lattice path where it applies, element x array factor for
        identical columns, the non-uniform FFT above :data:`NUFFT_CROSSOVER` columns and
        from :data:`NUFFT_MIN_POINTS` points per distinct frequency, else the general sum.
    rtol : float
        Tolerance of the non-uniform FFT path, relative to the largest value the sum can
        take (see :func:`~thzarray.field.nufft.nufft_far_field`); unused by the direct sums,
        which are exact to rounding.

    Returns
    -------
    FarField
    """
    method = check_method(method)
    fils = as_filaments(filaments)
    if method == "nufft":
        return nufft_far_field(fils, freq, theta, phi, medium, plasma, rtol=rtol)
    if compiled:
        medium = Medium.vacuum() if medium is None else medium
        f, t, p, shape = check_directions(freq, theta, phi)
        on_lattice = lattice_far_field(fils, f, t, p, shape, medium, plasma)
        if on_lattice is not None:
            return on_lattice
    identical = len(fils) > 1 and identical_elements(fils)
    if method == "auto" and not identical:
        f, _, _, shape = check_directions(freq, theta, phi)
        if _nufft_pays(len(fils), np.unique(f).size, shape):
            return nufft_far_field(fils, freq, theta, phi, medium, plasma, rtol=rtol)
    if identical:
        return factored_far_field(fils, freq, theta, phi, medium, plasma, compiled=compiled,
                                  method=method, rtol=rtol)
    return far_field(fils, freq, theta, phi, medium, plasma, compiled=compiled)


def filament_fields(filaments, freq, theta, phi, medium: Medium | None = None,
                    plasma: Plasma | None = None) -> np.ndarray:
    """Each column's field with its delay taken out: the terms of the array sum.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    freq, theta, phi : array_like
        As for :func:`thzarray.field.farfield.far_field`.
    medium, plasma : optional

    Returns
    -------
    ndarray, complex, shape (N,) + broadcast shape + (2,)
        (theta, phi) components (V s) of column n with delay 0; the layout's field is
        ``sum_n g[n] * exp(i w t_n)``.
    """
    fils = as_filaments(filaments)
    if len(fils) > 1 and identical_elements(fils):
        # Pattern multiplication (module docstring): g_n = q_n exp(-i k r.r_n) F_el.
        medium = Medium.vacuum() if medium is None else medium
        freq, theta, phi, shape = check_directions(freq, theta, phi)
        el = far_field(element_of(fils), freq, theta, phi, medium, plasma)
        pair = np.stack(np.broadcast_arrays(el.e_theta, el.e_phi), axis=-1)
        r, _, _ = unit_vectors(theta, phi)
        k = 2 * np.pi * freq * medium.n_thz / c
        start, _, amplitude = _pack(fils)
        phase = np.exp(-1j * k[..., None] * (r @ start.T))  # shape + (N,)
        phase = np.broadcast_to(phase, shape + (len(fils),)) * amplitude
        return np.moveaxis(phase, -1, 0)[..., None] * pair
    parts = []
    for f in fils:
        ff = far_field(f.replace(delay=0.0), freq, theta, phi, medium, plasma)
        parts.append(np.stack([ff.e_theta, ff.e_phi], axis=-1))
    return np.stack(parts)
