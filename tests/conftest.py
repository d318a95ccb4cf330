import os

import numpy as np
import pytest
from hypothesis import settings

# Property tests are reproducible: derandomized, no deadline (numba compiles on first call).
settings.register_profile("thzarray", derandomize=True, deadline=None, max_examples=40)
settings.load_profile("thzarray")

os.environ.setdefault("NUMBA_NUM_THREADS", str(min(2, os.cpu_count() or 1)))


@pytest.fixture
def rng():
    return np.random.default_rng(20261201)


# A small steered line array used by the CLI, browser and sweep tests (invented numbers).
ARRAY_DESIGN = """
[design]
name = "{name}"
[medium]
relative_humidity = "40 %"
[layout]
kind = "line"
count = 3
spacing = "2 mm"
length = "2 cm"
[steering]
toward = ["12 deg", "0 deg"]
band = ["0.2 THz", "0.4 THz"]
band_points = 3
[tolerance]
timing_jitter = "0.1 ps"
trials = 50
[observe]
freq = ["0.3 THz"]
theta = {{ start = "0 deg", stop = "20 deg", points = 11 }}
phi = {{ start = "0 deg", stop = "360 deg", points = 5 }}
"""


@pytest.fixture
def array_design(tmp_path):
    """Write the small array design (plus extra TOML) and return its path."""

    def write(name="array", extra="", formats=("csv",)):
        path = tmp_path / f"{name.replace(' ', '_')}.toml"
        fmts = ", ".join(f'"{f}"' for f in formats)
        path.write_text(ARRAY_DESIGN.format(name=name) + extra
                        + f"\n[outputs]\nformats = [{fmts}]\n")
        return path

    return write
