import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.constants import c, epsilon_0

from thzarray import Filament, Medium, far_field
from thzarray.array.gain import array_factor_directivity, array_gain, directivity
from thzarray.array.layouts import grid, line, random_aperture, with_delays
from thzarray.array.steering import steering_delays
from thzarray.array.targets import Aperture, Direction, target_fields
from thzarray.base.band import band_weights
from thzarray.field.energy import source_spectral_energy

HUMID = Medium.air(relative_humidity=0.5)
BAND = np.linspace(0.2e12, 0.6e12, 7)


def steered(layout, target, medium=HUMID):
    return with_delays(layout, steering_delays(layout, target.theta, target.phi, medium))


@settings(max_examples=20)
@given(st.integers(1, 7), st.integers(1, 4), st.floats(0.02, 0.6), st.floats(0, 2 * np.pi),
       st.integers(0, 1000))
def test_phased_gain_is_n_squared_at_the_steered_target(nx, ny, theta, phi, seed):
    # Identical columns in phase toward the target: |sum|^2 = N^2 |one|^2 (Balanis, arrays
    # chapter; common practice). Incoherent mean: N |one|^2 (random phases cancel on average).
    lay = grid((nx, ny), 1.3e-3, 0.03)
    target = Direction(theta, phi)
    g = array_gain(steered(lay, target), target, BAND, medium=HUMID, trials=8, seed=seed)
    n = nx * ny
    assert_allclose(g.phased_over_single, n**2, rtol=1e-10)
    assert_allclose(g.incoherent_over_single, n, rtol=1e-12)
    assert_allclose(g.phased, g.ideal, rtol=1e-10)
    assert_allclose(g.coherent_limit, g.ideal, rtol=1e-10)


def test_incoherent_monte_carlo_within_its_standard_error():
    # Mean of |sum_n a_n e^{i phi_n}|^2 over independent uniform phases = sum |a_n|^2
    # (common practice, no source). Seeded; 4 standard errors.
    lay = random_aperture(12, 4e-3, 8e-4, 0.03, seed=2)
    target = Direction(0.16, 0.4)
    g = array_gain(steered(lay, target), target, BAND, medium=HUMID, trials=3000, seed=11)
    assert abs(g.incoherent_mc - g.incoherent) < 4 * g.incoherent_mc_error
    assert 0.005 * g.incoherent < g.incoherent_mc_error < 0.05 * g.incoherent
    assert_allclose(g.incoherent_over_single, 12, rtol=1e-12)


def test_energy_matches_far_field_energy_density():
    # d2W/(df dOmega) = 2 n_T eps0 c |F|^2 (Jackson; module convention) summed with
    # trapezoid weights.
    lay = with_delays(line(3, 1e-3, 0.02), [0.0, 0.3e-12, 0.1e-12])
    target = Direction(0.2, 0.1)
    tf = target_fields(lay, target, BAND, HUMID)
    ff = far_field(lay, BAND, 0.2, 0.1, HUMID)
    dens = 2 * HUMID.n_thz * epsilon_0 * c * (np.abs(ff.e_theta) ** 2 + np.abs(ff.e_phi) ** 2)
    trapz = np.trapezoid(dens, BAND)
    assert_allclose(tf.energy([f.delay for f in lay]), trapz, rtol=1e-12)


def test_band_weights_are_the_trapezoid_rule():
    f = np.array([0.1e12, 0.15e12, 0.3e12, 0.32e12])
    y = np.cos(f / 1e11)
    assert_allclose(band_weights(f) @ y, np.trapezoid(y, f), rtol=1e-13)
    assert_allclose(band_weights([0.3e12]), [1.0])
    assert_allclose(band_weights(f, [1, 2, 0, 1]) @ y, np.trapezoid(y * [1, 2, 0, 1], f),
                    rtol=1e-13)
    with pytest.raises(ValueError, match="increasing"):
        band_weights(f[::-1])


def test_receiver_nodes_integrate_its_solid_angle():
    # Solid angle of a disc of radius a seen at distance R on its axis:
    # 2 pi (1 - R / sqrt(R^2 + a^2)) (common geometry, no source).
    rx = Aperture(0.3, 1.1, 0.04, 0.2)
    th, ph, w = rx.nodes(line(4, 2e-3, 0.05), 1e12, HUMID)
    assert_allclose(w.sum(), 2 * np.pi * (1 - 0.2 / np.hypot(0.2, 0.04)), rtol=1e-12)
    assert_allclose(rx.solid_angle, w.sum(), rtol=1e-12)
    # Every node lies within the cone the disc subtends.
    r0 = np.array([np.sin(0.3) * np.cos(1.1), np.sin(0.3) * np.sin(1.1), np.cos(0.3)])
    d = np.stack([np.sin(th) * np.cos(ph), np.sin(th) * np.sin(ph), np.cos(th)], -1)
    assert np.all(d @ r0 >= 0.2 / np.hypot(0.2, 0.04) - 1e-12)


def test_small_receiver_equals_direction_times_solid_angle():
    lay = grid((3, 3), 1.5e-3, 0.03)
    target = Direction(0.2, 0.0)
    lay = steered(lay, target)
    rx = Aperture(0.2, 0.0, 1e-4, 1.0)
    e_dir = target_fields(lay, target, BAND, HUMID).energy([f.delay for f in lay])
    e_rx = target_fields(lay, rx, BAND, HUMID).energy([f.delay for f in lay])
    # Pattern varies by ~(k D alpha)^2 ~ 1e-5 over the tiny aperture.
    assert_allclose(e_rx, e_dir * rx.solid_angle, rtol=1e-4)


def test_receiver_gain_below_n_squared():
    lay = grid((4, 4), 1.5e-3, 0.03)
    rx = Aperture(0.19, 0.0, 0.02, 0.5)
    g = array_gain(steered(lay, rx), rx, BAND, medium=HUMID, trials=8)
    assert 0.5 * 256 < g.phased_over_single < 256
    assert g.phased <= g.coherent_limit * (1 + 1e-12)


@pytest.mark.parametrize("d_over_lambda, scan", [(0.5, 0.0), (0.3, 0.0), (0.7, 0.0),
                                                 (0.5, 0.4), (0.25, 1.0)])
def test_array_factor_directivity_balanis(d_over_lambda, scan):
    # Uniform linear array, isotropic elements (Balanis, Antenna Theory, arrays chapter):
    # D = N^2 / sum_{m,n} cos(beta (m - n)) sin(k d |m - n|) / (k d |m - n|), since
    # oint exp(i k rhat.r) dOmega = 4 pi sin(k r)/(k r). N = 10, d = lambda/2, broadside -> 10.
    n, f = 10, 0.3e12
    lam = c / f
    d = d_over_lambda * lam
    lay = line(n, d, 0.02)
    lay = with_delays(lay, steering_delays(lay, scan, 0.0))
    got = array_factor_directivity(lay, f, scan, 0.0)
    kd = 2 * np.pi * d_over_lambda
    beta = kd * np.sin(scan)
    m = np.arange(n)[:, None] - np.arange(n)[None, :]
    den = np.sum(np.cos(beta * m) * np.sinc(kd * m / np.pi))
    assert_allclose(got, n**2 / den, rtol=1e-10)
    if d_over_lambda == 0.5 and scan == 0.0:
        assert_allclose(got, 10.0, rtol=1e-10)


def test_single_column_directivity_matches_source_space_energy():
    # D = 4 pi (d2W/df dOmega) / (dW/df); the denominator from the independent source-space
    # double integral (thzarray.field.farfield.source_spectral_energy, Balanis long wire in vacuum).
    fil = Filament(0.01)
    f = 0.4e12
    theta = 0.35
    dens = far_field(fil, f, theta, 0.0, HUMID).energy_density
    ref = 4 * np.pi * dens / source_spectral_energy(fil, f, HUMID)
    assert_allclose(directivity((fil,), theta, 0.0, [f], HUMID), ref, rtol=1e-6)


@pytest.mark.slow
def test_widely_spaced_pair_has_twice_the_directivity_at_its_target():
    # Two identical columns far apart (k d >> 1): cross terms of the total energy are of
    # order 1/(k d), so the total doubles while the steered density quadruples: D -> 2 D_1
    # (derived; tolerance from 1/(k d) ~ 0.01).
    f = 0.3e12
    lam = c / f
    pair = line(2, 20 * lam, 2 * lam)
    target = Direction(0.6, 0.0)
    pair = steered(pair, target)
    d2 = directivity(pair, 0.6, 0.0, [f], HUMID)
    d1 = directivity(pair[:1], 0.6, 0.0, [f], HUMID)
    assert_allclose(d2, 2 * d1, rtol=3e-2)


def test_bad_targets_raise():
    with pytest.raises(ValueError, match=r"theta = .*4\.0.*<= 3\.14159"):
        Direction(4.0, 0.0)
    with pytest.raises(ValueError, match="theta"):
        Aperture(-0.1, 0.0, 0.01, 1.0)
    with pytest.raises(ValueError, match="distance"):
        Aperture(0.1, 0.0, 0.01, 0.005)
    with pytest.raises(ValueError, match="target"):
        array_gain(line(2, 1e-3, 0.02), (0.1, 0.0), BAND)
    with pytest.raises(ValueError, match="trials"):
        array_gain(line(2, 1e-3, 0.02), Direction(0.1), BAND, trials=1)
    with pytest.raises(ValueError, match="delays"):
        target_fields(line(2, 1e-3, 0.02), Direction(0.1), BAND).energy([0.0, np.nan])


def test_energies_with_phases_per_frequency_equals_per_node_path():
    # The per-frequency matrix products (phases of shape (S, N, F)) against the same phases
    # repeated over the nodes (shape (S, N, F, J), the einsum path); both are
    # sum_fjc |sum_n g e^{i phi}|^2 written out (Balanis, arrays chapter).
    from thzarray.array.targets import TargetFields

    rng = np.random.default_rng(8)
    g = rng.normal(size=(6, 3, 7, 2)) + 1j * rng.normal(size=(6, 3, 7, 2))
    tf = TargetFields(g, 2 * np.pi * np.array([1e11, 2e11, 3e11]), "J")
    ph = rng.uniform(0, 2 * np.pi, (11, 6, 3))
    per_node = tf.energies_with_phases(np.repeat(ph[..., None], 7, axis=-1))
    direct = np.array([np.sum(np.abs(np.einsum("nfjc,nf->fjc", g, np.exp(1j * p))) ** 2)
                       for p in ph])
    np.testing.assert_allclose(tf.energies_with_phases(ph), direct, rtol=1e-12)
    np.testing.assert_allclose(per_node, direct, rtol=1e-12)
