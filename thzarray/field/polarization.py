r"""Polarization of a far field relative to a filament axis: the radial cone made visible.

For a direction :math:`\hat r` and a beam axis :math:`\hat a` (angle :math:`\psi` between them)
the local *radial* and *azimuthal* unit vectors in the plane transverse to :math:`\hat r` are

.. math:: \hat e_\rho = \frac{\cos\psi\,\hat r - \hat a}{\sin\psi},\qquad
          \hat e_\varphi = \frac{\hat a\times\hat r}{\sin\psi},

(for :math:`\hat a = \hat z` these are :math:`\hat\theta` and :math:`\hat\phi`). A single column
radiates along :math:`\hat a - \cos\psi\,\hat r = -\sin\psi\,\hat e_\rho`: purely radially.
The Stokes parameters in the (radial, azimuthal) basis follow the usual definitions
(M. Born and E. Wolf, Principles of Optics, sec. 1.4.2):
:math:`S_0 = |E_\rho|^2 + |E_\varphi|^2`, :math:`S_1 = |E_\rho|^2 - |E_\varphi|^2`,
:math:`S_2 = 2\,\mathrm{Re}(E_\rho E_\varphi^*)`, :math:`S_3 = 2\,\mathrm{Im}(E_\rho E_\varphi^*)`
(sign of :math:`S_3` for the :math:`e^{-i\omega t}` convention).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thzarray.base.checks import unit_vector
from thzarray.base.geometry import unit_vectors
from thzarray.field.farfield import FarField

__all__ = ["PolarizationMap", "polarization_map", "degree_of_radial_polarization"]


@dataclass(frozen=True, eq=False)
class PolarizationMap:
    """Local polarization of a far field.

    Attributes
    ----------
    radial, azimuthal : ndarray, shape (..., 3)
        Local unit vectors (NaN on the axis itself, where they are undefined).
    stokes : ndarray, shape (..., 4)
        S0..S3 in the (radial, azimuthal) basis ((V s)^2).
    orientation : ndarray
        Angle of the polarization ellipse's major axis from the radial direction (rad),
        in (-pi/2, pi/2]: 0 is radial, +-pi/2 azimuthal.
    degree_radial : ndarray
        ``|E_radial|^2 / |E|^2`` (0 to 1; NaN where the field or the basis vanishes).
    direction : ndarray, shape (..., 3)
        Unit vector along the major axis (the local polarization direction).
    """

    radial: np.ndarray
    azimuthal: np.ndarray
    stokes: np.ndarray
    orientation: np.ndarray
    degree_radial: np.ndarray
    direction: np.ndarray


def polarization_map(field: FarField, axis=(0.0, 0.0, 1.0)) -> PolarizationMap:
    """Local polarization direction and degree of radial polarization of a far field.

    Parameters
    ----------
    field : FarField
        Result of :func:`thzarray.far_field`.
    axis : 3-sequence of float
        Beam axis the radial direction refers to (normalised here).

    Returns
    -------
    PolarizationMap
        Arrays of the field's shape (vectors with a last axis of size 3).
    """
    a = unit_vector("axis", axis)
    r, _, _ = unit_vectors(field.theta, field.phi)
    r = np.broadcast_to(r, field.shape + (3,))
    cos_psi = r @ a
    sin_psi = np.linalg.norm(np.cross(a, r), axis=-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        on_axis = sin_psi < 1e-12
        safe = np.where(on_axis, np.nan, sin_psi)[..., None]
        e_rho = (cos_psi[..., None] * r - a) / safe
        e_az = np.cross(a, r) / safe
    vec = field.cartesian
    f_rho = np.einsum("...i,...i->...", vec, e_rho)
    f_az = np.einsum("...i,...i->...", vec, e_az)
    s0 = np.abs(f_rho) ** 2 + np.abs(f_az) ** 2
    s1 = np.abs(f_rho) ** 2 - np.abs(f_az) ** 2
    cross = f_rho * np.conj(f_az)
    stokes = np.stack([s0, s1, 2 * cross.real, 2 * cross.imag], axis=-1)
    orientation = 0.5 * np.arctan2(stokes[..., 2], stokes[..., 1])
    orientation = np.where(orientation <= -np.pi / 2, orientation + np.pi, orientation)
    with np.errstate(invalid="ignore", divide="ignore"):
        degree = np.where(s0 > 0, np.abs(f_rho) ** 2 / np.where(s0 > 0, s0, 1.0), np.nan)
    degree = np.where(on_axis, np.nan, degree)
    direction = (np.cos(orientation)[..., None] * e_rho + np.sin(orientation)[..., None] * e_az)
    return PolarizationMap(e_rho, e_az, stokes, orientation, degree, direction)


def degree_of_radial_polarization(field: FarField, weights=None, axis=(0.0, 0.0, 1.0)) -> float:
    """Energy-weighted degree of radial polarization over a grid, sum|E_rho|^2 / sum|E|^2.

    Parameters
    ----------
    field : FarField
    weights : array_like, optional
        Quadrature weights broadcastable to the field's shape (e.g. solid-angle elements);
        points on the axis are ignored.
    axis : 3-sequence of float
    """
    pm = polarization_map(field, axis)
    w = np.ones(field.shape) if weights is None else np.broadcast_to(weights, field.shape)
    s0 = pm.stokes[..., 0]
    rho = 0.5 * (s0 + pm.stokes[..., 1])
    keep = np.isfinite(pm.degree_radial)
    total = np.sum(np.where(keep, w * s0, 0.0))
    if total <= 0:
        raise ValueError("field = a field that vanishes off the axis; allowed: a field with "
                         "non-zero power away from the axis")
    return float(np.sum(np.where(keep, w * rho, 0.0)) / total)
