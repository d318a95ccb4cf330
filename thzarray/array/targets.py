r"""Targets of an array, and the columns' fields there: everything a band sum of delivered
energy needs.

Targets
-------
A :class:`Direction` (energy per steradian, J/sr) or an :class:`Aperture`: a circular
aperture of radius ``radius`` facing the array at ``distance`` along a direction (energy,
J). The receiver is taken to be in the array's far field (distance much larger than
D^2/lambda for an array of size D); its energy is the far-field density integrated over
the solid angle it subtends,
:math:`d\Omega = dA\,R/|\mathbf r|^3` on the aperture plane.

Band sums
---------
With frequencies :math:`f_j` (Hz), an optional spectral weight :math:`w_j` and the
trapezoid weights :math:`\Delta f_j` (:mod:`thzarray.base.band`), the delivered energy is

.. math:: W = \sum_j \Delta f_j w_j \int_{target} 2 n_T\varepsilon_0 c\,
          \Big|\sum_n \mathbf g_n(f_j, \hat r)\, e^{i\omega_j t_n}\Big|^2 d\Omega,

where :math:`\mathbf g_n` is column n's field with its delay taken out
(:func:`thzarray.array.arrayfield.filament_fields`). With a single frequency the band sum is the
spectral density at that frequency (J/(Hz sr) or J/Hz). Without a plasma the current
spectrum is 1 A s, so energies are per unit current spectrum squared; the ratios (gains)
are absolute.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c, epsilon_0
from scipy.special import roots_legendre

from thzarray.air.medium import Medium
from thzarray.array.arrayfield import filament_fields
from thzarray.base.band import band_weights, check_band
from thzarray.base.checks import as_float_array, check_scalar
from thzarray.base.geometry import unit_vectors
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET, check_result_fits
from thzarray.source.filament import as_filaments, layout_extent
from thzarray.source.plasma import Plasma

__all__ = [
    "MAX_APERTURE_DISTANCE",
    "MIN_APERTURE_RADIUS",
    "Aperture",
    "Direction",
    "TargetFields",
    "check_target",
    "target_field_bytes",
    "target_fields",
]


def _check_theta(name, value):
    return check_scalar(name, value, low=0.0, high=np.pi, unit="rad")


@dataclass(frozen=True)
class Direction:
    """A target direction.

    Parameters
    ----------
    theta : float
        Polar angle from +z (rad), 0 to pi.
    phi : float
        Azimuth from +x (rad).
    """

    theta: float
    phi: float = 0.0

    def __post_init__(self):
        object.__setattr__(self, "theta", _check_theta("theta", self.theta))
        object.__setattr__(self, "phi", check_scalar("phi", self.phi, unit="rad"))

    unit = "J/sr"

    def replace(self, **changes):
        """A copy with some parameters changed."""
        return Direction(**{"theta": self.theta, "phi": self.phi, **changes})

    def node_count(self, filaments, freq_max, medium) -> int:
        """One node."""
        return 1

    def nodes(self, filaments, freq_max, medium):
        """One node: theta (1,), phi (1,) and weight (1,) = 1."""
        return np.array([self.theta]), np.array([self.phi]), np.ones(1)


# Copies of the target fields alive at the peak (the fields, their scaled copy, and the
# work arrays of an energy evaluation).
_TARGET_COPIES = 3
MIN_APERTURE_RADIUS = 1e-9
MAX_APERTURE_DISTANCE = 1e9


@dataclass(frozen=True)
class Aperture:
    """A circular aperture facing the array: the target a receiver presents.

    Parameters
    ----------
    theta, phi : float
        Direction of the aperture's centre seen from the origin (rad); theta in [0, pi].
    radius : float
        Aperture radius (m), from ``MIN_APERTURE_RADIUS`` (1 nm, below which the weights
        underflow) up.
    distance : float
        Distance from the origin to the aperture's centre (m), > radius and at most
        ``MAX_APERTURE_DISTANCE`` (1e9 m).
    """

    theta: float
    phi: float
    radius: float
    distance: float

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "theta", _check_theta("theta", self.theta))
        set_(self, "phi", check_scalar("phi", self.phi, unit="rad"))
        set_(self, "radius", check_scalar("radius", self.radius, low=MIN_APERTURE_RADIUS,
                                          high=MAX_APERTURE_DISTANCE, unit="m"))
        set_(self, "distance", check_scalar("distance", self.distance, low=self.radius,
                                            low_open=True, high=MAX_APERTURE_DISTANCE, unit="m"))

    unit = "J"

    def replace(self, **changes):
        """A copy with some parameters changed."""
        args = dict(theta=self.theta, phi=self.phi, radius=self.radius, distance=self.distance)
        return Aperture(**{**args, **changes})

    @property
    def solid_angle(self) -> float:
        """Solid angle the aperture subtends (sr): 2 pi (1 - R / sqrt(R^2 + a^2)).

        Evaluated as 4 pi sin^2(alpha / 2), alpha = atan2(a, R), which has no cancellation
        for a small aperture far away.
        """
        return 4 * np.pi * np.sin(0.5 * np.arctan2(self.radius, self.distance)) ** 2

    def _grid(self, filaments, freq_max, medium):
        """(radial panels, azimuths) of the quadrature (see :meth:`nodes`)."""
        k = 2 * np.pi * freq_max * medium.n_thz / c
        spread = k * layout_extent(filaments) * self.radius / self.distance
        return int(np.ceil(spread / np.pi)) + 1, 2 * int(np.ceil(spread)) + 12

    def node_count(self, filaments, freq_max, medium) -> int:
        """Number of quadrature nodes :meth:`nodes` returns (computed without them)."""
        panels, naz = self._grid(filaments, freq_max, medium)
        return 8 * panels * naz

    def nodes(self, filaments, freq_max, medium):
        """Quadrature over the aperture: theta (J,), phi (J,), solid-angle weights (J,) (sr).

        Gauss-Legendre in radius (8-point panels) times the trapezoid rule in azimuth, with
        enough nodes for the phase spread k_max * extent * (radius / distance) of the
        filaments' pattern across the aperture.
        """
        panels, naz = self._grid(filaments, freq_max, medium)
        x8, w8 = roots_legendre(8)
        edges = np.linspace(0.0, self.radius, panels + 1)
        half, mid = 0.5 * np.diff(edges), 0.5 * (edges[1:] + edges[:-1])
        rho = (mid[:, None] + half[:, None] * x8).ravel()
        wrho = (half[:, None] * w8).ravel() * rho
        az = 2 * np.pi * np.arange(naz) / naz
        r0, t0, p0 = unit_vectors(self.theta, self.phi)
        pts = (self.distance * r0 + rho[:, None, None] * (np.cos(az)[None, :, None] * t0
                                                         + np.sin(az)[None, :, None] * p0))
        dist = np.linalg.norm(pts, axis=-1)
        wts = wrho[:, None] * (2 * np.pi / naz) * self.distance / dist**3
        d = pts / dist[..., None]
        theta = np.arccos(np.clip(d[..., 2], -1.0, 1.0))
        phi = np.arctan2(d[..., 1], d[..., 0])
        return theta.ravel(), phi.ravel(), wts.ravel()


def check_target(target):
    """The target itself when it is a Direction or an Aperture; ValueError otherwise."""
    if not isinstance(target, (Direction, Aperture)):
        raise ValueError(f"target = {type(target).__name__}; allowed: Direction or Aperture")
    return target


@dataclass(frozen=True, eq=False)
class TargetFields:
    """The columns' weighted fields at a target's nodes: everything the band sum needs.

    Attributes
    ----------
    g : ndarray, complex, shape (N, F, J, 2)
        Column fields with delay 0 times sqrt(2 n_T eps0 c * band weight * node weight), so
        that the delivered energy is ``sum |sum_n g[n] exp(i w t_n)|^2`` (J/sr or J).
    omega : ndarray, shape (F,)
        Angular frequencies (rad/s).
    unit : str
        Unit of the energies ("J/sr" for a direction, "J" for a receiver).
    """

    g: np.ndarray
    omega: np.ndarray
    unit: str

    @property
    def count(self) -> int:
        return self.g.shape[0]

    def _phasors(self, delays):
        d = as_float_array("delays", delays, unit="s")
        if d.shape != (self.count,):
            raise ValueError(f"delays has shape {d.shape}; allowed: ({self.count},)")
        return np.exp(1j * d[:, None] * self.omega[None, :])  # (N, F)

    def energy(self, delays) -> float:
        """Delivered energy with these delays (s), shape (N,)."""
        s = np.einsum("nfjc,nf->fjc", self.g, self._phasors(delays))
        return float(np.sum(np.abs(s) ** 2))

    def energy_and_gradient(self, delays):
        """Energy and its analytic gradient with respect to the delays (J/s per column).

        .. math:: \\frac{\\partial W}{\\partial t_m} = 2\\,\\mathrm{Re}\\sum
                  \\overline{S}\\, i\\omega\\, g_m e^{i\\omega t_m},\\qquad
                  S = \\sum_n g_n e^{i\\omega t_n}
        """
        ph = self._phasors(delays)
        terms = self.g * ph[:, :, None, None]
        s = terms.sum(axis=0)
        grad = 2 * np.real(np.einsum("fjc,nfjc,f->n", np.conj(s), terms, 1j * self.omega))
        return float(np.sum(np.abs(s) ** 2)), grad

    def energies_with_phases(self, phases) -> np.ndarray:
        """Energy for many sets of extra phases.

        Parameters
        ----------
        phases : ndarray, shape (S, N, F) or (S, N, F, J)
            Extra phase of each column (rad) added to the delay-free fields.

        Returns
        -------
        ndarray, shape (S,)
        """
        ph = np.asarray(phases, dtype=float)
        if ph.ndim == 3:  # one phase per column and frequency: a matrix product each
            return self._energies_per_frequency(np.exp(1j * ph))
        ph = np.broadcast_to(ph, ph.shape[:3] + (self.g.shape[2],))
        out = np.empty(ph.shape[0])
        step = max(1, (1 << 22) // self.g.size)
        for i0 in range(0, ph.shape[0], step):
            s = np.einsum("nfjc,snfj->sfjc", self.g, np.exp(1j * ph[i0:i0 + step]))
            out[i0:i0 + step] = np.sum(np.abs(s) ** 2, axis=(1, 2, 3))
        return out

    def _energies_per_frequency(self, z):
        """Energies for phasors z of shape (S, N, F), one per column and frequency: for each
        frequency the (S, N) phasors times the (N, 2J) fields, by matrix products."""
        out = np.zeros(z.shape[0])
        n, nf = self.g.shape[:2]
        for f in range(nf):
            gf = np.ascontiguousarray(self.g[:, f].reshape(n, -1))  # (N, 2J)
            step = max(1, (1 << 21) // gf.shape[1])
            for i0 in range(0, z.shape[0], step):
                s = z[i0:i0 + step, :, f] @ gf
                out[i0:i0 + step] += np.sum(s.real ** 2 + s.imag ** 2, axis=1)
        return out

    @property
    def incoherent(self) -> float:
        """Mean energy for independent uniformly random phases: ``sum_n |g_n|^2``."""
        return float(np.sum(np.abs(self.g) ** 2))

    @property
    def single(self) -> float:
        """Mean energy of one column alone."""
        return self.incoherent / self.count

    @property
    def coherent_limit(self) -> float:
        """``(sum_n |g_n|)^2`` summed over frequencies and nodes: the most any phases give."""
        mag = np.sqrt(np.sum(np.abs(self.g) ** 2, axis=-1))  # (N, F, J)
        return float(np.sum(mag.sum(axis=0) ** 2))


def target_field_bytes(filaments, target, freq, medium) -> int:
    """Bytes :func:`target_fields` needs at its peak: the fields (complex, two components per
    column, band frequency and node) and their working copies (``_TARGET_COPIES``)."""
    fils = as_filaments(filaments)
    freq = np.atleast_1d(np.asarray(freq, dtype=float))
    nodes = target.node_count(fils, float(freq.max()), medium)
    return _TARGET_COPIES * 32 * len(fils) * freq.size * nodes


def target_fields(filaments, target, freq, medium: Medium | None = None,
                  plasma: Plasma | None = None, spectral_weight=None, *,
                  memory_budget: float = DEFAULT_MEMORY_BUDGET) -> TargetFields:
    """Column fields at a target's quadrature nodes, weighted for the band sum.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    target : Direction or Aperture
    freq : array_like, shape (F,)
        Increasing frequencies (Hz).
    medium, plasma : optional
    spectral_weight : array_like, shape (F,), optional
        Spectral weight (see :func:`thzarray.base.band.band_weights`).
    memory_budget : float
        Bytes this call may use (default 2 GiB). The fields (N, F, J, 2) are the result and
        every later energy needs all of them; with the working copies that the scaling and
        the energies make (``_TARGET_COPIES`` of them) they must fit, else ValueError up
        front with the bytes needed.

    Returns
    -------
    TargetFields
    """
    fils = as_filaments(filaments)
    target = check_target(target)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, spectral_weight)
    # Refused up front, before the quadrature itself is built, when they cannot fit.
    nodes = target.node_count(fils, float(freq[-1]), medium)
    check_result_fits(f"target_fields ({len(fils)} columns x {freq.size} frequencies x "
                      f"{nodes} target nodes)", target_field_bytes(fils, target, freq, medium),
                      memory_budget, "fewer columns, fewer band frequencies or a smaller "
                      "aperture")
    th, ph, nw = target.nodes(fils, freq[-1], medium)
    g = filament_fields(fils, freq[:, None], th[None, :], ph[None, :], medium, plasma)
    scale = np.sqrt(2 * medium.n_thz * epsilon_0 * c * bw[:, None] * nw[None, :])
    return TargetFields(g * scale[None, :, :, None], 2 * np.pi * freq, target.unit)
