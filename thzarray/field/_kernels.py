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

__all__ = [
    "uniform_sum",
    "uniform_sum_numpy",
    "uniform_grid",
    "uniform_grid_numpy",
    "cubic_transform",
    "cubic_transform_numpy",
    "knot_jumps",
]

_SERIES_TERMS = 24


@njit(cache=True, parallel=True, error_model="numpy")
def _uniform_sum(freq, theta, phi, length, start, axis, current, delay, amplitude, n_group,
                 n_thz, out_t, out_p):
    m = freq.shape[0]
    nf = length.shape[0]
    two_pi_over_c = 2.0 * np.pi / _C
    for i in prange(m):
        w = 2.0 * np.pi * freq[i]
        wc = two_pi_over_c * freq[i]
        kt = two_pi_over_c * freq[i] * n_thz
        st = np.sin(theta[i])
        ct = np.cos(theta[i])
        sp = np.sin(phi[i])
        cp = np.cos(phi[i])
        rx = st * cp
        ry = st * sp
        rz = ct
        tx = ct * cp
        ty = ct * sp
        tz = -st
        acc_tr = 0.0
        acc_ti = 0.0
        acc_pr = 0.0
        acc_pi = 0.0
        for n in range(nf):
            ax = axis[n, 0]
            ay = axis[n, 1]
            az = axis[n, 2]
            cos_psi = rx * ax + ry * ay + rz * az
            kg = wc * n_group[n]
            half = 0.5 * (kg - kt * cos_psi) * length[n]
            if abs(half) < 1e-6:
                sinc = 1.0 - half * half / 6.0
            else:
                sinc = np.sin(half) / half
            phase = half + w * delay[n] - kt * (rx * start[n, 0] + ry * start[n, 1]
                                                + rz * start[n, 2])
            amp = amplitude[n] * length[n] * sinc
            zr = amp * np.cos(phase)
            zi = amp * np.sin(phase)
            dx = current[n, 0]
            dy = current[n, 1]
            dz = current[n, 2]
            at = dx * tx + dy * ty + dz * tz
            ap = -dx * sp + dy * cp
            acc_tr += zr * at
            acc_ti += zi * at
            acc_pr += zr * ap
            acc_pi += zi * ap
        out_t[i] = complex(acc_tr, acc_ti)
        out_p[i] = complex(acc_pr, acc_pi)


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
    """
    out_t = np.empty(freq.shape[0], dtype=np.complex128)
    out_p = np.empty(freq.shape[0], dtype=np.complex128)
    _uniform_sum(freq, theta, phi, length, start, axis, current, delay, amplitude,
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
def _uniform_grid(freq, theta, phi, length, start, axis, current, delay, amplitude, n_group,
                  n_thz, scale, equal_steps, out_t, out_p):
    nf = freq.shape[0]
    nt = theta.shape[0]
    nph = phi.shape[0]
    nfil = length.shape[0]
    two_pi_over_c = 2.0 * np.pi / _C
    df = freq[1] - freq[0] if nf > 1 else 0.0
    inv_f = 1.0 / freq
    for idx in prange(nt * nph):
        it = idx // nph
        ip = idx - it * nph
        acc_t = np.zeros(nf, dtype=np.complex128)
        acc_p = np.zeros(nf, dtype=np.complex128)
        st = np.sin(theta[it])
        ct = np.cos(theta[it])
        sp = np.sin(phi[ip])
        cp = np.cos(phi[ip])
        rx = st * cp
        ry = st * sp
        rz = ct
        for n in range(nfil):
            ax = axis[n, 0]
            ay = axis[n, 1]
            az = axis[n, 2]
            cos_psi = rx * ax + ry * ay + rz * az
            r_dot = rx * start[n, 0] + ry * start[n, 1] + rz * start[n, 2]
            dx = current[n, 0]
            dy = current[n, 1]
            dz = current[n, 2]
            at = dx * (ct * cp) + dy * (ct * sp) + dz * (-st)
            ap = -dx * sp + dy * cp
            amp0 = amplitude[n] * length[n]
            # Every phase is linear in frequency: half = f * a_half, rest = f * a_rest.
            a_half = 0.5 * two_pi_over_c * (n_group[n] - n_thz * cos_psi) * length[n]
            a_rest = 2.0 * np.pi * delay[n] - two_pi_over_c * n_thz * r_dot
            inv_a = 1.0 / a_half if a_half != 0.0 else 0.0
            a_all = a_half + a_rest
            block = _RESEED if equal_steps else 1
            s1 = 1.0 + 0.0j
            s3 = 1.0 + 0.0j
            if equal_steps:  # the steps are used only by the recurrence
                s1 = complex(np.cos(a_half * df), np.sin(a_half * df))
                s3 = complex(np.cos(a_all * df), np.sin(a_all * df))
            for k0 in range(0, nf, block):
                h0 = a_half * freq[k0]
                p0 = h0 + a_rest * freq[k0]
                z1 = complex(np.cos(h0), np.sin(h0))   # exp(i half)
                z3 = complex(np.cos(p0), np.sin(p0))   # exp(i (half + rest)), the full phase
                for k in range(k0, min(k0 + block, nf)):
                    if k > k0:
                        z1 *= s1
                        z3 *= s3
                    half = a_half * freq[k]
                    if abs(half) < 1e-6:
                        sinc = 1.0 - half * half / 6.0
                    else:
                        sinc = z1.imag * inv_a * inv_f[k]
                    z = (amp0 * sinc) * z3
                    acc_t[k] += z * at
                    acc_p[k] += z * ap
        for k in range(nf):
            out_t[k, it, ip] = acc_t[k] * scale[k]
            out_p[k, it, ip] = acc_p[k] * scale[k]


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
    Trigonometry of the angles is done once per axis value and each column's geometry once
    per direction. Every phase is linear in frequency, so for equally spaced frequencies the
    exponentials advance by one complex multiplication per step (re-evaluated exactly every
    32 steps, which keeps the rounding near 1e-14 relative).
    """
    shape = (freq.shape[0], theta.shape[0], phi.shape[0])
    out_t = np.empty(shape, dtype=np.complex128)
    out_p = np.empty(shape, dtype=np.complex128)
    scale = np.ones(shape[0], complex) if scale is None else np.broadcast_to(
        np.asarray(scale, dtype=np.complex128), shape[:1]).copy()
    freq = np.ascontiguousarray(freq, dtype=float)
    steps = np.diff(freq)
    equal = bool(freq.size > 2 and np.all(np.abs(steps - steps[0]) <= 1e-13 * np.abs(freq).max()))
    _uniform_grid(freq, np.ascontiguousarray(theta, dtype=float),
                  np.ascontiguousarray(phi, dtype=float), length, start, axis, current, delay,
                  amplitude, _per_column(n_group, length), float(n_thz), scale, equal, out_t,
                  out_p)
    return out_t, out_p


def uniform_grid_numpy(freq, theta, phi, length, start, axis, current, delay, amplitude, n_group,
                       n_thz, scale=None):
    """Numpy twin of :func:`uniform_grid` (the pointwise twin on the broadcast grid)."""
    f, t, p = np.meshgrid(freq, theta, phi, indexing="ij")
    out_t, out_p = uniform_sum_numpy(f.ravel(), t.ravel(), p.ravel(), length, start, axis,
                                     current, delay, amplitude, n_group, n_thz)
    scale = 1.0 if scale is None else np.asarray(scale)[:, None, None]
    return out_t.reshape(f.shape) * scale, out_p.reshape(f.shape) * scale


@njit(cache=True)
def _moments(phi, out):
    """E_m(phi) = int_0^1 tau^m exp(i phi tau) d tau for m = 0..3."""
    if abs(phi) < 1.0:
        for mm in range(4):
            term = 1.0 + 0.0j
            acc = 0.0j
            for k in range(_SERIES_TERMS):
                acc += term / (mm + k + 1)
                term *= 1j * phi / (k + 1)
            out[mm] = acc
    else:
        eip = np.cos(phi) + 1j * np.sin(phi)
        inv = 1.0 / (1j * phi)
        out[0] = (eip - 1.0) * inv
        for mm in range(1, 4):
            out[mm] = (eip - mm * out[mm - 1]) * inv


# Pieces between exact re-evaluations of exp(i u s_j) when the knots are evenly spaced and
# the phase is advanced by one complex multiplication per piece (rounding grows by about one
# ulp per step, so the drift stays near 32 ulp).
_KNOT_RESEED = 32


@njit(cache=True, parallel=True)
def _cubic_transform(u, breaks, coefs, jumps, uniform, out):
    npieces = coefs.shape[0]
    hmin = np.inf
    for j in range(npieces):
        hmin = min(hmin, breaks[j + 1] - breaks[j])
    h0 = (breaks[npieces] - breaks[0]) / npieces
    for i in prange(u.shape[0]):
        ui = u[i]
        acc = 0.0j
        if abs(ui) * hmin >= 1.0:
            # Integration by parts over the whole column: only the knots' jumps remain.
            inv = 1.0 / (1j * ui)
            step = np.cos(ui * h0) + 1j * np.sin(ui * h0)
            cur = 0.0j
            for j in range(npieces + 1):
                if not uniform or j % _KNOT_RESEED == 0:
                    ph = ui * breaks[j]
                    cur = np.cos(ph) + 1j * np.sin(ph)
                term = inv * (jumps[j, 0] - inv * (jumps[j, 1] - inv * (
                    jumps[j, 2] - inv * jumps[j, 3])))
                acc += term * cur
                cur *= step
        elif uniform:
            # Evenly spaced knots: the moments of every piece are the same, and the phase
            # advances by exp(i u h) from piece to piece.
            e = np.empty(4, dtype=np.complex128)
            _moments(ui * h0, e)
            w0, w1, w2, w3 = h0 * e[0], h0 ** 2 * e[1], h0 ** 3 * e[2], h0 ** 4 * e[3]
            step = np.cos(ui * h0) + 1j * np.sin(ui * h0)
            cur = 0.0j
            for j in range(npieces):
                if j % _KNOT_RESEED == 0:
                    ph = ui * breaks[j]
                    cur = np.cos(ph) + 1j * np.sin(ph)
                acc += (coefs[j, 0] * w0 + coefs[j, 1] * w1 + coefs[j, 2] * w2
                        + coefs[j, 3] * w3) * cur
                cur *= step
        else:
            e = np.empty(4, dtype=np.complex128)
            for j in range(npieces):
                h = breaks[j + 1] - breaks[j]
                _moments(ui * h, e)
                piece = (coefs[j, 0] * h * e[0] + coefs[j, 1] * h * h * e[1]
                         + coefs[j, 2] * h * h * h * e[2] + coefs[j, 3] * h * h * h * h * e[3])
                ph = ui * breaks[j]
                acc += piece * (np.cos(ph) + 1j * np.sin(ph))
        out[i] = acc


def _evenly_spaced(breaks) -> bool:
    """Whether every piece has the mean width to 1e-12 (a sampled profile on a linspace)."""
    h = np.diff(breaks)
    return bool(np.all(np.abs(h - h.mean()) <= 1e-12 * h.mean()))


def knot_jumps(breaks, coefs):
    """Jumps p^(m)(s_j-) - p^(m)(s_j+), m = 0..3, of a C1 piecewise cubic, shape (P + 1, 4).

    Interior jumps of the value and the slope are exactly zero (the interpolants are C1);
    outside the column the profile is zero. Complex coefficients give complex jumps.
    """
    h = np.diff(breaks)
    c0, c1, c2, c3 = coefs.T
    at_right_end = np.stack([c0 + h * (c1 + h * (c2 + h * c3)), c1 + h * (2 * c2 + 3 * h * c3),
                             2 * c2 + 6 * h * c3, 6 * c3], axis=1)
    at_left_end = np.stack([c0, c1, 2 * c2, 6 * c3], axis=1)
    jumps = np.zeros((breaks.size, 4), dtype=coefs.dtype)
    jumps[1:] += at_right_end
    jumps[:-1] -= at_left_end
    jumps[1:-1, :2] = 0.0
    return jumps


def cubic_transform(u, breaks, coefs):
    r"""Exact Fourier integral of a C1 piecewise cubic, int w(s) exp(i u s) ds (compiled).

    Parameters
    ----------
    u : ndarray, shape (M,)
        Spatial angular frequency (rad/m).
    breaks : ndarray, shape (P + 1,)
        Piece boundaries (m).
    coefs : ndarray, float or complex, shape (P, 4)
        Ascending-power coefficients of each piece in (s - breaks[j]); complex coefficients
        (a complex profile) are transformed as they are, by the complex specialisation of
        the same loop (the transform is linear in them).

    Returns
    -------
    ndarray, complex, shape (M,)
        The integral (m, times the unit of the coefficients). Where |u| h >= 1 for every
        piece, repeated integration by parts leaves only the jumps of the profile and its
        first three derivatives at the knots,

        .. math:: \int w\,e^{ius} ds = \sum_j e^{ius_j} \sum_{m=0}^{3}
                  \frac{(-1)^m [w^{(m)}]_j}{(iu)^{m+1}},

        with no cancellation between pieces; otherwise each piece is integrated with the
        power series of its moments (|u h| < 1) or their recurrence. Rounding stays near
        machine precision relative to the result.
    """
    out = np.empty(u.shape[0], dtype=np.complex128)
    _cubic_transform(np.ascontiguousarray(u, dtype=float), breaks, coefs,
                     knot_jumps(breaks, coefs), _evenly_spaced(breaks), out)
    return out


def cubic_transform_numpy(u, breaks, coefs, chunk=4096):
    """Numpy twin of :func:`cubic_transform` (same branches, array operations)."""
    out = np.empty(u.shape[0], dtype=complex)
    h = np.diff(breaks)
    far = np.abs(u) * h.min() >= 1.0
    jumps = knot_jumps(breaks, coefs)
    far_idx = np.flatnonzero(far)
    for i0 in range(0, far_idx.size, chunk):
        sel = far_idx[i0:i0 + chunk]
        inv = 1.0 / (1j * u[sel])[:, None]
        terms = inv * (jumps[:, 0] - inv * (jumps[:, 1] - inv * (jumps[:, 2]
                                                                - inv * jumps[:, 3])))
        out[sel] = (terms * np.exp(1j * u[sel, None] * breaks[None, :])).sum(axis=1)
    near_idx = np.flatnonzero(~far)
    k = np.arange(_SERIES_TERMS)
    fact = np.cumprod(np.concatenate([[1.0], np.arange(1, _SERIES_TERMS)]))
    for i0 in range(0, near_idx.size, chunk):
        sel = near_idx[i0:i0 + chunk]
        uu = u[sel, None]
        phi = uu * h[None, :]
        small = np.abs(phi) < 1.0
        moments = np.empty((4,) + phi.shape, dtype=complex)
        safe = np.where(small, 1.0, phi)
        eip = np.exp(1j * safe)
        moments[0] = (eip - 1) / (1j * safe)
        for m in range(1, 4):
            moments[m] = (eip - m * moments[m - 1]) / (1j * safe)
        if small.any():
            ps = phi[small]
            powers = (1j * ps[:, None]) ** k[None, :] / fact[None, :]
            for m in range(4):
                moments[m][small] = (powers / (m + k + 1)[None, :]).sum(axis=1)
        hp = h[None, :]
        piece = (coefs[:, 0] * hp * moments[0] + coefs[:, 1] * hp**2 * moments[1]
                 + coefs[:, 2] * hp**3 * moments[2] + coefs[:, 3] * hp**4 * moments[3])
        out[sel] = (piece * np.exp(1j * uu * breaks[None, :-1])).sum(axis=1)
    return out
