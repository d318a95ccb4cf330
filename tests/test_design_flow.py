"""One design flows through every command: typed sections that round-trip, a [laser] section,
the same target, band and delays everywhere, notes and warnings in every output, and units
whose errors say how a value was read."""
import json
import tomllib
from pathlib import Path

import numpy as np
import pytest

from thzarray.app.cli import main
from thzarray.app.design import SCHEMA, design_to_toml, load_design
from thzarray.app.design.checker import GridSpec

DATA = Path(__file__).parent / "data"

# A design that sets every key of every section to a value that is not its default (the
# source sections are exercised in three designs, since a design has exactly one).
FULL = """
[design]
name = "every key"
description = "round trip"
[medium]
kind = "air"
temperature = "21.5 degC"
pressure = "99000 Pa"
relative_humidity = "37 %"
co2 = "420 ppm"
laser_wavelength = "790 nm"
line_list = "lines.par"
[plasma]
electron_density = "2e16 cm^-3"
collision_rate = "3e12 1/s"
pulse_duration = "60 fs"
peak_intensity = "4e13 W/cm^2"
radius = "40 um"
[source]
kind = "two-colour"
polarization = [0, 1, -0.01]
relative_phase = "45 deg"
dephasing_length = "4 cm"
driver = "air"
group_index = 1.0004
plasma_z = ["0 cm", "6 cm", "12 cm"]
plasma_density = ["1e16 cm^-3", "2e16 cm^-3", "1e16 cm^-3"]
plasma_collision_rate = ["2e12 1/s", "3e12 1/s", "2e12 1/s"]
[layout]
kind = "ring"
count = 5
radius = "3 mm"
length = "25 mm"
center_column = true
center = ["0 mm", "1 mm", "2 mm"]
axis = [0, 0.01, 1]
[steering]
toward = ["7 deg", "20 deg"]
method = "phase-only"
design_freq = "0.35 THz"
aperture_radius = "4 mm"
aperture_distance = "0.7 m"
band = ["0.25 THz", "0.45 THz"]
band_points = 5
delays = ["0 ps", "0.1 ps", "0.2 ps", "0.3 ps", "0.4 ps", "0.5 ps"]
[tolerance]
timing_jitter = "0.15 ps"
transverse_error = "20 um"
longitudinal_error = "1 mm"
trials = 77
percentile = 20
seed = 9
[observe]
freq = { start = "0.2 THz", stop = "0.4 THz", points = 3 }
theta = ["0 deg", "5 deg", "10 deg"]
phi = { start = "0 deg", stop = "180 deg", points = 4 }
[cone]
target_angle = "4 deg"
band = ["0.2 THz", "0.5 THz"]
lengths = { start = "1 cm", stop = "20 cm", points = 11 }
[receiver]
kind = "narrowband"
center_freq = "0.32 THz"
bandwidth = "15 GHz"
polarization = [0, 1, 0]
beam_waist = "4 mm"
band_points = 7
nep = "2e-10 W/Hz^0.5"
integration_time = "0.3 s"
repetition_rate = "1 kHz"
[plane]
distance = "0.8 m"
normal = [0, 0.1, 1]
origin = ["0 m", "0 m", "0.1 m"]
x = { start = "-2 cm", stop = "2 cm", points = 9 }
y = ["-1 cm", "0 cm", "1 cm"]
[budget]
ranges = ["1 m", "3 m"]
relative_humidity = ["10 %", "90 %"]
theta = "6 deg"
phi = "10 deg"
[waveform]
ranges = ["2 m", "20 m"]
duration = "40 ps"
bandwidth = "3 THz"
theta = "5 deg"
phi = "15 deg"
polarization = [0, 1, 0]
crystal = "GaP"
thickness = "0.3 mm"
probe_wavelength = "1030 nm"
probe_duration = "100 fs"
probe_energy = "5 nJ"
integration_time = "50 ms"
repetition_rate = "10 kHz"
[calibration]
kind = "energy"
energy = "3 fJ"
range = "1.2 m"
uncertainty = "12 %"
model_uncertainty = "5 %"
[split]
counts = [1, 2, 3]
family = "line"
spacing = "4 mm"
efficiency = "80 %"
[bench]
glass = "CaF2"
passes = 4
stage_resolution = "0.5 um"
thickness_resolution = "5 um"
step_resolution = "2 um"
incidence = "10 deg"
[outputs]
formats = ["pdf", "netcdf"]
"""


_FILAMENT = """
[filament]
length = "12 cm"
start = ["1 mm", "2 mm", "3 mm"]
axis = [0.1, 0, 1]
delay = "2 ps"
amplitude = -0.5
profile_z = ["0 cm", "6 cm", "12 cm"]
profile_w = [0.2, 1.0, 0.3]
"""
_LASER = """[laser]
energy = "1.2 mJ"
duration = "60 fs"
beam_radius = "4 mm"
wavelength = "790 nm"
focal_length = "1.5 m"
n2 = "3e-19 cm^2/W"
clamped_intensity = "4.5e13 W/cm^2"
core_radius = "45 um"
collision_rate = "3e12 1/s"
"""
_PLASMA = FULL[FULL.index("[plasma]"):FULL.index("[layout]")]
_LAYOUT = FULL[FULL.index("[layout]"):FULL.index("[steering]")]
_DELAYS = 'delays = ["0 ps", "0.1 ps", "0.2 ps", "0.3 ps", "0.4 ps", "0.5 ps"]'


def _variant(name, tmp_path):
    """The full design, or one of its variants that set the kind-specific keys the full
    design's kinds do not use (a design has one kind of each)."""
    text = FULL
    if name == "filament":
        text = text.replace(_LAYOUT, _FILAMENT).replace(_DELAYS, 'delays = ["0 ps"]')
    elif name == "laser":
        text = text.replace(_PLASMA, _LASER).replace('length = "25 mm"\n', "")
    elif name == "custom medium, optimised, broadband":
        (tmp_path / "response.csv").write_text("freq_hz,response\n1e11,0.5\n1e12,1.0\n")
        text = text.replace('kind = "air"\ntemperature = "21.5 degC"\npressure = "99000 Pa"\n'
                            'relative_humidity = "37 %"\nco2 = "420 ppm"\n'
                            'laser_wavelength = "790 nm"\n',
                            'kind = "custom"\nn_group = 1.0003\nn_thz = 1.0004\n')
        text = text.replace('line_list = "lines.par"\n', "")
        text = text.replace('method = "phase-only"\ndesign_freq = "0.35 THz"\n',
                            'method = "optimise"\nmax_delay = "3 ps"\n')
        text = text.replace('kind = "narrowband"', 'kind = "broadband"').replace(
            'polarization = [0, 1, 0]\nbeam_waist = "4 mm"\n',
            'response_csv = "response.csv"\narea = "2 mm^2"\n')
        text = text.replace('relative_humidity = ["10 %", "90 %"]\n', "")
    elif name == "grid, narrowband area":
        text = text.replace(_LAYOUT, '[layout]\nkind = "grid"\nshape = [2, 3]\n'
                                     'spacing = "2 mm"\nlength = "25 mm"\n')
        text = text.replace('beam_waist = "4 mm"', 'area = "2 mm^2"')
    elif name == "hexagonal":
        text = text.replace(_LAYOUT, '[layout]\nkind = "hexagonal"\nrings = 1\n'
                                     'spacing = "2 mm"\nlength = "25 mm"\n').replace(
            _DELAYS, 'delays = ["0 ps", "0 ps", "0 ps", "0 ps", "0 ps", "0 ps", "1 ps"]')
    elif name == "random":
        text = text.replace(_LAYOUT, '[layout]\nkind = "random"\ncount = 6\n'
                                     'radius = "5 mm"\nmin_separation = "0.5 mm"\nseed = 3\n'
                                     'length = "25 mm"\n')
    elif name == "csv":
        (tmp_path / "positions.csv").write_text(
            "x_mm,y_mm,delay_ps\n" + "".join(f"{i},0,0\n" for i in range(6)))
        text = text.replace(_LAYOUT, '[layout]\nkind = "csv"\ncsv = "positions.csv"\n'
                                     'length = "25 mm"\n')
    elif name == "peak-field calibration":
        text = text.replace('kind = "energy"\nenergy = "3 fJ"', 'kind = "peak_field"\n'
                            'peak_field = "250 V/m"')
    elif name == "amplitude calibration":
        text = text.replace('kind = "energy"\nenergy = "3 fJ"\nrange = "1.2 m"',
                            'kind = "amplitude"\namplitude = 0.7')
    path = tmp_path / "design.toml"
    path.write_text(text)
    (tmp_path / "lines.par").write_text((DATA / "hitran_synthetic.par").read_text())
    return path


VARIANTS = ["full", "filament", "laser", "custom medium, optimised, broadband",
            "grid, narrowband area", "hexagonal", "random", "csv", "peak-field calibration",
            "amplitude calibration"]


def test_the_variants_set_every_key_to_a_non_default_value(tmp_path):
    seen = {section: set() for section in SCHEMA}
    for name in VARIANTS:
        path = _variant(name, tmp_path)
        data = tomllib.loads(path.read_text())
        d = load_design(path)
        for section, table in data.items():
            typed = getattr(d.sections, section)
            for key in table:
                spec = SCHEMA[section][key]
                default = spec.default
                if isinstance(default, dict):
                    default = GridSpec(default["start"], default["stop"], default["points"])
                if getattr(typed, key) != default:
                    seen[section].add(key)
    for section, keys in SCHEMA.items():
        missing = set(keys) - seen[section]
        assert not missing, f"[{section}] keys never set to a non-default value: {missing}"


@pytest.mark.parametrize("name", VARIANTS)
def test_every_key_round_trips(name, tmp_path):
    design = load_design(_variant(name, tmp_path))
    again = tmp_path / "again.toml"
    again.write_text(design_to_toml(design))
    back = load_design(again)
    assert back == design  # every section equal, key by key (SI values, exactly)
    assert back.sections == design.sections
    assert [f.start for f in back.filaments] == [f.start for f in design.filaments]
    assert back.medium == design.medium


def test_a_key_the_kind_does_not_use_is_an_error(tmp_path, capsys):
    path = _variant("full", tmp_path)
    path.write_text(path.read_text().replace('center_column = true',
                                             'center_column = true\nshape = [2, 2]'))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "layout.shape: not used when kind = 'ring'" in err


def test_laser_section_makes_the_columns_and_every_command_says_so(tmp_path, capsys):
    # The laser model's P/P_cr, onset, end and density reach check and the other commands,
    # terminal and JSON; a pulse far above the critical power gets the model's warning.
    path = tmp_path / "laser.toml"
    path.write_text("""
[design]
name = "laser check"
[laser]
energy = "20 mJ"
focal_length = "1 m"
[observe]
freq = ["0.3 THz"]
theta = { start = "0 deg", stop = "10 deg", points = 11 }
phi = { start = "0 deg", stop = "360 deg", points = 5 }
[outputs]
formats = ["csv"]
""")
    design = load_design(path)
    assert design.estimate.power_ratio > 100 and design.plasma is not None
    assert design.filaments[0].start[2] == pytest.approx(design.estimate.onset)
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "P/P_cr = 1" in out and "several filaments" in out
    assert main(["pattern", str(path), "--json", "--out", str(tmp_path / "o")]) == 0
    data = json.loads(capsys.readouterr().out)
    assert any("several filaments" in n for n in data["notes"])
    assert any("P/P_cr" in n for n in data["notes"])


def test_steer_write_carries_delays_and_target_to_every_command(tmp_path, capsys,
                                                                array_design):
    path = array_design("flow", extra="""
[receiver]
center_freq = "0.3 THz"
bandwidth = "20 GHz"
area = "1 mm^2"
band_points = 3
[plane]
distance = "0.2 m"
x = { start = "-3 cm", stop = "3 cm", points = 7 }
y = { start = "-3 cm", stop = "3 cm", points = 5 }
[budget]
ranges = { start = "1 m", stop = "5 m", points = 3 }
""")
    new = tmp_path / "steered.toml"
    out = tmp_path / "o"
    assert main(["steer", str(path), "--toward", "5 deg,180 deg", "--write", str(new),
                 "--out", str(out), "--quiet"]) == 0
    steered = load_design(new)
    assert steered.steering.toward == pytest.approx((np.radians(5), np.radians(180)))
    capsys.readouterr()
    # compare on the written design: the stored delays toward the stored target reach the
    # ideal N^2 (Balanis, arrays: in-phase identical elements; the columns are identical)
    assert main(["compare", str(new), "--json", "--out", str(out), "--force"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["delays_from"] == "stored [steering].delays"
    assert data["target"]["phi_deg"] == pytest.approx(180.0)
    assert data["phased_over_ideal"] == pytest.approx(1.0, rel=1e-6)
    # steer on it reports on the stored delays instead of steering again
    assert main(["steer", str(new), "--json", "--out", str(out), "--force"]) == 0
    again = json.loads(capsys.readouterr().out)
    assert again["delays_s"] == pytest.approx(list(steered.steering.delays), rel=1e-12)
    # pattern, map, budget and tolerance use the same delays and name them
    for command in ("pattern", "map", "budget", "tolerance"):
        assert main([command, str(new), "--json", "--out", str(out), "--force"]) == 0, command
        got = json.loads(capsys.readouterr().out)
        assert got["delays_from"] == "stored [steering].delays", command
        assert got["delays_s"] == pytest.approx(list(steered.steering.delays), rel=1e-12)
    # the budget looks toward the stored target by default
    assert got is not None
    assert main(["budget", str(new), "--json", "--out", str(out), "--force"]) == 0
    budget = json.loads(capsys.readouterr().out)
    assert budget["theta_rad"] == pytest.approx(np.radians(5))
    assert budget["phi_rad"] == pytest.approx(np.radians(180))


def test_steered_sky_map_peaks_at_the_target(tmp_path, capsys, array_design):
    # The pattern of a steered line is not the unsteered ring: its band energy toward the
    # target grows by the array gain (Balanis, arrays chapter: true-time delays bring the
    # columns in phase toward the target).
    plain = array_design("plain").read_text().split("[steering]")[0] + "[tolerance]" + \
        array_design("plain").read_text().split("[tolerance]")[1]
    path_plain = tmp_path / "plain.toml"
    path_plain.write_text(plain)
    path_steered = array_design("steered")
    sums = []
    for p in (path_plain, path_steered):
        assert main(["pattern", str(p), "--json", "--out", str(tmp_path / p.stem)]) == 0
        sums.append(json.loads(capsys.readouterr().out))
    assert sums[0]["delays_from"].startswith("the columns' own delays")
    assert sums[1]["delays_from"].startswith("true-time")


def test_unit_errors_say_how_a_value_was_read(tmp_path, capsys):
    scan = tmp_path / "scan.csv"
    scan.write_text("angle_deg,signal\n" + "".join(f"{a},{a}\n" for a in range(8)))
    assert main(["fit", str(scan), "--freq", "0.1"]) == 2
    err = capsys.readouterr().err
    assert "read as 0.1 Hz" in err and "did you mean '0.1 THz'" in err
    assert len(err.strip().splitlines()) == 1
    assert main(["cone", "--length", "30", "--freq", "0.3 THz", "--angle", "x"]) == 2
    capsys.readouterr()
    assert main(["cone", "--angle", "3", "--freq", "0.3 THz"]) == 2
    err = capsys.readouterr().err
    assert "read as 3 rad" in err and "'3 deg'" in err


def test_fit_fix_takes_units_and_messages_use_cli_syntax(tmp_path, capsys):
    from thzarray import Filament, far_field

    # A 2 cm column scanned out to 80 deg (its cone is near 30 deg at 0.3 THz): the cone's
    # width dwarfs any air mismatch, so the fit cannot constrain it (see test_fitting).
    theta = np.radians(np.linspace(2.0, 80.0, 60))
    ff = far_field(Filament(0.02), 0.3e12, theta, 0.0)
    signal = ff.magnitude_squared / ff.magnitude_squared.max()
    signal = signal + np.random.default_rng(2).normal(0.0, 0.02, theta.size)
    scan = tmp_path / "scan.csv"
    scan.write_text("# freq = 0.3 THz\nangle_rad,signal,sigma\n"
                    + "".join(f"{float(a)!r},{float(s)!r},0.02\n" for a, s in zip(theta, signal)))
    assert main(["fit", str(scan), "--fix", "length=2 cm", "--json", "--out",
                 str(tmp_path / "o")]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["fixed"]["length"] == pytest.approx(0.02)
    assert main(["fit", str(scan), "--json", "--out", str(tmp_path / "o"), "--force"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert all("fixed={" not in m for m in data["messages"])
    assert any("--fix mismatch=VALUE" in m for m in data["messages"]), data["messages"]
    # the CLI prints the fit's messages as notes, and what it assumed about the spectra
    assert data["notes"][:len(data["messages"])] == data["messages"]
    assert data["notes"][-1].startswith("the fit assumed source_spectrum")


def test_delay_chart_jitter_and_one_frequency_band(tmp_path, capsys, array_design):
    path = array_design("small")
    out = tmp_path / "o"
    assert main(["steer", str(path), "--out", str(out), "--band", "0.3 THz", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["band_hz"] == [pytest.approx(0.3e12)] and data["band_from"] == "--band"
    assert any(f.endswith("small_delay_chart.csv") for f in data["files"])
    for jitter, mean in (("0.1 ps", None), ("0.5 ps", None)):
        assert main(["tolerance", str(path), "--out", str(out), "--force", "--json",
                     "--jitter", jitter]) == 0
        got = json.loads(capsys.readouterr().out)
        assert got["timing_jitter_s"] == pytest.approx(float(jitter.split()[0]) * 1e-12)
    assert main(["tolerance", str(path), "--jitter", "2 ns"]) == 2
    assert "--jitter" in capsys.readouterr().err


def test_sweep_writes_one_figure_per_measure(tmp_path, capsys, array_design):
    path = array_design("swept")
    sweep = tmp_path / "s.toml"
    sweep.write_text(f"""
[sweep]
name = "pitch"
design = "{path.name}"
[measures]
cone = {{}}
[vary]
"layout.spacing" = ["1 mm", "2 mm"]
""")
    assert main(["sweep", str(sweep), "--serial", "--out", str(tmp_path / "o"), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert any(f.endswith("pitch_cone_angle_uniform.png") for f in data["figures"])
    assert data["captions"]


@pytest.mark.slow
def test_gallery_is_a_small_captioned_report(tmp_path, capsys):
    # Every figure in the index has a caption with its key numbers; the pages share one
    # plotly.min.js, so the whole gallery stays under 20 MB.
    import re
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    out = tmp_path / "gallery"
    assert main(["demo", "--designs", str(root / "designs"), "--out", str(out), "--quiet"]) == 0
    capsys.readouterr()
    index = (out / "index.html").read_text()
    pngs = re.findall(r'<img src="([^"]+\.png)"', index)
    captions = re.findall(r"<figcaption>([^<]*)", index)
    assert len(pngs) >= 20 and len(captions) == len(pngs)
    assert all(len(c) > 40 and re.search(r"\d", c) for c in captions)
    assert len(list(out.glob("plotly*.js"))) == 1
    pages = list(out.glob("*.html"))
    assert all(p.stat().st_size < 3e6 for p in pages)  # no page embeds the library
    total = sum(p.stat().st_size for p in out.iterdir())
    assert total < 20e6, f"gallery is {total / 1e6:.1f} MB"
    steered = next(p for p in pages if p.name.endswith("_steered.html"))
    assert '"active": 4' in steered.read_text().replace("'", '"') or \
        '"active":4' in steered.read_text()
