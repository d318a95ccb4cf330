"""Geometry shared by the fields and the arrays: spherical unit vectors, axis frames, extents.

Cartesian vectors sit on a last axis of size 3; angles are in radians; ``theta`` is the polar
angle from +z and ``phi`` the azimuth from +x.
"""

from __future__ import annotations

import numpy as np

__all__ = ["angles_of", "axis_frame", "extent", "unit_vectors"]


def unit_vectors(theta, phi):
    """Spherical unit vectors r-hat, theta-hat, phi-hat, each of shape (..., 3).

    Parameters
    ----------
    theta, phi : array_like
        Polar and azimuthal angles (rad), broadcast together.
    """
    theta, phi = np.broadcast_arrays(np.asarray(theta, float), np.asarray(phi, float))
    st, ct, sp, cp = np.sin(theta), np.cos(theta), np.sin(phi), np.cos(phi)
    r = np.stack([st * cp, st * sp, ct], axis=-1)
    t = np.stack([ct * cp, ct * sp, -st], axis=-1)
    p = np.stack([-sp, cp, np.zeros_like(sp)], axis=-1)
    return r, t, p


def angles_of(direction):
    """Polar and azimuthal angles (rad) of unit vectors ``direction`` (..., 3)."""
    d = np.asarray(direction, dtype=float)
    return np.arccos(np.clip(d[..., 2], -1.0, 1.0)), np.arctan2(d[..., 1], d[..., 0])


def axis_frame(axis):
    """Orthonormal frame (x', y', z') with z' along the unit vector ``axis``.

    x' is perpendicular to z' and to the global x axis (to the global y axis when z' is
    within about 25 degrees of x).
    """
    z = np.asarray(axis, float)
    helper = np.array([1.0, 0.0, 0.0]) if abs(z[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    x = np.cross(helper, z)
    x /= np.linalg.norm(x)
    return x, np.cross(z, x), z


def extent(points) -> float:
    """Largest distance between any two of ``points`` (K, 3) (m); 0 for one point.

    Computed in chunks of rows, so memory stays near 8 MiB for thousands of points.
    """
    pts = np.asarray(points, dtype=float).reshape(-1, 3)
    best = 0.0
    step = max(1, (1 << 20) // max(pts.shape[0], 1))
    for i0 in range(0, pts.shape[0], step):
        d = np.linalg.norm(pts[i0:i0 + step, None, :] - pts[None, :, :], axis=-1)
        best = max(best, float(d.max()))
    return best
