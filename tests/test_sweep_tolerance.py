"""The sweep's tolerance measure is the tolerance Monte Carlo of the design, per seed."""
from dataclasses import replace

from numpy.testing import assert_allclose

from thzarray.app import jobs
from thzarray.app.design import load_design
from thzarray.app.sweep import parse_sweep, run_serial


def test_tolerance_measure_equals_direct_monte_carlo(tmp_path, array_design):
    path = array_design("d")
    sweep = parse_sweep({"sweep": {"name": "tol", "design": path.name, "seeds": 2},
                         "measures": {"tolerance": {}},
                         "vary": {"tolerance.timing_jitter": ["0.1 ps", "0.3 ps"]}},
                        tmp_path / "s.toml")
    ds = run_serial(sweep, tmp_path / "out", progress=False).dataset
    base = load_design(path)
    for i, jitter in enumerate([0.1e-12, 0.3e-12]):
        for seed in (0, 1):
            d = base.replace_sections(tolerance=replace(base.tolerance, timing_jitter=jitter,
                                                        seed=seed))
            t, _, _ = jobs.tolerance_study(d)
            got = ds["gain_mean"].isel({"tolerance.timing_jitter": i}).sel(seed=seed)
            assert float(got) == t.mean
    # docs/references.rst: exact random-phase mean exp(-s^2) + (1 - exp(-s^2))/N, s = w sigma_t,
    # band-averaged; more jitter, less gain.
    means = ds["gain_expected"].isel(seed=0).values
    assert means[0] > means[1]
    assert_allclose(ds["gain_mean"].mean("seed"), ds["gain_expected"].isel(seed=0),
                    rtol=0.05)
