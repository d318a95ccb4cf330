r"""Receivers: what a detector placed in a field records.

Three models, all in the local plane-wave approximation (the energy flux per unit area and
frequency of a field whose wave arrives near the detector's normal is
:math:`2 n_T\varepsilon_0 c|\mathbf E_\perp|^2`, one-sided in frequency):

- :class:`NarrowbandReceiver` (a heterodyne or antenna-coupled receiver): one linear
  polarization :math:`\hat p`, a rectangular pass band :math:`f_0 \pm B/2`, and either an
  effective area A (field taken uniform over it),

  .. math:: W = A\int_{f_0-B/2}^{f_0+B/2} 2n_T\varepsilon_0 c\,|\hat p\cdot\mathbf E|^2 df,

  or a Gaussian acceptance beam of waist :math:`w_0` (1/e^2 intensity radius) in the scan
  plane, whose mode :math:`u = \sqrt{2/\pi}\,w_0^{-1}e^{-r^2/w_0^2}` (:math:`\int u^2 dA = 1`)
  couples the amplitude :math:`a = \int \hat p\cdot\mathbf E\,u\,dA` (mode overlap;
  P. F. Goldsmith, Quasioptical Systems, ch. 4), :math:`W = \int 2n_T\varepsilon_0 c|a|^2 df`.
  A plane wave at normal incidence then sees the effective area
  :math:`(\int u\,dA)^2 = 2\pi w_0^2`.
- :class:`BroadbandDetector` (bolometer, pyroelectric, Golay cell): polarization-blind,
  area A facing ``normal``, spectral response R(f) (read from a CSV file by
  :func:`thzarray.app.tables.read_response`),
  :math:`W = A\int R(f)\,2n_T\varepsilon_0 c\,|\mathbf E - (\hat n\cdot\mathbf E)\hat n|^2 df`.
- Polarization analysis on a surface (:func:`surface_polarization`), reusing
  :mod:`~thzarray.field.polarization`: Stokes parameters in the local (radial, azimuthal) basis
  about a beam axis and the degree of radial polarization.

A linearly polarized receiver scanned across a radially polarized cone records two lobes
along its polarization direction and nothing across it: :math:`|\hat x\cdot\mathbf E|^2 =
|E_\rho|^2\cos^2\varphi` for a field that is radial about the axis.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.constants import c, epsilon_0

from thzarray.air.medium import Medium
from thzarray.base.band import band_weights, passband_weights, trapezoid_weights
from thzarray.base.checks import (
    as_float_array,
    check_scalar,
    check_vector3,
    unit_vector,
)
from thzarray.base.geometry import angles_of
from thzarray.detect.noise import check_noise, signal_to_noise
from thzarray.field.farfield import FarField
from thzarray.field.polarization import (
    PolarizationMap,
    degree_of_radial_polarization,
    polarization_map,
)
from thzarray.field.surfaces import Surface

__all__ = [
    "BroadbandDetector",
    "NarrowbandReceiver",
    "detected_energy",
    "received_energy",
    "surface_degree_of_radial_polarization",
    "surface_polarization",
]


# Largest dimensionless response and absorbing area accepted: generous bounds against
# typing errors that keep every detected energy finite.
MAX_RESPONSE = 1e6
MAX_AREA = 1e6


def _unit(name, value):
    return tuple(unit_vector(name, value).tolist())


def _set_noise(obj):
    values = check_noise(obj.nep, obj.integration_time, obj.repetition_rate)
    for name, value in zip(("nep", "integration_time", "repetition_rate"), values):
        object.__setattr__(obj, name, value)


@dataclass(frozen=True)
class NarrowbandReceiver:
    """A linearly polarized receiver with a rectangular pass band.

    Parameters
    ----------
    center_freq : float
        Centre of the pass band (Hz), > 0.
    bandwidth : float
        Full width of the pass band (Hz), 0 < bandwidth < 2 center_freq.
    polarization : 3-sequence of float
        Direction of the receiver's linear polarization (normalised here).
    area : float, optional
        Effective area (m^2) for a receiver small against the field's variation.
    beam_waist : float, optional
        Waist w0 (m, 1/e^2 intensity radius) of a Gaussian acceptance beam in the scan
        plane. Give exactly one of ``area`` and ``beam_waist``.
    nep, integration_time, repetition_rate : float, optional
        Noise-equivalent power (W/sqrt(Hz)), averaging time (s) and the pulse repetition
        rate it records (Hz): all three or none; they give :meth:`signal_to_noise`
        (:mod:`thzarray.detect.noise`).
    """

    center_freq: float
    bandwidth: float
    polarization: tuple = (1.0, 0.0, 0.0)
    area: float | None = None
    beam_waist: float | None = None
    nep: float | None = None
    integration_time: float | None = None
    repetition_rate: float | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        f0 = check_scalar("center_freq", self.center_freq, low=0.0, low_open=True, unit="Hz")
        set_(self, "center_freq", f0)
        set_(self, "bandwidth", check_scalar("bandwidth", self.bandwidth, low=0.0, low_open=True,
                                             high=2 * f0, high_open=True, unit="Hz"))
        set_(self, "polarization", _unit("polarization", self.polarization))
        if (self.area is None) == (self.beam_waist is None):
            raise ValueError(f"area = {self.area!r}, beam_waist = {self.beam_waist!r}; allowed: "
                             "exactly one of them given")
        if self.area is not None:
            set_(self, "area", check_scalar("area", self.area, low=0.0, low_open=True,
                                            high=MAX_AREA, unit="m^2"))
        else:
            set_(self, "beam_waist", check_scalar("beam_waist", self.beam_waist, low=0.0,
                                                  low_open=True, unit="m"))
        _set_noise(self)

    @property
    def band(self) -> tuple[float, float]:
        """Lower and upper edge of the pass band (Hz)."""
        half = 0.5 * self.bandwidth
        return self.center_freq - half, self.center_freq + half

    def signal_to_noise(self, energy):
        """SNR of energies per pulse (J) recorded by this receiver (needs its noise settings)."""
        return signal_to_noise(energy, self.nep, self.integration_time, self.repetition_rate)

    @property
    def effective_area(self) -> float:
        """Area (m^2) seen by a plane wave at normal incidence: A, or 2 pi w0^2."""
        return self.area if self.area is not None else 2 * np.pi * self.beam_waist**2


def _check_field(field_, freq, medium):
    f = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    e = np.asarray(field_)
    if e.ndim < 2 or e.shape[-1] != 3 or e.shape[0] != f.size:
        raise ValueError(f"field has shape {e.shape}; allowed: (len(freq), ..., 3) with "
                         f"len(freq) = {f.size}")
    medium = Medium.vacuum() if medium is None else medium
    return e, 2 * medium.n_thz * epsilon_0 * c


def _gaussian_matrix(x, waist):
    """Overlap matrix G[i, j] = u1(x_i - x_j) dx_j of the 1-D mode factor."""
    u1 = (2 / np.pi) ** 0.25 / np.sqrt(waist) * np.exp(-((x[:, None] - x[None, :]) / waist) ** 2)
    return u1 * trapezoid_weights(x)[None, :]


def received_energy(receiver: NarrowbandReceiver, freq, field_, medium: Medium | None = None,
                    surface: Surface | None = None):
    """Energy (J) a narrow-band receiver records at each scan position.

    Parameters
    ----------
    receiver : NarrowbandReceiver
    freq : array_like, shape (F,)
        Increasing frequencies (Hz) spanning the pass band.
    field_ : array_like, complex, shape (F, ..., 3)
        Electric field spectrum (V s/m) at the scan positions, frequency first.
    medium : Medium, optional
        Sets n_T in the flux (vacuum by default).
    surface : Surface, optional
        Required for a Gaussian-beam receiver: a :func:`~thzarray.field.surfaces.plane_scan`
        whose grid the field is sampled on (field shape (F, ny, nx, 3)); the field outside the
        grid is taken as zero.

    Returns
    -------
    ndarray
        Energy per pulse (J; per (A s)^2 without a plasma), shape ``field_.shape[1:-1]``.

    Notes
    -----
    .. math:: W = A\\sum_j w_j\\,2n_T\\varepsilon_0 c\\,|\\hat p\\cdot\\mathbf E(f_j)|^2
              \\quad\\text{or}\\quad W = \\sum_j w_j\\,2n_T\\varepsilon_0 c\\,|a(f_j)|^2,

    with the pass-band weights of :func:`thzarray.base.band.passband_weights` and the mode
    overlap a (module docstring).
    """
    e, scale = _check_field(field_, freq, medium)
    wts = passband_weights(freq, *receiver.band)
    amp = e @ np.asarray(receiver.polarization)
    if receiver.area is not None:
        return receiver.area * scale * np.tensordot(wts, np.abs(amp) ** 2, axes=1)
    if surface is None or len(surface.coords) != 2 or surface.points.ndim != 3:
        raise ValueError("surface = a non-plane or missing surface; allowed: the plane_scan() grid "
                         "the field is sampled on, for a beam_waist receiver")
    ys, xs = surface.coords
    if amp.shape[1:] != (ys.size, xs.size):
        raise ValueError(f"field has shape {e.shape}; allowed: (len(freq), {ys.size}, {xs.size}, "
                         "3) on the surface grid")
    gy = _gaussian_matrix(ys, receiver.beam_waist)
    gx = _gaussian_matrix(xs, receiver.beam_waist)
    overlap = gy @ amp @ gx.T
    return scale * np.tensordot(wts, np.abs(overlap) ** 2, axes=1)


@dataclass(frozen=True, eq=False)
class BroadbandDetector:
    """A polarization-blind power detector with a spectral response curve.

    Parameters
    ----------
    freq : array_like, 1-D increasing
        Frequencies (Hz) of the response samples, > 0.
    response : array_like
        Response at those frequencies (dimensionless, 0 to MAX_RESPONSE = 1e6); linear in
        between, zero outside.
    area : float
        Absorbing area (m^2), > 0 and at most MAX_AREA (1e6).
    normal : 3-sequence of float
        Normal of the absorber (normalised here).
    nep, integration_time, repetition_rate : float, optional
        Noise-equivalent power (W/sqrt(Hz)), averaging time (s) and the pulse repetition
        rate it records (Hz): all three or none (:mod:`thzarray.detect.noise`).
    """

    freq: np.ndarray
    response: np.ndarray
    area: float
    normal: tuple = field(default=(0.0, 0.0, 1.0))
    nep: float | None = None
    integration_time: float | None = None
    repetition_rate: float | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        f = as_float_array("freq", self.freq, low=0.0, low_open=True, unit="Hz")
        if f.ndim != 1 or f.size < 2 or np.any(np.diff(f) <= 0):
            raise ValueError(f"freq = array of shape {f.shape}; allowed: a 1-D strictly "
                             "increasing array of at least 2 frequencies")
        r = as_float_array("response", self.response, low=0.0, high=MAX_RESPONSE)
        if r.shape != f.shape:
            raise ValueError(f"response has shape {r.shape}; allowed: the shape of freq {f.shape}")
        set_(self, "freq", f)
        set_(self, "response", r)
        set_(self, "area", check_scalar("area", self.area, low=0.0, low_open=True, high=MAX_AREA,
                                        unit="m^2"))
        set_(self, "normal", _unit("normal", self.normal))
        _set_noise(self)

    def signal_to_noise(self, energy):
        """SNR of energies per pulse (J) recorded by this detector (needs its noise settings)."""
        return signal_to_noise(energy, self.nep, self.integration_time, self.repetition_rate)

    def response_at(self, freq):
        """Response interpolated linearly at ``freq`` (Hz), zero outside the samples."""
        f = np.asarray(freq, dtype=float)
        return np.interp(f, self.freq, self.response, left=0.0, right=0.0)


def detected_energy(detector: BroadbandDetector, freq, field_, medium: Medium | None = None):
    """Energy (J) a broadband power detector records at each position.

    Parameters
    ----------
    detector : BroadbandDetector
    freq : array_like, shape (F,)
        Increasing frequencies (Hz) sampling the detector's band.
    field_ : array_like, complex, shape (F, ..., 3)
        Electric field spectrum (V s/m), frequency first.
    medium : Medium, optional

    Returns
    -------
    ndarray
        Energy per pulse (J; per (A s)^2 without a plasma), shape ``field_.shape[1:-1]``.

    Notes
    -----
    .. math:: W = A\\sum_j w_j R(f_j)\\,2n_T\\varepsilon_0 c\\,
              |\\mathbf E - (\\hat n\\cdot\\mathbf E)\\hat n|^2

    (trapezoid weights w_j).
    """
    e, scale = _check_field(field_, freq, medium)
    f = np.asarray(freq, dtype=float)
    wts = band_weights(f, detector.response_at(f))
    n = np.asarray(detector.normal)
    e_t = e - (e @ n)[..., None] * n
    return detector.area * scale * np.tensordot(wts, np.sum(np.abs(e_t) ** 2, axis=-1), axes=1)


def _as_far_field(field_, points, freq, origin, medium):
    """The field seen from ``origin`` as a FarField-like object (transverse components)."""
    e = np.asarray(field_)
    pts = as_float_array("points", points, unit="m")
    if pts.shape[-1:] != (3,) or e.shape[-1:] != (3,):
        raise ValueError(f"field and points have shapes {e.shape} and {pts.shape}; allowed: "
                         "Cartesian vectors on a last axis of size 3")
    rel = pts - check_vector3("origin", origin)
    r = np.linalg.norm(rel, axis=-1)
    if np.any(r == 0):
        raise ValueError("points: a point coincides with origin; allowed: points away from it")
    theta, phi = angles_of(rel / r[..., None])
    st, ct, sp, cp = np.sin(theta), np.cos(theta), np.sin(phi), np.cos(phi)
    t_hat = np.stack([ct * cp, ct * sp, -st], axis=-1)
    p_hat = np.stack([-sp, cp, np.zeros_like(sp)], axis=-1)
    e_t = np.einsum("...i,...i->...", e, t_hat)
    e_p = np.einsum("...i,...i->...", e, p_hat)
    medium = Medium.vacuum() if medium is None else medium
    theta, phi = np.broadcast_to(theta, e_t.shape), np.broadcast_to(phi, e_t.shape)
    return FarField(np.asarray(freq, dtype=float), theta, phi, e_t, e_p, medium)


def surface_polarization(field_, points, freq, axis=(0.0, 0.0, 1.0), origin=(0.0, 0.0, 0.0),
                         medium: Medium | None = None) -> PolarizationMap:
    """Local polarization of a field sampled on a surface, about a beam axis.

    The field's components transverse to the line of sight from ``origin`` (the ones a
    detector facing ``origin`` measures) are analysed with
    :func:`~thzarray.field.polarization.polarization_map`; the longitudinal near-field part is
    left out.

    Parameters
    ----------
    field_ : array_like, complex, shape (..., 3)
        Electric field spectrum (V s/m).
    points : array_like, shape (..., 3)
        Where it was sampled (m), broadcastable to the field.
    freq : array_like
        Frequencies (Hz), broadcastable to the field's shape without its last axis.
    axis : 3-sequence of float
        Beam axis (through ``origin``) the radial direction refers to.
    origin : 3-sequence of float
        Point on the axis from which the directions are seen (m).
    medium : Medium, optional

    Returns
    -------
    PolarizationMap
        Stokes parameters S0..S3 ((V s/m)^2) in the (radial, azimuthal) basis, orientation,
        degree of radial polarization, shape of the field without its last axis.

    Notes
    -----
    .. math:: S_0 = |E_\\rho|^2 + |E_\\varphi|^2,\\ S_1 = |E_\\rho|^2 - |E_\\varphi|^2,\\
              S_2 = 2\\mathrm{Re}(E_\\rho E_\\varphi^*),\\ S_3 = 2\\mathrm{Im}(E_\\rho E_\\varphi^*)

    (M. Born and E. Wolf, Principles of Optics, sec. 1.4.2).
    """
    return polarization_map(_as_far_field(field_, points, freq, origin, medium), axis)


def surface_degree_of_radial_polarization(field_, points, freq, weights=None,
                                          axis=(0.0, 0.0, 1.0), origin=(0.0, 0.0, 0.0),
                                          medium: Medium | None = None) -> float:
    """Energy-weighted degree of radial polarization of a field on a surface (0 to 1).

    Parameters are those of :func:`surface_polarization`; ``weights`` (e.g. a Surface's area
    weights times band weights) broadcast to the field's shape without its last axis.

    .. math:: P_\\rho = \\frac{\\sum w |E_\\rho|^2}{\\sum w (|E_\\rho|^2 + |E_\\varphi|^2)}
    """
    ff = _as_far_field(field_, points, freq, origin, medium)
    return degree_of_radial_polarization(ff, weights, axis)
