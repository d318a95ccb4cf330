import numpy as np
import pytest
from numpy.testing import assert_allclose

from thzarray import Filament


def test_axis_is_normalised():
    f = Filament(1.0, axis=(0, 3, 4))
    assert_allclose(f.axis, (0, 0.6, 0.8), rtol=1e-15)
    assert_allclose(f.end, (0, 0.6, 0.8))


@pytest.mark.parametrize("kwargs, name", [
    (dict(length=0.0), "length"),
    (dict(length=-1.0), "length"),
    (dict(length=np.nan), "length"),
    (dict(length=1.0, axis=(0, 0, 0)), "axis"),
    (dict(length=1.0, axis=(0, 1)), "axis"),
    (dict(length=1.0, start=(0, np.inf, 0)), "start"),
    (dict(length=1.0, delay=np.nan), "delay"),
    (dict(length=1.0, amplitude="heavy"), "amplitude"),
    (dict(length=1.0, profile=([0, 0.5], [1, 1])), "profile z"),
    (dict(length=1.0, profile=([0, 0.7, 0.5, 1.0], [1, 1, 1, 1])), "increasing"),
    (dict(length=1.0, profile=([0, 1.0], [1, np.nan])), "profile w"),
    (dict(length=1.0, profile=lambda s: 1.0), "shape"),
    (dict(length=1.0, profile=42), "profile"),
])
def test_rejects_bad_input(kwargs, name):
    with pytest.raises(ValueError, match=name) as exc:
        Filament(**kwargs)
    assert "allowed" in str(exc.value)


def test_callable_profile_interpolation_accuracy():
    # Not-a-knot cubic spline: error <= (5/384) h^4 max|w''''| (de Boor, A Practical Guide
    # to Splines, cubic spline interpolation error bound). For sin(3 s) on [0, 1]:
    # max|w''''| = 81.
    f = Filament(1.0, profile=lambda s: np.sin(3 * s) + 2)
    s = np.linspace(0, 1, 3001)
    h = 1.0 / 1024
    assert np.max(np.abs(f.profile_values(s) - np.sin(3 * s) - 2)) <= 5 / 384 * h**4 * 81 * 1.01


def test_profile_zero_outside_and_uniform_one_inside():
    f = Filament(0.5)
    assert_allclose(f.profile_values([-0.1, 0.0, 0.25, 0.5, 0.6]), [0, 1, 1, 1, 0])
    g = Filament(0.5, profile=([0, 0.5], [1.0, 3.0]))
    assert_allclose(g.profile_values([0.0, 0.25, 0.5, 0.7]), [1.0, 2.0, 3.0, 0.0])


def test_replace_revalidates():
    f = Filament(0.5, delay=1e-12)
    assert f.replace(length=0.7).length == 0.7
    assert f.replace(length=0.7).delay == 1e-12
    with pytest.raises(ValueError, match="length"):
        f.replace(length=-2)
