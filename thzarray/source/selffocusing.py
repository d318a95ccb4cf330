r"""Self-focusing of a Gaussian beam in air: Marburger's critical power and collapse distance.

1. Critical power for self-focusing (J. H. Marburger, Prog. Quantum Electron. 4, 35 (1975)),

   .. math:: P_{cr} = \frac{3.77\,\lambda^2}{8\pi n_0 n_2}.

   Some sources use the Townes-profile value :math:`\lambda^2/(2\pi n_0 n_2)`, 6 % higher
   (A. Couairon and A. Mysyrowicz, Phys. Rep. 441, 47 (2007); from memory).
2. Collapse distance of a collimated Gaussian beam (Marburger, same paper),

   .. math:: z_c = \frac{0.367\,z_R}{\sqrt{\left[(P/P_{cr})^{1/2} - 0.852\right]^2 - 0.0219}},
             \qquad z_R = \frac{\pi n_0 w_0^2}{\lambda},
             \qquad \frac{1}{z_f} = \frac{1}{z_c} + \frac{1}{f}\ \text{(lens of focal length f)}.

   Beam-radius convention: ``beam_radius`` is the 1/e^2 *intensity* radius w0 of the
   collimated beam, :math:`I \propto e^{-2r^2/w_0^2}` (the same number as the 1/e *field*
   radius). With it the check w0 = 5 mm, P/P_cr = 10, 800 nm gives 15.6 m and, with
   f = 2 m, 1.77 m; the same formula fed with the 1/e intensity radius (w0/sqrt 2) would
   halve z_R and give 7.8 m. Sources quote the fit as :math:`0.367\,k a^2/\sqrt{\dots}`
   with different meanings of a: read as the 1/e intensity radius (w0/sqrt 2) it is the
   form above; read as w0 it is twice as far. ``collapse_factor`` (1 by default, 2 for the
   other reading) carries that ambiguity (:mod:`thzarray.source.constants`).
   The formula is a fit to numerical solutions for P/P_cr from just above 1 to a few tens;
   below :data:`MARBURGER_MIN_POWER_RATIO` (the bracket <= 0.0219) the beam does not
   collapse and the functions raise ``ValueError``.
3. The linear focus of a Gaussian beam behind a thin lens (S. A. Self, Appl. Opt. 22, 658
   (1983)), :func:`focused_beam`.

The Kerr index of air is uncertain: :data:`N2_AIR` = 3.2e-19 cm^2/W at 800 nm, with
published values from 0.8e-19 to 5e-19 cm^2/W depending on the pulse duration and measured
critical powers of 3 to 10 GW (:mod:`thzarray.source.constants`), so P_cr (3.0 GW nominal)
and everything that follows from it inherit a factor 4 down and 1.6 up.
"""

from __future__ import annotations

import numpy as np

from thzarray.base.checks import as_float_array, check_scalar
from thzarray.source.constants import PUBLISHED
from thzarray.source.plasma import fwhm_to_gaussian_tau

__all__ = [
    "MARBURGER_MIN_POWER_RATIO",
    "N2_AIR",
    "check_power_ratio",
    "collapse_distance",
    "critical_power",
    "focused_beam",
    "peak_power",
    "rayleigh_range",
]

N2_AIR = PUBLISHED["n2"].nominal
"""Kerr index of air at 800 nm (m^2/W): 3.2e-19 cm^2/W; published 0.8e-19 to 5e-19 cm^2/W
(:mod:`thzarray.source.constants`)."""

_MARBURGER_A, _MARBURGER_B, _MARBURGER_C = 0.367, 0.852, 0.0219
MARBURGER_MIN_POWER_RATIO = (_MARBURGER_B + np.sqrt(_MARBURGER_C)) ** 2
"""Smallest P/P_cr for which Marburger's formula predicts a collapse (about 1.0000)."""


def critical_power(wavelength=800e-9, n2=N2_AIR, n0: float = 1.0):
    """Critical power for self-focusing of a Gaussian beam (W).

    Parameters
    ----------
    wavelength : array_like
        Vacuum wavelength (m), 1e-7 to 2e-5.
    n2 : array_like
        Kerr index (m^2/W), > 0; :data:`N2_AIR` for air at 800 nm.
    n0 : float
        Linear refractive index, 1 to 4.

    Returns
    -------
    ndarray
        P_cr (W), shape ``np.broadcast_shapes(wavelength.shape, n2.shape)``.

    Notes
    -----
    .. math:: P_{cr} = \\frac{3.77\\,\\lambda^2}{8\\pi n_0 n_2}

    J. H. Marburger, Prog. Quantum Electron. 4, 35 (1975).
    """
    wl = as_float_array("wavelength", wavelength, low=1e-7, high=2e-5, unit="m")
    n2 = as_float_array("n2", n2, low=0.0, low_open=True, high=1e-15, unit="m^2/W")
    n0 = check_scalar("n0", n0, low=1.0, high=4.0)
    return 3.77 * wl**2 / (8 * np.pi * n0 * n2)


def peak_power(energy, duration):
    """Peak power (W) of a Gaussian pulse of energy ``energy`` (J) and intensity FWHM (s).

    .. math:: P = \\frac{E}{\\tau\\sqrt{\\pi}},\\qquad
              \\tau = \\frac{\\mathrm{FWHM}}{2\\sqrt{\\ln 2}}
    """
    energy = as_float_array("energy", energy, low=0.0, low_open=True, unit="J")
    duration = as_float_array("duration", duration, low=1e-15, high=1e-11, unit="s")
    return energy / (fwhm_to_gaussian_tau(duration) * np.sqrt(np.pi))


def rayleigh_range(beam_radius, wavelength, n0=1.0):
    """Rayleigh range pi n0 w0^2 / lambda (m) of a Gaussian beam of 1/e^2 radius w0."""
    return np.pi * n0 * beam_radius**2 / wavelength


def check_power_ratio(power, p_cr):
    """P / P_cr as an array, or ValueError where it is at or below the collapse threshold."""
    ratio = np.asarray(power / p_cr, dtype=float)
    bad = ratio <= MARBURGER_MIN_POWER_RATIO
    if np.any(bad):
        first = ratio[bad].ravel()[0]
        raise ValueError(f"power / critical_power = {first:.6g} is not allowed; allowed: "
                         f"P/P_cr > {MARBURGER_MIN_POWER_RATIO:.5f} (below it the beam does "
                         "not self-focus to a collapse)")
    return ratio


def collapse_distance(power, beam_radius, wavelength=800e-9, n2=N2_AIR, focal_length=None,
                      n0: float = 1.0, *, collapse_factor: float = 1.0):
    """Distance at which a collimated Gaussian beam self-focuses to a collapse (m).

    Parameters
    ----------
    power : array_like
        Peak power (W); P/P_cr must exceed :data:`MARBURGER_MIN_POWER_RATIO`.
    beam_radius : array_like
        1/e^2 intensity radius w0 of the collimated input beam (m), 1e-5 to 1.
    wavelength : float
        Vacuum wavelength (m).
    n2 : float
        Kerr index (m^2/W).
    focal_length : array_like, optional
        Focal length of a converging lens at the beam waist (m), > 0; none by default.
    n0 : float
        Linear refractive index.
    collapse_factor : float
        Factor on Marburger's 0.367, 0.25 to 4; 1 for the convention below, 2 for the reading
        of :math:`0.367\\,k a^2` with a = w0 (:mod:`thzarray.source.constants`).

    Returns
    -------
    ndarray
        z_c, or z_f with a lens (m), shape of the broadcast inputs.

    Raises
    ------
    ValueError
        When P/P_cr is at or below the collapse threshold.

    Notes
    -----
    .. math:: z_c = \\frac{0.367\\,z_R}{\\sqrt{[(P/P_{cr})^{1/2} - 0.852]^2 - 0.0219}},\\quad
              z_R = \\frac{\\pi n_0 w_0^2}{\\lambda},\\quad
              \\frac1{z_f} = \\frac1{z_c} + \\frac1f

    J. H. Marburger, Prog. Quantum Electron. 4, 35 (1975); w0 is the 1/e^2 intensity radius.
    """
    power = as_float_array("power", power, low=0.0, low_open=True, unit="W")
    w0 = as_float_array("beam_radius", beam_radius, low=1e-5, high=1.0, unit="m")
    p_cr = critical_power(wavelength, n2, n0)
    ratio = check_power_ratio(power, p_cr)
    z_r = rayleigh_range(w0, np.asarray(wavelength, float), n0)
    factor = check_scalar("collapse_factor", collapse_factor, low=0.25, high=4.0)
    z_c = (factor * _MARBURGER_A) * z_r / np.sqrt((np.sqrt(ratio) - _MARBURGER_B) ** 2
                                                  - _MARBURGER_C)
    if focal_length is None:
        return z_c
    f = as_float_array("focal_length", focal_length, low=0.0, low_open=True, high=1e4, unit="m")
    return 1.0 / (1.0 / z_c + 1.0 / f)


def focused_beam(beam_radius, focal_length, wavelength=800e-9):
    """Waist radius, waist position and Rayleigh range of a focused Gaussian beam (m).

    A collimated beam (waist w0 at the lens, Rayleigh range z_R) behind a thin lens of focal
    length f (S. A. Self, Appl. Opt. 22, 658 (1983), eqs. 9 and 10 with the input waist at
    the lens):

    .. math:: w_f = \\frac{w_0}{\\sqrt{1 + (z_R/f)^2}},\\qquad
              d = \\frac{f}{1 + (f/z_R)^2},\\qquad z_{R,f} = \\frac{\\pi w_f^2}{\\lambda}

    Returns
    -------
    (waist, position, rayleigh_range) : tuple of ndarray
        Broadcast shape of the inputs.
    """
    w0 = as_float_array("beam_radius", beam_radius, low=1e-5, high=1.0, unit="m")
    f = as_float_array("focal_length", focal_length, low=0.0, low_open=True, high=1e4, unit="m")
    z_r = rayleigh_range(w0, wavelength)
    waist = w0 / np.sqrt(1 + (z_r / f) ** 2)
    return waist, f / (1 + (f / z_r) ** 2), rayleigh_range(waist, wavelength)
