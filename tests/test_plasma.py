import mpmath as mp
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, e, epsilon_0, m_e
from scipy.integrate import solve_ivp
from scipy.optimize import minimize_scalar

from thzarray.air.medium import Medium
from thzarray.source.plasma import (
    MIN_RADIUS_PARAMETER,
    Plasma,
    critical_density,
    finite_radius_note,
    fwhm_to_gaussian_tau,
    plasma_group_index_shift,
)


def test_plasma_frequency_nrl():
    # NRL Plasma Formulary: f_pe = 8.98e3 sqrt(n_e / cm^-3) Hz; 1e16 cm^-3 -> 0.898 THz.
    p = Plasma(electron_density=1e22, collision_rate=1e12)
    assert_allclose(p.plasma_frequency, 8.98e3 * np.sqrt(1e16), rtol=1e-3)


def test_response_peak():
    # |1/(w_p^2 - w^2 - i nu w)|^2 peaks at sqrt(w_p^2 - nu^2/2) (docs/references.rst, from the
    # formula); checked here by numerical maximisation.
    p = Plasma(electron_density=1e22, collision_rate=3e12)
    res = minimize_scalar(lambda f: -abs(p.response(f)) ** 2, bounds=(1e11, 2e12),
                          method="bounded", options={"xatol": 1.0})
    assert_allclose(res.x, p.response_peak_frequency, rtol=1e-6)
    assert Plasma(1e20, 1e14).response_peak_frequency == 0.0


def test_fwhm_convention():
    # exp(-t^2/tau^2) is 1/2 at t = FWHM/2 (definition).
    tau = fwhm_to_gaussian_tau(100e-15)
    assert_allclose(np.exp(-(50e-15 / tau) ** 2), 0.5, rtol=1e-14)


def test_current_spectrum_matches_time_domain_fluid_model():
    # Independent check of the derivation: integrate the cold-fluid equations
    # m dv/dt = -e E + F_z - m nu v, eps0 dE/dt = e n_e v (J = -e n_e v), with
    # F_z = e^2/(2 m w0^2 c eps0 v_g) dI/dt (Chen, ponderomotive force), in the time domain,
    # then Fourier transform J(t) numerically (exp(+i w t) convention).
    p = Plasma(electron_density=5e21, collision_rate=2e12, pulse_duration=60e-15)
    tau = float(fwhm_to_gaussian_tau(p.pulse_duration))
    w0 = 2 * np.pi * c / p.laser_wavelength
    coupling = e**2 / (2 * m_e * w0**2 * c * epsilon_0 * c)

    def force(t):
        return coupling * p.peak_intensity * (-2 * t / tau**2) * np.exp(-(t / tau) ** 2)

    def rhs(t, y):
        v, efield = y
        return [(-e * efield + force(t)) / m_e - p.collision_rate * v,
                e * p.electron_density * v / epsilon_0]

    t_end = 40.0 / p.collision_rate
    t = np.linspace(-8 * tau, t_end, 400001)
    sol = solve_ivp(rhs, (t[0], t[-1]), [0.0, 0.0], t_eval=t, rtol=1e-10, atol=1e-30,
                    method="DOP853", max_step=2 * tau)
    current_density = -e * p.electron_density * sol.y[0]
    freq = np.array([0.2e12, 0.6e12, 1.0e12, 1.5e12])
    numeric = np.array([np.trapezoid(current_density * np.exp(2j * np.pi * f * t), t)
                        for f in freq])
    model = p.current_spectrum(freq, n_group=1.0) / (np.pi * p.radius**2)
    assert_allclose(numeric, model, rtol=2e-5)


@pytest.mark.parametrize("kwargs, name", [
    (dict(electron_density=-1.0, collision_rate=1e12), "electron_density"),
    (dict(electron_density=1e22, collision_rate=float("inf")), "collision_rate"),
    (dict(electron_density=1e22, collision_rate=1e12, pulse_duration=0.0), "pulse_duration"),
    (dict(electron_density=1e22, collision_rate=1e12, radius=1.0), "radius"),
])
def test_plasma_rejects_bad_input(kwargs, name):
    with pytest.raises(ValueError, match=name):
        Plasma(**kwargs)


def test_current_spectrum_rejects_negative_frequency():
    with pytest.raises(ValueError, match="freq"):
        Plasma(1e22, 1e12).current_spectrum([-1.0])


# --- the driver's speed in its own plasma; the finite-radius validity limit --------------

def test_critical_density():
    # n_c = eps0 m w0^2 / e^2 (Chen, light waves in a plasma); the practical form
    # n_c = 1.115e21 / lambda[um]^2 cm^-3 (from memory) gives 1.74e21 cm^-3 at 0.8 um.
    assert_allclose(critical_density(800e-9), 1.115e21 / 0.8**2 * 1e6, rtol=2e-3)
    wl = np.array([400e-9, 800e-9, 1.6e-6])
    assert_allclose(critical_density(wl),
                    epsilon_0 * m_e * (2 * np.pi * c / wl) ** 2 / e**2, rtol=1e-14)


@pytest.mark.parametrize("n_e", [1e21, 1.3e23, 1e25])
def test_group_index_shift_against_exact_cold_plasma(n_e):
    # Cold plasma: omega^2 = omega_p^2 + c^2 k^2 (Chen). The exact group index c dk/domega is
    # taken here by arbitrary-precision numerical differentiation of k(omega) (mpmath), and
    # n_e / (2 n_c) must agree with it to its first order: the remainder is
    # (3/8) (n_e/n_c)^2 + O((n_e/n_c)^3).
    w0 = 2 * np.pi * c / 800e-9
    wp2 = n_e * e**2 / (epsilon_0 * m_e)
    with mp.workdps(40):
        exact = float(mp.diff(lambda w: mp.sqrt(w**2 - mp.mpf(wp2)) / mp.mpf(c),
                              mp.mpf(w0)) * c - 1)
    x = n_e / critical_density(800e-9)
    shift = plasma_group_index_shift(n_e, 800e-9)
    assert_allclose(exact - shift, 3 / 8 * x**2, rtol=0.01 + 2 * x)
    p = Plasma(electron_density=n_e, collision_rate=1e12)
    assert_allclose(p.group_index_shift, shift, rtol=1e-15)


def test_plasma_share_against_the_dry_air_mismatch():
    # 1.3e23 m^-3 at 800 nm adds 3.7e-5 to the group index (computed from n_e / (2 n_c));
    # dry standard air's n_g - n_T is 7.1e-6 (Ciddor group index minus ITU-R P.453 index):
    # the plasma's share is about five times the mismatch.
    shift = float(plasma_group_index_shift(1.3e23))
    assert round(shift, 6) == 3.7e-5
    assert 4.5 < shift / Medium.air().mismatch < 5.5
    with pytest.raises(ValueError, match="electron_density"):
        plasma_group_index_shift(2e27)  # above n_c = 1.74e27 m^-3: the pulse cannot travel


def test_finite_radius_note():
    # omega_p a / c with f_pe = 8.98e3 sqrt(n_e / cm^-3) Hz (NRL Plasma Formulary).
    for n_e, radius in ((1.3e23, 50e-6), (1e22, 50e-6), (1.3e23, 10e-6)):
        p = Plasma(electron_density=n_e, collision_rate=2e12, radius=radius)
        expected = 2 * np.pi * 8.98e3 * np.sqrt(n_e * 1e-6) * radius / c
        assert_allclose(p.radius_parameter, expected, rtol=1e-3)
        note = finite_radius_note(p)
        assert (note == "") == (expected >= MIN_RADIUS_PARAMETER)
        if note:
            assert f"omega_p a / c = {p.radius_parameter:.3g} < 2" in note
    assert finite_radius_note(Plasma(1e22, 2e12), minimum=0.5) == ""
    with pytest.raises(ValueError, match="plasma"):
        finite_radius_note("plasma")
