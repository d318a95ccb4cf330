r"""Far field of many columns by the non-uniform fast Fourier transform (finufft, type 3).

Column n (start :math:`\mathbf r_n`, unit axis :math:`\hat a`, delay :math:`t_n`, amplitude
:math:`q_n`, piecewise-cubic profile :math:`w_n` with knots :math:`s_{n,j}`) radiates, by
the radiation integral of :mod:`thzarray.field.farfield` and repeated integration by parts
of each cubic piece (the profile and its first three derivatives jump only at the knots),

.. math:: q_n e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)}\int_0^{L_n} w_n(s)e^{ius}ds
          = \sum_j \sum_{m=0}^{3} \frac{(-1)^m [w_n^{(m)}]_j}{(iu)^{m+1}}\,
            q_n e^{i(\omega \tau_{n,j} - k\hat r\cdot\mathbf x_{n,j})},
          \qquad u = \frac{\omega}{c}(n_g - n_T\hat r\cdot\hat a),

with the knot's position :math:`\mathbf x_{n,j} = \mathbf r_n + s_{n,j}\hat a` and the time
the pulse passes it, :math:`\tau_{n,j} = t_n + s_{n,j} n_g / c`. For columns sharing the
axis, the current direction and the group index, :math:`u` and the polarization depend on
the direction only, so the whole sum is four point-source sums

.. math:: T_m(\omega, \hat r) = \sum_{n,j} q_n [w_n^{(m)}]_j e^{i\omega\tau_{n,j}}
          e^{-ik\hat r\cdot\mathbf x_{n,j}}

(one for a uniform column: its ends, with jumps -1 at the start and +1 at the end, give
:math:`(e^{iuL}-1)/(iu)`), each a type-3 non-uniform discrete Fourier transform from the
knots to the targets :math:`k\hat r`, evaluated by finufft in :math:`O((K + M)\log)` for K
knots and M directions instead of :math:`O(KM)` (Barnett, Magland and af Klinteberg, SIAM J.
Sci. Comput. 41, C479 (2019); Lee and Greengard, SIAM J. Sci. Comput. 26, 1091 (2005) for
type 3).

Accuracy: finufft's error on each target is at most about its ``eps`` times the sum of the
strengths' magnitudes; dividing by :math:`(iu)^{m+1}` magnifies it near phase matching
(:math:`u \to 0`, the removable singularity where the differences cancel). Each direction's
error bound :math:`\epsilon\sum_m S_m/|u|^{m+1}` (:math:`S_m` the sum of
:math:`|q_n [w_n^{(m)}]_j|`) is compared with ``rtol`` times the group's scale
:math:`\sum_n |q_n|\int|w_n|ds` (the largest value the sum can take); directions above it
are evaluated by the direct sum instead. Columns whose current varies along them
(a :class:`~thzarray.source.column_plasma.ColumnPlasma` with a profile) always take the
direct sum.
"""

from __future__ import annotations

import finufft
import numpy as np
from scipy.constants import c

from thzarray.air.medium import Medium
from thzarray.base.checks import check_scalar
from thzarray.base.geometry import unit_vectors
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET, check_result_fits, chunk_points
from thzarray.field._profile_kernels import knot_jumps
from thzarray.field.farfield import (
    FarField,
    check_directions,
    far_field,
    radiation_prefactor,
    spectral_groups,
)
from thzarray.source.filament import as_filaments

__all__ = ["DEFAULT_RTOL", "axis_groups", "nufft_far_field", "point_sums"]

DEFAULT_RTOL = 1e-9
# finufft's requested precision is this fraction of rtol (its error estimate is not a bound).
_EPS_FRACTION = 0.1
# finufft's requests below this do not gain accuracy in double precision.
_EPS_FLOOR = 1e-14
# Temporary bytes per target point (targets, strengths' sums, u, polarization, masks).
_TEMP_BYTES_PER_POINT = 256


def axis_groups(fils, medium: Medium) -> dict:
    """Columns sharing axis, current direction and group index (one u per direction).

    Returns a dict from ``(axis, current, group_index, uniform)`` to a list of columns;
    uniform and profiled columns are kept apart because a profile's short pieces widen the
    region left to the direct sum.
    """
    groups = {}
    for f in fils:
        key = (f.axis, f.current, f.group_index_in(medium), f.is_uniform)
        groups.setdefault(key, []).append(f)
    return groups


def _knots(members, n_g):
    """Knot positions (K, 3), times (K,) and strengths q [w^(m)] (4, K) of a group."""
    pos, times, strengths = [], [], []
    for f in members:
        p = f.pieces
        s = p.breaks
        axis = np.asarray(f.axis)
        pos.append(np.asarray(f.start)[None, :] + s[:, None] * axis[None, :])
        times.append(f.delay + s * n_g / c)
        strengths.append(f.amplitude * knot_jumps(p.breaks, p.coefs).T)
    jumps = np.concatenate(strengths, axis=1).astype(complex)
    keep = np.any(jumps != 0, axis=0)
    return np.concatenate(pos)[keep], np.concatenate(times)[keep], jumps[:, keep]


def _scale(members):
    """Largest value of the group's column integrals: sum_n |q_n| int |w_n| ds (m)."""
    total = 0.0
    x = np.polynomial.legendre.leggauss(8)
    for f in members:
        if f.is_uniform:
            total += abs(f.amplitude) * f.length
            continue
        p = f.pieces
        h = np.diff(p.breaks)
        t = 0.5 * h[:, None] * (x[0][None, :] + 1.0)
        vals = sum(p.coefs[:, m, None] * t**m for m in range(4))
        total += abs(f.amplitude) * np.sum(np.abs(vals) * 0.5 * h[:, None] * x[1][None, :])
    return total


def _group_integrals(members, n_g, axis, freq, r, medium, eps, rtol):
    """Sum of the column integrals q e^{i(w t - k r.r_n)} int w e^{ius} ds of one axis group
    at points (freq (M,), r (M, 3)), and the mask of points left to the direct sum."""
    x, tau, strength = _knots(members, n_g)
    orders = int(np.flatnonzero(np.any(strength != 0, axis=1)).max()) + 1
    strength = strength[:orders]
    size_m = np.abs(strength).sum(axis=1)
    scale = _scale(members)
    w = 2 * np.pi * freq
    u = w / c * (n_g - medium.n_thz * (r @ np.asarray(axis)))
    au = np.abs(u)
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        bound = eps * sum(size_m[m] / au ** (m + 1) for m in range(orders))
    direct = ~(bound <= rtol * scale)
    out = np.zeros(freq.shape, dtype=complex)
    todo = np.flatnonzero(~direct)
    if todo.size == 0:
        return out, direct
    values, inverse = np.unique(freq[todo], return_inverse=True)
    inverse = inverse.ravel()
    order = np.argsort(inverse, kind="stable")
    bounds = np.searchsorted(inverse[order], np.arange(values.size + 1))
    xs, ys, zs = (np.ascontiguousarray(x[:, i]) for i in range(3))
    for j, fj in enumerate(values):
        idx = todo[order[bounds[j]:bounds[j + 1]]]
        wj = 2 * np.pi * fj
        kj = wj * medium.n_thz / c
        cstr = np.ascontiguousarray(strength * np.exp(1j * wj * tau)[None, :])
        targets = [np.ascontiguousarray(-kj * r[idx, i]) for i in range(3)]
        sums = finufft.nufft3d3(xs, ys, zs, cstr if orders > 1 else cstr[0], *targets,
                                eps=eps, isign=1)
        sums = sums.reshape(orders, -1)
        inv_iu = 1.0 / (1j * u[idx])
        acc = np.zeros(idx.size, dtype=complex)
        for m in range(orders - 1, -1, -1):
            acc = (sums[m] - acc) * inv_iu
        out[idx] = acc
    return out, direct


def point_sums(freq, r, positions, delays, strengths, n_thz, rtol=DEFAULT_RTOL):
    r"""Sums of point sources :math:`\sum_j q_j e^{i(\omega t_j - k\hat r\cdot\mathbf x_j)}`
    by one type-3 non-uniform FFT per distinct frequency.

    Parameters
    ----------
    freq : ndarray, shape (M,)
        Frequency of each target (Hz).
    r : ndarray, shape (M, 3)
        Unit direction of each target.
    positions : ndarray, shape (K, 3)
        Source points (m).
    delays : ndarray, shape (K,)
        Source times (s).
    strengths : ndarray, shape (K,)
        Real or complex source factors.
    n_thz : float
        Phase index (k = n_thz w / c).
    rtol : float
        Error relative to the sum of the strengths' magnitudes (finufft's precision is a
        tenth of it, at least 1e-14).

    Returns
    -------
    ndarray, complex, shape (M,)
    """
    eps = max(_EPS_FLOOR, _EPS_FRACTION * rtol)
    out = np.empty(freq.shape[0], dtype=complex)
    values, inverse = np.unique(freq, return_inverse=True)
    inverse = inverse.ravel()
    order = np.argsort(inverse, kind="stable")
    bounds = np.searchsorted(inverse[order], np.arange(values.size + 1))
    xs, ys, zs = (np.ascontiguousarray(positions[:, i], dtype=float) for i in range(3))
    for j, fj in enumerate(values):
        idx = order[bounds[j]:bounds[j + 1]]
        wj = 2 * np.pi * fj
        kj = wj * n_thz / c
        cstr = np.ascontiguousarray(strengths * np.exp(1j * wj * delays), dtype=complex)
        targets = [np.ascontiguousarray(-kj * r[idx, i]) for i in range(3)]
        out[idx] = finufft.nufft3d3(xs, ys, zs, cstr, *targets, eps=eps, isign=1)
    return out


def nufft_far_field(filaments, freq, theta, phi, medium: Medium | None = None, plasma=None, *,
                    rtol: float = DEFAULT_RTOL,
                    memory_budget: float = DEFAULT_MEMORY_BUDGET) -> FarField:
    r"""Far field of filaments by non-uniform FFTs of their knots (module docstring).

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    freq, theta, phi : array_like
        Frequency (Hz), polar angle (rad) and azimuth (rad), broadcast together as for
        :func:`thzarray.field.farfield.far_field`.
    medium : Medium, optional
        Defaults to vacuum.
    plasma : Plasma or ColumnPlasma, optional
        As for :func:`~thzarray.field.farfield.far_field`.
    rtol : float
        Accuracy relative to the largest value each group of columns can reach (the sum of
        its columns' :math:`|q|\int|w|ds`), from 1e-13 to 1e-2. Sets finufft's precision to
        a tenth of it and sends the directions near phase matching, where the bound would
        be exceeded, to the direct sum.
    memory_budget : float
        Bytes this call may use (default 2 GiB); the result alone must fit.

    Returns
    -------
    FarField
        Equal to :func:`~thzarray.field.farfield.far_field` within ``rtol`` of each group's
        scale.
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    rtol = check_scalar("rtol", rtol, low=1e-13, high=1e-2)
    freq, theta, phi, shape = check_directions(freq, theta, phi)
    size = int(np.prod(shape))
    result_bytes = 64 * size
    check_result_fits("nufft_far_field", result_bytes, memory_budget)
    chunk = chunk_points(memory_budget, result_bytes, _TEMP_BYTES_PER_POINT)
    eps = max(_EPS_FLOOR, _EPS_FRACTION * rtol)
    groups, varying, _ = spectral_groups(fils, medium, plasma)
    bf, bt, bp = (np.broadcast_to(x, shape).reshape(-1) for x in (freq, theta, phi))
    e_t = np.zeros(size, dtype=complex)
    e_p = np.zeros(size, dtype=complex)
    for i0 in range(0, size, chunk):
        sl = slice(i0, min(size, i0 + chunk))
        f_c, t_c, p_c = bf[sl], bt[sl], bp[sl]
        r, th_hat, ph_hat = unit_vectors(t_c, p_c)
        for (local, ng_key), members in groups.items():
            pref = radiation_prefactor(f_c, medium, local, ng_key)
            for (axis, current, n_g, _), sub in axis_groups(members, medium).items():
                integral, direct = _group_integrals(sub, n_g, axis, f_c, r, medium, eps, rtol)
                d = np.asarray(current)
                term = pref * integral
                e_t[sl] += term * (th_hat @ d)
                e_p[sl] += term * (ph_hat @ d)
                if direct.any():
                    ff = far_field(sub, f_c[direct], t_c[direct], p_c[direct], medium, plasma)
                    e_t[sl][direct] += ff.e_theta
                    e_p[sl][direct] += ff.e_phi
        if varying:
            ff = far_field(varying, f_c, t_c, p_c, medium, plasma)
            e_t[sl] += ff.e_theta
            e_p[sl] += ff.e_phi
    return FarField(freq, theta, phi, e_t.reshape(shape), e_p.reshape(shape), medium)
