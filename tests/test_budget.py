import doctest
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, epsilon_0

from thzarray import Filament, Medium, far_field
from thzarray.atmosphere import Air, attenuate
from thzarray.budget import RangeBudget, range_budget
from thzarray.detectors import BroadbandDetector, NarrowbandReceiver, received_energy
from thzarray.nearfield import field_at

README = Path(__file__).resolve().parents[1] / "README.md"
SECTION = "## What a real receiver sees"


@pytest.fixture(scope="module")
def itu676():
    """`itur` (test-only reference for ITU-R P.676); restore numpy's error settings, which
    importing it changes."""
    saved = np.geterr()
    import itur.models.itu676 as model

    np.seterr(**saved)
    model.change_version(12)
    return model


def test_budget_matches_independent_sum(itu676):
    """W = sum_j w_j A 2 n eps0 c |p.F_j|^2 exp(-alpha_j R) / R^2 with alpha from `itur`
    (ITU-R P.676-12 Annex 1, dry pressure = total - vapour), samples at the band edges so
    the pass-band weights are B/2 each (trapezoid)."""
    fil = Filament(0.5, start=(0.0, 0.0, -0.25))
    rx = NarrowbandReceiver(0.3e12, 0.02e12, polarization=(1.0, 0.0, 0.0), area=3e-4)
    freq = np.array([0.29e12, 0.31e12])
    dist = np.array([2.0, 20.0, 50.0])
    rh = np.array([0.2, 0.8])
    theta = 0.06
    b = range_budget(fil, rx, freq, dist, rh, theta)
    for i, h in enumerate(rh):
        air = Air.from_relative_humidity(15.0, 1013.25, h)
        medium = air.medium()
        saved = np.geterr()
        gamma = np.array([itu676.gamma_exact(f / 1e9, air.dry_pressure_hpa, air.vapour_density,
                                             288.15).value for f in freq])
        np.seterr(**saved)
        alpha = gamma * np.log(10) / 1e4
        ff = far_field(fil, freq, theta, 0.0, medium)
        per = 0.01e12 * 3e-4 * 2 * medium.n_thz * epsilon_0 * c * np.abs(ff.cartesian[:, 0]) ** 2
        ref = (per[None, :] * np.exp(-alpha[None, :] * dist[:, None])).sum(axis=1) / dist**2
        assert_allclose(b.energy[i], ref, rtol=1e-6)
        assert_allclose(b.free_space_energy[i], per.sum() / dist**2, rtol=1e-12)
    assert isinstance(b, RangeBudget) and b.energy.shape == (2, 3)
    assert np.all(b.absorption_db > 0)


def test_budget_agrees_with_near_field_far_away():
    """At range the exact line integral (thzarray.nearfield) through the same air gives the
    budget's energy; neglected: Fresnel phase k L^2 sin^2(theta) / R and 1/(kR)."""
    fil = Filament(0.1, start=(0.0, 0.0, -0.05))
    freq = np.linspace(0.095e12, 0.105e12, 5)
    rx = NarrowbandReceiver(0.1e12, 0.01e12, polarization=(1.0, 0.0, 0.0), area=1e-4)
    theta, radius = 0.2, 1000.0
    air = Air.from_relative_humidity(15.0, 1013.25, 0.5)
    medium = air.medium()
    b = range_budget(fil, rx, freq, [radius], [0.5], theta)
    point = radius * np.array([np.sin(theta), 0.0, np.cos(theta)])
    e = attenuate(field_at(fil, freq, point, medium), freq, radius, air)
    w = received_energy(rx, freq, e, medium)
    k = 2 * np.pi * 0.105e12 * medium.n_thz / c
    bound = k * fil.length**2 * np.sin(theta) ** 2 / radius + 1 / (k * radius)
    assert_allclose(w, b.energy[0, 0], rtol=bound)


def test_broadband_detector_budget_spreading_law():
    """Free-space energy falls as 1/R^2 (inverse-square law) and equals A int R |F|^2 ..."""
    fil = Filament(0.2)
    freq = np.linspace(0.1e12, 0.5e12, 41)
    det = BroadbandDetector(freq, np.ones_like(freq), area=1e-4)
    b = range_budget(fil, det, freq, [1.0, 3.0, 9.0], [0.0], 0.1)
    medium = Air.from_relative_humidity(15.0, 1013.25, 0.0).medium()
    ff = far_field(fil, freq, 0.1, 0.0, medium)
    ref = 1e-4 * np.trapezoid(2 * medium.n_thz * epsilon_0 * c * ff.intensity, freq)
    assert_allclose(b.free_space_energy[0] * np.array([1.0, 9.0, 81.0]), ref, rtol=1e-12)


def test_bad_budget_inputs():
    fil = Filament(0.2)
    rx = NarrowbandReceiver(0.1e12, 0.01e12, area=1e-4)
    freq = np.array([0.09e12, 0.11e12])
    with pytest.raises(ValueError, match="distance"):
        range_budget(fil, rx, freq, [0.0, 1.0], [0.5], 0.1)
    with pytest.raises(ValueError, match="relative_humidity"):
        range_budget(fil, rx, freq, [1.0], [1.5], 0.1)
    with pytest.raises(ValueError, match="receiver"):
        range_budget(fil, Medium(), freq, [1.0], [0.5], 0.1)
    with pytest.raises(ValueError, match="pass band"):
        range_budget(fil, rx, np.array([0.1e12, 0.2e12]), [1.0], [0.5], 0.1)
    with pytest.raises(ValueError, match="theta"):
        range_budget(fil, rx, freq, [1.0], [0.5], 4.0)


def _section():
    text = README.read_text(encoding="utf-8")
    start = text.index(SECTION)
    end = text.find("\n## ", start + len(SECTION))
    return text[start:] if end < 0 else text[start:end]


@pytest.mark.slow
def test_readme_receiver_section_runs():
    """Every number in the README section is the output of its code (doctest)."""
    section = _section()
    assert ">>>" in section
    parser = doctest.DocTestParser()
    test = parser.get_doctest(section, {}, "README receiver section", str(README), 0)
    runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    runner.run(test)
    result = runner.summarize(verbose=False)
    assert result.failed == 0 and result.attempted > 5
