"""Regression tests for hostile-but-fair input at the command line and in files.

Each case is one concrete finding: a unit string read with the wrong dimension, a result with
NaN written with exit 0, an unbounded read, a bad TOML shape that exited 1, an interrupted
write. Expected behaviour is the package's own promise (README, "Promises"): exit 2 with one
line naming the key for bad input, exit 130 on Ctrl-C with nothing half-written, finite
numbers on exit 0. Common practice, no source (the POSIX shell convention 128 + SIGINT = 130
for an interrupted program).
"""

import json
import math
import os
import stat
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from thzarray.app.cli import main
from thzarray.app.units import UnitError, parse_quantity

ROOT = Path(__file__).resolve().parents[1]
DESIGNS = ROOT / "designs"
SMALL = """
[design]
name = "{name}"
[filament]
length = "{length}"
start = [{start}]
{extra}
[observe]
freq = ["0.3 THz"]
theta = {{ start = "0 deg", stop = "10 deg", points = 5 }}
phi = {{ start = "0 deg", stop = "360 deg", points = 3 }}
[outputs]
formats = ["csv"]
"""


def run(*args, capsys):
    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


def small(tmp_path, name="small", length="2 cm", start="0.0, 0.0, 0.0", extra="",
          file="small.toml"):
    path = tmp_path / file
    path.write_text(SMALL.format(name=name, length=length, start=start, extra=extra))
    return path


OBSERVE = """
[observe]
freq = ["0.3 THz"]
theta = { start = "0 deg", stop = "10 deg", points = 5 }
phi = { start = "0 deg", stop = "360 deg", points = 3 }
"""


def error_lines(err, *needles):
    """Every stderr line is one 'thzarray: error:' line holding each needle."""
    lines = err.strip().splitlines()
    assert lines and "Traceback" not in err
    for line in lines:
        assert line.startswith("thzarray: error: "), line
        for n in needles:
            assert n in line, line
    return lines


def one_error_line(err, *needles):
    lines = err.strip().splitlines()
    assert len(lines) == 1, err[:2000]
    assert "Traceback" not in err
    for n in needles:
        assert n in lines[0], lines[0]
    return lines[0]


def all_numbers_finite(obj):
    if isinstance(obj, float):
        return math.isfinite(obj)
    if isinstance(obj, dict):
        return all(all_numbers_finite(v) for v in obj.values())
    if isinstance(obj, list):
        return all(all_numbers_finite(v) for v in obj)
    return True


# --- units: exactly the dimension the key expects ------------------------------------------

@pytest.mark.parametrize("text, kind", [
    ("9.91 deg deg", "angle"), ("50 %^2", "fraction"), ("3 deg^2", "angle"), ("3 sr", "angle"),
    ("30 cm deg", "length"), ("0.3 THz THz", "frequency"), ("5 mJ/s", "energy"),
])
def test_doubled_powered_or_foreign_units_are_refused(text, kind):
    with pytest.raises(UnitError, match=f"not an? {kind}"):
        parse_quantity(text, kind)


def test_wrong_unit_in_a_design_names_key_and_dimension(tmp_path, capsys):
    path = small(tmp_path, extra='[cone]\ntarget_angle = "9.91 deg deg"\n')
    code, _, err = run("check", path, capsys=capsys)
    assert code == 2
    one_error_line(err, "cone.target_angle", "not an angle")


# Angle units by their definitions (ISO 80000-3): 1 deg = pi/180 rad, 1 mrad = 1e-3 rad.
_ANGLE = {"deg": np.pi / 180, "rad": 1.0, "mrad": 1e-3}


@given(number=st.floats(-1e6, 1e6, allow_nan=False), unit=st.sampled_from(sorted(_ANGLE)),
       extra=st.sampled_from(["{u} {u}", "{u}^2", "{u} sr", "sr", "{u} m", "{u}/s"]))
def test_angle_units_exactly_once(number, unit, extra):
    assert parse_quantity(f"{number!r} {unit}", "angle") == pytest.approx(number * _ANGLE[unit],
                                                                          rel=1e-15, abs=0)
    with pytest.raises(UnitError, match="not an angle"):
        parse_quantity(f"{number!r} " + extra.format(u=unit), "angle")


@pytest.mark.parametrize("text, expected", [("3 deg", np.radians(3.0)), ("50 %", 0.5),
                                            ("2 mrad", 2e-3)])
def test_single_units_still_convert(text, expected):
    # degrees, percent and milliradians by their definitions (ISO 80000-3 / -1)
    kind = "fraction" if "%" in text else "angle"
    assert parse_quantity(text, kind) == pytest.approx(expected, rel=1e-15)


# --- finite in, finite out at the command line ---------------------------------------------

@pytest.mark.parametrize("start, extra", [
    ("1e305, 0.0, 0.0", ""),
    ("0.0, 0.0, 0.0", 'profile_z = ["0 cm", "1 cm", "2 cm"]\nprofile_w = [1e300, 1.0, 1e300]'),
])
def test_extreme_design_values_exit_2_or_finite(tmp_path, capsys, start, extra):
    path = small(tmp_path, start=start, extra=extra)
    code, out, err = run("pattern", path, "--out", tmp_path / "o", "--json", capsys=capsys)
    assert code in (0, 2), err
    if code == 2:
        error_lines(err, "filament.", "allowed")
    else:
        assert all_numbers_finite(json.loads(out))
        for f in (tmp_path / "o").rglob("*.csv"):
            data = np.genfromtxt(f, delimiter=",", skip_header=1)
            assert np.isfinite(data).all(), f.name


# --- inputs read with a size cap -----------------------------------------------------------

@pytest.mark.skipif(not Path("/dev/zero").exists(), reason="needs /dev/zero")
@pytest.mark.parametrize("command", ["check", "pattern", "sweep", "fit"])
def test_special_file_is_refused_with_one_line(command, capsys, tmp_path):
    code, _, err = run(command, "/dev/zero", "--out", tmp_path / "o", capsys=capsys)
    assert code == 2
    one_error_line(err, "/dev/zero", "not a regular file")


@pytest.mark.skipif(not Path("/dev/zero").exists(), reason="needs /dev/zero")
def test_layout_pointing_at_a_special_file_is_refused(tmp_path, capsys):
    design = tmp_path / "d.toml"
    design.write_text('[design]\nname = "x"\n[layout]\nkind = "csv"\ncsv = "/dev/zero"\n'
                      'length = "2 cm"\n' + OBSERVE)
    code, _, err = run("check", design, capsys=capsys)
    assert code == 2
    one_error_line(err, "not a regular file")


def test_design_pointing_at_an_unrelated_file_never_shows_its_content(tmp_path, capsys):
    secret = tmp_path / "secret.txt"
    secret.write_text("root:x:0:0:TOPSECRETLINE:/root:/bin/bash\n"
                      "daemon:x:1:1:TOPSECRETLINE:/usr/sbin:/usr/sbin/nologin\n" * 8)
    design = tmp_path / "d.toml"
    design.write_text(f'[design]\nname = "x"\n[layout]\nkind = "csv"\ncsv = "{secret}"\n'
                      'length = "2 cm"\n' + OBSERVE)
    code, out, err = run("check", design, capsys=capsys)
    assert code == 2
    assert "TOPSECRETLINE" not in err + out and "root:x" not in err + out
    code, out, err = run("fit", secret, capsys=capsys)
    assert code == 2
    assert "TOPSECRETLINE" not in err + out


def test_scan_with_a_million_rows_is_refused_up_front(tmp_path, capsys):
    path = tmp_path / "big.csv"
    rows = "\n".join(f"{0.001 * i:.4f},0.5" for i in range(1_000_000))
    path.write_text("# freq = 0.3 THz\nangle_deg,signal\n" + rows + "\n")
    code, _, err = run("fit", path, "--out", tmp_path / "o", capsys=capsys)
    assert code == 2
    one_error_line(err, "allowed")
    assert not (tmp_path / "o").exists() or not any((tmp_path / "o").rglob("*"))


def test_duplicate_metadata_lines_in_a_scan_are_an_error(tmp_path, capsys):
    text = (DESIGNS / "scan_synthetic.csv").read_text()
    path = tmp_path / "dup.csv"
    path.write_text("# freq = 0.5 THz\n" + text)
    code, _, err = run("fit", path, "--out", tmp_path / "o", capsys=capsys)
    assert code == 2
    one_error_line(err, "freq")


def test_utf8_bom_is_accepted_in_scans_and_designs(tmp_path, capsys):
    scan = tmp_path / "bom.csv"
    scan.write_bytes(b"\xef\xbb\xbf" + (DESIGNS / "scan_synthetic.csv").read_bytes())
    code, out, err = run("fit", scan, "--out", tmp_path / "o1", "--json", capsys=capsys)
    assert code == 0, err
    design = tmp_path / "bom.toml"
    design.write_bytes(b"\xef\xbb\xbf" + small(tmp_path).read_bytes())
    code, out, err = run("check", design, capsys=capsys)
    assert code == 0, err


# --- exit 2 for every bad input, one line ---------------------------------------------------

def test_array_of_tables_where_a_table_is_expected(tmp_path, capsys):
    path = tmp_path / "d.toml"
    path.write_text('[design]\nname = "x"\n[[medium]]\nkind = "air"\n[filament]\nlength = 0.1\n'
                    + OBSERVE)
    code, _, err = run("check", path, capsys=capsys)
    assert code == 2
    one_error_line(err, "medium")


def test_deeply_nested_toml(tmp_path, capsys):
    path = tmp_path / "d.toml"
    path.write_text('[design]\nname = "x"\n[filament]\nlength = ' + "[" * 5000 + "]" * 5000
                    + "\n")
    code, _, err = run("check", path, capsys=capsys)
    assert code == 2
    one_error_line(err)


def test_a_megabyte_design_name_is_refused_and_not_echoed(tmp_path, capsys):
    path = small(tmp_path, name="n" * 1_000_000)
    code, _, err = run("pattern", path, "--out", tmp_path / "o", capsys=capsys)
    assert code == 2
    line = one_error_line(err, "design.name")
    assert len(line) < 400


def test_out_naming_an_existing_file(tmp_path, capsys):
    blocker = tmp_path / "afile"
    blocker.write_text("keep me\n")
    code, _, err = run("pattern", small(tmp_path), "--out", blocker, capsys=capsys)
    assert code == 2
    one_error_line(err, "--out")
    assert blocker.read_text() == "keep me\n"


def test_compare_trials_are_capped(tmp_path, capsys, array_design):
    code, _, err = run("compare", array_design(), "--trials", "100000000", "--out",
                       tmp_path / "o", capsys=capsys)
    assert code == 2
    one_error_line(err, "trials", "allowed")


def test_bad_value_echo_is_shortened(tmp_path, capsys):
    path = small(tmp_path, length="9" * 100_000 + " cm")
    code, _, err = run("check", path, capsys=capsys)
    assert code == 2
    line = one_error_line(err, "filament.length")
    assert len(line) < 400


# --- interrupted writes, file modes ---------------------------------------------------------

def test_ctrl_c_while_writing_exits_130_and_leaves_nothing(tmp_path, capsys, monkeypatch):
    import thzarray.app.output as output

    real_replace = os.replace
    calls = []

    def interrupted(src, dst):
        calls.append(dst)
        if len(calls) == 2:  # the second file: one already in place, one half-way
            raise KeyboardInterrupt
        return real_replace(src, dst)

    monkeypatch.setattr(output.os, "replace", interrupted)
    out = tmp_path / "o"
    code, _, err = run("pattern", DESIGNS / "single_filament.toml", "--out", out, capsys=capsys)
    assert code == 130
    assert "Traceback" not in err
    left = [p.name for p in out.rglob("*")] if out.exists() else []
    assert not [n for n in left if n.startswith(".")], left
    assert len(calls) == 2


def test_output_files_follow_the_umask(tmp_path, capsys):
    old = os.umask(0o022)
    try:
        code, _, err = run("pattern", small(tmp_path), "--out", tmp_path / "o", capsys=capsys)
    finally:
        os.umask(old)
    assert code == 0, err
    files = [p for p in (tmp_path / "o").rglob("*") if p.is_file()]
    assert files
    for f in files:
        assert stat.S_IMODE(f.stat().st_mode) == 0o644, f.name


@pytest.mark.parametrize("json_flag", [[], ["--json"]])
def test_numpy_warnings_never_reach_stderr(capsys, monkeypatch, json_flag):
    import warnings

    import thzarray.field.cone as cone

    real = cone.cone_angle

    def noisy(*a, **kw):
        warnings.warn("overflow encountered in multiply", RuntimeWarning, stacklevel=1)
        warnings.warn("a library caution", UserWarning, stacklevel=1)
        return real(*a, **kw)

    monkeypatch.setattr(cone, "cone_angle", noisy)
    code, out, err = run("cone", "--length", "30 cm", "--freq", "0.3 THz", *json_flag,
                         capsys=capsys)
    assert code == 0
    assert "RuntimeWarning" not in err + out and "overflow" not in err + out
    assert "a library caution" in err + out


@pytest.mark.parametrize("cell", ["root:x:0:0:TOPSECRETLINE:/root", "hello world TOPSECRETLINE"])
def test_table_cells_from_other_files_are_not_quoted(tmp_path, capsys, cell):
    scan = tmp_path / "scan.csv"
    scan.write_text("angle_deg,signal\n" + "0.5,1.0\n" * 6 + f"0.7,{cell}\n")
    code, out, err = run("fit", scan, "--freq", "0.3 THz", capsys=capsys)
    assert code == 2
    assert "TOPSECRETLINE" not in err + out
    one_error_line(err, "row 7", "not a number")


def test_ctrl_c_inside_the_netcdf_writer_exits_130(tmp_path, capsys, monkeypatch):
    import xarray as xr

    def half_then_interrupt(self, path, **kw):
        Path(path).write_bytes(b"\x89HDF half")
        raise KeyboardInterrupt

    monkeypatch.setattr(xr.Dataset, "to_netcdf", half_then_interrupt)
    out = tmp_path / "o"
    path = small(tmp_path).read_text().replace('formats = ["csv"]', 'formats = ["netcdf"]')
    (tmp_path / "nc.toml").write_text(path)
    code, _, err = run("pattern", tmp_path / "nc.toml", "--out", out, capsys=capsys)
    assert code == 130
    assert err.strip() == "thzarray: interrupted"
    assert not [p.name for p in out.rglob("*")]


@pytest.mark.parametrize("target", ["a_dir", "a_file/x.toml"])
def test_unusable_write_path_is_one_line_before_any_work(tmp_path, capsys, array_design, target):
    (tmp_path / "a_dir").mkdir()
    (tmp_path / "a_file").write_text("keep me\n")
    out = tmp_path / "o"
    code, _, err = run("steer", array_design(), "--write", tmp_path / target, "--out", out,
                       "--force", capsys=capsys)
    assert code == 2
    one_error_line(err, "output", "allowed")
    assert not out.exists()
    assert (tmp_path / "a_file").read_text() == "keep me\n"


def test_ctrl_c_during_the_computation_exits_130(tmp_path, capsys, monkeypatch):
    import thzarray.field.cone as cone

    def interrupted(*a, **kw):
        raise KeyboardInterrupt

    monkeypatch.setattr(cone, "cone_angle", interrupted)
    code, out, err = run("cone", "--length", "30 cm", "--freq", "0.3 THz", capsys=capsys)
    assert code == 130
    assert err.strip() == "thzarray: interrupted" and not out


@pytest.mark.parametrize("flag", ["--length", "--freq"])
def test_long_flag_values_are_shortened(capsys, flag):
    args = {"--length": "30 cm", "--freq": "0.3 THz"}
    args[flag] = "9" * 100_000 + " deg deg"
    code, _, err = run("cone", "--length", args["--length"], "--freq", args["--freq"],
                       capsys=capsys)
    assert code == 2
    line = one_error_line(err, flag)
    assert len(line) < 400


def test_steer_on_the_largest_grid_is_refused_up_front_with_the_bytes(tmp_path, capsys):
    text = (DESIGNS / "grid_steering.toml").read_text().replace("shape = [4, 4]",
                                                                 "shape = [64, 64]")
    path = tmp_path / "g64.toml"
    path.write_text(text)
    code, _, err = run("steer", path, "--out", tmp_path / "o", capsys=capsys)
    assert code == 2
    one_error_line(err, "4096 columns", "GiB", "allowed")
    assert not (tmp_path / "o").exists() or not any((tmp_path / "o").iterdir())
