"""The non-uniform FFT far field against the direct sums (seeded random layouts).

Reference: the direct radiation-integral sum of thzarray.field.farfield (itself checked
against closed forms in test_farfield.py) and, for uniform parallel columns, the closed
form written out here with numpy (J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 9.8
integrated along the column: L sinc(uL/2) e^{iuL/2}). Agreement is measured relative to the
largest |F| of the map, the scale the path's tolerance refers to.
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, mu_0

from thzarray import Filament, Medium, far_field
from thzarray.field.nufft import axis_groups, nufft_far_field
from thzarray.source.plasma import Plasma

RTOL = 1e-9
MEDIUM = Medium.air(relative_humidity=0.4)


def _close(a, b, rtol=RTOL):
    scale = max(np.abs(b.e_theta).max(), np.abs(b.e_phi).max())
    assert_allclose(a.e_theta, b.e_theta, rtol=0, atol=rtol * scale)
    assert_allclose(a.e_phi, b.e_phi, rtol=0, atol=rtol * scale)


def _random_columns(rng, n, axes=((0.0, 0.0, 1.0),)):
    return [Filament(rng.uniform(0.005, 0.06), start=tuple(rng.uniform(-0.01, 0.01, 3)),
                     axis=axes[i % len(axes)], delay=rng.uniform(-2e-12, 2e-12),
                     amplitude=rng.uniform(-1.5, 1.5)) for i in range(n)]


def _directions(rng, m):
    return rng.uniform(0.0, 0.8, m), rng.uniform(0.0, 2 * np.pi, m)


def test_parallel_columns_equal_closed_form_one_frequency():
    # Jackson eq. 9.8 along each column, written out: common practice for a uniform line
    # current, e^{i(w t - k r.r0)} L sinc(uL/2) e^{iuL/2} (theta-hat . z) i w mu0 / (4 pi).
    rng = np.random.default_rng(11)
    fils = _random_columns(rng, 40)
    theta = np.linspace(0.0, 0.7, 48)[:, None]
    phi = np.linspace(0.0, 2 * np.pi, 40)[None, :]
    f = 0.4e12
    w = 2 * np.pi * f
    k = w * MEDIUM.n_thz / c
    r = np.stack([np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi),
                  np.cos(theta) + 0 * phi], axis=-1)
    ref = np.zeros(r.shape[:2], dtype=complex)
    for fl in fils:
        u = w / c * (MEDIUM.n_group - MEDIUM.n_thz * r[..., 2])
        ref += (fl.amplitude * fl.length * np.sinc(u * fl.length / 2 / np.pi)
                * np.exp(1j * (u * fl.length / 2 + w * fl.delay - k * (r @ np.array(fl.start)))))
    ref *= 1j * w * mu_0 / (4 * np.pi) * (-np.sin(theta))
    got = nufft_far_field(fils, f, theta, phi, MEDIUM)
    assert_allclose(got.e_theta, ref, rtol=0, atol=RTOL * np.abs(ref).max())
    assert_allclose(got.e_phi, 0.0, rtol=0, atol=RTOL * np.abs(ref).max())


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_random_layouts_several_frequencies(seed):
    # common practice, no source: fast path equals the direct sum it replaces
    rng = np.random.default_rng(seed)
    fils = _random_columns(rng, 60)
    theta, phi = _directions(rng, 700)
    freq = rng.uniform(0.1e12, 1.5e12, 700)
    _close(nufft_far_field(fils, freq, theta, phi, MEDIUM),
           far_field(fils, freq, theta, phi, MEDIUM))


def test_tilted_columns_grid_of_frequencies_and_directions():
    # common practice, no source: columns along three axes take three transforms
    rng = np.random.default_rng(21)
    axes = ((0.0, 0.0, 1.0), (0.15, 0.0, 1.0), (0.0, -0.2, 1.0))
    fils = _random_columns(rng, 45, axes)
    assert len(axis_groups(fils, MEDIUM)) == 3
    freq = np.array([0.2e12, 0.6e12, 1.1e12])[:, None, None]
    theta = np.linspace(0.0, 0.9, 30)[:, None]
    phi = np.linspace(0.0, 2 * np.pi, 24, endpoint=False)
    _close(nufft_far_field(fils, freq, theta, phi, MEDIUM),
           far_field(fils, freq, theta, phi, MEDIUM))


def test_staggered_starts_and_steered_delays():
    # common practice, no source: columns staggered along the axis with true-time delays
    rng = np.random.default_rng(5)
    fils = [Filament(0.03, start=(x, y, z), delay=z * MEDIUM.n_group / c + 1e-13 * i)
            for i, (x, y, z) in enumerate(zip(rng.uniform(-0.02, 0.02, 50),
                                              rng.uniform(-0.02, 0.02, 50),
                                              rng.uniform(0.0, 0.1, 50)))]
    theta, phi = _directions(rng, 500)
    _close(nufft_far_field(fils, 0.5e12, theta, phi, MEDIUM),
           far_field(fils, 0.5e12, theta, phi, MEDIUM))


def test_profiles_transverse_currents_group_indices_and_plasma():
    # common practice, no source: profiled columns by their knots' jumps, transverse
    # currents and per-column group indices in their own groups, a plasma's spectrum
    rng = np.random.default_rng(8)
    fils = []
    for i in range(24):
        L = rng.uniform(0.01, 0.04)
        z = np.linspace(0.0, L, 7)
        kw = {"start": tuple(rng.uniform(-0.01, 0.01, 3)), "delay": rng.uniform(0, 1e-12),
              "amplitude": rng.uniform(0.5, 1.5)}
        if i % 3 == 0:
            kw["profile"] = (z, 1.0 + np.sin(np.pi * z / L) ** 2)
        elif i % 3 == 1:
            kw["profile"] = (z, np.exp(2j * z / L) * (1 + z / L))
        if i % 4 == 0:
            kw["current_direction"] = (1.0, 0.0, 0.0)
        if i % 5 == 0:
            kw["group_index"] = 1.001
        fils.append(Filament(L, **kw))
    plasma = Plasma(electron_density=1e22, collision_rate=1e12)
    theta, phi = _directions(rng, 400)
    freq = rng.uniform(0.2e12, 1.2e12, 400)
    _close(nufft_far_field(fils, freq, theta, phi, MEDIUM, plasma),
           far_field(fils, freq, theta, phi, MEDIUM, plasma))


def test_phase_matching_direction_takes_the_direct_sum():
    # In vacuum with n_g = n_T = 1 the mismatch u vanishes on the axis (theta = 0): the
    # removable singularity of (e^{iuL} - 1)/(iu) (its limit L, Jackson eq. 9.8)
    rng = np.random.default_rng(3)
    fils = _random_columns(rng, 30)
    theta = np.concatenate([[0.0, 1e-9, 1e-5], rng.uniform(0, 0.5, 100)])
    phi = rng.uniform(0, 2 * np.pi, theta.size)
    got = nufft_far_field(fils, 0.3e12, theta, phi)
    ref = far_field(fils, 0.3e12, theta, phi)
    _close(got, ref)
    assert np.all(np.isfinite(got.e_theta))


def test_looser_tolerance_stays_within_it():
    # common practice, no source: the requested tolerance bounds the error
    rng = np.random.default_rng(4)
    fils = _random_columns(rng, 50)
    theta, phi = _directions(rng, 600)
    _close(nufft_far_field(fils, 0.8e12, theta, phi, MEDIUM, rtol=1e-5),
           far_field(fils, 0.8e12, theta, phi, MEDIUM), rtol=1e-5)


@pytest.mark.parametrize("bad", [0.0, 1e-15, 0.5, np.nan])
def test_bad_tolerance_names_parameter(bad):
    with pytest.raises(ValueError, match="rtol"):
        nufft_far_field(Filament(0.02), 0.3e12, 0.1, 0.0, rtol=bad)
