"""HITRAN-format line lists: parser, intensity conversion, agreement with ITU-R P.676."""

from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c

from thzarray import Medium
from thzarray.air.absorption import attenuation_coefficient, line_tables
from thzarray.air.hitran import LineList, hitran_lines, parse_hitran
from thzarray.air.lineshape import line_index
from thzarray.air.medium import AirConditions
from thzarray.air.refractivity import complex_index

DATA = Path(__file__).parent / "data"
# cm K, second radiation constant hc/k from the exact SI values of h, c, k (2019 SI).
C2 = 100 * 6.62607015e-34 * 299792458.0 / 1.380649e-23
K_CGS = 1.380649e-16  # erg/K, Boltzmann constant (CODATA 2018, exact)
ATM = 101325.0  # Pa


def _record(mol, iso, nu, s, gair, gself, elow, nair, dair=0.0):
    """One HITRAN 2004 record (Rothman et al., JQSRT 96, 139 (2005), Table 1), written
    independently of the parser: I2, I1, F12.6, E10.3, E10.3, F5.4, F5.3, F10.4, F4.2, F8.6,
    then 93 characters of quantum numbers, codes and weights."""
    g = f"{gair:6.4f}"[1:]
    d = f"{dair:9.6f}".replace("-0.", "-.").replace(" 0.", "0.").strip()
    head = (f"{mol:2d}{iso:1d}{nu:12.6f}{s:10.3E}{0.0:10.3E}{g}{gself:5.3f}{elow:10.4f}"
            f"{nair:4.2f}{d:>8s}")
    return head + " " * 93


def test_parser_reads_every_column():
    """Values of tests/data/hitran_synthetic.par (invented records), read back in SI:
    1 cm^-1 = 100 c Hz; 1 cm^-1/atm = 100 c / 101325 Hz/Pa; 1 cm^-1 = 100 h c J."""
    text = (DATA / "hitran_synthetic.par").read_text()
    lst = parse_hitran(text)
    assert lst.size == 4 and lst.molecules == (1, 2, 5)
    assert list(lst.molecule) == [1, 1, 2, 5] and list(lst.isotopologue) == [1, 1, 1, 1]
    assert_allclose(lst.centre, 100 * c * np.array([40.0, 55.5, 60.25, 3.845033]), rtol=1e-15)
    assert_allclose(lst.intensity, 1e-2 * np.array([1.0e-19, 2.5e-20, 4.0e-23, 2.0e-23]))
    assert_allclose(lst.gamma_air, 100 * c / ATM * np.array([0.1, 0.0875, 0.07, 0.06]))
    assert_allclose(lst.gamma_self, 100 * c / ATM * np.array([0.5, 0.425, 0.09, 0.07]))
    assert_allclose(lst.lower_energy, 100 * 6.62607015e-34 * c * np.array(
        [100.0, 250.125, 30.5, 0.0]), rtol=1e-12)
    assert_allclose(lst.n_air, [0.75, 0.68, 0.72, 0.73])
    assert_allclose(lst.delta_air, 100 * c / ATM * np.array([0.0, -0.003125, 0.001, 0.0]))
    assert lst.coverage == (0.0, lst.centre.max())


@pytest.mark.parametrize("text, match", [
    ("1 1 40.0", "160"),
    ("x" * 160, "molecule"),
    ("", "no line records"),
])
def test_parser_refuses_bad_records(text, match):
    with pytest.raises(ValueError, match=match):
        parse_hitran(text)


def test_bad_settings():
    text = (DATA / "hitran_synthetic.par").read_text()
    with pytest.raises(ValueError, match="use"):
        parse_hitran(text, use="instead")
    with pytest.raises(ValueError, match="mole_fractions"):
        hitran_lines(parse_hitran(text), AirConditions())  # CO (5) has no fraction
    with pytest.raises(ValueError, match="mole_fractions"):
        parse_hitran(text, mole_fractions={5: 2.0})
    with pytest.raises(ValueError, match="coverage"):
        parse_hitran(text, coverage=(2e12, 1e12))


def _single(temperature_c, pressure, vapour):  # noqa: D103
    lst = parse_hitran(_record(1, 1, 40.0, 1.0e-19, 0.1, 0.5, 100.0, 0.75, -0.002))
    air = AirConditions(temperature_c, pressure, vapour)
    return lst, air, hitran_lines(lst, air)


@pytest.mark.parametrize("temperature_c, e", [(22.85, 1500.0), (-20.0, 100.0), (40.0, 5000.0)])
def test_one_line_closed_form(temperature_c, e):
    """alpha(nu0) = S(T) N g(nu0) with g the van Vleck-Weisskopf shape
    (1/pi)[1/gamma + gamma/(4 nu0^2 + gamma^2)], all in HITRAN's cgs units, with
    S(T) = S_296 (296/T)^1.5 exp(-c2 E''(1/T - 1/296)) (1 - e^{-c2 nu/T})/(1 - e^{-c2 nu/296}),
    gamma = (296/T)^n [gamma_air (p - e) + gamma_self e] (atm), nu* = nu + delta p (HITRAN
    definitions, Rothman et al., JQSRT 60, 665 (1998), appendix)."""
    p = 101325.0
    _, air, lines = _single(temperature_c, p, e)
    t = temperature_c + 273.15
    nu0 = 40.0 - 0.002 * p / ATM
    s = (1.0e-19 * (296 / t) ** 1.5 * np.exp(-C2 * 100.0 * (1 / t - 1 / 296))
         * (1 - np.exp(-C2 * 40.0 / t)) / (1 - np.exp(-C2 * 40.0 / 296)))
    gamma = (296 / t) ** 0.75 * (0.1 * (p - e) / ATM + 0.5 * e / ATM)
    n = e * 10 / (K_CGS * t)  # molecules per cm^3 (1 Pa = 10 dyn/cm^2)
    alpha_cm = s * n / np.pi * (1 / gamma + gamma / (4 * nu0**2 + gamma**2))
    f0 = 100 * c * nu0
    assert_allclose(lines.centre, f0, rtol=1e-14)
    assert_allclose(lines.width, 100 * c * gamma, rtol=1e-12)
    dn = line_index(f0, lines)
    assert_allclose(4 * np.pi * f0 * dn.imag / c, 100 * alpha_cm, rtol=1e-9)
    # Dispersion at the centre: -(2 nu0/(4 nu0^2 + gamma^2)) S N / (4 pi^2 nu0) (the same
    # shape's real part; Liebe 1989).
    assert_allclose(dn.real, -s * n / (4 * np.pi**2 * nu0) * 2 * nu0 / (4 * nu0**2 + gamma**2),
                    rtol=1e-9)


def _p676_as_hitran():
    """ITU-R P.676-12 Table 2 water lines (without the 1780 GHz continuum pseudo-line)
    written as HITRAN records at 296 K: S from the line strength b1 0.1 e theta^3.5 with
    N'' = S F and Im n = 1e-6 N'' (alpha = 2 w Im n / c), E'' = 300 b2 / c2, gamma_air and
    gamma_self from b3 (p theta^b4 + b5 e theta^b6) per atm, n_air = b4."""
    _, wv = line_tables()
    theta = 300 / 296
    recs = []
    for f0, b1, b2, b3, b4, b5, b6 in wv[:-1]:
        nu = f0 * 1e9 / (100 * c)
        s_p676 = b1 * 0.1 * theta**3.5 * np.exp(b2 * (1 - theta))  # per hPa of vapour
        n_per_hpa = 100 / (1.380649e-23 * 296)  # molecules per m^3 per hPa
        s_si = 1e3 * s_p676 * 4 * np.pi**2 * f0 * 1e9 / (n_per_hpa * c**2)
        per_atm = 1e-4 * b3 * 1013.25 * 1e9 / (100 * c)  # GHz/hPa -> cm^-1/atm
        recs.append(_record(1, 1, nu, 100 * s_si, per_atm * theta**b4,
                            per_atm * b5 * theta**b6, 300 * b2 / C2, b4))
    return "\n".join(recs)


def _wet_parts(temperature_c, vapour):
    lst = parse_hitran(_p676_as_hitran(), use="replace", coverage=(0.0, 1e12))
    medium = Medium.of_air(AirConditions(temperature_c, 101325.0, vapour))
    dry = Medium.of_air(AirConditions(temperature_c, 101325.0 - vapour, 0.0))
    f = np.linspace(5e9, 1e12, 400)
    wet_h = 4 * np.pi * f * complex_index(f, medium, lst).imag / c
    return wet_h - attenuation_coefficient(f, dry), (attenuation_coefficient(f, medium)
                                                     - attenuation_coefficient(f, dry))


def test_same_lines_both_paths_at_296_K():
    """P.676's own water lines through the HITRAN path reproduce P.676 (dB/km) at 296 K,
    1-1000 GHz. Residuals: P.676's widths are 0.535 + sqrt(0.217) = 1.00083 times the
    pressure width (its Voigt approximation even without Doppler), E10.3 intensities and
    F5.4 / F5.3 widths round to 5e-4 relative, and 0.1820 is 4 pi 1e7 / (c ln 10) rounded
    (2.3e-4): 3e-3 relative on the water-vapour absorption."""
    wet_h, wet_p = _wet_parts(22.85, 1500.0)
    assert_allclose(wet_h, wet_p, rtol=3e-3)


def test_same_lines_both_paths_at_278_K():
    """At 278 K two more differences, both expected: HITRAN's exact stimulated-emission
    ratio against P.676's Rayleigh-Jeans power law, (c2 nu0 / 2)(1/T - 1/296) = 3e-3 at
    557 GHz and 5e-3 at 988 GHz, and one temperature exponent n_air for both widths where
    P.676 has b6 for self broadening (about 1e-3 of the width): 1e-2 relative."""
    wet_h, wet_p = _wet_parts(5.0, 700.0)
    assert_allclose(wet_h, wet_p, rtol=1e-2)
    assert np.max(np.abs(wet_h / wet_p - 1)) > 1e-3  # the stated differences are there


def test_replace_and_above_and_coverage_warning():
    """'above' keeps P.676 below 1 THz exactly; lines above 1 THz add absorption there and
    move the warning's limit to the list's coverage."""
    text = (DATA / "hitran_synthetic.par").read_text()
    lst = parse_hitran(text, mole_fractions={5: 1e-7}, coverage=(0.0, 2e12))
    medium = Medium.air(20.0, 101325.0, 0.5)
    f = np.linspace(0.1e12, 0.9e12, 9)
    above = hitran_lines(lst.select(lst.centre > 1e12), medium.conditions)
    assert above.size == 3
    assert_allclose(complex_index(f, medium, lst),
                    complex_index(f, medium) + line_index(f, above), rtol=1e-14)
    top = np.array([1.199e12])
    n_with = complex_index(top, medium, lst)
    with pytest.warns(UserWarning, match="lines cover"):
        n_without = complex_index(top, medium)
    assert n_with.imag[0] > 10 * n_without.imag[0]
    with pytest.warns(UserWarning, match="2e\\+12"):
        complex_index(3e12, medium, lst)


def test_line_list_is_frozen():
    lst = parse_hitran((DATA / "hitran_synthetic.par").read_text())
    assert isinstance(lst, LineList)
    with pytest.raises(ValueError):
        lst.centre[0] = 1.0
