r"""How much of a steered layout's gain survives timing jitter and placement errors.

Error model (independent, zero-mean Gaussian, per column and per build)
-----------------------------------------------------------------------
- timing jitter of rms :math:`\sigma_t` (s) on each delay;
- transverse placement error of rms :math:`\sigma_\perp` (m) along each of the two directions
  transverse to the column's axis;
- longitudinal onset error of rms :math:`\sigma_\parallel` (m): the column starts earlier or
  later along its own axis, and the pulse that drives it reaches the moved start
  :math:`n_g\,\delta s/c` later (:math:`n_g` the column's group index).

In the far field a column moved by :math:`\delta\mathbf r` keeps its pattern and gains the
phase :math:`-k\hat r\cdot\delta\mathbf r`, so column n's error phase toward :math:`\hat r` is

.. math:: \delta_n = \omega\,\delta t_n - k\,\hat r\cdot\delta\mathbf r_{\perp n}
          + \frac{\omega}{c}\left(n_g - n_T\,\hat r\cdot\hat a_n\right)\delta s_n ,

Gaussian with variance
:math:`s_n^2 = (\omega\sigma_t)^2 + k^2\sigma_\perp^2|\hat r - (\hat r\cdot\hat a_n)\hat a_n|^2
+ (\omega/c)^2(n_g - n_T\hat r\cdot\hat a_n)^2\sigma_\parallel^2`. Near the cone the last
bracket is small: onset errors cost little.

Exact mean
----------
For independent phase errors, :math:`E|\sum_n A_n e^{i\delta_n}|^2 = |\sum_n A_n e^{-s_n^2/2}|^2
+ \sum_n |A_n|^2 (1 - e^{-s_n^2})`. With N equal in-phase terms and equal s this is the
random-phase-error law

.. math:: \frac{\langle G\rangle}{G_0} = e^{-s^2} + \frac{1 - e^{-s^2}}{N},

whose large-N limit is Ruze's (J. Ruze, Proc. IEEE 54, 633 (1966)). :func:`tolerance` draws
seeded builds and reports their spread beside this exact mean.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c

from thzarray.air.medium import Medium
from thzarray.array._trial_kernels import node_blocks, trial_energies
from thzarray.array.gain import MAX_TRIALS
from thzarray.array.targets import target_fields
from thzarray.base.checks import check_count, check_scalar
from thzarray.base.geometry import axis_frame, unit_vectors
from thzarray.source.filament import as_filaments
from thzarray.source.plasma import Plasma

__all__ = ["MAX_TRIAL_TERMS", "ToleranceResult", "max_trials", "phase_error_variance",
           "tolerance"]

MAX_TRIAL_TERMS = 3 * 10**11
"""Most terms (builds x columns x band frequencies x target nodes) one call may sum: about
5 minutes on this project's 2-core machine at the measured 1 to 1.7 ns per term."""


def max_trials(filaments, target, freq, medium: Medium | None = None) -> int:
    """Most builds :func:`tolerance` accepts for this layout, target and band: the per-call
    cap (``MAX_TRIALS``) or the work cap (:data:`MAX_TRIAL_TERMS`), whichever is lower."""
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    freq = np.atleast_1d(np.asarray(freq, dtype=float))
    nodes = target.node_count(fils, float(freq.max()), medium)
    return int(min(MAX_TRIALS, MAX_TRIAL_TERMS // (len(fils) * freq.size * nodes)))


def trials_problem(trials, filaments, target, freq, medium) -> str | None:
    """Why ``trials`` builds are too many for this layout, target and band, or None."""
    limit = max_trials(filaments, target, freq, medium)
    if trials <= limit:
        return None
    fils = as_filaments(filaments)
    freq = np.atleast_1d(np.asarray(freq, dtype=float))
    nodes = target.node_count(fils, float(freq.max()), medium)
    return (f"trials = {trials} is not allowed; allowed: at most {max(limit, 2)} for "
            f"{len(fils)} columns x {freq.size} band frequencies x {nodes} target nodes (at "
            f"most {MAX_TRIAL_TERMS:.0e} terms in all, about 5 minutes on 2 cores)")


@dataclass(frozen=True, eq=False)
class ToleranceResult:
    """Delivered gain (energy with errors / energy without) over many simulated builds.

    Attributes
    ----------
    samples : ndarray, shape (S,)
        Delivered gain of each build.
    mean, std : float
        Sample mean and standard deviation.
    standard_error : float
        std / sqrt(S).
    percentile : float
        The percentile asked for (0 to 100).
    percentile_value : float
        That percentile of the delivered gain (e.g. 10: nine builds in ten do better).
    expected : float
        Exact mean delivered gain of the error model (module docstring).
    """

    samples: np.ndarray
    mean: float
    std: float
    standard_error: float
    percentile: float
    percentile_value: float
    expected: float


def phase_error_variance(filaments, theta, phi, freq, *, timing_jitter=0.0,
                         transverse_error=0.0, longitudinal_error=0.0,
                         medium: Medium | None = None) -> np.ndarray:
    """Variance s_n^2 of each column's error phase toward (theta, phi) (rad^2).

    Parameters
    ----------
    filaments : sequence of Filament
    theta, phi : array_like
        Directions (rad), shape (J,) or scalars.
    freq : array_like, shape (F,)
        Frequencies (Hz).
    timing_jitter : float
        rms delay error (s), >= 0.
    transverse_error : float
        rms placement error along each transverse direction (m), >= 0.
    longitudinal_error : float
        rms onset error along the axis (m), >= 0.
    medium : Medium, optional

    Returns
    -------
    ndarray, shape (N, F, J)

    Notes
    -----
    .. math:: s_n^2 = (\\omega\\sigma_t)^2 + k^2\\sigma_\\perp^2|\\hat r_\\perp|^2
              + (\\omega/c)^2 (n_g - n_T\\hat r\\cdot\\hat a_n)^2\\sigma_\\parallel^2
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    st = check_scalar("timing_jitter", timing_jitter, low=0.0, unit="s")
    sp = check_scalar("transverse_error", transverse_error, low=0.0, unit="m")
    sl = check_scalar("longitudinal_error", longitudinal_error, low=0.0, unit="m")
    w = 2 * np.pi * np.atleast_1d(np.asarray(freq, float))[:, None]
    r = unit_vectors(np.atleast_1d(theta), np.atleast_1d(phi))[0]  # (J, 3)
    axes = np.array([f.axis for f in fils])  # (N, 3)
    n_group = np.array([f.group_index_in(medium) for f in fils])[:, None]
    cos_psi = axes @ r.T  # (N, J)
    trans2 = np.clip(1 - cos_psi**2, 0.0, None)
    k = w * medium.n_thz / c
    return ((w * st) ** 2 + k**2 * sp**2 * trans2[:, None, :]
            + (w / c) ** 2 * ((n_group - medium.n_thz * cos_psi) ** 2)[:, None, :] * sl**2)


def tolerance(filaments, target, freq, *, timing_jitter=0.0, transverse_error=0.0,
              longitudinal_error=0.0, trials: int = 1000, percentile: float = 10.0,
              seed: int = 0, medium: Medium | None = None, plasma: Plasma | None = None,
              spectral_weight=None) -> ToleranceResult:
    """Seeded Monte Carlo of the gain a layout delivers with timing and placement errors.

    Parameters
    ----------
    filaments : sequence of Filament
        The designed layout with its delays.
    target : Direction or Aperture
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    timing_jitter, transverse_error, longitudinal_error : float
        rms errors (s, m, m); see the module docstring.
    trials : int
        Number of simulated builds, >= 2.
    percentile : float
        Percentile of the delivered gain to report, 0 to 100.
    seed : int
        Seed of ``numpy.random.default_rng``.
    medium, plasma, spectral_weight : optional

    Returns
    -------
    ToleranceResult
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    trials = check_count("trials", trials, low=2, high=MAX_TRIALS)
    problem = trials_problem(trials, fils, target, freq, medium)
    if problem:
        raise ValueError(problem)
    pct = check_scalar("percentile", percentile, low=0.0, high=100.0)
    st = check_scalar("timing_jitter", timing_jitter, low=0.0, unit="s")
    sp = check_scalar("transverse_error", transverse_error, low=0.0, unit="m")
    sl = check_scalar("longitudinal_error", longitudinal_error, low=0.0, unit="m")
    tf = target_fields(fils, target, freq, medium, plasma, spectral_weight)
    delays = np.array([f.delay for f in fils])
    nominal = tf.energy(delays)
    if nominal <= 0:
        raise ValueError("target receives no energy from the design; allowed: a target the "
                         "layout reaches")
    th, ph, _ = target.nodes(fils, tf.omega[-1] / (2 * np.pi), medium)
    r = unit_vectors(th, ph)[0]  # (J, 3)
    axes = np.array([f.axis for f in fils])
    frames = [axis_frame(a)[:2] for a in axes]
    e1 = np.array([f[0] for f in frames])
    e2 = np.array([f[1] for f in frames])
    w = tf.omega
    n_group = np.array([f.group_index_in(medium) for f in fils])[:, None]
    slip = (n_group - medium.n_thz * (axes @ r.T))  # (N, J)
    base = np.exp(1j * w[None, :] * delays[:, None])  # (N, F)
    g = tf.g * base[:, :, None, None]
    # Extra delay per metre of error toward each node (module docstring of _trial_kernels).
    u = -(medium.n_thz / c) * (e1 @ r.T)
    v = -(medium.n_thz / c) * (e2 @ r.T)
    slip_time = slip / c
    blocks = node_blocks(g, u, v, slip_time)  # once for every batch of builds
    rng = np.random.default_rng(seed)
    samples = np.empty(trials)
    # Builds per call: their errors take 4 x 8 bytes per column, about 32 MiB at most.
    step = max(32, (1 << 20) // len(fils))
    for i0 in range(0, trials, step):
        n = min(step, trials - i0)
        dt = st * rng.standard_normal((n, len(fils)))
        du = sp * rng.standard_normal((n, len(fils)))
        dv = sp * rng.standard_normal((n, len(fils)))
        ds = sl * rng.standard_normal((n, len(fils)))
        samples[i0:i0 + n] = trial_energies(g, w, u, v, slip_time, dt, du, dv, ds,
                                            blocks=blocks) / nominal
    var = phase_error_variance(fils, th, ph, w / (2 * np.pi), timing_jitter=st,
                               transverse_error=sp, longitudinal_error=sl, medium=medium)
    mean_phasor = np.exp(-0.5 * var)[..., None]  # (N, F, J, 1)
    coherent = np.sum(np.abs(np.sum(g * mean_phasor, axis=0)) ** 2)
    spread = np.sum(np.abs(g) ** 2 * (1 - mean_phasor**2))
    expected = float((coherent + spread) / nominal)
    return ToleranceResult(samples, float(samples.mean()), float(samples.std(ddof=1)),
                           float(samples.std(ddof=1) / np.sqrt(trials)), pct,
                           float(np.percentile(samples, pct)), expected)
