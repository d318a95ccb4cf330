import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.constants import c
from scipy.stats import uniform

from thzarray import Direction, Medium, Pulse, far_field
from thzarray.air.indices import ciddor_group_index
from thzarray.app.commands.bench import sheet_csv as bench_sheet_csv
from thzarray.array.gain import array_gain
from thzarray.array.layouts import grid, line, with_delays
from thzarray.array.steering import steering_delays
from thzarray.array.tolerance import tolerance
from thzarray.inverse.bench import (
    bench_sheet,
    echelon_steps,
    rounding_gain,
    stage_position,
    timing_error_gain,
)
from thzarray.inverse.glass import group_index, group_velocity_dispersion
from thzarray.source.laser import critical_power, plasma_from_laser

# Standard air of Medium.air(): Ciddor (Appl. Opt. 35, 1566 (1996)) at 15 degC, 101325 Pa, dry.
NG_AIR = float(ciddor_group_index(800e-9, 15.0, 101325.0, 0.0, 450e-6))
BEAM = Pulse(3e-3, 50e-15, 5e-3, 800e-9, focal_length=1.0)  # invented scenario


def random_phase_law(var, n):
    # Mean gain over ideal for N equal in-phase terms with independent phase errors of
    # variance var (Gaussian): exp(-var) + (1 - exp(-var))/N (exact; large-N limit
    # J. Ruze, Proc. IEEE 54, 633 (1966)).
    return np.exp(-var) + (1 - np.exp(-var)) / n


def uniform_law(w, q, n):
    # The same mean for errors uniform on [-q/2, q/2]: E[exp(i w e)] = sinc(w q/2) (the
    # characteristic function of the uniform law), mean gain = chi^2 + (1 - chi^2)/N.
    chi = np.sinc(w * q / (2 * np.pi))  # numpy's sinc is sin(pi x)/(pi x)
    return chi**2 + (1 - chi**2) / n


def test_stage_double_pass():
    # A retroreflector doubles the path change: x = c t / (2 n_g,air); 1 ps -> 149.9 um
    # (computed from that formula).
    assert_allclose(stage_position(1e-12), c * 1e-12 / (2 * NG_AIR), rtol=1e-13)
    assert_allclose(stage_position(1e-12), 149.85e-6, rtol=1e-4)
    assert_allclose(stage_position(1e-12, passes=1), 2 * stage_position(1e-12), rtol=1e-15)
    assert_allclose(stage_position(1e-12, medium=Medium.vacuum()), c * 1e-12 / 2, rtol=1e-15)


def test_rounding_to_resolution(rng):
    t = rng.uniform(0, 20e-12, 50)
    exact = stage_position(t)
    rounded = stage_position(t, resolution=1e-6)
    steps = rounded / 1e-6
    assert_allclose(steps, np.round(steps), rtol=0, atol=1e-9)
    assert np.all(np.abs(rounded - exact) <= 0.5e-6 * (1 + 1e-12))


def test_echelon_linear_ramp_and_incidence():
    # Reflection at incidence a off a facet recessed by h adds 2 h cos(a) of path (plane
    # geometry, common practice, no source): h = c t / (2 n_g cos a).
    dt = 0.8e-12
    t = dt * np.arange(6)
    h = echelon_steps(t)
    assert_allclose(h, np.arange(6) * c * dt / (2 * NG_AIR), rtol=1e-13)
    tilted = echelon_steps(t, incidence=np.radians(30))
    assert_allclose(tilted, h / np.cos(np.radians(30)), rtol=1e-13)


def test_uniform_rounding_variance():
    # Variance of the uniform law on [-q/2, q/2] is q^2/12 (scipy.stats.uniform).
    q = 6.7e-15
    assert_allclose(uniform(loc=-q / 2, scale=q).var(), q**2 / 12, rtol=1e-12)


@pytest.mark.parametrize("n, wq", [(8, 0.5), (3, 1.0)])
def test_rounding_gain_against_monte_carlo(n, wq):
    # Seeded Monte Carlo of delays rounded to a step q (errors uniform on [-q/2, q/2]):
    # mean of |sum exp(i w e_n)|^2 / N^2 against the law with sigma^2 = q^2/12.
    f = 0.5e12
    w = 2 * np.pi * f
    q = wq / w
    draws = np.random.default_rng(7).uniform(-q / 2, q / 2, (40000, n))
    g = np.abs(np.exp(1j * w * draws).sum(axis=1)) ** 2 / n**2
    mean, se = g.mean(), g.std(ddof=1) / np.sqrt(g.size)
    law = rounding_gain(q, n, [f])
    assert_allclose(law, random_phase_law(w**2 * q**2 / 12, n), rtol=1e-14)
    assert abs(mean - uniform_law(w, q, n)) < 4 * se  # the exact uniform mean
    # The Gaussian law with the uniform variance differs from the uniform mean by
    # (1 - 1/N) a^4/90 + O(a^6), a = w q / 2 (series of exp(-a^2/3) and sinc^2 a).
    a = wq / 2
    assert abs(law - uniform_law(w, q, n)) < (1 - 1 / n) * a**4 / 90 * 1.2
    assert abs(mean - law) < 4 * se + (1 - 1 / n) * a**4 / 90 * 1.2


def test_rounding_gain_is_the_tolerance_model():
    # rounding_gain equals the exact mean of array.tolerance with timing jitter q/sqrt(12)
    # for a steered line toward a direction, over a band, with the element's spectrum as
    # the spectral weight (identical columns in phase).
    target = Direction(np.radians(6), 0.3)
    lay = line(5, 2e-3, 0.04)
    lay = with_delays(lay, steering_delays(lay, target.theta, target.phi))
    freq = np.linspace(0.2e12, 1.5e12, 9)
    q = 0.12e-12
    el = far_field(lay[0], freq, target.theta, target.phi).magnitude_squared
    law = rounding_gain(q, 5, freq, spectral_weight=el)
    tol = tolerance(lay, target, freq, timing_jitter=q / np.sqrt(12), trials=2)
    assert_allclose(law, tol.expected, rtol=1e-10)


def test_timing_error_gain_closed_form_and_array_gain():
    f = np.array([0.3e12])
    w = 2 * np.pi * f[0]
    # Two terms, one off by e: |1 + exp(i w e)|^2 / 4 = (1 + cos w e) / 2 (closed form).
    assert_allclose(timing_error_gain([0.0, 0.4e-12], f), (1 + np.cos(w * 0.4e-12)) / 2,
                    rtol=1e-14)
    # A common delay costs nothing.
    assert_allclose(timing_error_gain(np.full(4, 3e-12), [0.2e12, 0.9e12]), 1.0, rtol=1e-14)
    # Against the array sum itself: a steered grid with its delays off by ``err``, weight =
    # one column's spectrum with the plasma current.
    _, plasma, _ = plasma_from_laser(BEAM)
    target = Direction(np.radians(5), 1.0)
    lay = grid((3, 2), 3e-3, 0.05, center=(0, 0, 0.9))
    t = steering_delays(lay, target.theta, target.phi)
    err = np.random.default_rng(3).uniform(-40e-15, 40e-15, 6)
    freq = np.linspace(0.3e12, 2.5e12, 12)
    good = array_gain(with_delays(lay, t), target, freq, plasma=plasma, trials=2).phased
    bad = array_gain(with_delays(lay, t + err), target, freq, plasma=plasma, trials=2).phased
    el = far_field(lay[0], freq, target.theta, target.phi, plasma=plasma).magnitude_squared
    assert_allclose(timing_error_gain(err, freq, spectral_weight=el), bad / good, rtol=1e-10)


def test_sheet_settings_realise_the_delays():
    t = np.array([2.0, 0.5, 3.7, 1.1]) * 1e-12
    freq = np.linspace(0.1e12, 3e12, 20)
    s = bench_sheet(t, BEAM, freq, glass="N-BK7", stage_resolution=0.5e-6,
                    thickness_resolution=20e-6, step_resolution=2e-6, incidence=0.2)
    rel = t - t.min()
    assert_allclose(s.delays, rel, rtol=1e-15)
    ng_glass = float(group_index("N-BK7", 800e-9))
    realised = {
        "delay stage": 2 * NG_AIR * s.stage.setting / c,
        "glass plate": (ng_glass - NG_AIR) * s.plate.setting / c,
        "stepped mirror": 2 * NG_AIR * np.cos(0.2) * s.echelon.setting / c,
    }
    quanta = {"delay stage": 2 * NG_AIR * 0.5e-6 / c,
              "glass plate": (ng_glass - NG_AIR) * 20e-6 / c,
              "stepped mirror": 2 * NG_AIR * np.cos(0.2) * 2e-6 / c}
    for d in (s.stage, s.plate, s.echelon):
        assert_allclose(d.error, realised[d.device] - rel, rtol=1e-9, atol=1e-22)
        assert_allclose(d.quantum, quanta[d.device], rtol=1e-12)
        assert np.all(np.abs(d.error) <= d.quantum / 2 * (1 + 1e-9))
        assert_allclose(d.rms_error, d.quantum / np.sqrt(12), rtol=1e-15)
        assert_allclose(d.expected_gain, rounding_gain(d.quantum, 4, freq), rtol=1e-15)
        assert_allclose(d.realised_gain, timing_error_gain(d.error, freq), rtol=1e-15)
    assert np.isnan(s.echelon_step)  # these delays are not a ramp


@settings(max_examples=20, deadline=None)
@given(st.lists(st.floats(0.0, 30e-12), min_size=1, max_size=8),
       st.floats(0.1e-6, 20e-6), st.floats(0.0, 1.2))
def test_rounding_never_exceeds_half_a_step(delays, resolution, incidence):
    # Rounding to the nearest step leaves at most half a step (common practice, no source);
    # the delivered fraction of in-phase columns is at most 1 (|sum| <= N, triangle
    # inequality).
    s = bench_sheet(delays, BEAM, [0.5e12, 1.5e12], stage_resolution=resolution,
                    thickness_resolution=resolution, step_resolution=resolution,
                    incidence=incidence)
    for d in (s.stage, s.plate, s.echelon):
        assert np.all(np.abs(d.error) <= d.quantum / 2 * (1 + 1e-9) + 1e-27)
        assert 0 < d.realised_gain <= 1 + 1e-12 and 0 < d.expected_gain <= 1


def test_plate_dispersion_lengthens_the_pulse_and_weakens_the_column():
    # GDD = beta_2 d; tau' = tau sqrt(1 + (4 ln2 GDD / tau^2)^2); peak power E/(tau'/(2
    # sqrt(ln 2)) sqrt(pi)) over P_cr = 3.77 lambda^2 / (8 pi n2) (Marburger 1975).
    t = np.linspace(0, 10e-12, 5)
    s = bench_sheet(t, BEAM, [0.5e12], glass="sapphire_o", thickness_resolution=0.0)
    gdd = group_velocity_dispersion("sapphire_o", 800e-9) * s.plate.setting
    assert_allclose(s.gdd, gdd, rtol=1e-14)
    tau = 50e-15 * np.sqrt(1 + (4 * np.log(2) * gdd / (50e-15) ** 2) ** 2)
    assert_allclose(s.duration, tau, rtol=1e-14)
    peak = 3e-3 / (tau / (2 * np.sqrt(np.log(2))) * np.sqrt(np.pi))
    assert_allclose(s.power_ratio, peak / critical_power(800e-9), rtol=1e-12)
    assert np.all(np.diff(s.power_ratio) < 0) and np.all(np.diff(s.column_length) < 0)
    last = plasma_from_laser(BEAM.replace(duration=float(tau[-1])))[2]
    assert_allclose(s.column_length[-1], last.length, rtol=1e-14)
    assert_allclose(s.column_onset[-1], last.onset, rtol=1e-14)
    assert s.plate.setting[0] == 0 and s.duration[0] == 50e-15


def test_plate_can_push_a_beam_below_critical_power():
    # A beam at 1.2 P_cr loses its column once the plate stretches it by more than 1.2.
    e = 1.2 * critical_power(800e-9) * 50e-15 / (2 * np.sqrt(np.log(2))) * np.sqrt(np.pi)
    beam = BEAM.replace(energy=float(e))
    s = bench_sheet([0.0, 40e-12], beam, [0.5e12], glass="sapphire_o", thickness_resolution=0.0)
    assert s.duration[1] / s.duration[0] > 1.2
    assert s.power_ratio[1] < 1 and s.column_length[1] == 0 and np.isnan(s.column_onset[1])
    assert s.column_length[0] > 0
    assert "1 of 2 beams make no column" in bench_sheet_csv(s)


def test_ramp_step_and_csv():
    dt = 0.6e-12
    t = dt * np.arange(5)[::-1]  # a descending ramp is a ramp too
    s = bench_sheet(t, BEAM, np.linspace(0.2e12, 2e12, 7), step_resolution=1e-6)
    assert_allclose(s.echelon_step, np.round(c * dt / (2 * NG_AIR) / 1e-6) * 1e-6, rtol=1e-12)
    text = bench_sheet_csv(s)
    rows = [r for r in text.splitlines() if not r.startswith("#")]
    header = rows[0].split(",")
    assert header[:3] == ["filament", "delay_s", "stage_position_m"]
    table = np.array([[float(v) for v in r.split(",")] for r in rows[1:]])
    assert table.shape == (5, len(header))
    assert_allclose(table[:, header.index("stage_position_m")], s.stage.setting, rtol=1e-9)
    assert_allclose(table[:, header.index("plate_gdd_s2")], s.gdd, rtol=1e-9)
    assert "step height" in text and "rounding error rms" in text


def test_bad_input_is_refused():
    with pytest.raises(ValueError, match="delays"):
        bench_sheet(np.zeros((2, 2)), BEAM, [1e12])
    with pytest.raises(ValueError, match="stage_resolution"):
        bench_sheet([0, 1e-12], BEAM, [1e12], stage_resolution=-1e-6)
    with pytest.raises(ValueError, match="pulse"):
        bench_sheet([0, 1e-12], 3e-3, [1e12])
    with pytest.raises(ValueError, match="glass"):
        bench_sheet([0, 1e-12], BEAM, [1e12], glass="window")
    with pytest.raises(ValueError, match="passes"):
        stage_position(1e-12, passes=0)
    with pytest.raises(ValueError, match="incidence"):
        echelon_steps([0, 1e-12], incidence=1.6)
    with pytest.raises(ValueError, match="spectral_weight"):
        rounding_gain(1e-15, 3, [1e12, 2e12], spectral_weight=[1.0])

def test_sheet_without_a_pulse_gives_positions_and_leaves_beam_effects_unknown():
    # Stage position x = c t / (passes n_g) needs only the wavelength (common practice, no
    # source: a retroreflector doubles the path); the plate lengthening needs the duration.
    t = np.array([0.0, 1e-12, 2e-12])
    s = bench_sheet(t, None, [1e12], wavelength=800e-9, duration=50e-15,
                    stage_resolution=0.0)
    assert_allclose(s.stage.setting, c * t / (2 * NG_AIR), rtol=1e-12)
    assert np.all(s.duration >= 50e-15) and np.all(np.isnan(s.power_ratio))
    text = bench_sheet_csv(s)
    assert "effect on P/P_cr and the column needs [laser]" in text
    bare = bench_sheet(t, None, [1e12])
    assert np.all(np.isnan(bare.duration))
