"""Compiled kernels against their numpy twins and against a measured floor.

The floor is the rate of a bare compiled complex-exponential loop (cos + i sin, parallel, on
this machine, in this run): a far-field array sum needs at least one complex exponential per
(filament, direction, frequency), so "ratio to floor" = (time per evaluation) / (time per
bare complex exponential). Scaling exponents are log-log slopes of measured times.
"""

import numpy as np
from numba import njit, prange

from benchmarks.common import best_time, machine
from thzarray import Medium, factored_far_field, far_field, layouts
from thzarray.field.nearfield import field_at


@njit(cache=True, parallel=True)
def _bare_exp(x, out):
    for i in prange(x.shape[0]):
        out[i] = np.cos(x[i]) + 1j * np.sin(x[i])


def floor_rate(n=1 << 24):
    x = np.random.default_rng(0).uniform(0.0, 1e3, n)
    out = np.empty(n, dtype=complex)
    return n / best_time(lambda: _bare_exp(x, out))


def _general_layout(n):
    """n columns of slightly different lengths (so the factored path cannot be used)."""
    base = layouts.grid((8, int(np.ceil(n / 8))), 1.5e-3, 0.03)[:n]
    return tuple(f.replace(length=0.03 * (1 + 0.01 * i)) for i, f in enumerate(base))


def _grid(nf, nt, npnt):
    return (np.linspace(0.1e12, 1e12, nf)[:, None, None], np.linspace(0, 0.6, nt)[:, None],
            np.linspace(0, 2 * np.pi, npnt))


def run():
    medium = Medium.air(relative_humidity=0.4)
    floor = floor_rate()
    print(f"machine: {machine()}")
    print(f"floor (bare complex exponential loop): {floor:.3g} /s")
    rows = []

    # far-field general sum, 64 distinct filaments
    fils = _general_layout(64)
    f, t, p = _grid(16, 256, 256)
    evals = 64 * 16 * 256 * 256
    t_fast = best_time(lambda: far_field(fils, f, t, p, medium))
    t_twin = best_time(lambda: far_field(fils, f, t[:8], p, medium, compiled=False), 2) * 32
    rows.append(("far-field general sum (64 columns)", evals, t_fast, t_twin))

    # factored path: 64 identical filaments
    same = layouts.grid((8, 8), 1.5e-3, 0.03)
    t_fac = best_time(lambda: factored_far_field(same, f, t, p, medium))
    rows.append(("far-field factored path (64 identical)", evals, t_fac, t_twin))

    # finite-distance line integrals: 16 columns of 1 m, plane of 64 x 64 at 1 m, 4 freq
    near = layouts.grid((4, 4), 2e-3, 1.0)
    xs = np.linspace(-0.3, 0.3, 64)
    pts = np.stack(list(np.meshgrid(xs, xs)) + [np.full((64, 64), 2.0)], axis=-1)
    fq = np.linspace(0.25e12, 1e12, 4)[:, None, None]
    n_evals = 16 * 4 * 64 * 64
    t_near = best_time(lambda: field_at(near, fq, pts, medium), 1)
    t_near_twin = best_time(lambda: field_at(near, fq, pts[:2], medium, compiled=False), 1) * 32
    rows.append(("near-field line integrals (16 x 1 m columns)", n_evals, t_near, t_near_twin))

    print(f"{'kernel':48s} {'evals/s':>10s} {'x numpy twin':>13s} {'x floor cost':>13s}")
    for name, n, t_k, t_tw in rows:
        rate = n / t_k
        print(f"{name:48s} {rate:10.3g} {t_tw / t_k:13.1f} {floor / rate:13.2f}")
    print("(numpy twins timed on 1/32 of the grid and scaled; 'x floor cost' is the time per "
          "evaluation in units of one bare complex exponential, near-field counted per "
          "column-point-frequency)")

    # scaling of the general sum
    def slope(xs, ts):
        return np.polyfit(np.log(xs), np.log(ts), 1)[0]

    ns = [8, 16, 32, 64]
    tn = [best_time(lambda n=n: far_field(_general_layout(n), f, t[:64], p[:64], medium), 2)
          for n in ns]
    gs = [32, 64, 128, 256]
    tg = [best_time(lambda g=g: far_field(fils[:16], f, np.linspace(0, 0.6, g)[:, None],
                                          np.linspace(0, 6.28, g), medium), 2) for g in gs]
    fs = [4, 8, 16, 32]
    tf = [best_time(lambda k=k: far_field(fils[:16], np.linspace(0.1e12, 1e12, k)[:, None, None],
                                          t[:64], p[:64], medium), 2) for k in fs]
    print(f"cost ~ filaments^{slope(ns, tn):.2f} (N = {ns}), "
          f"~ directions^{slope(np.square(gs), tg):.2f} ({gs[0]}^2 to {gs[-1]}^2), "
          f"~ frequencies^{slope(fs, tf):.2f} ({fs})")
