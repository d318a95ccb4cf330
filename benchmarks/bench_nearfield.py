"""Near field of 16 parallel 1 m columns on a 512 x 512 detector plane 1 m beyond their ends,
at 8 frequencies up to 1 THz.

Prints evaluations (one column at one point and frequency) per second of the compiled
line integral, and, in the same run, the time and accuracy of scipy.integrate.quad on a
small sample of the same integrals: quad is timed on the sample only and its cost per
integral scaled to the full plane (running it on the whole plane would take days).
"""

import time

import numpy as np
from scipy.constants import c, mu_0
from scipy.integrate import quad

from benchmarks.common import machine
from thzarray import Filament, Medium
from thzarray.field.nearfield import field_at
from thzarray.field.surfaces import plane_scan


def layout():
    pitch = 5e-3
    grid = (np.arange(4) - 1.5) * pitch
    return [Filament(1.0, start=(x, y, 0.0), delay=1e-13 * (i % 3))
            for i, (x, y) in enumerate((x, y) for x in grid for y in grid)]


def quad_column(fil, freq, x, medium):
    """E of one column at one point by scipy.integrate.quad over [0, L] (real and imaginary
    parts of each component), Jackson eq. 9.18 integrated along the column."""
    w = 2 * np.pi * freq
    k, kg = w * medium.n_thz / c, w * medium.n_group / c
    a, r0 = np.asarray(fil.axis), np.asarray(fil.start)

    def vec(s):
        rv = x - r0 - s * a
        r = np.linalg.norm(rv)
        n = rv / r
        v = (a - (n @ a) * n) / r + (3 * n * (n @ a) - a) * (1 / (k**2 * r**3) - 1j / (k * r**2))
        return np.exp(1j * (kg * s + k * r)) * v

    size = np.abs(vec(0.5 * fil.length)).max() * fil.length
    out = np.zeros(3, dtype=complex)
    for comp in range(3):
        for part, unit in ((np.real, 1.0), (np.imag, 1j)):
            val = quad(lambda s: part(vec(s)[comp]), 0.0, fil.length, epsabs=1e-12 * size,
                       epsrel=1e-10, limit=5000)[0]
            out[comp] += unit * val
    return (1j * w * mu_0 / (4 * np.pi) * fil.amplitude * np.exp(1j * w * fil.delay)) * out


def run(n_side=512, n_freq=8, n_sample=4):
    medium = Medium.air(relative_humidity=0.5)
    fils = layout()
    freq = np.linspace(1e12 / n_freq, 1e12, n_freq)
    u = np.linspace(-0.1, 0.1, n_side)
    surf = plane_scan(2.0, u, u)
    field_at(fils, freq[:1], surf.points[:2, :2], medium)  # compile / load the cache
    t0 = time.perf_counter()
    e = field_at(fils, freq[:, None, None], surf.points, medium)
    t_fast = time.perf_counter() - t0
    integrals = n_side * n_side * n_freq * len(fils)

    rng = np.random.default_rng(7)
    rows = rng.integers(0, n_side, n_sample)
    cols = rng.integers(0, n_side, n_sample)
    picks = [(0, rows[0], cols[0])] + [(n_freq - 1, r, q) for r, q in zip(rows[1:], cols[1:])]
    t0 = time.perf_counter()
    refs = [sum(quad_column(f, freq[i], surf.points[r, q], medium) for f in fils)
            for i, r, q in picks]
    t_quad = time.perf_counter() - t0
    quad_integrals = len(picks) * len(fils)
    err = max(np.abs(e[i, r, q] - ref).max() / np.abs(ref).max()
              for (i, r, q), ref in zip(picks, refs))

    per_fast = t_fast / integrals
    per_quad = t_quad / quad_integrals
    print(f"machine: {machine()}")
    print(f"{n_side} x {n_side} plane, {n_freq} frequencies to 1 THz, {len(fils)} columns of 1 m: "
          f"{integrals:.3g} line integrals in {t_fast:.1f} s")
    print(f"compiled: {1 / per_fast:.3g} evaluations/s")
    print(f"scipy.integrate.quad on {quad_integrals} sampled integrals: {t_quad:.1f} s "
          f"({1 / per_quad:.3g} evaluations/s; scaled to the plane "
          f"{per_quad * integrals / 3600:.3g} h)")
    print(f"speed ratio compiled / quad: {per_quad / per_fast:.3g}")
    print(f"max relative difference against quad on the sample: {err:.2e}")


if __name__ == "__main__":
    run()
