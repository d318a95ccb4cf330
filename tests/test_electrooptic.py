"""Electro-optic sampling: the response against an independent velocity-matching integral."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import integrate
from scipy.constants import c
from scipy.optimize import brentq

from thzarray.detect.electrooptic import (
    GAP,
    ZNTE,
    EOCrystal,
    eo_response,
    eo_trace,
    optical_indices,
    thz_index,
)
from thzarray.detect.waveform import spectrum_to_waveform, waveform_grids, waveform_to_spectrum


def _index_lorentz(f, eps_inf, eps_st, f_to, gamma):
    """Lorentz oscillator eps_inf + (eps_st - eps_inf) f_TO^2 / (f_TO^2 - f^2 - i gamma f)."""
    return np.sqrt(eps_inf + (eps_st - eps_inf) * f_to**2 / (f_to**2 - f**2 - 1j * gamma * f))


def _group_index_numeric(n_of_lambda, lam, h=1e-5):
    """n_g = n - lam dn/dlam by a central difference (independent of the analytic one)."""
    return n_of_lambda(lam) - lam * (n_of_lambda(lam + h) - n_of_lambda(lam - h)) / (2 * h)


def _li_znte(lam_um):
    """H. H. Li, J. Phys. Chem. Ref. Data 13, 103 (1984): ZnTe, lam in um."""
    return np.sqrt(9.92 + 0.42530 / (lam_um**2 - 0.37766**2) + 8414.13 / (lam_um**2 - 56.5**2))


def _gap_sellmeier(lam_um):
    """GaP as tabulated in J. Opt. Soc. Am. B 36, 3039 (2019), lam in um."""
    l2 = lam_um**2
    return np.sqrt(1 + 2.064 * l2 / (l2 - 27.284**2) + 8.089 * l2 / (l2 - 0.2707**2))


def test_optical_indices_against_the_published_formulas():
    """Phase index from the published Sellmeier formulas; group index by a central
    difference; GaP's group index at 1.03 um is 3.31 in J. Opt. Soc. Am. B 36, 3039 (2019)
    (their Table: n_g(1.03 um) = 3.31; the formula gives 3.320, 0.3 % above)."""
    for crystal, formula in ((ZNTE, _li_znte), (GAP, _gap_sellmeier)):
        for lam in (0.8, 1.03, 1.55):
            n, ng = optical_indices(lam * 1e-6, crystal)
            assert_allclose(n, formula(lam), rtol=1e-12)
            assert_allclose(ng, _group_index_numeric(formula, lam), rtol=1e-7)
    assert_allclose(optical_indices(1.03e-6, GAP)[1], 3.31, rtol=5e-3)
    with pytest.raises(ValueError, match="probe_wavelength"):
        optical_indices(10e-9, ZNTE)


@pytest.mark.parametrize("crystal, thickness", [(ZNTE, 1e-3), (ZNTE, 0.3e-3), (GAP, 0.3e-3)])
def test_response_against_the_velocity_matching_integral(crystal, thickness):
    """R(f) = t(f) chi(f)/chi(0) (1/d) int_0^d exp(i dk z) dz with dk = w (n - n_g)/c,
    the integral done by scipy quad (Gallot & Grischkowsky, JOSA B 16, 1204 (1999)), the
    index and chi(2) dispersion recomputed here from the oscillator (Leitenstorfer et al.,
    APL 74, 1516 (1999): chi ~ 1 + C f_TO^2 / (f_TO^2 - f^2 - i gamma f))."""
    freq = np.array([0.2e12, 1.0e12, 2.0e12, 2.7e12, 3.5e12])
    got = eo_response(freq, crystal, thickness, 800e-9, probe_duration=0.0)
    sell = _li_znte if crystal is ZNTE else _gap_sellmeier
    ng = _group_index_numeric(sell, 0.8)
    for f, r in zip(freq, got):
        n = _index_lorentz(f, crystal.eps_inf, crystal.eps_static, crystal.to_freq,
                           crystal.to_damping)
        dk = 2 * np.pi * f / c * (n - ng)
        re = integrate.quad(lambda z: np.real(np.exp(1j * dk * z)), 0, thickness, limit=200)[0]
        im = integrate.quad(lambda z: np.imag(np.exp(1j * dk * z)), 0, thickness, limit=200)[0]
        d_to = crystal.to_freq**2 / (crystal.to_freq**2 - f**2 - 1j * crystal.to_damping * f)
        chi = (1 + crystal.faust_henry * d_to) / (1 + crystal.faust_henry)
        assert_allclose(r, 2 / (1 + n) * chi * (re + 1j * im) / thickness, rtol=1e-7)


def test_thin_crystal_is_flat():
    """d -> 0: the velocity-matching factor's modulus tends to 1 (|sinc(dk d / 2)| with
    |dk d| < 0.01 at 3 THz for 1 um), its phase dk d / 2 being a mere delay,
    leaving the entrance transmission 2/(1 + n) and the chi(2) dispersion, flat far below
    the TO phonon."""
    f = np.linspace(0.05e12, 3e12, 60)
    r = eo_response(f, ZNTE, 1e-6)
    n = thz_index(f, ZNTE)
    d_to = ZNTE.to_freq**2 / (ZNTE.to_freq**2 - f**2 - 1j * ZNTE.to_damping * f)
    chi = (1 + ZNTE.faust_henry * d_to) / (1 + ZNTE.faust_henry)
    assert_allclose(np.abs(r), np.abs(2 / (1 + n) * chi), rtol=1e-3)
    # flat to 10 % up to 3 THz (2/(1 + n) falls as n rises toward the TO phonon), where a
    # 1 mm crystal has a zero (test_first_zero_of_1mm_crystals)
    assert np.ptp(np.abs(r)) / np.abs(r).mean() < 0.1


@pytest.mark.parametrize("crystal, low, high", [(ZNTE, 2.5e12, 3.2e12), (GAP, 0.8e12, 1.1e12)])
def test_first_zero_of_1mm_crystals(crystal, low, high):
    """The first zero of |R| sits where Re(dk) d = 2 pi, solved here by brentq from the
    published formulas (closed-form condition of (e^{ix} - 1)/(ix)). Published range, from
    memory: 1 mm ZnTe probed at 800 nm stops responding near 2.5-3 THz (Gallot &
    Grischkowsky 1999; Casalbuoni et al. 2008); for GaP the condition with its 800 nm group
    index 3.55 gives about 0.96 THz."""
    d = 1e-3
    ng = _group_index_numeric(_li_znte if crystal is ZNTE else _gap_sellmeier, 0.8)

    def phase(f):
        n = _index_lorentz(f, crystal.eps_inf, crystal.eps_static, crystal.to_freq,
                           crystal.to_damping)
        return 2 * np.pi * f / c * abs(n.real - ng) * d - 2 * np.pi

    f_zero = brentq(phase, 0.3e12, 4.5e12)
    f = np.linspace(0.3e12, 4.5e12, 42001)
    r = np.abs(eo_response(f, crystal, d))
    first_min = f[np.argmax((r[1:-1] < r[:-2]) & (r[1:-1] < r[2:])) + 1]
    assert_allclose(first_min, f_zero, rtol=5e-3)
    assert low < first_min < high


def test_trace_is_the_convolution_and_the_prefactor():
    """A thin crystal with a flat response reproduces the field times 2/(1 + n(0)) and the
    retardation prefactor 2 pi n0^3 r41 d / lam (Planken et al., JOSA B 18, 313 (2001));
    the probe envelope convolves it with a Gaussian of FWHM tau_p (its spectrum
    exp(-pi^2 f^2 tau_p^2 / (4 ln 2)))."""
    freq, time = waveform_grids(40e-12, 1.0e12)
    s = 0.5e-12
    spec = -1j * 2 * np.pi * freq * s * s * np.sqrt(2 * np.pi) * np.exp(
        -(2 * np.pi * freq * s) ** 2 / 2 + 2j * np.pi * freq * 10e-12)
    flat = EOCrystal("flat", 9.0, 9.0, 100e12, 0.0, 0.0, 1e-12, (9.0, ()), (0.4e-6, 2e-6))
    d, lam = 1e-6, 800e-9
    trace = eo_trace(spec, freq, time, flat, d, lam)
    expected = 2 * np.pi * 27.0 * 1e-12 * d / lam * 0.5 * spectrum_to_waveform(spec, freq, time)
    # velocity mismatch of the thin plate: |dk d| < 2 pi f |3 - 3| d/c = 0 (n = n_g = 3)
    assert_allclose(trace, expected, rtol=0, atol=1e-9 * np.abs(expected).max())
    tau = 0.3e-12
    wide = eo_trace(spec, freq, time, flat, d, lam, probe_duration=tau)
    ratio = waveform_to_spectrum(wide, time, freq) / waveform_to_spectrum(trace, time, freq)
    for k in (5, 20, 35):
        env = integrate.quad(lambda t, k=k: np.exp(-4 * np.log(2) * t**2 / tau**2)
                             * np.cos(2 * np.pi * freq[k] * t), -5 * tau, 5 * tau)[0]
        norm = integrate.quad(lambda t: np.exp(-4 * np.log(2) * t**2 / tau**2),
                              -5 * tau, 5 * tau)[0]
        assert_allclose(ratio[k], env / norm, rtol=1e-8)


def test_bad_crystal():
    with pytest.raises(ValueError, match="eps_static"):
        EOCrystal("x", 9.0, 8.0, 5e12, 1e11, 0.0, 1e-12, (9.0, ()), (0.4e-6, 2e-6))
    with pytest.raises(ValueError, match="thickness"):
        eo_response(1e12, ZNTE, 0.0)
