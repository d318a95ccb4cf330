r"""Where a receiver samples the field: planes, spheres and lines of points, and how far away
the far-field prediction becomes good enough.

Every surface is returned as a :class:`Surface`: the points (..., 3), their local unit axes
(two tangent axes and the normal; a line has one axis), the coordinate arrays the caller
passed, and trapezoid integration weights (area or length per point).

:func:`far_field_departure` compares, direction by direction, the band-integrated energy
that reaches a sphere of radius R about a centre, :math:`R^2|\mathbf E(R\hat r)|^2`, with the
far-field value :math:`|\mathbf F(\hat r)|^2` (both times :math:`2n_T\varepsilon_0 c`), as a
function of R. The quadratic phase across a column seen at polar angle theta is
:math:`k z^2\sin^2\theta/(2R)`, so near the cone the profile settles at a few column
lengths, much nearer than the aperture rule :math:`2L^2/\lambda` (C. A. Balanis, Antenna
Theory, field regions); the helper measures it with the exact line integral instead of
assuming either bound.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c, epsilon_0

from thzarray.air.medium import Medium
from thzarray.base.band import band_weights, trapezoid_weights
from thzarray.base.checks import (
    as_float_array,
    check_scalar,
    check_vector3,
    unit_vector,
)
from thzarray.base.geometry import unit_vectors
from thzarray.field.farfield import far_field
from thzarray.field.nearfield import field_at
from thzarray.source.filament import as_filaments
from thzarray.source.plasma import Plasma

__all__ = [
    "FarFieldDeparture",
    "Surface",
    "far_field_departure",
    "line_scan",
    "plane_scan",
    "sphere_scan",
]


@dataclass(frozen=True, eq=False)
class Surface:
    """Points where a field is sampled, with their local frame.

    Attributes
    ----------
    points : ndarray, shape (..., 3)
        Positions (m).
    axes : tuple of ndarray
        Local unit vectors, each broadcastable to ``points``: (u, v, normal) for planes and
        spheres (for a sphere (theta-hat, phi-hat, r-hat)), (direction,) for a line.
    coords : tuple of ndarray
        The coordinate arrays given by the caller, in the order of the point axes.
    weights : ndarray, shape ``points.shape[:-1]``
        Trapezoid area (m^2) or length (m) elements, for sums over the surface.
    """

    points: np.ndarray
    axes: tuple
    coords: tuple
    weights: np.ndarray

    @property
    def normal(self) -> np.ndarray:
        """The last local axis (the normal of a plane or sphere)."""
        return self.axes[-1]


def _coordinate(name, value, unit):
    arr = as_float_array(name, value, unit=unit)
    if arr.ndim != 1 or (arr.size > 1 and np.any(np.diff(arr) <= 0)):
        raise ValueError(f"{name} = array of shape {arr.shape}; allowed: a 1-D strictly "
                         "increasing array")
    return arr


def plane_scan(distance, x, y, normal=(0.0, 0.0, 1.0), origin=(0.0, 0.0, 0.0),
               x_axis=None) -> Surface:
    """A detector plane at ``distance`` from ``origin`` along ``normal``, sampled on a grid.

    Parameters
    ----------
    distance : float
        Distance (m) of the plane's centre from ``origin`` along ``normal``.
    x, y : array_like, 1-D increasing
        In-plane coordinates (m) along the plane's u and v axes.
    normal : 3-sequence of float
        Plane normal (normalised here).
    origin : 3-sequence of float
        Reference point (m).
    x_axis : 3-sequence of float, optional
        Direction whose in-plane projection is the u axis; default the global x axis (the
        global y axis when the normal is along x). v = normal x u.

    Returns
    -------
    Surface
        Points of shape (len(y), len(x), 3); axes (u, v, normal) of shape (3,).
    """
    d = check_scalar("distance", distance, unit="m")
    xs, ys = _coordinate("x", x, "m"), _coordinate("y", y, "m")
    n = unit_vector("normal", normal)
    o = check_vector3("origin", origin)
    if x_axis is None:
        x_axis = (1.0, 0.0, 0.0) if abs(n[0]) < 0.9 else (0.0, 1.0, 0.0)
    ref = unit_vector("x_axis", x_axis)
    u = ref - (ref @ n) * n
    if np.linalg.norm(u) < 1e-9:
        raise ValueError(f"x_axis = {tuple(ref.tolist())} is parallel to the normal; allowed: a "
                         "direction with a component in the plane")
    u /= np.linalg.norm(u)
    v = np.cross(n, u)
    centre = o + d * n
    pts = centre + xs[None, :, None] * u + ys[:, None, None] * v
    weights = trapezoid_weights(ys)[:, None] * trapezoid_weights(xs)[None, :]
    return Surface(pts, (u, v, n), (ys, xs), weights)


def sphere_scan(radius, theta, phi, center=(0.0, 0.0, 0.0)) -> Surface:
    """Points on a sphere of ``radius`` about ``center`` at polar angles and azimuths.

    Parameters
    ----------
    radius : float
        Radius (m), > 0.
    theta : array_like, 1-D increasing
        Polar angles from +z (rad), 0 to pi.
    phi : array_like, 1-D increasing
        Azimuths from +x (rad).
    center : 3-sequence of float
        Centre (m).

    Returns
    -------
    Surface
        Points of shape (len(theta), len(phi), 3); axes (theta-hat, phi-hat, r-hat) of the
        same shape; weights R^2 sin(theta) dtheta dphi (trapezoid, not periodic in phi).
    """
    r = check_scalar("radius", radius, low=0.0, low_open=True, unit="m")
    th = _coordinate("theta", theta, "rad")
    as_float_array("theta", th, low=0.0, high=np.pi, unit="rad")
    ph = _coordinate("phi", phi, "rad")
    ctr = check_vector3("center", center)
    rh, t, p = unit_vectors(th[:, None], ph[None, :])
    weights = r**2 * np.sin(th)[:, None] * trapezoid_weights(th)[:, None] * trapezoid_weights(ph)
    return Surface(ctr + r * rh, (t, p, rh), (th, ph), weights)


def line_scan(start, direction, s) -> Surface:
    """A line scan: points ``start + s * direction``.

    Parameters
    ----------
    start : 3-sequence of float
        First reference point (m).
    direction : 3-sequence of float
        Scan direction (normalised here).
    s : array_like, 1-D increasing
        Positions along the line (m).

    Returns
    -------
    Surface
        Points of shape (len(s), 3); axes (direction,); trapezoid length weights.
    """
    o = check_vector3("start", start)
    d = unit_vector("direction", direction)
    ss = _coordinate("s", s, "m")
    return Surface(o + ss[:, None] * d, (d,), (ss,), trapezoid_weights(ss))


@dataclass(frozen=True, eq=False)
class FarFieldDeparture:
    """How the finite-distance angular profile approaches the far-field one.

    Attributes
    ----------
    distance : ndarray, shape (D,)
        Sphere radii about ``center`` (m).
    theta, phi : ndarray
        Directions of the profile (rad), broadcast to shape (T,).
    near_profile : ndarray, shape (D, T)
        Band-integrated :math:`2n_T\\varepsilon_0 c R^2|E|^2` (J/sr, per unit current
        without a plasma).
    far_profile : ndarray, shape (T,)
        Band-integrated far-field energy density (J/sr).
    relative_difference : ndarray, shape (D,)
        max over directions of ``|near - far| / max(far)``.
    tolerance : float
    converged_distance : float
        Smallest sampled distance from which on every larger sampled distance is within
        ``tolerance`` (inf when none is).
    center : ndarray, shape (3,)
    """

    distance: np.ndarray
    theta: np.ndarray
    phi: np.ndarray
    near_profile: np.ndarray
    far_profile: np.ndarray
    relative_difference: np.ndarray
    tolerance: float
    converged_distance: float
    center: np.ndarray


def _centroid(fils):
    ends = np.array([p for f in fils for p in (np.asarray(f.start), f.end)])
    return ends.mean(axis=0)


def far_field_departure(filaments, freq, distance, theta, phi=0.0, medium: Medium | None = None,
                        plasma: Plasma | None = None, spectral_weight=None, center=None,
                        tolerance: float = 0.01) -> FarFieldDeparture:
    """Relative difference between the finite-distance and far-field angular profiles.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    freq : array_like, 1-D increasing
        Frequencies (Hz) sampling the band (one frequency: a spectral density).
    distance : array_like, 1-D increasing
        Radii (m) of the spheres about ``center``.
    theta, phi : array_like
        Directions of the profile (rad), broadcast to 1-D.
    medium, plasma : as for :func:`thzarray.far_field`.
    spectral_weight : array_like, optional
        Spectral weight on ``freq`` (e.g. a detector response).
    center : 3-sequence of float, optional
        Centre of the spheres (m); default the centroid of the columns' ends.
    tolerance : float
        Relative difference regarded as far field, > 0.

    Returns
    -------
    FarFieldDeparture

    Notes
    -----
    .. math:: \\Delta(R) = \\frac{\\max_{\\hat r}\\left|\\int w\\,R^2|\\mathbf E(\\mathbf c +
              R\\hat r)|^2 df - \\int w\\,|\\mathbf F(\\hat r)|^2 df\\right|}
              {\\max_{\\hat r}\\int w\\,|\\mathbf F(\\hat r)|^2 df}
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    wts = band_weights(freq, spectral_weight)
    f = np.asarray(freq, dtype=float).reshape(-1)
    dist = _coordinate("distance", distance, "m")
    as_float_array("distance", dist, low=0.0, low_open=True, unit="m")
    th, ph = np.broadcast_arrays(as_float_array("theta", theta, low=0.0, high=np.pi, unit="rad"),
                                 as_float_array("phi", phi, unit="rad"))
    th, ph = th.reshape(-1), ph.reshape(-1)
    tol = check_scalar("tolerance", tolerance, low=0.0, low_open=True)
    ctr = _centroid(fils) if center is None else check_vector3("center", center)
    scale = 2 * medium.n_thz * epsilon_0 * c
    ff = far_field(fils, f[:, None], th[None, :], ph[None, :], medium, plasma)
    far = scale * np.einsum("f,ft->t", wts, ff.magnitude_squared)
    rhat, _, _ = unit_vectors(th, ph)
    pts = ctr + dist[:, None, None] * rhat[None, :, :]
    e = field_at(fils, f[:, None, None], pts[None], medium, plasma)
    near = scale * np.einsum("f,fdt->dt", wts, np.sum(np.abs(e) ** 2, axis=-1)) * dist[:, None] ** 2
    rel = np.max(np.abs(near - far[None, :]), axis=1) / np.max(far)
    bad = np.flatnonzero(rel > tol)
    if bad.size == 0:
        converged = float(dist[0])
    elif bad[-1] + 1 < dist.size:
        converged = float(dist[bad[-1] + 1])
    else:
        converged = np.inf
    return FarFieldDeparture(dist, th, ph, near, far, rel, tol, converged, ctr)
