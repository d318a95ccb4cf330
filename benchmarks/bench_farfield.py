"""One filament's far field on a 2048 x 2048 (theta, phi) grid at 8 frequencies.

Prints evaluations per second of the compiled path and the ratio against a plain numpy
evaluation of the same closed form in the same run.
"""

import numpy as np
from scipy.constants import c, mu_0

from benchmarks.common import best_time, machine
from thzarray import Filament, Medium, far_field


def plain_numpy(fil, freq, theta, phi, medium):
    """The closed form written directly with numpy broadcasting over the full grid, for a
    column of any axis (the reference run; no use of the azimuthal symmetry)."""
    w = 2 * np.pi * freq
    kt = w * medium.n_thz / c
    st, ct, sp, cp = np.sin(theta), np.cos(theta), np.sin(phi), np.cos(phi)
    ax, ay, az = fil.axis
    cos_psi = st * cp * ax + st * sp * ay + ct * az
    half = 0.5 * (w * medium.n_group / c - kt * cos_psi) * fil.length
    s = fil.length * np.sinc(half / np.pi) * np.exp(1j * half)
    a_theta = ct * cp * ax + ct * sp * ay - st * az
    return 1j * w * mu_0 / (4 * np.pi) * a_theta * s


def run(n_theta=2048, n_phi=2048, n_freq=8):
    medium = Medium.air(relative_humidity=0.5)
    fil = Filament(0.3)
    freq = np.linspace(0.1e12, 1.0e12, n_freq)[:, None, None]
    theta = np.linspace(0, np.pi, n_theta)[:, None]
    phi = np.linspace(0, 2 * np.pi, n_phi)
    points = n_freq * n_theta * n_phi
    t_fast = best_time(lambda: far_field(fil, freq, theta, phi, medium), repeats=2)
    t_twin = best_time(lambda: far_field(fil, freq, theta, phi, medium, compiled=False), repeats=1)
    t_plain = best_time(lambda: plain_numpy(fil, freq, theta, phi, medium), repeats=1)
    ref = far_field(fil, freq[:2], theta, phi[:4], medium)
    check = plain_numpy(fil, freq[:2], theta, phi[:4], medium)
    err = np.max(np.abs(ref.e_theta - check)) / np.max(np.abs(check))
    print(f"machine: {machine()}")
    print(f"grid: {n_freq} freq x {n_theta} theta x {n_phi} phi = {points:.3g} points")
    print(f"compiled far_field : {points / t_fast:.3g} evaluations/s ({t_fast:.2f} s)")
    print(f"numpy twin path    : {points / t_twin:.3g} evaluations/s ({t_twin:.2f} s)")
    print(f"plain numpy formula: {points / t_plain:.3g} evaluations/s ({t_plain:.2f} s)")
    print(f"ratio compiled / numpy twin    : {t_twin / t_fast:.2f}")
    print(f"ratio compiled / plain formula : {t_plain / t_fast:.2f}")
    print(f"max relative difference vs plain formula: {err:.2e}")
