import mpmath as mp
import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.constants import c
from scipy.optimize import brentq

from thzarray import Medium, band_cone_angle, cone_angle, cone_range, length_for_cone

HUMID = Medium.air(relative_humidity=0.5)
DRY = Medium.air()


def mp_peak(length, freq, medium, guess):
    """Independent maximisation of sin^2(t) sin^2(X)/(K - n cos t)^2,
    X = (w L / 2c)(K - n cos t) (docs/references.rst line-current pattern), by a 40-digit
    root of the derivative (mpmath)."""
    with mp.workdps(40):
        a = mp.pi * mp.mpf(freq) * mp.mpf(length) / mp.mpf(c)
        ng, nt = mp.mpf(medium.n_group), mp.mpf(medium.n_thz)

        def pattern(t):
            x = a * (ng - nt * mp.cos(t))
            return mp.sin(t) ** 2 * mp.sin(x) ** 2 / x**2

        return float(mp.findroot(lambda t: mp.diff(pattern, t), mp.mpf(guess)))


def test_tan_x_equals_2x_root_gives_0371():
    # docs/references.rst: 0.371 = x0/pi with tan(x0) = 2 x0, x0 = 1.165561 (computed).
    x0 = brentq(lambda x: np.tan(x) - 2 * x, 1.0, 1.5)
    assert_allclose(x0, 1.165561, atol=1e-6)
    assert_allclose(x0 / np.pi, 0.371, atol=5e-4)


@pytest.mark.parametrize("ratio", [100, 300, 1000, 10000])
def test_balanis_0371_rule(ratio):
    # Balanis, Antenna Theory, long-wire traveling-wave antenna: cos(theta_m) = 1 - 0.371
    # lambda / L for v = c; within 0.05 % of the exact peak for L/lambda >= 100.
    f = 1e12
    lam = c / f
    expected = np.arccos(1 - 0.371 * lam / (ratio * lam))
    assert_allclose(cone_angle(ratio * lam, f), expected, rtol=5e-4)


@pytest.mark.parametrize("ratio, degrees", [(10, 15.589), (100, 4.9349)])
def test_exact_vacuum_peaks(ratio, degrees):
    # docs/references.rst (computed): exact maxima with K = n_T = 1.
    lam = c / 1e12
    got = np.degrees(cone_angle(ratio * lam, 1e12))
    assert_allclose(got, degrees, atol=0.5 * 10.0 ** -(len(str(degrees).split(".")[1])))
    assert_allclose(cone_angle(ratio * lam, 1e12),
                    mp_peak(ratio * lam, 1e12, Medium.vacuum(), np.radians(degrees)), rtol=1e-12)


def test_exact_peaks_against_independent_maximisation(rng):
    media = [Medium.vacuum(), DRY, HUMID, Medium(1.0, 1.001), Medium(1.0005, 1.0)]
    for _ in range(25):
        medium = media[rng.integers(len(media))]
        length = 10 ** rng.uniform(-3, 0.5)
        freq = 10 ** rng.uniform(11, 12.5)
        got = float(cone_angle(length, freq, medium))
        assert_allclose(got, mp_peak(length, freq, medium, got), rtol=1e-10)
        # and it is the global maximum: no point of a dense grid is higher
        t = np.linspace(1e-6, np.pi, 200001)
        x = np.pi * freq * length / c * (medium.n_group - medium.n_thz * np.cos(t))
        pattern = np.sin(t) ** 2 * np.sinc(x / np.pi) ** 2
        xg = np.pi * freq * length / c * (medium.n_group - medium.n_thz * np.cos(got))
        assert np.sin(got) ** 2 * np.sinc(xg / np.pi) ** 2 >= pattern.max() * (1 - 1e-12)


def test_vectorised_and_broadcast():
    lengths = np.array([0.05, 0.1, 0.3])[:, None]
    freqs = np.array([0.2e12, 0.5e12, 1e12, 2e12])
    got = cone_angle(lengths, freqs, HUMID)
    assert got.shape == (3, 4)
    for i in range(3):
        for j in range(4):
            assert got[i, j] == pytest.approx(float(cone_angle(lengths[i, 0], freqs[j], HUMID)),
                                              rel=1e-14)
    # cone shrinks as the plasma gets longer and the frequency higher
    assert np.all(np.diff(got, axis=0) < 0) and np.all(np.diff(got, axis=1) < 0)


@given(st.floats(0.02, 1.4), st.floats(0.05e12, 3e12))
def test_length_for_cone_inverts_cone_angle(angle, freq):
    medium = Medium(1.0, 1.0)
    length = length_for_cone(angle, freq, medium)
    assert_allclose(cone_angle(length, freq, medium), angle, rtol=1e-9)


@pytest.mark.parametrize("medium", [HUMID, DRY, Medium(1.0, 1.002)])
def test_inverse_round_trip_in_air(medium):
    freq = 0.5e12
    rng_ = cone_range(freq, medium)
    angles = np.linspace(rng_.lowest * 1.05, np.radians(60), 9)
    lengths = length_for_cone(angles, freq, medium)
    assert_allclose(cone_angle(lengths, freq, medium), angles, rtol=1e-9)


def test_humid_cone_converges_to_cherenkov():
    # n_T > n_g: true Cherenkov angle arccos(n_g/n_T) approached from above as L grows.
    ch = np.arccos(HUMID.n_group / HUMID.n_thz)
    angles = cone_angle(np.array([1.0, 10.0, 100.0, 1e3]), 1e12, HUMID)
    assert np.all(np.diff(angles) < 0) and np.all(angles > ch)
    assert_allclose(angles[-1], ch, rtol=2e-3)
    assert cone_range(1e12, HUMID).lowest == pytest.approx(ch, rel=1e-14)
    with pytest.raises(ValueError, match=r"allowed: \(0\.4"):
        length_for_cone(0.9 * ch, 1e12, HUMID)


def test_dry_air_has_a_minimum_cone():
    # n_T < n_g: the cone stops narrowing at a finite length (dense scan, independent of
    # cone_range's own search).
    medium = Medium(1.001, 1.0)
    freq = 0.3e12
    lengths = np.geomspace(1e-3, 5.0, 20001)
    scan = cone_angle(lengths, freq, medium)
    rng_ = cone_range(freq, medium)
    assert_allclose(rng_.lowest, scan.min(), rtol=1e-4)
    assert rng_.lowest <= scan.min() * (1 + 1e-12)
    assert np.isfinite(rng_.length_at_lowest)
    with pytest.raises(ValueError, match="cannot be reached"):
        length_for_cone(0.98 * rng_.lowest, freq, medium)


@pytest.mark.parametrize("angle", [0.0, np.pi / 2, 2.0])
def test_unreachable_wide_or_zero_angles(angle):
    with pytest.raises(ValueError, match="allowed"):
        length_for_cone(angle, 1e12)


@pytest.mark.parametrize("args, name", [
    ((0.0, 1e12), "length"), ((-1.0, 1e12), "length"), ((np.nan, 1e12), "length"),
    ((0.1, 0.0), "freq"), ((0.1, -3.0), "freq"), ((0.1, np.inf), "freq"),
])
def test_cone_angle_rejects_bad_input(args, name):
    with pytest.raises(ValueError, match=name):
        cone_angle(*args)


def test_length_for_cone_rejects_bad_angle():
    with pytest.raises(ValueError, match="angle"):
        length_for_cone(4.0, 1e12)


def test_band_cone_angle_between_band_edges():
    length, band = 0.3, np.linspace(0.3e12, 0.6e12, 31)
    got = band_cone_angle(length, band, medium=HUMID)
    edges = cone_angle(length, band[[0, -1]], HUMID)
    assert edges[1] < got < edges[0]
    # a narrow band reproduces the single-frequency cone
    narrow = np.linspace(0.5e12 - 1e6, 0.5e12 + 1e6, 3)
    assert_allclose(band_cone_angle(length, narrow, medium=HUMID),
                    cone_angle(length, 0.5e12, HUMID), rtol=1e-5)


def test_band_cone_angle_weights_pull_toward_weighted_frequency():
    length, band = 0.3, np.linspace(0.2e12, 1.0e12, 41)
    low = band_cone_angle(length, band, spectral_weight=np.exp(-((band - 0.2e12) / 0.1e12) ** 2))
    high = band_cone_angle(length, band, spectral_weight=np.exp(-((band - 1.0e12) / 0.1e12) ** 2))
    assert high < low


def test_worked_example_numbers():
    # The README worked example; the numbers printed there are the ones checked here
    # against the independent mpmath maximisation.
    got = float(cone_angle(0.30, 0.3e12, HUMID))
    assert_allclose(got, mp_peak(0.30, 0.3e12, HUMID, got), rtol=1e-10)
    assert f"{np.degrees(got):.2f}" == "2.87"
    length = float(length_for_cone(np.radians(3.0), 0.5e12, HUMID))
    assert_allclose(mp_peak(length, 0.5e12, HUMID, np.radians(3.0)), np.radians(3.0), rtol=1e-9)
    assert f"{100 * length:.1f}" == "16.4"


def test_worked_example_pattern_ratio():
    # README: intensity at 6 deg relative to the cone maximum for 30 cm at 0.3 THz, from the
    # docs/references.rst line-current formula sin^2(t) sin^2(X)/(K - n cos t)^2 evaluated here.
    f, length = 0.3e12, 0.30
    cone = float(cone_angle(length, f, HUMID))

    def pattern(t):
        x = np.pi * f * length / c * (HUMID.n_group - HUMID.n_thz * np.cos(t))
        return np.sin(t) ** 2 * np.sin(x) ** 2 / (HUMID.n_group - HUMID.n_thz * np.cos(t)) ** 2

    ratio = pattern(np.radians(6.0)) / pattern(cone)
    assert f"{ratio:.3f}" == "0.218"
    assert pattern(0.0) == 0.0


# --- the driver's group index --------------------------------------------------------------

def test_group_index_none_is_the_medium_bit_for_bit():
    lengths, freqs = np.array([0.05, 0.3, 1.0]), np.array([0.2e12, 0.5e12, 1e12])
    for medium in (DRY, HUMID, Medium.vacuum()):
        assert np.array_equal(cone_angle(lengths, freqs, medium, group_index=None),
                              cone_angle(lengths, freqs, medium))
        same = cone_angle(lengths, freqs, medium, group_index=medium.n_group)
        assert np.array_equal(same, cone_angle(lengths, freqs, medium))
    angle = np.radians(3.0)
    assert np.array_equal(length_for_cone(angle, 0.3e12, DRY, group_index=None),
                          length_for_cone(angle, 0.3e12, DRY))
    assert cone_range(0.3e12, DRY).group_index == DRY.n_group


def test_plasma_group_index_moves_the_cone():
    # The plasma's share n_e / (2 n_c) = 3.7e-5 at 1.3e23 m^-3 (computed) added to dry air's
    # group index. Each cone is the maximum of the line-current pattern with that K, found
    # independently (mpmath, mp_peak above).
    g = DRY.n_group + 3.7e-5
    plasma_medium = Medium(g, DRY.n_thz)
    # 1 m at 0.3 THz: the larger mismatch narrows the main lobe by about 3 %.
    got = float(cone_angle(1.0, 0.3e12, DRY, group_index=g))
    assert_allclose(got, mp_peak(1.0, 0.3e12, plasma_medium, got), rtol=1e-10)
    assert got < 0.98 * float(cone_angle(1.0, 0.3e12, DRY))
    assert_allclose(length_for_cone(got, 0.3e12, DRY, group_index=g), 1.0, rtol=1e-9)
    # 3 m at 1 THz is past the plasma-corrected minimum cone (2.8 m) but far from dry air's
    # (17 m): the maximum has moved to a side lobe, much wider than linear air predicts.
    rng_plasma = cone_range(1e12, DRY, group_index=g)
    assert rng_plasma.group_index == g
    assert rng_plasma.length_at_lowest < 3.0 < cone_range(1e12, DRY).length_at_lowest
    assert rng_plasma.lowest > cone_range(1e12, DRY).lowest
    got = float(cone_angle(3.0, 1e12, DRY, group_index=g))
    assert_allclose(got, mp_peak(3.0, 1e12, plasma_medium, got), rtol=1e-10)
    assert got > 1.5 * float(cone_angle(3.0, 1e12, DRY))


def test_band_cone_angle_with_group_index():
    band = np.linspace(0.2e12, 0.4e12, 5)
    g = DRY.n_group + 3.7e-5
    got = band_cone_angle(1.0, band, None, DRY, group_index=g)
    assert_allclose(got, band_cone_angle(1.0, band, None, Medium(g, DRY.n_thz)), rtol=1e-12)
    assert band_cone_angle(1.0, band, None, DRY, group_index=None) == band_cone_angle(
        1.0, band, None, DRY)
    with pytest.raises(ValueError, match="group_index"):
        cone_angle(1.0, 1e12, DRY, group_index=0.5)
