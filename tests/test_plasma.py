import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, e, epsilon_0, m_e
from scipy.integrate import solve_ivp
from scipy.optimize import minimize_scalar

from thzarray.source.plasma import Plasma, fwhm_to_gaussian_tau


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
