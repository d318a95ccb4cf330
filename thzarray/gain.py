r"""Energy a layout delivers toward a target, and what phasing gains over one filament and
over an incoherent bundle.

Targets
-------
A :class:`Direction` (energy per steradian, J/sr) or a :class:`Receiver`: a circular
aperture of radius ``radius`` facing the array at ``distance`` along a direction (energy,
J). The receiver is taken to be in the array's far field (distance much larger than
D^2/lambda for an array of size D); its energy is the far-field density integrated over
the solid angle it subtends,
:math:`d\Omega = dA\,R/|\mathbf r|^3` on the aperture plane.

Band sums
---------
With frequencies :math:`f_j` (Hz), an optional spectral weight :math:`w_j` and the
trapezoid weights :math:`\Delta f_j`, the delivered energy is

.. math:: W = \sum_j \Delta f_j w_j \int_{target} 2 n_T\varepsilon_0 c\,
          \Big|\sum_n \mathbf g_n(f_j, \hat r)\, e^{i\omega_j t_n}\Big|^2 d\Omega,

where :math:`\mathbf g_n` is column n's field with its delay taken out
(:func:`thzarray.layouts.filament_fields`). With a single frequency the band sum is the
spectral density at that frequency (J/(Hz sr) or J/Hz). Without a plasma the current
spectrum is 1 A s, so energies are per unit current spectrum squared; the ratios (gains)
are absolute.

Reference levels
----------------
- single: the mean over the columns of one column alone, :math:`\langle|\mathbf g_n|^2\rangle`;
- incoherent: columns with independent uniformly random phases (at every frequency); its
  mean is exactly :math:`\sum_n|\mathbf g_n|^2`, about N times one column (the phases cancel
  on average); a seeded Monte Carlo estimate with its standard error is reported beside it;
- ideal: :math:`N^2` times one column, the in-phase sum of identical columns;
- coherent limit: :math:`(\sum_n|\mathbf g_n|)^2`, the most any choice of phases can deliver
  at one node (Cauchy-Schwarz); equal to the ideal for identical columns.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c, epsilon_0
from scipy.special import roots_legendre

from ._validate import as_float_array, check_scalar
from .farfield import spectral_energy, unit_vectors
from .filament import as_sources
from .layouts import array_factor, array_far_field, filament_fields
from .medium import Medium
from .plasma import Plasma

__all__ = [
    "ArrayGain",
    "Direction",
    "Receiver",
    "TargetFields",
    "array_factor_directivity",
    "array_gain",
    "band_weights",
    "check_band",
    "check_target",
    "directivity",
    "layout_extent",
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

    def nodes(self, sources, freq_max, medium):
        """One node: theta (1,), phi (1,) and weight (1,) = 1."""
        return np.array([self.theta]), np.array([self.phi]), np.ones(1)


@dataclass(frozen=True)
class Receiver:
    """A circular receiving aperture facing the array.

    Parameters
    ----------
    theta, phi : float
        Direction of the aperture's centre seen from the origin (rad); theta in [0, pi].
    radius : float
        Aperture radius (m), > 0.
    distance : float
        Distance from the origin to the aperture's centre (m), > radius.
    """

    theta: float
    phi: float
    radius: float
    distance: float

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "theta", _check_theta("theta", self.theta))
        set_(self, "phi", check_scalar("phi", self.phi, unit="rad"))
        set_(self, "radius", check_scalar("radius", self.radius, low=0.0, low_open=True, unit="m"))
        set_(self, "distance", check_scalar("distance", self.distance, low=self.radius,
                                            low_open=True, unit="m"))

    unit = "J"

    def replace(self, **changes):
        """A copy with some parameters changed."""
        args = dict(theta=self.theta, phi=self.phi, radius=self.radius, distance=self.distance)
        return Receiver(**{**args, **changes})

    @property
    def solid_angle(self) -> float:
        """Solid angle the aperture subtends (sr): 2 pi (1 - R / sqrt(R^2 + a^2))."""
        return 2 * np.pi * (1 - self.distance / np.hypot(self.distance, self.radius))

    def nodes(self, sources, freq_max, medium):
        """Quadrature over the aperture: theta (J,), phi (J,), solid-angle weights (J,) (sr).

        Gauss-Legendre in radius (8-point panels) times the trapezoid rule in azimuth, with
        enough nodes for the phase spread k_max * extent * (radius / distance) of the
        sources' pattern across the aperture.
        """
        k = 2 * np.pi * freq_max * medium.n_thz / c
        spread = k * layout_extent(sources) * self.radius / self.distance
        panels = int(np.ceil(spread / np.pi)) + 1
        naz = 2 * int(np.ceil(spread)) + 12
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


def layout_extent(sources):
    """Largest distance between any two column ends (m); the scale of the finest pattern."""
    fils = as_sources(sources)
    pts = np.array([p for f in fils for p in (np.asarray(f.start), f.end)])
    return float(np.max(np.linalg.norm(pts[:, None] - pts[None], axis=-1)))


def check_target(target):
    """The target itself when it is a Direction or a Receiver; ValueError otherwise."""
    if not isinstance(target, (Direction, Receiver)):
        raise ValueError(f"target = {type(target).__name__}; allowed: Direction or Receiver")
    return target


def band_weights(freq, weight=None) -> np.ndarray:
    """Trapezoid weights (Hz) of the band samples times an optional spectral weight.

    Parameters
    ----------
    freq : array_like, shape (F,)
        Increasing frequencies (Hz), > 0. A single frequency gets weight 1 (the band sum is
        then the spectral density).
    weight : array_like, shape (F,), optional
        Spectral weight, >= 0 (e.g. a detector response); default 1.

    Returns
    -------
    ndarray, shape (F,)
    """
    freq = check_band(freq)
    if freq.size == 1:
        base = np.ones(1)
    else:
        edges = np.concatenate([[freq[0]], 0.5 * (freq[1:] + freq[:-1]), [freq[-1]]])
        base = np.diff(edges)
    if weight is None:
        return base
    w = as_float_array("weight", weight, low=0.0)
    if w.shape != freq.shape:
        raise ValueError(f"weight has shape {w.shape}; allowed: the shape of freq {freq.shape}")
    return base * w


def check_band(freq):
    """Band frequencies (Hz) as a 1-D strictly increasing array of positive values."""
    freq = np.atleast_1d(as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz"))
    if freq.ndim != 1 or np.any(np.diff(freq) <= 0):
        raise ValueError(f"freq = array of shape {freq.shape}; allowed: a 1-D strictly "
                         "increasing array of frequencies (Hz)")
    return freq


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
        if ph.ndim == 3:
            ph = ph[..., None]
        ph = np.broadcast_to(ph, ph.shape[:3] + (self.g.shape[2],))
        out = np.empty(ph.shape[0])
        step = max(1, (1 << 22) // self.g.size)
        for i0 in range(0, ph.shape[0], step):
            s = np.einsum("nfjc,snfj->sfjc", self.g, np.exp(1j * ph[i0:i0 + step]))
            out[i0:i0 + step] = np.sum(np.abs(s) ** 2, axis=(1, 2, 3))
        return out

    @property
    def incoherent(self) -> float:
        """Mean energy for independent uniformly random phases: sum_n |g_n|^2."""
        return float(np.sum(np.abs(self.g) ** 2))

    @property
    def single(self) -> float:
        """Mean energy of one column alone."""
        return self.incoherent / self.count

    @property
    def coherent_limit(self) -> float:
        """(sum_n |g_n|)^2 summed over frequencies and nodes: the most any phases give."""
        mag = np.sqrt(np.sum(np.abs(self.g) ** 2, axis=-1))  # (N, F, J)
        return float(np.sum(mag.sum(axis=0) ** 2))


def target_fields(sources, target, freq, medium: Medium | None = None,
                  plasma: Plasma | None = None, weight=None) -> TargetFields:
    """Column fields at a target's quadrature nodes, weighted for the band sum.

    Parameters
    ----------
    sources : Filament or sequence of Filament
    target : Direction or Receiver
    freq : array_like, shape (F,)
        Increasing frequencies (Hz).
    medium, plasma : optional
    weight : array_like, shape (F,), optional
        Spectral weight (see :func:`band_weights`).

    Returns
    -------
    TargetFields
    """
    fils = as_sources(sources)
    target = check_target(target)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, weight)
    th, ph, nw = target.nodes(fils, freq[-1], medium)
    g = filament_fields(fils, freq[:, None], th[None, :], ph[None, :], medium, plasma)
    scale = np.sqrt(2 * medium.n_thz * epsilon_0 * c * bw[:, None] * nw[None, :])
    return TargetFields(g * scale[None, :, :, None], 2 * np.pi * freq, target.unit)


@dataclass(frozen=True)
class ArrayGain:
    """Energy delivered to a target by one column, an incoherent bundle, the phased layout.

    Attributes
    ----------
    count : int
        Number of columns N.
    single : float
        Mean energy of one column alone (J/sr or J, see ``unit``).
    incoherent : float
        Exact mean over random relative phases, sum_n |g_n|^2.
    incoherent_mc, incoherent_mc_error : float
        Seeded Monte Carlo estimate of the same and its standard error.
    shots : int
        Monte Carlo draws.
    phased : float
        Energy with the layout's delays.
    ideal : float
        N^2 times ``single``: identical columns all in phase.
    coherent_limit : float
        (sum_n |g_n|)^2, the most any phases can give (equals ``ideal`` for identical columns).
    directivity : float
        Band directivity toward the target's centre (NaN unless asked for).
    unit : str
    """

    count: int
    single: float
    incoherent: float
    incoherent_mc: float
    incoherent_mc_error: float
    shots: int
    phased: float
    ideal: float
    coherent_limit: float
    directivity: float
    unit: str

    @property
    def phased_over_single(self) -> float:
        return self.phased / self.single

    @property
    def incoherent_over_single(self) -> float:
        return self.incoherent / self.single

    @property
    def phased_over_incoherent(self) -> float:
        return self.phased / self.incoherent

    @property
    def phased_over_ideal(self) -> float:
        return self.phased / self.ideal


def array_gain(sources, target, freq, *, medium: Medium | None = None,
               plasma: Plasma | None = None, weight=None, shots: int = 256, seed: int = 0,
               with_directivity: bool = False) -> ArrayGain:
    """Single, incoherent, phased and ideal energies toward a target.

    Parameters
    ----------
    sources : sequence of Filament
        The layout with its delays (s).
    target : Direction or Receiver
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    medium, plasma, weight : optional
        As for :func:`target_fields`.
    shots : int
        Monte Carlo draws of random phases, >= 2.
    seed : int
        Seed of ``numpy.random.default_rng``.
    with_directivity : bool
        Also integrate over the sphere for the directivity (slow for long, wide layouts).

    Returns
    -------
    ArrayGain
    """
    fils = as_sources(sources)
    if not isinstance(shots, (int, np.integer)) or shots < 2:
        raise ValueError(f"shots = {shots!r} is not allowed; allowed: an integer >= 2")
    tf = target_fields(fils, target, freq, medium, plasma, weight)
    rng = np.random.default_rng(seed)
    samples = []
    for i0 in range(0, shots, 64):
        n = min(64, shots - i0)
        samples.append(tf.energies_with_phases(rng.uniform(0, 2 * np.pi,
                                                           (n, tf.count, tf.omega.size))))
    samples = np.concatenate(samples)
    d = (directivity(fils, target.theta, target.phi, freq, medium, plasma, weight)
         if with_directivity else np.nan)
    n = tf.count
    return ArrayGain(n, tf.single, tf.incoherent, float(samples.mean()),
                     float(samples.std(ddof=1) / np.sqrt(shots)), int(shots),
                     tf.energy([f.delay for f in fils]), n**2 * tf.single, tf.coherent_limit,
                     float(d), tf.unit)


def directivity(sources, theta, phi, freq, medium: Medium | None = None,
                plasma: Plasma | None = None, weight=None) -> float:
    """Band directivity of a layout toward (theta, phi), by integration over the sphere.

    Parameters
    ----------
    sources : sequence of Filament
    theta, phi : float
        Direction (rad).
    freq : array_like, shape (F,)
        Band frequencies (Hz); one frequency gives the spectral directivity.
    medium, plasma, weight : optional

    Returns
    -------
    float

    Notes
    -----
    .. math:: D = 4\\pi\\,\\frac{\\sum_j \\Delta f_j w_j\\, d^2W/(df\\,d\\Omega)(\\hat r_0)}
                               {\\sum_j \\Delta f_j w_j\\, dW/df}

    (C. A. Balanis, Antenna Theory, fundamental parameters: directivity), the denominator
    from :func:`thzarray.farfield.spectral_energy`.
    """
    fils = as_sources(sources)
    theta = _check_theta("theta", theta)
    phi = check_scalar("phi", phi, unit="rad")
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, weight)
    toward = array_far_field(fils, freq, theta, phi, medium, plasma).energy_density
    total = spectral_energy(fils, freq, medium, plasma)
    return float(4 * np.pi * np.sum(bw * toward) / np.sum(bw * total))


def array_factor_directivity(sources, freq, theta, phi, medium: Medium | None = None) -> float:
    """Directivity of the array factor alone (isotropic elements) at one frequency.

    Parameters
    ----------
    sources : sequence of Filament
        Only the starts, delays and weights enter.
    freq : float
        Frequency (Hz).
    theta, phi : float
        Direction (rad).
    medium : Medium, optional

    Returns
    -------
    float

    Notes
    -----
    .. math:: D_{AF} = \\frac{4\\pi |AF(\\hat r_0)|^2}{\\oint |AF|^2 d\\Omega}

    integrated numerically: composite 16-point Gauss-Legendre panels in cos(theta), at least
    three per oscillation of the phase k * extent, and the trapezoid rule in phi (exact for
    the trigonometric polynomial |AF|^2 once the nodes exceed twice its degree).
    """
    fils = as_sources(sources)
    medium = Medium.vacuum() if medium is None else medium
    f = check_scalar("freq", freq, low=0.0, low_open=True, unit="Hz")
    theta = _check_theta("theta", theta)
    phi = check_scalar("phi", phi, unit="rad")
    k = 2 * np.pi * f * medium.n_thz / c
    starts = np.array([x.start for x in fils])
    extent = float(np.max(np.linalg.norm(starts[:, None] - starts[None], axis=-1)))
    panels = int(np.ceil(3 * k * extent / np.pi)) + 4
    x16, w16 = roots_legendre(16)
    edges = np.linspace(-1.0, 1.0, panels + 1)
    half, mid = 0.5 * np.diff(edges), 0.5 * (edges[1:] + edges[:-1])
    mu = (mid[:, None] + half[:, None] * x16).ravel()
    wmu = (half[:, None] * w16).ravel()
    nphi = 2 * int(np.ceil(k * extent)) + 16
    ph = 2 * np.pi * np.arange(nphi) / nphi
    af = array_factor(fils, f, np.arccos(mu)[:, None], ph[None, :], medium)
    total = np.sum(np.abs(af) ** 2 * wmu[:, None]) * 2 * np.pi / nphi
    peak = np.abs(array_factor(fils, f, theta, phi, medium)) ** 2
    return float(4 * np.pi * peak / total)
