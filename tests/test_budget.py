
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
    """W = sum_j w_j A 2 n eps0 c |p.F_j|^2 exp(-alpha_j R) / R^2 with alpha from `itur`
    (ITU-R P.676-12 Annex 1, dry pressure = total - vapour), samples at the band edges so
    the pass-band weights are B/2 each (trapezoid)."""
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
        ref = (per[None, :] * np.exp(-alpha[None, :] * dist[:, None])).sum(axis=1) / dist**2
        assert_allclose(b.energy[i], ref, rtol=1e-6)
        assert_allclose(b.free_space_energy[i], per.sum() / dist**2, rtol=1e-12)
    assert isinstance(b, RangeBudget) and b.energy.shape == (2, 3)
    assert np.all(b.absorption_db > 0)


def test_budget_agrees_with_near_field_far_away():
    """At range the exact line integral (thzarray.field.nearfield) through the same air gives the
    budget's energy; neglected: Fresnel phase k L^2 sin^2(theta) / R and 1/(kR)."""
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
    assert_allclose(w, b.energy[0, 0], rtol=bound)


def test_broadband_detector_budget_spreading_law():
    """Free-space energy falls as 1/R^2 (inverse-square law) and equals A int R |F|^2 ..."""
    fil = Filament(0.2)
    freq = np.linspace(0.1e12, 0.5e12, 41)
    det = BroadbandDetector(freq, np.ones_like(freq), area=1e-4)
    b = range_budget(fil, det, freq, [1.0, 3.0, 9.0], 0.1, medium=AIR, relative_humidity=[0.0])
    medium = AIR
    ff = far_field(fil, freq, 0.1, 0.0, medium)
    ref = 1e-4 * np.trapezoid(2 * medium.n_thz * epsilon_0 * c * ff.magnitude_squared, freq)
    assert_allclose(b.free_space_energy[0] * np.array([1.0, 9.0, 81.0]), ref, rtol=1e-12)


def test_bad_budget_inputs():
    fil = Filament(0.2)
    rx = NarrowbandReceiver(0.1e12, 0.01e12, area=1e-4)
    freq = np.array([0.09e12, 0.11e12])
    with pytest.raises(ValueError, match="distance"):
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
