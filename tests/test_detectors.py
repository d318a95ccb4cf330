from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, epsilon_0

from thzarray import Filament, Medium
from thzarray.app.tables import read_response, response_detector
from thzarray.base.band import passband_weights
from thzarray.detect.receivers import (
    BroadbandDetector,
    NarrowbandReceiver,
    detected_energy,
    received_energy,
    surface_degree_of_radial_polarization,
    surface_polarization,
)
from thzarray.field.nearfield import field_at
from thzarray.field.surfaces import plane_scan

DATA = Path(__file__).parent / "data"
HUMID = Medium.air(relative_humidity=0.5)
FLUX = 2 * epsilon_0 * c  # plane-wave fluence per |E|^2 in vacuum, one-sided (Parseval)


def test_passband_weights_integrate_linear_functions_exactly():
    """The integral of a + b f over [lo, hi] is (a + b (lo + hi)/2)(hi - lo) (calculus)."""
    freq = np.array([0.8e11, 0.93e11, 1.0e11, 1.07e11, 1.2e11])
    lo, hi = 0.95e11, 1.05e11
    w = passband_weights(freq, lo, hi)
    a, b = 2.0, 3e-11
    assert_allclose(w @ (a + b * freq), (a + b * (lo + hi) / 2) * (hi - lo), rtol=1e-13)
    with pytest.raises(ValueError, match="pass band"):
        passband_weights(freq, 0.7e11, 1.0e11)


def test_area_receiver_on_plane_wave():
    """W = A B 2 eps0 c |p.E0|^2 for a uniform field over the band (flux of a plane wave)."""
    rx = NarrowbandReceiver(1e11, 1e10, polarization=(1.0, 1.0, 0.0), area=2e-6)
    freq = np.linspace(0.9e11, 1.1e11, 9)
    e0 = np.array([1.0 + 1j, 2.0, 0.0])
    field = np.broadcast_to(e0, (9, 2, 3))
    w = received_energy(rx, freq, field)
    p_e = (e0 @ np.array([1.0, 1.0, 0.0])) / np.sqrt(2)
    assert_allclose(w, 2e-6 * 1e10 * FLUX * abs(p_e) ** 2, rtol=1e-12)


@pytest.fixture(scope="module")
def grid():
    x = np.linspace(-0.03, 0.03, 241)
    return plane_scan(1.0, x, x)


def test_gaussian_receiver_effective_area(grid):
    """A Gaussian mode of waist w0 couples a normally incident plane wave with effective area
    (int u dA)^2 = 2 pi w0^2 (mode overlap; P. F. Goldsmith, Quasioptical Systems, ch. 4)."""
    w0 = 4e-3
    rx = NarrowbandReceiver(1e11, 2e10, beam_waist=w0)
    freq = np.array([0.85e11, 1.15e11])
    field = np.zeros((2,) + grid.points.shape, dtype=complex)
    field[..., 0] = 3.0
    w = received_energy(rx, freq, field, surface=grid)
    centre = w[120, 120]
    assert_allclose(centre, 2 * np.pi * w0**2 * 2e10 * FLUX * 9.0, rtol=1e-9)
    assert_allclose(rx.effective_area, 2 * np.pi * w0**2)


def test_gaussian_receiver_mode_matched_beam(grid):
    """A beam E0 exp(-r^2/w0^2) matched to the mode couples all its energy (coupling 1):
    W = B 2 eps0 c int |E|^2 dA = B 2 eps0 c |E0|^2 pi w0^2 / 2 (Goldsmith, ch. 4)."""
    w0 = 5e-3
    rx = NarrowbandReceiver(2e11, 1e10, polarization=(0.0, 1.0, 0.0), beam_waist=w0)
    freq = np.array([1.9e11, 2.1e11])
    r2 = np.sum(grid.points[..., :2] ** 2, axis=-1)
    field = np.zeros((2,) + grid.points.shape, dtype=complex)
    field[..., 1] = 2.0 * np.exp(-r2 / w0**2)
    w = received_energy(rx, freq, field, surface=grid)
    assert_allclose(w[120, 120], 1e10 * FLUX * 4.0 * np.pi * w0**2 / 2, rtol=1e-9)
    assert np.argmax(w) == np.ravel_multi_index((120, 120), w.shape)


def test_linear_receiver_sees_two_lobes_on_radial_cone():
    """A field radial about the axis has E_x = E_rho cos(phi) (common practice, no source):
    an x-polarized receiver records W(phi) = W(0) cos^2(phi): two lobes along x, none
    across. Source: a column on the z axis, exact near field at 0.5 m beyond its end."""
    fil = Filament(0.3, start=(0.0, 0.0, 0.0))
    freq = np.linspace(0.28e12, 0.32e12, 5)
    phi = np.linspace(0.0, np.pi, 13)
    radius = 0.02
    pts = np.stack([radius * np.cos(phi), radius * np.sin(phi), np.full_like(phi, 0.8)], -1)
    e = field_at(fil, freq[:, None], pts, HUMID)
    rx = NarrowbandReceiver(0.3e12, 0.04e12, polarization=(1.0, 0.0, 0.0), area=1e-6)
    w = received_energy(rx, freq, e, HUMID)
    assert_allclose(w, w[0] * np.cos(phi) ** 2, rtol=0, atol=1e-12 * w[0])
    assert w[6] < 1e-20 * w[0]


def test_gaussian_receiver_two_lobes():
    """The same with a Gaussian acceptance beam: E_x is odd in x, so the overlap vanishes on
    the y axis (symmetry, no source), while along x the lobes remain."""
    fil = Filament(0.3)
    x = np.linspace(-0.04, 0.04, 41)
    surf = plane_scan(0.8, x, x)
    freq = np.array([0.29e12, 0.31e12])
    e = field_at(fil, freq[:, None, None], surf.points, HUMID)
    rx = NarrowbandReceiver(0.3e12, 0.02e12, beam_waist=3e-3)
    w = received_energy(rx, freq, e, HUMID, surface=surf)
    along = w[20, :].max()
    across = w[:, 20].max()
    assert across < 1e-12 * along
    assert w[20, 20] < 1e-12 * along  # null on the axis of a radially polarized cone


def test_response_csv_loader():
    f, r = read_response(DATA / "detector_response_invented.csv")
    assert_allclose(f, [0.05e12, 0.1e12, 0.3e12, 0.6e12, 1.0e12, 2.0e12])
    assert_allclose(r, [0.0, 0.4, 0.9, 1.0, 0.7, 0.0])
    with pytest.raises(ValueError, match="header"):
        read_response(DATA / "detector_response_bad_header.csv")


def test_broadband_detector_on_plane_wave():
    """Polarization-blind: W = A 2 eps0 c |E_perp|^2 int R df; the trapezoid on the response's
    own nodes integrates its piecewise-linear curve exactly (calculus)."""
    det = response_detector(DATA / "detector_response_invented.csv", area=1e-4,
                                     normal=(0.0, 0.0, 1.0))
    freq = np.array([0.05e12, 0.1e12, 0.3e12, 0.6e12, 1.0e12, 2.0e12])
    e0 = np.array([1.0, 2.0j, 5.0])  # the z part is along the normal: not absorbed
    field = np.broadcast_to(e0, (6, 3))
    area_under = (0.05 * 0.4 / 2 + 0.2 * (0.4 + 0.9) / 2 + 0.3 * (0.9 + 1.0) / 2
                  + 0.4 * (1.0 + 0.7) / 2 + 1.0 * 0.7 / 2) * 1e12
    w = detected_energy(det, freq, field)
    assert_allclose(w, 1e-4 * FLUX * 5.0 * area_under, rtol=1e-12)
    assert_allclose(det.response_at([0.2e12, 3e12]), [0.65, 0.0])


def test_surface_polarization_of_a_column_is_radial():
    """A column on the axis radiates purely radially (docs/references.rst, traveling line current):
    degree of radial polarization 1 on a detector plane; an x-polarized uniform field on a
    ring has Stokes S1/S0 = cos(2 phi) and degree 1/2 (Born & Wolf sec. 1.4.2)."""
    fil = Filament(0.2)
    x = np.linspace(-0.03, 0.03, 21)
    surf = plane_scan(0.6, x, x)
    freq = 0.3e12
    e = field_at(fil, freq, surf.points)
    deg = surface_degree_of_radial_polarization(e, surf.points, freq, weights=surf.weights)
    assert_allclose(deg, 1.0, rtol=1e-12)
    phi = np.linspace(0, 2 * np.pi, 16, endpoint=False)
    ring = np.stack([0.01 * np.cos(phi), 0.01 * np.sin(phi), np.full_like(phi, 1e3)], -1)
    lin = np.broadcast_to(np.array([1.0, 0.0, 0.0], dtype=complex), ring.shape)
    pm = surface_polarization(lin, ring, freq)
    assert_allclose(pm.stokes[:, 1] / pm.stokes[:, 0], np.cos(2 * phi), atol=1e-9)
    assert_allclose(surface_degree_of_radial_polarization(lin, ring, freq), 0.5, atol=1e-9)


@pytest.mark.parametrize("kwargs, match", [
    (dict(center_freq=0.0, bandwidth=1e9, area=1e-6), "center_freq"),
    (dict(center_freq=1e11, bandwidth=3e11, area=1e-6), "bandwidth"),
    (dict(center_freq=1e11, bandwidth=1e9), "exactly one"),
    (dict(center_freq=1e11, bandwidth=1e9, area=1e-6, beam_waist=1e-3), "exactly one"),
    (dict(center_freq=1e11, bandwidth=1e9, area=-1.0), "area"),
    (dict(center_freq=1e11, bandwidth=1e9, area=1e-6, polarization=(0, 0, 0)), "polarization"),
])
def test_bad_receiver(kwargs, match):
    with pytest.raises(ValueError, match=match):
        NarrowbandReceiver(**kwargs)


def test_bad_detector_inputs(grid):
    with pytest.raises(ValueError, match="response"):
        BroadbandDetector([1e11, 2e11], [0.5], 1e-4)
    with pytest.raises(ValueError, match="freq"):
        BroadbandDetector([2e11, 1e11], [0.5, 0.5], 1e-4)
    rx = NarrowbandReceiver(1e11, 1e10, beam_waist=1e-3)
    freq = np.array([0.9e11, 1.1e11])
    with pytest.raises(ValueError, match="surface"):
        received_energy(rx, freq, np.zeros((2, 4, 3)))
    with pytest.raises(ValueError, match="field"):
        received_energy(rx, freq, np.zeros((3, 4, 3)), surface=grid)
