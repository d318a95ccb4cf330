"""Refractive indices of air: Ciddor's optical index and ITU-R P.453's radio refractivity.

Pure functions of the air's conditions, SI inside (Pa, degrees Celsius, kg/m^3):

- the optical phase and group index at the laser wavelength (P. E. Ciddor, Appl. Opt. 35,
  1566 (1996)), which set the speed of the driving pulse;
- the radio refractivity of ITU-R Recommendation P.453 (dry and water-vapour terms), the
  non-dispersive THz index; near the THz water lines (0.557 THz, 0.752 THz, ...) the true
  index has resonant dispersion that this value does not contain;
- P.453's saturation vapour pressure and the vapour density-pressure relation.
"""

from __future__ import annotations

import numpy as np

from thzarray.base.checks import as_float_array, check_scalar

__all__ = [
    "ciddor_index",
    "ciddor_group_index",
    "p453_refractivity",
    "p453_saturation_pressure",
    "vapour_density_to_pressure",
    "vapour_pressure_to_density",
]

# --- Ciddor (1996) constants (Appl. Opt. 35, 1566, appendix A) ---------------------------
_K0, _K1, _K2, _K3 = 238.0185, 5792105.0, 57.362, 167917.0  # um^-2
_W0, _W1, _W2, _W3 = 295.235, 2.6422, -0.032380, 0.004028
_A0, _A1, _A2 = 1.58123e-6, -2.9331e-8, 1.1043e-10
_B0, _B1 = 5.707e-6, -2.051e-8
_C0, _C1 = 1.9898e-4, -2.376e-6
_D, _E = 1.83e-11, -0.765e-8
_R_GAS = 8.314510  # J/(mol K), the value Ciddor used
_M_WATER = 0.018015  # kg/mol


def _ciddor_parts(wavenumber_um, co2_ppm):
    """Standard-air and standard-water-vapour refractivities and their sigma-derivatives."""
    s2 = wavenumber_um**2
    nas = 1e-8 * (_K1 / (_K0 - s2) + _K3 / (_K2 - s2))
    dnas = 1e-8 * (2 * wavenumber_um * _K1 / (_K0 - s2) ** 2 + 2 * wavenumber_um * _K3 / (_K2 - s2) ** 2)
    co2 = 1 + 0.534e-6 * (co2_ppm - 450.0)
    naxs, dnaxs = nas * co2, dnas * co2
    nws = 1.022e-8 * (_W0 + _W1 * s2 + _W2 * s2**2 + _W3 * s2**3)
    dnws = 1.022e-8 * (2 * _W1 * wavenumber_um + 4 * _W2 * wavenumber_um**3 + 6 * _W3 * wavenumber_um**5)
    return naxs, dnaxs, nws, dnws


def _compressibility(p, t_k, xw):
    t = t_k - 273.15
    return (1 - (p / t_k) * (_A0 + _A1 * t + _A2 * t**2 + (_B0 + _B1 * t) * xw
                             + (_C0 + _C1 * t) * xw**2)
            + (p / t_k) ** 2 * (_D + _E * xw**2))


def _ciddor(wavelength, temperature_c, pressure_pa, relative_humidity, co2_ppm):
    sigma = 1e-6 / wavelength  # vacuum wavenumber in um^-1
    t_k = temperature_c + 273.15
    naxs, dnaxs, nws, dnws = _ciddor_parts(sigma, co2_ppm)
    m_air = 1e-3 * (28.9635 + 12.011e-6 * (co2_ppm - 400.0))
    # Saturation vapour pressure over water and enhancement factor (Ciddor's choices).
    svp = np.exp(1.2378847e-5 * t_k**2 - 1.9121316e-2 * t_k + 33.93711047 - 6.3431645e3 / t_k)
    f = 1.00062 + 3.14e-8 * pressure_pa + 5.6e-7 * temperature_c**2
    xw = f * relative_humidity * svp / pressure_pa
    # Densities of standard dry air (15 C, 101325 Pa) and standard vapour (20 C, 1333 Pa).
    rho_axs = 101325.0 * m_air / (_compressibility(101325.0, 288.15, 0.0) * _R_GAS * 288.15)
    rho_ws = 1333.0 * _M_WATER / (_compressibility(1333.0, 293.15, 1.0) * _R_GAS * 293.15)
    z = _compressibility(pressure_pa, t_k, xw)
    rho_a = pressure_pa * m_air * (1 - xw) / (z * _R_GAS * t_k)
    rho_w = pressure_pa * _M_WATER * xw / (z * _R_GAS * t_k)
    n_minus_1 = rho_a / rho_axs * naxs + rho_w / rho_ws * nws
    dn_dsigma = rho_a / rho_axs * dnaxs + rho_w / rho_ws * dnws
    return n_minus_1, dn_dsigma, sigma


def ciddor_index(wavelength, temperature_c=15.0, pressure=101325.0, relative_humidity=0.0,
                 co2_fraction=450e-6):
    """Phase refractive index of air at an optical wavelength (Ciddor 1996).

    Parameters
    ----------
    wavelength : array_like
        Vacuum wavelength (m), 0.3e-6 to 1.7e-6.
    temperature_c : float
        Air temperature (degrees Celsius).
    pressure : float
        Total pressure (Pa), 1e4 to 1.2e5.
    relative_humidity : float
        Relative humidity as a fraction, 0 to 1.
    co2_fraction : float
        CO2 mole fraction (dimensionless, e.g. 450e-6), 0 to 2e-3.

    Returns
    -------
    ndarray
        Refractive index ``n`` (same shape as ``wavelength``).

    Notes
    -----
    .. math:: n - 1 = \\frac{\\rho_a}{\\rho_{axs}} (n_{axs} - 1)
                    + \\frac{\\rho_w}{\\rho_{ws}} (n_{ws} - 1)

    with the BIPM compressibility and the dispersion formulas of Ciddor, Appl. Opt. 35,
    1566 (1996), eqs. (1)-(5) and appendix A.
    """
    n1, _, _ = _ciddor(*_ciddor_args(wavelength, temperature_c, pressure, relative_humidity,
                                     co2_fraction))
    return 1.0 + n1


def ciddor_group_index(wavelength, temperature_c=15.0, pressure=101325.0,
                       relative_humidity=0.0, co2_fraction=450e-6):
    """Group index ``n - lambda dn/dlambda`` of air from Ciddor's formula (analytic derivative).

    Parameters are those of :func:`ciddor_index`.

    .. math:: n_g = n + \\sigma \\frac{dn}{d\\sigma}, \\qquad \\sigma = 1/\\lambda
    """
    n1, dn, sigma = _ciddor(*_ciddor_args(wavelength, temperature_c, pressure,
                                          relative_humidity, co2_fraction))
    return 1.0 + n1 + sigma * dn


def _ciddor_args(wavelength, temperature_c, pressure, relative_humidity, co2_fraction):
    wl = as_float_array("wavelength", wavelength, low=0.3e-6, high=1.7e-6, unit="m")
    return (wl,
            check_scalar("temperature_c", temperature_c, low=-40.0, high=100.0, unit="degC"),
            check_scalar("pressure", pressure, low=1e4, high=1.2e5, unit="Pa"),
            check_scalar("relative_humidity", relative_humidity, low=0.0, high=1.0),
            1e6 * check_scalar("co2_fraction", co2_fraction, low=0.0, high=2e-3))


def p453_saturation_pressure(temperature_c, pressure=101325.0):
    """Saturation water-vapour pressure over water (Pa), ITU-R P.453 eqs. (9)-(10).

    .. math:: e_s = EF \\, a \\exp\\left[\\frac{(b - t/d)\\,t}{t + c}\\right],\\quad
              EF = 1 + 10^{-4}[7.2 + P(0.0320 + 5.9\\times10^{-6} t^2)]

    with a = 6.1121 hPa, b = 18.678, c = 257.14, d = 234.5 (t in degC, P the total pressure
    in hPa inside the formula; argument and result in Pa).
    """
    t = np.asarray(temperature_c, dtype=float)
    p_hpa = np.asarray(pressure, dtype=float) / 100.0
    ef = 1 + 1e-4 * (7.2 + p_hpa * (0.0320 + 5.9e-6 * t**2))
    return 100.0 * ef * 6.1121 * np.exp((18.678 - t / 234.5) * t / (t + 257.14))


def vapour_density_to_pressure(density, temperature_c):
    """Water-vapour partial pressure (Pa) from vapour density (kg/m^3), ITU-R P.453 eq. (4).

    .. math:: e\\,[\\mathrm{hPa}] = \\rho\\,[\\mathrm{g/m^3}]\\; T / 216.7
    """
    return (100.0 * 1e3 * np.asarray(density, dtype=float)
            * (np.asarray(temperature_c) + 273.15) / 216.7)


def vapour_pressure_to_density(vapour_pressure, temperature_c):
    """Water-vapour density (kg/m^3) from partial pressure (Pa), inverse of ITU-R P.453 eq. (4)."""
    return (1e-3 * 216.7 * np.asarray(vapour_pressure, dtype=float) / 100.0
            / (np.asarray(temperature_c) + 273.15))


def p453_refractivity(temperature_c, dry_pressure, vapour_pressure):
    """Radio refractivity N = (n - 1) 1e6 of air, ITU-R P.453 eqs. (1)-(2), (6)-(7).

    .. math:: N = 77.6 \\frac{P_d}{T} + 72 \\frac{e}{T} + 3.75\\times10^5 \\frac{e}{T^2}

    (P_d and e in hPa inside the formula, T in K).

    Parameters
    ----------
    temperature_c : array_like
        Temperature (degC).
    dry_pressure, vapour_pressure : array_like
        Partial pressures of dry air and of water vapour (Pa).
    """
    t_k = np.asarray(temperature_c, dtype=float) + 273.15
    e = np.asarray(vapour_pressure, dtype=float) / 100.0
    p_d = np.asarray(dry_pressure, dtype=float) / 100.0
    return 77.6 * p_d / t_k + 72.0 * e / t_k + 3.75e5 * e / t_k**2
