import numpy as np
import pytest
from numpy.testing import assert_allclose

from thzarray import Medium, far_field
from thzarray.array.layouts import grid, with_delays
from thzarray.array.maps import frequency_map, sky_grid, sky_map
from thzarray.array.steering import steering_delays

HUMID = Medium.air(relative_humidity=0.5)


def test_sky_map_is_the_trapezoid_band_sum():
    # dW/dOmega = int d2W/(df dOmega) df (trapezoid over the samples; common practice).
    lay = grid((3, 2), 1.5e-3, 0.03, delay=np.linspace(0, 1e-12, 6))
    freq = np.array([0.2e12, 0.3e12, 0.45e12, 0.5e12])
    theta = np.linspace(0, 0.6, 23)
    phi = np.linspace(0, 2 * np.pi, 17, endpoint=False)
    sm = sky_map(lay, theta, phi, freq, HUMID)
    ff = far_field(lay, freq[:, None, None], theta[:, None], phi, HUMID)
    ref = np.trapezoid(ff.energy_density, freq, axis=0)
    assert sm.energy.shape == (23, 17)
    assert_allclose(sm.energy, ref, rtol=1e-12, atol=1e-12 * ref.max())
    assert sm.relative_db().max() == 0.0
    assert sm.relative_db(-30.0).min() >= -30.0


def test_sky_map_peaks_near_steered_target_on_the_cone():
    # Steering onto the cone itself: the band pattern's peak sits at the target within the
    # grid step (common practice, no source).
    lay = grid((4, 4), 1.5e-3, 0.03)
    freq = np.linspace(0.3e12, 0.4e12, 3)
    from thzarray.field.cone import band_cone_angle
    cone = band_cone_angle(0.03, freq, medium=HUMID)
    lay = with_delays(lay, steering_delays(lay, cone, 0.5, HUMID))
    theta = np.linspace(0, 0.4, 201)
    phi = np.linspace(0, 2 * np.pi, 360, endpoint=False)
    sm = sky_map(lay, theta, phi, freq, HUMID)
    t, p = sm.peak
    assert abs(t - cone) <= 2 * (theta[1] - theta[0])
    assert abs(np.angle(np.exp(1j * (p - 0.5)))) <= 2 * (phi[1] - phi[0])


def test_frequency_map_matches_far_field():
    lay = grid((2, 2), 1.5e-3, 0.02)
    theta = np.linspace(0, 1.0, 11)
    freq = np.linspace(0.1e12, 1e12, 5)
    fm = frequency_map(lay, theta, freq, phi=0.3, medium=HUMID)
    ref = far_field(lay, freq[:, None], theta, 0.3, HUMID).energy_density
    assert fm.energy_density.shape == (5, 11)
    assert_allclose(fm.energy_density, ref, rtol=1e-12, atol=1e-12 * ref.max())


def test_sky_grid_resolves_and_stays_bounded():
    lay = grid((4, 4), 1.5e-3, 0.03)
    freq = np.linspace(0.1e12, 0.5e12, 5)
    theta, phi = sky_grid(lay, freq, HUMID, theta_max=0.5)
    assert theta[0] == 0.0 and np.isclose(theta[-1], 0.5)
    assert_allclose(np.diff(phi), 2 * np.pi / phi.size, rtol=1e-12)
    extent = np.hypot(0.03, 4.5e-3 * np.sqrt(2))
    res = 299792458.0 / (0.5e12 * HUMID.n_thz * extent)
    assert np.diff(theta).max() <= res / 3 * 1.001
    theta, phi = sky_grid(lay, freq, HUMID, max_points=10_000)
    assert theta.size * phi.size <= 1.2 * 10_000


def test_bad_inputs_raise():
    lay = grid((2, 2), 1.5e-3, 0.02)
    with pytest.raises(ValueError, match="theta"):
        sky_map(lay, [0.0, 3.5], [0.0], [0.3e12])
    with pytest.raises(ValueError, match="theta has shape"):
        sky_map(lay, [[0.0, 0.1]], [0.0], [0.3e12])
    with pytest.raises(ValueError, match="freq"):
        sky_map(lay, [0.0, 0.1], [0.0], [0.3e12, 0.2e12])
    with pytest.raises(ValueError, match="at least one Filament"):
        sky_map((), [0.0, 0.1], [0.0], [0.3e12])
