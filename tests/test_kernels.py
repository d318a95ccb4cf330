"""The exact piecewise-cubic transform against 60-digit arithmetic, and kernel twins."""
import mpmath as mp
import numpy as np
import pytest
from numpy.testing import assert_allclose

from thzarray.field import _profile_kernels
from thzarray.source.filament import Filament


def _exact_transform(u, breaks, coefs):
    """int p(s) e^{ius} ds piece by piece from the closed-form moments
    E_0 = (e^{i phi} - 1)/(i phi), E_m = (e^{i phi} - m E_{m-1})/(i phi), in 60-digit
    arithmetic (mpmath), where the upward recurrence is harmless."""
    with mp.workdps(60):
        u = mp.mpf(u)
        total = mp.mpc(0)
        for j in range(len(coefs)):
            h = mp.mpf(breaks[j + 1]) - mp.mpf(breaks[j])
            phi = u * h
            e = [(mp.expj(phi) - 1) / (1j * phi)]
            for m in range(1, 4):
                e.append((mp.expj(phi) - m * e[-1]) / (1j * phi))
            piece = sum(mp.mpf(coefs[j][m]) * h ** (m + 1) * e[m] for m in range(4))
            total += piece * mp.expj(u * mp.mpf(breaks[j]))
        return complex(total)


@pytest.mark.parametrize("profile", [
    (np.linspace(0, 0.2, 9), np.array([0.0, 0.3, 0.9, 1.0, 1.0, 0.8, 0.5, 0.2, 0.0])),
    (np.array([0.0, 0.01, 0.05, 0.2]), np.array([1.0, 2.0, 0.5, 0.1])),
])
def test_cubic_transform_exact(profile):
    fil = Filament(0.2, profile=profile)
    u = np.array([-3e4, -50.0, 1e-3, 0.7, 3.0, 39.0, 41.0, 250.0, 1e3, 3e4, 1.2e5, 1e6])
    got = _profile_kernels.cubic_transform(u, fil._breaks, fil._coefs)
    twin = _profile_kernels.cubic_transform_numpy(u, fil._breaks, fil._coefs)
    ref = np.array([_exact_transform(x, fil._breaks, fil._coefs) for x in u])
    # Relative to each value, including deep side lobes 1e-11 below the peak.
    assert_allclose(got, ref, rtol=1e-10)
    assert_allclose(twin, got, rtol=1e-12)


def test_cubic_transform_of_many_even_pieces_matches_the_exact_sum():
    # Evenly spaced knots take the path that shares the moments and advances the phase by
    # one multiplication per piece (re-seeded every 32): 200 pieces of a two-colour-like
    # profile against the same sum in 60-digit arithmetic (mpmath).
    z = np.linspace(0.0, 0.1, 201)
    fil = Filament(0.1, profile=(z, np.sin(0.3 + 2 * np.pi * z / 0.05) * (1 - z / 0.2)))
    assert _profile_kernels._evenly_spaced(fil._breaks) and fil._coefs.shape[0] >= 200
    u = np.array([-2e4, -300.0, 1e-3, 0.7, 60.0, 125.0, 900.0, 1999.0, 2001.0, 2.5e4, 3e5])
    got = _profile_kernels.cubic_transform(u, fil._breaks, fil._coefs)
    ref = np.array([_exact_transform(x, fil._breaks, fil._coefs) for x in u])
    assert_allclose(got, ref, rtol=1e-10, atol=1e-12 * np.abs(ref).max())
    assert_allclose(_profile_kernels.cubic_transform_numpy(u, fil._breaks, fil._coefs), got,
                    rtol=1e-11, atol=1e-13 * np.abs(ref).max())


def test_cubic_transform_at_zero_is_the_area():
    fil = Filament(1.0, profile=lambda s: 1 + s**2)
    got = _profile_kernels.cubic_transform(np.array([0.0]), fil._breaks, fil._coefs)[0]
    assert_allclose(got, 4.0 / 3.0, rtol=1e-14)  # int_0^1 (1 + s^2) ds


def test_knot_jumps_of_single_piece():
    breaks = np.array([0.0, 2.0])
    coefs = np.array([[1.0, 2.0, 3.0, 4.0]])
    jumps = _profile_kernels.knot_jumps(breaks, coefs)
    # p(0+) = 1, p'(0+) = 2, p''(0+) = 6, p''' = 24; p(2) = 1 + 4 + 12 + 32 = 49, ...
    assert_allclose(jumps[0], [-1.0, -2.0, -6.0, -24.0])
    assert_allclose(jumps[1], [49.0, 2 + 12 + 48, 6 + 48, 24.0])


def test_blocked_even_transform_equals_general_kernel_and_twin():
    # The blocked kernel for evenly spaced knots against the general per-direction kernel
    # and the numpy twin (integration by parts of a C1 cubic; common practice, no source)
    # on the same complex profile, with directions on both sides of |u| h = 1 (jumps sum
    # versus piece moments) and u = 0, in several blocks.
    from thzarray.field import _profile_kernels as pk

    rng = np.random.default_rng(12)
    z = np.linspace(0.0, 0.03, 101)
    fil = Filament(0.03, profile=(z, np.exp(2j * np.pi * z / 0.011) * (1 + z / 0.03)))
    breaks, coefs = fil._breaks, fil._coefs  # a C1 piecewise cubic, complex
    assert pk._evenly_spaced(breaks) and np.iscomplexobj(coefs)
    h = breaks[1] - breaks[0]
    u = np.concatenate([[0.0], rng.uniform(-3 / h, 3 / h, 300), [1 / h, -1 / h]])
    jumps = pk.knot_jumps(breaks, coefs)
    even = np.empty(u.size, complex)
    general = np.empty(u.size, complex)
    hmin = float(np.diff(breaks).min())
    pk._cubic_transform_even(u, breaks, coefs, jumps, hmin, even)
    pk._cubic_transform(u, breaks, coefs, jumps, hmin, general)
    twin = pk.cubic_transform_numpy(u, breaks, coefs)
    scale = np.abs(twin).max()
    assert_allclose(even, general, rtol=0, atol=1e-12 * scale)
    assert_allclose(even, twin, rtol=0, atol=1e-12 * scale)
