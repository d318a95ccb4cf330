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
