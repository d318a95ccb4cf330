"""Detector noise (SNR, range where it falls to 1) and calibration factors."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, epsilon_0
from scipy.optimize import brentq

from thzarray import Filament, Medium, far_field
from thzarray.detect.budget import range_budget
from thzarray.detect.calibration import (
    Calibration,
    apply_to_energy,
    apply_to_field,
    calibrate_amplitude,
    calibrate_energy,
    calibrate_field,
    combine_calibrations,
)
from thzarray.detect.noise import eo_signal_to_noise, signal_to_noise
from thzarray.detect.receivers import BroadbandDetector, NarrowbandReceiver


def test_snr_hand_calculation():
    """1e-12 J per pulse at 1 kHz is 1e-9 W; NEP 1e-10 W/sqrt(Hz) over 0.5 s (noise
    bandwidth 1/(2 t) = 1 Hz, common practice, no source) gives SNR = 1e-9 / 1e-10 = 10."""
    assert_allclose(signal_to_noise(1e-12, 1e-10, 0.5, 1e3), 10.0, rtol=1e-15)
    det = BroadbandDetector([1e11, 1e12], [1.0, 1.0], 1e-4, nep=1e-10, integration_time=0.5,
                            repetition_rate=1e3)
    assert_allclose(det.signal_to_noise([1e-12, 4e-12]), [10.0, 40.0], rtol=1e-15)
    with pytest.raises(ValueError, match="all three or none"):
        NarrowbandReceiver(3e11, 1e10, area=1e-4, nep=1e-10)
    with pytest.raises(ValueError, match="nep"):
        BroadbandDetector([1e11, 1e12], [1.0, 1.0], 1e-4).signal_to_noise(1.0)


def test_eo_snr_hand_calculation():
    """1 nJ of 800 nm probe is 1e-9 * 8e-7 / (h c) = 4.027e9 photons (h c = 1.98645e-25 J m,
    CODATA); eta 0.5 -> 2.0137e9 electrons; Gamma 1e-6 rad averaged over 1000 pulses:
    SNR = 1e-6 sqrt(2.0137e12) = 1.419 (shot noise, common practice, no source)."""
    electrons = 0.5 * 1e-9 * 8e-7 / (6.62607015e-34 * 299792458.0)
    assert_allclose(eo_signal_to_noise(1e-6, 1e-9, 800e-9, 1.0, 1e3, 0.5),
                    1e-6 * np.sqrt(electrons * 1e3), rtol=1e-14)
    assert_allclose(eo_signal_to_noise(1e-6, 1e-9, 800e-9, 1.0, 1e3, 0.5), 1.419, rtol=1e-3)


def test_budget_snr_and_unit_snr_range():
    """SNR = W f_rep sqrt(2 t) / NEP at each range, and at the returned range the SNR of the
    independent sum sum_j per_j exp(-alpha_j R) / R^2 (recomputed from the budget's own
    free-space energy and attenuation) is 1, found here by brentq."""
    fil = Filament(0.3, start=(0.0, 0.0, -0.15))
    freq = np.linspace(0.2e12, 0.4e12, 11)
    det = BroadbandDetector(freq, np.ones_like(freq), area=1e-4, nep=1e-6,
                            integration_time=1.0, repetition_rate=1e3)
    air = Medium.air(20.0, 101325.0, 0.5)
    b = range_budget(fil, det, freq, [1.0, 5.0], 0.1, medium=air, relative_humidity=[0.2, 0.8])
    scale = 1e3 * np.sqrt(2.0) / 1e-6
    assert_allclose(b.snr, scale * b.energy, rtol=1e-15)
    plain = range_budget(fil, BroadbandDetector(freq, np.ones_like(freq), area=1e-4), freq,
                         [1.0], 0.1, medium=air, relative_humidity=[0.2, 0.8])
    assert plain.snr is None and plain.unit_snr_range is None
    wts = np.full(freq.size, freq[1] - freq[0])
    wts[[0, -1]] *= 0.5  # trapezoid weights of the band (thzarray.base.band)
    for i, h in enumerate(b.relative_humidity):
        medium = air.with_humidity(h)
        ff = far_field(fil, freq, 0.1, 0.0, medium)
        # free-space energy at 1 m per frequency: A w_j 2 n eps0 c |F|^2 (plane-wave flux)
        per = 1e-4 * wts * 2 * medium.n_thz * epsilon_0 * c * ff.magnitude_squared

        def snr_minus_one(r, per=per, i=i):
            return scale * np.sum(per * np.exp(-b.attenuation[i] * r)) / r**2 - 1

        assert_allclose(b.unit_snr_range[i], brentq(snr_minus_one, 1e-3, 1e6, xtol=1e-9),
                        rtol=1e-8)
    assert b.unit_snr_range[1] < b.unit_snr_range[0]  # wetter air, shorter reach


def test_calibration_from_energy_field_and_amplitude():
    """k = W_m / W, (E_m / E)^2, a^2; first-order relative uncertainties u/W, 2u/E, 2u/a
    (GUM, JCGM 100:2008, sec. 5.1)."""
    cal = calibrate_energy(3e-12, 1.5e-12, uncertainty=0.3e-12, model_uncertainty=0.05)
    assert_allclose(cal.energy_factor, 2.0)
    assert_allclose(cal.relative_uncertainty, np.hypot(0.1, 0.05))
    cal = calibrate_field(200.0, 100.0, uncertainty=10.0)
    assert_allclose([cal.energy_factor, cal.relative_uncertainty], [4.0, 0.1])
    assert_allclose([cal.field_factor, cal.field_relative_uncertainty], [2.0, 0.05])
    cal = calibrate_amplitude(-0.5, 0.01)
    assert_allclose([cal.energy_factor, cal.relative_uncertainty], [0.25, 0.04])
    w, u = apply_to_energy([1.0, 2.0], cal)
    assert_allclose(w, [0.25, 0.5]) and assert_allclose(u, [0.01, 0.02])
    e, ue = apply_to_field(np.array([2.0 + 0j, -4.0]), cal)
    assert_allclose(e, [1.0, -2.0]) and assert_allclose(ue, [0.02, 0.04])
    with pytest.raises(ValueError, match="measured energy"):
        calibrate_energy(-1.0, 1.0)
    with pytest.raises(ValueError, match="relative_uncertainty"):
        Calibration(1.0, 1.5)


def test_field_uncertainty_against_monte_carlo():
    """Draws of k with 2 % relative standard deviation: the spread of sqrt(k) is half of it
    (first-order propagation, GUM sec. 5.1), within the Monte Carlo error (1e5 draws: 0.5 %)
    plus the second-order term (u^2 / 8 ~ 5e-5)."""
    rng = np.random.default_rng(20261202)
    cal = Calibration(9.0, 0.02)
    draws = rng.normal(cal.energy_factor, cal.energy_factor * cal.relative_uncertainty, 100_000)
    spread = np.std(np.sqrt(draws)) / np.mean(np.sqrt(draws))
    assert_allclose(spread, cal.field_relative_uncertainty, rtol=1e-2)


def test_combining_independent_calibrations():
    """Two equal-weight calibrations: the geometric mean with u / sqrt(2) (inverse-variance
    weighting in ln k)."""
    a = Calibration(2.0, 0.1, "pyro")
    b = Calibration(8.0, 0.1, "eo")
    both = combine_calibrations([a, b])
    assert_allclose(both.energy_factor, 4.0, rtol=1e-14)
    assert_allclose(both.relative_uncertainty, 0.1 / np.sqrt(2), rtol=1e-14)
    assert both.source == "pyro; eo"
    with pytest.raises(ValueError, match="zero uncertainty"):
        combine_calibrations([a, Calibration(1.0)])
