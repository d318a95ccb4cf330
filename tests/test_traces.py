"""Time-domain records at several ranges: the water lines ring after the main pulse."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from thzarray import Filament, Medium, Plasma, far_field
from thzarray.air.transmission import line_transmission
from thzarray.detect.electrooptic import GAP, ZNTE, eo_response
from thzarray.detect.traces import range_waveforms, ringing_fraction
from thzarray.detect.waveform import spectrum_to_waveform, taper_weights

FIL = Filament(0.3)  # the pulse leaves the origin at t = 0: tau = 0 is its arrival
PLASMA = Plasma(1e23, 2e12)  # invented scenario numbers
THETA = 0.08
RANGES = [10.0, 30.0]
# A 0.3 m column seen at 0.08 rad sends a pulse some L (1 - cos theta) / c = 3.2 ps long
# from tau = 0 (travelling-current geometry): energy later than 15 ps is ringing.
AFTER = 15e-12


def _records(rh, crystal=ZNTE):
    return range_waveforms(FIL, RANGES, THETA, duration=400e-12, bandwidth=1.0e12,
                           medium=Medium.air(20.0, 101325.0, rh), plasma=PLASMA,
                           crystal=crystal, thickness=0.5e-3)


@pytest.fixture(scope="module")
def records():
    return {rh: _records(rh) for rh in (0.0, 0.3, 0.8)}


def test_spectrum_is_far_field_over_range_times_line_transmission(records):
    """E(f) = w(f) theta-hat . F / R T_lines(f, R) (definitions of far_field and of the
    lines' transmission); the waveform and trace are its transforms."""
    rw = records[0.8]
    medium = Medium.air(20.0, 101325.0, 0.8)
    ff = far_field(FIL, rw.freq, THETA, 0.0, medium, PLASMA)
    along = ff.e_theta * taper_weights(rw.freq, 1.0e12, 0.2)
    expected = along / 30.0 * line_transmission(rw.freq, 30.0, medium)
    assert_allclose(rw.spectrum[1], expected, rtol=1e-10)
    assert_allclose(rw.field[1], spectrum_to_waveform(expected, rw.freq, rw.time), rtol=0,
                    atol=1e-9 * np.abs(rw.field[1]).max())
    assert_allclose(rw.eo_spectrum[1], expected * eo_response(rw.freq, ZNTE, 0.5e-3),
                    rtol=1e-10)
    assert_allclose(rw.delay, np.array(RANGES) * medium.n_thz / 299792458.0, rtol=1e-15)


def test_ringing_grows_with_humidity_and_range(records):
    """Energy later than 15 ps (the main pulse lasts 3.2 ps from tau = 0): dry air (oxygen
    lines only, weak below 1 THz) keeps it below 1e-4; humid air rings (free induction decay
    of the water lines, causal: after the pulse), more at 80 % than at 30 %, and more at
    30 m than at 10 m. The EO trace shows the same."""
    late = {rh: ringing_fraction(rw.time, rw.field, AFTER) for rh, rw in records.items()}
    eo = {rh: ringing_fraction(rw.time, rw.eo_trace, AFTER) for rh, rw in records.items()}
    assert np.all(late[0.0] < 1e-4)
    for frac in (late, eo):
        assert np.all(frac[0.3] > 10 * frac[0.0] + 1e-2)
        assert np.all(frac[0.8] > frac[0.3])
        assert frac[0.3][1] > frac[0.3][0] and frac[0.8][1] > frac[0.8][0]


def test_ringing_is_not_ahead_of_the_pulse(records):
    """Causality of the lines: the front reaches tau = R (n(inf) - n_thz) / c = -3.4 ps at
    30 m (high_frequency_index), so the energy before -10 ps stays below 1e-5 of the total,
    the level the band's raised-cosine roll-off itself leaves ahead of the pulse in dry air
    (the window, 400 ps from 40 ps before tau = 0, lets the ringing decay before it wraps
    around), while 5 % or more comes after 15 ps at 80 % humidity."""
    rw = records[0.8]
    early = 1 - ringing_fraction(rw.time, rw.field, -10e-12)
    dry = 1 - ringing_fraction(records[0.0].time, records[0.0].field, -10e-12)
    assert np.all(early < 1e-5) and np.all(dry < 1e-5)
    assert np.all(ringing_fraction(rw.time, rw.field, AFTER) > 0.05)


def test_gap_crystal_and_bad_input():
    rw = _records(0.3, crystal=GAP)
    assert rw.eo_trace.shape == rw.field.shape == (2, rw.time.size)
    with pytest.raises(ValueError, match="distance"):
        range_waveforms(FIL, [-1.0], THETA, duration=1e-11, bandwidth=1e12)
    with pytest.raises(ValueError, match="field"):
        ringing_fraction(rw.time, rw.field[:, :-1], 0.0)
