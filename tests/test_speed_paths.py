"""Fast paths equal the direct sums: lattice row/column factors, the method option.

References: the direct array-factor sum (numpy twin, C. A. Balanis, Antenna Theory, arrays
chapter: AF = sum_n q_n exp(i(w t_n - k r.r_n))) written out in each test, and the direct
far-field sum of thzarray.field.farfield. Rounding bounds: common practice, no source.
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c

from thzarray import Filament, Medium, far_field
from thzarray.array import _lattice_kernels as _kernels
from thzarray.array.arrayfield import array_factor, array_far_field
from thzarray.array.beam import steering_report
from thzarray.array.lattice import find_lattice, site_phasors
from thzarray.array.layouts import grid, hexagonal, line
from thzarray.array.maps import sky_map
from thzarray.array.steering import steering_delays
from thzarray.array.targets import Direction

MEDIUM = Medium.air(relative_humidity=0.3)


def _direct_af(fils, f, theta, phi):
    """The array-factor sum written out (Balanis, arrays chapter)."""
    w = 2 * np.pi * f
    k = w * MEDIUM.n_thz / c
    st = np.sin(theta)
    r = np.stack(np.broadcast_arrays(st * np.cos(phi), st * np.sin(phi), np.cos(theta)), -1)
    out = np.zeros(r.shape[:-1], dtype=complex)
    for fl in fils:
        out += fl.amplitude * np.exp(1j * (w * fl.delay - k * (r @ np.asarray(fl.start))))
    return out


@pytest.mark.parametrize("build", [lambda: grid((8, 8), 1.5e-3, 0.02),
                                   lambda: line(7, 2e-3, 0.02),
                                   lambda: hexagonal(2, 1.7e-3, 0.02)])
def test_lattice_found_and_factor_equals_direct_sum(build):
    rng = np.random.default_rng(12)
    fils = [f.replace(delay=rng.uniform(0, 2e-12), amplitude=rng.uniform(0.2, 1.0))
            for f in build()]
    assert find_lattice([f.start for f in fils]) is not None
    theta = np.linspace(0.0, 1.2, 37)[:, None]
    phi = np.linspace(0.0, 2 * np.pi, 29)
    ref = _direct_af(fils, 0.45e12, theta, phi)
    got = array_factor(fils, 0.45e12, theta, phi, MEDIUM)
    # Horner's rule: about one ulp per site on |AF| <= sum |q| (common practice, no source)
    total = sum(abs(f.amplitude) for f in fils)
    assert_allclose(got, ref, rtol=0, atol=1e-12 * total)
    freq = np.array([0.2e12, 0.45e12, 0.7e12])
    several = array_factor(fils, freq[:, None, None], theta, phi, MEDIUM)
    ref = np.stack([_direct_af(fils, f, theta, phi) for f in freq])
    assert_allclose(several, ref, rtol=0, atol=1e-12 * total)


def test_steered_grid_separates_into_row_and_column_factors():
    fils = grid((6, 9), 1.5e-3, 0.02)
    delays = steering_delays(fils, 0.2, 0.7, MEDIUM)
    fils = [f.replace(delay=d) for f, d in zip(fils, delays)]
    lat = find_lattice([f.start for f in fils])
    ph = site_phasors(lat, np.array([f.delay for f in fils]), np.ones(len(fils)),
                      2 * np.pi * 0.3e12)
    assert isinstance(ph, tuple)  # steering a planar grid: delays linear in the indices
    theta = np.linspace(0.0, 0.8, 21)[:, None]
    phi = np.linspace(0.0, 2 * np.pi, 17)
    # Balanis: a uniform planar array's factor is the product of two linear-array factors
    assert_allclose(array_factor(fils, 0.3e12, theta, phi, MEDIUM),
                    _direct_af(fils, 0.3e12, theta, phi), rtol=0, atol=1e-12 * len(fils))
    assert_allclose(np.abs(array_factor(fils, 0.3e12, 0.2, 0.7, MEDIUM)), len(fils),
                    rtol=1e-9)


def test_lattice_kernel_equals_twin_with_holes():
    rng = np.random.default_rng(2)
    mat = rng.normal(size=(5, 7)) + 1j * rng.normal(size=(5, 7))
    mat[rng.random((5, 7)) < 0.3] = 0.0
    theta, phi = rng.uniform(0, np.pi, 300), rng.uniform(0, 2 * np.pi, 300)
    args = (2e4, theta, phi, np.array([1e-3, 0, 0.01]), np.array([1.5e-3, 0, 0]),
            np.array([0.7e-3, 1.3e-3, 0]))
    assert_allclose(_kernels.lattice_factor(*args, mat), _kernels.lattice_factor_numpy(*args, mat),
                    rtol=0, atol=1e-12 * np.abs(mat).sum())


def test_random_positions_are_not_a_lattice():
    rng = np.random.default_rng(0)
    assert find_lattice(rng.uniform(-0.01, 0.01, (20, 3))) is None
    pts = np.array([[0, 0, 0], [1e-3, 0, 0], [2e-3, 1e-9, 0], [3e-3, 0, 0.0]])
    assert find_lattice(pts) is None  # off the line by 1e-9 m > 1e-10 of the extent


def test_identical_grid_map_equals_general_sum_one_frequency():
    fils = grid((5, 5), 2e-3, 0.03)
    fils = [f.replace(delay=1e-13 * i) for i, f in enumerate(fils)]
    theta = np.linspace(0.01, 0.6, 19)[:, None]
    phi = np.linspace(0.0, 2 * np.pi, 23)
    a = array_far_field(fils, 0.5e12, theta, phi, MEDIUM)
    b = far_field(fils, 0.5e12, theta, phi, MEDIUM)
    assert_allclose(a.e_theta, b.e_theta, rtol=0, atol=1e-11 * np.abs(b.e_theta).max())


@pytest.mark.parametrize("method", ["direct", "nufft", "auto"])
def test_methods_agree(method):
    rng = np.random.default_rng(9)
    fils = [Filament(rng.uniform(0.01, 0.04), start=tuple(rng.uniform(-5e-3, 5e-3, 3)),
                     delay=rng.uniform(0, 1e-12)) for _ in range(30)]
    theta = np.linspace(0.0, 0.6, 25)
    phi = np.linspace(0.0, 2 * np.pi, 16, endpoint=False)
    freq = np.linspace(0.2e12, 0.6e12, 3)
    ref = far_field(fils, freq[:, None, None], theta[:, None], phi, MEDIUM)
    got = array_far_field(fils, freq[:, None, None], theta[:, None], phi, MEDIUM, method=method)
    assert_allclose(got.e_theta, ref.e_theta, rtol=0, atol=1e-9 * np.abs(ref.e_theta).max())
    sm = sky_map(fils, theta, phi, freq, MEDIUM, method=method)
    sd = sky_map(fils, theta, phi, freq, MEDIUM, method="direct")
    assert_allclose(sm.energy, sd.energy, rtol=0, atol=3e-9 * sd.energy.max())


@pytest.mark.parametrize("bad", ["fast", None, 3])
def test_bad_method_named(bad):
    fils = line(3, 2e-3, 0.02)
    with pytest.raises(ValueError, match="method"):
        array_far_field(fils, 0.3e12, 0.1, 0.0, method=bad)
    with pytest.raises(ValueError, match="method"):
        sky_map(fils, [0.1], [0.0], [0.3e12], method=bad)
    with pytest.raises(ValueError, match="method"):
        steering_report(fils, Direction(0.1, 0.0), [0.3e12], method=bad)


def test_mixed_lengths_on_lattice_equal_general_sum():
    # common practice, no source: the per-polar-angle column factors on the lattice sites
    # give the general sum (Jackson eq. 9.8 per column) up to rounding
    rng = np.random.default_rng(31)
    fils = [f.replace(length=rng.uniform(0.01, 0.05), delay=rng.uniform(0, 1e-12),
                      amplitude=rng.uniform(0.3, 1.2)) for f in hexagonal(3, 1.7e-3, 0.02)]
    theta = np.linspace(0.0, 0.6, 33)
    phi = np.linspace(0.0, 2 * np.pi, 20, endpoint=False)
    freq = np.array([0.35e12])
    a = array_far_field(fils, freq[:, None, None], theta[:, None], phi, MEDIUM)
    b = far_field(fils, freq[:, None, None], theta[:, None], phi, MEDIUM)
    assert a.shape == b.shape == (1, 33, 20)
    assert_allclose(a.e_theta, b.e_theta, rtol=0, atol=1e-12 * np.abs(b.e_theta).max())
    assert_allclose(a.e_phi, b.e_phi, rtol=0, atol=1e-12 * np.abs(b.e_theta).max())


def test_lattice_columns_kernel_equals_twin():
    rng = np.random.default_rng(6)
    n = 12
    index = np.stack([rng.integers(0, 4, n), rng.integers(0, 5, n)], axis=1)
    args = (3e3, rng.uniform(-50, 50, 9), rng.uniform(0, 1, 9), rng.uniform(0, 6, 7),
            np.array([0.0, 1e-3, 2e-3]), np.array([1.5e-3, 0, 0]), np.array([0, 1.5e-3, 1e-4]),
            index, np.exp(1j * rng.uniform(0, 6, n)), rng.uniform(0.01, 0.03, n), (4, 5))
    assert_allclose(_kernels.lattice_columns(*args), _kernels.lattice_columns_numpy(*args),
                    rtol=0, atol=1e-12 * 0.03 * n)


def test_auto_above_crossover_takes_nufft_within_tolerance(monkeypatch):
    # common practice, no source: above the crossover "auto" gives the non-uniform FFT's
    # result (patched to record the call), equal to the direct sum within rtol
    from thzarray.array import arrayfield

    rng = np.random.default_rng(17)
    n = arrayfield.NUFFT_CROSSOVER + 20
    fils = [Filament(rng.uniform(0.01, 0.04), start=(*rng.uniform(-0.01, 0.01, 2), 0.0),
                     delay=rng.uniform(0, 1e-12)) for _ in range(n)]
    calls = []
    real = arrayfield.nufft_far_field

    def spy(*args, **kw):
        calls.append(kw["rtol"])
        return real(*args, **kw)

    monkeypatch.setattr(arrayfield, "nufft_far_field", spy)
    theta, phi = np.linspace(0.0, 0.5, 128)[:, None], np.linspace(0.0, 6.0, 130)
    assert theta.size * phi.size >= arrayfield.NUFFT_MIN_POINTS
    got = array_far_field(fils, 0.4e12, theta, phi, MEDIUM, rtol=1e-8)
    ref = far_field(fils, 0.4e12, theta, phi, MEDIUM)
    assert calls == [1e-8]
    assert_allclose(got.e_theta, ref.e_theta, rtol=0, atol=1e-8 * np.abs(ref.e_theta).max())


@pytest.mark.parametrize("method", ["nufft", "auto"])
def test_array_factor_by_nufft_equals_direct_sum(method):
    # Balanis, arrays chapter: AF = sum_n q_n exp(i(w t_n - k r.r_n)), written out here;
    # the non-uniform FFT's error is within rtol of sum |q_n| (Barnett et al. 2019)
    rng = np.random.default_rng(23)
    n = 260
    fils = [Filament(0.02, start=tuple(rng.uniform(-0.02, 0.02, 3)),
                     delay=rng.uniform(0, 2e-12), amplitude=rng.uniform(-1, 1))
            for _ in range(n)]
    theta = rng.uniform(0.0, 1.0, 300)
    phi = rng.uniform(0.0, 2 * np.pi, 300)
    for f in ([0.3e12], [0.2e12, 0.5e12]):
        ref = np.stack([_direct_af(fils, fj, theta, phi) for fj in f])
        got = array_factor(fils, np.array(f)[:, None], theta, phi, MEDIUM, method=method)
        assert_allclose(got, ref, rtol=0, atol=1e-9 * sum(abs(x.amplitude) for x in fils))


def test_filament_fields_of_identical_columns_equal_each_column_alone():
    # pattern multiplication (Balanis, arrays chapter) against each column's own far field
    from thzarray.array.arrayfield import filament_fields

    rng = np.random.default_rng(4)
    fils = [f.replace(delay=rng.uniform(0, 1e-12), amplitude=rng.uniform(0.5, 1.5))
            for f in grid((3, 4), 2e-3, 0.02, axis=(0.1, 0.0, 1.0))]
    freq = np.array([0.2e12, 0.4e12])[:, None]
    theta, phi = rng.uniform(0, 0.6, 15), rng.uniform(0, 6, 15)
    got = filament_fields(fils, freq, theta, phi, MEDIUM)
    for g, f in zip(got, fils):
        ff = far_field(f.replace(delay=0.0), freq, theta, phi, MEDIUM)
        scale = np.abs(ff.e_theta).max()
        assert_allclose(g[..., 0], ff.e_theta, rtol=0, atol=1e-12 * scale)
        assert_allclose(g[..., 1], ff.e_phi, rtol=0, atol=1e-12 * scale)


def test_lattice_separable_kernel_equals_twin():
    # common practice, no source: compiled kernel against its numpy twin
    rng = np.random.default_rng(13)
    args = (2.5e3, np.exp(1j * rng.uniform(0, 6, 9)) * 0.02, rng.uniform(0, 1, 9),
            rng.uniform(0, 6, 11), np.array([1e-3, -2e-3, 0.0]), np.array([1.5e-3, 0, 0]),
            np.array([0, 1.5e-3, 2e-4]), np.exp(1j * rng.uniform(0, 6, 4)),
            np.exp(1j * rng.uniform(0, 6, 5)))
    assert_allclose(_kernels.lattice_separable(*args), _kernels.lattice_separable_numpy(*args),
                    rtol=0, atol=1e-12 * 0.02 * 20)


def test_separable_lattice_factor_equals_twin():
    # Row x column phasors (a steered grid) through the separable Horner kernel against the
    # direct sum over the sites (a planar array's factor as the product of two linear
    # factors: Balanis, Antenna Theory, planar arrays); directions in several blocks, one
    # partial block.
    rng = np.random.default_rng(21)
    rows = rng.normal(size=6) + 1j * rng.normal(size=6)
    cols = rng.normal(size=9) + 1j * rng.normal(size=9)
    theta, phi = rng.uniform(0, np.pi, 333), rng.uniform(0, 2 * np.pi, 333)
    args = (2e4, theta, phi, np.array([1e-3, 0, 0.01]), np.array([1.5e-3, 0, 0]),
            np.array([0.7e-3, 1.3e-3, 0]))
    assert_allclose(_kernels.lattice_factor(*args, (rows, cols)),
                    _kernels.lattice_factor_numpy(*args, (rows, cols)),
                    rtol=0, atol=1e-12 * np.abs(np.outer(rows, cols)).sum())


@pytest.mark.parametrize("nfreq, equal", [(1, True), (3, False), (70, True), (70, False)])
def test_array_factor_grid_kernel_equals_twin(nfreq, equal):
    # Balanis, arrays chapter: AF = sum_n q_n exp(i w (t_n - n_T r.r_n / c)); the compiled
    # blocks (recurrence re-seeded every 32 equal steps) against the numpy twin's exponentials.
    from thzarray.array import _kernels as array_kernels

    rng = np.random.default_rng(nfreq + equal)
    freq = (np.linspace(0.1e12, 1.0e12, nfreq) if equal
            else np.sort(rng.uniform(0.1e12, 1.0e12, nfreq)))
    theta, phi = rng.uniform(0, np.pi, 300), rng.uniform(0, 2 * np.pi, 300)
    start = rng.uniform(-0.02, 0.02, (40, 3))
    delay, amp = rng.uniform(0, 2e-12, 40), rng.normal(size=40)
    args = (freq, theta, phi, start, delay, amp, 1.0003)
    assert_allclose(array_kernels.array_factor_grid(*args),
                    array_kernels.array_factor_grid_numpy(*args),
                    rtol=0, atol=1e-12 * np.abs(amp).sum())
