"""What a detector records and what to set on the bench, from one design: the waveform,
split and bench commands and the budget's signal-to-noise columns."""
import json

import numpy as np
import pytest
import xarray as xr
from scipy.constants import c, h

from thzarray.app.cli import main
from thzarray.app.design import load_design

DESIGN = """
[design]
name = "detect"
[medium]
temperature = "20 degC"
relative_humidity = "{humidity}"
[plasma]
electron_density = "1e16 cm^-3"
collision_rate = "2e12 1/s"
[filament]
length = "3 cm"
[observe]
freq = ["0.3 THz"]
[receiver]
center_freq = "0.3 THz"
bandwidth = "20 GHz"
polarization = [1, 0, 0]
area = "1 mm^2"
band_points = 3
nep = "{nep}"
integration_time = "1 s"
repetition_rate = "1 kHz"
[budget]
ranges = ["1 m", "3 m", "10 m"]
relative_humidity = ["{humidity}"]
[waveform]
ranges = ["1 m", "10 m", "30 m"]
duration = "40 ps"
bandwidth = "1 THz"
probe_energy = "5 nJ"
integration_time = "100 ms"
repetition_rate = "1 kHz"
[outputs]
formats = ["csv", "netcdf"]
"""


def _run(capsys, argv):
    assert main(argv + ["--json", "--force"]) == 0, capsys.readouterr().err
    return json.loads(capsys.readouterr().out)


@pytest.fixture
def design(tmp_path):
    def write(humidity="60 %", extra="", nep="1e-12 W/Hz^0.5"):
        path = tmp_path / f"d{len(list(tmp_path.glob('*.toml')))}.toml"
        path.write_text(DESIGN.format(humidity=humidity, nep=nep) + extra)
        return path
    return write


def test_waveform_writes_traces_that_keep_parseval_and_ring_more_far_away(design, tmp_path,
                                                                          capsys):
    out = _run(capsys, ["waveform", str(design()), "--out", str(tmp_path / "o")])
    nc = [f for f in out["files"] if f.endswith(".nc")]
    ds = xr.load_dataset(nc[0])
    assert ds.field.shape == (3, ds.time.size) and "field_dry_air" in ds
    t, f = ds.time.values, ds.freq.values
    spec = ds.spectrum_real.values + 1j * ds.spectrum_imag.values
    # Parseval for the one-sided transform (module docstring of thzarray.detect.waveform):
    # sum E(t_j)^2 dt = 2 df sum |E(f_k)|^2
    lhs = np.sum(ds.field.values**2, axis=1) * (t[1] - t[0])
    rhs = 2 * (f[1] - f[0]) * np.sum(np.abs(spec) ** 2, axis=1)
    np.testing.assert_allclose(lhs, rhs, rtol=1e-10)
    # the water lines' free induction decay grows with the path (common practice, no source)
    ring = out["ringing_fraction"]
    assert ring[2] > ring[0]
    # shot-noise SNR by hand: |Gamma| sqrt(eta E lambda f t / (h c)), eta = 0.8
    electrons = 0.8 * 5e-9 * 800e-9 / (h * c)
    expected = np.array(out["peak_retardation_rad"]) * np.sqrt(electrons * 1e3 * 0.1)
    np.testing.assert_allclose(out["eo_snr"], expected, rtol=1e-12)
    dry = _run(capsys, ["waveform", str(design("0 %")), "--out", str(tmp_path / "p")])
    assert "field_dry_air" not in xr.load_dataset(
        [f for f in dry["files"] if f.endswith(".nc")][0])


def test_peak_field_calibration_is_met_at_its_range(design, tmp_path, capsys):
    extra = ('[calibration]\nkind = "peak_field"\npeak_field = "150 V/m"\nrange = "10 m"\n'
             'uncertainty = "5 %"\n')
    out = _run(capsys, ["waveform", str(design(extra=extra)), "--out", str(tmp_path / "o")])
    assert out["peak_field"][1] == pytest.approx(150.0, rel=1e-9)
    # GUM first-order law: a field's relative uncertainty doubles in the energy factor
    assert out["range_high_factor"] == pytest.approx(1.1, rel=1e-12)
    assert out["peak_field_high"][1] == pytest.approx(150 * np.sqrt(1.1), rel=1e-9)


def test_budget_snr_is_the_hand_calculation_and_falls_to_one_where_it_says(design, tmp_path,
                                                                           capsys):
    from thzarray.detect.budget import range_budget

    # an invented, absurdly quiet detector, so that the SNR falls to 1 tens of metres away
    path = design(nep="1e-27 W/Hz^0.5")
    out = _run(capsys, ["budget", str(path), "--out", str(tmp_path / "o")])
    w = np.array(out["energy"])
    # SNR = W f_rep sqrt(2 t_int) / NEP (uniform averaging over t_int; common practice)
    np.testing.assert_allclose(out["snr"], w * 1e3 * np.sqrt(2 * 1.0) / 1e-27, rtol=1e-12)
    reach = out["unit_snr_range_m"][0]
    d = load_design(path)
    from thzarray.app.jobs import phasing

    p = phasing(d)
    at = range_budget(p.filaments, d.receiver, d.receiver_band, [reach], p.target.theta,
                      p.target.phi, medium=d.medium, plasma=d.plasma)
    # the unit-SNR range is found on the far-field energy (valid far from the column)
    assert reach > 10.0
    assert at.far_field_energy[0, 0] * 1e3 * np.sqrt(2.0) / 1e-27 == pytest.approx(1.0,
                                                                                  rel=1e-6)
    # a real detector: below 1 at every range of the budget, and the output says so
    assert main(["budget", str(design()), "--out", str(tmp_path / "q"), "--force"]) == 0
    assert "SNR below 1 at every range from" in capsys.readouterr().out


LASER_ARRAY = """
[design]
name = "laser array"
[laser]
energy = "3 mJ"
focal_length = "1 m"
[layout]
kind = "line"
count = 3
spacing = "2 mm"
[steering]
toward = ["6 deg", "0 deg"]
band = ["0.3 THz"]
[observe]
freq = ["0.3 THz"]
[split]
counts = [1, 2, 3]
efficiency = "80 %"
[bench]
glass = "N-BK7"
stage_resolution = "0 um"
[outputs]
formats = ["csv", "png"]
"""


def test_split_reports_the_n_that_pays_and_the_beams_it_starves(tmp_path, capsys):
    path = tmp_path / "laser.toml"
    path.write_text(LASER_ARRAY)
    out = _run(capsys, ["split", str(path), "--out", str(tmp_path / "o")])
    counts, ratio = np.array(out["counts"]), np.array(out["power_ratio"])
    # P/P_cr per beam falls as eta E / N (hand calculation)
    np.testing.assert_allclose(ratio * counts, ratio[0], rtol=1e-12)
    assert out["energy_per_beam_j"][1] == pytest.approx(0.8 * 3e-3 / 2, rel=1e-12)
    phased, single = np.array(out["phased"]), np.array(out["single"])
    # one beam: phased = single; random phases: exactly N times one column (exact mean)
    assert phased[0] == pytest.approx(single[0], rel=1e-12)
    np.testing.assert_allclose(np.array(out["incoherent"])[single > 0],
                               (counts * single)[single > 0], rtol=1e-9)
    assert out["best_count"] == counts[int(np.argmax(phased))]
    assert any(f.endswith("_split.png") for f in out["files"])


def test_bench_sheet_realises_the_delays_every_command_uses(tmp_path, capsys):
    path = tmp_path / "laser.toml"
    path.write_text(LASER_ARRAY)
    steer = _run(capsys, ["check", str(path)])
    out = _run(capsys, ["bench", str(path), "--out", str(tmp_path / "o")])
    delays = np.array(steer["delays_s"]) - min(steer["delays_s"])
    np.testing.assert_allclose(out["delays_s"], delays, atol=1e-24)
    # a retroreflector doubles the path: x = c t / (2 n_g) (common practice, no source)
    np.testing.assert_allclose(out["delay_stage"]["setting_m"],
                               c * delays / (2 * out["air_group_index"]), rtol=1e-12)
    assert out["delay_stage"]["realised_gain"] == pytest.approx(1.0, abs=1e-12)
    csv = [f for f in out["files"] if f.endswith(".csv")][0]
    with open(csv) as fh:
        rows = [r for r in fh.read().splitlines() if not r.startswith("#")]
    assert len(rows) == 4 and rows[0].startswith("filament,delay_s,stage_position_m")
    assert "N-BK7" in out["glass"] and all(np.isfinite(out["power_ratio_after_plate"]))


def test_split_without_a_laser_is_one_clear_line(design, tmp_path, capsys):
    assert main(["split", str(design()), "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "split needs [laser]" in err[0]
