import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from thzarray import Medium, cone_angle, length_for_cone
from thzarray.app.cli import main

ROOT = Path(__file__).resolve().parents[1]


def run(*args, capsys):
    code = main(list(args))
    out = capsys.readouterr()
    return code, out.out, out.err


def test_cone_length_to_angle_json(capsys):
    code, out, err = run("cone", "--length", "30 cm", "--freq", "0.3 THz", "--humidity", "50 %",
                         "--json", capsys=capsys)
    assert code == 0
    data = json.loads(out)
    expected = cone_angle(0.30, 0.3e12, Medium.air(relative_humidity=0.5))
    assert data["cone_angle_rad"] == pytest.approx(float(expected), rel=1e-12)
    assert set(data) == {"freq_hz", "n_group", "n_group_from", "n_thz", "length_m",
                         "cone_angle_rad", "cone_angle_deg", "notes", "warnings"}
    assert data["n_group_from"] == "the air's"


def test_cone_angle_to_length_text(capsys):
    code, out, _ = run("cone", "--angle", "3 deg", "--freq", "500 GHz", "--humidity", "50 %",
                       capsys=capsys)
    assert code == 0
    expected = length_for_cone(np.radians(3), 0.5e12, Medium.air(relative_humidity=0.5))
    assert f"{100 * expected:.4g} cm" in out


@pytest.mark.parametrize("args, needle", [
    (["cone", "--length", "-3 cm", "--freq", "1 THz"], "length"),
    (["cone", "--length", "3 kg", "--freq", "1 THz"], "--length"),
    (["cone", "--length", "3 cm", "--freq", "abc"], "--freq"),
    (["cone", "--angle", "0.1 deg", "--freq", "1 THz", "--humidity", "50 %"], "allowed"),
    (["cone", "--length", "3 cm"], "--freq"),
    (["cone", "--length", "3 cm", "--freq", "1 THz", "--humidity", "150 %"], "--humidity"),
    (["nonsense"], "invalid choice"),
])
def test_bad_input_exits_2_with_one_line(args, needle, capsys):
    code, out, err = run(*args, capsys=capsys)
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1 and needle in lines[0] and "Traceback" not in err


def test_help_shows_laser_safety():
    out = subprocess.run([sys.executable, "-m", "thzarray.app.cli", "--help"], capture_output=True,
                         text=True, check=True).stdout
    for word in ("class-4", "eye and skin", "ozone", "IEC 60825-1", "ANSI Z136.1",
                 "laser safety officer"):
        assert word in out


def test_check_valid_design(capsys):
    code, out, _ = run("check", str(ROOT / "designs" / "single_filament.toml"), "--json",
                       capsys=capsys)
    assert code == 0 and json.loads(out)["valid"] is True


def test_pattern_writes_and_refuses_to_overwrite(tmp_path, capsys):
    design = tmp_path / "d.toml"
    design.write_text("""
[design]
name = "tiny"
[medium]
kind = "vacuum"
[filament]
length = "5 cm"
[observe]
freq = ["1 THz"]
theta = { start = "0 deg", stop = "30 deg", points = 31 }
phi = { start = "0 deg", stop = "360 deg", points = 9 }
[outputs]
formats = ["png", "csv", "netcdf"]
""")
    out_dir = tmp_path / "out"
    code, out, err = run("pattern", str(design), "--out", str(out_dir), "--json", capsys=capsys)
    assert code == 0, err
    files = json.loads(out)["files"]
    assert {Path(f).suffix for f in files} == {".png", ".csv", ".nc"}
    before = {f: Path(f).read_bytes() for f in files}
    code, _, err = run("pattern", str(design), "--out", str(out_dir), capsys=capsys)
    assert code == 2 and "--force" in err
    assert all(Path(f).read_bytes() == b for f, b in before.items())
    code, _, _ = run("pattern", str(design), "--out", str(out_dir), "--force", capsys=capsys)
    assert code == 0
    import xarray as xr

    with xr.open_dataset(out_dir / "tiny_pattern.nc", engine="h5netcdf") as ds:
        assert ds["energy_density"].attrs["units"].startswith("J/(Hz sr)")
        assert ds["theta"].attrs["units"] == "rad"
        # vacuum, 5 cm at 1 THz: the cut maximum is the exact cone angle to the grid step
        step = np.radians(1.0)
        assert abs(float(ds["cone_angle"][0]) - float(cone_angle(0.05, 1e12))) <= step


def test_internal_error_exit_1(monkeypatch, capsys):
    import thzarray.app.cli as cli

    def boom(args):
        raise RuntimeError("kaput")

    monkeypatch.setattr(cli, "cmd_safety", boom)
    code, _, err = run("safety", capsys=capsys)
    assert code == 1 and "kaput" in err and "Traceback" not in err


def test_json_output_is_strict_json_for_a_target_in_the_null(tmp_path, capsys, array_design):
    # A target on the axis of parallel columns sits in the element pattern's null: the
    # element level is -inf dB, which JSON cannot carry; it is reported as null.
    path = array_design()
    code = main(["steer", str(path), "--toward", "0 deg,0 deg", "--json", "--out",
                 str(tmp_path / "o")])
    assert code == 0
    data = json.loads(capsys.readouterr().out, parse_constant=lambda c: pytest.fail(c))
    assert data["cone_level_db"] is None
    assert any("null" in n for n in data["notes"])


def test_map_far_field_prediction_converges_to_exact_field(tmp_path, capsys):
    # Far from a short column the exact finite-distance field and the far-field prediction
    # must agree (Jackson sec. 9.1: the radiation zone), also for a Gaussian-beam receiver,
    # whose mode overlap depends on the phase.
    path = tmp_path / "far.toml"
    path.write_text("""
[design]
name = "far check"
[medium]
kind = "vacuum"
[filament]
length = "2 cm"
[observe]
freq = ["0.3 THz"]
[receiver]
center_freq = "0.3 THz"
bandwidth = "10 GHz"
beam_waist = "3 cm"
band_points = 3
[plane]
distance = "4 m"
x = { start = "0.05 m", stop = "0.65 m", points = 13 }
y = { start = "-0.3 m", stop = "0.3 m", points = 13 }
[outputs]
formats = ["csv"]
""")
    assert main(["map", str(path), "--json", "--out", str(tmp_path / "o")]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["near_over_far_peak"] == pytest.approx(1.0, abs=0.02)
