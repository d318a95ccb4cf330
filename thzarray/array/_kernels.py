r"""Compiled array-factor loops, each with a plain numpy twin.

Private module: :mod:`thzarray.layouts` validates, allocates and chooses the path; the tests
compare every kernel with its twin.

For direction :math:`\hat r = (\sin\theta\cos\phi, \sin\theta\sin\phi, \cos\theta)` the array
factor of columns starting at :math:`\mathbf r_n` with delays :math:`t_n` and amplitudes
:math:`q_n` is

.. math:: AF(\omega, \hat r) = \sum_n q_n e^{i\omega p_n},\qquad
          p_n = t_n - \frac{n_T}{c}\,\hat r\cdot\mathbf r_n .

``array_factor_grid`` evaluates it on F frequencies times M directions. When the
frequencies are equally spaced it takes :math:`e^{i\omega_j p_n}` from
:math:`e^{i\omega_0 p_n}` by repeated multiplication with :math:`e^{i\Delta\omega p_n}`: two
sine/cosine pairs per (direction, column) instead of one per frequency, with a rounding
error that grows like j times the machine epsilon.

``descending_region`` marks the grid points reached from a start point by steps to one of
the 8 neighbours that never go up: the basin of a lobe, bounded by its nulls.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange
from scipy.constants import c as _C

__all__ = [
    "array_factor_grid",
    "array_factor_grid_numpy",
    "array_factor_points",
    "array_factor_points_numpy",
    "descending_region",
    "descending_region_numpy",
    "lattice_columns",
    "lattice_columns_numpy",
    "lattice_factor",
    "lattice_factor_numpy",
    "lattice_separable",
    "lattice_separable_numpy",
]


@njit(cache=True, parallel=True)
def _array_factor_grid(freq, theta, phi, start, delay, amplitude, n_thz, equal_steps, out):
    m = theta.shape[0]
    nfreq = freq.shape[0]
    ncol = start.shape[0]
    w0 = 2.0 * np.pi * freq[0]
    dw = 2.0 * np.pi * (freq[1] - freq[0]) if nfreq > 1 else 0.0
    scale = n_thz / _C
    for i in prange(m):
        st = np.sin(theta[i])
        rx = st * np.cos(phi[i])
        ry = st * np.sin(phi[i])
        rz = np.cos(theta[i])
        acc_r = np.zeros(nfreq)
        acc_i = np.zeros(nfreq)
        for n in range(ncol):
            p = delay[n] - scale * (rx * start[n, 0] + ry * start[n, 1] + rz * start[n, 2])
            q = amplitude[n]
            if equal_steps:
                zr = q * np.cos(w0 * p)
                zi = q * np.sin(w0 * p)
                sr = np.cos(dw * p)
                si = np.sin(dw * p)
                for j in range(nfreq):
                    acc_r[j] += zr
                    acc_i[j] += zi
                    zr, zi = zr * sr - zi * si, zr * si + zi * sr
            else:
                for j in range(nfreq):
                    ph = 2.0 * np.pi * freq[j] * p
                    acc_r[j] += q * np.cos(ph)
                    acc_i[j] += q * np.sin(ph)
        for j in range(nfreq):
            out[i, j] = complex(acc_r[j], acc_i[j])


def array_factor_grid(freq, theta, phi, start, delay, amplitude, n_thz):
    """Compiled array factor on a (direction, frequency) grid.

    Parameters
    ----------
    freq : ndarray, shape (F,)
        Frequencies (Hz).
    theta, phi : ndarray, shape (M,)
        Directions (rad).
    start : ndarray, shape (N, 3)
        Column start points (m).
    delay, amplitude : ndarray, shape (N,)
        Delays (s) and amplitudes.
    n_thz : float
        THz phase index.

    Returns
    -------
    ndarray, complex, shape (M, F)
    """
    freq = np.ascontiguousarray(freq, dtype=float)
    steps = np.diff(freq)
    equal = bool(freq.size > 1 and np.allclose(steps, steps[0], rtol=1e-12, atol=0.0))
    out = np.empty((theta.shape[0], freq.shape[0]), dtype=np.complex128)
    _array_factor_grid(freq, np.ascontiguousarray(theta, dtype=float),
                       np.ascontiguousarray(phi, dtype=float),
                       np.ascontiguousarray(start, dtype=float),
                       np.ascontiguousarray(delay, dtype=float),
                       np.ascontiguousarray(amplitude, dtype=float), float(n_thz), equal, out)
    return out


def _phase_per_omega(theta, phi, start, delay, n_thz):
    """p_n for each direction: shape (..., N) (s)."""
    st = np.sin(theta)
    r = np.stack([st * np.cos(phi), st * np.sin(phi), np.cos(theta)], axis=-1)
    return delay - (n_thz / _C) * (r @ start.T)


def array_factor_grid_numpy(freq, theta, phi, start, delay, amplitude, n_thz):
    """Numpy twin of :func:`array_factor_grid` (direct exponentials at every frequency)."""
    p = _phase_per_omega(theta, phi, start, delay, n_thz)  # (M, N)
    w = 2 * np.pi * np.asarray(freq, float)
    out = np.empty((p.shape[0], w.size), dtype=complex)
    for j, wj in enumerate(w):
        out[:, j] = np.exp(1j * wj * p) @ amplitude
    return out


@njit(cache=True, parallel=True)
def _array_factor_points(freq, theta, phi, start, delay, amplitude, n_thz, out):
    ncol = start.shape[0]
    scale = n_thz / _C
    for i in prange(theta.shape[0]):
        st = np.sin(theta[i])
        rx = st * np.cos(phi[i])
        ry = st * np.sin(phi[i])
        rz = np.cos(theta[i])
        w = 2.0 * np.pi * freq[i]
        acc_r = 0.0
        acc_i = 0.0
        for n in range(ncol):
            ph = w * (delay[n] - scale * (rx * start[n, 0] + ry * start[n, 1] + rz * start[n, 2]))
            acc_r += amplitude[n] * np.cos(ph)
            acc_i += amplitude[n] * np.sin(ph)
        out[i] = complex(acc_r, acc_i)


def array_factor_points(freq, theta, phi, start, delay, amplitude, n_thz):
    """Compiled array factor at M points, each with its own frequency and direction.

    Parameters
    ----------
    freq, theta, phi : ndarray, shape (M,)
        Frequency (Hz) and direction (rad) of each point.
    start, delay, amplitude, n_thz
        As for :func:`array_factor_grid`.

    Returns
    -------
    ndarray, complex, shape (M,)
    """
    out = np.empty(theta.shape[0], dtype=np.complex128)
    _array_factor_points(*(np.ascontiguousarray(x, dtype=float)
                           for x in (freq, theta, phi, start, delay, amplitude)),
                         float(n_thz), out)
    return out


def array_factor_points_numpy(freq, theta, phi, start, delay, amplitude, n_thz):
    """Numpy twin of :func:`array_factor_points`."""
    p = _phase_per_omega(theta, phi, start, delay, n_thz)  # (M, N)
    return np.exp(2j * np.pi * np.asarray(freq, float)[:, None] * p) @ amplitude


@njit(cache=True)
def _descending_region(values, i0, j0, wrap, out):
    rows, cols = values.shape
    stack = np.empty((rows * cols, 2), dtype=np.int64)
    out[i0, j0] = True
    stack[0, 0] = i0
    stack[0, 1] = j0
    top = 1
    while top > 0:
        top -= 1
        i = stack[top, 0]
        j = stack[top, 1]
        v = values[i, j]
        for di in range(-1, 2):
            k = i + di
            if k < 0 or k >= rows:
                continue
            for dj in range(-1, 2):
                m = j + dj
                if wrap:
                    m = (m + cols) % cols
                elif m < 0 or m >= cols:
                    continue
                if not out[k, m] and values[k, m] <= v:
                    out[k, m] = True
                    stack[top, 0] = k
                    stack[top, 1] = m
                    top += 1


def descending_region(values, i0, j0, wrap):
    """Compiled basin of a lobe on a 2-D grid.

    Parameters
    ----------
    values : ndarray, shape (T, P)
        Grid values (e.g. energy on a (theta, phi) sky grid).
    i0, j0 : int
        Start point (usually the lobe's peak).
    wrap : bool
        Whether the second axis is periodic.

    Returns
    -------
    ndarray, bool, shape (T, P)
        Points reached by 8-neighbour steps that never go up.
    """
    out = np.zeros(values.shape, dtype=np.bool_)
    _descending_region(np.ascontiguousarray(values, dtype=float), int(i0), int(j0), bool(wrap),
                       out)
    return out


def descending_region_numpy(values, i0, j0, wrap):
    """Numpy twin of :func:`descending_region` (repeated 3 x 3 maximum filters)."""
    from scipy import ndimage

    modes = ("nearest", "wrap") if wrap else "nearest"
    region = np.zeros(values.shape, bool)
    region[i0, j0] = True
    while True:
        reach = ndimage.maximum_filter(np.where(region, values, -np.inf), size=3, mode=modes)
        new = region | (values <= reach)
        if np.array_equal(new, region):
            return region
        region = new


@njit(cache=True)
def _site_steps(k, rx, ry, rz, origin, a1, a2):
    """Phasors of one lattice step along a1 and a2, and of the origin, toward (rx, ry, rz)."""
    p1 = -k * (rx * a1[0] + ry * a1[1] + rz * a1[2])
    p2 = -k * (rx * a2[0] + ry * a2[1] + rz * a2[2])
    p0 = -k * (rx * origin[0] + ry * origin[1] + rz * origin[2])
    return (complex(np.cos(p1), np.sin(p1)), complex(np.cos(p2), np.sin(p2)),
            complex(np.cos(p0), np.sin(p0)))


@njit(cache=True)
def _horner(coefs, z):
    """sum_a coefs[a] z^a by Horner's rule."""
    acc = 0.0j
    for a in range(coefs.shape[0] - 1, -1, -1):
        acc = acc * z + coefs[a]
    return acc


@njit(cache=True)
def _horner2(sites, z1, z2):
    """sum_ab sites[a, b] z1^a z2^b by Horner's rule in both indices."""
    acc = 0.0j
    for a in range(sites.shape[0] - 1, -1, -1):
        acc = acc * z1 + _horner(sites[a], z2)
    return acc


@njit(cache=True, parallel=True)
def _lattice_factor(k, theta, phi, origin, a1, a2, phasors, out):
    for i in prange(theta.shape[0]):
        st = np.sin(theta[i])
        z1, z2, z0 = _site_steps(k, st * np.cos(phi[i]), st * np.sin(phi[i]),
                                 np.cos(theta[i]), origin, a1, a2)
        out[i] = _horner2(phasors, z1, z2) * z0


@njit(cache=True, parallel=True)
def _separable_factor(k, theta, phi, origin, a1, a2, row_phasors, col_phasors, out):
    for i in prange(theta.shape[0]):
        st = np.sin(theta[i])
        z1, z2, z0 = _site_steps(k, st * np.cos(phi[i]), st * np.sin(phi[i]),
                                 np.cos(theta[i]), origin, a1, a2)
        out[i] = _horner(row_phasors, z1) * _horner(col_phasors, z2) * z0


def lattice_factor(k, theta, phi, origin, a1, a2, phasors):
    r"""Compiled array factor of phasors on a lattice at one wavenumber, by Horner's rule.

    .. math:: AF(\hat r) = e^{-ik\hat r\cdot\mathbf r_0}\sum_a z_1^a \sum_b P_{ab} z_2^b,
              \qquad z_{1,2} = e^{-ik\hat r\cdot\mathbf a_{1,2}}

    Three sine/cosine pairs per direction and one complex multiply-add per lattice site.

    Parameters
    ----------
    k : float
        Wavenumber n_T w / c (rad/m).
    theta, phi : ndarray, shape (M,)
        Directions (rad).
    origin, a1, a2 : ndarray, shape (3,)
        Lattice origin and basis vectors (m).
    phasors : ndarray, complex, shape (I, J) or a pair of shapes (I,) and (J,)
        ``q e^{i w t}`` of the site a * a1 + b * a2 (zero where no column stands), or, for a
        separable layout, the row and column factors whose outer product it is.

    Returns
    -------
    ndarray, complex, shape (M,)
    """
    out = np.empty(theta.shape[0], dtype=np.complex128)
    args = (float(k), np.ascontiguousarray(theta, dtype=float),
            np.ascontiguousarray(phi, dtype=float), *(np.ascontiguousarray(v, dtype=float)
                                                     for v in (origin, a1, a2)))
    if isinstance(phasors, tuple):
        _separable_factor(*args, *(np.ascontiguousarray(p, dtype=np.complex128)
                                   for p in phasors), out)
    else:
        _lattice_factor(*args, np.ascontiguousarray(phasors, dtype=np.complex128), out)
    return out


def lattice_factor_numpy(k, theta, phi, origin, a1, a2, phasors):
    """Numpy twin of :func:`lattice_factor` (the direct sum over the lattice sites)."""
    if isinstance(phasors, tuple):
        phasors = np.outer(phasors[0], phasors[1])
    a, b = np.nonzero(phasors)
    pos = origin[None, :] + a[:, None] * a1[None, :] + b[:, None] * a2[None, :]
    st = np.sin(theta)
    r = np.stack([st * np.cos(phi), st * np.sin(phi), np.cos(theta)], axis=-1)
    return np.exp(-1j * k * (r @ pos.T)) @ phasors[a, b]


@njit(cache=True, parallel=True)
def _lattice_columns(k, u, theta, phi, origin, a1, a2, index, phasor, length, shape, out):
    rows, cols = shape[0], shape[1]
    ncol = length.shape[0]
    nphi = phi.shape[0]
    cos_phi = np.cos(phi)
    sin_phi = np.sin(phi)
    for it in prange(theta.shape[0]):
        sites = np.zeros((rows, cols), dtype=np.complex128)
        ui = u[it]
        for n in range(ncol):
            half = 0.5 * ui * length[n]
            if abs(half) < 1e-6:
                sinc = 1.0 - half * half / 6.0
            else:
                sinc = np.sin(half) / half
            col = length[n] * sinc * complex(np.cos(half), np.sin(half))
            sites[index[n, 0], index[n, 1]] += phasor[n] * col
        st = np.sin(theta[it])
        ct = np.cos(theta[it])
        for ip in range(nphi):
            z1, z2, z0 = _site_steps(k, st * cos_phi[ip], st * sin_phi[ip], ct, origin, a1,
                                     a2)
            out[it, ip] = _horner2(sites, z1, z2) * z0


def lattice_columns(k, u, theta, phi, origin, a1, a2, index, phasor, length, shape):
    r"""Compiled sum of z-parallel uniform columns with starts on a lattice, one frequency.

    .. math:: S(\theta, \phi) = \sum_n P_n L_n \operatorname{sinc}(uL_n/2) e^{iuL_n/2}
              e^{-ik\hat r\cdot\mathbf r_n}

    with :math:`u = u(\theta)` common to the columns: the columns' factors are put on the
    lattice sites once per polar angle, then summed by Horner's rule per azimuth.

    Parameters
    ----------
    k : float
        Wavenumber (rad/m).
    u : ndarray, shape (T,)
        Phase mismatch at each polar angle (rad/m).
    theta : ndarray, shape (T,)
    phi : ndarray, shape (P,)
        The outer grid of directions (rad).
    origin, a1, a2 : ndarray, shape (3,)
        Lattice origin and basis (m).
    index : ndarray, int, shape (N, 2)
        Each column's site.
    phasor : ndarray, complex, shape (N,)
        ``q e^{i w t}`` of each column.
    length : ndarray, shape (N,)
        Column lengths (m).
    shape : tuple of int
        Lattice sites (I, J).

    Returns
    -------
    ndarray, complex, shape (T, P)
    """
    out = np.empty((theta.shape[0], phi.shape[0]), dtype=np.complex128)
    _lattice_columns(float(k), *(np.ascontiguousarray(v, dtype=float)
                                 for v in (u, theta, phi, origin, a1, a2)),
                     np.ascontiguousarray(index, dtype=np.int64),
                     np.ascontiguousarray(phasor, dtype=np.complex128),
                     np.ascontiguousarray(length, dtype=float),
                     np.array(shape, dtype=np.int64), out)
    return out


def lattice_columns_numpy(k, u, theta, phi, origin, a1, a2, index, phasor, length, shape):
    """Numpy twin of :func:`lattice_columns` (the direct sum over the columns)."""
    pos = origin[None, :] + index[:, :1] * a1[None, :] + index[:, 1:] * a2[None, :]
    st = np.sin(theta)[:, None]
    r = np.stack(np.broadcast_arrays(st * np.cos(phi), st * np.sin(phi),
                                     np.cos(theta)[:, None]), axis=-1)
    half = 0.5 * u[:, None] * length[None, :]
    col = length * np.sinc(half / np.pi) * np.exp(1j * half) * phasor  # (T, N)
    return np.einsum("tn,tpn->tp", col, np.exp(-1j * k * (r @ pos.T)))


@njit(cache=True, parallel=True)
def _lattice_separable(k, column, theta, phi, origin, a1, a2, rows, cols, out):
    cos_phi = np.cos(phi)
    sin_phi = np.sin(phi)
    for it in prange(theta.shape[0]):
        st = np.sin(theta[it])
        ct = np.cos(theta[it])
        for ip in range(phi.shape[0]):
            z1, z2, z0 = _site_steps(k, st * cos_phi[ip], st * sin_phi[ip], ct, origin, a1,
                                     a2)
            out[it, ip] = column[it] * _horner(rows, z1) * _horner(cols, z2) * z0


def lattice_separable(k, column, theta, phi, origin, a1, a2, rows, cols):
    r"""Compiled field sum of identical columns with separable phasors on a lattice.

    .. math:: S(\theta, \phi) = C(\theta)\, e^{-ik\hat r\cdot\mathbf r_0}
              \sum_a R_a z_1^a \sum_b Q_b z_2^b

    (element x row factor x column factor) on the outer grid theta x phi.

    Parameters
    ----------
    k : float
        Wavenumber (rad/m).
    column : ndarray, complex, shape (T,)
        The common column factor at each polar angle (m).
    theta : ndarray, shape (T,)
    phi : ndarray, shape (P,)
        The outer grid of directions (rad).
    origin, a1, a2 : ndarray, shape (3,)
        Lattice origin and basis (m).
    rows, cols : ndarray, complex, shapes (I,) and (J,)
        Factors whose outer product is the sites' phasors.

    Returns
    -------
    ndarray, complex, shape (T, P)
    """
    out = np.empty((theta.shape[0], phi.shape[0]), dtype=np.complex128)
    _lattice_separable(float(k), np.ascontiguousarray(column, dtype=np.complex128),
                       *(np.ascontiguousarray(v, dtype=float)
                         for v in (theta, phi, origin, a1, a2)),
                       np.ascontiguousarray(rows, dtype=np.complex128),
                       np.ascontiguousarray(cols, dtype=np.complex128), out)
    return out


def lattice_separable_numpy(k, column, theta, phi, origin, a1, a2, rows, cols):
    """Numpy twin of :func:`lattice_separable` (the direct sum over the sites)."""
    grid_t, grid_p = np.broadcast_arrays(theta[:, None], phi[None, :])
    af = lattice_factor_numpy(k, grid_t.ravel(), grid_p.ravel(), origin, a1, a2, (rows, cols))
    return column[:, None] * af.reshape(grid_t.shape)
