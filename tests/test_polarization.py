import numpy as np
import pytest
from numpy.testing import assert_allclose

from thzarray import (
    FarField,
    Filament,
    Medium,
    degree_of_radial_polarization,
    far_field,
    polarization_map,
)


def test_single_filament_is_radially_polarized_any_axis(rng):
    # docs/references.rst: a line current radiates along theta-hat about its own axis, for any axis.
    axis = rng.normal(size=3)
    fil = Filament(0.3, axis=axis)
    th = np.linspace(0.05, 3.0, 30)[:, None]
    ph = np.linspace(0, 2 * np.pi, 17)
    pm = polarization_map(far_field(fil, 0.4e12, th, ph), axis=axis)
    finite = np.isfinite(pm.degree_radial)
    assert finite.mean() > 0.95
    assert_allclose(pm.degree_radial[finite], 1.0, atol=1e-12)
    assert_allclose(np.abs(np.sin(pm.orientation[finite])), 0.0, atol=1e-7)


def test_azimuthal_field_has_zero_radial_degree():
    # Definition of the degree of radial polarization |E_rho|^2 / |E|^2 (module docstring).
    th = np.linspace(0.1, 1.0, 5)
    ff = FarField(np.array(1e12), th, np.array(0.3), np.zeros(5, complex), np.ones(5, complex),
                  Medium.vacuum())
    pm = polarization_map(ff)
    assert_allclose(pm.degree_radial, 0.0, atol=1e-15)
    assert_allclose(np.abs(pm.orientation), np.pi / 2, atol=1e-12)
    assert degree_of_radial_polarization(ff) == pytest.approx(0.0, abs=1e-15)


def test_stokes_fully_polarized_identity(rng):
    # Born & Wolf, Principles of Optics, sec. 1.4.2: S0^2 = S1^2 + S2^2 + S3^2 for a fully
    # polarized (monochromatic) field.
    th = rng.uniform(0.1, 3.0, 50)
    et = rng.normal(size=50) + 1j * rng.normal(size=50)
    ep = rng.normal(size=50) + 1j * rng.normal(size=50)
    pm = polarization_map(FarField(np.array(1e12), th, rng.uniform(0, 6, 50), et, ep,
                                   Medium.vacuum()))
    s = pm.stokes
    assert_allclose(s[:, 0] ** 2, s[:, 1] ** 2 + s[:, 2] ** 2 + s[:, 3] ** 2, rtol=1e-12)
    # a 45-degree linear field: orientation pi/4
    pm45 = polarization_map(FarField(np.array(1e12), np.array([0.5]), np.array([0.0]),
                                     np.array([1.0 + 0j]), np.array([1.0 + 0j]), Medium.vacuum()))
    assert_allclose(pm45.orientation, np.pi / 4, rtol=1e-12)


def test_two_tilted_filaments_reduce_radial_degree():
    # Two columns along different axes: about the z axis the sum is no longer purely radial,
    # while the degree stays a fraction in (0, 1) (definition; common practice, no source).
    fils = [Filament(0.2, axis=(0.3, 0, 1)), Filament(0.2, axis=(-0.3, 0.2, 1), delay=0.4e-12)]
    th = np.linspace(0.02, 0.6, 40)[:, None]
    ph = np.linspace(0, 2 * np.pi, 24, endpoint=False)
    ff = far_field(fils, 0.5e12, th, ph)
    d = degree_of_radial_polarization(ff, weights=np.sin(th))
    assert 0.0 < d < 0.999


def test_rejects_zero_axis():
    ff = far_field(Filament(0.1), 1e12, 0.3, 0.0)
    with pytest.raises(ValueError, match="axis"):
        polarization_map(ff, axis=(0, 0, 0))
