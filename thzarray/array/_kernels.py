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
:math:`e^{i\omega_0 p_n}` by repeated multiplication with :math:`e^{i\Delta\omega p_n}`,
re-evaluated exactly every 32 steps: about two sine/cosine pairs per (direction, column)
instead of one per frequency, with a rounding error of at most 32 steps' worth. Directions
are taken in blocks and the inner loops run over a block in plain arithmetic
(:func:`thzarray.base.trig.cis`), which the compiler vectorises.

``descending_region`` marks the grid points reached from a start point by steps to one of
the 8 neighbours that never go up: the basin of a lobe, bounded by its nulls.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange
from scipy.constants import c as _C

from thzarray.base.trig import cis

__all__ = [
    "array_factor_grid",
    "array_factor_grid_numpy",
    "array_factor_points",
    "array_factor_points_numpy",
    "descending_region",
    "descending_region_numpy",
]


@njit(cache=True, parallel=True)
def _array_factor_grid(freq, theta, phi, start, delay, amplitude, n_thz, equal_steps, block,
                       out):
    m = theta.shape[0]
    nfreq = freq.shape[0]
    ncol = start.shape[0]
    w0 = 2.0 * np.pi * freq[0]
    dw = 2.0 * np.pi * (freq[1] - freq[0]) if nfreq > 1 else 0.0
    scale = n_thz / _C
    for b in prange((m + block - 1) // block):
        i0 = b * block
        k = min(m, i0 + block) - i0
        # Working arrays allocated here, so that the compiler vectorises the loops over i.
        rx = np.empty(k)
        ry = np.empty(k)
        rz = np.empty(k)
        p = np.empty(k)
        zr = np.empty(k)
        zi = np.empty(k)
        sr = np.empty(k)
        si = np.empty(k)
        acc_r = np.zeros((nfreq, k))
        acc_i = np.zeros((nfreq, k))
        for i in range(k):
            st = np.sin(theta[i0 + i])
            rx[i] = scale * st * np.cos(phi[i0 + i])
            ry[i] = scale * st * np.sin(phi[i0 + i])
            rz[i] = scale * np.cos(theta[i0 + i])
        for n in range(ncol):
            q = amplitude[n]
            for i in range(k):
                p[i] = delay[n] - (rx[i] * start[n, 0] + ry[i] * start[n, 1] + rz[i] * start[n, 2])
                sr[i], si[i] = cis(dw * p[i])
            for j in range(nfreq):
                if not equal_steps or j % 32 == 0:  # exact every 32 steps
                    wj = 2.0 * np.pi * freq[j] if not equal_steps else w0 + j * dw
                    for i in range(k):
                        zr[i], zi[i] = cis(wj * p[i])
                for i in range(k):  # vectorised: arithmetic only
                    acc_r[j, i] += q * zr[i]
                    acc_i[j, i] += q * zi[i]
                    u = zr[i] * sr[i] - zi[i] * si[i]
                    zi[i] = zr[i] * si[i] + zi[i] * sr[i]
                    zr[i] = u
        for i in range(k):
            for j in range(nfreq):
                out[i0 + i, j] = complex(acc_r[j, i], acc_i[j, i])


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
                       np.ascontiguousarray(amplitude, dtype=float), float(n_thz), equal,
                       int(min(256, max(8, 32768 // max(1, freq.size)))), out)
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


_BLOCK = 256  # directions per thread task of the pointwise array factor


@njit(cache=True, parallel=True)
def _array_factor_points(freq, theta, phi, sx, sy, sz, delay, amplitude, n_thz, out):
    m = theta.shape[0]
    ncol = sx.shape[0]
    scale = n_thz / _C
    for b in prange((m + _BLOCK - 1) // _BLOCK):
        i0 = b * _BLOCK
        k = min(m, i0 + _BLOCK) - i0
        w = np.empty(k)
        rx = np.empty(k)
        ry = np.empty(k)
        rz = np.empty(k)
        acc_r = np.zeros(k)
        acc_i = np.zeros(k)
        for i in range(k):
            st = np.sin(theta[i0 + i])
            w[i] = 2.0 * np.pi * freq[i0 + i]
            rx[i] = scale * st * np.cos(phi[i0 + i])
            ry[i] = scale * st * np.sin(phi[i0 + i])
            rz[i] = scale * np.cos(theta[i0 + i])
        for n in range(ncol):
            q = amplitude[n]
            for i in range(k):  # vectorised: arithmetic only
                cr, ci = cis(w[i] * (delay[n] - (rx[i] * sx[n] + ry[i] * sy[n] + rz[i] * sz[n])))
                acc_r[i] += q * cr
                acc_i[i] += q * ci
        for i in range(k):
            out[i0 + i] = complex(acc_r[i], acc_i[i])


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
    start = np.asarray(start, dtype=float).reshape(-1, 3)
    _array_factor_points(*(np.ascontiguousarray(x, dtype=float)
                           for x in (freq, theta, phi, *start.T, delay, amplitude)),
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
