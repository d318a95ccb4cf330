"""The vectorisable sine-cosine pair against the C library's (numpy's sin and cos, IEEE 754
double precision; the error bound of the method is in thzarray/base/trig.py)."""

import numpy as np
import pytest
from numba import njit

from thzarray.base.trig import cis, cis_numpy


@njit(cache=False)
def _cis_loop(x, c, s):
    for i in range(x.shape[0]):  # the shape of loop the kernels vectorise
        c[i], s[i] = cis(x[i])


def _both(x):
    c = np.empty_like(x)
    s = np.empty_like(x)
    _cis_loop(x, c, s)
    return c, s


@pytest.mark.parametrize("scale", [1e-9, 1.0, np.pi, 1e2, 1e5, 3e9])
def test_matches_numpy_sin_cos(scale):
    rng = np.random.default_rng(int(np.log10(scale) + 20))
    x = rng.uniform(-scale, scale, 100_000)
    c, s = _both(x)
    c_ref, s_ref = cis_numpy(x)
    # numpy's sin/cos are correctly rounded to within an ulp or so; the series, reduction
    # and two squarings add a few ulps (module docstring).
    assert np.abs(c - c_ref).max() < 2e-15
    assert np.abs(s - s_ref).max() < 2e-15


def test_reduction_boundaries_and_exact_points():
    k = np.arange(-1000, 1001)
    x = np.concatenate([k * np.pi / 4, k * np.pi / 4 + 1e-12, k * np.pi / 4 - 1e-12, [0.0, -0.0]])
    c, s = _both(x)
    assert np.abs(c - np.cos(x)).max() < 2e-15
    assert np.abs(s - np.sin(x)).max() < 2e-15
    assert _both(np.array([0.0]))[0][0] == 1.0


def test_beyond_exact_reduction_stays_a_unit_phasor():
    """Above about 3e9 rad the reduction is no longer exact, but the result must stay on the
    unit circle (finite results for any finite phase the validators admit)."""
    x = np.random.default_rng(3).uniform(-1e13, 1e13, 10_000)
    c, s = _both(x)
    assert np.all(np.isfinite(c)) and np.all(np.isfinite(s))
    assert np.abs(np.hypot(c, s) - 1.0).max() < 1e-14
    # The phase error grows like |x| eps, as the double-precision phase itself does.
    err = np.abs(np.angle((c + 1j * s) * np.exp(-1j * x)))
    assert np.all(err <= 1e-15 * np.abs(x) + 1e-14)
