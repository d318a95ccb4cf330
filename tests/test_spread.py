"""Published spreads of the laser model's constants, propagated to absolute energies."""
import numpy as np
import pytest
from numpy.testing import assert_allclose

from thzarray import Medium, Pulse, plasma_from_laser, source_spectral_energy, total_energy
from thzarray.base.band import band_weights
from thzarray.source.constants import PUBLISHED
from thzarray.source.ionization import CLAMPED_INTENSITY, electron_density
from thzarray.source.laser import FilamentationModel
from thzarray.source.spread import EnergyRange, energy_range

PULSE = Pulse(1e-3, 50e-15, 5e-3, focal_length=1.0)


def test_combination_rule_with_closed_form_energies():
    # A stand-in "energy" n_e a^4 whose dependence on each constant is known in closed form:
    # n_e proportional to sigma_8 below saturation (checked against the rate equation in
    # test_laser) and to I^8; a^4 for the core radius; nothing else enters.
    def stand_in(filament, plasma, estimate):
        return estimate.electron_density * plasma.radius**4

    res = energy_range(stand_in, PULSE)
    n0 = float(electron_density(CLAMPED_INTENSITY, 50e-15))
    assert_allclose(res.nominal, n0 * 50e-6**4, rtol=1e-12)
    sig = PUBLISHED["o2_cross_section"]
    inten = PUBLISHED["clamped_intensity"]
    expected = {
        "o2_cross_section": tuple(float(electron_density(CLAMPED_INTENSITY, 50e-15, sigma=s))
                                  / n0 for s in (sig.low, sig.high)),
        "clamped_intensity": tuple(float(electron_density(i, 50e-15)) / n0
                                   for i in (inten.low, inten.high)),
        "core_radius": (0.5**4, 2.0**4),
        "n2": (1.0, 1.0), "collision_rate": (1.0, 1.0), "collapse_factor": (1.0, 1.0),
    }
    assert set(res.ratios) == set(expected)
    for name, pair in expected.items():
        assert_allclose(res.ratios[name], pair, rtol=1e-12, err_msg=name)
    lows = np.prod([min(1.0, *p) for p in expected.values()])
    highs = np.prod([max(1.0, *p) for p in expected.values()])
    low, nominal, high = res
    assert_allclose((low, high), (nominal * lows, nominal * highs), rtol=1e-12)
    # Largest high/low: the core radius (2^4 / 0.5^4 = 256) just beats the clamped intensity
    # (O2 depletion caps the high end at a factor 41; the low end is 0.8^8).
    spans = {k: max(1.0, *p) / min(1.0, *p) for k, p in expected.items()}
    assert res.dominant == max(spans, key=spans.get) == "core_radius"
    assert "published constants" in res.describe()


def test_variant_without_filament_gives_zero():
    # 0.3 mJ, 50 fs: 5.6 GW peak, above the nominal P_cr (3.0 GW) but below the 12 GW of the
    # low published n2 (P_cr = 3.77 lambda^2 / (8 pi n2), Marburger): no filament, energy 0.
    pulse = PULSE.replace(energy=0.3e-3)
    res = energy_range(lambda f, p, e: f.length, pulse)
    assert res.ratios["n2"][0] == 0.0 and res.low == 0.0
    assert any(n.startswith("n2 at its low end") for n in res.notes)


def test_energy_range_rejects_bad_callables():
    with pytest.raises(ValueError, match="compute_energy"):
        energy_range(1.0, PULSE)
    with pytest.raises(ValueError, match="compute_energy returned"):
        energy_range(lambda f, p, e: -1.0, PULSE)
    with pytest.raises(ValueError, match="compute_energy returned"):
        energy_range(lambda f, p, e: float("nan"), PULSE)
    with pytest.raises(ValueError, match="positive energy"):
        energy_range(lambda f, p, e: 0.0, PULSE)


@pytest.mark.slow
def test_single_colour_energy_lies_in_its_published_range():
    # 1 mJ, 50 fs, 800 nm, f = 1 m: the column and plasma of plasma_from_laser, its THz energy
    # over 0.1-3 THz by total_energy (sphere quadrature). The range comes from the
    # independent source-space route (source_spectral_energy) for speed; the two routes must
    # give the same nominal energy.
    medium = Medium.air()
    band = np.linspace(0.1e12, 3e12, 16)
    filament, plasma, _ = plasma_from_laser(PULSE, medium=medium)
    energy = total_energy(filament, band, medium, plasma)

    def source_route(fil, pl, est):
        return float(np.sum(band_weights(band) * source_spectral_energy(fil, band, medium, pl)))

    res = energy_range(source_route, PULSE, medium=medium)
    assert isinstance(res, EnergyRange)
    assert_allclose(res.nominal, energy, rtol=1e-8)
    assert res.low < energy < res.high
    # Measured single-colour conversion efficiencies are of order 1e-9, a few pJ from mJ
    # pulses (from memory; e.g. as summarised by Mitryukovskiy et al., Appl. Phys. B (2014)).
    # The range must not exclude that order: 1 pJ from this 1 mJ pulse lies inside it. (The
    # nominal energy itself is compared with it in the report, not forced here.)
    measured = 1e-9 * PULSE.energy
    assert res.low < measured < res.high
    # The O2 cross-section alone: its low published end (11.5 x below nominal) moves the
    # energy by more than a factor 10 (the density falls, and the resonance with it).
    assert min(res.ratios["o2_cross_section"]) < 0.1


def test_model_spread_defaults_follow_the_table():
    model = FilamentationModel(n2=4e-23)
    assert model.spread()["n2"] == (0.8e-23, 4e-23, 5e-23)
    names = [name for name, _, _ in model.variants()]
    assert names.count("n2") == 2 and names.count("collapse_factor") == 1
