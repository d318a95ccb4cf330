
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, epsilon_0

from thzarray import Filament, Medium, far_field
from thzarray.air.absorption import attenuate
from thzarray.detect.budget import RangeBudget, range_budget
from thzarray.detect.receivers import BroadbandDetector, NarrowbandReceiver, received_energy
from thzarray.field.nearfield import field_at

AIR = Medium.air(15.0, 101325.0, 0.0)  # the temperature and pressure of the budgets below



@pytest.fixture(scope="module")
def itu676():
    """`itur` (test-only reference for ITU-R P.676); restore numpy's error settings, which
    importing it changes."""
    saved = np.geterr()
    import itur.models.itu676 as model

    np.seterr(**saved)
    model.change_version(12)
    return model


def test_budget_matches_independent_sum(itu676):
    """The far-field prediction W = sum_j w_j A 2 n eps0 c |p.F_j|^2 exp(-alpha_j R) / R^2
    with alpha from `itur` (ITU-R P.676-12 Annex 1, dry pressure = total - vapour), samples
    at the band edges so the pass-band weights are B/2 each (trapezoid); the exact energy
    is the same sum with the exact field (Jackson eq. 9.18) at the receiver."""
    fil = Filament(0.5, start=(0.0, 0.0, -0.25))
    rx = NarrowbandReceiver(0.3e12, 0.02e12, polarization=(1.0, 0.0, 0.0), area=3e-4)
    freq = np.array([0.29e12, 0.31e12])
    dist = np.array([2.0, 20.0, 50.0])
    rh = np.array([0.2, 0.8])
    theta = 0.06
    b = range_budget(fil, rx, freq, dist, theta, medium=AIR, relative_humidity=rh)
    for i, h in enumerate(rh):
        medium = AIR.with_humidity(h)
        air = medium.conditions
        saved = np.geterr()
        gamma = np.array([itu676.gamma_exact(f / 1e9, air.dry_pressure / 100, 1e3 * air.vapour_density,
                                             288.15).value for f in freq])
        np.seterr(**saved)
        alpha = gamma * np.log(10) / 1e4
        ff = far_field(fil, freq, theta, 0.0, medium)
        per = 0.01e12 * 3e-4 * 2 * medium.n_thz * epsilon_0 * c * np.abs(ff.cartesian[:, 0]) ** 2
        loss = np.exp(-alpha[None, :] * dist[:, None])
        ref = (per[None, :] * loss).sum(axis=1) / dist**2
        assert_allclose(b.far_field_energy[i], ref, rtol=1e-6)
        points = dist[:, None] * np.array([np.sin(theta), 0.0, np.cos(theta)])
        e = field_at(fil, freq[:, None], points[None], medium)[..., 0]  # (F, D), x component
        exact = 0.01e12 * 3e-4 * 2 * medium.n_thz * epsilon_0 * c * np.abs(e) ** 2
        assert_allclose(b.energy[i], (exact.T * loss).sum(axis=1), rtol=1e-6)
        assert_allclose(b.free_space_energy[i], exact.sum(axis=0), rtol=1e-12)
        assert_allclose(b.far_field_error[i], b.far_field_energy[i] / b.energy[i] - 1,
                        rtol=1e-12)
    assert isinstance(b, RangeBudget) and b.energy.shape == (2, 3)
    assert np.all(b.absorption_db > 0)


def test_far_field_error_of_a_long_column_shrinks_with_range():
    """A 46 cm column at its cone: the far-field prediction is off by several per cent at
    1 m and converges as the Fresnel phase k L^2 sin^2(theta) / (8 R) across the column
    falls (derived): the error shrinks monotonically with range and is negligible at 300 m."""
    from thzarray import cone_angle

    fil = Filament(0.46, start=(0.0, 0.0, -0.23))
    freq = np.linspace(0.29e12, 0.31e12, 3)
    rx = NarrowbandReceiver(0.3e12, 0.02e12, polarization=(1.0, 0.0, 0.0), area=1e-4)
    theta = float(cone_angle(0.46, 0.3e12, Medium.vacuum()))
    b = range_budget(fil, rx, freq, [1.0, 2.0, 3.0, 300.0], theta)
    err = np.abs(b.far_field_error[0])
    assert err[0] > 0.02 and np.all(np.diff(err) < 0) and err[-1] < 1e-5


def test_budget_far_field_prediction_agrees_with_near_field_far_away():
    """At range the exact line integral (thzarray.field.nearfield) through the same air gives the
    far-field prediction; neglected: Fresnel phase k L^2 sin^2(theta) / R and 1/(kR)."""
    fil = Filament(0.1, start=(0.0, 0.0, -0.05))
    freq = np.linspace(0.095e12, 0.105e12, 5)
    rx = NarrowbandReceiver(0.1e12, 0.01e12, polarization=(1.0, 0.0, 0.0), area=1e-4)
    theta, radius = 0.2, 1000.0
    medium = AIR.with_humidity(0.5)
    b = range_budget(fil, rx, freq, [radius], theta, medium=AIR, relative_humidity=[0.5])
    point = radius * np.array([np.sin(theta), 0.0, np.cos(theta)])
    e = attenuate(field_at(fil, freq, point, medium), freq, radius, medium)
    w = received_energy(rx, freq, e, medium)
    k = 2 * np.pi * 0.105e12 * medium.n_thz / c
    bound = k * fil.length**2 * np.sin(theta) ** 2 / radius + 1 / (k * radius)
    assert_allclose(w, b.far_field_energy[0, 0], rtol=bound)
    assert_allclose(w, b.energy[0, 0], rtol=1e-9)


def test_broadband_detector_budget_spreading_law():
    """In vacuum the far-field prediction falls as 1/R^2 (inverse-square law) and equals
    A int R |F|^2 2 n eps0 c df / R^2; the exact field approaches it with range."""
    fil = Filament(0.2)
    freq = np.linspace(0.1e12, 0.5e12, 41)
    det = BroadbandDetector(freq, np.ones_like(freq), area=1e-4)
    b = range_budget(fil, det, freq, [1.0, 3.0, 9.0, 100.0], 0.1)
    ff = far_field(fil, freq, 0.1, 0.0, Medium.vacuum())
    ref = 1e-4 * np.trapezoid(2 * epsilon_0 * c * ff.magnitude_squared, freq)
    r2 = np.array([1.0, 3.0, 9.0, 100.0]) ** 2
    assert_allclose(b.far_field_energy[0] * r2, ref, rtol=1e-12)
    assert_allclose(b.energy[0, -1] * r2[-1], ref, rtol=1e-3)
    assert np.all(np.diff(np.abs(b.far_field_error[0])) < 0)


def test_bad_budget_inputs():
    fil = Filament(0.2)
    rx = NarrowbandReceiver(0.1e12, 0.01e12, area=1e-4)
    freq = np.array([0.09e12, 0.11e12])
    with pytest.raises(ValueError, match="ranges"):
        range_budget(fil, rx, freq, [0.0, 1.0], 0.1, medium=AIR, relative_humidity=[0.5])
    with pytest.raises(ValueError, match="relative_humidity"):
        range_budget(fil, rx, freq, [1.0], 0.1, medium=AIR, relative_humidity=[1.5])
    with pytest.raises(ValueError, match="receiver"):
        range_budget(fil, Medium(), freq, [1.0], 0.1, medium=AIR, relative_humidity=[0.5])
    with pytest.raises(ValueError, match="pass band"):
        range_budget(fil, rx, np.array([0.1e12, 0.2e12]), [1.0], 0.1, medium=AIR,
                     relative_humidity=[0.5])
    with pytest.raises(ValueError, match="theta"):
        range_budget(fil, rx, freq, [1.0], 4.0, medium=AIR, relative_humidity=[0.5])
