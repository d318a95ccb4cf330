r"""What phasing gains: one filament, an incoherent bundle and the phased layout toward a
target, and directivity.

The energies are band sums of the columns' fields at the target
(:mod:`thzarray.array.targets`).

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
from scipy.constants import c
from scipy.special import roots_legendre

from thzarray.air.medium import Medium
from thzarray.array.arrayfield import array_factor, array_far_field
from thzarray.array.targets import target_fields
from thzarray.base.band import band_weights, check_band
from thzarray.base.checks import check_count, check_scalar
from thzarray.base.geometry import extent
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET
from thzarray.field.energy import spectral_energy
from thzarray.source.filament import as_filaments
from thzarray.source.plasma import Plasma

__all__ = [
    "MAX_TRIALS",
    "ArrayGain",
    "array_factor_directivity",
    "array_gain",
    "directivity",
]


# Bytes of temporaries per direction of a sphere sum (angles, the array factor, its work).
_BYTES_PER_DIRECTION = 512

MAX_TRIALS = 1_000_000
"""Most Monte Carlo trials one call may draw."""


def _check_theta(name, value):
    return check_scalar(name, value, low=0.0, high=np.pi, unit="rad")


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
        Exact mean over random relative phases, ``sum_n |g_n|^2``.
    incoherent_mc, incoherent_mc_error : float
        Seeded Monte Carlo estimate of the same and its standard error.
    trials : int
        Monte Carlo draws.
    phased : float
        Energy with the layout's delays.
    ideal : float
        N^2 times ``single``: identical columns all in phase.
    coherent_limit : float
        ``(sum_n |g_n|)^2``, the most any phases can give (equals ``ideal`` for identical columns).
    directivity : float
        Band directivity toward the target's centre (NaN unless asked for).
    unit : str
    """

    count: int
    single: float
    incoherent: float
    incoherent_mc: float
    incoherent_mc_error: float
    trials: int
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


def array_gain(filaments, target, freq, *, medium: Medium | None = None,
               plasma: Plasma | None = None, spectral_weight=None, trials: int = 256, seed: int = 0,
               with_directivity: bool = False) -> ArrayGain:
    """Single, incoherent, phased and ideal energies toward a target.

    Parameters
    ----------
    filaments : sequence of Filament
        The layout with its delays (s).
    target : Direction or Aperture
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    medium, plasma, spectral_weight : optional
        As for :func:`thzarray.array.targets.target_fields`.
    trials : int
        Monte Carlo draws of random phases, >= 2.
    seed : int
        Seed of ``numpy.random.default_rng``.
    with_directivity : bool
        Also integrate over the sphere for the directivity (slow for long, wide layouts).

    Returns
    -------
    ArrayGain
    """
    fils = as_filaments(filaments)
    trials = check_count("trials", trials, low=2, high=MAX_TRIALS)
    tf = target_fields(fils, target, freq, medium, plasma, spectral_weight)
    rng = np.random.default_rng(seed)
    samples = []
    # Draws per call, about 32 MiB of phases (the draws follow one another, so the samples do
    # not depend on this size).
    step = max(64, (1 << 22) // (tf.count * tf.omega.size))
    for i0 in range(0, trials, step):
        n = min(step, trials - i0)
        samples.append(tf.energies_with_phases(rng.uniform(0, 2 * np.pi,
                                                           (n, tf.count, tf.omega.size))))
    samples = np.concatenate(samples)
    d = (directivity(fils, target.theta, target.phi, freq, medium, plasma, spectral_weight)
         if with_directivity else np.nan)
    n = tf.count
    return ArrayGain(n, tf.single, tf.incoherent, float(samples.mean()),
                     float(samples.std(ddof=1) / np.sqrt(trials)), int(trials),
                     tf.energy([f.delay for f in fils]), n**2 * tf.single, tf.coherent_limit,
                     float(d), tf.unit)


def directivity(filaments, theta, phi, freq, medium: Medium | None = None,
                plasma: Plasma | None = None, spectral_weight=None, *,
                memory_budget: float = DEFAULT_MEMORY_BUDGET) -> float:
    """Band directivity of a layout toward (theta, phi), by integration over the sphere.

    Parameters
    ----------
    filaments : sequence of Filament
    theta, phi : float
        Direction (rad).
    freq : array_like, shape (F,)
        Band frequencies (Hz); one frequency gives the spectral directivity.
    medium, plasma, spectral_weight : optional
    memory_budget : float
        Bytes this call may use (default 2 GiB); the sphere is integrated in blocks that fit
        (:func:`~thzarray.field.energy.spectral_energy`).

    Returns
    -------
    float

    Notes
    -----
    .. math:: D = 4\\pi\\,\\frac{\\sum_j \\Delta f_j w_j\\, d^2W/(df\\,d\\Omega)(\\hat r_0)}
                               {\\sum_j \\Delta f_j w_j\\, dW/df}

    (C. A. Balanis, Antenna Theory, fundamental parameters: directivity), the denominator
    from :func:`~thzarray.field.energy.spectral_energy`.
    """
    fils = as_filaments(filaments)
    theta = _check_theta("theta", theta)
    phi = check_scalar("phi", phi, unit="rad")
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, spectral_weight)
    toward = array_far_field(fils, freq, theta, phi, medium, plasma).energy_density
    total = spectral_energy(fils, freq, medium, plasma, memory_budget=memory_budget)
    return float(4 * np.pi * np.sum(bw * toward) / np.sum(bw * total))


def array_factor_directivity(filaments, freq, theta, phi, medium: Medium | None = None, *,
                             memory_budget: float = DEFAULT_MEMORY_BUDGET) -> float:
    """Directivity of the array factor alone (isotropic elements) at one frequency.

    Parameters
    ----------
    filaments : sequence of Filament
        Only the starts, delays and amplitudes enter.
    freq : float
        Frequency (Hz).
    theta, phi : float
        Direction (rad).
    medium : Medium, optional
    memory_budget : float
        Bytes this call may use (default 2 GiB); the sphere is summed in blocks that fit.

    Returns
    -------
    float

    Notes
    -----
    .. math:: D_{AF} = \\frac{4\\pi |AF(\\hat r_0)|^2}{\\oint |AF|^2 d\\Omega}

    integrated numerically: composite 16-point Gauss-Legendre panels in cos(theta), at least
    three per oscillation of the phase k * extent, and the trapezoid rule in phi (exact for
    the trigonometric polynomial ``|AF|^2`` once the nodes exceed twice its degree).
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    f = check_scalar("freq", freq, low=0.0, low_open=True, unit="Hz")
    theta = _check_theta("theta", theta)
    phi = check_scalar("phi", phi, unit="rad")
    k = 2 * np.pi * f * medium.n_thz / c
    size = extent([x.start for x in fils])
    panels = int(np.ceil(3 * k * size / np.pi)) + 4
    x16, w16 = roots_legendre(16)
    nphi = 2 * int(np.ceil(k * size)) + 16
    ph_all = 2 * np.pi * np.arange(nphi) / nphi
    # Blocks of directions: af (16 bytes) and its work space, well inside the budget.
    per_block = max(16, int(check_scalar("memory_budget", memory_budget, low=0.0,
                                         low_open=True) // (4 * _BYTES_PER_DIRECTION)))
    phi_step = min(nphi, max(1, per_block // 16))
    panel_step = max(1, per_block // (16 * phi_step))
    total = 0.0
    for j0 in range(0, panels, panel_step):
        j = np.arange(j0, min(j0 + panel_step, panels))
        half = np.full(j.size, 1.0 / panels)
        mid = -1.0 + (2 * j + 1) / panels
        mu = (mid[:, None] + half[:, None] * x16).ravel()
        wmu = (half[:, None] * w16).ravel()
        for p0 in range(0, nphi, phi_step):
            af = array_factor(fils, f, np.arccos(mu)[:, None], ph_all[None, p0:p0 + phi_step],
                              medium)
            total += float(np.sum(np.abs(af) ** 2 * wmu[:, None])) * 2 * np.pi / nphi
    peak = np.abs(array_factor(fils, f, theta, phi, medium)) ** 2
    return float(4 * np.pi * peak / total)
