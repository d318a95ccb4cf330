"""Compiled loops behind the far-field code, each with a plain numpy twin.

Private module: the public wrappers in :mod:`thzarray.farfield` validate, allocate and
choose the path. The twins (``*_numpy``) compute the same formulas with array operations;
the tests compare the two.

Radiation integral of uniform columns
-------------------------------------
For direction r = (sin t cos p, sin t sin p, cos t) and angular frequency w, column n with
start r_n, unit axis a_n, unit current direction d_n (a_n for the single-colour column),
length L_n, delay t_n, amplitude q_n and group index n_{g,n} contributes

.. math:: q_n L_n \\operatorname{sinc}(u_n L_n/2)\\,
          e^{i(u_n L_n/2 + w t_n - k_T\\, r\\cdot r_n)}\\;(d_n\\cdot\\hat\\theta,\\ d_n\\cdot\\hat\\phi),
          \\qquad u_n = k_{g,n} - k_T\\, r\\cdot a_n,

with k_{g,n} = w n_{g,n} / c and k_T = w n_T / c. The kernels return these sums over n;
the caller multiplies by the frequency-only factor i w mu0 I(w) / (4 pi).
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange
from scipy.constants import c as _C

from thzarray.base.trig import cis

__all__ = [
    "uniform_sum",
    "uniform_sum_numpy",
    "uniform_grid",
    "uniform_grid_numpy",
]

@njit(cache=True, inline="always")
def _block_directions(theta, phi, i0, nph, rx, ry, rz, tx, ty, tz, sp, cp):
    """r-hat (rx, ry, rz), theta-hat (tx, ty, tz), sin phi and cos phi of direction i0 + i:
    the point (theta[i0 + i], phi[i0 + i]) when nph == 0, else point i0 + i of the outer
    grid theta x phi (nph azimuths, phi fastest)."""
    for i in range(rx.shape[0]):
        if nph == 0:
            t = theta[i0 + i]
            p = phi[i0 + i]
        else:
            it = (i0 + i) // nph
            t = theta[it]
            p = phi[i0 + i - it * nph]
        st = np.sin(t)
        ct = np.cos(t)
        sp[i] = np.sin(p)
        cp[i] = np.cos(p)
        rx[i] = st * cp[i]
        ry[i] = st * sp[i]
        rz[i] = ct
        tx[i] = ct * cp[i]
        ty[i] = ct * sp[i]
        tz[i] = -st


# Directions per block of the pointwise sum: each thread takes a block, keeps its geometry in
# short arrays and runs the columns over it in an inner loop the compiler vectorises.
_BLOCK = 256


@njit(cache=True, parallel=True, error_model="numpy")
def _uniform_sum(freq, theta, phi, length, sx, sy, sz, ax, ay, az, dx, dy, dz, delay,
                 amplitude, n_group, n_thz, out_t, out_p):
    m = freq.shape[0]
    nf = length.shape[0]
    two_pi_over_c = 2.0 * np.pi / _C
    for b in prange((m + _BLOCK - 1) // _BLOCK):
        i0 = b * _BLOCK
        k = min(m, i0 + _BLOCK) - i0
        # Allocated here, not in a helper: the compiler then knows these arrays overlap
        # nothing else, which it needs to vectorise the loops below (measured 3x slower
        # otherwise).
        rx = np.empty(k)
        ry = np.empty(k)
        rz = np.empty(k)
        tx = np.empty(k)
        ty = np.empty(k)
        tz = np.empty(k)
        sp = np.empty(k)
        cp = np.empty(k)
        _block_directions(theta, phi, i0, 0, rx, ry, rz, tx, ty, tz, sp, cp)
        acc_tr = np.zeros(k)
        acc_ti = np.zeros(k)
        acc_pr = np.zeros(k)
        acc_pi = np.zeros(k)
        wc = np.empty(k)
        for i in range(k):
            wc[i] = two_pi_over_c * freq[i0 + i]
        for n in range(nf):
            axn, ayn, azn = ax[n], ay[n], az[n]
            sxn, syn, szn = sx[n], sy[n], sz[n]
            dxn, dyn, dzn = dx[n], dy[n], dz[n]
            ng = n_group[n]
            ln = length[n]
            q = amplitude[n] * ln
            td = _C * delay[n]  # w t = wc (c t)
            for i in range(k):  # vectorised: arithmetic only
                kt = wc[i] * n_thz
                half = 0.5 * (wc[i] * ng - kt * (rx[i] * axn + ry[i] * ayn + rz[i] * azn)) * ln
                phase = half + wc[i] * td - kt * (rx[i] * sxn + ry[i] * syn + rz[i] * szn)
                small = abs(half) < 1e-6
                den = 1.0 if small else half
                sin_half = cis(half)[1]
                amp = q * ((1.0 - half * half / 6.0) if small else sin_half / den)
                cph, sph = cis(phase)
                zr = amp * cph
                zi = amp * sph
                at = dxn * tx[i] + dyn * ty[i] + dzn * tz[i]
                ap = dyn * cp[i] - dxn * sp[i]
                acc_tr[i] += zr * at
                acc_ti[i] += zi * at
                acc_pr[i] += zr * ap
                acc_pi[i] += zi * ap
        for i in range(k):
            out_t[i0 + i] = complex(acc_tr[i], acc_ti[i])
            out_p[i0 + i] = complex(acc_pr[i], acc_pi[i])


def uniform_sum(freq, theta, phi, length, start, axis, current, delay, amplitude, n_group,
                n_thz):
    """Compiled radiation-integral sums (theta, phi components) for uniform columns.

    Parameters
    ----------
    freq, theta, phi : ndarray, shape (M,)
        Frequency (Hz), polar and azimuthal angle (rad) of each evaluation point.
    length, delay, amplitude, n_group : ndarray, shape (N,)
        Column lengths (m), delays (s), amplitudes and group indices.
    start, axis, current : ndarray, shape (N, 3)
        Start points (m), unit axes and unit current directions.
    n_thz : float
        THz phase index of the medium.

    Returns
    -------
    (ndarray, ndarray), complex, shape (M,)
        Sums for the theta-hat and phi-hat components (m).

    Notes
    -----
    Each thread takes 256 directions at a time and runs every column over them in an inner
    loop of plain arithmetic (:func:`thzarray.base.trig.cis` for the two sine-cosine
    pairs), which the compiler vectorises.
    """
    out_t = np.empty(freq.shape[0], dtype=np.complex128)
    out_p = np.empty(freq.shape[0], dtype=np.complex128)
    cols = [np.ascontiguousarray(v, dtype=float) for v in (*start.T, *axis.T, *current.T)]
    _uniform_sum(freq, theta, phi, length, *cols, delay, amplitude,
                 _per_column(n_group, length), float(n_thz), out_t, out_p)
    return out_t, out_p


def _per_column(n_group, length):
    """Group indices as a contiguous float array of one value per column."""
    return np.ascontiguousarray(np.broadcast_to(np.asarray(n_group, dtype=float), length.shape))


def uniform_sum_numpy(freq, theta, phi, length, start, axis, current, delay, amplitude, n_group,
                      n_thz):
    """Numpy twin of :func:`uniform_sum` (same arguments and returns)."""
    w = 2 * np.pi * freq
    n_group = _per_column(n_group, length)
    kt = w * n_thz / _C
    st, ct, sp, cp = np.sin(theta), np.cos(theta), np.sin(phi), np.cos(phi)
    r = np.stack([st * cp, st * sp, ct], axis=-1)
    th = np.stack([ct * cp, ct * sp, -st], axis=-1)
    ph = np.stack([-sp, cp, np.zeros_like(sp)], axis=-1)
    out_t = np.zeros(freq.shape, dtype=complex)
    out_p = np.zeros(freq.shape, dtype=complex)
    for n in range(length.shape[0]):
        kg = w * n_group[n] / _C
        half = 0.5 * (kg - kt * (r @ axis[n])) * length[n]
        term = (amplitude[n] * length[n] * np.sinc(half / np.pi)
                * np.exp(1j * (half + w * delay[n] - kt * (r @ start[n]))))
        out_t += term * (th @ current[n])
        out_p += term * (ph @ current[n])
    return out_t, out_p


_RESEED = 32  # recurrence steps between exact re-evaluations of the exponentials


@njit(cache=True, parallel=True, error_model="numpy")
def _uniform_grid(freq, theta, phi, length, sx, sy, sz, ax, ay, az, dx, dy, dz, delay,
                  amplitude, n_group, n_thz, scale, equal_steps, block, out_t, out_p):
    nf = freq.shape[0]
    nph = phi.shape[0]
    m = theta.shape[0] * nph
    nfil = length.shape[0]
    two_pi_over_c = 2.0 * np.pi / _C
    df = freq[1] - freq[0] if nf > 1 else 0.0
    for b in prange((m + block - 1) // block):
        i0 = b * block
        k = min(m, i0 + block) - i0
        rx = np.empty(k)
        ry = np.empty(k)
        rz = np.empty(k)
        tx = np.empty(k)
        ty = np.empty(k)
        tz = np.empty(k)
        sp = np.empty(k)
        cp = np.empty(k)
        _block_directions(theta, phi, i0, nph, rx, ry, rz, tx, ty, tz, sp, cp)
        acc_tr = np.zeros((nf, k))
        acc_ti = np.zeros((nf, k))
        acc_pr = np.zeros((nf, k))
        acc_pi = np.zeros((nf, k))
        a_half = np.empty(k)  # phases per hertz: half = f a_half, full phase = f a_all
        a_all = np.empty(k)
        at = np.empty(k)
        ap = np.empty(k)
        z1r = np.empty(k)  # exp(i half), exp(i phase) and their steps
        z1i = np.empty(k)
        z3r = np.empty(k)
        z3i = np.empty(k)
        s1r = np.ones(k)
        s1i = np.zeros(k)
        s3r = np.ones(k)
        s3i = np.zeros(k)
        for n in range(nfil):
            ng = n_group[n]
            ln = length[n]
            amp0 = amplitude[n] * ln
            for i in range(k):
                cos_psi = rx[i] * ax[n] + ry[i] * ay[n] + rz[i] * az[n]
                r_dot = rx[i] * sx[n] + ry[i] * sy[n] + rz[i] * sz[n]
                a_half[i] = 0.5 * two_pi_over_c * (ng - n_thz * cos_psi) * ln
                a_all[i] = a_half[i] + 2.0 * np.pi * delay[n] - two_pi_over_c * n_thz * r_dot
                at[i] = dx[n] * tx[i] + dy[n] * ty[i] + dz[n] * tz[i]
                ap[i] = dy[n] * cp[i] - dx[n] * sp[i]
            if equal_steps:  # the steps serve only the recurrence (unit steps otherwise)
                for i in range(k):
                    s1r[i], s1i[i] = cis(a_half[i] * df)
                    s3r[i], s3i[i] = cis(a_all[i] * df)
            for kk in range(nf):
                fk = freq[kk]
                if not equal_steps or kk % _RESEED == 0:
                    for i in range(k):
                        z1r[i], z1i[i] = cis(a_half[i] * fk)
                        z3r[i], z3i[i] = cis(a_all[i] * fk)
                for i in range(k):  # vectorised: arithmetic only
                    half = a_half[i] * fk
                    small = abs(half) < 1e-6
                    den = 1.0 if small else half
                    amp = amp0 * ((1.0 - half * half / 6.0) if small else z1i[i] / den)
                    zr = amp * z3r[i]
                    zi = amp * z3i[i]
                    acc_tr[kk, i] += zr * at[i]
                    acc_ti[kk, i] += zi * at[i]
                    acc_pr[kk, i] += zr * ap[i]
                    acc_pi[kk, i] += zi * ap[i]
                    # Advance both exponentials by one frequency step.
                    u = z1r[i] * s1r[i] - z1i[i] * s1i[i]
                    z1i[i] = z1r[i] * s1i[i] + z1i[i] * s1r[i]
                    z1r[i] = u
                    u = z3r[i] * s3r[i] - z3i[i] * s3i[i]
                    z3i[i] = z3r[i] * s3i[i] + z3i[i] * s3r[i]
                    z3r[i] = u
        for kk in range(nf):
            for i in range(k):
                out_t[kk, i0 + i] = complex(acc_tr[kk, i], acc_ti[kk, i]) * scale[kk]
                out_p[kk, i0 + i] = complex(acc_pr[kk, i], acc_pi[kk, i]) * scale[kk]


# Accumulators per thread of the grid kernel: frequencies x directions per block.
_GRID_CELLS = 1 << 16


def uniform_grid(freq, theta, phi, length, start, axis, current, delay, amplitude, n_group,
                 n_thz, scale=None):
    """Compiled sums like :func:`uniform_sum` on the outer grid freq x theta x phi.

    Parameters
    ----------
    freq, theta, phi : ndarray, shapes (F,), (T,), (P,)
        Frequencies (Hz) and angles (rad); the grid is their outer product.
    length, start, axis, current, delay, amplitude, n_group, n_thz : as for :func:`uniform_sum`.
    scale : ndarray, complex, shape (F,), optional
        Factor applied per frequency (e.g. the radiation prefactor); default 1.

    Returns
    -------
    (ndarray, ndarray), complex, shape (F, T, P)
        Sums for the theta-hat and phi-hat components (m) times ``scale``.

    Notes
    -----
    Each column's geometry is worked out once per direction. Every phase is linear in
    frequency, so for equally spaced frequencies the exponentials advance by one complex
    multiplication per step (re-evaluated exactly every 32 steps, which keeps the rounding
    near 1e-14 relative). Threads take blocks of directions (fewer when there are many
    frequencies, so that a block's accumulators stay near 2 MB) and the inner loop runs over
    a block's directions in plain arithmetic, which the compiler vectorises.
    """
    shape = (freq.shape[0], theta.shape[0], phi.shape[0])
    out_t = np.empty(shape, dtype=np.complex128)
    out_p = np.empty(shape, dtype=np.complex128)
    scale = np.ones(shape[0], complex) if scale is None else np.broadcast_to(
        np.asarray(scale, dtype=np.complex128), shape[:1]).copy()
    freq = np.ascontiguousarray(freq, dtype=float)
    steps = np.diff(freq)
    equal = bool(freq.size > 2 and np.all(np.abs(steps - steps[0]) <= 1e-13 * np.abs(freq).max()))
    cols = [np.ascontiguousarray(v, dtype=float) for v in (*start.T, *axis.T, *current.T)]
    block = int(min(256, max(8, _GRID_CELLS // max(1, shape[0]))))
    _uniform_grid(freq, np.ascontiguousarray(theta, dtype=float),
                  np.ascontiguousarray(phi, dtype=float), length, *cols, delay, amplitude,
                  _per_column(n_group, length), float(n_thz), scale, equal, block,
                  out_t.reshape(shape[0], -1), out_p.reshape(shape[0], -1))
    return out_t, out_p


def uniform_grid_numpy(freq, theta, phi, length, start, axis, current, delay, amplitude, n_group,
                       n_thz, scale=None):
    """Numpy twin of :func:`uniform_grid` (the pointwise twin on the broadcast grid)."""
    f, t, p = np.meshgrid(freq, theta, phi, indexing="ij")
    out_t, out_p = uniform_sum_numpy(f.ravel(), t.ravel(), p.ravel(), length, start, axis,
                                     current, delay, amplitude, n_group, n_thz)
    scale = 1.0 if scale is None else np.asarray(scale)[:, None, None]
    return out_t.reshape(f.shape) * scale, out_p.reshape(f.shape) * scale
