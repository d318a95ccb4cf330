r"""Lobes on the sky: tangent-plane offsets, climbing to a lobe's peak, half-power widths,
connected lobe regions on a periodic sky grid.

Directions near a reference :math:`\hat r_0` are written as angular offsets (u, v) along
:math:`\hat\theta` and :math:`\hat\phi` through the exponential map, so an offset of
:math:`\sqrt{u^2 + v^2}` is a true angle on the sky.
"""

from __future__ import annotations

import numpy as np
from scipy import ndimage
from scipy.constants import c
from scipy.optimize import brentq, minimize

from thzarray.base.geometry import extent, unit_vectors

__all__ = ["angle_between", "climb", "half_width", "is_periodic", "label_lobes",
           "nearest_index", "resolution_angle", "tangent_directions", "to_db"]


def tangent_directions(theta0, phi0, u, v):
    """Directions at angular offsets (u, v) from r0 along theta-hat and phi-hat (rad).

    Exponential map: the direction lies at angle sqrt(u^2 + v^2) from r0, so offsets are true
    angles on the sky. Returns (theta, phi) arrays.
    """
    r0, t0, p0 = unit_vectors(theta0, phi0)
    u, v = np.atleast_1d(u), np.atleast_1d(v)
    rho = np.hypot(u, v)
    d = (np.cos(rho)[:, None] * r0
         + np.sinc(rho / np.pi)[:, None] * (u[:, None] * t0 + v[:, None] * p0))
    return np.arccos(np.clip(d[:, 2], -1.0, 1.0)), np.arctan2(d[:, 1], d[:, 0])


def angle_between(t1, p1, t2, p2) -> float:
    a, b = unit_vectors(t1, p1)[0], unit_vectors(t2, p2)[0]
    return float(np.arctan2(np.linalg.norm(np.cross(a, b)), a @ b))


def climb(fun, theta0, phi0, scale):
    """Local maximum of fun(theta, phi) reached from (theta0, phi0) (Nelder-Mead, tangent plane)."""
    values = fun(*tangent_directions(theta0, phi0, [0.0, scale, 0.0], [0.0, 0.0, scale]))
    ref = float(values.max())
    if ref <= 0:
        return theta0, phi0, 0.0
    res = minimize(lambda x: -fun(*tangent_directions(theta0, phi0, x[:1], x[1:]))[0] / ref,
                   np.zeros(2), method="Nelder-Mead",
                   options=dict(initial_simplex=[[0.0, 0.0], [scale, 0.0], [0.0, scale]],
                                xatol=1e-6 * scale, fatol=1e-14, maxiter=4000))
    if -res.fun * ref <= values[0] * (1 + 1e-12):  # the start is (on) the top: keep it
        return theta0, phi0, float(values[0])
    th, ph = tangent_directions(theta0, phi0, res.x[:1], res.x[1:])
    return float(th[0]), float(ph[0]), float(-res.fun * ref)


def resolution_angle(points, freq_max, medium):
    """lambda_min / (n_T * largest distance between points) (rad); inf for one point."""
    ext = extent(points)
    return np.inf if ext == 0 else c / (freq_max * medium.n_thz * ext)


def half_width(pattern, theta0, phi0, peak, step, along, sign):
    """Distance (rad) from the peak to the half-power point along ``sign`` * tangent ``along``."""
    def cut(t):
        t = sign * np.atleast_1d(t)
        return pattern(*tangent_directions(theta0, phi0, *((t, 0 * t) if along == "theta" else (0 * t, t))))

    t_prev = 0.0
    for block in range(64):
        t = step * (block * 256 + np.arange(1, 257))
        if t[0] > np.pi / 2:
            break
        below = np.flatnonzero(cut(t) < 0.5 * peak)
        if below.size:
            i = below[0]
            lo = t[i - 1] if i > 0 else t_prev
            return brentq(lambda x: cut(x)[0] - 0.5 * peak, lo, t[i], xtol=1e-6 * step)
        t_prev = t[-1]
    return np.nan


def is_periodic(phi):
    if phi.size < 3:
        return False
    d = np.diff(phi)
    return bool(np.allclose(d, d[0], rtol=1e-9) and np.isclose(phi[-1] + d[0] - phi[0],
                                                                2 * np.pi, rtol=1e-9))


def label_lobes(mask, wrap):
    lab, n = ndimage.label(mask, structure=np.ones((3, 3)))
    if wrap and n:
        parent = list(range(n + 1))

        def root(a):
            while parent[a] != a:
                a = parent[a]
            return a
        rows = mask.shape[0]
        for i in range(rows):
            for di in (-1, 0, 1):
                k = i + di
                if 0 <= k < rows and lab[i, -1] and lab[k, 0]:
                    ra, rb = root(lab[i, -1]), root(lab[k, 0])
                    if ra != rb:
                        parent[max(ra, rb)] = min(ra, rb)
        lab = np.array([root(a) for a in range(n + 1)])[lab]
    return lab


def nearest_index(theta_grid, phi_grid, theta, phi):
    i = int(np.argmin(np.abs(theta_grid - theta)))
    dphi = np.angle(np.exp(1j * (phi_grid - phi)))
    return i, int(np.argmin(np.abs(dphi)))


def to_db(x):
    return float(10 * np.log10(x)) if x > 0 else -np.inf
