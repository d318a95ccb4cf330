r"""Range budget: energy into a receiver versus range and humidity.

The receiver sits at range R from the origin in the direction :math:`\hat r(\theta,\phi)`,
facing the origin. Its energy is

.. math:: W(R, h) = \sum_j w_j\,A\,2n_T\varepsilon_0 c\,
          |\hat p\cdot\mathbf E_h(f_j, R\hat r)|^2\,e^{-\alpha_h(f_j) R},

with the exact finite-distance field :math:`\mathbf E_h` of
:func:`thzarray.field.nearfield.field_at` (Jackson eq. 9.18 along each column) in the
medium's air at relative humidity h (the THz index, hence the cone, changes with humidity:
ITU-R P.453, the same :class:`~thzarray.air.medium.Medium`), the power attenuation
coefficient :math:`\alpha_h` of ITU-R P.676 (:mod:`thzarray.air.absorption`) along the
range, and the receiver's weights: for a :class:`~thzarray.detect.receivers.NarrowbandReceiver`
the pass-band weights, its polarization :math:`\hat p` and its plane-wave effective area
(A, or :math:`2\pi w_0^2` for a Gaussian beam); for a
:class:`~thzarray.detect.receivers.BroadbandDetector` its response times the band weights,
its area A and the field transverse to the line of sight.

Beside it the budget gives the far-field prediction (the radiation vector of
:func:`thzarray.field.farfield.far_field` over R, :math:`\mathbf E \approx \mathbf F e^{ikR}/R`)
and its relative error at each range, so that the distance from which the far field may be
trusted is read off the same table (a column of length L is far-field only at ranges of
several L and more; :func:`thzarray.field.surfaces.far_field_departure`).

A receiver with noise settings (``nep``, ``integration_time``, ``repetition_rate``) also gets
its signal-to-noise ratio :math:`\mathrm{SNR} = W f_{rep}\sqrt{2t_{int}}/\mathrm{NEP}`
(:mod:`thzarray.detect.noise`) and the range where it falls to 1, the root of
:math:`\mathrm{SNR}(R) = 1` of the far-field energy (which decreases monotonically with R;
Brent's method in log R; trust it where ``far_field_error`` is small).
Above 1 THz a HITRAN-format line list (``lines``) supplies the absorption
(:func:`thzarray.air.refractivity.complex_index`); without it the budget uses P.676 alone.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c, epsilon_0
from scipy.optimize import brentq

from thzarray.air.absorption import attenuation_coefficient
from thzarray.air.hitran import LineList
from thzarray.air.medium import Medium
from thzarray.air.refractivity import complex_index
from thzarray.base.band import band_weights, check_band, passband_weights
from thzarray.base.checks import as_float_array, check_scalar
from thzarray.base.geometry import unit_vectors
from thzarray.detect.receivers import BroadbandDetector, NarrowbandReceiver
from thzarray.field.farfield import far_field
from thzarray.source.filament import as_filaments
from thzarray.source.plasma import Plasma

__all__ = ["RangeBudget", "range_budget"]


@dataclass(frozen=True, eq=False)
class RangeBudget:
    """Energy into a receiver on a grid of distance and humidity.

    Attributes
    ----------
    ranges : ndarray, shape (D,)
        Ranges of the receiver from the origin (m).
    relative_humidity : ndarray, shape (H,)
        Relative humidity (fraction); NaN for a vacuum medium.
    freq : ndarray, shape (F,)
        Frequencies sampling the receiver's band (Hz).
    theta, phi : float
        Direction of the receiver (rad).
    energy : ndarray, shape (H, D)
        Energy per pulse into the receiver (J; per (A s)^2 without a plasma), exact field.
    free_space_energy : ndarray, shape (H, D)
        The same without gaseous absorption.
    far_field_energy : ndarray, shape (H, D)
        The far-field prediction of ``energy``.
    far_field_error : ndarray, shape (H, D)
        ``far_field_energy / energy - 1``.
    attenuation : ndarray, shape (H, F)
        Power attenuation coefficient alpha (1/m) at each humidity and frequency.
    snr : ndarray, shape (H, D), or None
        Signal-to-noise ratio, when the receiver has noise settings.
    unit_snr_range : ndarray, shape (H,), or None
        Range (m) at which the SNR falls to 1 (inf when it stays above 1 to 1e9 m).
    """

    ranges: np.ndarray
    relative_humidity: np.ndarray
    freq: np.ndarray
    theta: float
    phi: float
    energy: np.ndarray
    free_space_energy: np.ndarray
    far_field_energy: np.ndarray
    far_field_error: np.ndarray
    attenuation: np.ndarray
    snr: np.ndarray | None = None
    unit_snr_range: np.ndarray | None = None

    @property
    def absorption_db(self) -> np.ndarray:
        """Band-averaged gaseous loss 10 log10(free_space_energy / energy) (dB), shape (H, D)."""
        return 10 * np.log10(self.free_space_energy / self.energy)


def _receiver_factor(receiver, freq, field, rhat):
    """Per-frequency A * w_j * |p.E|^2 (or |E_perp|^2 for a broadband detector), (F, ...)."""
    if isinstance(receiver, NarrowbandReceiver):
        wts = passband_weights(freq, *receiver.band)
        amp = np.abs(field @ np.asarray(receiver.polarization)) ** 2
        return receiver.effective_area * wts.reshape((-1,) + (1,) * (amp.ndim - 1)) * amp
    if isinstance(receiver, BroadbandDetector):
        wts = band_weights(freq, receiver.response_at(freq))
        transverse = field - (field @ rhat)[..., None] * rhat
        amp = np.sum(np.abs(transverse) ** 2, axis=-1)
        return receiver.area * wts.reshape((-1,) + (1,) * (amp.ndim - 1)) * amp
    raise ValueError(f"receiver = {type(receiver).__name__}; allowed: NarrowbandReceiver or "
                     "BroadbandDetector")


def _unit_snr_range(per_freq, alpha, scale):
    """Root of scale * sum(per_freq exp(-alpha R)) / R^2 = 1 in log R (m)."""
    def log_snr(log_r):
        r = np.exp(log_r)
        return np.log(scale * np.sum(per_freq * np.exp(-alpha * r)) / r**2 + 1e-300)

    lo, hi = np.log(1e-6), np.log(1e9)
    if log_snr(hi) >= 0:
        return np.inf
    if log_snr(lo) <= 0:
        return 0.0
    return float(np.exp(brentq(log_snr, lo, hi, xtol=1e-12, rtol=1e-12)))


def _alpha(freq, medium, lines):
    if lines is None:
        return attenuation_coefficient(freq, medium)
    return 4 * np.pi * freq * complex_index(freq, medium, lines).imag / c


def range_budget(filaments, receiver, freq, ranges, theta, phi=0.0,
                 medium: Medium | None = None, relative_humidity=None,
                 plasma: Plasma | None = None, lines: LineList | None = None,
                 energy_factor: float = 1.0) -> RangeBudget:
    """Energy into a receiver versus range and humidity (exact field + P.676 absorption).

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    receiver : NarrowbandReceiver or BroadbandDetector
    freq : array_like, shape (F,)
        Increasing frequencies (Hz) sampling the receiver's band (spanning a narrow-band
        receiver's pass band).
    ranges : array_like, shape (D,)
        Ranges of the receiver from the origin (m), > 0, each outside the columns.
    theta, phi : float
        Direction of the receiver from the origin (rad).
    medium : Medium, optional
        The air (temperature, pressure, laser wavelength and, unless ``relative_humidity``
        is given, humidity), from :meth:`Medium.air`; the vacuum (no absorption) by default.
    relative_humidity : array_like, shape (H,), optional
        Relative humidities (fraction, 0 to 1) at which to repeat the budget in the
        medium's air; default the medium's own.
    plasma : Plasma, optional
        Absolute current spectrum; without it energies are per (A s)^2.
    lines : LineList, optional
        A HITRAN-format line list for the absorption above 1 THz.
    energy_factor : float
        A calibration's factor k on every energy (:mod:`thzarray.detect.calibration`),
        > 0; the SNR and its unit range use the calibrated energies.

    Returns
    -------
    RangeBudget

    Notes
    -----
    .. math:: W = \\sum_j w_j A\\,2n_T\\varepsilon_0 c|\\hat p\\cdot\\mathbf E(R\\hat r)|^2
              e^{-\\alpha R}

    (module docstring), beside the far-field prediction with
    :math:`\\mathbf E = \\mathbf F e^{ikR} / R`.
    """
    from thzarray.field.nearfield import field_at

    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    f = check_band(freq, minimum=2)
    dist = as_float_array("ranges", ranges, low=0.0, low_open=True, unit="m").reshape(-1)
    th = check_scalar("theta", theta, low=0.0, high=np.pi, unit="rad")
    ph = check_scalar("phi", phi, unit="rad")
    k = check_scalar("energy_factor", energy_factor, low=0.0, low_open=True)
    if relative_humidity is None:
        media = [medium]
        rh = np.array([np.nan if medium.conditions is None
                       else medium.conditions.relative_humidity])
    else:
        rh = as_float_array("relative_humidity", relative_humidity, low=0.0,
                            high=1.0).reshape(-1)
        media = [medium.with_humidity(h) for h in rh]
    rhat = unit_vectors(th, ph)[0]
    points = dist[:, None] * rhat
    shape = (rh.size, dist.size)
    energy, free, far, alpha = (np.empty(shape), np.empty(shape), np.empty(shape),
                                np.empty((rh.size, f.size)))
    per = []
    for i, med in enumerate(media):
        scale = 2 * med.n_thz * epsilon_0 * c * k
        ff = far_field(fils, f, th, ph, med, plasma).cartesian  # (F, 3)
        far_per = scale * _receiver_factor(receiver, f, ff, rhat)  # (F,)
        per.append(far_per)
        exact = field_at(fils, f[:, None], points[None, :, :], med, plasma)  # (F, D, 3)
        exact_per = scale * _receiver_factor(receiver, f, exact, rhat)  # (F, D)
        alpha[i] = _alpha(f, med, lines)
        loss = np.exp(-alpha[i][:, None] * dist[None, :])  # (F, D)
        free[i] = exact_per.sum(axis=0)
        energy[i] = (loss * exact_per).sum(axis=0)
        far[i] = (loss * far_per[:, None]).sum(axis=0) / dist**2
    with np.errstate(divide="ignore", invalid="ignore"):
        error = np.where(energy > 0, far / energy - 1.0, 0.0)
    if receiver.nep is None:
        return RangeBudget(dist, rh, f, th, ph, energy, free, far, error, alpha)
    snr_scale = float(receiver.signal_to_noise(1.0))
    reach = np.array([_unit_snr_range(p, a, snr_scale) for p, a in zip(per, alpha)])
    return RangeBudget(dist, rh, f, th, ph, energy, free, far, error, alpha,
                       snr_scale * energy, reach)
