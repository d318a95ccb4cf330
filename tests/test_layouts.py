import os

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose, assert_array_equal
from scipy.constants import c

from thzarray import Filament, Medium, far_field
from thzarray.app.tables import layout_from_csv, layout_to_csv, read_layout, write_layout
from thzarray.array import _kernels as ak
from thzarray.array import layouts as L
from thzarray.array.arrayfield import (
    array_factor,
    array_far_field,
    factored_far_field,
    filament_fields,
    identical_elements,
)

HUMID = Medium.air(relative_humidity=0.5)


# --- builders -----------------------------------------------------------------------------------

def starts(layout):
    return np.array([f.start for f in layout])


def test_line_and_grid_geometry():
    # Geometry of the builders (common practice, no source): centred, given pitch, z axis.
    lay = L.line(5, 2e-3, 0.03)
    assert_allclose(starts(lay)[:, 0], [-4e-3, -2e-3, 0.0, 2e-3, 4e-3], atol=1e-18)
    assert_allclose(starts(lay)[:, 1:], 0.0, atol=0)
    g = L.grid((4, 3), (1e-3, 2e-3), 0.02, center=(0.0, 0.0, 0.1))
    pos = starts(g)
    assert len(g) == 12
    assert_allclose(np.unique(pos[:, 0]), [-1.5e-3, -0.5e-3, 0.5e-3, 1.5e-3], atol=1e-18)
    assert_allclose(np.unique(pos[:, 1]), [-2e-3, 0.0, 2e-3], atol=1e-18)
    assert_allclose(pos[:, 2], 0.1)
    assert all(f.axis == (0.0, 0.0, 1.0) and f.length == 0.02 for f in g)


def test_builders_place_starts_transverse_to_a_tilted_axis():
    axis = np.array([0.3, -0.2, 1.0]) / np.linalg.norm([0.3, -0.2, 1.0])
    lay = L.grid((3, 3), 1e-3, 0.01, axis=tuple(axis))
    pos = starts(lay)
    assert_allclose(pos @ axis, 0.0, atol=1e-18)
    d = np.linalg.norm(pos[1] - pos[0])
    assert_allclose(d, 1e-3, rtol=1e-12)


@pytest.mark.parametrize("rings", [0, 1, 2, 3])
def test_hexagonal_count_and_spacing(rings):
    # A hexagonal patch of r rings holds 1 + 3 r (r + 1) points, nearest neighbours one pitch
    # apart (common practice, no source).
    lay = L.hexagonal(rings, 1.2e-3, 0.02)
    assert len(lay) == 1 + 3 * rings * (rings + 1)
    if rings:
        pos = starts(lay)
        d = np.linalg.norm(pos[:, None] - pos[None], axis=-1)
        np.fill_diagonal(d, np.inf)
        assert_allclose(d.min(axis=1), 1.2e-3, rtol=1e-12)


def test_ring_radius_and_centre_column():
    lay = L.ring(6, 3e-3, 0.02, center_column=True, rotation=0.1)
    pos = starts(lay)
    assert_allclose(np.hypot(pos[1:, 0], pos[1:, 1]), 3e-3, rtol=1e-12)
    assert_allclose(pos[0], 0.0, atol=0)
    assert_allclose(np.arctan2(pos[1, 1], pos[1, 0]), 0.1, rtol=1e-12)


def test_random_aperture_is_seeded_separated_and_inside():
    a = L.random_aperture(25, 5e-3, 1e-3, 0.02, seed=7)
    b = L.random_aperture(25, 5e-3, 1e-3, 0.02, seed=7)
    assert a == b
    pos = starts(a)
    assert np.all(np.hypot(pos[:, 0], pos[:, 1]) <= 5e-3)
    d = np.linalg.norm(pos[:, None] - pos[None], axis=-1)
    np.fill_diagonal(d, np.inf)
    assert d.min() >= 1e-3
    assert L.random_aperture(25, 5e-3, 1e-3, 0.02, seed=8) != a


def test_random_aperture_that_cannot_fit_raises():
    # Disc packing bound: at most about (R / (s/2))^2 points (common practice, no source).
    with pytest.raises(ValueError, match="min_separation"):
        L.random_aperture(50, 2e-3, 1e-3, 0.02, seed=1)


def test_staggered_moves_starts_and_follows_the_pulse():
    lay = L.line(3, 1e-3, 0.02, delay=[0.0, 1e-12, 2e-12])
    off = np.array([0.0, 5e-3, -2e-3])
    moved = L.staggered(lay, off, medium=HUMID)
    assert_allclose(starts(moved)[:, 2], off)
    # The pulse travels at c / n_group, so it reaches a start moved by dz later by n_g dz / c.
    assert_allclose([f.delay for f in moved], [0.0, 1e-12, 2e-12] + HUMID.n_group * off / c,
                    rtol=1e-12, atol=1e-24)
    kept = L.staggered(lay, off, follow_pulse=False)
    assert [f.delay for f in kept] == [f.delay for f in lay]


# --- bad inputs ---------------------------------------------------------------------------------

def test_empty_layout_raises():
    with pytest.raises(ValueError, match="positions"):
        L.from_positions(np.empty((0, 3)), 0.02)
    with pytest.raises(ValueError, match="at least one Filament"):
        array_factor((), 1e12, 0.1, 0.0)
    with pytest.raises(ValueError, match="count"):
        L.line(0, 1e-3, 0.02)


def test_coincident_filaments_raise():
    with pytest.raises(ValueError, match="coincident"):
        L.from_positions([[0, 0, 0], [1e-3, 0, 0], [0, 0, 0]], 0.02)


def test_non_finite_delays_raise():
    lay = L.line(3, 1e-3, 0.02)
    with pytest.raises(ValueError, match="delays"):
        L.with_delays(lay, [0.0, np.nan, 1e-12])
    with pytest.raises(ValueError, match="delays has shape"):
        L.with_delays(lay, [0.0, 1e-12])
    with pytest.raises(ValueError, match="delay"):
        L.line(3, 1e-3, 0.02, delay=[0.0, np.inf, 0.0])


def test_theta_outside_range_raises():
    lay = L.line(3, 1e-3, 0.02)
    with pytest.raises(ValueError, match=r"theta .*<= 3\.14"):
        array_factor(lay, 1e12, 3.5, 0.0)
    with pytest.raises(ValueError, match="theta"):
        array_factor(lay, 1e12, -0.1, 0.0)


# --- tables -------------------------------------------------------------------------------------

def test_csv_round_trip_is_exact(tmp_path):
    lay = L.staggered(L.random_aperture(9, 4e-3, 5e-4, 0.0213, seed=3,
                                        delay=np.linspace(0, 1.234567e-12, 9)),
                      np.linspace(0, 1e-3, 9), medium=HUMID)
    text = layout_to_csv(lay)
    assert text.splitlines()[0] == "x_m,y_m,z_m,axis_x,axis_y,axis_z,length_m,delay_s,amplitude"
    assert layout_from_csv(text) == lay
    path = tmp_path / "layout.csv"
    write_layout(path, lay)
    assert read_layout(path) == lay
    assert sorted(os.listdir(tmp_path)) == ["layout.csv"]  # no temporary file left


def test_write_layout_refuses_to_overwrite(tmp_path):
    path = tmp_path / "layout.csv"
    write_layout(path, L.line(2, 1e-3, 0.02))
    with pytest.raises(ValueError, match="--force"):
        write_layout(path, L.line(3, 1e-3, 0.02))
    assert len(read_layout(path)) == 2
    write_layout(path, L.line(3, 1e-3, 0.02), force=True)
    assert len(read_layout(path)) == 3
    assert sorted(os.listdir(tmp_path)) == ["layout.csv"]


def test_csv_errors_name_line_and_column():
    good = layout_to_csv(L.line(2, 1e-3, 0.02))
    with pytest.raises(ValueError, match="header.*'delay_parsec'.*no time unit"):
        layout_from_csv(good.replace("delay_s", "delay_parsec"))
    with pytest.raises(ValueError, match="header.*'x_deg'"):
        layout_from_csv(good.replace("x_m", "x_deg"))
    with pytest.raises(ValueError, match="no 'y' column"):
        layout_from_csv("x_mm,length_cm\n1,3\n")
    with pytest.raises(ValueError, match="no length column"):
        layout_from_csv("x_mm,y_mm\n1,3\n")
    bad = good.splitlines()
    bad[2] = bad[2].replace("0.02", "abc")
    with pytest.raises(ValueError, match=r"line 3, length = 'abc'"):
        layout_from_csv("\n".join(bad))
    with pytest.raises(ValueError, match="no rows"):
        layout_from_csv(good.splitlines()[0])


def test_csv_units_in_the_header_and_optional_columns():
    # Units in the header are read with pint (common practice, no source: 1 mm = 1e-3 m,
    # 1 ps = 1e-12 s); missing columns take the documented defaults.
    text = "# two columns\nx_mm,y_mm,delay_ps\n-1.5,0,0\n1.5,0,0.87\n"
    lay = layout_from_csv(text, default_length=0.03, center=(0.0, 0.0, 1.0))
    assert [f.start for f in lay] == [(-1.5e-3, 0.0, 1.0), (1.5e-3, 0.0, 1.0)]
    assert [f.delay for f in lay] == [0.0, pytest.approx(0.87e-12, rel=1e-15)]
    assert all(f.length == 0.03 and f.axis == (0.0, 0.0, 1.0) and f.amplitude == 1.0
               for f in lay)
    assert layout_from_csv(layout_to_csv(lay)) == lay


# --- array factor and the factored sum ------------------------------------------------------------

def test_uniform_linear_array_factor_balanis():
    # Balanis, Antenna Theory, arrays chapter: |AF| / N = |sin(N psi/2) / (N sin(psi/2))|,
    # psi = k d cos(gamma) + beta, gamma from the array axis (here x; on phi = 0,
    # cos(gamma) = sin(theta)). A progressive delay tau per element gives beta = w tau.
    n, d, f, tau = 8, 0.7e-3, 0.3e12, 0.4e-12
    lay = L.line(n, d, 0.02, delay=tau * np.arange(n))
    theta = np.linspace(0.0, np.pi, 721)
    af = array_factor(lay, f, theta, 0.0, HUMID)
    k = 2 * np.pi * f * HUMID.n_thz / c
    psi = -k * d * np.sin(theta) + 2 * np.pi * f * tau
    with np.errstate(invalid="ignore", divide="ignore"):
        ref = np.abs(np.sin(n * psi / 2) / (n * np.sin(psi / 2)))
    ref = np.where(np.abs(np.sin(psi / 2)) < 1e-12, 1.0, ref)
    assert_allclose(np.abs(af) / n, ref, rtol=1e-9, atol=1e-12)


def test_array_factor_kernels_match_numpy_twins(rng):
    pos = rng.uniform(-5e-3, 5e-3, (13, 3))
    lay = L.from_positions(pos, 0.02, delay=rng.uniform(0, 3e-12, 13),
                           amplitude=rng.uniform(0.5, 1.5, 13))
    freq = np.linspace(0.1e12, 1.0e12, 7)
    theta = rng.uniform(0, np.pi, (5, 1))
    phi = rng.uniform(0, 2 * np.pi, 4)
    grid_c = array_factor(lay, freq[:, None, None], theta, phi, HUMID)
    grid_n = array_factor(lay, freq[:, None, None], theta, phi, HUMID, compiled=False)
    assert_allclose(grid_c, grid_n, rtol=1e-12, atol=1e-12 * len(lay))
    uneven = np.array([0.1e12, 0.13e12, 0.5e12])
    assert_allclose(array_factor(lay, uneven[:, None, None], theta, phi, HUMID),
                    array_factor(lay, uneven[:, None, None], theta, phi, HUMID, compiled=False),
                    rtol=1e-12, atol=1e-12 * len(lay))
    # Point mode (frequency varying with direction) equals the grid mode.
    fpts = freq[:, None, None] + 0 * theta
    assert_allclose(array_factor(lay, fpts, theta, phi, HUMID), grid_c, rtol=1e-11,
                    atol=1e-11 * len(lay))
    assert_allclose(array_factor(lay, fpts, theta, phi, HUMID, compiled=False), grid_c,
                    rtol=1e-12, atol=1e-12 * len(lay))


layouts_strategy = st.builds(
    lambda n, seed, length, stagger: (n, seed, length, stagger),
    st.integers(1, 9), st.integers(0, 10_000), st.floats(1e-3, 0.2), st.booleans())


@settings(max_examples=25)
@given(layouts_strategy)
def test_factored_sum_equals_general_sum(params):
    # Element pattern times array factor (Jackson sec. 9.2; Balanis, arrays chapter).
    n, seed, length, stagger = params
    rng = np.random.default_rng(seed)
    pos = rng.uniform(-4e-3, 4e-3, (n, 3))
    if not stagger:
        pos[:, 2] = 0.0
    axis = tuple(rng.normal(size=3) + [0, 0, 3])
    lay = L.from_positions(pos, length, axis=axis, delay=rng.uniform(0, 2e-12, n),
                           amplitude=rng.uniform(0.2, 2.0, n))
    freq = np.linspace(0.1e12, 0.9e12, 5)
    theta = np.linspace(0, np.pi, 9)
    phi = np.linspace(0, 2 * np.pi, 6)
    sub = (freq[:, None, None], theta[:, None], phi)
    a = factored_far_field(lay, *sub, HUMID)
    b = far_field(lay, *sub, HUMID)
    scale = np.abs(b.e_theta).max() + np.abs(b.e_phi).max()
    assert_allclose(a.e_theta, b.e_theta, rtol=0, atol=1e-12 * scale)
    assert_allclose(a.e_phi, b.e_phi, rtol=0, atol=1e-12 * scale)


def test_factored_sum_with_a_shared_profile():
    prof = lambda s: np.exp(-((s - 0.01) / 0.006) ** 2)  # noqa: E731
    lay = L.grid((2, 2), 1e-3, 0.02, profile=prof)
    assert identical_elements(lay)
    sub = (np.array([0.2e12, 0.5e12])[:, None], np.linspace(0.01, 1.0, 7), 0.3)
    a = factored_far_field(lay, *sub)
    b = far_field(lay, *sub)
    assert_allclose(a.e_theta, b.e_theta, rtol=1e-12, atol=1e-12 * np.abs(b.e_theta).max())


def test_general_path_for_mixed_columns():
    lay = (Filament(0.02, (0, 0, 0)), Filament(0.03, (1e-3, 0, 0)))
    assert not identical_elements(lay)
    with pytest.raises(ValueError, match="identical"):
        factored_far_field(lay, 1e12, 0.1, 0.0)
    sub = (0.4e12, np.linspace(0, 1, 5), 0.2)
    assert_array_equal(array_far_field(lay, *sub).e_theta, far_field(lay, *sub).e_theta)


@settings(max_examples=20)
@given(st.floats(1e-3, 0.3), st.floats(-1e-12, 1e-12), st.floats(0.1, 3.0))
def test_one_element_array_equals_its_element(length, delay, amplitude):
    # Common practice, no source: an array of one element is that element.
    fil = Filament(length, start=(1e-3, -2e-3, 5e-3), delay=delay, amplitude=amplitude)
    sub = (np.array([0.2e12, 0.7e12])[:, None], np.linspace(0, np.pi, 11), 0.7)
    ref = far_field(fil, *sub, HUMID)
    for got in (array_far_field((fil,), *sub, HUMID), factored_far_field((fil,), *sub, HUMID)):
        assert_allclose(got.e_theta, ref.e_theta, rtol=1e-12,
                        atol=1e-13 * np.abs(ref.e_theta).max())


def test_filament_fields_sum_to_the_layout_field(rng):
    lay = L.from_positions(rng.uniform(-3e-3, 3e-3, (4, 3)), [0.02, 0.025, 0.03, 0.02],
                           delay=rng.uniform(0, 1e-12, 4))
    freq = np.array([0.2e12, 0.6e12])
    g = filament_fields(lay, freq[:, None], np.array([0.1, 0.3]), 0.4, HUMID)
    tot = np.sum(g * np.exp(2j * np.pi * freq[None, :, None, None]
                            * np.array([f.delay for f in lay])[:, None, None, None]), axis=0)
    ref = far_field(lay, freq[:, None], np.array([0.1, 0.3]), 0.4, HUMID)
    assert_allclose(tot[..., 0], ref.e_theta, rtol=1e-12, atol=1e-12 * np.abs(ref.e_theta).max())


def test_descending_region_kernel_matches_numpy_twin(rng):
    x, y = np.meshgrid(np.linspace(0, 6, 40), np.linspace(0, 2 * np.pi, 64, endpoint=False),
                       indexing="ij")
    values = (np.sin(2 * x) * np.cos(3 * y)) ** 2 + 0.01 * rng.uniform(size=x.shape)
    for wrap in (False, True):
        for i0, j0 in ((10, 5), (30, 60)):
            assert_array_equal(ak.descending_region(values, i0, j0, wrap),
                               ak.descending_region_numpy(values, i0, j0, wrap))
