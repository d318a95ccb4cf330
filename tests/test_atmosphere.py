import numpy as np
import pytest
from numpy.testing import assert_allclose

from thzarray import Medium
from thzarray.air.absorption import (
    attenuate,
    attenuation_coefficient,
    db_per_km_to_per_m,
    line_tables,
    oxygen_attenuation,
    water_vapour_attenuation,
)
from thzarray.air.indices import p453_saturation_pressure
from thzarray.air.medium import AirConditions


@pytest.fixture(scope="module")
def itu676():
    """The `itur` package (test-only reference implementation of ITU-R P.676). Importing it
    switches numpy's divide warnings off globally; restore the caller's settings."""
    saved = np.geterr()
    import itur.models.itu676 as model

    np.seterr(**saved)
    model.change_version(12)
    return model


CONDITIONS = [(15.0, 1013.25, 0.0), (15.0, 1013.25, 0.5), (25.0, 1000.0, 0.9),
              (-10.0, 1030.0, 0.7), (35.0, 850.0, 0.3)]


@pytest.mark.parametrize("t, p, rh", CONDITIONS)
def test_matches_itur_line_by_line(itu676, t, p, rh):
    """ITU-R P.676-12 Annex 1 as implemented in `itur` (which takes the DRY pressure)."""
    air = Medium.air(t, 100 * p, rh)
    cond = air.conditions
    f_ghz = np.concatenate([np.linspace(1.0, 1000.0, 97), [22.23508, 60.0, 118.750334,
                                                           183.310087, 556.935985, 752.033113]])
    t_k = t + 273.15
    saved = np.geterr()
    # itur takes hPa and g/m^3.
    p_dry, rho = cond.dry_pressure / 100, 1e3 * cond.vapour_density
    ox = np.array([itu676.gamma0_exact(f, p_dry, rho, t_k).value for f in f_ghz])
    wv = np.array([itu676.gammaw_exact(f, p_dry, rho, t_k).value for f in f_ghz])
    np.seterr(**saved)
    assert_allclose(oxygen_attenuation(f_ghz * 1e9, air), ox, rtol=1e-6)
    assert_allclose(water_vapour_attenuation(f_ghz * 1e9, air), wv, rtol=1e-6, atol=1e-12)


@pytest.mark.parametrize("f_ghz, db_km", [(22.235, 0.193), (60.0, 14.66), (94.0, 0.404),
                                          (183.31, 28.3), (325.15, 38.2), (380.2, 303.0)])
def test_standard_atmosphere_values(f_ghz, db_km):
    """docs/references.rst (computed with `itur`, ITU-R P.676 Annex 1): standard
    atmosphere 1013.25 hPa total, 15 C, 7.5 g/m^3; tolerance half a unit of the last digit."""
    air = Medium.of_air(AirConditions.from_vapour_density(15.0, 101325.0, 7.5e-3))
    gamma = oxygen_attenuation(f_ghz * 1e9, air) + water_vapour_attenuation(f_ghz * 1e9, air)
    digits = {0.193: 5e-4, 14.66: 5e-3, 0.404: 5e-4, 28.3: 0.05, 38.2: 0.05, 303.0: 0.5}
    assert_allclose(gamma, db_km, rtol=0, atol=digits[db_km])


def test_beyond_one_terahertz_warns():
    air = Medium.air(20.0, 101325.0, 0.5)
    with pytest.warns(UserWarning, match="1-1000 GHz"):
        alpha = attenuation_coefficient(np.array([0.5e12, 1.5e12]), air)
    assert np.all(alpha > 0)
    with pytest.warns(UserWarning, match="1-1000 GHz"):
        oxygen_attenuation(0.5e9, air)


def test_consistent_with_p453_medium():
    """Same vapour-pressure relation as the indices (ITU-R P.453 eqs. (4), (9)): e = RH e_s,
    rho = 216.7 e / T with e in hPa and rho in g/m^3."""
    air = AirConditions.from_relative_humidity(20.0, 100500.0, 0.6)
    e = 0.6 * p453_saturation_pressure(20.0, 100500.0)
    assert_allclose(air.vapour_pressure, e, rtol=1e-15)
    assert_allclose(air.dry_pressure, 100500.0 - e, rtol=1e-15)
    assert_allclose(air.vapour_density, 1e-3 * 216.7 * (e / 100) / 293.15, rtol=1e-14)
    assert_allclose(air.relative_humidity, 0.6, rtol=1e-14)
    ref = Medium.air(20.0, 100500.0, 0.6)
    assert Medium.of_air(air) == ref
    back = AirConditions.from_vapour_density(20.0, 100500.0, air.vapour_density)
    assert_allclose(back.vapour_pressure, e, rtol=1e-14)


def test_dry_air_has_no_water_absorption():
    dry = Medium.of_air(AirConditions(15.0, 101325.0, 0.0))
    assert np.all(water_vapour_attenuation(np.linspace(1e10, 1e12, 50), dry) == 0.0)


def test_power_convention_and_attenuate():
    """alpha is a power coefficient: |E|^2 after R equals 10^(-gamma[dB/km] R[km] / 10)
    (definition of the decibel)."""
    air = Medium.air(15.0, 101325.0, 0.5)
    freq = np.array([0.1e12, 0.3e12, 0.55e12])
    gamma = oxygen_attenuation(freq, air) + water_vapour_attenuation(freq, air)
    assert_allclose(attenuation_coefficient(freq, air), gamma * np.log(10) / 1e4, rtol=1e-14)
    assert_allclose(db_per_km_to_per_m(10.0), np.log(10) / 1e3, rtol=1e-15)
    field = np.ones((3, 2, 3), dtype=complex) * (1 + 2j)
    r = np.array([[10.0, 50.0]] * 3)
    out = attenuate(field, freq[:, None], r, air)
    ratio = np.abs(out[..., 0]) ** 2 / np.abs(field[..., 0]) ** 2
    assert_allclose(ratio, 10 ** (-gamma[:, None] * r / 1e3 / 10), rtol=1e-12)


def test_line_tables_shipped():
    """ITU-R P.676-12 Annex 1: Table 1 has 44 oxygen lines, Table 2 35 water-vapour lines
    ending with the 1780 GHz continuum pseudo-line (from memory)."""
    ox, wv = line_tables()
    assert ox.shape == (44, 7) and wv.shape == (35, 7)
    assert_allclose(ox[0, 0], 50.474214)
    assert_allclose(wv[0, 0], 22.235080)
    assert_allclose(wv[-1, :2], [1780.0, 17506.0])
    assert not ox.flags.writeable


@pytest.mark.parametrize("kwargs, match", [
    (dict(temperature_c=80.0), "temperature_c"),
    (dict(pressure=5000.0), "pressure"),
    (dict(vapour_pressure=10000.0), "vapour_pressure"),
    (dict(vapour_pressure=-1.0), "vapour_pressure"),
])
def test_bad_air(kwargs, match):
    with pytest.raises(ValueError, match=match):
        AirConditions(**kwargs)


def test_vacuum_absorbs_nothing_and_bare_indices_are_refused():
    # Common practice, no source: the vacuum has no gaseous absorption.
    f = np.linspace(1e10, 1e12, 5)
    assert np.all(attenuation_coefficient(f, Medium.vacuum()) == 0.0)
    with pytest.raises(ValueError, match="without air conditions"):
        attenuation_coefficient(f, Medium(1.0003, 1.0003))


def test_bad_inputs():
    air = Medium.air()
    with pytest.raises(ValueError, match="relative_humidity"):
        AirConditions.from_relative_humidity(relative_humidity=1.2)
    with pytest.raises(ValueError, match="freq"):
        attenuation_coefficient(-1.0, air)
    with pytest.raises(ValueError, match="medium"):
        oxygen_attenuation(1e11, "humid")
    with pytest.raises(ValueError, match="field"):
        attenuate(np.ones(4), 1e11, 1.0, air)
    with pytest.raises(ValueError, match="path_length"):
        attenuate(np.ones((2, 3)), 1e11, -1.0, air)
