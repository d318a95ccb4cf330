"""`thzarray check` runs the same validation and size estimate as every job (issue 12).

Each probe from the issue is refused by ``check`` (exit 2, a line naming the key, and the
bytes where memory is the reason) and by the job with the same line; the size estimate
refuses exactly where the core function it stands for refuses (same byte count against the
same budget). Bookkeeping checks: common practice, no source.
"""
import numpy as np
import pytest

from thzarray.app.cli import main
from thzarray.app.design import parse_design
from thzarray.app.design.feasibility import size_problems
from thzarray.detect.waveform import waveform
from thzarray.field.nearfield import field_at
from thzarray.source.filament import Filament

BASE = """\
[design]
name = "probe"

[filament]
length = "30 cm"

[observe]
freq = ["0.1 THz"]
theta = { start = "0 deg", stop = "10 deg", points = 11 }
phi = { start = "0 deg", stop = "360 deg", points = 5 }
"""

RECEIVER = """
[receiver]
kind = "narrowband"
center_freq = "0.1 THz"
bandwidth = "10 GHz"
area = "1 mm^2"
band_points = 11
"""


def _plane(normal="[0, 0, 1]", points=5):
    return f"""
[plane]
distance = "1.5 m"
normal = {normal}
x = {{ start = "-1 cm", stop = "1 cm", points = {points} }}
y = {{ start = "-1 cm", stop = "1 cm", points = {points} }}
"""


PROBES = {
    # (design text, command, the key the line must name, whether the line names bytes)
    "zero plane normal": (BASE + RECEIVER + _plane("[0, 0, 0]"), "map", "plane.normal", False),
    "plane through a column": (BASE + RECEIVER + _plane().replace('"1.5 m"', '"1.5e-30 m"'),
                               "map", "plane", False),
    "aperture quadrature over budget": (
        BASE.replace('[filament]\nlength = "30 cm"\n', '[layout]\nkind = "hexagonal"\n'
                     'rings = 1\nspacing = "10 m"\nlength = "5 cm"\n')
        + '[steering]\ntoward = ["8 deg", "30 deg"]\naperture_radius = "2 cm"\n'
          'aperture_distance = "2 m"\nband = ["0.2 THz", "0.4 THz"]\nband_points = 3\n',
        "compare", "steering.aperture_radius", True),
    "two-colour chart of a thousand metres": (
        BASE + '[plasma]\nelectron_density = "1e16 cm^-3"\ncollision_rate = "2e12 1/s"\n'
        '[source]\nkind = "two-colour"\n[cone]\nlengths = { start = "1 km", stop = "1 km", '
        'points = 1 }\n', "pattern", "cone.lengths", False),
    "1e20 THz band": (BASE + '[cone]\nband = ["0.1 THz", "1e20 THz"]\n', "pattern",
                      "cone.band[1]", False),
    "plane map over budget": (BASE + RECEIVER + _plane(points=1601), "map", "plane", True),
    "budget ranges over budget": (
        BASE + RECEIVER + '[budget]\nranges = { start = "1 m", stop = "50 m", points = '
        '3000000 }\n', "budget", "budget.ranges", True),
    "observe grid over the cap": (
        BASE.replace("points = 11", "points = 30000").replace("points = 5", "points = 900"),
        "pattern", "observe", False),
    "huge tolerance trials": (BASE + "[tolerance]\ntrials = 100000000\n", "tolerance",
                              "tolerance.trials", False),
    # Within the per-key cap but over the work cap (array.tolerance.MAX_TRIAL_TERMS):
    # 1e6 builds x 256 columns x 9 band frequencies x some hundreds of aperture nodes.
    "tolerance work over the cap": (
        BASE.replace('[filament]\nlength = "30 cm"\n', '[layout]\nkind = "grid"\n'
                     'shape = [16, 16]\nspacing = "1.5 mm"\nlength = "3 cm"\n')
        + '[steering]\ntoward = ["10 deg", "0 deg"]\naperture_radius = "5 mm"\n'
          'aperture_distance = "0.5 m"\nband = ["0.1 THz", "0.5 THz"]\nband_points = 9\n'
          '[tolerance]\ntiming_jitter = "0.2 ps"\ntrials = 1000000\n',
        "tolerance", "tolerance.trials", False),
    "waveform window without a frequency": (
        BASE + '[waveform]\nduration = "0.1 ps"\nbandwidth = "10 GHz"\n', "waveform",
        "waveform.bandwidth", False),
    # A receiver point on the column itself, along theta = 0 inside the 30 cm plasma: the
    # exact field is singular there (Jackson eq. 9.18 has 1/R^3 terms).
    "budget range on the column": (
        BASE + RECEIVER + '[budget]\nranges = ["10 cm", "2 m"]\ntheta = "0 deg"\n', "budget",
        "budget.ranges", False),
    "waveform range on the column": (
        BASE + '[waveform]\nranges = ["20 cm", "5 m"]\ntheta = "0 deg"\n', "waveform",
        "waveform.ranges", False),
    "zero-length column": (BASE.replace('"30 cm"', '"1e-12 m"'), "pattern", "filament.length",
                           False),
    "focal length below 1 mm": (
        BASE.replace('[filament]\nlength = "30 cm"\n', '[laser]\nenergy = "1 mJ"\n'
                     'focal_length = "0.1 mm"\n'), "pattern", "laser.focal_length", False),
}


@pytest.mark.parametrize("name", sorted(PROBES))
def test_check_refuses_exactly_what_the_job_refuses(name, tmp_path, capsys):
    text, command, key, names_bytes = PROBES[name]
    path = tmp_path / "probe.toml"
    path.write_text(text)
    lines = {}
    for cmd in ("check", command):
        assert main([cmd, str(path), "--out", str(tmp_path / "out"), "--quiet"]) == 2
        err = capsys.readouterr().err.splitlines()
        assert err and all(line.startswith("thzarray: error: ") for line in err)
        lines[cmd] = err
    assert lines["check"] == lines[command]
    assert any(line.startswith(f"thzarray: error: {key}") for line in lines["check"]), lines
    if names_bytes:
        assert any(" bytes" in line and key in line for line in lines["check"])


@pytest.mark.parametrize("points", [3, 5])
def test_the_map_estimate_refuses_where_field_at_refuses(points):
    import tomllib

    d = parse_design(tomllib.loads(BASE + RECEIVER + _plane(points=points)))
    n = d.receiver_band.size * points * points
    fil = Filament(0.3)
    freq = d.receiver_band[:, None]
    pts = np.zeros((points * points, 3)) + [0.0, 0.0, 1.5]
    for budget in (96 * n - 1, 96 * n):
        refused_here = any(p.startswith("plane:")
                           for p in size_problems(d.sections, d.receiver_band, budget))
        try:
            field_at(fil, freq, pts, memory_budget=budget)
            refused_there = False
        except ValueError as exc:
            assert "memory_budget" in str(exc)
            refused_there = True
        assert refused_here == refused_there == (budget < 96 * n)


def test_the_waveform_estimate_refuses_where_waveform_refuses():
    import tomllib

    text = BASE + '[waveform]\nranges = ["1 m", "2 m"]\nduration = "10 ps"\n' \
                  'bandwidth = "1 THz"\n'
    d = parse_design(tomllib.loads(text))
    problems = size_problems(d.sections, None, 1.0)
    need = int(problems[0].split(" needs ")[1].split()[0])
    pts = np.array([[0.0, 0.05, 1.0], [0.0, 0.1, 2.0]])
    for budget in (need - 1, need):
        refused_here = bool(size_problems(d.sections, None, budget))
        try:
            waveform(Filament(0.3), pts, 10e-12, 1e12, memory_budget=budget, far=True)
            refused_there = False
        except ValueError as exc:
            assert "memory_budget" in str(exc)
            refused_there = True
        assert refused_here == refused_there == (budget < need)


def test_the_aperture_quadrature_is_refused_before_it_is_built():
    from thzarray.air.medium import Medium
    from thzarray.array.layouts import hexagonal
    from thzarray.array.targets import Aperture, target_field_bytes, target_fields

    medium = Medium.vacuum()
    small = Aperture(0.1, 0.5, radius=0.005, distance=0.5)
    fils = hexagonal(1, 2e-3, 0.05)
    # node_count is the number of nodes the quadrature builds (bookkeeping).
    assert small.node_count(fils, 0.4e12, medium) == small.nodes(fils, 0.4e12, medium)[0].size
    freq = np.array([0.2e12, 0.3e12, 0.4e12])
    # Two complex components (32 bytes) per column, frequency and node, three copies alive.
    assert target_field_bytes(fils, small, freq, medium) == 96 * 7 * 3 * small.node_count(
        fils, 0.4e12, medium)
    wide = hexagonal(1, 10.0, 0.05)
    big = Aperture(0.14, 0.5, radius=0.02, distance=2.0)
    assert target_field_bytes(wide, big, freq, medium) > 2 * 2**30
    with pytest.raises(ValueError, match=r"^target_fields \(7 columns x 3 frequencies x \d+ "
                                         r"target nodes\): the result needs"):
        target_fields(wide, big, freq, medium)
