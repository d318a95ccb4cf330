r"""What a time-domain setup shows at several ranges: waveform, electro-optic trace, spectrum.

For a receiver in the direction :math:`(\theta, \phi)` at ranges :math:`R_i` from the
origin, in the far field of the layout, the field spectrum along the unit vector
:math:`\hat p` in retarded time :math:`\tau = t - R n_{thz}/c` is

.. math:: E_i(f) = w(f)\,\frac{\hat p\cdot\mathbf F(f, \hat r)}{R_i}\,T_{lines}(f, R_i),

with the radiation vector :math:`\mathbf F` of :func:`thzarray.field.farfield.far_field`
(the plasma's current spectrum included), the lines' transmission of
:func:`thzarray.air.transmission.line_transmission` (absorption and dispersion of every
line, P.453 phase removed) and the roll-off w of
:func:`thzarray.detect.waveform.taper_weights`. The waveform, the electro-optic trace
(:func:`thzarray.detect.electrooptic.eo_trace`) and the spectrum follow on the grids of
:func:`thzarray.detect.waveform.waveform_grids`. Through humid air the water lines
(0.557, 0.752, 0.988 THz, ...) absorb a band each and, causally, ring after the main pulse
(the free induction decay of the molecules); the ringing grows with humidity and range.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c

from thzarray.air.hitran import LineList
from thzarray.air.medium import Medium
from thzarray.air.transmission import line_transmission
from thzarray.base.checks import as_float_array, check_scalar, unit_vector
from thzarray.base.geometry import unit_vectors
from thzarray.detect.electrooptic import ZNTE, EOCrystal, eo_response, eo_trace
from thzarray.detect.waveform import spectrum_to_waveform, taper_weights, waveform_grids
from thzarray.field.farfield import far_field
from thzarray.source.filament import as_filaments
from thzarray.source.plasma import Plasma

__all__ = ["RangeWaveforms", "range_waveforms", "ringing_fraction"]


@dataclass(frozen=True, eq=False)
class RangeWaveforms:
    """Waveforms, electro-optic traces and spectra at several ranges (arrays only).

    Attributes
    ----------
    distance : ndarray, shape (D,)
        Ranges (m).
    time : ndarray, shape (N,)
        Retarded time tau = t - R n_thz / c (s).
    freq : ndarray, shape (K,)
        Frequencies (Hz).
    field : ndarray, shape (D, N)
        Field along the polarization (V/m; per A s without a plasma).
    spectrum : ndarray, complex, shape (D, K)
        Its spectrum (V s/m), rolled off as used.
    eo_trace : ndarray, shape (D, N)
        Probe retardation (rad).
    eo_spectrum : ndarray, complex, shape (D, K)
        Spectrum of the detected field, R(f) E(f) (V s/m).
    delay : ndarray, shape (D,)
        R n_thz / c (s): add to ``time`` for the time since the pulse left the origin.
    """

    distance: np.ndarray
    time: np.ndarray
    freq: np.ndarray
    field: np.ndarray
    spectrum: np.ndarray
    eo_trace: np.ndarray
    eo_spectrum: np.ndarray
    delay: np.ndarray


def range_waveforms(filaments, distance, theta, phi=0.0, *, duration, bandwidth,
                    medium: Medium | None = None, plasma: Plasma | None = None,
                    crystal: EOCrystal = ZNTE, thickness=1e-3, probe_wavelength=800e-9,
                    probe_duration=0.0, polarization=None, lines: LineList | None = None,
                    start=None, taper: float = 0.2) -> RangeWaveforms:
    """Waveform, electro-optic trace and spectrum at each range in one direction.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    distance : array_like, shape (D,)
        Ranges from the origin (m), > 0, in the far field of the layout.
    theta, phi : float
        Direction of the receiver (rad).
    duration, bandwidth : float
        Time window (s) and highest frequency (Hz); grids by :func:`waveform_grids`.
    medium : Medium, optional
        The air (vacuum by default).
    plasma : Plasma, optional
        Current spectrum (1 A s without it).
    crystal, thickness, probe_wavelength, probe_duration
        The electro-optic detector (:func:`thzarray.detect.electrooptic.eo_response`).
    polarization : 3-sequence of float, optional
        Field component recorded (normalised); default the polar unit vector theta-hat of
        the direction, along which a single column's field points.
    lines : LineList, optional
        A HITRAN-format list above 1 THz.
    start : float, optional
        Window start in retarded time (s); default -duration / 10.
    taper : float
        Roll-off fraction of the band (:func:`taper_weights`).

    Returns
    -------
    RangeWaveforms

    Notes
    -----
    .. math:: E_i(f) = w(f)\\,\\hat p\\cdot\\mathbf F(f,\\hat r)\\,T_{lines}(f, R_i)/R_i

    (module docstring).
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    r = as_float_array("distance", distance, low=0.0, low_open=True, unit="m").reshape(-1)
    th = check_scalar("theta", theta, low=0.0, high=np.pi, unit="rad")
    ph = check_scalar("phi", phi, unit="rad")
    d = check_scalar("duration", duration, low=0.0, low_open=True, unit="s")
    freq, time = waveform_grids(d, bandwidth, -0.1 * d if start is None else start)
    p = unit_vectors(th, ph)[1] if polarization is None else unit_vector("polarization",
                                                                           polarization)
    ff = far_field(fils, freq, th, ph, medium, plasma)
    along = (ff.cartesian @ p) * taper_weights(freq, bandwidth, taper)
    trans = line_transmission(freq[None, :], r[:, None], medium, lines)
    spectrum = along[None, :] * trans / r[:, None]
    field_ = spectrum_to_waveform(spectrum.T, freq, time).T
    trace = eo_trace(spectrum.T, freq, time, crystal, thickness, probe_wavelength,
                     probe_duration).T
    response = eo_response(freq, crystal, thickness, probe_wavelength, probe_duration)
    return RangeWaveforms(r, time, freq, field_, spectrum, trace, spectrum * response,
                          r * medium.n_thz / c)


def ringing_fraction(time, field_, after):
    """Share of a waveform's energy arriving later than a given time.

    Parameters
    ----------
    time : array_like, shape (N,)
        Sample times (s), uniform.
    field_ : array_like, shape (..., N)
        Waveforms, time last.
    after : float
        Time after which energy counts as ringing (s): the end of the main pulse plus a
        margin (a column of length L seen at theta sends a pulse about
        L (n_g - n cos theta) / c long).

    Returns
    -------
    ndarray, shape ``field_.shape[:-1]``
        :math:`\\int_{after}^{\\infty} E^2 dt / \\int E^2 dt` (dimensionless).
    """
    t = as_float_array("time", time, unit="s").reshape(-1)
    e = np.asarray(field_, dtype=float)
    if e.shape[-1] != t.size:
        raise ValueError(f"field has shape {e.shape}; allowed: time last, {t.size} samples")
    late = t > check_scalar("after", after, unit="s")
    energy = e**2
    return np.sum(energy * late, axis=-1) / np.sum(energy, axis=-1)
