import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, epsilon_0

from thzarray import Aperture, Direction, Filament, Medium, Pulse, far_field
from thzarray.inverse.split import (
    MULTI_FILAMENT_RATIO,
    beam_column,
    family_layout,
    split_study,
)
from thzarray.source.laser import N2_AIR, plasma_from_laser

# Invented scenario: 12 mJ, 50 fs, 5 mm beam, f = 1 m lens, 80 % splitting efficiency.
PULSE = Pulse(12e-3, 50e-15, 5e-3, 800e-9, focal_length=1.0)
ETA = 0.8
FREQ = np.linspace(0.2e12, 2.4e12, 12)
TARGET = Direction(np.radians(6.0), 0.0)
HUMID = Medium.air(relative_humidity=0.4)


def band_energy(fils, plasma, medium, target=TARGET, freq=FREQ):
    """Energy per steradian toward a direction: trapezoid over f of 2 n_T eps0 c |F|^2
    (Jackson's far-field energy density, summed with numpy's trapezoid rule)."""
    ff = far_field(fils, freq, target.theta, target.phi, medium, plasma)
    density = 2 * medium.n_thz * epsilon_0 * c * (np.abs(ff.e_theta) ** 2 + np.abs(ff.e_phi) ** 2)
    return float(np.trapezoid(density, freq))


def gaussian_power_ratio(energy, fwhm=50e-15, wavelength=800e-9):
    # Peak power of a Gaussian pulse E / (tau sqrt(pi)), tau = FWHM / (2 sqrt(ln 2)), over
    # Marburger's P_cr = 3.77 lambda^2 / (8 pi n2) (Prog. Quantum Electron. 4, 35 (1975)).
    tau = fwhm / (2 * np.sqrt(np.log(2)))
    return energy / (tau * np.sqrt(np.pi)) / (3.77 * wavelength**2 / (8 * np.pi * N2_AIR))


def test_one_beam_is_the_laser_models_column():
    s = split_study(PULSE, [1], "line", 3e-3, TARGET, FREQ, efficiency=ETA, medium=HUMID)
    fil, plasma, est = plasma_from_laser(PULSE.replace(energy=ETA * 12e-3))
    want = band_energy(fil, plasma, HUMID)
    assert_allclose(s.energy_per_beam, [ETA * 12e-3], rtol=1e-15)
    assert_allclose(s.power_ratio, [est.power_ratio], rtol=1e-14)
    assert_allclose(s.length, [est.length], rtol=1e-14)
    assert_allclose(s.onset, [est.onset], rtol=1e-14)
    assert_allclose(s.electron_density, [est.electron_density], rtol=1e-14)
    for energy in (s.single, s.incoherent, s.phased):
        assert_allclose(energy, [want], rtol=1e-9)
    assert s.best_count == 1 and s.unit == "J/sr"


def test_two_beams_by_hand():
    d = 4e-3
    s = split_study(PULSE, [1, 2], "line", d, TARGET, FREQ, efficiency=ETA, medium=HUMID)
    assert_allclose(s.energy_per_beam[1], s.energy_per_beam[0] / 2, rtol=1e-15)
    fil, plasma, _ = plasma_from_laser(PULSE.replace(energy=ETA * 12e-3 / 2))
    # Two columns at x = -d/2, +d/2 in the onset plane. True-time delays toward (theta, 0):
    # t_n = n_T sin(theta) x_n / c (Balanis, arrays chapter: sin theta_0 = c dt / (n_T d);
    # the common centre term cancels), the earlier one at 0.
    x = np.array([-d / 2, d / 2])
    t = HUMID.n_thz * np.sin(TARGET.theta) * x / c
    t -= t.min()
    pair = [Filament(fil.length, (xi, 0.0, fil.start[2]), delay=ti) for xi, ti in zip(x, t)]
    fields = [far_field(p, FREQ, TARGET.theta, 0.0, HUMID, plasma) for p in pair]
    e_t = fields[0].e_theta + fields[1].e_theta
    e_p = fields[0].e_phi + fields[1].e_phi
    phased = np.trapezoid(2 * HUMID.n_thz * epsilon_0 * c * (np.abs(e_t) ** 2 + np.abs(e_p) ** 2),
                          FREQ)
    assert_allclose(s.phased[1], phased, rtol=1e-9)
    one = band_energy(pair[0], plasma, HUMID)
    assert_allclose(s.single[1], one, rtol=1e-9)
    assert_allclose(s.incoherent[1], 2 * one, rtol=1e-9)
    assert_allclose(s.phased[1], 4 * one, rtol=1e-9)  # both in phase toward the direction


def test_trends_over_n():
    counts = [1, 2, 3, 4, 6, 9, 12]
    s = split_study(PULSE, counts, "grid", 3e-3, TARGET, FREQ, efficiency=ETA)
    n = np.array(counts)
    assert_allclose(s.energy_per_beam, ETA * 12e-3 / n, rtol=1e-15)
    assert_allclose(s.power_ratio, gaussian_power_ratio(ETA * 12e-3 / n), rtol=1e-12)
    assert np.all(s.has_column)
    # Less energy per beam: later collapse (Marburger's z_c grows as P/P_cr falls) and a
    # shorter column before the same focal region; the density is clamped.
    assert np.all(np.diff(s.onset) > 0) and np.all(np.diff(s.length) < 0)
    assert_allclose(s.electron_density, s.electron_density[0], rtol=1e-15)
    # Identical columns in phase toward a direction: N^2 and N times one column.
    assert_allclose(s.phased, n**2 * s.single, rtol=1e-9)
    assert_allclose(s.incoherent, n * s.single, rtol=1e-12)
    assert_allclose(s.phased_over_single, n**2, rtol=1e-9)
    assert s.best_count == counts[int(np.argmax(s.phased))]
    assert np.all(s.phased[n == s.best_count] >= s.phased)
    assert_allclose(s.multi_filament, s.power_ratio > 10)


def test_below_critical_boundary():
    # Choose E so that one beam in 4 sits at 1.05 P_cr and one in 5 at 0.84 P_cr (Gaussian
    # peak power over Marburger's P_cr, computed in the test).
    energy = 4 * 1.05 / gaussian_power_ratio(1.0)
    pulse = PULSE.replace(energy=float(energy))
    s = split_study(pulse, [1, 2, 4, 5, 8], "ring", 3e-3, TARGET, FREQ)
    assert_allclose(s.power_ratio[2:4], [1.05, 0.84], rtol=1e-12)
    assert s.has_column.tolist() == [True, True, True, False, False]
    assert s.below_critical.tolist() == [False, False, False, True, True]
    assert np.all(s.phased[3:] == 0) and np.all(s.length[3:] == 0)
    assert np.all(np.isnan(s.onset[3:])) and np.all(s.phased[:3] > 0)
    assert any(note.startswith("N = 5: P/P_cr = 0.84") for note in s.notes)
    assert beam_column(pulse.replace(energy=float(energy) / 5)) is None
    # Everything below threshold: no best count.
    weak = split_study(pulse, [5, 8], "line", 3e-3, TARGET, FREQ)
    assert weak.best_count == 0 and np.all(weak.phased == 0)


def test_multi_filament_flag_follows_the_laser_model():
    # The laser model notes several filaments above P/P_cr = 10 (its validity statement).
    for ratio, flagged in ((10.5, True), (9.5, False)):
        e = ratio / gaussian_power_ratio(1.0)
        est = plasma_from_laser(PULSE.replace(energy=float(e)))[2]
        assert any("several filaments" in note for note in est.notes) == flagged
        s = split_study(PULSE.replace(energy=float(e)), [1], "line", 3e-3, TARGET, FREQ)
        assert s.multi_filament[0] == flagged == (ratio > MULTI_FILAMENT_RATIO)


def test_aperture_target_stays_below_n_squared():
    # Over an aperture the columns are in phase only at its centre: phased <= N^2 single
    # (Cauchy-Schwarz), and still above the incoherent sum for a small aperture.
    target = Aperture(np.radians(6.0), 0.0, 0.01, 0.5)
    s = split_study(PULSE, [1, 3], "line", 3e-3, target, FREQ[::3], efficiency=ETA)
    assert s.unit == "J"
    assert_allclose(s.phased[0], s.single[0], rtol=1e-12)
    assert s.incoherent[1] < s.phased[1] <= 9 * s.single[1] * (1 + 1e-12)


def test_families():
    # Grid: nx x ny with ny the largest divisor <= sqrt(N); ring: neighbours `spacing` apart;
    # hexagonal: 1 + 3 r (r + 1) columns at the given nearest-neighbour distance.
    g = family_layout("grid", 6, 2e-3, 0.05, onset=0.9)
    xy = np.array([f.start for f in g])
    assert len(set(np.round(xy[:, 0], 12))) == 3 and len(set(np.round(xy[:, 1], 12))) == 2
    assert_allclose(xy[:, 2], 0.9, rtol=0, atol=0)
    r = np.array([f.start for f in family_layout("ring", 7, 2e-3, 0.05)])
    gaps = np.linalg.norm(r - np.roll(r, 1, axis=0), axis=1)
    assert_allclose(gaps, 2e-3, rtol=1e-12)
    hexa = np.array([f.start for f in family_layout("hexagonal", 7, 2e-3, 0.05)])
    centre = int(np.argmin(np.linalg.norm(hexa, axis=1)))
    assert_allclose(np.delete(np.linalg.norm(hexa - hexa[centre], axis=1), centre), 2e-3,
                    rtol=1e-12)
    assert len(family_layout("ring", 1, 2e-3, 0.05)) == 1
    with pytest.raises(ValueError, match="count = 6 is not allowed for a hexagonal"):
        family_layout("hexagonal", 6, 2e-3, 0.05)


def test_bad_input_is_refused():
    with pytest.raises(ValueError, match="counts"):
        split_study(PULSE, [2, 1], "line", 3e-3, TARGET, FREQ)
    with pytest.raises(ValueError, match="counts"):
        split_study(PULSE, [1.5], "line", 3e-3, TARGET, FREQ)
    with pytest.raises(ValueError, match="family"):
        split_study(PULSE, [1], "spiral", 3e-3, TARGET, FREQ)
    with pytest.raises(ValueError, match="efficiency"):
        split_study(PULSE, [1, 2], "line", 3e-3, TARGET, FREQ, efficiency=1.2)
    with pytest.raises(ValueError, match="efficiency has shape"):
        split_study(PULSE, [1, 2], "line", 3e-3, TARGET, FREQ, efficiency=[0.9])
    with pytest.raises(ValueError, match="count = 2 is not allowed for a hexagonal"):
        split_study(PULSE, [1, 2], "hexagonal", 3e-3, TARGET, FREQ)
    with pytest.raises(ValueError, match="target"):
        split_study(PULSE, [1], "line", 3e-3, (0.1, 0.0), FREQ)
    with pytest.raises(ValueError, match="pulse"):
        split_study(12e-3, [1], "line", 3e-3, TARGET, FREQ)
