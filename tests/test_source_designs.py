"""Sources as design files state them: two-colour columns, the driver's group index, plasma
varying along the column, and absolute energies with their range or calibration."""
import json

import numpy as np
import pytest
from scipy.constants import c, e, epsilon_0, m_e

from thzarray.app.cli import main
from thzarray.app.design import load_design
from thzarray.source.column_plasma import ColumnPlasma

TWO_COLOUR = """
[design]
name = "two colour"
[medium]
temperature = "20 degC"
relative_humidity = "30 %"
[plasma]
electron_density = "1e16 cm^-3"
collision_rate = "2e12 1/s"
[source]
kind = "two-colour"
polarization = [1, 0, 0]
relative_phase = "90 deg"
{source_extra}
[layout]
kind = "line"
count = 2
spacing = "2 mm"
length = "{length}"
[steering]
band = ["{freq}"]
[observe]
freq = ["{freq}"]
theta = {{ start = "0 deg", stop = "20 deg", points = 41 }}
phi = {{ start = "0 deg", stop = "360 deg", points = 5 }}
[outputs]
formats = ["csv"]
"""


def _design(tmp_path, name="d.toml", length="10 cm", freq="1 THz", source_extra="",
            template=TWO_COLOUR):
    path = tmp_path / name
    path.write_text(template.format(length=length, freq=freq, source_extra=source_extra))
    return path


def _json(capsys, argv):
    assert main(argv + ["--json", "--force"]) == 0, capsys.readouterr().err
    return json.loads(capsys.readouterr().out)


def _critical_density(wavelength):
    # n_c = eps0 m_e w^2 / e^2 (F. F. Chen, Introduction to Plasma Physics: the cut-off of
    # light in a plasma), written out here from scipy's constants
    return epsilon_0 * m_e * (2 * np.pi * c / wavelength) ** 2 / e**2


def test_two_colour_columns_carry_the_photocurrent_and_the_plasma_slowed_driver(tmp_path):
    d = load_design(_design(tmp_path))
    n_e = 1e22
    expected_ng = d.medium.n_group + n_e / (2 * _critical_density(800e-9))  # Chen, cold plasma
    l_d = d.source.dephasing_length
    for fil in d.filaments:
        assert fil.current == pytest.approx((1.0, 0.0, 0.0), abs=1e-15)
        assert fil.group_index == pytest.approx(expected_ng, rel=0, abs=1e-12)
        s = np.linspace(0, fil.length, 333)
        # Kim et al., Opt. Express 15, 4577 (2007): local current ~ sin(phi0 + 2 pi s / L_d),
        # sampled 64 times per L_d (PCHIP between samples: O(h^2) at the extrema)
        assert np.abs(fil.profile_values(s) - np.sin(np.pi / 2 + 2 * np.pi * s / l_d)).max() \
            < 5e-4
    assert 0.02 < l_d < 0.08  # a few cm at 800 nm in air (from memory: about 5 cm dry)
    assert any("two-colour source" in n for n in d.notes)
    assert any("driver group index" in n for n in d.notes)


def test_the_target_of_a_long_two_colour_column_is_the_phase_matched_angle(tmp_path):
    # You, Oh & Kim, PRL 109, 183902 (2012): a column much longer than L_d radiates where
    # cos(theta) = (n_g - c / (f L_d)) / n_T, to within a lobe width of order L_d / L.
    d = load_design(_design(tmp_path, length="60 cm", source_extra='dephasing_length = "3 cm"'))
    f, l_d, L = 1e12, 0.03, 0.6
    n_g, n_t = d.filaments[0].group_index, d.medium.n_thz
    expected = np.arccos((n_g - c / (f * l_d)) / n_t)
    from thzarray.app.jobs import phasing

    got = phasing(d).target.theta
    assert abs(got - expected) < 1.5 * l_d / (2 * np.pi * L)
    # and it does not depend on the column's length (a single-colour cone would shrink)
    d2 = load_design(_design(tmp_path, "e.toml", length="30 cm",
                             source_extra='dephasing_length = "3 cm"'))
    assert abs(phasing(d2).target.theta - expected) < 1.5 * l_d / (2 * np.pi * 0.3)


def test_a_two_colour_array_steers_to_n_squared_like_a_single_colour_one(tmp_path, capsys):
    # Identical elements in phase toward the target: N^2 over one (Balanis, Antenna Theory,
    # array factor at its maximum), N for random phases.
    out = _json(capsys, ["compare", str(_design(tmp_path)), "--out", str(tmp_path / "o")])
    assert out["phased_over_single"] == pytest.approx(4.0, rel=1e-9)
    assert out["incoherent_over_single"] == pytest.approx(2.0, rel=1e-9)
    assert out["target"]["theta_deg"] > 1.0  # off axis: the two-colour cone


def test_driver_and_group_index_keys_set_the_cone(tmp_path, capsys):
    from thzarray.field.cone import cone_angle

    single = TWO_COLOUR.replace('kind = "two-colour"\npolarization = [1, 0, 0]\n'
                                'relative_phase = "90 deg"\n', 'kind = "single-colour"\n')
    chart = {}
    for driver in ("air", "air+plasma"):
        path = _design(tmp_path, f"{driver}.toml", template=single,
                       source_extra=f'driver = "{driver}"')
        d = load_design(path)
        out = _json(capsys, ["steer", str(path), "--out", str(tmp_path / driver)])
        chart[driver] = out["target"]["theta_deg"]
        n_g = d.filaments[0].group_index
        assert np.degrees(cone_angle(0.1, 1e12, d.medium, group_index=n_g)) == pytest.approx(
            chart[driver], rel=1e-9)
    # the electrons change the driver's speed, hence the cone (in humid air, where
    # n_g < n_T, they bring the driver closer to the THz phase velocity: a narrower cone)
    assert chart["air+plasma"] != pytest.approx(chart["air"], rel=1e-4)
    path = _design(tmp_path, "given.toml", template=single, source_extra="group_index = 1.0005")
    assert all(f.group_index == 1.0005 for f in load_design(path).filaments)


def test_plasma_along_the_column_reaches_the_far_field(tmp_path, capsys):
    extra = ('plasma_z = ["0 cm", "5 cm", "10 cm"]\n'
             'plasma_density = ["2e15 cm^-3", "1e16 cm^-3", "2e15 cm^-3"]')
    varying = load_design(_design(tmp_path, "v.toml", source_extra=extra))
    assert isinstance(varying.plasma, ColumnPlasma)
    uniform = load_design(_design(tmp_path))
    from thzarray.field.farfield import far_field

    a = far_field(varying.filaments, 1e12, 0.12, 0.5, varying.medium, varying.plasma)
    b = far_field(uniform.filaments, 1e12, 0.12, 0.5, uniform.medium, uniform.plasma)
    ratio = float(a.magnitude_squared / b.magnitude_squared)
    assert not 0.95 < ratio < 1.05
    bad = _design(tmp_path, "b.toml", source_extra='plasma_z = ["0 cm", "5 cm"]\n'
                                                   'plasma_density = ["1e16 cm^-3"]')
    assert main(["check", str(bad)]) == 2
    assert "source.plasma_density: 1 values for 2 plasma_z" in capsys.readouterr().err


def test_polarization_along_the_beam_is_refused_and_a_tilted_one_projected(tmp_path, capsys):
    path = _design(tmp_path, source_extra="")
    path.write_text(path.read_text().replace("polarization = [1, 0, 0]",
                                             "polarization = [0, 0, 1]"))
    assert main(["check", str(path)]) == 2
    assert "source.polarization" in capsys.readouterr().err
    path.write_text(path.read_text().replace("polarization = [0, 0, 1]",
                                             "polarization = [1, 0, 0.1]"))
    d = load_design(path)
    assert d.filaments[0].current == pytest.approx((1.0, 0.0, 0.0), abs=1e-12)
    assert any("projected across the columns' axes" in n for n in d.notes)


LASER = """
[design]
name = "laser"
[laser]
energy = "2 mJ"
focal_length = "1 m"
[observe]
freq = ["0.3 THz"]
[receiver]
center_freq = "0.3 THz"
bandwidth = "20 GHz"
area = "1 mm^2"
band_points = 3
[budget]
ranges = ["2 m", "5 m"]
relative_humidity = ["40 %"]
theta = "4 deg"
[outputs]
formats = ["csv"]
"""


def test_absolute_energies_carry_the_published_spread_or_say_there_is_none(tmp_path, capsys):
    path = tmp_path / "laser.toml"
    path.write_text(LASER)
    out = _json(capsys, ["budget", str(path), "--out", str(tmp_path / "o")])
    e, lo, hi = (np.array(out[k]) for k in ("energy", "energy_low", "energy_high"))
    assert np.all(lo < e) and np.all(e < hi)
    assert out["range_low_factor"] < 1 < out["range_high_factor"]
    assert "published spread" in out["scale_from"]
    plasma = LASER.replace('[laser]\nenergy = "2 mJ"\nfocal_length = "1 m"',
                           '[plasma]\nelectron_density = "1e16 cm^-3"\n'
                           'collision_rate = "2e12 1/s"\n[filament]\nlength = "5 cm"')
    path.write_text(plasma)
    out = _json(capsys, ["budget", str(path), "--out", str(tmp_path / "p")])
    assert out["energy_low"] == out["energy"] == out["energy_high"]
    assert "no spread propagated" in out["scale_from"]


def test_an_energy_calibration_reproduces_the_measurement_where_it_was_made(tmp_path, capsys):
    path = tmp_path / "laser.toml"
    path.write_text(LASER)
    plain = _json(capsys, ["budget", str(path), "--out", str(tmp_path / "a")])
    path.write_text(LASER + '[calibration]\nkind = "energy"\nenergy = "3e-20 J"\n'
                            'range = "5 m"\nuncertainty = "10 %"\n')
    cal = _json(capsys, ["budget", str(path), "--out", str(tmp_path / "b")])
    # the calibrated budget equals the measured energy at the measured range ...
    assert cal["energy"][0][1] == pytest.approx(3e-20, rel=1e-9)
    k = 3e-20 / plain["energy"][0][1]
    # ... and every other energy is scaled by the same factor (GUM: one factor k)
    assert cal["energy"][0][0] == pytest.approx(k * plain["energy"][0][0], rel=1e-9)
    assert cal["range_high_factor"] == pytest.approx(1.1, rel=1e-12)
    path.write_text(LASER + '[calibration]\nkind = "amplitude"\namplitude = 0.5\n')
    amp = _json(capsys, ["budget", str(path), "--out", str(tmp_path / "c")])
    assert amp["energy"][0][0] == pytest.approx(0.25 * plain["energy"][0][0], rel=1e-9)
