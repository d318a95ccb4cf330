r"""Compiled Fourier transform of a column's piecewise-cubic profile, with a numpy twin.

Private module: :mod:`thzarray.field.farfield` and :mod:`thzarray.field.nufft` call it; the
tests compare the kernels with the twin and with a 60-digit sum.

For :math:`w(s)` made of cubics on pieces :math:`[s_j, s_{j+1}]`, the integral
:math:`\int w(s) e^{ius} ds` is, where :math:`|u| h \ge 1` for every piece, a sum over the
knots of the jumps of :math:`w` and its first three derivatives divided by powers of
:math:`iu` (repeated integration by parts); elsewhere each piece is integrated from the
moments :math:`E_m(\phi) = \int_0^1 \tau^m e^{i\phi\tau} d\tau` (power series for
:math:`|\phi| < 1`, recurrence otherwise).

On evenly spaced knots (every sampled and two-colour profile) the phase
:math:`e^{ius_j}` advances by one complex multiplication per knot, re-evaluated exactly
every 32 knots, and the directions are taken in blocks of 64 with the knots in the outer
loop: the inner loop over a block is plain arithmetic (:func:`thzarray.base.trig.cis`),
which the compiler vectorises.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from thzarray.base.trig import cis

__all__ = ["cubic_transform", "cubic_transform_numpy", "knot_jumps"]

_SERIES_TERMS = 24
_BLOCK = 64  # directions per block of the evenly spaced kernel


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
def _cubic_transform(u, breaks, coefs, jumps, hmin, out):
    npieces = coefs.shape[0]
    for i in prange(u.shape[0]):
        ui = u[i]
        acc = 0.0j
        if abs(ui) * hmin >= 1.0:
            # Integration by parts over the whole column: only the knots' jumps remain.
            inv = 1.0 / (1j * ui)
            for j in range(npieces + 1):
                ph = ui * breaks[j]
                term = inv * (jumps[j, 0] - inv * (jumps[j, 1] - inv * (
                    jumps[j, 2] - inv * jumps[j, 3])))
                acc += term * (np.cos(ph) + 1j * np.sin(ph))
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


@njit(cache=True, parallel=True)
def _cubic_transform_even(u, breaks, coefs, jumps, hmin, out):
    npieces = coefs.shape[0]
    h0 = (breaks[npieces] - breaks[0]) / npieces
    m = u.shape[0]
    for b in prange((m + _BLOCK - 1) // _BLOCK):
        i0 = b * _BLOCK
        k = min(m, i0 + _BLOCK) - i0
        # Per direction: weights of the knots' jumps (a, where |u| h >= 1) or of the pieces'
        # coefficients (w, elsewhere), the phase step and the running phase. Allocated here
        # so that the compiler vectorises the loop over the block.
        a = np.zeros((8, k))
        w = np.zeros((8, k))
        sr = np.empty(k)
        si = np.empty(k)
        cr = np.empty(k)
        ci = np.empty(k)
        acc_r = np.zeros(k)
        acc_i = np.zeros(k)
        e = np.empty(4, dtype=np.complex128)
        for i in range(k):
            ui = u[i0 + i]
            sr[i], si[i] = cis(ui * h0)
            if abs(ui) * hmin >= 1.0:
                inv = 1.0 / (1j * ui)
                weight = inv
                for mm in range(4):  # (-1)^m / (iu)^(m+1)
                    a[2 * mm, i] = weight.real
                    a[2 * mm + 1, i] = weight.imag
                    weight = -weight * inv
            else:
                _moments(ui * h0, e)
                scale = h0
                for mm in range(4):  # h^(m+1) E_m(u h)
                    w[2 * mm, i] = scale * e[mm].real
                    w[2 * mm + 1, i] = scale * e[mm].imag
                    scale *= h0
        for j in range(npieces + 1):
            if j % _KNOT_RESEED == 0:
                for i in range(k):
                    cr[i], ci[i] = cis(u[i0 + i] * breaks[j])
            jr0, ji0 = jumps[j, 0].real, jumps[j, 0].imag
            jr1, ji1 = jumps[j, 1].real, jumps[j, 1].imag
            jr2, ji2 = jumps[j, 2].real, jumps[j, 2].imag
            jr3, ji3 = jumps[j, 3].real, jumps[j, 3].imag
            if j < npieces:
                qr0, qi0 = coefs[j, 0].real, coefs[j, 0].imag
                qr1, qi1 = coefs[j, 1].real, coefs[j, 1].imag
                qr2, qi2 = coefs[j, 2].real, coefs[j, 2].imag
                qr3, qi3 = coefs[j, 3].real, coefs[j, 3].imag
            else:  # past the last piece only the end knot's jumps remain
                qr0 = qi0 = qr1 = qi1 = qr2 = qi2 = qr3 = qi3 = 0.0
            for i in range(k):  # vectorised: arithmetic only
                tr = (jr0 * a[0, i] - ji0 * a[1, i] + jr1 * a[2, i] - ji1 * a[3, i]
                      + jr2 * a[4, i] - ji2 * a[5, i] + jr3 * a[6, i] - ji3 * a[7, i]
                      + qr0 * w[0, i] - qi0 * w[1, i] + qr1 * w[2, i] - qi1 * w[3, i]
                      + qr2 * w[4, i] - qi2 * w[5, i] + qr3 * w[6, i] - qi3 * w[7, i])
                ti = (jr0 * a[1, i] + ji0 * a[0, i] + jr1 * a[3, i] + ji1 * a[2, i]
                      + jr2 * a[5, i] + ji2 * a[4, i] + jr3 * a[7, i] + ji3 * a[6, i]
                      + qr0 * w[1, i] + qi0 * w[0, i] + qr1 * w[3, i] + qi1 * w[2, i]
                      + qr2 * w[5, i] + qi2 * w[4, i] + qr3 * w[7, i] + qi3 * w[6, i])
                acc_r[i] += tr * cr[i] - ti * ci[i]
                acc_i[i] += tr * ci[i] + ti * cr[i]
                nr = cr[i] * sr[i] - ci[i] * si[i]
                ci[i] = cr[i] * si[i] + ci[i] * sr[i]
                cr[i] = nr
        for i in range(k):
            out[i0 + i] = complex(acc_r[i], acc_i[i])



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
    u = np.ascontiguousarray(u, dtype=float)
    jumps = knot_jumps(breaks, coefs)
    hmin = float(np.diff(breaks).min())  # the narrowest piece decides the jumps-only sum
    if _evenly_spaced(breaks):
        _cubic_transform_even(u, breaks, coefs, jumps, hmin, out)
    else:
        _cubic_transform(u, breaks, coefs, jumps, hmin, out)
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
