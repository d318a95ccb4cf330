r"""Detector noise: signal-to-noise ratio of a pulse train and of an electro-optic trace.

Energy detectors (pyroelectric, Golay cell, bolometer, heterodyne receiver) are rated by
their noise-equivalent power NEP (W/sqrt(Hz)): the signal power whose SNR is 1 in a 1 Hz
post-detection bandwidth. A pulse train of energy W per pulse at repetition rate
:math:`f_{rep}` brings the mean power :math:`P = W f_{rep}`; integrated over a time
:math:`t_{int}` (noise-equivalent bandwidth :math:`\Delta f = 1/(2t_{int})` of a uniform
average over :math:`t_{int}`; common practice, no source)

.. math:: \mathrm{SNR} = \frac{W f_{rep}}{\mathrm{NEP}\sqrt{\Delta f}}
          = \frac{W f_{rep}\sqrt{2 t_{int}}}{\mathrm{NEP}} .

Electro-optic sampling with balanced detection reads :math:`\Delta I/I = \Gamma` per probe
pulse; its floor is the probe's shot noise, :math:`\delta\Gamma = 1/\sqrt{N_e}` per pulse
with :math:`N_e = \eta\,E_{probe}\lambda/(hc)` photoelectrons (common practice, no source),
averaged over :math:`f_{rep}t_{int}` pulses per delay point:

.. math:: \mathrm{SNR}_{EO} = |\Gamma|\,\sqrt{N_e\,f_{rep}\,t_{int}} .
"""

from __future__ import annotations

import numpy as np
from scipy.constants import c, h

from thzarray.base.checks import as_float_array, check_scalar

__all__ = ["check_noise", "eo_signal_to_noise", "signal_to_noise"]


# Physical bounds that keep every signal-to-noise ratio finite: NEP from 1e-30 to 1 W/Hz^0.5,
# averaging up to 1e6 s, repetition rates up to 1 GHz, pulse energies up to 1e3 J.
NEP_RANGE = (1e-30, 1.0)
MAX_INTEGRATION_TIME = 1e6
MAX_REPETITION_RATE = 1e9
MAX_PULSE_ENERGY = 1e3


def check_noise(nep, integration_time, repetition_rate):
    """Validate a detector's noise settings: all three given, or none (returns them).

    Parameters
    ----------
    nep : float or None
        Noise-equivalent power (W/sqrt(Hz)), NEP_RANGE (1e-30 to 1).
    integration_time : float or None
        Averaging time (s), > 0 and <= MAX_INTEGRATION_TIME (1e6).
    repetition_rate : float or None
        Pulse repetition rate of the source the detector records (Hz), > 0 and <= 1e9.
    """
    given = [v is not None for v in (nep, integration_time, repetition_rate)]
    if not any(given):
        return None, None, None
    if not all(given):
        raise ValueError(f"nep = {nep!r}, integration_time = {integration_time!r}, "
                         f"repetition_rate = {repetition_rate!r}; allowed: all three or none")
    return (check_scalar("nep", nep, low=NEP_RANGE[0], high=NEP_RANGE[1], unit="W/Hz^0.5"),
            check_scalar("integration_time", integration_time, low=0.0, low_open=True,
                         high=MAX_INTEGRATION_TIME, unit="s"),
            check_scalar("repetition_rate", repetition_rate, low=0.0, low_open=True,
                         high=MAX_REPETITION_RATE, unit="Hz"))


def signal_to_noise(energy, nep, integration_time, repetition_rate):
    """SNR of a detector recording a pulse train of a given energy per pulse.

    Parameters
    ----------
    energy : array_like
        Energy per pulse into the detector (J), 0 to MAX_PULSE_ENERGY (1e3).
    nep : float
        Noise-equivalent power (W/sqrt(Hz)).
    integration_time : float
        Averaging time (s).
    repetition_rate : float
        Pulses per second (Hz).

    Returns
    -------
    ndarray
        SNR (dimensionless), shape of ``energy``.

    Notes
    -----
    .. math:: \\mathrm{SNR} = W f_{rep}\\sqrt{2t_{int}}/\\mathrm{NEP}
    """
    w = as_float_array("energy", energy, low=0.0, high=MAX_PULSE_ENERGY, unit="J")
    nep, t_int, f_rep = check_noise(nep, integration_time, repetition_rate)
    if nep is None:
        raise ValueError("nep = None; allowed: a noise-equivalent power > 0 W/Hz^0.5")
    return w * f_rep * np.sqrt(2 * t_int) / nep


def eo_signal_to_noise(retardation, probe_energy, probe_wavelength, integration_time,
                       repetition_rate, quantum_efficiency=0.8):
    """Shot-noise-limited SNR of an electro-optic trace at each delay.

    Parameters
    ----------
    retardation : array_like
        Probe retardation Gamma (rad), e.g. from :func:`thzarray.detect.electrooptic.eo_trace`.
    probe_energy : float
        Probe energy per pulse on the detectors (J), > 0.
    probe_wavelength : float
        Probe vacuum wavelength (m), > 0.
    integration_time : float
        Averaging time per delay point (s), > 0.
    repetition_rate : float
        Probe pulses per second (Hz), > 0.
    quantum_efficiency : float
        Photodiode quantum efficiency, 0 to 1 (default 0.8, common practice, no source).

    Returns
    -------
    ndarray
        SNR, shape of ``retardation``.

    Notes
    -----
    .. math:: \\mathrm{SNR} = |\\Gamma|\\sqrt{\\eta E_{probe}\\lambda f_{rep}t_{int}/(hc)}
    """
    g = as_float_array("retardation", retardation, unit="rad")
    e = check_scalar("probe_energy", probe_energy, low=0.0, low_open=True,
                     high=MAX_PULSE_ENERGY, unit="J")
    lam = check_scalar("probe_wavelength", probe_wavelength, low=1e-7, high=2e-5, unit="m")
    t = check_scalar("integration_time", integration_time, low=0.0, low_open=True,
                     high=MAX_INTEGRATION_TIME, unit="s")
    f = check_scalar("repetition_rate", repetition_rate, low=0.0, low_open=True,
                     high=MAX_REPETITION_RATE, unit="Hz")
    eta = check_scalar("quantum_efficiency", quantum_efficiency, low=0.0, low_open=True,
                       high=1.0)
    electrons = eta * e * lam / (h * c)
    return np.abs(g) * np.sqrt(electrons * f * t)
