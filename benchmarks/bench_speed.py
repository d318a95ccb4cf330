"""Where users wait: one-frequency maps, large arrays by non-uniform FFT, reports, start-up.

Every figure is a ratio against a reference timed in the same process: a plain numpy script
of the same sum, the direct compiled sum, a bare finufft call on the same points. Times are
printed, never asserted; the machine is shared, so repeat runs vary by tens of percent.
`python -m benchmarks speed` runs it; `python -m benchmarks.bench_speed quick` skips the
1024-column report and designer runs.
"""

from __future__ import annotations

import contextlib
import os
import subprocess
import sys
import tempfile
import time

import finufft
import numpy as np
from scipy.constants import c, mu_0

from benchmarks.common import best_time, machine
from thzarray import Filament, Medium, far_field
from thzarray.array.arrayfield import NUFFT_CROSSOVER, array_far_field
from thzarray.array.beam import steering_report
from thzarray.array.designer import design_steering
from thzarray.array.layouts import grid
from thzarray.array.maps import sky_grid, sky_map
from thzarray.array.steering import steering_delays
from thzarray.array.targets import Aperture, Direction
from thzarray.array.tolerance import tolerance
from thzarray.field.nufft import nufft_far_field

MEDIUM = Medium.air(relative_humidity=0.4)
FREQ = 0.3e12
THETA = np.linspace(0.0, 0.5, 256)[:, None]
PHI = 2 * np.pi * np.arange(256) / 256


def plain_numpy(fils, f, theta, phi, medium):
    """The far-field sum as a user would write it with numpy: one closed form per column
    (Jackson eq. 9.8 along a uniform column), broadcast over the sky grid."""
    w = 2 * np.pi * f
    k = w * medium.n_thz / c
    st, ct, sp, cp = np.sin(theta), np.cos(theta), np.sin(phi), np.cos(phi)
    r = np.stack(np.broadcast_arrays(st * cp, st * sp, ct), axis=-1)
    th = np.stack(np.broadcast_arrays(ct * cp, ct * sp, -st), axis=-1)
    e_t = np.zeros(r.shape[:-1], dtype=complex)
    for fl in fils:
        a = np.asarray(fl.axis)
        u = w / c * (medium.n_group - medium.n_thz * (r @ a))
        e_t += (fl.amplitude * fl.length * np.sinc(u * fl.length / (2 * np.pi))
                * np.exp(1j * (u * fl.length / 2 + w * fl.delay - k * (r @ np.asarray(fl.start))))
                * (th @ a))
    return 1j * w * mu_0 / (4 * np.pi) * e_t


def _mixed(fils, rng):
    return [f.replace(length=f.length * (1 + 0.3 * rng.random())) for f in fils]


def _random_positions(n, rng, width=0.02):
    """n mixed-length z columns at random points of a square of side ``width`` (m)."""
    return [Filament(0.02 * (1 + 0.3 * rng.random()),
                     start=(*rng.uniform(-width / 2, width / 2, 2), 0.0),
                     delay=rng.uniform(0, 1e-12)) for _ in range(n)]


def _err(a, b):
    return np.abs(a - b).max() / np.abs(b).max()


def one_frequency():
    rng = np.random.default_rng(0)
    same = grid((8, 8), 1.5e-3, 0.02)
    same = [f.replace(delay=d) for f, d in zip(same, steering_delays(same, 0.1, 0.3, MEDIUM))]
    cases = [("identical, 8 x 8 grid, steered", same),
             ("mixed lengths, 8 x 8 grid", _mixed(same, rng)),
             ("mixed lengths, random positions", _random_positions(64, rng))]
    print(f"one frequency ({FREQ / 1e12:g} THz), 64 columns, 256 x 256 directions")
    print(f"  {'layout':34s} {'numpy s':>8s} {'direct s':>9s} {'auto s':>7s} {'nufft s':>8s} "
          f"{'auto/np':>8s} {'nufft/np':>9s} {'auto/dir':>9s} {'max rel err':>11s}")
    for name, fils in cases:
        t_np = best_time(lambda fils=fils: plain_numpy(fils, FREQ, THETA, PHI, MEDIUM), 1)
        t_dir = best_time(lambda fils=fils: far_field(fils, FREQ, THETA, PHI, MEDIUM), 2)
        t_auto = best_time(lambda fils=fils: array_far_field(fils, FREQ, THETA, PHI, MEDIUM), 2)
        t_nu = best_time(lambda fils=fils: nufft_far_field(fils, FREQ, THETA, PHI, MEDIUM), 2)
        ref = plain_numpy(fils, FREQ, THETA, PHI, MEDIUM)
        err = max(_err(array_far_field(fils, FREQ, THETA, PHI, MEDIUM).e_theta, ref),
                  _err(nufft_far_field(fils, FREQ, THETA, PHI, MEDIUM).e_theta, ref))
        print(f"  {name:34s} {t_np:8.3f} {t_dir:9.3f} {t_auto:7.3f} {t_nu:8.3f} "
              f"{t_np / t_auto:7.1f}x {t_np / t_nu:8.1f}x {t_dir / t_auto:8.1f}x {err:11.1e}")
    print("  (auto: on a lattice, column factors on the sites and Horner's rule per direction "
          "(row x column factors when identical and steered); elsewhere the direct sum up to "
          f"{NUFFT_CROSSOVER} differing columns per frequency, the non-uniform FFT above)")


def _bare_points(fils):
    """The same transform called directly: both ends of every column, one frequency, the
    256 x 256 targets -k r (Jackson eq. 9.8 along each column, module docstring of
    thzarray.field.nufft)."""
    w = 2 * np.pi * FREQ
    k = w * MEDIUM.n_thz / c
    start = np.array([f.start for f in fils])
    length = np.array([f.length for f in fils])
    delay = np.array([f.delay for f in fils])
    ends = np.concatenate([start, start + length[:, None] * np.array([0.0, 0.0, 1.0])])
    times = np.concatenate([delay, delay + length * MEDIUM.n_group / c])
    cs = np.concatenate([-np.ones(len(fils)), np.ones(len(fils))]) * np.exp(1j * w * times)
    st = np.sin(THETA)
    r = np.stack(np.broadcast_arrays(st * np.cos(PHI), st * np.sin(PHI), np.cos(THETA)))
    return ([np.ascontiguousarray(v) for v in ends.T], cs,
            [np.ascontiguousarray(-k * v.ravel()) for v in r])


def large_arrays(counts=(16, 64, 256, 1024, 4096)):
    rng = np.random.default_rng(1)
    rows = 16
    print("mixed-length columns at random points (1.5 mm mean spacing), one frequency, "
          "256 x 256 directions:")
    print(f"  {'N':>5s} {'direct s':>9s} {'nufft s':>8s} {'direct/nufft':>13s} "
          f"{'bare finufft s':>15s} {'nufft/bare':>11s} {'max rel err':>11s}")
    t_d, t_n = [], []
    for n in counts:
        fils = _random_positions(n, rng, 1.5e-3 * np.sqrt(n))
        part = THETA[:rows] if n > 256 else THETA
        td = best_time(lambda fils=fils, part=part: far_field(fils, FREQ, part, PHI, MEDIUM), 1)
        td *= THETA.shape[0] / part.shape[0]
        tn = best_time(lambda fils=fils: nufft_far_field(fils, FREQ, THETA, PHI, MEDIUM), 1)
        x, cs, s = _bare_points(fils)
        tb = best_time(lambda x=x, s=s, cs=cs: finufft.nufft3d3(*x, cs, *s, eps=1e-10), 1)
        ref = far_field(fils, FREQ, THETA[:rows], PHI, MEDIUM).e_theta
        err = _err(nufft_far_field(fils, FREQ, THETA[:rows], PHI, MEDIUM).e_theta, ref)
        t_d.append(td)
        t_n.append(tn)
        print(f"  {n:5d} {td:9.3f} {tn:8.3f} {td / tn:12.1f}x {tb:15.3f} {tn / tb:10.1f}x "
              f"{err:11.1e}")
    below = [n for n, a, b in zip(counts, t_d, t_n) if a < b]
    print(f"  (direct: the general compiled sum, timed on {rows} of 256 theta rows and scaled "
          f"above 256 columns; crossover: direct faster "
          f"for N in {below or 'none'}; NUFFT_CROSSOVER = {NUFFT_CROSSOVER})")
    fit = np.polyfit(np.log(counts), np.log(t_n), 1)[0]
    fit_d = np.polyfit(np.log(counts), np.log(t_d), 1)[0]
    print(f"  cost ~ N^{fit_d:.2f} direct, ~ N^{fit:.2f} non-uniform FFT")


def crossover(counts=(16, 64, 256, 1024), nfreq=(1, 4, 16)):
    """Direct compiled sum against the non-uniform FFT on 128 x 128 directions, random
    positions, F equally spaced frequencies."""
    rng = np.random.default_rng(2)
    theta, phi = THETA[::2], PHI[::2]
    print("crossover, random positions, 128 x 128 directions: direct s / nufft s")
    for nf in nfreq:
        freq = np.linspace(0.2e12, 0.5e12, nf)[:, None, None]
        cells = []
        for n in counts:
            fils = _random_positions(n, rng, 1.5e-3 * np.sqrt(n))
            td = best_time(lambda fils=fils: far_field(fils, freq, theta, phi, MEDIUM), 1)
            tn = best_time(lambda fils=fils: nufft_far_field(fils, freq, theta, phi, MEDIUM), 1)
            cells.append(f"N={n}: {td:.3f}/{tn:.3f}")
        print(f"  F = {nf:2d}: " + ", ".join(cells))


def _steered_grid(n):
    side = int(round(np.sqrt(n)))
    fils = grid((side, side), 1.5e-3, 0.02)
    return [f.replace(delay=d) for f, d in zip(fils, steering_delays(fils, 0.12, 0.3, MEDIUM))]


_STEER_DESIGN = """[design]
name = "bench grid"
[medium]
temperature = "20 degC"
relative_humidity = "40 %"
[layout]
kind = "grid"
shape = [{side}, {side}]
spacing = "1.5 mm"
length = "20 mm"
[steering]
toward = ["6.9 deg", "17 deg"]
aperture_radius = "5 mm"
aperture_distance = "0.5 m"
band = ["0.2 THz", "0.4 THz"]
band_points = 5
[tolerance]
timing_jitter = "0.2 ps"
transverse_error = "50 um"
trials = {trials}
[observe]
freq = ["0.2 THz", "0.3 THz", "0.4 THz"]
theta = {{ start = "0 deg", stop = "20 deg", points = 161 }}
phi = {{ start = "0 deg", stop = "360 deg", points = 73 }}
"""


def _command(name, n, trials=500):
    """Wall time of ``thzarray <name>`` on a steered square grid of n columns, in-process."""
    from thzarray.app.cli import main

    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "grid.toml")
        with open(path, "w") as fh:
            fh.write(_STEER_DESIGN.format(side=int(round(np.sqrt(n))), trials=trials))
        t0 = time.perf_counter()
        with open(os.devnull, "w") as null, contextlib.redirect_stdout(null):
            code = main([name, path, "--out", os.path.join(tmp, "out")])
        if code:
            raise RuntimeError(f"thzarray {name} exited {code}")
        return time.perf_counter() - t0


def reports(counts=(16, 256, 1024)):
    """The report, the designer, the Monte Carlo and the steer command, each against one
    sky map of the same layout on the report's own grid (the reference)."""
    freq = np.linspace(0.2e12, 0.4e12, 5)
    target = Direction(0.12, 0.3)
    aperture = Aperture(0.12, 0.3, 5e-3, 0.5)
    print("reports on steered square grids (5 frequencies, default sky grid); each time also "
          "as a multiple of one sky map of the same layout on that grid:")
    print(f"  {'N':>5s} {'sky map s':>10s} {'report s':>9s} {'designer s':>11s} "
          f"{'tolerance s':>12s} {'steer cmd s':>12s} {'in sky maps':>30s}")
    rows = []
    for n in counts:
        fils = _steered_grid(n)
        th, ph = sky_grid(fils, freq, MEDIUM)
        t_map = best_time(lambda fils=fils, th=th, ph=ph: sky_map(fils, th, ph, freq, MEDIUM), 1)
        t0 = time.perf_counter()
        steering_report(fils, target, freq, MEDIUM)
        t_rep = time.perf_counter() - t0
        t0 = time.perf_counter()
        design_steering(fils, target, freq, medium=MEDIUM)
        t_des = time.perf_counter() - t0
        t0 = time.perf_counter()
        tolerance(fils, aperture, freq, timing_jitter=0.2e-12, transverse_error=50e-6,
                  trials=500, medium=MEDIUM)
        t_tol = time.perf_counter() - t0
        t_cmd = _command("steer", n)
        rows.append((t_map, t_rep, t_des, t_tol, t_cmd))
        ratios = "/".join(f"{t / t_map:.0f}" for t in (t_rep, t_des, t_tol, t_cmd))
        print(f"  {n:5d} {t_map:10.2f} {t_rep:9.2f} {t_des:11.2f} {t_tol:12.2f} {t_cmd:12.2f} "
              f"{ratios:>30s}")
    if len(counts) > 1:
        fits = [np.polyfit(np.log(counts), np.log([r[i] for r in rows]), 1)[0]
                for i in range(5)]
        print("  cost ~ N^a, a = " + ", ".join(
            f"{a:.2f} ({name})" for a, name in zip(fits, ("sky map", "report", "designer",
                                                           "tolerance, 500 builds",
                                                           "steer command"))))
    print("  (tolerance: an aperture of 5 mm at 0.5 m, 500 builds; steer: the command with its "
          "figures and files, in this process)")


def scaling():
    """Cost exponents of the direct far-field sum in columns, directions and frequencies
    (random positions, mixed lengths), each fitted over a factor of 16 or more."""
    rng = np.random.default_rng(4)
    fils64 = _random_positions(64, rng)

    def fit(xs, ts):
        return np.polyfit(np.log(xs), np.log(ts), 1)[0]

    cols = (16, 64, 256, 1024)
    t_c = [best_time(lambda n=n: far_field(_random_positions(n, np.random.default_rng(n)),
                                           FREQ, THETA[::2], PHI[::2], MEDIUM), 1)
           for n in cols]
    dirs = (32, 64, 128, 256)
    t_d = [best_time(lambda m=m: far_field(fils64, FREQ, np.linspace(0, 0.5, m)[:, None],
                                           2 * np.pi * np.arange(m) / m, MEDIUM), 1)
           for m in dirs]
    nfs = (1, 4, 16, 64)
    t_f = [best_time(lambda k=k: far_field(fils64, np.linspace(0.2e12, 0.5e12, k)[:, None, None],
                                           THETA[::2], PHI[::2], MEDIUM), 1)
           for k in nfs]
    print("cost of the direct compiled sum (random positions, mixed lengths):")
    print("  columns " + ", ".join(f"{n}: {t:.4f} s" for n, t in zip(cols, t_c))
          + f"  -> ~ N^{fit(cols, t_c):.2f} (128 x 128 directions, 1 frequency)")
    print("  directions " + ", ".join(f"{m * m}: {t:.4f} s" for m, t in zip(dirs, t_d))
          + f"  -> ~ M^{fit(np.square(dirs), t_d):.2f} (64 columns, 1 frequency)")
    print("  frequencies " + ", ".join(f"{k}: {t:.4f} s" for k, t in zip(nfs, t_f))
          + f"  -> ~ F^{fit(nfs, t_f):.2f} (64 columns, 128 x 128 directions, equally spaced)")


_FIRST_CALL = ("import time; t0 = time.perf_counter(); import numpy as np; "
               "from thzarray import far_field; from thzarray.array.layouts import grid; "
               "from thzarray.array.maps import sky_map; "
               "f = grid((3, 3), 1.5e-3, 0.02); "
               "sky_map(f, np.linspace(0, 0.5, 8), np.linspace(0, 6, 8), [3e11, 4e11]); "
               "far_field(f, 3e11, 0.1, 0.2); print(time.perf_counter() - t0)")


def first_call():
    env = dict(os.environ)
    with tempfile.TemporaryDirectory() as cache:
        env["NUMBA_CACHE_DIR"] = cache
        runs = [float(subprocess.run([sys.executable, "-c", _FIRST_CALL], env=env, check=True,
                                     capture_output=True, text=True).stdout) for _ in range(2)]
    print(f"first call (import, a sky map and a far field in a fresh process): "
          f"{runs[0]:.1f} s with an empty numba cache (compiling), {runs[1]:.1f} s from the "
          f"cache (cache=True): compile share {runs[0] / runs[1]:.1f}x")


def run(quick=False):
    print(f"machine: {machine()} (shared)")
    one_frequency()
    print()
    large_arrays()
    print()
    crossover()
    print()
    scaling()
    print()
    reports((16, 256) if quick else (16, 256, 1024))
    print()
    first_call()


if __name__ == "__main__":
    run(quick="quick" in sys.argv[1:])
