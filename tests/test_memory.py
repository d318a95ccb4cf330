"""Chunked evaluation: results equal unchunked ones; requests that cannot fit are refused."""
import numpy as np
import pytest
from numpy.testing import assert_array_equal

from thzarray import Filament, Medium, far_field, field_at

AIR = Medium.air(relative_humidity=0.3)
FILS = [Filament(0.1, start=(0.002, 0, 0), delay=1e-12),
        Filament(0.08, start=(-0.002, 0.001, 0), profile=lambda s: 1 + 3 * s)]


def test_far_field_chunked_equals_unchunked(rng):
    f = rng.uniform(0.1e12, 1e12, 5000)
    th, ph = rng.uniform(0, np.pi, 5000), rng.uniform(0, 2 * np.pi, 5000)
    whole = far_field(FILS, f, th, ph, AIR)
    # 32 B/point result + 512 B/point temporaries: this budget forces ~20 chunks of 1024
    chunked = far_field(FILS, f, th, ph, AIR, memory_budget=32 * 5000 + 512 * 1024)
    assert_array_equal(chunked.e_theta, whole.e_theta)
    assert_array_equal(chunked.e_phi, whole.e_phi)


def test_near_field_chunked_equals_unchunked(rng):
    pts = rng.uniform(-0.05, 0.05, (3000, 3)) + np.array([0.0, 0.0, 0.4])
    whole = field_at(FILS, 0.4e12, pts, AIR)
    chunked = field_at(FILS, 0.4e12, pts, AIR, memory_budget=96 * 3000 + 4096 * 1024)
    assert_array_equal(chunked, whole)


def test_result_too_large_is_refused_before_allocating():
    theta = np.linspace(0, np.pi, 100_000)[:, None]
    phi = np.linspace(0, 2 * np.pi, 100_000)  # 1e10 points: 320 GB of result
    with pytest.raises(ValueError, match="memory_budget") as exc:
        far_field(Filament(0.1), 1e12, theta, phi)
    assert "GiB" in str(exc.value) and "allowed" in str(exc.value)
    with pytest.raises(ValueError, match="memory_budget"):
        field_at(Filament(0.1), 1e12, np.ones((1000, 1000, 3)), memory_budget=1e6)


def test_bad_budget():
    with pytest.raises(ValueError, match="memory_budget"):
        far_field(Filament(0.1), 1e12, 0.1, 0.0, memory_budget=0)
