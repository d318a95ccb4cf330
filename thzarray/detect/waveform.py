r"""Waveforms: the field E(t) at a receiver, from the spectra the field layer computes.

Convention (the package's): :math:`E(\omega) = \int E(t)e^{i\omega t}dt`, so for a real
field, with one-sided frequencies,

.. math:: E(t) = 2\operatorname{Re}\int_0^\infty E(f)\,e^{-2\pi i f t}\,df,\qquad
          \int E(t)^2dt = \int_0^\infty 2|E(f)|^2df \quad\text{(Parseval)}.

Sampling rules (:func:`waveform_grids`): a time window of length D starting at
:math:`t_0` is periodic for a discrete transform, so the frequencies are the harmonics
:math:`f_k = k/D`, k = 1..K, with :math:`K = \lceil B D\rceil` for a bandwidth B (the
zero-frequency term of a radiated field vanishes); the times are
:math:`t_j = t_0 + jD/N`, j = 0..N-1, with N the first fast FFT length
:math:`\ge 2K + 2`, so that the step :math:`D/N < 1/(2B)` (Nyquist). Then

.. math:: E(t_j) = 2\Delta f\,\operatorname{Re}\sum_{k=1}^{K}E(f_k)e^{-2\pi i f_k t_j},
          \qquad \sum_j E(t_j)^2\,\Delta t = 2\Delta f\sum_k |E(f_k)|^2

hold exactly (discrete Parseval). A signal longer than D wraps around: choose D to hold the
pulse and the ringing of the air's lines (the water lines' amplitude decays as
:math:`e^{-2\pi\gamma t}`, 1/(2 pi gamma) of about 50 ps at 1 atm), and B to reach where the
spectrum has fallen off. A hard cut at B rings (Gibbs); :func:`waveform` rolls the spectrum
off with a raised cosine over the top ``taper`` fraction of the band instead, and returns
the rolled-off spectrum with the field, so that both obey Parseval.

Times are retarded: :math:`\tau = t - |\mathbf x|\,n_{thz}/c` at a point
:math:`\mathbf x` (``Waveform.delay``), the arrival of a wave leaving the origin at t = 0
at the P.453 phase velocity.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c
from scipy.fft import next_fast_len

from thzarray.air.hitran import LineList
from thzarray.air.medium import Medium
from thzarray.air.transmission import line_transmission
from thzarray.base.checks import as_float_array, check_scalar
from thzarray.base.geometry import angles_of
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET, check_result_fits
from thzarray.field.farfield import far_field
from thzarray.field.nearfield import field_at
from thzarray.source.filament import as_filaments
from thzarray.source.plasma import Plasma

__all__ = [
    "Waveform",
    "spectrum_to_waveform",
    "taper_weights",
    "waveform",
    "waveform_grids",
    "waveform_to_spectrum",
]

_MAX_SAMPLES = 1 << 24


def waveform_grids(duration, bandwidth, start=0.0):
    """Frequency and time grids of a time window (module docstring's sampling rules).

    Parameters
    ----------
    duration : float
        Length D of the time window (s), > 0.
    bandwidth : float
        Highest frequency B to represent (Hz), > 1/D.
    start : float
        First time t0 of the window (s).

    Returns
    -------
    freq : ndarray, shape (K,)
        k / D for k = 1..ceil(B D) (Hz).
    time : ndarray, shape (N,)
        t0 + j D / N, N the first fast FFT length >= 2K + 2 (s).
    """
    d = check_scalar("duration", duration, low=0.0, low_open=True, unit="s")
    b = check_scalar("bandwidth", bandwidth, low=1.0 / d, unit="Hz")
    t0 = check_scalar("start", start, unit="s")
    count = int(np.ceil(b * d - 1e-9))
    if count > _MAX_SAMPLES:
        raise ValueError(f"bandwidth * duration = {b * d:.4g}; allowed: at most {_MAX_SAMPLES} "
                         "frequencies (a shorter window or a smaller bandwidth)")
    n = next_fast_len(2 * count + 2)
    return np.arange(1, count + 1) / d, t0 + np.arange(n) * (d / n)


def _check_pair(freq, time):
    f = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz").reshape(-1)
    t = as_float_array("time", time, unit="s").reshape(-1)
    if f.size < 1 or t.size < 2 * f.size + 2:
        raise ValueError(f"freq and time have {f.size} and {t.size} samples; allowed: the grids "
                         "of waveform_grids (len(time) >= 2 len(freq) + 2)")
    df = f[0]
    dt = (t[-1] - t[0]) / (t.size - 1)
    if not (np.allclose(f, df * np.arange(1, f.size + 1), rtol=1e-9, atol=0)
            and np.allclose(np.diff(t), dt, rtol=1e-6, atol=0)
            and abs(dt * t.size * df - 1) < 1e-9):
        raise ValueError("freq and time are not the harmonics k/D and the samples D j/N of one "
                         "window D; allowed: the grids of waveform_grids")
    return f, t, df, dt


def spectrum_to_waveform(spectrum, freq, time):
    """Real field samples E(t_j) from one-sided spectrum samples E(f_k) (inverse transform).

    Parameters
    ----------
    spectrum : array_like, complex, shape (K, ...)
        E(f_k) (e.g. V s/m), frequency first.
    freq, time : ndarray
        The grids of :func:`waveform_grids` (Hz, s).

    Returns
    -------
    ndarray, shape (N, ...)
        E(t_j) (e.g. V/m).

    Notes
    -----
    .. math:: E(t_j) = 2\\Delta f\\,\\operatorname{Re}\\sum_{k=1}^K E(f_k) e^{-2\\pi i f_k t_j}
    """
    f, t, df, _ = _check_pair(freq, time)
    s = np.asarray(spectrum)
    if s.ndim < 1 or s.shape[0] != f.size:
        raise ValueError(f"spectrum has shape {s.shape}; allowed: (len(freq) = {f.size}, ...)")
    shifted = s * np.exp(-2j * np.pi * f * t[0]).reshape((-1,) + (1,) * (s.ndim - 1))
    padded = np.zeros((t.size,) + s.shape[1:], dtype=complex)
    padded[1:f.size + 1] = shifted
    return 2 * df * np.real(np.fft.fft(padded, axis=0))


def waveform_to_spectrum(field_, time, freq):
    """Spectrum samples E(f_k) of real field samples (the forward transform, a Riemann sum).

    Parameters
    ----------
    field_ : array_like, shape (N, ...)
        E(t_j), time first.
    time, freq : ndarray
        The grids of :func:`waveform_grids` (s, Hz).

    Returns
    -------
    ndarray, complex, shape (K, ...)

    Notes
    -----
    .. math:: E(f_k) = \\Delta t\\sum_j E(t_j)\\,e^{2\\pi i f_k t_j}

    The exact inverse of :func:`spectrum_to_waveform` on band-limited samples.
    """
    f, t, _, dt = _check_pair(freq, time)
    e = np.asarray(field_, dtype=float)
    if e.ndim < 1 or e.shape[0] != t.size:
        raise ValueError(f"field has shape {e.shape}; allowed: (len(time) = {t.size}, ...)")
    full = np.fft.ifft(e, axis=0) * t.size * dt
    phase = np.exp(2j * np.pi * f * t[0]).reshape((-1,) + (1,) * (e.ndim - 1))
    return full[1:f.size + 1] * phase


def taper_weights(freq, bandwidth, taper):
    """Raised-cosine roll-off over the top ``taper`` fraction of the band (dimensionless).

    .. math:: w(f) = 1\\ (f \\le f_1),\\quad
              \\tfrac12\\left[1 + \\cos\\frac{\\pi(f - f_1)}{B - f_1}\\right]\\ (f_1 < f \\le B),
              \\quad 0\\ (f > B),\\qquad f_1 = (1 - \\mathrm{taper})B
    """
    f = np.asarray(freq, dtype=float)
    b = check_scalar("bandwidth", bandwidth, low=0.0, low_open=True, unit="Hz")
    a = check_scalar("taper", taper, low=0.0, high=1.0)
    if a == 0:
        return np.where(f <= b, 1.0, 0.0)
    f1 = (1 - a) * b
    x = np.clip((f - f1) / (b - f1), 0.0, 1.0)
    return np.where(f > b, 0.0, 0.5 * (1 + np.cos(np.pi * x)))


@dataclass(frozen=True, eq=False)
class Waveform:
    """Field waveforms at points, with the spectra they come from.

    Attributes
    ----------
    time : ndarray, shape (N,)
        Retarded time tau = t - delay (s).
    freq : ndarray, shape (K,)
        Frequencies (Hz), the harmonics of the window.
    spectrum : ndarray, complex, shape (K,) + S + (3,)
        E(f) at the points in retarded time (V s/m), rolled off as used.
    field : ndarray, shape (N,) + S + (3,)
        E(tau) (V/m; per A s of current spectrum without a plasma: V/(m A s)).
    delay : ndarray, shape S
        ``|x| n_thz / c`` at each point (s).
    points : ndarray, shape S + (3,)
        The points (m).
    """

    time: np.ndarray
    freq: np.ndarray
    spectrum: np.ndarray
    field: np.ndarray
    delay: np.ndarray
    points: np.ndarray


def waveform(filaments, points, duration, bandwidth, medium: Medium | None = None,
             plasma: Plasma | None = None, *, start=None, lines: LineList | None = None,
             taper: float = 0.2, far: bool = False,
             memory_budget: float = DEFAULT_MEMORY_BUDGET) -> Waveform:
    """The field E(t) of filaments at points through the air, in a time window.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    points : array_like, shape S + (3,)
        Receiver points (m), away from the origin.
    duration : float
        Window length (s); with ``bandwidth`` it sets the grids (:func:`waveform_grids`).
    bandwidth : float
        Highest frequency (Hz).
    medium : Medium, optional
        The air (vacuum by default): P.453 index in the field, and the lines' absorption
        and dispersion along the straight path from the origin (:func:`line_transmission`).
    plasma : Plasma, optional
        Current spectrum; without it 1 A s at every frequency.
    start : float, optional
        Window start in retarded time (s); default -duration / 10.
    lines : LineList, optional
        A HITRAN-format list above 1 THz (or replacing P.676's lines).
    taper : float
        Fraction of the band rolled off by a raised cosine (0 for a hard cut).
    far : bool
        Far-field radiation vector F e^{ikr}/r (True) or the exact finite-distance field of
        :func:`thzarray.field.nearfield.field_at` (False, default).
    memory_budget : float
        Bytes this call may use.

    Returns
    -------
    Waveform

    Notes
    -----
    .. math:: E(\\tau) = 2\\operatorname{Re}\\sum_k \\Delta f\\,w_k\\,T_{lines}(f_k, |\\mathbf x|)
              \\,e^{-ik|\\mathbf x|}\\,\\mathbf E(f_k, \\mathbf x)\\,e^{-2\\pi i f_k\\tau}

    with the roll-off w (:func:`taper_weights`) and the finite-distance field
    :math:`\\mathbf E` (or :math:`\\mathbf F e^{ikr}/r`), :math:`k = n_{thz}\\omega/c`.
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    pts = as_float_array("points", points, unit="m")
    if pts.ndim == 0 or pts.shape[-1] != 3:
        raise ValueError(f"points has shape {pts.shape}; allowed: Cartesian points on a last "
                         "axis of size 3")
    shape = pts.shape[:-1]
    flat = pts.reshape(-1, 3)
    r = np.linalg.norm(flat, axis=-1)
    if np.any(r == 0):
        raise ValueError("points: a point at the origin; allowed: points away from the origin")
    d = check_scalar("duration", duration, low=0.0, low_open=True, unit="s")
    t0 = -0.1 * d if start is None else start
    freq, time = waveform_grids(d, bandwidth, t0)
    check_result_fits("waveform", 48 * flat.shape[0] * (freq.size + time.size), memory_budget)
    if far:
        theta, phi = angles_of(flat / r[:, None])
        ff = far_field(fils, freq[:, None], theta, phi, medium, plasma,
                       memory_budget=memory_budget)
        e = ff.cartesian / r[:, None]
    else:
        e = field_at(fils, freq[:, None], flat, medium, plasma, memory_budget=memory_budget)
        e = e * np.exp(-2j * np.pi * freq[:, None] * medium.n_thz * r / c)[..., None]
    trans = line_transmission(freq[:, None], r, medium, lines, memory_budget=memory_budget)
    spectrum = e * (trans * taper_weights(freq, bandwidth, taper)[:, None])[..., None]
    field_ = spectrum_to_waveform(spectrum, freq, time)
    return Waveform(time, freq, spectrum.reshape((freq.size,) + shape + (3,)),
                    field_.reshape((time.size,) + shape + (3,)),
                    (r * medium.n_thz / c).reshape(shape), pts)
