"""A plasma whose density and collision rate vary along the column."""

import numpy as np
import pytest
from numpy.testing import assert_allclose, assert_array_equal
from radiation_quad import far_field_quad, near_field_quad

from thzarray import Filament, Medium, Plasma, far_field
from thzarray.field.nearfield import fields_at
from thzarray.source.column_plasma import ColumnPlasma

HUMID = Medium.air(relative_humidity=0.5)
PLASMA = Plasma(3e22, 2e12)


def density(s):
    # rises and falls along a 6 cm column (invented numbers)
    return 3e22 * (0.2 + np.exp(-((s - 0.025) / 0.015) ** 2))


def collisions(s):
    return 2e12 * (1.0 + 5.0 * s)


def local_current(freq, n_group):
    """I(w; n_e(s), nu(s)) from an ordinary Plasma built at each s (thzarray.source.plasma)."""
    def current(s):
        p = Plasma(float(density(s)), float(collisions(s)))
        return complex(p.current_spectrum(np.array([freq]), n_group)[0])
    return current


def test_constant_column_plasma_is_the_plasma_exactly():
    fils = (Filament(0.03), Filament(0.02, (1e-3, 0, 0), profile=lambda s: 1 + s),
            Filament(0.03, (0, 1e-3, 0), current_direction=(1, 0, 0), group_index=1.002))
    freq = np.linspace(0.2e12, 2e12, 5)[:, None, None]
    theta, phi = np.linspace(0, 0.5, 6)[:, None], np.linspace(0, 6, 3)
    same = (ColumnPlasma(PLASMA), ColumnPlasma(PLASMA, density=lambda s: np.full_like(s, 3e22),
                                               collision_rate=([0.0, 1.0], [2e12, 2e12])))
    ref = far_field(fils, freq, theta, phi, HUMID, PLASMA)
    for cp in same:
        got = far_field(fils, freq, theta, phi, HUMID, cp)
        assert_array_equal(got.e_theta, ref.e_theta)
        assert_array_equal(got.e_phi, ref.e_phi)
    pts = np.array([[0.01, 0.0, 0.05]])
    ref_n = fields_at(fils, freq[:, 0], pts, HUMID, PLASMA)
    got_n = fields_at(fils, freq[:, 0], pts, HUMID, same[1])
    assert_array_equal(got_n.e, ref_n.e)


@pytest.mark.parametrize("direction", [None, (0.0, 1.0, 0.0)])
def test_varying_plasma_far_field_matches_quad(direction, rng):
    # int w(s) I(w; n_e(s), nu(s)) exp(i u s) ds by quad against the resampled exact transform;
    # the spline bound (5/384) h^4 max|g''''| (thzarray.source.column_plasma) is below 1e-12 of
    # the integral for these smooth profiles, so 1e-8 of the peak tests the method, not luck.
    cp = ColumnPlasma(PLASMA, density=density, collision_rate=collisions)
    prof = lambda s: 1.0 + 0.5 * np.sin(40 * s)  # noqa: E731
    fil = Filament(0.06, axis=(0.1, 0, 1), delay=1e-12, profile=prof,
                   current_direction=direction and np.cross((0.1, 0, 1), (1, 0, 0)),
                   group_index=1.001)
    for _ in range(4):
        f, th, ph = rng.uniform(0.3e12, 2e12), rng.uniform(0, 0.8), rng.uniform(0, 6.28)
        ref = far_field_quad(fil, f, th, ph, HUMID, direction=fil.current, n_group=1.001,
                             local=local_current(f, 1.001))
        peak = np.abs(far_field(fil, f, np.linspace(0, np.pi, 2001), ph, HUMID, cp).cartesian).max()
        for compiled in (True, False):
            got = far_field(fil, f, th, ph, HUMID, cp, compiled=compiled).cartesian
            assert_allclose(got, ref, rtol=1e-8, atol=1e-8 * peak)


def test_varying_plasma_changes_the_spectrum_not_only_the_amplitude():
    # With n_e(s) varying the field is not the constant-plasma field times one factor: the
    # ratio to it varies with frequency (Drude-Lorentz response, thzarray.source.plasma).
    cp = ColumnPlasma(PLASMA, density=density)
    fil = Filament(0.06)
    freq = np.linspace(0.3e12, 3e12, 10)
    ratio = far_field(fil, freq, 0.1, 0.0, HUMID, cp).e_theta / far_field(
        fil, freq, 0.1, 0.0, HUMID, PLASMA).e_theta
    assert np.ptp(np.abs(ratio)) > 0.05 * np.abs(ratio).mean()


def test_mixed_columns_add_up():
    cp = ColumnPlasma(PLASMA, density=density)
    a, b = Filament(0.06), Filament(0.03, (2e-3, 0, 0), group_index=1.003)
    freq = np.array([0.4e12, 0.9e12])[:, None]
    theta = np.linspace(0, 0.4, 5)
    both = far_field((a, b), freq, theta, 0.2, HUMID, cp).e_theta
    parts = far_field(a, freq, theta, 0.2, HUMID, cp).e_theta + far_field(
        b, freq, theta, 0.2, HUMID, cp).e_theta
    assert_allclose(both, parts, rtol=1e-13, atol=1e-13 * np.abs(parts).max())


@pytest.mark.slow
def test_varying_plasma_near_field_matches_quad():
    cp = ColumnPlasma(PLASMA, density=density, collision_rate=collisions)
    fil = Filament(0.03, current_direction=(1, 0, 0))
    freq = 0.4e12
    for x in (np.array([0.003, 0.002, 0.02]), np.array([0.0, 0.02, 0.05])):
        e_ref, h_ref = near_field_quad(fil, freq, x, HUMID, direction=(1, 0, 0),
                                       local=local_current(freq, HUMID.n_group))
        for compiled in (True, False):
            got = fields_at(fil, freq, x, HUMID, cp, compiled=compiled)
            assert_allclose(got.e, e_ref, rtol=1e-6, atol=1e-6 * np.abs(e_ref).max())
            assert_allclose(got.h, h_ref, rtol=1e-6, atol=1e-6 * np.abs(h_ref).max())


@pytest.mark.parametrize("kwargs, match", [
    (dict(density=([0.0, 0.05], [1e22, 2e22])), "density z spans"),
    (dict(density=42), "density"),
    (dict(density=([0.0, 0.1, 0.05], [1e22, 2e22, 1e22])), "increasing"),
    (dict(density=lambda s: np.full_like(s, 1e30)), "electron_density"),
    (dict(collision_rate=lambda s: 1.0), "shape"),
])
def test_bad_column_plasma(kwargs, match):
    with pytest.raises(ValueError, match=match) as exc:
        cp = ColumnPlasma(PLASMA, **kwargs)
        far_field(Filament(0.06), 0.5e12, 0.1, 0.0, HUMID, cp)
    assert "allowed" in str(exc.value)
