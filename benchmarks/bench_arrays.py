"""Sky map of a 64-column layout: factored fast path against the plain numpy general sum.

64 identical columns (8 x 8 grid), a 1024 x 1024 (theta, phi) sky grid and 16 equally
spaced frequencies: 16.8 million (direction, frequency) evaluations. The numpy general sum
(the far field's numpy twin, one column at a time) and the compiled general sum are timed
on a band of theta rows and scaled to the full grid; the output says so.
"""

from __future__ import annotations

import time

import numpy as np

from thzarray import Medium, far_field
from thzarray.array.layouts import grid
from thzarray.array.maps import sky_map

from .common import machine


def _time(fun):
    t0 = time.perf_counter()
    out = fun()
    return time.perf_counter() - t0, out


def run() -> None:
    medium = Medium.air(relative_humidity=0.4)
    layout = grid((8, 8), 1.5e-3, 0.02)
    theta = np.linspace(0.0, 0.5, 1024)
    phi = 2 * np.pi * np.arange(1024) / 1024
    freq = np.linspace(0.1e12, 0.5e12, 16)
    evaluations = theta.size * phi.size * freq.size

    sky_map(layout, theta[:2], phi[:8], freq, medium)  # compile outside the timing
    far_field(layout, freq[:2], theta[:2], phi[:2], medium)
    t_fast, _ = _time(lambda: sky_map(layout, theta, phi, freq, medium))

    rows = 16
    sub = (freq[:, None, None], theta[:rows, None], phi[None, :])
    t_np, ref = _time(lambda: far_field(layout, *sub, medium, compiled=False))
    t_np *= theta.size / rows
    rows_c = 64
    sub_c = (freq[:, None, None], theta[:rows_c, None], phi[None, :])
    t_gen, _ = _time(lambda: far_field(layout, *sub_c, medium))
    t_gen *= theta.size / rows_c

    check = sky_map(layout, theta[:rows], phi, freq, medium).energy
    from thzarray.array.gain import band_weights
    ref_energy = np.tensordot(band_weights(freq), ref.energy_density, axes=(0, 0))
    err = np.max(np.abs(check - ref_energy)) / np.max(ref_energy)

    print(f"machine: {machine()}")
    print(f"arrays: {len(layout)} columns, {theta.size} x {phi.size} sky grid, {freq.size} "
          f"frequencies = {evaluations:.3g} field evaluations")
    print(f"  sky_map (element x array factor, compiled): {t_fast:.2f} s, "
          f"{evaluations / t_fast:.3g} evaluations/s")
    print(f"  compiled general sum (timed on {rows_c} theta rows, scaled): {t_gen:.2f} s, "
          f"{evaluations / t_gen:.3g} evaluations/s")
    print(f"  numpy general sum (timed on {rows} theta rows, scaled): {t_np:.2f} s, "
          f"{evaluations / t_np:.3g} evaluations/s")
    print(f"  ratio fast / numpy general sum: {t_np / t_fast:.1f}x; "
          f"fast / compiled general sum: {t_gen / t_fast:.1f}x; "
          f"max relative difference on the timed rows {err:.1e}")


if __name__ == "__main__":
    run()
