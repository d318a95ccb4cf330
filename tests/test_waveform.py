"""Waveforms: sampling rules, the transform pair, Parseval, fields at receivers."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import integrate
from scipy.constants import c

from thzarray import Filament, Medium, Plasma
from thzarray.detect.waveform import (
    spectrum_to_waveform,
    taper_weights,
    waveform,
    waveform_grids,
    waveform_to_spectrum,
)
from thzarray.field.farfield import far_field


def test_grids_follow_the_sampling_rules():
    """Harmonics k/D up to ceil(B D), step D/N with N >= 2K + 2 (Nyquist: 1/(2 dt) > B)."""
    freq, time = waveform_grids(100e-12, 2.05e12, start=-5e-12)
    assert freq.size == 205 and freq[0] == pytest.approx(1e10) and freq[-1] >= 2.05e12 - 1
    dt = time[1] - time[0]
    assert time.size >= 2 * freq.size + 2 and 1 / (2 * dt) > freq[-1]
    assert_allclose(time.size * dt, 100e-12, rtol=1e-12)
    assert time[0] == -5e-12
    with pytest.raises(ValueError, match="bandwidth"):
        waveform_grids(1e-12, 1e9)


def test_gaussian_derivative_closed_form_and_parseval():
    """E(t) = s d/dt exp(-(t - t0)^2 / (2 s^2)) has, with the exp(+iwt) kernel, the transform
    E(f) = -i w s^2 sqrt(2 pi) exp(-(w s)^2 / 2 + i w t0) (derivative rule and the Gaussian
    pair; checked here against scipy quad); the discrete pair reproduces E(t), and Parseval
    holds with int E^2 dt = s sqrt(pi) / 2 (closed form), to 1e-10."""
    s, t0 = 0.3e-12, 4e-12

    def e_t(t):
        return -(t - t0) / s * np.exp(-((t - t0) ** 2) / (2 * s * s))

    def e_f(f):
        w = 2 * np.pi * f
        return -1j * w * s * s * np.sqrt(2 * np.pi) * np.exp(-(w * s) ** 2 / 2 + 1j * w * t0)

    f1 = 0.7e12
    opts = dict(limit=400, epsabs=0.0, epsrel=1e-12, points=[t0])
    re = integrate.quad(lambda t: e_t(t) * np.cos(2 * np.pi * f1 * t), 0, 8e-12, **opts)[0]
    im = integrate.quad(lambda t: e_t(t) * np.sin(2 * np.pi * f1 * t), 0, 8e-12, **opts)[0]
    assert_allclose(re + 1j * im, e_f(f1), rtol=1e-8)
    freq, time = waveform_grids(20e-12, 5e12)
    field = spectrum_to_waveform(e_f(freq), freq, time)
    assert_allclose(field, e_t(time), rtol=0, atol=1e-10)
    dt, df = time[1] - time[0], freq[0]
    energy_t = np.sum(field**2) * dt
    assert_allclose(energy_t, 2 * df * np.sum(np.abs(e_f(freq)) ** 2), rtol=1e-12)
    assert_allclose(energy_t, s * np.sqrt(np.pi) / 2, rtol=1e-10)
    assert_allclose(waveform_to_spectrum(field, time, freq), e_f(freq), rtol=0,
                    atol=1e-12 * np.max(np.abs(e_f(freq))))


def test_taper_is_a_raised_cosine():
    f = np.array([0.0, 0.79, 0.8, 0.9, 1.0, 1.1])
    w = taper_weights(f, 1.0, 0.2)
    assert_allclose(w, [1, 1, 1, 0.5, 0, 0], atol=1e-15)  # cos(pi/2) = 0 at mid-roll-off


@pytest.fixture(scope="module")
def scene():
    fil = Filament(0.3, start=(0.0, 0.0, -0.15))
    plasma = Plasma(1e23, 2e12)
    return fil, plasma


def test_far_waveform_is_the_radiation_vector_over_r_in_vacuum(scene):
    """In vacuum E(f) = F e^{ikr}/r (far_field's definition), so in retarded time the spectrum
    is F/r times the roll-off; Parseval between the returned field and spectrum (package
    convention int E^2 dt = int 2|E(f)|^2 df) holds to 1e-12 (discrete Parseval)."""
    fil, plasma = scene
    th = 0.12
    pts = np.array([[np.sin(th), 0.0, np.cos(th)]]) * np.array([[5.0], [20.0]])
    w = waveform(fil, pts, 200e-12, 1.5e12, None, plasma, far=True, taper=0.25)
    ff = far_field(fil, w.freq, th, 0.0, None, plasma).cartesian
    wts = taper_weights(w.freq, 1.5e12, 0.25)
    assert_allclose(w.spectrum[:, 1], ff * wts[:, None] / 20.0, rtol=1e-10)
    assert_allclose(w.delay, [5.0 / c, 20.0 / c], rtol=1e-15)
    dt, df = w.time[1] - w.time[0], w.freq[0]
    assert_allclose(np.sum(w.field**2, axis=(0, 2)) * dt,
                    2 * df * np.sum(np.abs(w.spectrum) ** 2, axis=(0, 2)), rtol=1e-12)
    # inverse-square: the waveform at 20 m is the one at 5 m times 5/20 (vacuum, far field).
    assert_allclose(w.field[:, 1], w.field[:, 0] * 0.25, rtol=0, atol=1e-12 * np.abs(w.field).max())


def test_near_waveform_approaches_far_waveform(scene):
    """At 30 m from a 0.3 m column the exact line integral (field_at) and the far field
    differ by the Fresnel phase k L^2 sin^2(theta) / (8 R) and 1/(kR) terms: a few percent at
    1 THz (bound computed from the highest frequency)."""
    fil, plasma = scene
    th, r = 0.2, 30.0
    pt = r * np.array([np.sin(th), 0.0, np.cos(th)])
    near = waveform(fil, pt, 100e-12, 1e12, Medium.air(15.0, 101325.0, 0.0), plasma)
    far = waveform(fil, pt, 100e-12, 1e12, Medium.air(15.0, 101325.0, 0.0), plasma, far=True)
    k = 2 * np.pi * 1e12 / c
    bound = k * 0.3**2 * np.sin(th) ** 2 / (8 * r) + 1 / (k * r)
    err = np.linalg.norm(near.field - far.field) / np.linalg.norm(far.field)
    assert err < bound


def test_bad_points(scene):
    fil, plasma = scene
    with pytest.raises(ValueError, match="origin"):
        waveform(fil, [0.0, 0.0, 0.0], 1e-11, 1e12, far=True)
    with pytest.raises(ValueError, match="points"):
        waveform(fil, [1.0, 2.0], 1e-11, 1e12)
    with pytest.raises(ValueError, match="time"):
        spectrum_to_waveform(np.ones(3), np.array([1.0, 2.0, 3.0]), np.arange(4.0))
