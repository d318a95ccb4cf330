r"""Compiled sums over columns standing on a lattice, by Horner's rule, each with a numpy twin.

Private module: :mod:`thzarray.array.lattice` finds the lattice and chooses the path; the
tests compare every kernel with its twin.

Sites :math:`\mathbf r_0 + a\,\mathbf a_1 + b\,\mathbf a_2` seen from direction
:math:`\hat r` carry the phases :math:`z_0 z_1^a z_2^b` with
:math:`z_j = e^{-ik\hat r\cdot\mathbf a_j}`, so a sum of phasors :math:`P_{ab}` over the sites
is a polynomial in :math:`z_1, z_2` (Horner's rule: one complex multiply-add per site) and,
when :math:`P_{ab} = R_a Q_b`, a product of two polynomials (one per row and one per column).

The kernels take the directions in blocks and run each Horner step over a whole block in an
inner loop of plain arithmetic (the sine-cosine pairs from :func:`thzarray.base.trig.cis`),
which the compiler turns into SIMD instructions; a direction-by-direction Horner recurrence
would wait on each multiplication in turn.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from thzarray.base.trig import cis

__all__ = [
    "lattice_columns",
    "lattice_columns_numpy",
    "lattice_factor",
    "lattice_factor_numpy",
    "lattice_separable",
    "lattice_separable_numpy",
]

_BLOCK = 128  # directions per block


@njit(cache=True)
def _site_steps(k, rx, ry, rz, origin, a1, a2, z):
    """z[0:2], z[2:4], z[4:6] = (re, im) of the steps along a1 and a2 and of the origin."""
    for i in range(rx.shape[0]):
        z[0, i], z[1, i] = cis(-k * (rx[i] * a1[0] + ry[i] * a1[1] + rz[i] * a1[2]))
        z[2, i], z[3, i] = cis(-k * (rx[i] * a2[0] + ry[i] * a2[1] + rz[i] * a2[2]))
        z[4, i], z[5, i] = cis(-k * (rx[i] * origin[0] + ry[i] * origin[1]
                                     + rz[i] * origin[2]))


@njit(cache=True)
def _horner(coefs, zr, zi, acc_r, acc_i):
    """acc = sum_a coefs[a] z^a for every direction of the block (Horner's rule)."""
    n = zr.shape[0]
    top = coefs.shape[0] - 1
    for i in range(n):
        acc_r[i] = coefs[top].real
        acc_i[i] = coefs[top].imag
    for a in range(top - 1, -1, -1):
        cr = coefs[a].real
        ci = coefs[a].imag
        for i in range(n):
            r = acc_r[i] * zr[i] - acc_i[i] * zi[i] + cr
            acc_i[i] = acc_r[i] * zi[i] + acc_i[i] * zr[i] + ci
            acc_r[i] = r


@njit(cache=True)
def _horner2(sites, z, acc_r, acc_i, row_r, row_i):
    """acc = sum_ab sites[a, b] z1^a z2^b by Horner's rule in both indices."""
    n = acc_r.shape[0]
    for i in range(n):
        acc_r[i] = 0.0
        acc_i[i] = 0.0
    for a in range(sites.shape[0] - 1, -1, -1):
        _horner(sites[a], z[2], z[3], row_r, row_i)
        for i in range(n):
            r = acc_r[i] * z[0, i] - acc_i[i] * z[1, i] + row_r[i]
            acc_i[i] = acc_r[i] * z[1, i] + acc_i[i] * z[0, i] + row_i[i]
            acc_r[i] = r


@njit(cache=True)
def _directions(theta, phi, rx, ry, rz):
    for i in range(theta.shape[0]):
        st = np.sin(theta[i])
        rx[i] = st * np.cos(phi[i])
        ry[i] = st * np.sin(phi[i])
        rz[i] = np.cos(theta[i])


@njit(cache=True)
def _block_steps(k, theta, phi, origin, a1, a2, r, z):
    """Site steps (as _site_steps) toward the directions (theta[i], phi[i]) of a block; r
    is working space (3, n). The kernels allocate r and z themselves: the compiler then
    knows they overlap nothing else and vectorises the Horner loops."""
    _directions(theta, phi, r[0], r[1], r[2])
    _site_steps(k, r[0], r[1], r[2], origin, a1, a2, z)


@njit(cache=True, parallel=True)
def _lattice_factor(k, theta, phi, origin, a1, a2, phasors, row_phasors, col_phasors,
                    separable, out):
    m = theta.shape[0]
    for b in prange((m + _BLOCK - 1) // _BLOCK):
        i0 = b * _BLOCK
        i1 = min(m, i0 + _BLOCK)
        r = np.empty((3, i1 - i0))
        z = np.empty((6, i1 - i0))
        acc = np.empty((4, i1 - i0))
        _block_steps(k, theta[i0:i1], phi[i0:i1], origin, a1, a2, r, z)
        if separable:  # rows x columns
            _horner(row_phasors, z[0], z[1], acc[0], acc[1])
            _horner(col_phasors, z[2], z[3], acc[2], acc[3])
        else:
            _horner2(phasors, z, acc[0], acc[1], acc[2], acc[3])
            acc[2] = 1.0
            acc[3] = 0.0
        for i in range(i1 - i0):
            out[i0 + i] = (complex(acc[0, i], acc[1, i]) * complex(acc[2, i], acc[3, i])
                           * complex(z[4, i], z[5, i]))


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
    separable = isinstance(phasors, tuple)
    rows, cols = (phasors if separable else (np.ones(1), np.ones(1)))
    table = np.ones((1, 1)) if separable else phasors
    _lattice_factor(*args, *(np.ascontiguousarray(p, dtype=np.complex128)
                             for p in (table, rows, cols)), separable, out)
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


@njit(cache=True)
def _azimuth_steps(k, theta, cos_phi, sin_phi, i0, n, origin, a1, a2, r, z):
    """Steps toward the directions (theta, phi[i0:i0 + n])."""
    st = np.sin(theta)
    ct = np.cos(theta)
    for i in range(n):
        r[0, i] = st * cos_phi[i0 + i]
        r[1, i] = st * sin_phi[i0 + i]
        r[2, i] = ct
    _site_steps(k, r[0], r[1], r[2], origin, a1, a2, z)


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
        r = np.empty((3, _BLOCK))
        z = np.empty((6, _BLOCK))
        acc = np.empty((4, _BLOCK))
        for i0 in range(0, nphi, _BLOCK):
            n = min(nphi, i0 + _BLOCK) - i0
            _azimuth_steps(k, theta[it], cos_phi, sin_phi, i0, n, origin, a1, a2, r[:, :n],
                           z[:, :n])
            _horner2(sites, z[:, :n], acc[0, :n], acc[1, :n], acc[2, :n], acc[3, :n])
            for i in range(n):
                out[it, i0 + i] = complex(acc[0, i], acc[1, i]) * complex(z[4, i], z[5, i])


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
    nphi = phi.shape[0]
    for it in prange(theta.shape[0]):
        r = np.empty((3, _BLOCK))
        z = np.empty((6, _BLOCK))
        acc = np.empty((4, _BLOCK))
        for i0 in range(0, nphi, _BLOCK):
            n = min(nphi, i0 + _BLOCK) - i0
            _azimuth_steps(k, theta[it], cos_phi, sin_phi, i0, n, origin, a1, a2, r[:, :n],
                           z[:, :n])
            _horner(rows, z[0, :n], z[1, :n], acc[0, :n], acc[1, :n])
            _horner(cols, z[2, :n], z[3, :n], acc[2, :n], acc[3, :n])
            for i in range(n):
                out[it, i0 + i] = (column[it] * complex(acc[0, i], acc[1, i])
                                   * complex(acc[2, i], acc[3, i]) * complex(z[4, i], z[5, i]))


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
