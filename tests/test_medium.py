import numpy as np
import pytest
from numpy.testing import assert_allclose

from thzarray.air.indices import (
    ciddor_group_index,
    ciddor_index,
    p453_refractivity,
    p453_saturation_pressure,
    vapour_density_to_pressure,
)
from thzarray.air.medium import AirConditions, Medium


def test_ciddor_standard_air_800nm():
    # Ciddor, Appl. Opt. 35, 1566 (1996); standard air 15 C, 101325 Pa, dry, 450 ppm CO2.
    # Values computed from Ciddor's formula (docs/references.rst): n - 1 = 2.75048e-4,
    # n_g - 1 = 2.79970e-4.
    assert_allclose(ciddor_index(800e-9) - 1, 2.75048e-4, rtol=2e-6)
    assert_allclose(ciddor_group_index(800e-9) - 1, 2.79970e-4, rtol=2e-6)


def test_ciddor_633nm_from_memory():
    # From memory: Ciddor's standard-air refractivity at 633 nm is about 2.7653e-4.
    assert_allclose(ciddor_index(633e-9) - 1, 2.7653e-4, rtol=1e-4)


@pytest.mark.parametrize("rh", [0.0, 0.5, 1.0])
def test_group_index_equals_numerical_derivative(rh):
    # Definition n_g = n - lambda dn/dlambda, by a central finite difference of the phase
    # index (independent of the analytic derivative in the code).
    lam, h = 800e-9, 1e-10
    dn = (ciddor_index(lam + h, 20.0, 1e5, rh) - ciddor_index(lam - h, 20.0, 1e5, rh)) / (2 * h)
    expected = ciddor_index(lam, 20.0, 1e5, rh) - lam * dn
    assert_allclose(ciddor_group_index(lam, 20.0, 1e5, rh) - 1, expected - 1, rtol=1e-6)


def test_p453_standard_atmosphere():
    # ITU-R P.453: N = 77.6 Pd/T + 72 e/T + 3.75e5 e/T^2 (hPa, K), e = rho T / 216.7
    # (rho in g/m^3). Standard atmosphere 1013.25 hPa, 15 C, 7.5 g/m^3 -> N = 317.7
    # (docs/references.rst, computed). The functions take and return SI (Pa, kg/m^3).
    e = vapour_density_to_pressure(7.5e-3, 15.0)
    assert_allclose(e, 100 * 7.5 * 288.15 / 216.7, rtol=1e-12)
    assert_allclose(p453_refractivity(15.0, 101325.0 - e, e), 317.7, atol=0.05)


def test_p453_saturation_pressure_20c():
    # Common practice, no source: saturation vapour pressure over water at 20 C is about
    # 23.4 hPa (steam tables); P.453's Magnus-type formula agrees to 0.5 %.
    assert_allclose(p453_saturation_pressure(20.0), 2339.0, rtol=5e-3)


def test_medium_air_dry_uses_dry_term_only():
    m = Medium.air(temperature_c=15.0, pressure=101325.0, relative_humidity=0.0)
    # ITU-R P.453 dry term only.
    assert_allclose((m.n_thz - 1) * 1e6, 77.6 * 1013.25 / 288.15, rtol=1e-12)
    assert_allclose(m.n_group, ciddor_group_index(800e-9), rtol=1e-15)
    assert m.n_thz < m.n_group


def test_humid_air_cherenkov_and_coherence_lengths():
    # docs/references.rst (computed): in the standard atmosphere (7.5 g/m^3) n_T > n_g and the
    # Cherenkov angle arccos(n_g/n_T) is about 0.50 deg; coherence length
    # lambda / (2|n_T - n_g|) about 13 m at 0.3 THz (humid) and about 70 m (dry).
    e = vapour_density_to_pressure(7.5e-3, 15.0)
    rh = e / p453_saturation_pressure(15.0, 101325.0)
    humid = Medium.air(relative_humidity=rh)
    assert humid.n_thz > humid.n_group
    assert_allclose(np.degrees(np.arccos(humid.n_group / humid.n_thz)), 0.50, atol=0.01)
    assert_allclose(humid.coherence_length(0.3e12), 13.0, rtol=0.05)
    assert_allclose(Medium.air().coherence_length(0.3e12), 70.0, rtol=0.05)


def test_vacuum():
    assert Medium.vacuum() == Medium(1.0, 1.0)
    assert Medium.vacuum().is_vacuum and not Medium.air().is_vacuum
    assert np.isinf(Medium.vacuum().coherence_length(1e12))


def test_air_keeps_its_conditions_and_changes_humidity():
    # The same object carries the indices and the conditions they came from.
    m = Medium.air(temperature_c=20.0, pressure=100500.0, relative_humidity=0.3,
                   laser_wavelength=790e-9)
    assert isinstance(m.conditions, AirConditions)
    assert_allclose(m.conditions.relative_humidity, 0.3, rtol=1e-14)
    assert m.laser_wavelength == 790e-9
    wet = m.with_humidity(0.9)
    ref = Medium.air(temperature_c=20.0, pressure=100500.0, relative_humidity=0.9,
                     laser_wavelength=790e-9)
    assert wet == ref and wet.n_thz > m.n_thz
    with pytest.raises(ValueError, match="air conditions"):
        Medium(1.0003, 1.0003).with_humidity(0.5)


@pytest.mark.parametrize("kwargs, name", [
    (dict(n_group=0.9), "n_group"),
    (dict(n_thz=float("nan")), "n_thz"),
    (dict(n_group="x"), "n_group"),
])
def test_medium_rejects_bad_indices(kwargs, name):
    with pytest.raises(ValueError, match=name):
        Medium(**kwargs)


@pytest.mark.parametrize("kwargs, name", [
    (dict(relative_humidity=1.5), "relative_humidity"),
    (dict(temperature_c=500.0), "temperature_c"),
    (dict(pressure=-3.0), "pressure"),
    (dict(laser_wavelength=10e-6), "wavelength"),
])
def test_air_rejects_out_of_range(kwargs, name):
    with pytest.raises(ValueError, match=name) as exc:
        Medium.air(**kwargs)
    assert "allowed" in str(exc.value)
