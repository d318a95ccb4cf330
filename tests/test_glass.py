import mpmath
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c

from thzarray import Medium
from thzarray.air.indices import ciddor_group_index
from thzarray.inverse.glass import (
    GLASSES,
    Glass,
    air_group_index,
    as_glass,
    group_delay_dispersion,
    group_index,
    group_velocity_dispersion,
    plate_thickness,
    refractive_index,
    stretched_duration,
)

# Sellmeier coefficients typed again here from the sources (B_i, C_i in um^2), so that the
# references below do not come from the code under test.
SOURCES = {
    # I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965): resonance wavelengths in um.
    "fused_silica": ((0.6961663, 0.4079426, 0.8974794), (0.0684043**2, 0.1162414**2, 9.896161**2)),
    # SCHOTT data sheet N-BK7: C_i given directly in um^2.
    "N-BK7": ((1.03961212, 0.231792344, 1.01046945), (0.00600069867, 0.0200179144, 103.560653)),
    # I. H. Malitson, Appl. Opt. 2, 1103 (1963): resonance wavelengths in um.
    "CaF2": ((0.5675888, 0.4710914, 3.8484723), (0.050263605**2, 0.1003909**2, 34.649040**2)),
    # Malitson and Dodge (1972) / Dodge (1986), sapphire ordinary ray: wavelengths in um.
    "sapphire_o": ((1.4313493, 0.65054713, 5.3414021), (0.0726631**2, 0.1193242**2, 18.028251**2)),
}

# Fraunhofer lines (nm), the wavelengths catalogues tabulate (common practice, no source).
LINE_F, LINE_D, LINE_C = 486.1327e-9, 587.5618e-9, 656.2725e-9


def mp_index(name, wavelength_m):
    """Sellmeier n at a vacuum wavelength (m) in 30-digit arithmetic."""
    b, cc = SOURCES[name]
    lam2 = (mpmath.mpf(wavelength_m) * 1e6) ** 2
    return mpmath.sqrt(1 + sum(mpmath.mpf(bi) * lam2 / (lam2 - mpmath.mpf(ci))
                               for bi, ci in zip(b, cc)))


@pytest.mark.parametrize("name, wavelength, published, atol, source", [
    # Malitson (1965), measured indices of fused silica at 20 degC (from memory).
    ("fused_silica", LINE_F, 1.46313, 2e-5, "Malitson 1965 table (from memory)"),
    ("fused_silica", LINE_D, 1.45846, 2e-5, "Malitson 1965 table (from memory)"),
    ("fused_silica", 852.11e-9, 1.45247, 2e-5, "Malitson 1965 table (from memory)"),
    ("fused_silica", 1013.98e-9, 1.45024, 2e-5, "Malitson 1965 table (from memory)"),
    # SCHOTT data sheet N-BK7: n_F, n_d, n_C (five decimals), also printed as the data-sheet
    # reference by an independent public optics code; n_s at 852.11 nm (from memory).
    ("N-BK7", LINE_F, 1.52238, 1e-5, "SCHOTT N-BK7 data sheet"),
    ("N-BK7", LINE_D, 1.51680, 1e-5, "SCHOTT N-BK7 data sheet"),
    ("N-BK7", LINE_C, 1.51432, 1e-5, "SCHOTT N-BK7 data sheet"),
    ("N-BK7", 852.11e-9, 1.50980, 1e-5, "SCHOTT N-BK7 data sheet (from memory)"),
    # CaF2 n_d = 1.43385 (Malitson 1963 table, from memory).
    ("CaF2", LINE_D, 1.43385, 2e-5, "Malitson 1963 (from memory)"),
    # Sapphire, ordinary ray: n_o = 1.768 at 589 nm and 1.7545 at 1064 nm (from memory).
    ("sapphire_o", 589.3e-9, 1.768, 6e-4, "sapphire n_o at 589 nm (from memory)"),
    ("sapphire_o", 1064e-9, 1.7545, 6e-5, "sapphire n_o at 1064 nm (from memory)"),
])
def test_published_indices(name, wavelength, published, atol, source):
    assert_allclose(refractive_index(name, wavelength), published, rtol=0, atol=atol,
                    err_msg=source)


def test_fused_silica_at_800nm():
    # Computed from Malitson's (1965) Sellmeier equation: n = 1.4533, n_g = 1.4671 at 800 nm.
    assert round(float(refractive_index("fused_silica", 800e-9)), 4) == 1.4533
    assert round(float(group_index("fused_silica", 800e-9)), 4) == 1.4671


@pytest.mark.parametrize("name", list(SOURCES))
def test_index_against_independent_sellmeier(name):
    # The cited Sellmeier equation evaluated with mpmath from the coefficients typed above
    # (computed from the cited Sellmeier equation), at both ends and the middle of the range.
    lo, hi = GLASSES[name].wavelength_range
    for wl in (lo, 800e-9, 0.5 * (lo + hi), hi):
        assert_allclose(refractive_index(name, wl), float(mp_index(name, wl)), rtol=1e-14)


@pytest.mark.parametrize("name", list(SOURCES))
def test_group_index_and_gvd_by_numerical_differentiation(name):
    # n_g = n - lambda dn/dlambda and beta_2 = lambda^3/(2 pi c^2) d2n/dlambda2 (Diels and
    # Rudolph, ch. 1), derivatives taken by mpmath's finite differences of n(lambda).
    for wl in (400e-9, 800e-9, 1550e-9):
        with mpmath.workdps(30):
            n1 = mpmath.diff(lambda x: mp_index(name, x), wl, 1)
            n2 = mpmath.diff(lambda x: mp_index(name, x), wl, 2)
            ng = mp_index(name, wl) - wl * n1
            beta2 = wl**3 / (2 * mpmath.pi * c**2) * n2
        assert_allclose(group_index(name, wl), float(ng), rtol=1e-13)
        assert_allclose(group_velocity_dispersion(name, wl), float(beta2), rtol=1e-10)


def test_group_index_by_plain_central_differences():
    # Same check without mpmath: a central difference of the module's own n(lambda), step
    # 1e-10 m (truncation ~h^2 n''' and rounding ~1e-16/h, both below 1e-7 here).
    h = 1e-10
    for name in GLASSES:
        wl = np.array([600e-9, 800e-9, 1200e-9])
        dn = (refractive_index(name, wl + h) - refractive_index(name, wl - h)) / (2 * h)
        assert_allclose(group_index(name, wl), refractive_index(name, wl) - wl * dn,
                        rtol=1e-7)


@pytest.mark.parametrize("name, fs2_per_mm", [
    # Group-velocity dispersion at 800 nm, the values laser labs quote (from memory).
    ("fused_silica", 36.16), ("N-BK7", 44.65), ("CaF2", 27.87), ("sapphire_o", 58.04),
])
def test_gvd_at_800nm(name, fs2_per_mm):
    assert_allclose(group_velocity_dispersion(name, 800e-9), fs2_per_mm * 1e-27, rtol=2e-3)


def test_gdd_is_gvd_times_thickness():
    d = np.array([0.0, 1e-3, 6.35e-3])
    assert_allclose(group_delay_dispersion("N-BK7", 800e-9, d),
                    d * group_velocity_dispersion("N-BK7", 800e-9), rtol=1e-15)


def _fwhm(t, y):
    """FWHM of a single peak by linear interpolation of the half-maximum crossings."""
    half = 0.5 * y.max()
    above = np.nonzero(y >= half)[0]
    i, j = above[0], above[-1]
    left = np.interp(half, [y[i - 1], y[i]], [t[i - 1], t[i]])
    right = np.interp(half, [y[j + 1], y[j]], [t[j + 1], t[j]])
    return right - left


@pytest.mark.parametrize("gdd", [0.0, 500e-30, -1500e-30, 4000e-30])
def test_gaussian_stretch_against_numerical_propagation(gdd):
    # A transform-limited Gaussian of intensity FWHM tau, spectral phase GDD w^2/2, intensity
    # FWHM measured on the inverse FFT; closed form tau sqrt(1 + (4 ln2 GDD/tau^2)^2)
    # (standard result for Gaussian pulses, Diels and Rudolph ch. 1).
    tau = 40e-15
    n, dt = 2**16, 0.05e-15
    t = (np.arange(n) - n // 2) * dt
    field = np.exp(-2 * np.log(2) * t**2 / tau**2)  # |E|^2 has FWHM tau
    w = 2 * np.pi * np.fft.fftfreq(n, dt)
    out = np.fft.ifft(np.fft.fft(field) * np.exp(0.5j * gdd * w**2))
    measured = _fwhm(t, np.abs(out) ** 2)
    assert_allclose(stretched_duration(tau, gdd), measured, rtol=2e-4)
    assert_allclose(stretched_duration(tau, gdd), stretched_duration(tau, -gdd), rtol=1e-15)


def test_plate_thickness_against_group_indices():
    # d = c t / (n_g,glass - n_g,air): glass n_g from the mpmath Sellmeier above, air n_g from
    # Ciddor (Appl. Opt. 35, 1566 (1996)) at the default standard air (15 degC, 101325 Pa).
    wl, delay = 800e-9, np.array([0.0, 1e-12, 7.5e-12])
    with mpmath.workdps(30):
        ng = float(mp_index("fused_silica", wl) - wl * mpmath.diff(
            lambda x: mp_index("fused_silica", x), wl))
    ng_air = float(ciddor_group_index(wl, 15.0, 101325.0, 0.0, 450e-6))
    assert_allclose(plate_thickness(delay, "fused_silica", wl), c * delay / (ng - ng_air),
                    rtol=1e-12)
    # 1 ps of fused silica at 800 nm: about 0.642 mm (computed from the line above).
    assert_allclose(plate_thickness(1e-12, "fused_silica"), 6.4214e-4, rtol=1e-4)
    # Replacing vacuum instead of air: only the air's group index changes.
    assert_allclose(plate_thickness(1e-12, "fused_silica", medium=Medium.vacuum()),
                    c * 1e-12 / (ng - 1.0), rtol=1e-12)


def test_air_group_index_follows_the_air():
    humid = Medium.air(temperature_c=25.0, relative_humidity=0.6, laser_wavelength=1030e-9)
    # Ciddor at the asked wavelength, from the medium's conditions (not its own laser line).
    want = ciddor_group_index(800e-9, 25.0, 101325.0, 0.6, 450e-6)
    assert_allclose(air_group_index(800e-9, humid), want, rtol=1e-12)
    assert air_group_index(800e-9, Medium(1.0003, 1.0003)) == 1.0003


def test_bad_input_is_refused():
    with pytest.raises(ValueError, match="glass = 'BK8'"):
        refractive_index("BK8", 800e-9)
    with pytest.raises(ValueError, match="wavelength"):
        refractive_index("N-BK7", 3e-6)
    with pytest.raises(ValueError, match="delay"):
        plate_thickness(-1e-12, "CaF2")
    with pytest.raises(ValueError, match="duration"):
        stretched_duration(0.0, 1e-28)
    with pytest.raises(ValueError, match="resonance"):
        Glass("bad", (1.0,), (1e-12,), (0.5e-6, 2e-6), "invented")
    with pytest.raises(ValueError, match="source"):
        Glass("ok", (1.0,), (1e-14,), (0.5e-6, 2e-6), "")
    with pytest.raises(ValueError, match="medium"):
        air_group_index(800e-9, "air")
    assert as_glass("fused silica") is GLASSES["fused_silica"]
    assert as_glass("n-bk7") is GLASSES["N-BK7"]
