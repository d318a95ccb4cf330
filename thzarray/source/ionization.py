r"""Free electrons left by the pulse: multiphoton ionization of O2 at the clamped intensity.

Electron density from the clamped intensity by eight-photon ionization of O2 (ionization
energy 12.07 eV, 8 x 1.55 eV photons) with the rate :math:`W = \sigma_8 I^8`, integrated
over a Gaussian pulse:

.. math:: n_e = n_{O_2}\left[1 - \exp\left(-\sigma_8 I^8 \tau\sqrt{\pi/8}\right)\right],
          \qquad I(t) = I e^{-t^2/\tau^2}.

Constants, with their published spread (sources in :mod:`thzarray.source.constants`):

======================  ===========  ===========  ===========  ==========================
constant                low          nominal      high         unit
======================  ===========  ===========  ===========  ==========================
sigma_8 (O2, 800 nm)    2.88e-131    3.3e-130     3.6e-130     W^-8 m^16 s^-1
clamped intensity       4e17         5e17         1e18         W/m^2 (x 1e-4: W/cm^2)
======================  ===========  ===========  ===========  ==========================

The nominal sigma_8 is the absolute measurement of A. Sharma et al., Sci. Rep. 8, 2874
(2018), (3.3 +- 0.3)e-130 (verified in its abstract); the low one is the value commonly
quoted from A. Couairon and A. Mysyrowicz, Phys. Rep. 441, 47 (2007), 2.88e-99
cm^16 W^-8 s^-1 (from memory), 11.5 times smaller. The clamped intensity (about 5e13
W/cm^2 at 800 nm: common practice, no source) is uncertain to tens of per cent, and n_e
grows as I^8: 10 % on the intensity is a factor 2.1 on n_e, and the low end alone is a
factor 6 down. The Keldysh parameter at the clamped intensity is about 1.4, between the
multiphoton and tunnelling limits, where a power law is only an estimate. Take n_e as
good to an order of magnitude at best: the nominal constants give about 1.3e17 cm^-3 (2.4 %
of the O2 ionized), at the upper end of the 1e15 to 1e17 cm^-3 usually quoted (common
practice, no source); the low cross-section gives 11.5 times less. A cross-check that
does not use sigma_8: at clamping the Kerr and plasma index changes balance,
:math:`n_2 I \approx n_e/(2 n_c)`, i.e. n_e of about 5.6e22 m^-3 with the nominal n2 and
intensity (common practice, no source). Nitrogen (15.58 eV, 11 photons) contributes far
less and is left out.
"""

from __future__ import annotations

import numpy as np
from scipy.constants import c, e, electron_volt, epsilon_0, m_e
from scipy.constants import k as k_boltzmann

from thzarray.base.checks import as_float_array, check_scalar
from thzarray.source.constants import PUBLISHED
from thzarray.source.plasma import fwhm_to_gaussian_tau

__all__ = [
    "AIR_DENSITY",
    "CLAMPED_INTENSITY",
    "O2_FRACTION",
    "O2_PHOTONS",
    "O2_SIGMA_8",
    "electron_density",
    "keldysh_parameter",
    "ponderomotive_energy",
]

CLAMPED_INTENSITY = PUBLISHED["clamped_intensity"].nominal
"""Clamped intensity in an air filament at 800 nm (W/m^2), 5e17; common practice, no source
(published spread 4e17 to 1e18, :mod:`thzarray.source.constants`)."""
O2_IONIZATION_ENERGY = 12.07 * electron_volt
"""Ionization energy of O2 (J); NIST: 12.0697 eV."""
O2_PHOTONS = 8
"""Photons of 800 nm (1.55 eV) needed to ionize O2."""
O2_SIGMA_8 = PUBLISHED["o2_cross_section"].nominal
"""Eight-photon cross-section of O2 at 800 nm (W^-8 m^16 s^-1), 3.3e-130: Sharma et al., Sci.
Rep. 8, 2874 (2018) (published spread 2.88e-131 to 3.6e-130, :mod:`thzarray.source.constants`)."""
O2_FRACTION = 0.2095
"""Mole fraction of O2 in dry air."""
AIR_DENSITY = 101325.0 / (k_boltzmann * 288.15)
"""Molecules per m^3 at 15 degC and 1 atm."""


def ponderomotive_energy(intensity, wavelength=800e-9):
    """Cycle-averaged quiver energy of a free electron (J), linear polarization.

    .. math:: U_p = \\frac{e^2 E_0^2}{4 m \\omega_0^2}
              = \\frac{e^2 I}{2 c\\,\\varepsilon_0 m\\,\\omega_0^2}

    (F. F. Chen, Introduction to Plasma Physics, ponderomotive-force section.)
    """
    intensity = as_float_array("intensity", intensity, low=0.0, unit="W/m^2")
    w0 = 2 * np.pi * c / check_scalar("wavelength", wavelength, low=1e-7, high=2e-5, unit="m")
    return e**2 * intensity / (2 * c * epsilon_0 * m_e * w0**2)


def keldysh_parameter(intensity, wavelength=800e-9, ionization_energy=O2_IONIZATION_ENERGY):
    """Keldysh parameter sqrt(U_i / (2 U_p)): >> 1 multiphoton, << 1 tunnelling regime.

    (L. V. Keldysh, Sov. Phys. JETP 20, 1307 (1965).) ``ionization_energy`` in J, O2 by
    default.
    """
    u_i = check_scalar("ionization_energy", ionization_energy, low=0.0, low_open=True, unit="J")
    intensity = as_float_array("intensity", intensity, low=0.0, low_open=True, unit="W/m^2")
    return np.sqrt(u_i / (2 * ponderomotive_energy(intensity, wavelength)))


def electron_density(intensity=CLAMPED_INTENSITY, duration=50e-15, *, sigma=O2_SIGMA_8,
                     photons=O2_PHOTONS, neutral_density=O2_FRACTION * AIR_DENSITY):
    """Free-electron density left behind by a Gaussian pulse through K-photon ionization.

    Parameters
    ----------
    intensity : array_like
        Peak (clamped) intensity (W/m^2), > 0.
    duration : array_like
        Intensity FWHM of the pulse (s).
    sigma : float
        Generalised cross-section (W^-K m^2K s^-1); O2 at 800 nm by default (Sharma et al.,
        Sci. Rep. 8, 2874 (2018)).
    photons : int
        Number of photons K; 8 for O2 at 800 nm.
    neutral_density : float
        Density of ionizable molecules (m^-3); O2 in air at 15 degC, 1 atm by default.

    Returns
    -------
    ndarray
        n_e (m^-3), broadcast shape of ``intensity`` and ``duration``.

    Notes
    -----
    .. math:: n_e = n_0\\left[1 - \\exp\\left(-\\sigma I^K \\tau\\sqrt{\\pi/K}\\right)\\right],
              \\qquad \\tau = \\frac{\\mathrm{FWHM}}{2\\sqrt{\\ln 2}}

    (the time integral of :math:`\\sigma I^K e^{-K t^2/\\tau^2}`; depletion included).
    """
    intensity = as_float_array("intensity", intensity, low=0.0, low_open=True, high=1e21,
                               unit="W/m^2")
    duration = as_float_array("duration", duration, low=1e-15, high=1e-11, unit="s")
    sigma = check_scalar("sigma", sigma, low=0.0, low_open=True)
    k = int(check_scalar("photons", photons, low=1.0, high=40.0))
    n0 = check_scalar("neutral_density", neutral_density, low=0.0, low_open=True, unit="m^-3")
    tau = fwhm_to_gaussian_tau(duration)
    exponent = sigma * intensity**k * tau * np.sqrt(np.pi / k)
    return n0 * -np.expm1(-exponent)
