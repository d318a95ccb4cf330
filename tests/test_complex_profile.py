"""Complex longitudinal profiles: a source whose phase varies along the column."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from radiation_quad import far_field_quad, near_field_quad
from scipy.constants import c
from scipy.integrate import quad
from scipy.interpolate import CubicSpline, PchipInterpolator

from thzarray import Filament, Medium, far_field
from thzarray.array.steering import steering_delays
from thzarray.array.targets import Direction, target_fields
from thzarray.field import _profile_kernels as _kernels
from thzarray.field.nearfield import fields_at

HUMID = Medium.air(relative_humidity=0.5)
# a two-colour-like local photocurrent: sin(phi0 + 2 pi s / L_d) under a smooth envelope
L_D = 0.012


def two_colour(s):
    return np.sin(0.4 + 2 * np.pi * s / L_D) * np.exp(-((s - 0.03) / 0.02) ** 2) + 0.2j * s / 0.06


def _peak(fil, freq, medium):
    theta = np.linspace(0, np.pi, 8001)
    return np.abs(far_field(fil, freq, theta, 0.0, medium).cartesian).max()


def test_complex_callable_profile_matches_quad(rng):
    # Spline interpolation error (5/384) h^4 max|w''''| (de Boor) of the sampled callable is
    # below 1e-9 of the peak with h = L / 1024; quad integrates the function itself.
    fil = Filament(0.06, axis=(0.1, 0.0, 1.0), delay=1e-12, profile=two_colour)
    assert fil.is_complex
    for _ in range(4):
        f, th, ph = rng.uniform(0.1e12, 1.0e12), rng.uniform(0, np.pi), rng.uniform(0, 6.28)
        ref = far_field_quad(fil, f, th, ph, HUMID)
        peak = _peak(fil, f, HUMID)
        for compiled in (True, False):
            got = far_field(fil, f, th, ph, HUMID, compiled=compiled).cartesian
            assert_allclose(got, ref, rtol=1e-8, atol=1e-9 * peak)


def test_complex_sampled_profile_is_pchip_of_each_part(rng):
    z = np.linspace(0, 0.02, 9)
    w = np.exp(1j * np.linspace(0, 5, 9)) * np.array([0, 0.4, 0.9, 1, 1, 0.8, 0.5, 0.2, 0.0])
    fil = Filament(0.02, profile=(z, w), current_direction=(0, 1, 0))
    re, im = PchipInterpolator(z, w.real), PchipInterpolator(z, w.imag)
    s = np.linspace(0, 0.02, 301)
    assert_allclose(fil.profile_values(s), re(s) + 1j * im(s), rtol=1e-13, atol=1e-15)
    for _ in range(5):
        f, th, ph = rng.uniform(0.1e12, 2e12), rng.uniform(0, np.pi), rng.uniform(0, 6.28)
        ref = far_field_quad(fil, f, th, ph, HUMID, direction=fil.current)
        got = far_field(fil, f, th, ph, HUMID).cartesian
        assert_allclose(got, ref, rtol=1e-8, atol=1e-9 * _peak(fil, f, HUMID))


def test_phase_ramp_is_a_shift_of_the_group_index():
    # w(s) = exp(i kappa s) adds kappa to u = (w/c)(n_g - n_T cos psi) in the radiation
    # integral (farfield module docstring), so at one frequency it equals a uniform column
    # whose group index is n_g + kappa c / w (derived from the integral; exact up to the
    # spline interpolation of the ramp, (5/384) (kappa h)^4 ~ 1e-8 here).
    length, kappa, freq = 0.05, 2 * np.pi / L_D, 0.4e12
    ramp = Filament(length, profile=lambda s: np.exp(1j * kappa * s))
    shifted = Filament(length, group_index=HUMID.n_group + kappa * c / (2 * np.pi * freq))
    theta = np.linspace(0, np.pi, 721)
    a, b = far_field(ramp, freq, theta, 0.0, HUMID), far_field(shifted, freq, theta, 0.0, HUMID)
    scale = np.abs(b.e_theta).max()
    assert_allclose(a.e_theta, b.e_theta, rtol=0, atol=1e-7 * scale)


def test_cubic_transform_accepts_complex_coefficients(rng):
    # A C1 complex piecewise cubic (the transform's premise): linearity
    # T(c_re + i c_im) = T(c_re) + i T(c_im), the numpy twin, and quad piece by piece.
    breaks = np.sort(np.concatenate([[0.0, 0.01], rng.uniform(0, 0.01, 6)]))
    spline = CubicSpline(breaks, rng.normal(size=8) + 1j * rng.normal(size=8))
    coefs = np.ascontiguousarray(spline.c[::-1].T)
    u = np.concatenate([rng.uniform(-3e4, 3e4, 40), [0.0, 1e-3, 150.0]])
    got = _kernels.cubic_transform(u, breaks, coefs)
    twin = _kernels.cubic_transform_numpy(u, breaks, coefs)
    parts = (_kernels.cubic_transform(u, breaks, np.ascontiguousarray(coefs.real))
             + 1j * _kernels.cubic_transform(u, breaks, np.ascontiguousarray(coefs.imag)))
    scale = np.abs(parts).max()
    assert_allclose(got, parts, rtol=1e-12, atol=1e-13 * scale)
    assert_allclose(twin, parts, rtol=1e-12, atol=1e-13 * scale)
    opts = dict(epsabs=1e-14 * scale, epsrel=1e-11, limit=200)
    for ui, gi in zip(u[-8:], got[-8:]):
        ref = sum(quad(lambda s: (spline(s) * np.exp(1j * ui * s)).real, lo, hi, **opts)[0]
                  + 1j * quad(lambda s: (spline(s) * np.exp(1j * ui * s)).imag, lo, hi, **opts)[0]
                  for lo, hi in zip(breaks[:-1], breaks[1:]))
        assert_allclose(gi, ref, rtol=1e-9, atol=1e-11 * scale)


def test_emission_centre_of_a_complex_profile_is_the_centroid_of_its_magnitude():
    fil = Filament(0.06, profile=two_colour)
    num = quad(lambda s: s * abs(two_colour(s)), 0, 0.06, limit=400, epsrel=1e-10)[0]
    den = quad(lambda s: abs(two_colour(s)), 0, 0.06, limit=400, epsrel=1e-10)[0]
    # 8-point Gauss-Legendre per piece of the spline; |w| has kinks where sin crosses zero
    # (the imaginary ramp keeps |w| > 0 but steep there): 1e-7 of the length is ample
    assert_allclose(fil.emission_centre, num / den, rtol=0, atol=1e-7 * 0.06)
    real_ramp = Filament(0.03, profile=([0.0, 0.03], [0.0, 1.0]))
    assert_allclose(real_ramp.emission_centre, 0.02, rtol=1e-14)  # int s^2 / int s = 2L/3


def test_steered_complex_profile_columns_add_to_n_squared():
    # True-time delays with any common emission centre bring identical columns in phase:
    # |2 g|^2 = 4 |g|^2 at the target (Balanis, Antenna Theory, arrays chapter).
    lay = (Filament(0.06, (0, 0, 0), profile=two_colour),
           Filament(0.06, (2e-3, 1e-3, 0), profile=two_colour))
    t = steering_delays(lay, 0.25, 0.3, HUMID)
    freq = np.linspace(0.2e12, 1.0e12, 9)
    tf = target_fields(lay, Direction(0.25, 0.3), freq, HUMID)
    assert_allclose(tf.energy(t), 4 * tf.single, rtol=1e-10)
    assert_allclose(tf.energy(t), tf.coherent_limit, rtol=1e-10)


@pytest.mark.slow
def test_complex_profile_near_field_matches_quad(rng):
    fil = Filament(0.03, start=(0.0, 0.0, 0.01), profile=two_colour)
    freq = 0.5e12
    lam = c / freq
    for compiled in (True, False):
        for _ in range(2):
            x = np.array([rng.uniform(lam / 10, 0.05), 0.0, rng.uniform(-0.02, 0.06)])
            e_ref, h_ref = near_field_quad(fil, freq, x, HUMID)
            got = fields_at(fil, freq, x, HUMID, compiled=compiled)
            assert_allclose(got.e, e_ref, rtol=1e-6, atol=1e-6 * np.abs(e_ref).max())
            assert_allclose(got.h, h_ref, rtol=1e-6, atol=1e-6 * np.abs(h_ref).max())


def test_complex_profile_validation():
    with pytest.raises(ValueError, match="imaginary part"):
        Filament(0.1, profile=([0, 0.1], [1.0, complex(0, np.nan)]))
    with pytest.raises(ValueError, match="imaginary part"):
        Filament(0.1, profile=lambda s: np.where(s > 0.05, complex(1.0, np.inf), 1.0))


def test_identical_profiled_columns_share_one_transform_and_match_quad(rng):
    # An array of identical profiled columns (two-colour-like, different starts, delays and
    # amplitudes, plus one with another profile) computes each shared profile transform once;
    # the sum must still equal the radiation integral done by quadrature for each column and
    # added (superposition: Jackson, Classical Electrodynamics, sec. 9.2, linear in J).
    other = Filament(0.06, start=(0.0, 4e-3, 0.0), profile=lambda s: 0.5 * two_colour(s))
    fils = [Filament(0.06, start=(x, y, 0.0), delay=rng.uniform(0, 1e-12),
                     amplitude=rng.uniform(0.5, 1.5), profile=two_colour)
            for x, y in ((0.0, 0.0), (2e-3, 0.0), (0.0, 2e-3), (2e-3, 2e-3))] + [other]
    for _ in range(3):
        f, th, ph = rng.uniform(0.1e12, 1.0e12), rng.uniform(0, np.pi), rng.uniform(0, 6.28)
        ref = sum(far_field_quad(fil, f, th, ph, HUMID) for fil in fils)
        peak = sum(_peak(fil, f, HUMID) for fil in fils)
        for compiled in (True, False):
            got = far_field(fils, f, th, ph, HUMID, compiled=compiled).cartesian
            assert_allclose(got, ref, rtol=1e-8, atol=1e-9 * peak)


def test_identical_profiled_columns_are_transformed_once(monkeypatch):
    # Four identical two-colour columns and one other: two transforms per set of points.
    calls = []
    original = _kernels.cubic_transform

    def counting(u, breaks, coefs):
        calls.append(u.size)
        return original(u, breaks, coefs)

    monkeypatch.setattr(_kernels, "cubic_transform", counting)
    fils = [Filament(0.06, start=(x, 0.0, 0.0), profile=two_colour) for x in (0, 1e-3, 2e-3, 3e-3)]
    fils.append(Filament(0.06, start=(0.0, 4e-3, 0.0), profile=lambda s: 0.5 * two_colour(s)))
    far_field(fils, 0.5e12, np.linspace(0, 0.3, 50), 0.0, HUMID)
    assert calls == [50, 50]
