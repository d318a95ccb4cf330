r"""The steering designer: delays that maximise the band energy into a target.

:func:`design_steering` maximises the band energy into a target (direction or receiver,
:mod:`thzarray.array.targets`) over the delays with L-BFGS-B and the analytic gradient of
:meth:`thzarray.array.targets.TargetFields.energy_and_gradient`, within ``0 <= t_n <= max_delay``,
optionally trying several azimuths of the cone, and compares the result with plain
true-time steering.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize

from thzarray.air.medium import Medium
from thzarray.array.beam import SteeringReport, steering_report
from thzarray.array.layouts import with_delays
from thzarray.array.steering import steering_delays
from thzarray.array.targets import check_target, target_fields
from thzarray.base.band import band_weights, check_band
from thzarray.base.checks import as_float_array, check_scalar
from thzarray.source.filament import as_filaments
from thzarray.source.plasma import Plasma

__all__ = ["SteeringDesign", "design_steering"]


@dataclass(frozen=True, eq=False)
class SteeringDesign:
    """Result of :func:`design_steering`.

    Attributes
    ----------
    delays : ndarray, shape (N,)
        Designed delays (s), smallest 0.
    target : Direction or Aperture
        The target designed for (its azimuth is the best of those tried).
    energy : float
        Band energy into the target with ``delays``.
    plain_delays : ndarray, shape (N,)
        True-time steering delays toward the same target.
    plain_energy : float
        Band energy with ``plain_delays``.
    coherent_limit : float
        The most any delays could deliver (see :mod:`thzarray.array.targets`).
    azimuths, azimuth_energies : ndarray, shape (A,)
        Azimuths tried (rad) and the designed energy at each.
    converged : bool
    message : str
        The optimiser's message.
    report, plain_report : SteeringReport
        Beam metrics of the design and of plain steering.
    """

    delays: np.ndarray
    target: object
    energy: float
    plain_delays: np.ndarray
    plain_energy: float
    coherent_limit: float
    azimuths: np.ndarray
    azimuth_energies: np.ndarray
    converged: bool
    message: str
    report: SteeringReport
    plain_report: SteeringReport

    @property
    def gain_over_plain(self) -> float:
        return self.energy / self.plain_energy if self.plain_energy > 0 else np.inf


def _optimise(tf, plain, bw, freq, max_delay):
    omega_c = 2 * np.pi * float(np.sum(bw * freq) / np.sum(bw))
    e0 = tf.coherent_limit
    if e0 <= 0:
        return plain, 0.0, True, "no energy reaches the target"
    starts = []
    if max_delay is None or np.ptp(plain) <= max_delay:
        starts.append(plain)
    if max_delay is not None:
        period = 2 * np.pi / omega_c
        if period <= max_delay:
            folded = np.mod(plain, period)
            starts.append(folded - folded.min())
        starts.append(np.clip(plain, 0.0, max_delay))
        if np.ptp(plain) > max_delay:
            starts.append(plain * (max_delay / np.ptp(plain)))  # a shallower steer that fits
    bounds = None if max_delay is None else [(0.0, max_delay * omega_c)] * tf.count

    def objective(x):
        e, g = tf.energy_and_gradient(x / omega_c)
        return -e / e0, -g / (e0 * omega_c)

    best = None
    for s in starts:
        res = minimize(objective, s * omega_c, jac=True, method="L-BFGS-B", bounds=bounds,
                       options=dict(ftol=1e-15, gtol=1e-12, maxiter=1000))
        if best is None or res.fun < best.fun:
            best = res
    d = best.x / omega_c
    d = d - d.min()
    return d, tf.energy(d), bool(best.success), str(best.message)


def design_steering(filaments, target, freq, *, max_delay=None, azimuths=None,
                    medium: Medium | None = None, plasma: Plasma | None = None, spectral_weight=None,
                    sky_theta=None, sky_phi=None) -> SteeringDesign:
    """Delays that maximise the band energy into a target, compared with plain steering.

    Parameters
    ----------
    filaments : sequence of Filament
        The layout (its own delays are ignored).
    target : Direction or Aperture
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    max_delay : float, optional
        Largest delay the hardware can realise (s); delays are kept in [0, max_delay].
    azimuths : array_like, optional
        Azimuths (rad) at which the target may sit on the cone (its polar angle, distance and
        radius kept); the best is chosen. Default: the target's own azimuth.
    medium, plasma, spectral_weight : optional
    sky_theta, sky_phi : array_like, optional
        Sky grid for the reports (see :func:`steering_report`).

    Returns
    -------
    SteeringDesign

    Notes
    -----
    Maximises :math:`W(t) = \\sum |\\sum_n g_n e^{i\\omega t_n}|^2` (:mod:`thzarray.array.targets`) by
    L-BFGS-B with the analytic gradient, in the scaled variables :math:`\\omega_c t_n`
    (:math:`\\omega_c` the band's weighted mean), from the plain steering delays and, with a
    delay limit, from them folded into one period at :math:`\\omega_c`, clipped to the limit
    and scaled down to fit it; the best optimum is kept.
    """
    fils = as_filaments(filaments)
    target = check_target(target)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, spectral_weight)
    if max_delay is not None:
        max_delay = check_scalar("max_delay", max_delay, low=0.0, low_open=True, unit="s")
    az = (np.array([target.phi]) if azimuths is None
          else np.atleast_1d(as_float_array("azimuths", azimuths, unit="rad")))
    results = []
    for a in az:
        tgt = target.replace(phi=float(a))
        tf = target_fields(fils, tgt, freq, medium, plasma, spectral_weight)
        plain = steering_delays(fils, tgt.theta, tgt.phi, medium)
        d, e, ok, msg = _optimise(tf, plain, bw, freq, max_delay)
        results.append((e, tgt, tf, plain, d, ok, msg))
    energies = np.array([r[0] for r in results])
    e, tgt, tf, plain, d, ok, msg = results[int(np.argmax(energies))]
    kw = dict(sky_theta=sky_theta, sky_phi=sky_phi)
    report = steering_report(with_delays(fils, d), tgt, freq, medium, plasma, spectral_weight, **kw)
    plain_report = steering_report(with_delays(fils, plain), tgt, freq, medium, plasma, spectral_weight,
                                   **kw)
    return SteeringDesign(d, tgt, e, plain, tf.energy(plain), tf.coherent_limit, az, energies,
                          ok, msg, report, plain_report)
