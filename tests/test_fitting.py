import importlib.util
import json
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, e, epsilon_0, m_e
from scipy.special import erf
from scipy.stats import binom, chi2

from thzarray import Filament, Medium, cone_angle, far_field
from thzarray.app.scans import fit_command_result, fit_summary, parse_scan_csv
from thzarray.app.scans import read_scan as read_scan_csv
from thzarray.app.units import parse_quantity
from thzarray.field.nearfield import field_at
from thzarray.inverse.scans import UNITS, fit_delay_scan, fit_scan
from thzarray.source.plasma import Plasma

ROOT = Path(__file__).resolve().parents[1]
AIR = Medium.air()
FREQ = 0.3e12
# Invented truth for the synthetic scans (no physical source: test scenario).
TRUE = dict(length=0.2, mismatch=3e-5, amplitude=2.0, background=0.1)
ANGLES = np.radians(np.linspace(0.5, 15.0, 60))
NOISE = 0.02
ONE_SIGMA = erf(1 / np.sqrt(2))  # probability of |x| < 1 sigma for a Gaussian, 0.6827
SEEDS = 100


def model_medium(mismatch):
    return Medium(AIR.n_thz + mismatch, AIR.n_thz)


def far_scan(theta, freq=FREQ, weights=None, pol=None, **p):
    """The model of fit_scan's docstring built here from far_field and cone_angle directly.

    Band sums use the trapezoid rule (numpy.trapezoid's weights: half the neighbouring
    intervals), times the spectral weight.
    """
    p = TRUE | p
    med = model_medium(p["mismatch"])
    freq = np.atleast_1d(freq)
    w = np.ones_like(freq) if weights is None else np.asarray(weights, float)
    if freq.size > 1:
        w = w * np.array([np.trapezoid(np.eye(freq.size)[j], freq) for j in range(freq.size)])
    w = w / w.sum()
    fil = Filament(p["length"])

    def power(vec):
        return (np.sum(np.abs(vec) ** 2, -1) if pol is None else np.abs(vec @ pol) ** 2)

    ref = np.sum(w * power(far_field(fil, freq, cone_angle(p["length"], np.sum(w * freq), med),
                                     0.0, med).cartesian))
    pat = np.tensordot(w, power(far_field(fil, freq[:, None], theta[None, :], 0.0,
                                          med).cartesian), axes=(0, 0))
    return p["amplitude"] * pat / ref + p["background"]


def coverage_bounds(n):
    return binom.interval(0.999, n, ONE_SIGMA)


# --- recovery and coverage ----------------------------------------------------------------

@pytest.mark.slow
def test_far_field_coverage():
    # Synthetic scans from the model with seeded Gaussian noise: the fraction of fits whose
    # 1-sigma interval holds the truth follows Binomial(100, 0.6827) (Gaussian statistics of a
    # linearised least-squares fit; bounds at 99.9 %), and the sum of chi2 over the seeds
    # follows chi2 with 100 * dof degrees of freedom. The errors a fit without sigma would
    # report are these errors times sqrt(chi2/dof) / noise (identity checked in
    # test_model_definition_and_residual_data); their coverage is checked as well.
    clean = far_scan(ANGLES)
    hits = dict.fromkeys(TRUE, 0)
    hits_scaled = dict.fromkeys(TRUE, 0)
    chi2_total, dof_total = 0.0, 0
    for seed in range(SEEDS):
        y = clean + np.random.default_rng(seed).normal(0.0, NOISE, ANGLES.size)
        fit = fit_scan(ANGLES, y, FREQ, sigma=NOISE, medium=AIR)
        assert fit.ok and not fit.errors_scaled
        for name in TRUE:
            miss = abs(fit.params[name] - TRUE[name])
            hits[name] += miss < fit.errors[name]
            hits_scaled[name] += miss < fit.errors[name] * np.sqrt(fit.chi2_dof)
        chi2_total += fit.chi2
        dof_total += fit.dof
    lo, hi = coverage_bounds(SEEDS)
    for name in TRUE:
        assert lo <= hits[name] <= hi, (name, hits[name])
        assert lo <= hits_scaled[name] <= hi, (name, hits_scaled[name])
    lo, hi = chi2.interval(0.999, dof_total)
    assert lo <= chi2_total <= hi


def test_delay_scan_coverage():
    # Two columns 3 mm apart, second pulse 0.4 ps late (invented); detectors at 4, 8, 12 deg;
    # the data are built from far_field of the two Filaments with their delays (the sum the
    # fit replaces by F1 + F2 exp(i w (tau + t0))). Coverage as in test_far_field_coverage.
    band = np.linspace(0.2e12, 1.0e12, 9)
    length, spacing, offset = 0.1, 3e-3, 0.4e-12
    angles = np.radians([4.0, 8.0, 12.0])
    tau, theta = (a.ravel() for a in np.meshgrid(np.linspace(-2e-12, 2e-12, 41), angles))
    clean = np.array([np.mean(far_field([Filament(length),
                                         Filament(length, start=(spacing, 0, 0),
                                                  delay=t + offset)],
                                        band, a, 0.0, AIR).magnitude_squared)
                      for t, a in zip(tau, theta)])
    clean = 3.0 * clean / clean.max() + 0.2
    hits = {"spacing": 0, "timing_offset": 0}
    for seed in range(SEEDS):
        y = clean + np.random.default_rng(seed).normal(0.0, 0.03, clean.size)
        fit = fit_delay_scan(tau, theta, y, band, length, sigma=0.03, medium=AIR)
        assert fit.ok
        hits["spacing"] += abs(fit.params["spacing"] - spacing) < fit.errors["spacing"]
        hits["timing_offset"] += abs(fit.params["timing_offset"] - offset) < fit.errors[
            "timing_offset"]
    lo, hi = coverage_bounds(SEEDS)
    assert all(lo <= v <= hi for v in hits.values()), hits
    assert_allclose(fit.evaluate(tau, angle=theta), fit.model, rtol=1e-12)


def test_band_and_polarization_fit():
    # A weighted band and a detector behind an x polarizer; truth within 3 sigma (3 seeds).
    band = np.linspace(0.2e12, 0.4e12, 7)
    weights = np.exp(-(((band - 0.3e12) / 0.1e12) ** 2))
    pol = np.array([1.0, 0.0, 0.0])
    clean = far_scan(ANGLES, band, weights, pol)
    for seed in range(3):
        y = clean + np.random.default_rng(seed).normal(0.0, NOISE, ANGLES.size)
        fit = fit_scan(ANGLES, y, band, sigma=NOISE, polarization=pol, detector_response=weights,
                       medium=AIR)
        for name in TRUE:
            assert abs(fit.params[name] - TRUE[name]) < 3 * fit.errors[name], name


def test_model_definition_and_residual_data():
    # The fitted curve is the documented model: evaluate() at the best fit equals the
    # construction from far_field and cone_angle in this file.
    y = far_scan(ANGLES) + np.random.default_rng(5).normal(0.0, NOISE, ANGLES.size)
    fit = fit_scan(ANGLES, y, FREQ, sigma=NOISE, medium=AIR)
    assert_allclose(fit.model, far_scan(ANGLES, **fit.params), rtol=1e-12)
    fine = np.radians(np.linspace(0.1, 20.0, 7))
    assert_allclose(fit.evaluate(fine), far_scan(fine, **fit.params), rtol=1e-12)
    plot = fit.residual_plot_data()
    assert_allclose(plot["residuals"], y - fit.model, rtol=0, atol=1e-15)
    assert_allclose(plot["normalized_residuals"], (y - fit.model) / NOISE, rtol=1e-12)
    assert_allclose(fit.chi2, np.sum(((y - fit.model) / NOISE) ** 2), rtol=1e-12)
    assert fit.dof == ANGLES.size - 4 and set(fit.params) == set(TRUE)
    assert_allclose(np.diag(fit.correlation), 1.0, rtol=1e-12)
    assert_allclose(fit.correlation, fit.correlation.T, rtol=1e-12)
    # Without sigma the same data give the same parameters and errors scaled by sqrt(chi2/dof)
    # (definition of the scaled covariance).
    free = fit_scan(ANGLES, y, FREQ, medium=AIR)
    scale = np.sqrt(free.chi2_dof)
    for name in TRUE:
        assert abs(free.params[name] - fit.params[name]) < 1e-4 * fit.errors[name]
        assert_allclose(free.errors[name], fit.errors[name] / NOISE * scale, rtol=1e-4)
    assert_allclose(free.normalized_residuals, free.residuals / scale, rtol=1e-12)
    # The signal's unit does not matter: data 1e-20 times smaller give the same length and
    # mismatch, and amplitude, background and their errors 1e-20 times smaller.
    tiny = fit_scan(ANGLES, 1e-20 * y, FREQ, medium=AIR)
    for name in TRUE:
        unit = 1e-20 if UNITS[name] == "signal" else 1.0
        assert abs(tiny.params[name] / unit - free.params[name]) < 1e-3 * free.errors[name]
        assert_allclose(tiny.errors[name] / unit, free.errors[name], rtol=1e-3)


def near_scan(theta, distance, start, **p):
    """Finite-distance model: |R E|^2 at R (sin t, 0, cos t), over the far-field cone value."""
    p = TRUE | p
    med = model_medium(p["mismatch"])
    ref = far_field(Filament(p["length"]), FREQ, cone_angle(p["length"], FREQ, med), 0.0,
                    med).magnitude_squared
    pts = distance * np.stack([np.sin(theta), 0 * theta, np.cos(theta)], -1)
    e = field_at(Filament(p["length"], start=(0, 0, start)), FREQ, pts, med)
    return p["amplitude"] * np.sum(np.abs(distance * e) ** 2, -1) / ref + p["background"]


def test_finite_distance_fit():
    # Data from thzarray.field.nearfield.field_at (exact line integral of Jackson eq. 9.18) at
    # 0.6 m; the fit recovers length, start and mismatch within 3 sigma (one seed). Length,
    # start and amplitude are close to degenerate at one distance; the fit says so in a note.
    theta = np.radians(np.arange(0.5, 14.0, 0.25))
    truth = TRUE | dict(length=0.3, start=-0.15, mismatch=4e-5, amplitude=1.0,
                        background=0.02)
    clean = near_scan(theta, 0.6, **truth)
    for seed in range(1):
        y = clean + np.random.default_rng(seed).normal(0.0, 0.002, theta.size)
        fit = fit_scan(theta, y, FREQ, distance=0.6, sigma=0.002, medium=AIR)
        assert fit.kind == "finite-distance scan" and "start" in fit.params
        for name, value in truth.items():
            assert abs(fit.params[name] - value) < 3 * fit.errors[name], name
        assert any(m.startswith("note: length and start are correlated") for m in fit.messages)


def test_finite_distance_tends_to_far_field():
    # Far away R e^{-ikR} E -> F (nearfield docstring), so the finite-distance model at
    # 300 m reproduces the far-field fit of far-field data (to the parallax of the column's
    # 0.2 m over 300 m).
    y = far_scan(ANGLES) + np.random.default_rng(9).normal(0.0, NOISE, ANGLES.size)
    far = fit_scan(ANGLES, y, FREQ, sigma=NOISE, medium=AIR)
    near = fit_scan(ANGLES, y, FREQ, distance=300.0, sigma=NOISE, medium=AIR,
                    fixed={"start": -0.1})
    for name in TRUE:
        assert abs(near.params[name] - far.params[name]) < 0.05 * far.errors[name], name


def test_bundled_synthetic_scan():
    # designs/scan_synthetic.csv is reproducible from its script, and the fit recovers the
    # script's invented truth within 3 sigma.
    spec = importlib.util.spec_from_file_location("make_scan",
                                                  ROOT / "designs" / "make_scan_synthetic.py")
    make = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(make)
    path = ROOT / "designs" / "scan_synthetic.csv"
    assert path.read_text(encoding="utf-8") == make.make_text()
    assert "INVENTED DATA" in path.read_text(encoding="utf-8").splitlines()[0]
    angle, signal, sigma, meta = read_scan_csv(path, to_si=parse_quantity)
    assert meta["freq"] == pytest.approx(make.FREQ, rel=1e-15)
    assert_allclose(signal, make.clean_signal(angle), atol=5 * make.SIGMA)
    fit = fit_scan(angle, signal, meta["freq"], sigma=sigma)
    assert fit.ok
    for name, value in make.TRUE.items():
        assert abs(fit.params[name] - value) < 3 * fit.errors[name], name


# --- unconstrained parameters -------------------------------------------------------------

def test_one_angle_delay_scan_is_degenerate():
    # At one angle the fringes depend only on t0 - n_T d sin(theta)/c (module docstring):
    # spacing and timing cannot be separated.
    band = np.linspace(0.2e12, 1.0e12, 9)
    tau = np.linspace(-2e-12, 2e-12, 61)
    theta = np.full(tau.shape, np.radians(6.0))
    clean = np.array([np.mean(far_field([Filament(0.1),
                                         Filament(0.1, start=(3e-3, 0, 0), delay=t + 0.4e-12)],
                                        band, a, 0.0, AIR).magnitude_squared)
                      for t, a in zip(tau, theta)])
    y = clean / clean.max() + np.random.default_rng(1).normal(0.0, 0.01, tau.size)
    fit = fit_delay_scan(tau, theta, y, band, 0.1, sigma=0.01, medium=AIR)
    assert not fit.ok
    assert not fit.constrained["spacing"] and not fit.constrained["timing_offset"]
    assert fit.constrained["amplitude"]
    assert any("near-singular" in m and "spacing" in m for m in fit.messages)
    with pytest.raises(ValueError, match="spacing, timing_offset: the covariance is near"):
        fit_delay_scan(tau, theta, y, band, 0.1, sigma=0.01, medium=AIR, strict=True)
    fixed = fit_delay_scan(tau, theta, y, band, 0.1, sigma=0.01, medium=AIR,
                           fixed={"spacing": 3e-3})
    assert fixed.ok and abs(fixed.params["timing_offset"] - 0.4e-12) < 3 * fixed.errors[
        "timing_offset"]


def test_mismatch_of_a_short_column_is_unconstrained():
    # A 2 cm column at 0.3 THz has its cone near 30 deg where 1 - cos(theta) ~ 0.13 dwarfs
    # any air mismatch (|n_g - n_T| < 1e-4): the fit flags it with a message.
    theta = np.radians(np.linspace(2.0, 80.0, 60))
    clean = far_scan(theta, length=0.02, mismatch=1e-5, amplitude=1.0, background=0.0)
    y = clean + np.random.default_rng(2).normal(0.0, 0.02, theta.size)
    fit = fit_scan(theta, y, FREQ, sigma=0.02, medium=AIR)
    assert not fit.ok and not fit.constrained["mismatch"] and fit.constrained["length"]
    assert fit.errors["mismatch"] > 1e-4
    assert any(m.startswith("mismatch: 1-sigma error") and "fixed={'mismatch'" in m
               for m in fit.messages)
    assert fit_scan(theta, y, FREQ, sigma=0.02, medium=AIR, fixed={"mismatch": 1e-5}).ok


def test_parameter_without_effect():
    # With the amplitude held at zero the model is flat: length and mismatch change nothing.
    y = 0.1 + np.random.default_rng(3).normal(0.0, NOISE, ANGLES.size)
    fit = fit_scan(ANGLES, y, FREQ, sigma=NOISE, medium=AIR, fixed={"amplitude": 0.0})
    assert not fit.constrained["length"] and not fit.constrained["mismatch"]
    assert fit.constrained["background"] and np.isinf(fit.errors["length"])
    assert any(m.startswith("length: changing it does not change the model") for m in
               fit.messages)


def test_bad_fit_arguments():
    y = far_scan(ANGLES)
    with pytest.raises(ValueError, match="parameter 'start' is not allowed"):
        fit_scan(ANGLES, y, FREQ, fixed={"start": 0.0})  # far field: start does not enter
    with pytest.raises(ValueError, match="signal has shape"):
        fit_scan(ANGLES, y[:-1], FREQ)
    with pytest.raises(ValueError, match="angle = "):
        fit_scan(-ANGLES, y, FREQ)
    with pytest.raises(ValueError, match="points; allowed: more points than the 4"):
        fit_scan(ANGLES[:4], y[:4], FREQ)
    with pytest.raises(ValueError, match="polarization = a direction that sees no field"):
        fit_scan(ANGLES, y, FREQ, polarization=(0.0, 1.0, 0.0))
    with pytest.raises(ValueError, match="sigma"):
        fit_scan(ANGLES, y, FREQ, sigma=-1.0)


# --- declared spectra and the mismatch's predictions --------------------------------------

BAND = np.linspace(0.2e12, 0.4e12, 7)


def test_declared_source_spectrum_recovers_the_length():
    # A noise-free band scan from a source whose radiated field spectrum |w I(w)|^2 is flat
    # (so the current's power spectrum is f^-2), built here from far_field (far_scan) with
    # the trapezoid weights times that spectrum. Declared, the fit returns the truth; left
    # at the old implicit default (flat current, a field growing with f) it fits a column
    # about 9 % short, and now says what it assumed.
    current = BAND**-2.0
    y = far_scan(ANGLES, BAND, current)
    fit = fit_scan(ANGLES, y, BAND, source_spectrum=current, medium=AIR)
    for name in TRUE:
        assert_allclose(fit.params[name], TRUE[name], rtol=1e-6, err_msg=name)
    assert fit.assumptions == {"source_spectrum": "given at the 7 band frequencies",
                               "detector_response": "flat detector response (assumed: not "
                                                    "given)"}
    assert any(m.startswith("note: detector_response not given") for m in fit.messages)
    implicit = fit_scan(ANGLES, y, BAND, medium=AIR)
    assert implicit.params["length"] < 0.95 * TRUE["length"]
    assert implicit.assumptions["source_spectrum"] == "flat current spectrum (assumed: not given)"
    assert any("source_spectrum and detector_response not given" in m
               for m in implicit.messages)


@pytest.mark.slow
def test_flat_current_and_detector_declared_separately():
    # Flat current spectrum and a Gaussian detector response, declared separately: the
    # truth, and no note. A Plasma's own current spectrum declared as the source: the truth.
    detector = np.exp(-(((BAND - 0.3e12) / 0.1e12) ** 2))
    y = far_scan(ANGLES, BAND, detector)
    fit = fit_scan(ANGLES, y, BAND, source_spectrum=np.ones(BAND.size),
                   detector_response=detector, medium=AIR)
    for name in TRUE:
        assert_allclose(fit.params[name], TRUE[name], rtol=1e-6, err_msg=name)
    assert not any("not given" in m for m in fit.messages)
    plasma = Plasma(electron_density=1e22, collision_rate=2e12)
    current = np.abs(plasma.current_spectrum(BAND, AIR.n_group)) ** 2
    y = far_scan(ANGLES, BAND, current * detector)
    fit = fit_scan(ANGLES, y, BAND, source_spectrum=plasma, detector_response=detector,
                   medium=AIR)
    assert_allclose(fit.params["length"], TRUE["length"], rtol=1e-6)
    assert fit.assumptions["source_spectrum"].startswith("|I(f)|^2 of the given Plasma")


def test_spectra_do_not_enter_one_frequency_and_are_checked():
    y = far_scan(ANGLES)
    fit = fit_scan(ANGLES, y, FREQ, medium=AIR)
    assert set(fit.assumptions.values()) == {"one frequency: the spectra do not enter"}
    assert not any("not given" in m for m in fit.messages)
    with pytest.raises(ValueError, match="source_spectrum has shape"):
        fit_scan(ANGLES, far_scan(ANGLES, BAND), BAND, source_spectrum=np.ones(3))
    with pytest.raises(ValueError, match="detector_response"):
        fit_scan(ANGLES, far_scan(ANGLES, BAND), BAND, detector_response=-np.ones(BAND.size))
    with pytest.raises(ValueError, match="all zero"):
        fit_scan(ANGLES, far_scan(ANGLES, BAND), BAND, detector_response=np.zeros(BAND.size))


def test_fitted_mismatch_next_to_its_predictions():
    # A column driven in its own plasma: n_g = Ciddor's n_g + n_e / (2 n_c), n_c = eps0 m
    # w0^2 / e^2 (cold plasma, Chen), computed here. The noise-free scan fits that mismatch,
    # far from linear air's, and the fit reports both predictions beside it.
    n_e = 1.3e23
    n_c = epsilon_0 * m_e * (2 * np.pi * c / 800e-9) ** 2 / e**2
    with_plasma = AIR.mismatch + n_e / (2 * n_c)
    y = far_scan(ANGLES, mismatch=with_plasma)
    fit = fit_scan(ANGLES, y, FREQ, medium=AIR, electron_density=n_e)
    assert fit.predicted["mismatch_linear_air"] == AIR.mismatch
    assert_allclose(fit.predicted["mismatch_with_plasma"], with_plasma, rtol=1e-12)
    assert_allclose(fit.params["mismatch"], with_plasma, rtol=1e-6)
    assert fit.params["mismatch"] > 4 * fit.predicted["mismatch_linear_air"]
    plain = fit_scan(ANGLES, y, FREQ, medium=AIR)
    assert set(plain.predicted) == {"mismatch_linear_air"}


# --- reading scans ------------------------------------------------------------------------

GOOD = """# a comment
# freq = 0.3 THz
# range = 150 cm
# operator = someone
angle_deg, signal, sigma
{rows}
"""


def rows(n=8, angle_unit_scale=1.0):
    return "\n".join(f"{(i + 1) * angle_unit_scale:g}, {0.1 * i:g}, 0.01" for i in range(n))


def test_read_scan_csv(tmp_path):
    path = tmp_path / "scan.csv"
    path.write_text(GOOD.format(rows=rows()), encoding="utf-8")
    angle, signal, sigma, meta = read_scan_csv(path, to_si=parse_quantity)
    assert_allclose(angle, np.radians(np.arange(1, 9)), rtol=1e-15)
    assert_allclose(signal, 0.1 * np.arange(8), rtol=1e-15)
    assert_allclose(sigma, 0.01)
    assert meta == {"freq": pytest.approx(3e11, rel=1e-15), "range": pytest.approx(1.5),
                    "operator": "someone"}
    # Without a unit reader the core keeps unit strings as text; plain numbers are SI.
    assert parse_scan_csv(path.read_text())[3]["freq"] == "0.3 THz"
    assert read_scan_csv(path)[3]["freq"] == pytest.approx(3e11)  # files: units read
    text = GOOD.format(rows=rows()).replace("0.3 THz", "3e11")
    assert parse_scan_csv(text)[3]["freq"] == 3e11
    angle_mrad, *_ = parse_scan_csv("angle_mrad,signal\n" + rows().replace(", 0.01", ""))
    assert_allclose(angle_mrad, 1e-3 * np.arange(1, 9), rtol=1e-15)
    _, _, no_sigma, _ = parse_scan_csv("angle_rad,signal\n" + rows(angle_unit_scale=0.01)
                                       .replace(", 0.01", ""))
    assert no_sigma is None


@pytest.mark.parametrize("text, message", [
    ("angle_deg, sigma\n" + rows(8).replace(", 0.01", ""),
     "the header has no 'signal' column"),
    ("signal, sigma\n" + rows(8).replace(", 0.01", ""), "the header has no 'angle' column"),
    ("angle_deg, signal, noise\n" + rows(8), "column 'noise' is not allowed"),
    ("angle_furlong, signal\n" + rows(8).replace(", 0.01", ""),
     "column 'angle_furlong' is not allowed"),
    ("angle_deg, signal, sigma\n" + rows(8).replace("3, 0.2", "3, abc"),
     r"row 3 \(line 4\), column 'signal': 'abc' is not a number"),
    ("angle_deg, signal, sigma\n" + rows(8).replace("3, 0.2", "3, nan"),
     "column 'signal': 'nan' is not a number"),
    ("angle_deg, signal, sigma\n" + rows(8).replace("2, 0.1", "-2, 0.1"),
     r"row 2 \(line 3\), column 'angle_deg': -2 is outside the allowed range 0 to 180 deg"),
    ("angle_deg, signal, sigma\n" + rows(5), "5 data rows; allowed: at least 6"),
    ("angle_deg, signal, sigma\n" + rows(8).replace("4, 0.3, 0.01", "4, 0.3"),
     r"row 4 \(line 5\): 2 cells; allowed: 3 cells"),
    ("angle_deg, signal, sigma\n" + rows(8).replace("5, 0.4, 0.01", "5, 0.4, 0"),
     "column 'sigma': 0 is not allowed; allowed: uncertainties > 0"),
    ("# only comments\n", "no header line"),
    ("# freq = 3 m\nangle_deg, signal\n" + rows(8).replace(", 0.01", ""),
     "line 1: freq = .* is not a frequency"),
])
def test_malformed_csv(tmp_path, text, message):
    path = tmp_path / "bad.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(ValueError, match=message):
        read_scan_csv(path, to_si=parse_quantity)


def test_fit_command_result(tmp_path):
    path = ROOT / "designs" / "scan_synthetic.csv"
    out = fit_command_result(path, to_si=parse_quantity)
    text = json.dumps(out, allow_nan=False)  # JSON-ready: no NaN or inf, plain types
    back = json.loads(text)
    angle, signal, sigma, meta = read_scan_csv(path, to_si=parse_quantity)
    fit = fit_scan(angle, signal, meta["freq"], sigma=sigma)
    assert back["params"] == pytest.approx(fit.params, rel=1e-12)
    assert back["errors"] == pytest.approx(fit.errors, rel=1e-12)
    assert back["units"] == {k: UNITS[k] for k in fit.params}
    assert back["model"] == "far-field scan" and back["ok"] is True
    assert back["freq_hz"] == pytest.approx(3e11) and back["range_m"] is None
    assert len(back["residuals"]["residual"]) == angle.size
    again = fit_command_result(path, freq="300 GHz", to_si=parse_quantity)
    assert again["params"] == pytest.approx(out["params"], rel=1e-12)
    assert fit_command_result(path, freq=3e11)["params"] == pytest.approx(out["params"],
                                                                          rel=1e-12)
    assert fit_command_result(path)["params"] == pytest.approx(out["params"], rel=1e-12)
    with pytest.raises(ValueError, match="'0.3 THz' is a unit string; allowed: an SI number"):
        fit_summary(parse_scan_csv(path.read_text()), str(path))
    bare = tmp_path / "bare.csv"
    bare.write_text("angle_deg,signal\n" + rows(8).replace(", 0.01", ""), encoding="utf-8")
    with pytest.raises(ValueError, match="freq: not given"):
        fit_command_result(bare)
