"""The complex index and transmission of humid air: P.676 absorption, dispersion, causality."""

import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import integrate
from scipy.constants import c

from thzarray import Medium
from thzarray.air.absorption import attenuation_coefficient, line_tables
from thzarray.air.lineshape import Lines, line_index, line_index_limit
from thzarray.air.refractivity import (
    P676_SCALE,
    complex_index,
    high_frequency_index,
    nitrogen_dispersion,
)
from thzarray.air.transmission import air_transmission, line_transmission

HUMID = Medium.air(20.0, 101325.0, 0.6)


@pytest.fixture(scope="module")
def itu676():
    """`itur` (test-only reference for ITU-R P.676); restore numpy's error settings."""
    saved = np.geterr()
    import itur.models.itu676 as model

    np.seterr(**saved)
    model.change_version(12)
    return model


def test_modulus_is_p676_absorption(itu676):
    """|T|^2 = exp(-alpha R) with alpha from the independent `itur` implementation of ITU-R
    P.676-12 Annex 1 (dry pressure = total - vapour); agreement 1e-6 as in test_atmosphere."""
    f_ghz = np.array([22.235, 60.0, 118.75, 183.31, 380.2, 556.936, 752.033, 987.93])
    air = HUMID.conditions
    saved = np.geterr()
    gamma = np.array([itu676.gamma_exact(f, air.dry_pressure / 100, 1e3 * air.vapour_density,
                                         293.15).value for f in f_ghz])
    np.seterr(**saved)
    r = 3.0
    t = air_transmission(f_ghz * 1e9, r, HUMID)
    assert_allclose(np.abs(t) ** 2, np.exp(-gamma * np.log(10) / 1e4 * r), rtol=1e-6)
    # The package's own P.676 absorption is reproduced to rounding (same formulas).
    f = np.linspace(1e9, 1e12, 301)
    assert_allclose(-np.log(np.abs(air_transmission(f, 10.0, HUMID)) ** 2) / 10.0,
                    attenuation_coefficient(f, HUMID), rtol=1e-9)  # log(1 - 1e-5): 1e-11 lost


def test_p676_constant():
    """P.676 eq. (1): gamma = 0.1820 f N'' dB/km; the exact constant is 4 pi 1e7 / (c ln 10)
    (alpha = 2 w Im n / c with N'' in ppm, f in GHz, and 10/ln 10 dB per neper)."""
    assert_allclose(0.1820 / P676_SCALE, 4 * np.pi * 1e7 / (c * np.log(10)), rtol=1e-15)
    assert abs(P676_SCALE - 1) < 3e-4


def test_static_limit_is_p453_and_vacuum_and_bad_medium():
    """At f -> 0 every line's dispersion vanishes (Liebe 1989: N'(0) = 0), leaving the P.453
    refractivity; the vacuum gives exp(i w R / c) (free propagation)."""
    n0 = complex_index(1e3, HUMID)
    assert_allclose(n0.real, HUMID.n_thz, rtol=0, atol=1e-13)
    f = np.array([0.1e12, 2.5e12])
    # Phases of ~4e5 rad: one ulp is ~1e-16 of the phase, so 1e-10 on the factor.
    assert_allclose(air_transmission(f, 7.0, Medium.vacuum()), np.exp(2j * np.pi * f * 7.0 / c),
                    rtol=1e-10)
    assert np.all(line_transmission(f, 7.0, Medium.vacuum()) == 1)
    with pytest.raises(ValueError, match="without air conditions"):
        air_transmission(f, 1.0, Medium(1.0003, 1.0003))
    with pytest.raises(ValueError, match="distance"):
        air_transmission(f, -1.0, HUMID)
    with pytest.warns(UserWarning, match="lines cover"):
        complex_index(1.5e12, HUMID)


def test_line_transmission_is_the_excess_over_p453():
    f = np.linspace(0.05e12, 0.95e12, 7)
    ratio = air_transmission(f, 12.0, HUMID) / line_transmission(f, 12.0, HUMID)
    # Definition: T / T_lines = exp(i w n_P453 R / c).
    assert_allclose(ratio, np.exp(2j * np.pi * f * HUMID.n_thz * 12.0 / c), rtol=1e-10)


def test_single_line_closed_form():
    """The complex van Vleck-Weisskopf shape (Liebe 1989): at the centre the absorption is
    S [1/g + g/(4 f0^2 + g^2)] and the dispersion -2 S f0 / (4 f0^2 + g^2); far above it
    tends to -2 S / f0 (closed forms of the shape)."""
    f0, s, g = 0.5e12, 2.0e3, 3.0e9
    lines = Lines([f0], [s], [g], [0.0])
    dn = line_index(np.array([f0, 1e18]), lines)
    assert_allclose(dn[0].imag, s * (1 / g + g / (4 * f0**2 + g**2)), rtol=1e-12)
    assert_allclose(dn[0].real, -2 * s * f0 / (4 * f0**2 + g**2), rtol=1e-9)
    assert_allclose(dn[1].real, -2 * s / f0, rtol=1e-5)
    assert_allclose(line_index_limit(lines), -2 * s / f0, rtol=1e-15)


@pytest.mark.parametrize("x", [1e-4, 0.03, 0.7, 1.0, 6.0, 250.0, 4e4])
def test_nitrogen_dispersion_against_quadrature(x):
    """h(x) = (2x^2/pi) PV int_0^inf dt / ((1 + t^1.5)(t^2 - x^2)), recomputed in the
    variable u = sqrt(t) (a rational integrand, PV int 2u du / ((1 + u^3)(u^4 - x^2))) with
    QUADPACK's Cauchy weight; 1e-7 covers the cubic spline between table nodes."""
    s = np.sqrt(x)
    opts = dict(limit=500, epsabs=0.0, epsrel=1e-12)

    def g(u):
        return 2 * u / ((1 + u**3) * (u**4 - x * x))

    def cauchy(u):
        return 2 * u / ((1 + u**3) * (u + s) * (u * u + x))

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", integrate.IntegrationWarning)
        v = (integrate.quad(g, 0, s / 2, **opts)[0]
             + integrate.quad(cauchy, s / 2, 2 * s, weight="cauchy", wvar=s, **opts)[0]
             + integrate.quad(g, 2 * s, np.inf, **opts)[0])
    assert_allclose(nitrogen_dispersion(x), 2 * x * x / np.pi * v, rtol=1e-7)


def _kk_real(freq, imag_of, centres, widths):
    """Kramers-Kronig: Re n(f) - n(inf) = (2/pi) PV int_0^inf f' Im n(f') / (f'^2 - f^2) df'.

    Independent quadrature: Gauss-Legendre (24 nodes) on segments refined around every line
    and the pole; the principal value uses a symmetric segment with the pole's value
    subtracted (Henrici, Applied and Computational Complex Analysis, vol. 3, sec. 14)."""
    nodes, weights = np.polynomial.legendre.leggauss(24)
    out = []
    for f in np.atleast_1d(freq):
        d = 1e-3 * f
        edges = set(np.geomspace(1e3, 1e16, 400))
        for f0, g in zip(centres, widths):
            edges |= {f0 + s * k * g for s in (-1, 1) for k in (0, 0.25, 0.5, 1, 2, 4, 8, 16, 50, 200)}
        edges = np.array(sorted([e for e in edges if e > 0 and not f - d <= e <= f + d]
                                + [f - d, f + d]))
        a, b = edges[:-1], edges[1:]
        x = 0.5 * (b - a)[:, None] * nodes + 0.5 * (b + a)[:, None]
        w = 0.5 * (b - a)[:, None] * weights
        regular = ~((a == f - d)[:, None] & np.ones_like(x, dtype=bool))
        im = imag_of(x)
        total = np.sum((w * x * im / (x * x - f * f))[regular])
        pole = (x * im / (x + f) - f * imag_of(np.array([f]))[0] / (2 * f)) / (x - f)
        total += np.sum((w * pole)[~regular])
        out.append(2 / np.pi * total)
    return np.array(out)


def test_kramers_kronig_of_the_complete_index():
    """The real part equals the Kramers-Kronig transform of the imaginary part (causality;
    J. D. Jackson, Classical Electrodynamics, 3rd ed., sec. 7.10), computed independently
    by quadrature. Tolerance 2e-10 in n (lines' dispersion ~1e-4 here): the quadrature's
    own error, checked on single lines in test_single_line_closed_form-sized cases."""
    ox, wv = line_tables()
    centres = 1e9 * np.concatenate([ox[:, 0], wv[:, 0]])
    widths = np.concatenate([np.full(ox.shape[0], 1e9), np.full(wv.shape[0], 3e9)])
    widths[-1] = 30e9

    def imag_of(x):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", UserWarning)  # far beyond 1 THz on purpose
            return complex_index(x, HUMID).imag

    freq = np.array([0.06e12, 0.3e12, 0.55e12, 0.557e12, 0.56e12, 0.75e12, 0.95e12])
    n_inf = high_frequency_index(HUMID)
    expected = _kk_real(freq, imag_of, centres, widths)
    got = complex_index(freq, HUMID).real - n_inf
    assert np.max(np.abs(got)) > 1e-5  # the check has something to check
    assert_allclose(got, expected, rtol=0, atol=2e-10)


def test_pulse_is_causal_and_rings_after():
    """A short pulse through 30 m of humid air: no energy ahead of the front R n(inf)/c
    beyond the input pulse's own Gaussian tail, while a transmission with the same modulus
    and no phase (acausal by construction) puts energy ahead of it (Titchmarsh's theorem:
    causal <=> Kramers-Kronig pair, Nussenzveig, Causality and Dispersion Relations, ch. 1)."""
    duration, fmax = 4e-9, 1.0e12
    df = 1 / duration
    freq = np.arange(1, int(fmax / df) + 1) * df
    sigma, t0 = 0.8e-12, 0.5e-9
    # A Gaussian's time derivative (no zero-frequency part, which a sum from f > 0 lacks).
    pulse = 1j * freq * sigma * np.exp(-0.5 * (2 * np.pi * freq * sigma) ** 2
                                       + 2j * np.pi * freq * t0)
    r = 30.0
    front = r * high_frequency_index(HUMID) / c
    t_full = air_transmission(freq, r, HUMID) * np.exp(-2j * np.pi * freq * front)
    n = 2 * (freq.size + 1)
    time = np.arange(n) / (n * df)

    def field(spectrum):
        x = np.zeros(n, dtype=complex)
        x[1:freq.size + 1] = spectrum
        return 2 * df * np.real(np.fft.fft(x))

    ahead = time < t0 - 8 * sigma
    for trans, causal in ((t_full, True), (np.abs(t_full), False)):
        e = field(pulse * trans)
        fraction = np.sum(e[ahead] ** 2) / np.sum(e**2)
        if causal:
            assert fraction < 1e-12
        else:
            assert fraction > 1e-4
    e = field(pulse * t_full)
    after = time > t0 + 8 * sigma
    assert np.sum(e[after] ** 2) / np.sum(e**2) > 1e-3  # the water lines ring afterwards
