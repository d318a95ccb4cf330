"""The driver's group index per column (the plasma slows the pulse in its own column)."""

import numpy as np
import pytest
from numpy.testing import assert_allclose, assert_array_equal
from radiation_quad import far_field_quad, near_field_quad
from scipy.constants import c
from scipy.optimize import minimize_scalar

from thzarray import Filament, Medium, Plasma, far_field
from thzarray.array.arrayfield import factored_far_field
from thzarray.array.steering import cone_level, steering_delays
from thzarray.array.targets import Direction, target_fields
from thzarray.array.tolerance import phase_error_variance
from thzarray.field.cone import cone_angle
from thzarray.field.nearfield import fields_at

HUMID = Medium.air(relative_humidity=0.5)
PLASMA = Plasma(1e22, 2e12)


@pytest.mark.parametrize("value", [0.99, 2.5, np.nan, "fast"])
def test_group_index_range(value):
    with pytest.raises(ValueError, match="group_index") as exc:
        Filament(0.1, group_index=value)
    assert "allowed" in str(exc.value)


def test_medium_group_index_given_explicitly_changes_nothing():
    # Same number, same arithmetic: bit for bit (common practice, no source).
    prof = lambda s: np.exp(-((s - 0.01) / 0.005) ** 2)  # noqa: E731
    base = (Filament(0.03), Filament(0.02, (1e-3, 0, 0), profile=prof),
            Filament(0.025, (0, 2e-3, 0), current_direction=(1, 0, 0)))
    explicit = tuple(f.replace(group_index=HUMID.n_group) for f in base)
    freq = np.linspace(0.2e12, 1e12, 5)[:, None, None]
    theta, phi = np.linspace(0, 0.6, 7)[:, None], np.linspace(0, 6, 4)
    for plasma in (None, PLASMA):
        for compiled in (True, False):
            a = far_field(base, freq, theta, phi, HUMID, plasma, compiled=compiled)
            b = far_field(explicit, freq, theta, phi, HUMID, plasma, compiled=compiled)
            assert_array_equal(a.e_theta, b.e_theta)
            assert_array_equal(a.e_phi, b.e_phi)
    pts = np.array([[0.01, 0.0, 0.05], [0.0, 0.02, -0.01]])
    na = fields_at(base, np.array([0.3e12, 0.6e12])[:, None], pts, HUMID, PLASMA)
    nb = fields_at(explicit, np.array([0.3e12, 0.6e12])[:, None], pts, HUMID, PLASMA)
    assert_array_equal(na.e, nb.e)
    assert_array_equal(na.h, nb.h)
    assert_array_equal(steering_delays(base, 0.2, 0.1, HUMID),
                       steering_delays(explicit, 0.2, 0.1, HUMID))


@pytest.mark.parametrize("n_group", [1.0005, 1.003])
def test_cone_follows_the_column_group_index(n_group):
    # The pattern maximum of a uniform column with group index n_g is the cone angle of a
    # medium whose n_group is n_g (thzarray.field.cone solves that stationarity condition on
    # its own); found here by a bounded search of |F|^2.
    length, freq = 0.05, 0.5e12
    fil = Filament(length, group_index=n_group)
    theta = np.linspace(1e-4, 0.6, 6001)
    pattern = far_field(fil, freq, theta, 0.0, HUMID).magnitude_squared
    i = int(np.argmax(pattern))
    res = minimize_scalar(lambda t: -far_field(fil, freq, t, 0.0, HUMID).magnitude_squared,
                          bounds=(theta[i - 1], theta[i + 1]), method="bounded",
                          options={"xatol": 1e-12})
    ref = cone_angle(length, freq, HUMID.with_group_index(n_group))
    assert_allclose(res.x, ref, rtol=0, atol=1e-7)
    # and cone_level uses it: the element maximum is at that cone, so level at it is 1
    lvl = cone_level((fil,), float(ref), 0.0, np.array([freq]), HUMID)
    assert_allclose(lvl.level, 1.0, rtol=1e-9)


def test_far_field_with_group_index_matches_quad(rng):
    fil = Filament(0.07, start=(0.0, 0.01, 0.0), axis=(0.0, 0.2, 1.0), delay=2e-12,
                   group_index=1.004)
    for _ in range(5):
        f, th, ph = rng.uniform(0.1e12, 1.5e12), rng.uniform(0, np.pi), rng.uniform(0, 6.28)
        ref = far_field_quad(fil, f, th, ph, HUMID, n_group=1.004)
        got = far_field(fil, f, th, ph, HUMID).cartesian
        assert_allclose(got, ref, rtol=1e-9, atol=1e-9 * np.abs(ref).max())


def test_near_field_with_group_index_matches_quad():
    fil = Filament(0.02, group_index=1.004, current_direction=(0, 1, 0))
    x = np.array([0.004, 0.003, 0.03])
    e_ref, h_ref = near_field_quad(fil, 0.6e12, x, HUMID, direction=(0, 1, 0), n_group=1.004)
    got = fields_at(fil, 0.6e12, x, HUMID)
    assert_allclose(got.e, e_ref, rtol=1e-6, atol=1e-6 * np.abs(e_ref).max())
    assert_allclose(got.h, h_ref, rtol=1e-6, atol=1e-6 * np.abs(h_ref).max())


def test_plasma_current_uses_each_column_group_index():
    # I(w) of thzarray.source.plasma with the column's group index multiplies its field.
    freq = np.linspace(0.2e12, 2e12, 7)
    fast, slow = Filament(0.02), Filament(0.02, (1e-3, 0, 0), group_index=1.01)
    for fil in (fast, slow):
        with_plasma = far_field(fil, freq, 0.3, 0.0, HUMID, PLASMA).e_theta
        bare = far_field(fil, freq, 0.3, 0.0, HUMID).e_theta
        ref = PLASMA.current_spectrum(freq, fil.group_index_in(HUMID))
        assert_allclose(with_plasma / bare, ref, rtol=1e-12)
    both = far_field((fast, slow), freq, 0.3, 0.0, HUMID, PLASMA).e_theta
    parts = sum(far_field(f, freq, 0.3, 0.0, HUMID, PLASMA).e_theta for f in (fast, slow))
    assert_allclose(both, parts, rtol=1e-13, atol=1e-13 * np.abs(parts).max())


def test_steering_uses_each_column_group_index():
    # t_n = (n_T r0.(r_n + s_n a) - n_{g,n} s_n)/c brings columns of different group index in
    # phase at every frequency: the band energy reaches the Cauchy-Schwarz limit
    # (sum |g_n|)^2 (thzarray.array.steering module docstring).
    lay = (Filament(0.02), Filament(0.02, (1.5e-3, 0, 0), group_index=1.002),
           Filament(0.02, (0, 1.5e-3, 0), group_index=1.006))
    t = steering_delays(lay, 0.12, 0.4, HUMID)
    tf = target_fields(lay, Direction(0.12, 0.4), np.linspace(0.2e12, 0.8e12, 7), HUMID)
    assert_allclose(tf.energy(t), tf.coherent_limit, rtol=1e-10)
    # a layout steered ignoring the group indices falls short
    naive = steering_delays(tuple(f.replace(group_index=None) for f in lay), 0.12, 0.4, HUMID)
    assert tf.energy(naive) < 0.999 * tf.coherent_limit
    # the factored path sees that the columns differ
    with pytest.raises(ValueError, match="group index"):
        factored_far_field(lay, 0.3e12, 0.1, 0.0, HUMID)


def test_onset_error_variance_uses_the_column_group_index():
    # (w/c)^2 (n_g - n_T cos psi)^2 sigma^2 (thzarray.array.tolerance module docstring)
    fil = Filament(0.02, group_index=1.01)
    freq, sigma = np.array([0.5e12]), 1e-4
    var = phase_error_variance((fil,), 0.2, 0.0, freq, longitudinal_error=sigma, medium=HUMID)
    w = 2 * np.pi * freq[0]
    ref = (w / c) ** 2 * (1.01 - HUMID.n_thz * np.cos(0.2)) ** 2 * sigma**2
    assert_allclose(var[0, 0, 0], ref, rtol=1e-12)


def test_memory_budget_counts_the_second_buffer_of_several_groups():
    # Columns with different current spectra are summed into a second result-sized buffer:
    # 64 bytes per point instead of 32 (thzarray.base.memory refuses what cannot fit).
    freq = np.linspace(0.2e12, 1e12, 8)[:, None, None]
    theta, phi = np.linspace(0, 0.5, 16)[:, None], np.linspace(0, 6, 16)
    budget = 48 * freq.size * theta.size * phi.size
    one = (Filament(0.02), Filament(0.02, (1e-3, 0, 0)))
    two = (Filament(0.02), Filament(0.02, (1e-3, 0, 0), group_index=1.01))
    far_field(one, freq, theta, phi, HUMID, PLASMA, memory_budget=budget)
    far_field(two, freq, theta, phi, HUMID, memory_budget=budget)  # no plasma: one group
    with pytest.raises(ValueError, match="memory_budget"):
        far_field(two, freq, theta, phi, HUMID, PLASMA, memory_budget=budget)


def test_grid_pointwise_and_twin_agree_with_mixed_group_indices():
    # The outer-grid kernel (frequency recurrence), the pointwise kernel and the numpy twin
    # compute one formula (thzarray.field._kernels); they agree to rounding.
    lay = (Filament(0.03), Filament(0.031, (1e-3, 0, 0), group_index=1.004),
           Filament(0.029, (0, 2e-3, 0), axis=(0.1, 0, 1), current_direction=(0, 1, 0),
                    group_index=1.0015))
    freq = np.linspace(0.2e12, 1e12, 40)
    theta, phi = np.linspace(0, 0.8, 9), np.linspace(0, 2 * np.pi, 5)
    grid = far_field(lay, freq[:, None, None], theta[:, None], phi, HUMID)
    f, t, p = np.meshgrid(freq, theta, phi, indexing="ij")
    for compiled in (True, False):
        ff = far_field(lay, f, t, p, HUMID, compiled=compiled)
        for a, b in ((grid.e_theta, ff.e_theta), (grid.e_phi, ff.e_phi)):
            assert_allclose(a, b, rtol=1e-12, atol=1e-12 * np.abs(b).max())
