"""Regression tests for the public API at the edges of its ranges: finite or refused, memory kept.

Every public function either returns finite numbers or raises ValueError naming the parameter
and the allowed range; evaluations that could be large stay inside ``memory_budget`` (peak of
numpy allocations measured with ``tracemalloc``, which numpy reports to) or are refused up
front with the bytes they need.
"""

import tracemalloc

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.constants import c, epsilon_0, mu_0
from scipy.special import sici

from thzarray import (
    GLASSES,
    Aperture,
    BroadbandDetector,
    Filament,
    Medium,
    array_gain,
    calibrate_energy,
    calibrate_field,
    directivity,
    eo_signal_to_noise,
    far_field,
    field_at,
    fit_scan,
    layouts,
    plate_thickness,
    signal_to_noise,
    source_spectral_energy,
    spectral_energy,
    stretched_duration,
    total_energy,
)
from thzarray.array.gain import array_factor_directivity
from thzarray.field.energy import SPHERE_DIRECTIONS_FOR_SOURCE_ROUTE

HUMID = Medium.air(relative_humidity=0.5)


def peak_bytes(func):
    """The result of func() and the peak of traced (numpy and Python) allocations."""
    tracemalloc.start()
    try:
        tracemalloc.reset_peak()
        result = func()
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    return result, peak


# --- direction vectors: scaled first, zero or subnormal refused ----------------------------

@pytest.mark.parametrize("axis, expected", [
    ((1e200, 1e200, 0.0), (2**-0.5, 2**-0.5, 0.0)),
    ((0.0, -1e-300, 0.0), (0.0, -1.0, 0.0)),
    ((3e150, 0.0, 4e150), (0.6, 0.0, 0.8)),
])
def test_filament_axis_is_normalised_without_overflow(axis, expected):
    # the unit vector along v is v / |v| (definition); expected values by hand
    assert_allclose(Filament(0.1, axis=axis).axis, expected, rtol=1e-15, atol=0)


@pytest.mark.parametrize("axis", [(5e-324, 0.0, 0.0), (0.0, 0.0, 0.0), (1e-310, 0.0, 1e-310)])
def test_zero_or_subnormal_axis_is_refused(axis):
    with pytest.raises(ValueError, match="axis.*allowed: a non-zero direction"):
        Filament(0.1, axis=axis)
    with pytest.raises(ValueError, match="axis.*allowed: a non-zero direction"):
        layouts.line(2, 1e-3, 0.02, axis=axis)


def test_layout_axis_is_normalised_without_overflow():
    lay = layouts.grid((2, 2), 1e-3, 0.02, axis=(1e200, 1e200, 0.0))
    for f in lay:
        assert_allclose(f.axis, (2**-0.5, 2**-0.5, 0.0), rtol=1e-15)
    # the starts lie in the plane transverse to the axis (definition of the builders)
    starts = np.array([f.start for f in lay])
    assert_allclose(starts @ np.array(lay[0].axis), 0.0, atol=1e-18)


# --- physical ranges ---------------------------------------------------------------------

@pytest.mark.parametrize("kwargs, name", [
    (dict(start=(1e305, 0.0, 0.0)), "start"),
    (dict(delay=1e300), "delay"),
    (dict(amplitude=1e300), "amplitude"),
    (dict(profile=(np.array([0.0, 0.01, 0.02]), np.array([1e300, 1.0, 1e300]))), "profile w"),
])
def test_out_of_range_filament_values_name_the_parameter(kwargs, name):
    with pytest.raises(ValueError, match=f"{name} = .*allowed: finite numbers"):
        Filament(0.02, **kwargs)


@given(x=st.floats(-1e6, 1e6), delay=st.floats(-1.0, 1.0),
       amplitude=st.floats(-1e30, 1e30).filter(lambda a: a != 0),
       freq=st.floats(1e9, 1e14), theta=st.floats(0.0, np.pi))
def test_far_field_is_finite_over_the_allowed_ranges(x, delay, amplitude, freq, theta):
    fil = Filament(0.02, start=(x, -x, x), delay=delay, amplitude=amplitude)
    ff = far_field(fil, freq, theta, 0.3)
    assert np.isfinite(ff.cartesian).all()
    assert np.isfinite(ff.energy_density).all()


def test_tiny_aperture_is_refused_and_the_smallest_allowed_is_finite():
    lay = layouts.line(3, 2e-3, 0.02)
    band = np.linspace(2e11, 4e11, 3)
    with pytest.raises(ValueError, match="radius = 1e-300 .*allowed"):
        Aperture(theta=0.2, phi=0.0, radius=1e-300, distance=0.5)
    with pytest.raises(ValueError, match="distance = 1e[+]300 .*allowed"):
        Aperture(theta=0.2, phi=0.0, radius=1e-3, distance=1e300)
    gain = array_gain(lay, Aperture(theta=0.2, phi=0.0, radius=1e-9, distance=1e9), band)
    values = [gain.single, gain.incoherent, gain.phased, gain.ideal, gain.phased_over_single]
    assert np.isfinite(values).all() and gain.single > 0


def test_aperture_solid_angle_is_accurate_when_small():
    # Solid angle of a cone of half-angle alpha: 2 pi (1 - cos alpha) (definition); for a
    # small aperture this is pi a^2 / R^2 (1 - 3 a^2 / (4 R^2)) to fourth order.
    ap = Aperture(theta=0.1, phi=0.0, radius=1e-9, distance=1e3)
    ratio = ap.radius / ap.distance
    assert_allclose(ap.solid_angle, np.pi * ratio**2 * (1 - 0.75 * ratio**2), rtol=1e-14)


def test_broadband_response_has_an_upper_bound():
    with pytest.raises(ValueError, match="response = 1e[+]308 .*<= 1e[+]06"):
        BroadbandDetector([1e11, 1e12], [1e308, 1e308], 1e-4)
    with pytest.raises(ValueError, match="area = 1e[+]300 .*allowed"):
        BroadbandDetector([1e11, 1e12], [1.0, 1.0], 1e300)


def test_fit_scan_names_the_non_finite_sample():
    angle = np.radians(np.linspace(0.5, 10.0, 20))
    signal = 1.0 + 0.1 * np.sin(30 * angle)
    signal[3] = np.nan
    with pytest.raises(ValueError, match=r"signal = nan \(at index 3 of an array of shape "
                                         r"\(20,\)\) .*allowed: finite numbers"):
        fit_scan(angle, signal, 3e11)
    with pytest.raises(ValueError, match="signal = 1e[+]300 .*allowed"):
        fit_scan(angle, np.full(20, 1e300), 3e11)
    with pytest.raises(ValueError, match="sigma = 1e-300 .*allowed"):
        fit_scan(angle, 1.0 + 0.1 * np.sin(30 * angle), 3e11, sigma=1e-300)
    with pytest.raises(ValueError, match="distance = 1e[+]300 .*allowed"):
        fit_scan(angle, 1.0 + 0.1 * np.sin(30 * angle), 3e11, distance=1e300)


@pytest.mark.parametrize("call, name", [
    (lambda: signal_to_noise(1e300, 1e-10, 1.0, 1e3), "energy"),
    (lambda: signal_to_noise(1e-9, 1e-300, 1.0, 1e3), "nep"),
    (lambda: signal_to_noise(1e-9, 1e-10, 1e300, 1e3), "integration_time"),
    (lambda: eo_signal_to_noise(1e-3, 1e300, 8e-7, 1.0, 1e3), "probe_energy"),
    (lambda: stretched_duration(1e-15, 1e300), "gdd"),
    (lambda: stretched_duration(1e-300, 1e-26), "duration"),
    (lambda: calibrate_energy(1e-300, 1e300), "measured energy"),
    (lambda: calibrate_field(1.0, 1e300), "model field"),
    (lambda: calibrate_energy(1.0, 1.0, 1e300), "uncertainty"),
    (lambda: plate_thickness(1e300, next(iter(GLASSES))), "delay"),
])
def test_detector_bench_and_calibration_inputs_have_bounds(call, name):
    with pytest.raises(ValueError, match=f"^{name} = .*allowed: finite numbers"):
        call()


@given(energy=st.floats(0.0, 1e3), nep=st.floats(1e-30, 1.0), t_int=st.floats(1e-9, 1e6),
       rate=st.floats(1e-3, 1e9), gdd=st.floats(-1e-20, 1e-20), tau=st.floats(1e-16, 1e-9),
       measured=st.floats(1e-50, 1e50), model=st.floats(1e-50, 1e50))
def test_noise_glass_and_calibration_are_finite_inside_the_bounds(energy, nep, t_int, rate, gdd,
                                                                   tau, measured, model):
    assert np.isfinite(signal_to_noise(energy, nep, t_int, rate))
    assert np.isfinite(stretched_duration(tau, gdd))
    for cal in (calibrate_energy(measured, model, 0.1 * measured, 0.1),
                calibrate_field(measured, model, 0.1 * measured, 0.1)):
        assert np.isfinite([cal.energy_factor, cal.relative_uncertainty]).all()


# --- memory budget ------------------------------------------------------------------------

def test_field_at_refuses_before_allocating():
    budget = 2**30
    freq = np.linspace(1e11, 1e12, 3000)[:, None]
    points = np.ones((1_000_000, 3))

    def call():
        with pytest.raises(ValueError, match=r"fields_at: the result needs 268 GiB"):
            field_at(Filament(0.02), freq, points, memory_budget=budget)

    _, peak = peak_bytes(call)
    # 3000 x 1e6 points x 96 bytes (E and H, complex, 3 components) = 268 GiB; refused with
    # nothing of that shape allocated (the inputs themselves are 24 MB).
    assert peak < 64 * 2**20


def test_long_uniform_column_energy_keeps_the_budget_and_matches_balanis():
    # Balanis, Antenna Theory, traveling-wave long wire (v = c): the angular integral is
    # (4/k^2) [gamma + ln(2kL) - Ci(2kL) - 1 + sin(2kL)/(2kL)]. A 30 m column at 1.5 THz
    # needs ~1e8 sphere directions (9-18 GiB in one piece); it takes the source route.
    fil = Filament(30.0)
    freq = np.array([1.5e12])
    k = 2 * np.pi * freq / c
    kl = k * fil.length
    bracket = np.euler_gamma + np.log(2 * kl) - sici(2 * kl)[1] - 1 + np.sin(2 * kl) / (2 * kl)
    expected = (2 * epsilon_0 * c * (2 * np.pi * freq * mu_0 / (4 * np.pi)) ** 2
                * 2 * np.pi * (4 / k**2) * bracket)
    budget = 2**28
    got, peak = peak_bytes(lambda: spectral_energy(fil, freq, memory_budget=budget))
    assert peak < budget
    assert_allclose(got, expected, rtol=1e-9)
    # The sphere rule would need 16 nodes x 3 (2 k L) / pi panels x 16 azimuths (common
    # practice, no source: three panels per oscillation): more than the route's threshold.
    assert 16 * (3 * (2 * kl[0]) / np.pi) * 16 > SPHERE_DIRECTIONS_FOR_SOURCE_ROUTE


def test_source_route_is_chunked_and_unchanged_by_the_budget():
    fil = Filament(3.0)
    freq = np.array([2e12])
    full = source_spectral_energy(fil, freq, HUMID)
    small, peak = peak_bytes(lambda: source_spectral_energy(fil, freq, HUMID,
                                                            memory_budget=2**22))
    assert peak < 2**22
    assert_allclose(small, full, rtol=1e-12)


def test_sphere_energy_is_chunked_within_the_budget():
    # Two columns (no single-column shortcut): the sphere rule has ~2e6 directions, ~1 GB of
    # temporaries in one piece; in blocks it keeps a 64 MiB budget and gives the same sum.
    lay = layouts.line(2, 1.5e-3, 0.02)
    freq = np.array([1e12])
    full = spectral_energy(lay, freq, HUMID)
    budget = 2**26
    small, peak = peak_bytes(lambda: spectral_energy(lay, freq, HUMID, memory_budget=budget))
    assert peak < budget
    assert_allclose(small, full, rtol=1e-12)
    band = np.array([0.9e12, 1e12])
    total, peak = peak_bytes(lambda: total_energy(lay, band, HUMID, memory_budget=budget))
    assert peak < budget and np.isfinite(total) and total > 0
    d, peak = peak_bytes(lambda: directivity(lay, 0.1, 0.0, freq, HUMID, memory_budget=budget))
    assert peak < budget and np.isfinite(d) and d > 0


def test_array_factor_directivity_is_chunked_within_the_budget():
    lay = layouts.grid((3, 3), 1.5e-3, 0.03)
    full = array_factor_directivity(lay, 3e12, 0.1, 0.0, HUMID)
    budget = 2**24
    small, peak = peak_bytes(lambda: array_factor_directivity(lay, 3e12, 0.1, 0.0, HUMID,
                                                              memory_budget=budget))
    assert peak < budget
    assert_allclose(small, full, rtol=1e-12)


def test_target_fields_too_large_are_refused_before_allocating():
    # 64 x 64 columns, 9 band frequencies and a 5 mm aperture at 0.5 m: the fields alone
    # are 4096 x 9 x ~2000 x 2 complex numbers (~2 GiB, ~6.6 GiB with their working copies).
    lay = layouts.grid((64, 64), 1.5e-3, 0.03)
    target = Aperture(theta=0.175, phi=0.0, radius=5e-3, distance=0.5)
    band = np.linspace(1e11, 5e11, 9)

    def call():
        with pytest.raises(ValueError, match=r"target_fields \(4096 columns x 9 frequencies "
                                             r"x \d+ target nodes\): the result needs"):
            array_gain(lay, target, band)

    _, peak = peak_bytes(call)
    assert peak < 256 * 2**20  # the 4096 Filament objects themselves are ~70 MB


def test_field_points_have_a_range_and_are_finite_at_its_end():
    fil = Filament(0.02)
    with pytest.raises(ValueError, match="points = 1e[+]300 .*<= 1e[+]09 m"):
        field_at(fil, 3e11, [[1e300, 0.0, 0.0]])
    e = field_at(fil, np.array([1e9, 1e14]), np.array([[1e9, -1e9, 1e9], [0.0, 0.0, 1e9]]))
    assert np.isfinite(e).all()
