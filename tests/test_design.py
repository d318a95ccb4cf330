"""Design files: every example validates and runs; malformed designs fail with exit 2 and one
line per problem naming the key; unknown keys get a did-you-mean suggestion."""
import json
import tomllib
from pathlib import Path

import numpy as np
import pytest

from thzarray.app.cli import main
from thzarray.app.design import DesignError, load_design, parse_design

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "designs").glob("*.toml"))

BASE = """
[design]
name = "corpus"
[medium]
relative_humidity = "30 %"
[filament]
length = "10 cm"
[observe]
freq = ["0.3 THz"]
theta = { start = "0 deg", stop = "10 deg", points = 11 }
phi = { start = "0 deg", stop = "360 deg", points = 5 }
"""


def test_at_least_five_examples():
    assert len(EXAMPLES) >= 5


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_example_validates(path, capsys):
    assert main(["check", str(path), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["valid"] is True and out["filaments"] >= 1
    text = path.read_text()
    assert "nvented" in text  # each example says its numbers are invented


def test_base_is_valid():
    d = parse_design(tomllib.loads(BASE))
    assert d.filaments[0].length == pytest.approx(0.10)
    assert d.grid.theta[-1] == pytest.approx(np.radians(10))


# (replacement or addition, key the one-line message must name)
MALFORMED = [
    ('length = "10 cm"', 'length = "-10 cm"', "filament.length"),
    ('length = "10 cm"', 'length = "10"', None),  # plain number is SI metres: valid (10 m)
    ('length = "10 cm"', 'length = "10 kg"', "filament.length"),
    ('length = "10 cm"', 'length = "ten cm"', "filament.length"),
    ('length = "10 cm"', 'length = "nan cm"', "filament.length"),
    ('length = "10 cm"', 'length = "inf m"', "filament.length"),
    ('length = "10 cm"', "length = true", "filament.length"),
    ('length = "10 cm"', 'length = "10 cm"\naxis = [0, 0, 0]', "filament"),
    ('length = "10 cm"', 'length = "10 cm"\naxis = [0, 1]', "filament.axis"),
    ('length = "10 cm"', 'length = "10 cm"\nstart = ["0 m", "x", "0 m"]', "filament.start[1]"),
    ('length = "10 cm"', 'length = "10 cm"\nlenght = "3 cm"', "filament.lenght"),
    ('length = "10 cm"', 'length = "10 cm"\ndelay = "1 s"', "filament.delay"),
    ('length = "10 cm"', 'length = "10 cm"\nprofile_z = ["0 cm", "10 cm"]', "filament"),
    ('relative_humidity = "30 %"', 'relative_humidity = "130 %"', "medium.relative_humidity"),
    ('relative_humidity = "30 %"', 'relative_humidity = "30 %"\ntemperature = "900 degC"',
     "medium.temperature"),
    ('relative_humidity = "30 %"', 'relative_humidity = "30 %"\nkind = "water"', "medium.kind"),
    ('relative_humidity = "30 %"', 'relative_humidity = "30 %"\nkind = "custom"', "medium"),
    ('relative_humidity = "30 %"', 'relative_humidity = "30 %"\npresure = "1 bar"',
     "medium.presure"),
    ('freq = ["0.3 THz"]', 'freq = ["-0.3 THz"]', "observe.freq[0]"),
    ('freq = ["0.3 THz"]', "freq = []", "observe.freq"),
    ('freq = ["0.3 THz"]', 'freq = "0.3 THz"', "observe.freq"),
    ('freq = ["0.3 THz"]', 'freq = ["0.3 m"]', "observe.freq[0]"),
    ('points = 11', 'points = 0', "observe.theta.points"),
    ('points = 11', 'points = 2.5', "observe.theta.points"),
    ('stop = "10 deg", points = 11', 'stop = "200 deg", points = 11', "observe.theta.stop"),
    ('stop = "10 deg", points = 11', 'stop = "10 deg", count = 11', "observe.theta.count"),
    ('points = 5 }', 'points = 5000000 }', "observe"),  # huge grid: refused before allocation
    ('[design]\nname = "corpus"', '[design]', "design.name"),
    ('[design]\nname = "corpus"', '[design]\nname = 42', "design.name"),
    # A NUL or a terminal escape in the name reached file names, netCDF and the terminal.
    ('[design]\nname = "corpus"', '[design]\nname = "a\\u0000b"', "design.name"),
    ('[design]\nname = "corpus"', '[design]\nname = "a\\u001b[31mb"', "design.name"),
    ('[observe]', '[receiver]\ncenter_freq = "0.3 THz"\nbandwidth = "0.1 THz"\n'
                  'nep = "1e-40 W/Hz^0.5"\n[observe]', "receiver.nep"),
    ('[filament]\nlength = "10 cm"', '', "filament"),
    ('[filament]\nlength = "10 cm"', '[[filaments]]\nlength = "1 cm"\n[[filaments]]\n'
                                     'length = "-1 cm"', "filaments[1].length"),
    ('[filament]\nlength = "10 cm"', '[layout]\nkind = "grid"\nshape = [4, 4]\n'
                                     'spacing = "1 mm"', "layout.length"),
    ('[filament]\nlength = "10 cm"', '[layout]\nkind = "spiral"\nlength = "1 cm"', "layout.kind"),
    ('[filament]\nlength = "10 cm"', '[layout]\nkind = "line"\ncount = 0\nspacing = "1 mm"\n'
                                     'length = "1 cm"', "layout.count"),
    ('[filament]\nlength = "10 cm"', '[layout]\nkind = "line"\ncount = 3\nspacing = "0 mm"\n'
                                     'length = "1 cm"', "layout.spacing"),
    ('[filament]\nlength = "10 cm"', '[layout]\nkind = "line"\ncount = 2\nspacing = "1 mm"\n'
                                     'length = "1 cm"\n[filament]\nlength = "1 cm"', "filament"),
    ('[observe]', '[steering]\ntoward = ["5 deg"]\n[observe]', "steering.toward"),
    ('[observe]', '[steering]\ntoward = ["5 deg", "0 deg"]\nmethod = "phase-only"\n[observe]',
     "steering.design_freq"),
    ('[observe]', '[steering]\naperture_radius = "1 cm"\n[observe]', "steering"),
    ('[observe]', '[tolerance]\ntiming_jitter = "-1 ps"\n[observe]', "tolerance.timing_jitter"),
    ('[observe]', '[receiver]\ncenter_freq = "0.1 THz"\nbandwidth = "10 GHz"\n[observe]',
     "receiver"),
    ('[observe]', '[receiver]\ncenter_freq = "0.1 THz"\nbandwidth = "1 THz"\narea = "1 mm^2"\n'
                  '[observe]', "receiver.bandwidth"),
    ('[observe]', '[plasma]\nelectron_density = "1e16 cm^-3"\n[observe]', "plasma.collision_rate"),
    ('[observe]', '[plasma]\nelectron_density = "-1e16 cm^-3"\ncollision_rate = "1e12 1/s"\n'
                  '[observe]', "plasma.electron_density"),
    ('[observe]', '[outputs]\nformats = ["png", "gif"]\n[observe]', "outputs.formats"),
    ('[observe]', '[mediun]\nkind = "air"\n[observe]', "mediun"),
]


@pytest.mark.parametrize("old, new, key", MALFORMED, ids=[m[2] or "valid" for m in MALFORMED])
def test_malformed_design_exit_2_one_line(old, new, key, tmp_path, capsys):
    assert old in BASE
    path = tmp_path / "bad.toml"
    path.write_text(BASE.replace(old, new, 1))
    code = main(["check", str(path)])
    err = capsys.readouterr().err
    if key is None:
        assert code == 0, err
        return
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1, lines
    assert key in lines[0] and "Traceback" not in err
    assert lines[0].startswith("thzarray: error: ")


def test_corpus_is_large_enough():
    assert sum(1 for m in MALFORMED if m[2] is not None) >= 30


def test_every_problem_reported_at_once():
    text = BASE.replace('length = "10 cm"', 'length = "-1 cm"\nlenght = 3').replace(
        'relative_humidity = "30 %"', 'relative_humidity = "300 %"')
    with pytest.raises(DesignError) as exc:
        parse_design(tomllib.loads(text))
    joined = "\n".join(exc.value.problems)
    for key in ("filament.length", "filament.lenght", "medium.relative_humidity"):
        assert key in joined


def test_unknown_key_suggests_nearest():
    with pytest.raises(DesignError, match="did you mean 'length'"):
        parse_design(tomllib.loads(BASE.replace('length = "10 cm"', 'lenght = "10 cm"')))


def test_not_toml_and_missing_file(tmp_path, capsys):
    bad = tmp_path / "x.toml"
    bad.write_text("[design\nname=")
    assert main(["check", str(bad)]) == 2
    assert "not valid TOML" in capsys.readouterr().err
    assert main(["check", str(tmp_path / "none.toml")]) == 2
    assert "cannot be read" in capsys.readouterr().err


def test_units_and_plain_si_agree():
    a = parse_design(tomllib.loads(BASE))
    b = parse_design(tomllib.loads(BASE.replace('"10 cm"', "0.1").replace('"30 %"', "0.3")))
    assert a.filaments[0].length == pytest.approx(b.filaments[0].length, rel=1e-15)
    assert a.medium == b.medium


# JSON output keys are a stable interface: scripts depend on them. Every design-based
# command also names the target, band and delays it used, and its notes and warnings.
_PHASING = {"target", "band_hz", "band_from", "delays_s", "delays_from"}
_ALWAYS = {"notes", "warnings"}
# Commands that print absolute numbers say how far they can be trusted.
_SCALE = {"energy_factor", "range_low_factor", "range_high_factor", "scale_from"}
JSON_KEYS = {
    "check": {"design", "valid", "filaments", "grid_points"} | _PHASING | _ALWAYS,
    "pattern": {"design", "files", "captions", "freq_hz", "cone_angle_deg",
                "peak_energy_density", "energy_density_unit", "group_index", "energy_unit"}
               | _SCALE | _PHASING | _ALWAYS,
    "steer": {"design", "files", "captions", "method", "main_lobe_deg", "pointing_error_deg",
              "beam_width_deg", "peak_sidelobe_db", "grating_lobes", "cone_level_db",
              "report_notes"} | _PHASING | _ALWAYS,
    "compare": {"design", "files", "captions", "count", "single", "incoherent",
                "incoherent_mc", "incoherent_mc_error", "phased", "ideal", "coherent_limit",
                "unit", "phased_over_single", "incoherent_over_single", "phased_over_ideal",
                "trials", "phased_low", "phased_high", "energy_unit"}
               | _SCALE | _PHASING | _ALWAYS,
    "tolerance": {"design", "files", "captions", "mean", "std", "standard_error",
                  "percentile", "percentile_value", "expected_mean", "trials",
                  "timing_jitter_s", "transverse_error_m", "longitudinal_error_m"}
                 | _PHASING | _ALWAYS,
    "map": {"design", "files", "captions", "plane_distance_m", "near_field_peak",
            "far_field_peak", "near_over_far_peak", "energy_unit"}
           | _SCALE | _PHASING | _ALWAYS,
    "budget": {"design", "files", "captions", "range_m", "relative_humidity", "energy",
               "energy_low", "energy_high", "far_field_energy", "far_field_error",
               "absorption_db", "theta_rad", "phi_rad", "direction_from", "energy_unit",
               "snr", "unit_snr_range_m"} | _SCALE | _PHASING | _ALWAYS,
    "waveform": {"design", "files", "captions", "range_m", "theta_rad", "phi_rad",
                 "direction_from", "polarization", "polarization_from", "peak_field",
                 "peak_field_low", "peak_field_high", "field_unit", "peak_retardation_rad",
                 "ringing_fraction", "eo_snr", "crystal", "energy_unit"}
                | _SCALE | _PHASING | _ALWAYS,
    "bench": {"design", "files", "captions", "delays_s", "wavelength_m", "air_group_index",
              "passes", "glass", "glass_source", "glass_group_index", "echelon_step_m",
              "delay_stage", "glass_plate", "stepped_mirror", "plate_gdd_s2",
              "duration_after_plate_s", "power_ratio_after_plate"} | _PHASING | _ALWAYS,
}


RECEIVER = """
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
relative_humidity = ["20 %", "60 %"]
"""


@pytest.mark.parametrize("command", sorted(JSON_KEYS))
def test_json_schema_stable(command, tmp_path, capsys, array_design):
    path = array_design(extra=RECEIVER)
    args = [command, str(path), "--json", "--out", str(tmp_path / "o")]
    if command == "check":
        args = args[:3]
    assert main(args) == 0, capsys.readouterr().err
    data = json.loads(capsys.readouterr().out)
    assert set(data) == JSON_KEYS[command]


def test_force_semantics(tmp_path, capsys, array_design):
    path = array_design(extra=RECEIVER)
    out = tmp_path / "o"
    assert main(["steer", str(path), "--out", str(out), "--quiet"]) == 0
    files = sorted(out.iterdir())
    stamps = {f: f.stat().st_mtime_ns for f in files}
    capsys.readouterr()
    assert main(["steer", str(path), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert "exists" in err and "--force" in err and len(err.strip().splitlines()) == 1
    assert {f: f.stat().st_mtime_ns for f in files} == stamps  # nothing touched
    assert main(["steer", str(path), "--out", str(out), "--force", "--quiet"]) == 0
    new = tmp_path / "steered.toml"
    assert main(["steer", str(path), "--out", str(out), "--force", "--quiet",
                 "--write", str(new)]) == 0
    steered = load_design(new)
    assert len(steered.filaments) == 3 and steered.steering.delays[-1] > 0
    # delays written are those the steering computed
    capsys.readouterr()
    assert main(["steer", str(path), "--out", str(out), "--force", "--json"]) == 0
    delays = json.loads(capsys.readouterr().out)["delays_s"]
    assert list(steered.steering.delays) == pytest.approx(delays, rel=1e-12, abs=1e-30)
    assert main(["steer", str(path), "--out", str(out), "--force", "--quiet",
                 "--write", str(new)]) == 0  # --force also allows replacing the design file
    assert main(["steer", str(path), "--out", str(out), "--quiet", "--write", str(new)]) == 2


@pytest.mark.slow
@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_example_runs_every_job(path, tmp_path):
    from thzarray.app.commands.gallery import jobs_for

    design = load_design(path)
    names = {job.__name__.removeprefix("cmd_") for job in jobs_for(design)}
    for name in sorted(names):
        assert main([name, str(path), "--out", str(tmp_path / name), "--quiet"]) == 0


def test_schema_reference_is_the_generated_one():
    # designs/README.md holds exactly the reference generated from the schema, so every key
    # is documented with its kind, unit, default, range, meaning and an example.
    from thzarray.app.design.reference import keys_markdown

    text = (ROOT / "designs" / "README.md").read_text()
    start, end = text.index("<!-- keys -->\n"), text.index("<!-- /keys -->")
    assert text[start + len("<!-- keys -->\n"):end] == keys_markdown()
    from thzarray.app.design import SCHEMA

    for section, keys in SCHEMA.items():
        for key, spec in keys.items():
            assert spec.doc and spec.example, f"{section}.{key} lacks a meaning or an example"
