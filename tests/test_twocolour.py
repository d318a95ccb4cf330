"""Two-colour columns: dephasing length, photocurrent profile, phase-matched cone."""
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, e, epsilon_0, m_e, mu_0
from scipy.integrate import quad
from scipy.optimize import minimize_scalar

from thzarray import Filament, Medium, cone_angle, far_field
from thzarray.air.indices import ciddor_index
from thzarray.air.medium import AirConditions
from thzarray.source.twocolour import (
    TwoColourProfile,
    dephasing_length,
    phase_matched_angle,
    two_colour_profile,
    two_colour_samples,
)

AIR = Medium.air()
FREQ = 1e12


def ciddor_dephasing(air: AirConditions, wavelength):
    """L_d = lambda / (2 |n(lambda/2) - n(lambda)|) from Ciddor (1996) phase indices."""
    args = (air.temperature_c, air.pressure, air.relative_humidity, air.co2_fraction)
    n_fund = ciddor_index(wavelength, *args)
    n_harm = ciddor_index(wavelength / 2, *args)
    return wavelength / (2 * abs(n_harm - n_fund))


@pytest.mark.parametrize("medium, wavelength", [
    (AIR, 800e-9),
    (Medium.air(25.0, 95000.0, 0.6), 800e-9),
    (Medium.air(laser_wavelength=1030e-9), 1030e-9),
])
def test_dephasing_length_from_ciddor_indices(medium, wavelength):
    # Relative phase theta0 + (k_2w - 2 k_w) z turns by 2 pi over lambda / (2 dn) (derived in
    # the module docstring; Kim et al., Opt. Express 15, 4577 (2007) for the photocurrent),
    # with Ciddor's phase indices at lambda and lambda / 2 computed here.
    expected = ciddor_dephasing(medium.conditions, wavelength)
    assert_allclose(dephasing_length(medium, wavelength), expected, rtol=1e-12)


def test_dephasing_length_is_about_five_centimetres_in_dry_air():
    # Computed from Ciddor (1996): n(400 nm) - n(800 nm) = 7.7e-6 in dry standard air,
    # L_d = 5.2 cm ("about 5 cm"); humidity changes it by well under 1 %.
    l_d = dephasing_length(AIR)
    assert 0.05 < l_d < 0.054
    assert_allclose(dephasing_length(AIR.with_humidity(0.8)), l_d, rtol=1e-2)


def test_plasma_shortens_the_dephasing_length():
    # Cold plasma n = sqrt(1 - n_e / n_c), n_c = eps0 m w^2 / e^2 (Chen, Introduction to
    # Plasma Physics), so n_c(lambda / 2) = 4 n_c(lambda); the indices are computed here.
    wl, n_e = 800e-9, 1.3e23
    n_c = epsilon_0 * m_e * (2 * np.pi * c / wl) ** 2 / e**2
    plasma = np.sqrt(1 - n_e / (4 * n_c)) - np.sqrt(1 - n_e / n_c)
    assert_allclose(dephasing_length(Medium.vacuum(), wl, electron_density=n_e),
                    wl / (2 * plasma), rtol=1e-12)
    # First order: 3/8 n_e / n_c, relative error of order n_e / n_c (7.5e-5).
    assert_allclose(plasma, 3 / 8 * n_e / n_c, rtol=2 * n_e / n_c)
    args = (AIR.conditions.temperature_c, AIR.conditions.pressure, 0.0, 450e-6)
    neutral = ciddor_index(wl / 2, *args) - ciddor_index(wl, *args)
    assert_allclose(dephasing_length(AIR, wl, electron_density=n_e),
                    wl / (2 * (neutral + plasma)), rtol=1e-12)
    assert dephasing_length(AIR, wl, electron_density=n_e) < 0.25 * dephasing_length(AIR, wl)


def test_dephasing_length_refuses_media_without_air():
    # Vacuum: no dispersion, so no dephasing at all (documented: infinite).
    assert dephasing_length(Medium.vacuum()) == np.inf
    with pytest.raises(ValueError, match="indices without air conditions"):
        dephasing_length(Medium(1.0003, 1.0002))
    with pytest.raises(ValueError, match="medium = str"):
        dephasing_length("air")
    with pytest.raises(ValueError, match="wavelength"):
        dephasing_length(AIR, 500e-9)  # 250 nm is outside Ciddor's range
    with pytest.raises(ValueError, match="electron_density"):
        dephasing_length(AIR, electron_density=1e27)


def test_profile_and_samples():
    rng = np.random.default_rng(7)
    l_d, phi0 = 0.052, 0.7
    s = rng.uniform(0.0, 0.3, 50)
    prof = two_colour_profile(l_d, phi0)
    assert isinstance(prof, TwoColourProfile)
    assert_allclose(prof(s), np.sin(phi0 + 2 * np.pi * s / l_d), rtol=1e-14, atol=1e-15)
    z, w = two_colour_samples(0.3, l_d, phi0, points_per_period=32)
    assert z[0] == 0.0 and z[-1] == 0.3 and np.all(np.diff(z) > 0)
    assert z.size >= 32 * 0.3 / l_d
    assert_allclose(w, np.sin(phi0 + 2 * np.pi * z / l_d), rtol=1e-14, atol=1e-15)
    # No dephasing: a constant current sin(phi0).
    assert_allclose(two_colour_profile(np.inf, phi0)([0.0, 1.0]), np.sin(phi0), rtol=1e-15)
    with pytest.raises(ValueError, match="dephasing_length"):
        two_colour_profile(-1.0)
    with pytest.raises(ValueError, match="points_per_period"):
        two_colour_samples(0.3, l_d, points_per_period=2)


def radiation_integral(theta, length, l_d, phi0, freq=FREQ, medium=AIR):
    """int_0^L sin(phi0 + 2 pi s / L_d) exp(i u s) ds, u = (w/c)(n_g - n_T cos theta), by
    scipy's oscillatory quadrature (QAWO)."""
    u = 2 * np.pi * freq / c * (medium.n_group - medium.n_thz * np.cos(theta))

    def g(s):
        return np.sin(phi0 + 2 * np.pi * s / l_d)

    re = quad(g, 0.0, length, weight="cos", wvar=u, limit=4000)[0]
    im = quad(g, 0.0, length, weight="sin", wvar=u, limit=4000)[0]
    return re + 1j * im


@pytest.mark.parametrize("samples", [False, True])
def test_far_field_of_the_profile_matches_the_radiation_integral(samples):
    # Jackson secs. 9.1-9.2: F_theta = -(i w mu0 / 4 pi) sin(theta) int w(s) e^{ius} ds for a
    # column along +z from the origin (1 A s current spectrum).
    l_d = dephasing_length(AIR)
    length, phi0 = 4 * l_d, 0.4
    profile = (two_colour_samples(length, l_d, phi0, points_per_period=256) if samples
               else two_colour_profile(l_d, phi0))
    theta = np.radians(np.linspace(1.0, 12.0, 23))
    ff = far_field(Filament(length, profile=profile), FREQ, theta, 0.0, AIR)
    ref = np.array([-1j * 2 * np.pi * FREQ * mu_0 / (4 * np.pi) * np.sin(t)
                    * radiation_integral(t, length, l_d, phi0) for t in theta])
    # Callable: not-a-knot spline of 1025 samples, error (5/384) h^4 (2 pi / L_d)^4 ~ 1e-8;
    # sampled: PCHIP of 256 points per period, error ~ (2 pi / 256)^3 ~ 1e-5.
    tol = 1e-5 if samples else 1e-6
    assert_allclose(ff.e_theta, ref, atol=tol * np.max(np.abs(ref)), rtol=0)


def peak_angle(pattern, guess, span):
    grid = np.linspace(guess - span, guess + span, 201)
    values = np.array([pattern(t) for t in grid])
    i = int(np.argmax(values))
    res = minimize_scalar(lambda t: -pattern(t), bounds=(grid[i - 1], grid[i + 1]),
                          method="bounded", options={"xatol": 1e-12})
    return res.x


@pytest.mark.slow
@pytest.mark.parametrize("periods", [5, 10, 20])
@pytest.mark.parametrize("phi0", [0.0, 1.0])
def test_long_column_cone_is_set_by_the_dephasing_length(periods, phi0):
    # For L >> L_d the emission peaks where u = 2 pi / L_d, whatever the length (module
    # docstring; You, Oh & Kim, PRL 109, 183902 (2012)). The counter-rotating half of the
    # sine, of relative size 1 / (K L) at that u (K = 2 pi / L_d), shifts the peak by at most
    # about that fraction of the lobe width 2 pi / L in u (derived); 1.5 / (K L) allowed.
    l_d = dephasing_length(AIR)
    length = periods * l_d
    theta_pm = float(phase_matched_angle(FREQ, l_d, AIR))
    lobe = (2 * np.pi / length) * c / (2 * np.pi * FREQ * AIR.n_thz * np.sin(theta_pm))
    bound = 1.5 * lobe / (2 * np.pi * periods)

    def array_factor(t):  # transverse current: no element null near the axis
        return abs(radiation_integral(t, length, l_d, phi0)) ** 2

    def longitudinal(t):  # today's Filament current along its axis: sin^2 theta on top
        return (np.sin(t) * abs(radiation_integral(t, length, l_d, phi0))) ** 2

    for pattern in (array_factor, longitudinal):
        assert abs(peak_angle(pattern, theta_pm, 3 * lobe) - theta_pm) < bound
    # A uniform column of the same length has a much narrower cone, set by its length.
    assert cone_angle(length, FREQ, AIR) < 0.3 * theta_pm


@pytest.mark.slow
def test_short_column_cone_follows_its_length():
    # For L << L_d, with phi0 = pi/2 the profile is cos(K s) ~ 1: a uniform column whose
    # cone (field.cone, exact) depends on L; at L = L_d / 40 the sine profile departs from 1
    # by at most (pi/20)^2 / 2 = 1.2 %.
    l_d = dephasing_length(AIR)
    angles = []
    for length in (l_d / 40, l_d / 80):
        uniform = float(cone_angle(length, FREQ, AIR))

        def pattern(t, length=length):
            return (np.sin(t) * abs(radiation_integral(t, length, l_d, np.pi / 2))) ** 2

        angle = peak_angle(pattern, uniform, 0.2 * uniform)
        assert_allclose(angle, uniform, rtol=0.02)
        angles.append(angle)
    # Halving the length widens the cone (Balanis: 1 - cos(theta) ~ 0.371 lambda / L).
    assert angles[1] > 1.2 * angles[0]


def test_phase_matched_angle_formula_and_range():
    # cos(theta) = (n_g - c / (f L_d)) / n_T (module docstring), computed here.
    l_d = 0.05
    freq = np.array([0.5e12, 1e12, 3e12])
    expected = np.arccos((AIR.n_group - c / (freq * l_d)) / AIR.n_thz)
    assert_allclose(phase_matched_angle(freq, l_d, AIR), expected, rtol=1e-12)
    g = AIR.n_group + 3.7e-5
    assert_allclose(phase_matched_angle(freq, l_d, AIR, group_index=g),
                    np.arccos((g - c / (freq * l_d)) / AIR.n_thz), rtol=1e-12)
    with pytest.raises(ValueError, match="no phase-matched direction"):
        phase_matched_angle(1e9, l_d, AIR)  # c / (f L_d) = 6 > n_g + n_T
