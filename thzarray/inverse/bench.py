r"""Bench settings that realise a design's delays: delay stage, glass plate, stepped mirror.

A design gives each filament a delay :math:`t_n` (s); on the bench a delay is set with

- a **delay stage** carrying a retroreflector: moving it by x lengthens the air path by
  :math:`p\,x` (p = 2 passes by default), so :math:`x = c\,t/(p\,n_{g,air})`;
- a **glass plate** of thickness d in place of the same length of air:
  :math:`d = c\,t/(n_{g,glass} - n_{g,air})` (:func:`thzarray.inverse.glass.plate_thickness`);
  the plate also adds the group delay dispersion :math:`\mathrm{GDD} = \beta_2 d`, which
  lengthens the pulse (:func:`thzarray.inverse.glass.stretched_duration`) and so lowers
  P/P_cr and changes the column (:func:`thzarray.source.laser.plasma_from_laser`, run with
  the lengthened pulse taken as unchirped; chirp-specific dynamics are not modelled). The
  changed columns are reported, not fed back into the delays;
- a **stepped (echelon) mirror**: the facet of filament n sits a depth :math:`h_n` behind the
  front facet; at incidence angle :math:`\alpha` the reflected path grows by
  :math:`2 h\cos\alpha`, so :math:`h = c\,t/(2 n_{g,air}\cos\alpha)`. For a linear ramp of
  delays the facets form a staircase of one step height.

The air's group index comes from :func:`thzarray.inverse.glass.air_group_index` (Ciddor).
Delays are taken relative to the earliest filament (its stage at 0, no glass, front facet).

Rounding and the gain it costs
------------------------------
Each device is set to a resolution r (stage step, plate thickness step, machining step),
i.e. the delay to a step :math:`q` (q = p n_g r / c for the stage,
:math:`(n_{g,glass} - n_{g,air}) r / c` for the plate, :math:`2 n_g r\cos\alpha / c` for
the mirror). Taken over many designs, the rounding error is uniform on
:math:`[-q/2, q/2]`, of mean 0 and variance

.. math:: \sigma^2 = \frac1q\int_{-q/2}^{q/2} x^2\,dx = \frac{q^2}{12}.

The tolerance model (:mod:`thzarray.array.tolerance`) with this rms as timing jitter gives,
for N equal columns in phase at the target, the expected delivered fraction at angular
frequency :math:`\omega`

.. math:: \frac{\langle G\rangle}{G_0} = e^{-\omega^2\sigma^2} + \frac{1 - e^{-\omega^2\sigma^2}}{N},

averaged over the band with the weights of :mod:`thzarray.base.band` (``expected_gain``).
The exact mean for the uniform law replaces :math:`e^{-\omega^2\sigma^2}` by
:math:`\mathrm{sinc}^2(\omega q/2)`; with :math:`a = \omega q/2` the two differ by
:math:`a^4/90 + O(a^6)`, below 1e-4 while :math:`\omega q < 0.6`. The rounding errors of a
given design are known exactly, so the sheet also gives the delivered fraction with them
(``realised_gain``):
:math:`\sum_j \Delta f_j w_j |\sum_n e^{i\omega_j e_n}|^2 / (N^2 \sum_j \Delta f_j w_j)`,
exact for identical columns toward a direction (their fields there differ only by the
phases the steering cancels).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c

from thzarray.air.medium import Medium
from thzarray.base.band import band_weights, check_band
from thzarray.base.checks import as_float_array, check_count, check_scalar
from thzarray.inverse.glass import (
    Glass,
    air_group_index,
    as_glass,
    group_delay_dispersion,
    group_index,
    plate_thickness,
    stretched_duration,
)
from thzarray.inverse.split import beam_column, check_pulse
from thzarray.source.laser import FilamentationModel, Pulse

__all__ = [
    "BenchSheet",
    "DelaySetting",
    "bench_sheet",
    "echelon_steps",
    "rounding_gain",
    "stage_position",
    "timing_error_gain",
]


def _round_to(value, resolution):
    return value if resolution == 0 else np.round(value / resolution) * resolution


def _check_resolution(name, value):
    return check_scalar(name, value, low=0.0, unit="m")


def _check_delays(delays):
    t = as_float_array("delays", delays, unit="s")
    if t.ndim != 1:
        raise ValueError(f"delays has shape {t.shape}; allowed: (N,) delays in s")
    return t


def _band_mean(freq, spectral_weight, of_omega) -> float:
    """Band average of ``of_omega(2 pi freq)`` with the weights of :mod:`thzarray.base.band`."""
    bw = band_weights(freq, spectral_weight)
    return float(np.sum(bw * of_omega(2 * np.pi * check_band(freq))) / np.sum(bw))


def stage_position(delay, *, wavelength=800e-9, medium: Medium | None = None,
                   passes: int = 2, resolution: float = 0.0):
    """Delay-stage travel (m) that delays a pulse by ``delay``.

    Parameters
    ----------
    delay : array_like
        Delays (s), >= 0.
    wavelength : float
        Vacuum laser wavelength (m).
    medium : Medium, optional
        The air (:func:`~thzarray.inverse.glass.air_group_index`).
    passes : int
        Times the beam crosses the travel: 2 for a retroreflector on the stage.
    resolution : float
        Stage step (m), >= 0; positions are rounded to it (0: not rounded).

    Returns
    -------
    ndarray
        Stage positions (m), shape of ``delay``.

    Notes
    -----
    .. math:: x = \\frac{c\\,t}{p\\,n_{g,air}}
    """
    t = as_float_array("delay", delay, low=0.0, unit="s")
    p = check_count("passes", passes, low=1)
    res = _check_resolution("resolution", resolution)
    return _round_to(c * t / (p * air_group_index(wavelength, medium)), res)


def echelon_steps(delays, *, wavelength=800e-9, medium: Medium | None = None,
                  incidence: float = 0.0, resolution: float = 0.0):
    """Facet depths of a stepped mirror that delays each beam by its ``delays`` entry.

    Parameters
    ----------
    delays : array_like, shape (N,)
        Delays (s), >= 0; for a linear ramp t_n = n dt the depths are n times one step.
    wavelength : float
        Vacuum laser wavelength (m).
    medium : Medium, optional
        The air.
    incidence : float
        Angle of incidence on the mirror (rad), 0 to 1.5.
    resolution : float
        Machining step of the depths (m), >= 0 (0: not rounded).

    Returns
    -------
    ndarray, shape (N,)
        Depth of each facet behind the front facet (m).

    Notes
    -----
    .. math:: h = \\frac{c\\,t}{2\\,n_{g,air}\\cos\\alpha}
    """
    t = as_float_array("delays", delays, low=0.0, unit="s")
    a = check_scalar("incidence", incidence, low=0.0, high=1.5, unit="rad")
    res = _check_resolution("resolution", resolution)
    return _round_to(c * t / (2 * air_group_index(wavelength, medium) * np.cos(a)), res)


def rounding_gain(quantum, count, freq, spectral_weight=None) -> float:
    """Expected delivered fraction when every delay is rounded to a step ``quantum``.

    Parameters
    ----------
    quantum : float
        Delay step q (s), >= 0; rounding errors uniform on [-q/2, q/2], rms q / sqrt(12).
    count : int
        Number of columns N, >= 1.
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz); one frequency gives the spectral value.
    spectral_weight : array_like, shape (F,), optional
        Energy spectrum the target receives (any scale); flat by default.

    Returns
    -------
    float

    Notes
    -----
    .. math:: \\frac{\\langle G\\rangle}{G_0} = \\frac{\\sum_j \\Delta f_j w_j
              [e^{-\\omega_j^2 q^2/12} + (1 - e^{-\\omega_j^2 q^2/12})/N]}
              {\\sum_j \\Delta f_j w_j}

    (the random-phase law of :mod:`thzarray.array.tolerance` with sigma^2 = q^2/12; module
    docstring).
    """
    q = check_scalar("quantum", quantum, low=0.0, unit="s")
    n = check_count("count", count)

    def law(w):
        kept = np.exp(-(w * q) ** 2 / 12)
        return kept + (1 - kept) / n

    return _band_mean(freq, spectral_weight, law)


def timing_error_gain(errors, freq, spectral_weight=None) -> float:
    """Delivered fraction of identical in-phase columns whose delays are off by ``errors``.

    Parameters
    ----------
    errors : array_like, shape (N,)
        Delay errors (s).
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    spectral_weight : array_like, shape (F,), optional
        Energy spectrum the target receives (any scale); flat by default.

    Returns
    -------
    float

    Notes
    -----
    .. math:: \\frac{G}{G_0} = \\frac{\\sum_j \\Delta f_j w_j
              |\\sum_n e^{i\\omega_j e_n}|^2}{N^2 \\sum_j \\Delta f_j w_j}
    """
    e = as_float_array("errors", errors, unit="s")
    if e.ndim != 1:
        raise ValueError(f"errors has shape {e.shape}; allowed: (N,) delay errors in s")
    return _band_mean(freq, spectral_weight, lambda w: np.abs(
        np.exp(1j * w[:, None] * e[None, :]).sum(axis=1)) ** 2 / e.size**2)


@dataclass(frozen=True, eq=False)
class DelaySetting:
    """How one device realises the delays, and what rounding its settings costs.

    Attributes
    ----------
    device : str
        ``"delay stage"``, ``"glass plate"`` or ``"stepped mirror"``.
    setting : ndarray, shape (N,)
        Stage position, plate thickness or facet depth (m), rounded to ``resolution``.
    resolution : float
        Step of the setting (m).
    quantum : float
        Delay of one resolution step (s).
    error : ndarray, shape (N,)
        Realised minus designed delay (s).
    expected_gain : float
        Delivered fraction expected from the rounding (:func:`rounding_gain`).
    realised_gain : float
        Delivered fraction with these errors (:func:`timing_error_gain`).
    """

    device: str
    setting: np.ndarray
    resolution: float
    quantum: float
    error: np.ndarray
    expected_gain: float
    realised_gain: float

    @property
    def rms_error(self) -> float:
        """rms of the uniform rounding error, q / sqrt(12) (s)."""
        return self.quantum / np.sqrt(12.0)


@dataclass(frozen=True, eq=False)
class BenchSheet:
    """What to set on the bench for each filament, three ways, with the error each leaves.

    Attributes
    ----------
    delays : ndarray, shape (N,)
        Designed delays relative to the earliest filament (s).
    wavelength : float
        Vacuum laser wavelength (m).
    air_group_index : float
        n_g of the air.
    stage, plate, echelon : DelaySetting
        Delay stage, glass plate and stepped mirror.
    passes : int
        Passes over the stage travel.
    glass : Glass
        Plate material; ``glass_group_index`` its n_g.
    glass_group_index : float
    gdd : ndarray, shape (N,)
        Group delay dispersion of each plate (s^2).
    duration : ndarray, shape (N,)
        Pulse FWHM after each plate (s).
    power_ratio : ndarray, shape (N,)
        P/P_cr of each beam after its plate.
    column_length, column_onset : ndarray, shape (N,)
        Column length (m; 0 without a column) and start (m; NaN without) after the plate.
    incidence : float
        Angle of incidence on the stepped mirror (rad).
    echelon_step : float
        Step height (m) when the delays, in the order given, form a linear ramp; NaN
        otherwise.
    freq : ndarray, shape (F,)
        Band of the gain figures (Hz).
    pulse : Pulse or None
        The beam's pulse before the plate (None: not given).
    """

    delays: np.ndarray
    wavelength: float
    air_group_index: float
    stage: DelaySetting
    plate: DelaySetting
    echelon: DelaySetting
    passes: int
    glass: Glass
    glass_group_index: float
    gdd: np.ndarray
    duration: np.ndarray
    power_ratio: np.ndarray
    column_length: np.ndarray
    column_onset: np.ndarray
    incidence: float
    echelon_step: float
    freq: np.ndarray
    pulse: Pulse | None

    @property
    def count(self) -> int:
        return self.delays.size


def _setting(device, setting, resolution, quantum, designed, realised, freq, weight):
    error = realised - designed
    return DelaySetting(device, setting, resolution, quantum, error,
                        rounding_gain(quantum, designed.size, freq, weight),
                        timing_error_gain(error, freq, weight))


def _ramp_step(t):
    """The step of t_n = t_0 + n dt when ``t`` is such a ramp (to 1e-9 of its span), else NaN."""
    if t.size < 2:
        return np.nan
    step = (t[-1] - t[0]) / (t.size - 1)
    span = np.ptp(t)
    if span == 0 or np.max(np.abs(t - t[0] - step * np.arange(t.size))) > 1e-9 * span:
        return np.nan
    return abs(step)


def bench_sheet(delays, pulse: Pulse | None, freq, *, spectral_weight=None,
                glass="fused_silica", medium: Medium | None = None,
                model: FilamentationModel | None = None, passes: int = 2,
                stage_resolution: float = 1e-6, thickness_resolution: float = 10e-6,
                step_resolution: float = 1e-6, incidence: float = 0.0,
                wavelength: float = 800e-9, duration: float | None = None) -> BenchSheet:
    """The bench settings that realise a design's delays, and what their rounding costs.

    Parameters
    ----------
    delays : array_like, shape (N,)
        The design's delays (s), e.g. ``design_steering(...).delays``; taken relative to
        the smallest.
    pulse : Pulse or None
        One beam's pulse (after any split) before the plate; None when only the wavelength
        (and perhaps the duration) is known: the plates' effect on P/P_cr and the column is
        then not computed (NaN).
    freq : array_like, shape (F,)
        Band of the gain figures (Hz).
    spectral_weight : array_like, shape (F,), optional
        Energy spectrum the target receives over the band (any scale); flat by default.
    glass : Glass or str
        Plate material (:data:`thzarray.inverse.glass.GLASSES`).
    medium : Medium, optional
        The air on the bench; ``Medium.air()`` at the pulse's wavelength by default.
    model : FilamentationModel, optional
    passes : int
        Passes over the stage travel (2: retroreflector).
    stage_resolution, thickness_resolution, step_resolution : float
        Steps (m) of the stage, the plate thicknesses and the mirror depths, >= 0.
    incidence : float
        Angle of incidence on the stepped mirror (rad).
    wavelength : float
        Vacuum wavelength (m) when ``pulse`` is None (else the pulse's).
    duration : float, optional
        Pulse FWHM (s) when ``pulse`` is None, for the plates' lengthening.

    Returns
    -------
    BenchSheet
    """
    t = _check_delays(delays)
    t = t - t.min()
    if pulse is None:
        wl = check_scalar("wavelength", wavelength, low=0.2e-6, high=5e-6, unit="m")
        tau0 = (np.nan if duration is None else
                check_scalar("duration", duration, low=1e-15, high=1e-9, unit="s"))
    else:
        pulse = check_pulse(pulse)
        wl, tau0 = pulse.wavelength, pulse.duration
    g = as_glass(glass)
    ng_air = air_group_index(wl, medium)
    ng_glass = float(group_index(g, wl))
    p = check_count("passes", passes, low=1)
    alpha = check_scalar("incidence", incidence, low=0.0, high=1.5, unit="rad")
    freq = check_band(freq)
    band_weights(freq, spectral_weight)  # refuse a bad weight before any device is set

    r = _check_resolution("stage_resolution", stage_resolution)
    x = stage_position(t, wavelength=wl, medium=medium, passes=p, resolution=r)
    stage = _setting("delay stage", x, r, p * ng_air * r / c, t, p * ng_air * x / c, freq,
                     spectral_weight)

    r = _check_resolution("thickness_resolution", thickness_resolution)
    d = _round_to(plate_thickness(t, g, wl, medium=medium), r)
    plate = _setting("glass plate", d, r, (ng_glass - ng_air) * r / c, t,
                     (ng_glass - ng_air) * d / c, freq, spectral_weight)

    r = _check_resolution("step_resolution", step_resolution)
    h = echelon_steps(t, wavelength=wl, medium=medium, incidence=alpha, resolution=r)
    cos2 = 2 * ng_air * np.cos(alpha)
    echelon = _setting("stepped mirror", h, r, cos2 * r / c, t, cos2 * h / c, freq,
                       spectral_weight)
    ramp = _ramp_step(t)
    step = float(_round_to(c * ramp / cos2, r)) if np.isfinite(ramp) else np.nan

    gdd = group_delay_dispersion(g, wl, d)
    tau = np.full(t.size, np.nan) if np.isnan(tau0) else stretched_duration(tau0, gdd)
    ratio, length, onset = np.empty(t.size), np.zeros(t.size), np.full(t.size, np.nan)
    if pulse is None:
        nan = np.full(t.size, np.nan)
        return BenchSheet(t, wl, ng_air, stage, plate, echelon, p, g, ng_glass, gdd, tau, nan,
                          nan, nan, alpha, step, freq, None)
    model = FilamentationModel() if model is None else model
    p_cr = model.critical_power(wl)
    for i, tau_i in enumerate(tau):
        beam = pulse.replace(duration=float(tau_i))
        ratio[i] = beam.peak_power / p_cr
        made = beam_column(beam, model)
        if made is not None:
            length[i], onset[i] = made[2].length, made[2].onset
    return BenchSheet(t, wl, ng_air, stage, plate, echelon, p, g, ng_glass, gdd, tau, ratio,
                      length, onset, alpha, step, freq, pulse)
