
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.constants import c
from scipy.optimize import brentq, minimize_scalar

from thzarray import Filament, Medium
from thzarray.array.beam import ConeNullWarning, steering_report
from thzarray.array.designer import design_steering
from thzarray.array.layouts import from_positions, grid, line, with_delays
from thzarray.array.steering import cone_level, phase_only_delays, squint, steering_delays
from thzarray.array.targets import Aperture, Direction, target_fields

HUMID = Medium.air(relative_humidity=0.5)
BAND = np.linspace(0.2e12, 0.6e12, 5)


def steer(layout, theta, phi, medium=HUMID):
    return with_delays(layout, steering_delays(layout, theta, phi, medium))


def pattern_closed_form(theta, length, f, medium):
    # docs/references.rst (Jackson 9.1-9.2): one column along z radiates
    # sin^2(theta) sin^2(X) / (K - n_T cos theta)^2, X = (w L / 2c)(K - n_T cos theta).
    den = medium.n_group - medium.n_thz * np.cos(theta)
    x = np.pi * f * length / c * den
    return np.sin(theta) ** 2 * np.sinc(x / np.pi) ** 2 * x**2 / np.where(den == 0, 1, den) ** 2


# --- delays -------------------------------------------------------------------------------------

@pytest.mark.parametrize("theta0", [0.05, 0.3, 0.9, 1.4])
def test_two_element_true_time_delay(theta0):
    # Balanis, arrays chapter / docs/references.rst: sin(theta0) = c dtau / (n_T d).
    d = 1.7e-3
    delays = steering_delays(line(2, d, 0.02), theta0, 0.0, HUMID)
    dtau = delays[1] - delays[0]
    assert_allclose(np.sin(theta0), c * dtau / (HUMID.n_thz * d), rtol=1e-12)
    assert delays.min() == 0.0


@settings(max_examples=12)
@given(st.integers(2, 12), st.integers(0, 10_000), st.floats(0.0, 1.2),
       st.floats(-np.pi, np.pi))
def test_true_time_delays_phase_every_frequency(n, seed, theta, phi):
    # True-time delays: |AF(target)| = sum q_n at every frequency, no squint (Balanis, arrays
    # chapter; common practice).
    rng = np.random.default_rng(seed)
    pos = rng.uniform(-4e-3, 4e-3, (n, 3))
    lay = steer(from_positions(pos, 0.02, amplitude=rng.uniform(0.5, 2, n)), theta, phi)
    rep = squint(lay, theta, phi, np.array([0.1e12, 0.45e12, 1e12]), HUMID)
    assert_allclose(rep.coherence, 1.0, rtol=1e-11)
    assert_allclose(rep.target_level, 1.0, rtol=1e-11)
    res = c / (1e12 * np.max(np.linalg.norm(pos[:, None] - pos[None], axis=-1)))
    assert np.all(rep.pointing_error <= 1e-6 * res)


def test_steering_aligns_columns_of_different_length_and_profile():
    # Emission centres aligned: uniform and symmetric-profile columns of different lengths,
    # all seen within their main lobe (sinc > 0), arrive in phase: the energy reaches the
    # Cauchy-Schwarz limit (sum |g_n|)^2 (derived; see thzarray.array.steering).
    sym = lambda length: (lambda s: np.sin(np.pi * s / length) ** 2)  # noqa: E731
    lay = (Filament(0.02, (0, 0, 0)), Filament(0.025, (1.5e-3, 0, 0), profile=sym(0.025)),
           Filament(0.03, (0, 1.5e-3, 1e-3)), Filament(0.022, (1.5e-3, 1.5e-3, 0),
                                                        profile=sym(0.022)))
    target = Direction(0.15, 0.7)
    lay = steer(lay, 0.15, 0.7)
    tf = target_fields(lay, target, BAND, HUMID)
    assert_allclose(tf.energy([f.delay for f in lay]), tf.coherent_limit, rtol=1e-8)


def test_profile_centroid_enters_the_delays():
    # A linear ramp w(s) = s / L has its centroid at 2L/3 (int s^2 ds / int s ds), a uniform
    # column at L/2; the delay difference follows the true-time rule of thzarray.array.steering.
    length, d, theta = 0.03, 2e-3, 0.2
    lay = (Filament(length, (0, 0, 0)),
           Filament(length, (d, 0, 0), profile=([0.0, length], [0.0, 1.0])))
    t = steering_delays(lay, theta, 0.0, HUMID)
    ds = 2 * length / 3 - length / 2
    ref = (HUMID.n_thz * (np.sin(theta) * d + np.cos(theta) * ds) - HUMID.n_group * ds) / c
    assert_allclose(t[1] - t[0], ref, rtol=1e-9)


def test_phase_only_delays_fold_and_squint():
    # Delays folded by whole periods of f0 are exact at f0 and its harmonics (common practice,
    # no source) and squint in between; the squint report's lobe is checked against a
    # brute-force search of |AF|^2 along the line's direction cosine u = sin(theta) cos(phi).
    n, d, f0, theta0 = 16, 1e-3, 0.3e12, 0.3
    lay = line(n, d, 0.02)
    folded = phase_only_delays(lay, theta0, 0.0, f0, HUMID)
    assert folded.min() == 0.0 and folded.max() < 1 / f0
    x = (np.arange(n) - (n - 1) / 2) * d
    true = HUMID.n_thz * x * np.sin(theta0) / c
    assert_allclose(np.mod(folded - (true - true.min()) + 0.5 / f0, 1 / f0), 0.5 / f0,
                    rtol=0, atol=1e-24)
    freq = np.array([0.25e12, 0.3e12, 0.35e12, 0.6e12])
    rep = squint(with_delays(lay, folded), theta0, 0.0, freq, HUMID)
    assert_allclose(rep.coherence[[1, 3]], 1.0, rtol=1e-10)
    assert np.all(rep.coherence[[0, 2]] < 0.5)
    assert np.all(rep.pointing_error[[1, 3]] == 0.0)
    for j in (0, 2):
        k = 2 * np.pi * freq[j] * HUMID.n_thz / c

        def af2(u):
            return np.abs(np.sum(np.exp(1j * (2 * np.pi * freq[j] * folded - k * u * x)))) ** 2
        grid_u = np.linspace(-1, 1, 200_001)
        vals = np.abs(np.exp(1j * (2 * np.pi * freq[j] * folded[None, :]
                                   - k * grid_u[:, None] * x[None, :])).sum(1)) ** 2
        i = int(np.argmin(np.abs(grid_u - np.sin(theta0))))
        while vals[i + 1] > vals[i] or vals[i - 1] > vals[i]:  # climb to the lobe's top
            i = i + 1 if vals[i + 1] > vals[i] else i - 1
        u_ref = minimize_scalar(lambda u: -af2(u), bounds=(grid_u[i - 1], grid_u[i + 1]),
                                method="bounded", options={"xatol": 1e-12}).x
        u_rep = np.sin(rep.theta[j]) * np.cos(rep.phi[j])
        assert_allclose(u_rep, u_ref, atol=1e-6)
        assert rep.pointing_error[j] > 1e-3


# --- element level ------------------------------------------------------------------------------

@pytest.mark.parametrize("theta", [0.02, 0.12, 0.2, 0.5])
def test_cone_level_matches_closed_form(theta):
    length, f = 0.03, np.array([0.3e12, 0.45e12])
    got = cone_level((Filament(length),), theta, 0.4, f, HUMID)
    for j, fj in enumerate(f):
        grid_t = np.linspace(1e-4, np.pi / 2, 20001)
        p = pattern_closed_form(grid_t, length, fj, HUMID)
        i = int(np.argmax(p))
        top = -minimize_scalar(lambda t: -pattern_closed_form(t, length, fj, HUMID),
                               bounds=(grid_t[i - 1], grid_t[i + 1]), method="bounded",
                               options={"xatol": 1e-12}).fun
        assert_allclose(got.level[j], pattern_closed_form(theta, length, fj, HUMID) / top,
                        rtol=1e-8)


def test_on_axis_target_warns_about_the_null():
    # One column's cone is hollow: sin^2(theta) = 0 on its axis (docs/references.rst), and phasing
    # multiplies the element pattern, so nothing reaches the axis.
    lay = grid((2, 2), 1.5e-3, 0.03)
    theta, phi = np.linspace(0, 0.4, 41), np.linspace(0, 2 * np.pi, 48, endpoint=False)
    with pytest.warns(ConeNullWarning, match="null"):
        rep = steering_report(steer(lay, 0.0, 0.0), Direction(0.0, 0.0), BAND, HUMID,
                              sky_theta=theta, sky_phi=phi)
    assert rep.cone_level_db < -100
    assert rep.energy < 1e-20 * target_fields(lay, Direction(0.15), BAND, HUMID).coherent_limit
    assert any("null" in note for note in rep.notes)
    with pytest.warns(ConeNullWarning):
        design_steering(lay, Direction(0.0, 0.0), BAND, medium=HUMID, sky_theta=theta,
                        sky_phi=phi)


# --- beam metrics -------------------------------------------------------------------------------

@pytest.mark.parametrize("factor, expect", [(0.8, 0), (1.1, 1)])
def test_grating_lobe_condition(factor, expect):
    # Balanis, arrays chapter: no grating lobe while d/lambda < 1/(1 + |sin theta0|); beyond
    # it a lobe appears at u = sin(theta0) - lambda/d (u the direction cosine along the line).
    n, f, theta0 = 16, 0.3e12, 0.5
    lam = c / (f * HUMID.n_thz)
    d_over_lambda = factor / (1 + np.sin(theta0))
    lay = line(n, d_over_lambda * lam, 0.05 * c / f)
    lay = steer(lay, theta0, 0.0)
    theta, phi = np.linspace(0, np.pi, 181), np.linspace(0, 2 * np.pi, 360, endpoint=False)
    rep = steering_report(lay, Direction(theta0, 0.0), [f], HUMID, sky_theta=theta,
                          sky_phi=phi)
    assert len(rep.grating_lobes) == expect
    if expect:
        gl = rep.grating_lobes[0]
        u = np.sin(gl.theta) * np.cos(gl.phi)
        assert_allclose(u, np.sin(theta0) - 1 / d_over_lambda, atol=0.02)
        assert gl.array_factor_db > -3.0


def test_broadside_line_side_lobe_and_beam_width():
    # Balanis, arrays chapter: uniform linear array |AF| = |sin(N psi/2) / (N sin(psi/2))|;
    # peak side lobe and half-power width computed here from that closed form. Columns are
    # short (0.05 lambda) so the element is nearly a dipole; along the theta cut the width is
    # set by the element pattern of docs/references.rst.
    n, f = 10, 0.3e12
    lam = c / (f * HUMID.n_thz)
    lay = line(n, 0.5 * lam, 0.05 * c / f)
    target = Direction(np.pi / 2, np.pi / 2)
    # Half the sky (0 <= phi <= pi, not wrapped): a line's pattern has an equal mirror beam at
    # phi = -pi/2, which a full sky would rightly report as a 0 dB side lobe.
    theta = np.linspace(0, np.pi, 721)
    phi = np.linspace(0, np.pi, 721)
    rep = steering_report(lay, target, [f], HUMID, sky_theta=theta, sky_phi=phi)

    def af2(psi):
        return (np.sin(n * psi / 2) / (n * np.sin(psi / 2))) ** 2
    first = minimize_scalar(lambda p: -af2(p), bounds=(2 * np.pi / n, 4 * np.pi / n),
                            method="bounded", options={"xatol": 1e-12})
    assert_allclose(rep.peak_sidelobe_db, 10 * np.log10(-first.fun), atol=0.05)
    kd = np.pi
    psi_h = brentq(lambda p: af2(p) - 0.5, 1e-6, 2 * np.pi / n)
    assert_allclose(rep.beam_width[1], 2 * np.arcsin(psi_h / kd), rtol=1e-6)
    length = 0.05 * c / f
    peak = minimize_scalar(lambda t: -pattern_closed_form(t, length, f, HUMID),
                           bounds=(1.0, 2.0), method="bounded", options={"xatol": 1e-12}).x
    top = pattern_closed_form(peak, length, f, HUMID)
    lo = brentq(lambda t: pattern_closed_form(t, length, f, HUMID) - 0.5 * top, 0.1, peak)
    hi = brentq(lambda t: pattern_closed_form(t, length, f, HUMID) - 0.5 * top, peak, 3.0)
    assert_allclose(rep.beam_width[0], hi - lo, rtol=1e-6)
    assert_allclose(rep.main_lobe[0], peak, atol=1e-6)
    assert rep.grating_lobes == ()


# --- the designer -------------------------------------------------------------------------------

def test_energy_gradient_matches_finite_differences(rng):
    lay = grid((3, 2), 1.4e-3, 0.03)
    tf = target_fields(lay, Aperture(0.17, 0.3, 6e-3, 0.3), BAND, HUMID)
    delays = rng.uniform(0, 3e-12, 6)
    e, grad = tf.energy_and_gradient(delays)
    assert_allclose(e, tf.energy(delays), rtol=1e-13)
    h = 1e-17  # s: phase step w h ~ 4e-5 rad at the top of the band
    fd = np.array([(tf.energy(delays + h * np.eye(6)[m]) - tf.energy(delays - h * np.eye(6)[m]))
                   / (2 * h) for m in range(6)])
    assert_allclose(grad, fd, rtol=1e-6, atol=1e-8 * np.abs(grad).max())


SKY = (np.linspace(0, 0.5, 60), np.linspace(0, 2 * np.pi, 90, endpoint=False))


def test_designer_reaches_the_coherent_limit_without_delay_limit():
    lay = grid((3, 3), 1.5e-3, 0.03)
    target = Direction(0.18, 0.4)
    des = design_steering(lay, target, BAND, medium=HUMID, sky_theta=SKY[0], sky_phi=SKY[1])
    assert_allclose(des.energy, des.coherent_limit, rtol=1e-9)
    assert_allclose(des.plain_energy, des.coherent_limit, rtol=1e-10)
    assert des.gain_over_plain >= 1 - 1e-9
    assert des.delays.min() == 0.0
    assert_allclose(des.report.energy, des.energy, rtol=1e-12)
    assert des.report.cone_level_db < 0


def test_designer_respects_the_delay_range():
    # At one frequency, delays folded by whole periods are as good as true-time delays, so a
    # range of one period still reaches the coherent limit (common practice, no source).
    lay = line(6, 1.5e-3, 0.03)
    f = 0.4e12
    target = Direction(0.4, 0.0)
    des = design_steering(lay, target, [f], max_delay=1 / f, medium=HUMID,
                          sky_theta=SKY[0], sky_phi=SKY[1])
    assert np.ptp(des.plain_delays) > 1 / f
    assert des.delays.max() <= 1 / f * (1 + 1e-12)
    assert_allclose(des.energy, des.coherent_limit, rtol=1e-8)
    # Over a band with a tight range the design beats the plain delays clipped to the range.
    tight = 0.5e-12
    des = design_steering(lay, target, BAND, max_delay=tight, medium=HUMID,
                          sky_theta=SKY[0], sky_phi=SKY[1])
    tf = target_fields(lay, target, BAND, HUMID)
    assert des.delays.max() <= tight * (1 + 1e-12)
    assert des.energy >= tf.energy(np.clip(des.plain_delays, 0, tight)) * (1 - 1e-12)
    assert des.energy < des.plain_energy


def test_designer_picks_the_azimuth_that_needs_no_delay():
    # A line along x seen at phi = pi/2 has r.x_n = 0 for every column: all in phase with zero
    # delay, so with (almost) no delay range that azimuth wins (common practice, no source).
    lay = line(5, 1.5e-3, 0.03)
    des = design_steering(lay, Direction(0.2, 0.0), BAND, max_delay=1e-16,
                          azimuths=[0.0, np.pi / 4, np.pi / 2], medium=HUMID,
                          sky_theta=SKY[0], sky_phi=SKY[1])
    assert des.target.phi == np.pi / 2
    assert np.argmax(des.azimuth_energies) == 2
    assert_allclose(des.energy, des.coherent_limit, rtol=1e-9)


def test_bad_inputs_raise():
    lay = line(3, 1e-3, 0.02)
    with pytest.raises(ValueError, match=r"theta = .*4\.0.*<= 3\.14159"):
        steering_delays(lay, 4.0, 0.0)
    with pytest.raises(ValueError, match="theta"):
        steering_delays(lay, -0.1, 0.0)
    with pytest.raises(ValueError, match="phi"):
        steering_delays(lay, 0.1, np.nan)
    with pytest.raises(ValueError, match="design_freq"):
        phase_only_delays(lay, 0.1, 0.0, 0.0)
    with pytest.raises(ValueError, match="max_delay"):
        design_steering(lay, Direction(0.1), BAND, max_delay=-1e-12)
    with pytest.raises(ValueError, match="at least one Filament"):
        steering_delays((), 0.1, 0.0)
    with pytest.raises(ValueError, match="target"):
        steering_report(lay, 0.1, BAND)
