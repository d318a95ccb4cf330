"""Write designs/scan_synthetic.csv: an INVENTED angular scan made by thzarray's own model.

Not a measurement. A uniform column (the invented values in ``TRUE``) radiates in dry
standard air; its far-field pattern at one frequency, scaled to a peak height ``amplitude``
above ``background``, gets Gaussian noise of standard deviation ``SIGMA`` from a seeded
generator. The README's fitting example and tests/test_fitting.py use the file.

Run: ``.venv/bin/python designs/make_scan_synthetic.py``
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from thzarray import Filament, Medium, cone_angle, far_field

TRUE = {"length": 0.30, "mismatch": 4.0e-5, "amplitude": 1.0, "background": 0.02}
FREQ = 0.3e12
SIGMA = 0.015
SEED = 1
ANGLES_DEG = np.arange(0.25, 9.0 + 1e-9, 0.25)
OUT = Path(__file__).with_name("scan_synthetic.csv")


def clean_signal(angle_rad):
    """Noise-free invented signal at polar angles (rad)."""
    air = Medium.air()
    medium = Medium(air.n_thz + TRUE["mismatch"], air.n_thz)
    column = Filament(TRUE["length"])
    peak = far_field(column, FREQ, cone_angle(TRUE["length"], FREQ, medium), 0.0,
                     medium).magnitude_squared
    pattern = far_field(column, FREQ, angle_rad, 0.0, medium).magnitude_squared / peak
    return TRUE["amplitude"] * pattern + TRUE["background"]


def make_text() -> str:
    """The CSV file's text."""
    rng = np.random.default_rng(SEED)
    signal = clean_signal(np.radians(ANGLES_DEG)) + rng.normal(0.0, SIGMA, ANGLES_DEG.size)
    lines = [
        "# INVENTED DATA, not a measurement: made by designs/make_scan_synthetic.py from",
        "# the thzarray far-field model of one uniform column in dry standard air",
        f"# (length {TRUE['length']} m, n_g - n_T {TRUE['mismatch']:g}, amplitude "
        f"{TRUE['amplitude']}, background {TRUE['background']}) plus seeded Gaussian noise",
        f"# (sigma {SIGMA}, numpy default_rng seed {SEED}).",
        f"# freq = {FREQ / 1e12:g} THz",
        "angle_deg,signal,sigma",
    ]
    lines += [f"{a:.2f},{s:.6f},{SIGMA}" for a, s in zip(ANGLES_DEG, signal)]
    return "\n".join(lines) + "\n"


if __name__ == "__main__":
    OUT.write_text(make_text(), encoding="utf-8")
    print(f"wrote {OUT}")
