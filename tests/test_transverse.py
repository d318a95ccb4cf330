"""A current flowing across the column (two colour) as well as along it (single colour)."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from radiation_quad import far_field_quad, near_field_quad
from scipy.constants import c, epsilon_0, mu_0

from thzarray import Filament, Medium, far_field
from thzarray.array.arrayfield import array_far_field, factored_far_field, identical_elements
from thzarray.array.steering import steering_delays
from thzarray.array.targets import Direction, target_fields
from thzarray.array.tolerance import tolerance
from thzarray.base.geometry import unit_vectors
from thzarray.detect.receivers import NarrowbandReceiver, received_energy
from thzarray.field.energy import source_spectral_energy, spectral_energy
from thzarray.field.nearfield import fields_at

HUMID = Medium.air(relative_humidity=0.5)


def _perpendicular(axis, angle):
    a = np.asarray(axis, float) / np.linalg.norm(axis)
    e1 = np.cross(a, [1.0, 0.0, 0.0] if abs(a[0]) < 0.9 else [0.0, 1.0, 0.0])
    e1 /= np.linalg.norm(e1)
    return np.cos(angle) * e1 + np.sin(angle) * np.cross(a, e1)


@pytest.mark.parametrize("direction, match", [
    ((0.0, 0.0, 1.0), "current_direction"),
    ((0.3, 0.0, 1.0), "current_direction"),
    ((0.0, 0.0, 0.0), "current_direction"),
    ((1.0, np.nan, 0.0), "current_direction"),
    ((1.0, 0.0), "current_direction"),
])
def test_current_direction_must_be_perpendicular(direction, match):
    with pytest.raises(ValueError, match=match) as exc:
        Filament(0.1, current_direction=direction)
    assert "allowed" in str(exc.value)


def test_current_direction_is_normalised_and_made_perpendicular():
    f = Filament(0.1, axis=(0, 0, 2), current_direction=(3.0, 4.0, 1e-12))
    assert_allclose(f.current, (0.6, 0.8, 0.0), rtol=0, atol=1e-15)
    assert f.current[2] == 0.0
    assert Filament(0.1).current == (0.0, 0.0, 1.0) and Filament(0.1).is_axial


@pytest.mark.parametrize("medium", [Medium.vacuum(), HUMID, Medium(1.0, 1.002)])
def test_transverse_far_field_matches_quad(medium, rng):
    # Radiation integral of the transverse traveling current (thzarray.field.farfield module
    # docstring; Jackson eq. 9.8 with E = i w A_perp), computed by quad from the geometry.
    axis = (0.2, -0.1, 1.0)
    d = _perpendicular(axis, 0.7)
    fil = Filament(0.23, start=(0.01, -0.02, 0.05), axis=axis, delay=3e-12, amplitude=0.7,
                   current_direction=d)
    for _ in range(8):
        f, th, ph = rng.uniform(0.05e12, 2e12), rng.uniform(0, np.pi), rng.uniform(0, 2 * np.pi)
        ref = far_field_quad(fil, f, th, ph, medium, direction=fil.current)
        for compiled in (True, False):
            got = far_field(fil, f, th, ph, medium, compiled=compiled).cartesian
            assert_allclose(got, ref, rtol=1e-9, atol=1e-9 * np.abs(ref).max())


def test_transverse_profiled_far_field_matches_quad(rng):
    prof = lambda s: np.exp(-((s - 0.08) / 0.03) ** 2)  # noqa: E731
    fil = Filament(0.2, axis=(0, 0, 1), profile=prof, current_direction=(1, 1, 0))
    peak = np.abs(far_field(fil, 0.5e12, np.linspace(0, np.pi, 4001), 0.0, HUMID).cartesian).max()
    for _ in range(6):
        f, th, ph = 0.5e12, rng.uniform(0, np.pi), rng.uniform(0, 2 * np.pi)
        ref = far_field_quad(fil, f, th, ph, HUMID, direction=fil.current)
        got = far_field(fil, f, th, ph, HUMID).cartesian
        # spline interpolation error of the profile (5/384 h^4 max|w''''|) far below 1e-9
        assert_allclose(got, ref, rtol=1e-8, atol=1e-9 * peak)


def test_outer_grid_and_pointwise_paths_agree_for_mixed_currents(rng):
    fils = (Filament(0.03, (0, 0, 0)), Filament(0.031, (1e-3, 0, 0), current_direction=(1, 0, 0)),
            Filament(0.029, (0, 2e-3, 0), axis=(0.1, 0, 1), current_direction=(0, 1, 0)))
    freq = np.linspace(0.2e12, 1e12, 7)
    theta = np.linspace(0, 0.8, 9)
    phi = np.linspace(0, 2 * np.pi, 5)
    grid = far_field(fils, freq[:, None, None], theta[:, None], phi, HUMID)
    f, t, p = np.meshgrid(freq, theta, phi, indexing="ij")
    pointwise = far_field(fils, f, t, p, HUMID)
    twin = far_field(fils, f, t, p, HUMID, compiled=False)
    for ff in (pointwise, twin):
        assert_allclose(grid.e_theta, ff.e_theta, rtol=1e-12, atol=1e-12 * np.abs(ff.e_theta).max())
        assert_allclose(grid.e_phi, ff.e_phi, rtol=1e-12, atol=1e-12 * np.abs(ff.e_phi).max())


def test_polarization_is_linear_along_the_projection_of_d(rng):
    # E_perp is parallel to d - (r.d) r, the projection of the current's direction across the
    # line of sight (module docstring of thzarray.field.farfield): linear polarization, S3 = 0.
    d = np.array([np.cos(0.4), np.sin(0.4), 0.0])
    fil = Filament(0.05, current_direction=d)
    theta, phi = rng.uniform(0, np.pi, 50), rng.uniform(0, 2 * np.pi, 50)
    ff = far_field(fil, 0.4e12, theta, phi, HUMID)
    r = unit_vectors(theta, phi)[0]
    proj = d - (r @ d)[:, None] * r
    vec = ff.cartesian
    scale = np.linalg.norm(vec, axis=-1)
    cross = np.linalg.norm(np.cross(vec, proj), axis=-1)
    assert_allclose(cross / scale, 0.0, atol=1e-12)
    s3 = 2 * np.imag(ff.e_theta * np.conj(ff.e_phi))
    assert_allclose(s3 / scale**2, 0.0, atol=1e-12)
    # on the axis the transverse current radiates (the axial one has its null there); along d
    # it does not (a dipole's null along its moment: Jackson eq. 9.18)
    on_axis = far_field(fil, 0.4e12, 0.0, 0.0, HUMID)
    assert np.sqrt(on_axis.magnitude_squared) > 0.1 * scale.max()
    along_d = far_field(fil, 0.4e12, np.pi / 2, 0.4, HUMID)
    assert along_d.magnitude_squared < 1e-28 * scale.max() ** 2


def test_receiver_sees_the_linear_polarization():
    # Narrowband receiver on the axis, far away: its energy goes as cos^2 of the angle between
    # its polarization and the current (Malus's law; common practice, no source).
    d = np.array([1.0, 0.0, 0.0])
    fil = Filament(0.03, current_direction=d)
    freq = np.linspace(0.35e12, 0.45e12, 11)
    pts = np.array([[0.0, 0.0, 50.0]])
    e = fields_at(fil, freq[:, None], pts, HUMID).e  # (F, 1, 3)
    energies = []
    for angle in (0.0, 0.5, np.pi / 2):
        rec = NarrowbandReceiver(0.4e12, 0.1e12, (np.cos(angle), np.sin(angle), 0.0), area=1e-4)
        energies.append(received_energy(rec, freq, e, HUMID)[0])
    assert_allclose(energies[1] / energies[0], np.cos(0.5) ** 2, rtol=1e-9)
    assert energies[2] < 1e-12 * energies[0]


def test_energy_of_a_transverse_column_two_routes():
    # Sphere integral of 2 n eps0 c |F|^2 against the source-space double integral with the
    # kernel 4 pi (j0(x) - j1(x)/x) (derived in thzarray.field.energy; the angular integral of
    # |d_perp|^2 e^{ix mu} for d across the axis).
    fil = Filament(0.02, current_direction=(0, 1, 0))
    freq = np.array([0.3e12, 1.1e12])
    assert_allclose(spectral_energy(fil, freq, HUMID), source_spectral_energy(fil, freq, HUMID),
                    rtol=1e-6)


def test_short_transverse_column_radiates_like_a_dipole():
    # A column much shorter than the wavelength is a point dipole p = i I L / w whatever its
    # orientation: dW/df = 2 eps0 c (w mu0 I L / (4 pi))^2 8 pi / 3 in vacuum (Jackson eq.
    # 9.24, equation number from memory, in the package's spectral convention); corrections
    # are of order (k L)^2 ~ 4e-7 here.
    short = 1e-7
    freq = np.array([0.5e12])
    w = 2 * np.pi * freq
    ref = 2 * epsilon_0 * c * (w * mu_0 * short / (4 * np.pi)) ** 2 * 8 * np.pi / 3
    for fil in (Filament(short), Filament(short, current_direction=(1, 0, 0))):
        assert_allclose(source_spectral_energy(fil, freq), ref, rtol=1e-6)
        assert_allclose(spectral_energy(fil, freq), ref, rtol=1e-6)


def test_factored_sum_and_steering_with_transverse_columns():
    lay = tuple(Filament(0.02, (x, y, 0.0), current_direction=(0, 1, 0))
                for x in (0, 1.5e-3, 3e-3) for y in (0, 1.5e-3))
    assert identical_elements(lay)
    assert not identical_elements(lay + (Filament(0.02, (5e-3, 0, 0)),))
    freq = np.linspace(0.2e12, 0.6e12, 5)[:, None, None]
    theta, phi = np.linspace(0, 0.5, 7)[:, None], np.linspace(0, 6.2, 6)
    fac = factored_far_field(lay, freq, theta, phi, HUMID)
    gen = far_field(lay, freq, theta, phi, HUMID)
    assert_allclose(fac.e_theta, gen.e_theta, rtol=1e-12, atol=1e-12 * np.abs(gen.e_theta).max())
    assert_allclose(fac.e_phi, gen.e_phi, rtol=1e-12, atol=1e-12 * np.abs(gen.e_phi).max())
    # true-time delays bring identical transverse columns in phase: N^2 (Balanis, arrays)
    t = steering_delays(lay, 0.2, 0.5, HUMID)
    steered = tuple(f.replace(delay=float(ti)) for f, ti in zip(lay, t))
    tf = target_fields(steered, Direction(0.2, 0.5), np.array([0.4e12]), HUMID)
    assert_allclose(tf.energy(t), len(lay) ** 2 * tf.single, rtol=1e-10)
    res = array_far_field(steered, 0.4e12, 0.2, 0.5, HUMID)
    one = far_field(lay[0], 0.4e12, 0.2, 0.5, HUMID)
    assert_allclose(res.magnitude_squared, len(lay) ** 2 * one.magnitude_squared, rtol=1e-10)


def test_tolerance_runs_on_transverse_columns_and_matches_exact_mean():
    # Exact mean of the random-phase model (Ruze; thzarray.array.tolerance) against seeded
    # Monte Carlo: within four standard errors.
    lay = tuple(Filament(0.02, (x, 0.0, 0.0), current_direction=(0, 1, 0))
                for x in np.arange(4) * 2e-3)
    t = steering_delays(lay, 0.15, 0.0, HUMID)
    lay = tuple(f.replace(delay=float(ti)) for f, ti in zip(lay, t))
    res = tolerance(lay, Direction(0.15, 0.0), np.array([0.3e12, 0.5e12]), timing_jitter=0.3e-12,
                    trials=400, seed=3, medium=HUMID)
    assert abs(res.mean - res.expected) < 4 * res.standard_error
    assert 0.0 < res.expected < 1.0


@pytest.mark.slow
def test_transverse_near_field_matches_dipole_superposition(rng):
    # Superposition of Jackson eq. 9.18 dipoles p = i I ds / w along d (radiation_quad).
    axis = np.array([0.1, 0.0, 1.0])
    d = _perpendicular(axis, 1.1)
    fil = Filament(0.06, start=(0.0, 0.01, 0.0), axis=axis, delay=1e-12, current_direction=d)
    freq = 0.4e12
    lam = c / freq
    a = np.asarray(fil.axis)
    for compiled in (True, False):
        for _ in range(3):
            s = rng.uniform(-0.5, 1.5) * fil.length
            v = _perpendicular(axis, rng.uniform(0, 2 * np.pi))
            rho = 10 ** rng.uniform(np.log10(lam / 20), np.log10(5 * fil.length))
            x = np.asarray(fil.start) + s * a + rho * v
            e_ref, h_ref = near_field_quad(fil, freq, x, HUMID, direction=fil.current)
            got = fields_at(fil, freq, x, HUMID, compiled=compiled)
            assert_allclose(got.e, e_ref, rtol=1e-6, atol=1e-6 * np.abs(e_ref).max())
            assert_allclose(got.h, h_ref, rtol=1e-6, atol=1e-6 * np.abs(h_ref).max())


def test_transverse_near_field_tends_to_far_field():
    # R e^{-ikR} E(R r) -> F as R -> infinity, the departure falling like 1/R (the first
    # Fresnel correction, phase k s^2 sin^2(psi) / (2R); common practice, no source): in the
    # main lobe and in a side lobe, ten times farther gives ten times less.
    fil = Filament(0.04, current_direction=(0, 1, 0))
    freq, phi = 0.5e12, 0.9
    k = 2 * np.pi * freq * HUMID.n_thz / c
    for theta in (0.05, 0.3):
        r_hat = unit_vectors(theta, phi)[0]
        ff = far_field(fil, freq, theta, phi, HUMID).cartesian
        dep = []
        for dist in (30.0, 300.0, 3000.0):
            e = fields_at(fil, freq, dist * r_hat, HUMID).e
            dep.append(np.abs(dist * np.exp(-1j * k * dist) * e - ff).max() / np.abs(ff).max())
        assert_allclose(dep[0] / dep[1], 10.0, rtol=0.02)
        assert_allclose(dep[1] / dep[2], 10.0, rtol=0.02)
        assert dep[2] < 2e-3
