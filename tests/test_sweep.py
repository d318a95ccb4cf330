"""Parameter sweeps: labelling, serial vs dask.distributed, resume after a kill, bad files.

The checks here are bookkeeping (common practice, no source) except where a physics
reason is named beside the assertion.
"""
import signal
import subprocess
import sys
import tomllib
from pathlib import Path

import numpy as np
import pytest
import xarray as xr
from numpy.testing import assert_allclose, assert_array_equal
from scipy.constants import c, epsilon_0, mu_0
from scipy.special import sici

from thzarray.app import sweep as sw
from thzarray.app.design import DesignError, parse_design
from thzarray.app.output import OutputExists
from thzarray.field.cone import cone_angle
from thzarray.field.farfield import far_field

ROOT = Path(__file__).resolve().parents[1]

PAIR = """\
[design]
name = "Pair"

[medium]
kind = "vacuum"

[[filaments]]
length = "10 cm"
start = ["-3 mm", "0 mm", "0 mm"]

[[filaments]]
length = "10 cm"
start = ["3 mm", "0 mm", "0 mm"]

[observe]
freq = ["0.3 THz", "0.6 THz"]
theta = { start = "0 deg", stop = "12 deg", points = 25 }
phi = { start = "0 deg", stop = "360 deg", points = 7 }
"""

SINGLE = PAIR.split("[[filaments]]")[0] + """\
[filament]
length = "10 cm"

[observe]
freq = ["0.3 THz", "0.6 THz"]
theta = { start = "0 deg", stop = "12 deg", points = 25 }
phi = { start = "0 deg", stop = "360 deg", points = 7 }
"""

GRID = """\
[sweep]
name = "Pair scan"
design = "pair.toml"
seeds = [5, 9]

[measures]
cut = {}
jittered_cut = { timing_jitter = "200 fs" }

[vary]
"filaments[*].length" = ["5 cm", "10 cm", "15 cm"]
"filaments[1].delay" = { start = "0 fs", stop = "300 fs", points = 2 }
"""

# The grid with one seedless measure that counts its calls (see the fixture ``counted``).
COUNTED = GRID.replace('cut = {}\njittered_cut = { timing_jitter = "200 fs" }',
                       "counted_cut = {}").replace("seeds = [5, 9]\n", "")


def _write(folder, sweep_text, design_text=PAIR, design_name="pair.toml"):
    (folder / design_name).write_text(design_text)
    path = folder / "sweep.toml"
    path.write_text(sweep_text)
    return path


@pytest.fixture
def counted():
    """A measure 'counted_cut' (the cut, counting its calls); removed afterwards."""
    calls = []

    @sw.register_measure("counted_cut")
    def counted_cut(design, seed):
        calls.append(seed)
        return sw.measure_cut(design, seed)

    yield calls
    del sw.MEASURES["counted_cut"]


def _mtimes(folder):
    return {p.name: (p.stat().st_mtime_ns, p.stat().st_ino) for p in folder.glob("*.npz")}


# --- reading sweep files --------------------------------------------------------------------

def test_example_sweep_file_loads_in_si():
    s = sw.load_sweep(ROOT / "designs" / "sweeps" / "length_scan.toml")
    # Values written in the file: 10, 20, 30, 50 cm and 0..80 % in 3 points.
    assert_array_equal(s.axes[0].values, [0.1, 0.2, 0.3, 0.5])
    assert_allclose(s.axes[1].values, np.linspace(0.0, 0.8, 3), rtol=0, atol=1e-15)
    assert [a.unit for a in s.axes] == ["m", "1"]
    assert s.shape == (4, 3) and s.size == 4 * 3 * 2


def test_task_keys_follow_inputs_not_file_layout(tmp_path):
    a = sw.load_sweep(_write(tmp_path, GRID))
    # The same sweep with a 4th length: the common points keep their keys (so are reused).
    wider = GRID.replace('"15 cm"]', '"15 cm", "20 cm"]')
    b = sw.load_sweep(_write(tmp_path, wider))
    keys_a = {t.key for t in a.tasks()}
    keys_b = {t.key for t in b.tasks()}
    assert len(keys_a) == a.size == 3 * 2 * (1 + 2)
    assert keys_a < keys_b and len(keys_b) == b.size
    # A changed option reaches every jittered task's key and no other.
    c = sw.load_sweep(_write(tmp_path, GRID.replace("200 fs", "100 fs")))
    changed = keys_a - {t.key for t in c.tasks()}
    assert len(changed) == 3 * 2 * 2


# --- results ---------------------------------------------------------------------------------

def test_serial_results_are_labelled_by_their_parameters(tmp_path):
    path = _write(tmp_path, GRID.replace(
        "cut = {}", "cut = {}\ncone = {}\nenergy_density = {}"))
    s = sw.load_sweep(path)
    ds = sw.run_serial(s, tmp_path / "out", progress=False).dataset
    assert ds["cut"].dims == ("filaments[*].length", "filaments[1].delay", "freq", "theta")
    assert ds["jittered_cut"].dims == ("filaments[*].length", "filaments[1].delay", "seed",
                                      "freq", "theta")
    assert ds["filaments[*].length"].attrs["units"] == "m"
    assert ds["filaments[1].delay"].attrs["units"] == "s"
    assert_array_equal(ds["seed"], [5, 9])
    base = parse_design(tomllib.loads(PAIR))
    g = base.grid
    for i in (0, 2):
        for j in (0, 1):
            length = float(ds["filaments[*].length"][i])
            delay = float(ds["filaments[1].delay"][j])
            fils = [type(f)(length, start=f.start, axis=f.axis, delay=d)
                    for f, d in zip(base.filaments, (0.0, delay))]
            ff = far_field(fils, g.freq[:, None, None], g.theta[:, None], g.phi, base.medium)
            # Same arithmetic on the same inputs: equal to the last bit.
            assert_array_equal(ds["cut"][i, j].values, ff.energy_density.mean(axis=2))
            assert_array_equal(ds["cone_angle_uniform"][i, j].values,
                               cone_angle(np.full((2, 1), length), g.freq[None, :]))
            assert_array_equal(ds["energy_density"][i, j].values, ff.energy_density)
    assert_allclose(ds["filaments[*].length"], [0.05, 0.10, 0.15], rtol=1e-15)
    assert_allclose(ds["filaments[1].delay"], [0.0, 300e-15], rtol=1e-15, atol=0)


def test_spectral_energy_of_single_columns(tmp_path):
    text = """\
[sweep]
name = "Energy"
design = "single.toml"

[measures]
spectral_energy = {}

[vary]
"filament.length" = ["2 cm", "5 cm"]
"""
    ds = sw.run_serial(sw.load_sweep(_write(tmp_path, text, SINGLE, "single.toml")),
                       tmp_path / "out", progress=False).dataset
    assert ds["spectral_energy"].attrs["units"] == "J/Hz per (A s)^2"
    freq = ds["freq"].values
    for i, length in enumerate(ds["filament.length"].values):
        # C. A. Balanis, Antenna Theory, traveling-wave (long-wire) antenna in vacuum, 1 A s:
        # dW/df = 2 eps0 c (w mu0 / 4 pi)^2 2 pi (4 / k^2)
        #         [gamma + ln(2 k L) - Ci(2 k L) - 1 + sin(2 k L) / (2 k L)], k = w / c.
        k = 2 * np.pi * freq / c
        kl = k * length
        bracket = (np.euler_gamma + np.log(2 * kl) - sici(2 * kl)[1] - 1
                   + np.sin(2 * kl) / (2 * kl))
        expected = (2 * epsilon_0 * c * (2 * np.pi * freq * mu_0 / (4 * np.pi)) ** 2
                    * 2 * np.pi * (4 / k**2) * bracket)
        # Sphere quadrature against the closed form: 1e-9, as the far-field tests allow.
        assert_allclose(ds["spectral_energy"][i].values, expected, rtol=1e-9)


def test_jitter_free_build_equals_the_design(tmp_path):
    # Zero timing error leaves every delay unchanged: the jittered cut is the cut itself.
    s = sw.load_sweep(_write(tmp_path, GRID.replace("200 fs", "0 fs")))
    ds = sw.run_serial(s, tmp_path / "out", progress=False).dataset
    for seed in (5, 9):
        assert_array_equal(ds["jittered_cut"].sel(seed=seed).values, ds["cut"].values)


def test_jitter_of_a_single_column_changes_nothing(tmp_path):
    # One column delayed by t gains the phase exp(i w t) (DEVELOPERS.md convention); |F|^2,
    # hence the energy density, is unchanged. Only rounding in the phase can differ.
    text = GRID.replace('"filaments[*].length"', '"filament.length"').replace(
        '"filaments[1].delay" = { start = "0 fs", stop = "300 fs", points = 2 }\n', "")
    s = sw.load_sweep(_write(tmp_path, text, SINGLE))
    ds = sw.run_serial(s, tmp_path / "out", progress=False).dataset
    cut = ds["cut"].values[:, None]
    assert_allclose(ds["jittered_cut"].values, np.broadcast_to(cut, ds["jittered_cut"].shape),
                    rtol=1e-9, atol=0)


def test_jitter_of_a_pair_depends_on_the_seed(tmp_path):
    s = sw.load_sweep(_write(tmp_path, GRID))
    ds = sw.run_serial(s, tmp_path / "out", progress=False).dataset
    jit = ds["jittered_cut"]
    assert not np.array_equal(jit.sel(seed=5).values, jit.sel(seed=9).values)
    # Reference draw: the measure uses numpy.random.default_rng(seed) for the two columns.
    d5 = 200e-15 * np.random.default_rng(5).standard_normal(2)
    base = parse_design(tomllib.loads(PAIR))
    g = base.grid
    length = float(ds["filaments[*].length"][1])
    fils = [type(f)(length, start=f.start, axis=f.axis, delay=float(d))
            for f, d in zip(base.filaments, d5)]
    ff = far_field(fils, g.freq[:, None, None], g.theta[:, None], g.phi, base.medium)
    assert_array_equal(jit[1, 0, 0].values, ff.energy_density.mean(axis=2))


def test_every_seed_repeats_seedless_measures(tmp_path, counted):
    text = COUNTED.replace("[sweep]\n", "[sweep]\nseeds = 3\nevery_seed = true\n")
    s = sw.load_sweep(_write(tmp_path, text))
    ds = sw.run_serial(s, tmp_path / "out", progress=False).dataset
    assert sorted(set(counted)) == [0, 1, 2] and len(counted) == 6 * 3
    assert ds["cut"].dims[2] == "seed"
    assert_array_equal(ds["cut"].sel(seed=0).values, ds["cut"].sel(seed=2).values)


# --- dask.distributed -------------------------------------------------------------------------

@pytest.mark.slow
def test_local_cluster_equals_serial(tmp_path):
    s = sw.load_sweep(_write(tmp_path, GRID))
    serial = sw.run_serial(s, tmp_path / "serial", progress=False)
    dist = sw.run_sweep(s, tmp_path / "dask", n_workers=2, progress=False)
    assert dist.computed == s.size and dist.reused == 0
    xr.testing.assert_identical(dist.dataset, serial.dataset)
    on_disk = xr.load_dataset(dist.path, engine="h5netcdf")
    xr.testing.assert_identical(on_disk, serial.dataset)


@pytest.mark.slow
def test_existing_cluster_finishes_a_partial_sweep(tmp_path):
    from distributed import LocalCluster

    full = sw.load_sweep(_write(tmp_path, GRID))
    part = sw.load_sweep(_write(tmp_path, GRID.replace('"10 cm", ', "")))
    out = tmp_path / "out"
    first = sw.run_serial(part, out, progress=False)
    # The partial sweep has the same name: its parts sit where the full sweep looks.
    assert first.parts == sw.output_paths(full, out)[1]
    before = _mtimes(first.parts)
    assert len(before) == part.size
    reference = sw.run_serial(full, tmp_path / "reference", progress=False)
    with LocalCluster(n_workers=1, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address="127.0.0.1:0") as cluster:
        done = sw.run_sweep(full, out, scheduler=cluster.scheduler_address, force=True,
                            progress=False)
    assert (done.reused, done.computed) == (part.size, full.size - part.size)
    after = _mtimes(done.parts)
    assert {k: after[k] for k in before} == before
    xr.testing.assert_identical(done.dataset, reference.dataset)


def test_unreachable_scheduler_and_bad_worker_count(tmp_path):
    s = sw.load_sweep(_write(tmp_path, GRID))
    with pytest.raises(ValueError, match=r"n_workers = 0 .*allowed: an integer from 1 to 256"):
        sw.run_sweep(s, tmp_path / "out", n_workers=0)
    # Port 1 on loopback: nothing listens there (a privileged port no test server uses).
    with pytest.raises(ValueError, match=r"scheduler = 'tcp://127.0.0.1:1': cannot connect"):
        sw.run_sweep(s, tmp_path / "out", scheduler="tcp://127.0.0.1:1", connect_timeout=1)
    assert not (tmp_path / "out").exists()


# --- interruption and resume -------------------------------------------------------------------

KILLER = """\
import os, signal, sys
from thzarray.app import sweep as sw

calls = 0

@sw.register_measure("counted_cut")
def counted_cut(design, seed):
    global calls
    calls += 1
    if calls > {n}:  # a hard kill in the middle of the sweep: no cleanup runs
        os.kill(os.getpid(), signal.SIGKILL)
    return sw.measure_cut(design, seed)

sw.run_serial(sw.load_sweep(sys.argv[1]), sys.argv[2], progress=False)
"""


@pytest.mark.slow
def test_killed_sweep_resumes_without_recomputing(tmp_path, counted):
    path = _write(tmp_path, COUNTED)
    out = tmp_path / "out"
    n = 4
    script = tmp_path / "killer.py"
    script.write_text(KILLER.format(n=n))
    proc = subprocess.run([sys.executable, str(script), str(path), str(out)],
                          capture_output=True, text=True)
    assert proc.returncode == -signal.SIGKILL, proc.stderr
    s = sw.load_sweep(path)
    final, parts = sw.output_paths(s, out)
    before = _mtimes(parts)
    assert len(before) == n and not final.exists()
    resumed = sw.run_serial(s, out, progress=False)
    assert (resumed.computed, resumed.reused) == (s.size - n, n) and len(counted) == s.size - n
    after = _mtimes(parts)
    assert {k: after[k] for k in before} == before and len(after) == s.size
    whole = sw.run_serial(s, tmp_path / "whole", progress=False)
    xr.testing.assert_identical(resumed.dataset, whole.dataset)


def _first_run(tmp_path):
    s = sw.load_sweep(_write(tmp_path, COUNTED))
    out = tmp_path / "out"
    return s, out, sw.run_serial(s, out, progress=False)


def test_force_and_recompute(tmp_path, counted):
    s, out, first = _first_run(tmp_path)
    stamp = first.path.stat().st_mtime_ns
    with pytest.raises(OutputExists, match="exists; allowed: a new path, or --force"):
        sw.run_serial(s, out, progress=False)
    assert len(counted) == s.size and first.path.stat().st_mtime_ns == stamp
    again = sw.run_serial(s, out, force=True, progress=False)
    assert (again.computed, again.reused) == (0, s.size) and len(counted) == s.size
    fresh = sw.run_serial(s, out, force=True, recompute=True, progress=False)
    assert fresh.computed == s.size and len(counted) == 2 * s.size
    xr.testing.assert_identical(fresh.dataset, first.dataset)


def test_a_part_from_elsewhere_is_computed_again(tmp_path, counted):
    s, out, first = _first_run(tmp_path)
    names = sorted(p.name for p in first.parts.glob("*.npz"))
    # Swap two parts and truncate a third: neither is taken for its task.
    a, b, c = (first.parts / n for n in names[:3])
    data_a, data_b = a.read_bytes(), b.read_bytes()
    a.write_bytes(data_b)
    b.write_bytes(data_a)
    c.write_bytes(c.read_bytes()[:100])
    again = sw.run_serial(s, out, force=True, progress=False)
    assert again.computed == 3
    xr.testing.assert_identical(again.dataset, first.dataset)


def test_progress_bar_stays_off_when_not_a_terminal(tmp_path, capfd):
    s = sw.load_sweep(_write(tmp_path, GRID))
    sw.run_serial(s, tmp_path / "out", progress=True)
    assert capfd.readouterr().err == ""


def test_a_failing_task_names_its_parameters(tmp_path):
    @sw.register_measure("fussy")
    def fussy(design, seed):
        if design.filaments[0].length > 0.12:
            raise ValueError("length = too long; allowed: <= 12 cm")
        return sw.measure_cut(design, seed)

    try:
        s = sw.load_sweep(_write(tmp_path, COUNTED.replace("counted_cut", "fussy")))
        with pytest.raises(DesignError) as err:
            sw.run_serial(s, tmp_path / "out", progress=False)
    finally:
        del sw.MEASURES["fussy"]
    line = err.value.problems[0]
    assert "filaments[*].length = 0.15 m" in line and "allowed: <= 12 cm" in line
    # What was finished before the failure is kept.
    assert len(list(sw.output_paths(s, tmp_path / "out")[1].glob("*.npz"))) == 4


# --- bad sweep files --------------------------------------------------------------------------

def _problems(tmp_path, text, design=PAIR):
    with pytest.raises(DesignError) as err:
        sw.load_sweep(_write(tmp_path, text, design))
    return err.value.problems


BAD = [
    ("[vary]", "[vari]", "vari: unknown section (did you mean 'vary'?)"),
    ("seeds = [5, 9]", "seed = 3", "sweep.seed: unknown key (did you mean 'seeds'?)"),
    ('"filaments[*].length"', '"filaments[*].lenght"',
     "vary.filaments[*].lenght: unknown key 'lenght' (did you mean 'length'?)"),
    ('"filaments[*].length"', '"observe.freq"', "vary.observe.freq: [observe] sets the "
     "measures' own axes and cannot be varied"),
    ('"filaments[*].length"', '"filaments[*].start"',
     "vary.filaments[*].start: vector of length values cannot be varied"),
    ('"filaments[*].length"', '"filament.length"',
     "vary.filament.length: the design has [filaments], not [filament]; allowed: "
     "filaments[*].length"),
    ('"filaments[*].length"', '"layout.spacing"',
     "vary.layout.spacing: the design has [filaments], not [layout]"),
    ('"filaments[*].length"', '"plasma.radios"',
     "vary.plasma.radios: unknown key 'radios' (did you mean 'radius'?)"),
    ('"filaments[*].length"', '"medum.temperature"',
     "vary.medum.temperature: unknown section 'medum' (did you mean 'medium'?)"),
    ('"filaments[*].length"', '"filaments[7].length"',
     "vary.filaments[7].length: column 7 does not exist; allowed: 0 to 1 or *"),
    ('"5 cm"', '"-5 cm"', "vary.filaments[*].length[0]: '-5 cm' is out of range; "
     "allowed: >= 1e-09 and <= 1000 m"),
    ('"5 cm"', '"5 THz"', "vary.filaments[*].length[0]: '5 THz' has the unit 'THz', which is not a length"),
    ('"5 cm"', '"10 cm"', "vary.filaments[*].length: ['10 cm', '10 cm', '15 cm'] repeats a "
     "value; allowed: distinct values"),
    ("points = 2", "points = 0", "vary.filaments[1].delay.points: 0 is not allowed; allowed: "
     "a whole number"),
    ("cut = {}", "cutt = {}", "measures.cutt: unknown measure (did you mean 'cut'?)"),
    ('timing_jitter = "200 fs"', 'timing_jiter = "200 fs"',
     "measures.jittered_cut.timing_jiter: unknown option (did you mean 'timing_jitter'?)"),
    ('{ timing_jitter = "200 fs" }', "{}", "measures.jittered_cut.timing_jitter: missing"),
    ("seeds = [5, 9]\n", "", "sweep.seeds: missing; allowed: a count n"),
    ("seeds = [5, 9]", "seeds = [5, 5]", "sweep.seeds: [5, 5] is not allowed; allowed: a "
     "count n (seeds 0 to n-1) or a list of distinct integers >= 0"),
    ('design = "pair.toml"', 'design = "nowhere.toml"', "cannot be read"),
    ('"filaments[*].length" = ["5 cm", "10 cm", "15 cm"]',
     '"filaments[*].length" = { start = "1 cm", stop = "1 m", points = 500 }\n'
     '"filaments[0].amplitude" = { start = 0.5, stop = 1.0, points = 100 }',
     "sweep: 300000 tasks is too many; allowed: at most 100000"),
]


@pytest.mark.parametrize("old, new, expected", BAD, ids=[b[2][:40] for b in BAD])
def test_bad_sweep_files_name_key_value_and_allowed(tmp_path, old, new, expected):
    assert old in GRID
    problems = _problems(tmp_path, GRID.replace(old, new, 1))
    assert any(expected in p for p in problems), problems
    assert all("allowed" in p or "cannot be read" in p for p in problems), problems


def test_values_that_break_the_design_are_caught_before_running(tmp_path):
    # The tilted design's profile spans exactly its 12 cm: another length cannot keep it.
    text = GRID.replace('design = "pair.toml"', f'design = "{ROOT}/designs/tilted_profiled.toml"'
                        ).replace('"filaments[*].length" = ["5 cm", "10 cm", "15 cm"]',
                                  '"filament.length" = ["10 cm", "12 cm"]').replace(
        '"filaments[1].delay" = { start = "0 fs", stop = "300 fs", points = 2 }\n', "")
    problems = _problems(tmp_path, text)
    assert any(p.startswith("vary.filament.length = 0.1 m: filament: profile z")
               for p in problems), problems


def test_register_measure_refuses_taken_and_bad_names():
    with pytest.raises(ValueError, match="'cut' is taken"):
        sw.register_measure("cut")(sw.measure_cut)
    with pytest.raises(ValueError, match="lower-case letters"):
        sw.register_measure("Bad name")


def test_dotted_and_quoted_keys_are_the_same_path(tmp_path):
    text = GRID.replace('"filaments[*].length"', '"filament.length"').replace(
        '"filaments[1].delay" = { start = "0 fs", stop = "300 fs", points = 2 }\n',
        "medium.temperature = [\"10 degC\", \"30 degC\"]\n")
    in_air = SINGLE.replace('kind = "vacuum"', 'kind = "air"')
    s = sw.load_sweep(_write(tmp_path, text, in_air))
    assert [a.key for a in s.axes] == ["filament.length", "medium.temperature"]
    assert s.axes[1].unit == "degC"
    assert_array_equal(s.axes[1].values, [10.0, 30.0])
    doubled = text.replace("medium.temperature", "filament.length")
    assert any("given more than once" in p for p in _problems(tmp_path, doubled, in_air))
    # A key the design's kind does not use cannot be varied (vacuum has no temperature).
    assert any("not used when kind = 'vacuum'" in p for p in _problems(tmp_path, text, SINGLE))


LINE = PAIR.split("[[filaments]]")[0] + """\
[layout]
kind = "line"
count = 2
spacing = "4 mm"
length = "10 cm"

[observe]
freq = ["0.3 THz", "0.6 THz"]
theta = { start = "0 deg", stop = "12 deg", points = 25 }
phi = { start = "0 deg", stop = "360 deg", points = 7 }
"""


def test_layout_counts_and_spacings(tmp_path):
    text = """\
[sweep]
name = "Line"
design = "line.toml"

[measures]
cut = {}

[vary]
"layout.count" = [1, 2]
"layout.spacing" = ["4 mm", "6 mm"]
"""
    path = _write(tmp_path, text, LINE, "line.toml")
    ds = sw.run_serial(sw.load_sweep(path), tmp_path / "out", progress=False).dataset
    assert ds["layout.count"].dtype == np.int64 and ds["layout.count"].attrs["units"] == "1"
    base = parse_design(tomllib.loads(PAIR))
    g = base.grid
    one = far_field(type(base.filaments[0])(0.1), g.freq[:, None, None], g.theta[:, None], g.phi)
    k = 2 * np.pi * g.freq[:, None, None] / c
    for j, d in enumerate(ds["layout.spacing"].values):
        # Balanis, Antenna Theory (4th ed.), sec. 6.2: two equal in-phase elements at +-d/2
        # on x multiply the element pattern by |AF|^2 = 4 cos^2(k d sin(theta) cos(phi) / 2).
        af2 = 4 * np.cos(0.5 * k * d * np.sin(g.theta[:, None]) * np.cos(g.phi)) ** 2
        assert_allclose(ds["cut"][1, j].values, (one.energy_density * af2).mean(axis=2),
                        rtol=1e-10, atol=0)
        assert_allclose(ds["cut"][0, j].values, one.energy_density.mean(axis=2),
                        rtol=1e-12, atol=0)


LASER_LINE = """\
[design]
name = "Laser line"

[laser]
energy = "2 mJ"
focal_length = "1 m"

[layout]
kind = "line"
count = 2
spacing = "2 mm"

[steering]
toward = ["5 deg", "0 deg"]
band = ["0.3 THz"]

[split]
counts = [1, 2, 4]

[observe]
freq = ["0.3 THz"]
"""


def test_split_measure_follows_the_pulse_energy(tmp_path):
    text = """\
[sweep]
name = "Split"
design = "laser.toml"

[measures]
split = {}

[vary]
"laser.energy" = ["1 mJ", "4 mJ"]
"""
    path = _write(tmp_path, text, LASER_LINE, "laser.toml")
    ds = sw.run_serial(sw.load_sweep(path), tmp_path / "out", progress=False).dataset
    ratio = ds["split_power_ratio"].values                 # (energy, count)
    # P/P_cr per beam is proportional to the energy per beam, eta E / N (hand calculation)
    assert_allclose(ratio[1] / ratio[0], 4.0, rtol=1e-12)
    assert_allclose(ratio[:, 0] / ratio[:, 2], 4.0, rtol=1e-12)
    # one beam: phased equals one column (nothing to phase)
    assert_allclose(ds["split_phased"][:, 0], ds["split_single"][:, 0], rtol=1e-12)
    assert ds["split_best_count"].values[1] >= ds["split_best_count"].values[0]
