r"""Electro-optic sampling: what a probe pulse reads from a THz field in a ZnTe or GaP crystal.

A probe pulse travelling at its group velocity :math:`c/n_g` through a crystal of thickness
d samples the THz field :math:`E(z, t)` at :math:`t = \tau + z n_g/c`; averaged over the
thickness (G. Gallot, D. Grischkowsky, J. Opt. Soc. Am. B 16, 1204 (1999); A. Leitenstorfer
et al., Appl. Phys. Lett. 74, 1516 (1999); S. Casalbuoni et al., Phys. Rev. ST Accel. Beams
11, 072802 (2008)) the detected field is
:math:`E_{det}(\tau) = 2\operatorname{Re}\int_0^\infty R(f)E(f)e^{-i\omega\tau}df` with the
response

.. math:: R(f) = \underbrace{\frac{2}{1 + n(f)}}_{\text{entrance}}\;
          \underbrace{\frac{\chi^{(2)}(f)}{\chi^{(2)}(0)}}_{r_{41}\text{ dispersion}}\;
          \underbrace{\frac{e^{i\Delta k d} - 1}{i\Delta k d}}_{\text{velocity matching}}\;
          \underbrace{\exp\!\left(-\frac{\pi^2f^2\tau_p^2}{4\ln 2}\right)}_{\text{probe}},
          \qquad \Delta k = \frac{\omega}{c}\,[n(f) - n_g],

(time dependence :math:`e^{-i\omega t}`, so the velocity-matching factor is
:math:`\frac1d\int_0^d e^{i\Delta k z}dz`; a complex n carries the THz absorption), where

- :math:`n(f) = \sqrt{\varepsilon(f)}`, :math:`\varepsilon = \varepsilon_\infty +
  (\varepsilon_{st} - \varepsilon_\infty) f_{TO}^2/(f_{TO}^2 - f^2 - i\gamma f)`: one
  transverse-optical phonon (Lorentz oscillator);
- :math:`\chi^{(2)}(f) \propto 1 + C f_{TO}^2/(f_{TO}^2 - f^2 - i\gamma f)`, C the
  Faust-Henry coefficient (Leitenstorfer et al. 1999);
- :math:`n_g = n - \lambda\,dn/d\lambda` of the probe from the crystal's Sellmeier formula;
- the probe's Gaussian intensity envelope of FWHM :math:`\tau_p` (the trace is the field
  convolved with it).

Left out: reflections inside the crystal (an echo 2 n d / c later), the probe's own
bandwidth beyond the group-velocity approximation, and the crystal's orientation (the
response is for the optimal one). The retardation of the probe for a field E along the
optimal direction (P. C. M. Planken et al., J. Opt. Soc. Am. B 18, 313 (2001)) is

.. math:: \Gamma(\tau) = \frac{2\pi n_0^3 r_{41} d}{\lambda}\,E_{det}(\tau)

(balanced detection reads :math:`\Delta I/I = \sin\Gamma \approx \Gamma`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c

from thzarray.base.checks import as_float_array, check_scalar
from thzarray.detect.waveform import spectrum_to_waveform

__all__ = [
    "EOCrystal",
    "GAP",
    "ZNTE",
    "eo_response",
    "eo_trace",
    "optical_indices",
    "thz_index",
]


@dataclass(frozen=True)
class EOCrystal:
    """An electro-optic crystal described by its parameters (SI).

    Parameters
    ----------
    name : str
    eps_inf, eps_static : float
        High-frequency and static dielectric constants of the THz Lorentz oscillator.
    to_freq : float
        Transverse-optical phonon frequency (Hz).
    to_damping : float
        Phonon damping gamma (Hz; the oscillator's denominator is f_TO^2 - f^2 - i gamma f).
    faust_henry : float
        Faust-Henry coefficient C of the electro-optic coefficient's dispersion.
    r41 : float
        Electro-optic coefficient at low frequency (m/V).
    sellmeier : tuple
        ``(A, ((B1, C1), (B2, C2), ...))``: optical index n^2 = A + sum B_i / (lam^2 - C_i)
        with lam in um, C_i in um^2 (B_i in um^2).
    sellmeier_range : (float, float)
        Wavelengths (m) where the Sellmeier formula holds.
    """

    name: str
    eps_inf: float
    eps_static: float
    to_freq: float
    to_damping: float
    faust_henry: float
    r41: float
    sellmeier: tuple
    sellmeier_range: tuple

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "eps_inf", check_scalar("eps_inf", self.eps_inf, low=1.0))
        set_(self, "eps_static", check_scalar("eps_static", self.eps_static, low=self.eps_inf))
        set_(self, "to_freq", check_scalar("to_freq", self.to_freq, low=0.0, low_open=True,
                                           unit="Hz"))
        set_(self, "to_damping", check_scalar("to_damping", self.to_damping, low=0.0,
                                              unit="Hz"))
        set_(self, "faust_henry", check_scalar("faust_henry", self.faust_henry, low=-0.99,
                                               high=10.0))
        set_(self, "r41", check_scalar("r41", self.r41, low=0.0, low_open=True, unit="m/V"))
        a, terms = self.sellmeier
        terms = tuple((float(b), float(cc)) for b, cc in terms)
        set_(self, "sellmeier", (check_scalar("sellmeier A", a, low=1.0), terms))
        lo, hi = (float(x) for x in self.sellmeier_range)
        if not 0 < lo < hi:
            raise ValueError(f"sellmeier_range = {self.sellmeier_range!r}; allowed: 0 < low < "
                             "high (m)")
        set_(self, "sellmeier_range", (lo, hi))


# ZnTe. Optical index: H. H. Li, J. Phys. Chem. Ref. Data 13, 103 (1984), 0.55-30 um:
# n^2 = 9.92 + 0.42530/(lam^2 - 0.37766^2) + 8414.13/(lam^2 - 56.5^2). THz oscillator: TO
# phonon at 5.3 THz (G. Gallot et al., Appl. Phys. Lett. 74, 3450 (1999)); eps_inf 7.44,
# eps_static 10.1, gamma 0.09 THz, Faust-Henry C = -0.07, r41 = 4.0 pm/V: from memory (the
# values Leitenstorfer et al. 1999 and Casalbuoni et al. 2008 use), not verified here.
ZNTE = EOCrystal(
    name="ZnTe", eps_inf=7.44, eps_static=10.1, to_freq=5.3e12, to_damping=0.09e12,
    faust_henry=-0.07, r41=4.0e-12,
    sellmeier=(9.92, ((0.42530, 0.37766**2), (8414.13, 56.5**2))),
    sellmeier_range=(0.55e-6, 30e-6))

# GaP. Optical index n^2 = 1 + 2.064 lam^2/(lam^2 - 27.284^2) + 8.089 lam^2/(lam^2 - 0.2707^2)
# (lam in um) and the THz oscillator eps_inf 8.7, oscillator strength 1.8 (eps_static =
# 10.5), w_TO = 69e12 rad/s, damping 0.126e12 rad/s, as tabulated in J. Opt. Soc. Am. B 36,
# 3039 (2019); rewritten for the form A + sum B/(lam^2 - C): B lam^2/(lam^2 - L^2) =
# B + B L^2/(lam^2 - L^2). Faust-Henry C = -0.53 and r41 = 0.97 pm/V: from memory (the
# values Casalbuoni et al. 2008 use), not verified here.
GAP = EOCrystal(
    name="GaP", eps_inf=8.7, eps_static=8.7 + 1.8, to_freq=69e12 / (2 * np.pi),
    to_damping=0.126e12 / (2 * np.pi), faust_henry=-0.53, r41=0.97e-12,
    sellmeier=(1 + 2.064 + 8.089, ((2.064 * 27.284**2, 27.284**2),
                                   (8.089 * 0.2707**2, 0.2707**2))),
    sellmeier_range=(0.4e-6, 4e-6))


def _oscillator(freq, crystal):
    f = np.asarray(freq, dtype=float)
    return crystal.to_freq**2 / (crystal.to_freq**2 - f**2 - 1j * crystal.to_damping * f)


def thz_index(freq, crystal: EOCrystal):
    """Complex THz index of the crystal, one Lorentz oscillator (dimensionless).

    .. math:: n = \\sqrt{\\varepsilon_\\infty + (\\varepsilon_{st} - \\varepsilon_\\infty)
              \\frac{f_{TO}^2}{f_{TO}^2 - f^2 - i\\gamma f}}
    """
    f = as_float_array("freq", freq, low=0.0, unit="Hz")
    eps = crystal.eps_inf + (crystal.eps_static - crystal.eps_inf) * _oscillator(f, crystal)
    return np.sqrt(eps)


def optical_indices(wavelength, crystal: EOCrystal):
    """Phase and group index of the crystal at an optical wavelength (Sellmeier formula).

    Parameters
    ----------
    wavelength : float
        Vacuum wavelength (m), inside the crystal's Sellmeier range.
    crystal : EOCrystal

    Returns
    -------
    (float, float)
        n and :math:`n_g = n - \\lambda\\,dn/d\\lambda` (analytic derivative).
    """
    lo, hi = crystal.sellmeier_range
    lam = 1e6 * check_scalar("probe_wavelength", wavelength, low=lo, high=hi, unit="m")
    a, terms = crystal.sellmeier
    n2 = a + sum(b / (lam**2 - cc) for b, cc in terms)
    dn2 = sum(-2 * lam * b / (lam**2 - cc) ** 2 for b, cc in terms)
    n = float(np.sqrt(n2))
    return n, n - lam * dn2 / (2 * n)


def eo_response(freq, crystal: EOCrystal, thickness, probe_wavelength=800e-9,
                probe_duration=0.0):
    """Complex response R(f) of electro-optic sampling (dimensionless).

    Parameters
    ----------
    freq : array_like
        THz frequency (Hz), >= 0.
    crystal : EOCrystal
        :data:`ZNTE`, :data:`GAP` or one described by its parameters.
    thickness : float
        Crystal thickness (m), > 0.
    probe_wavelength : float
        Probe vacuum wavelength (m).
    probe_duration : float
        Probe intensity FWHM (s), >= 0 (0: an infinitely short probe).

    Returns
    -------
    ndarray, complex, shape of ``freq``
        R(f); 2/(1 + n(0)) at f -> 0.

    Notes
    -----
    .. math:: R = \\frac{2}{1 + n}\\,\\frac{1 + C D(f)}{1 + C}\\,
              \\frac{e^{i\\Delta k d} - 1}{i\\Delta k d}\\,
              e^{-\\pi^2 f^2\\tau_p^2/(4\\ln 2)},\\quad D = \\frac{f_{TO}^2}{f_{TO}^2 - f^2
              - i\\gamma f},\\quad \\Delta k = \\frac{2\\pi f}{c}(n - n_g)

    (Gallot & Grischkowsky 1999; Leitenstorfer et al. 1999; module docstring).
    """
    f = as_float_array("freq", freq, low=0.0, unit="Hz")
    d = check_scalar("thickness", thickness, low=0.0, low_open=True, unit="m")
    tau = check_scalar("probe_duration", probe_duration, low=0.0, unit="s")
    _, n_g = optical_indices(probe_wavelength, crystal)
    n = thz_index(f, crystal)
    x = 2 * np.pi * f / c * (n - n_g) * d
    small = np.abs(x) < 1e-6
    x_safe = np.where(small, 1.0, x)
    matching = np.where(small, 1 + 0.5j * x, np.expm1(1j * x_safe) / (1j * x_safe))
    chi = (1 + crystal.faust_henry * _oscillator(f, crystal)) / (1 + crystal.faust_henry)
    probe = np.exp(-(np.pi * f * tau) ** 2 / (4 * np.log(2)))
    return 2 / (1 + n) * chi * matching * probe


def eo_trace(spectrum, freq, time, crystal: EOCrystal, thickness, probe_wavelength=800e-9,
             probe_duration=0.0):
    """Probe retardation Gamma(tau) that electro-optic sampling records (rad).

    Parameters
    ----------
    spectrum : array_like, complex, shape (K, ...)
        THz field spectrum E(f) along the crystal's optimal direction (V s/m), on the grids
        of :func:`thzarray.detect.waveform.waveform_grids`.
    freq, time : ndarray
        Those grids (Hz, s).
    crystal, thickness, probe_wavelength, probe_duration
        As for :func:`eo_response`.

    Returns
    -------
    ndarray, shape (N, ...)
        Gamma at each time (rad).

    Notes
    -----
    .. math:: \\Gamma(\\tau) = \\frac{2\\pi n_0^3 r_{41} d}{\\lambda}\\,
              2\\operatorname{Re}\\sum_k \\Delta f\\,R(f_k)E(f_k)e^{-2\\pi i f_k\\tau}

    (Planken et al. 2001 for the prefactor at the optimal orientation).
    """
    n0, _ = optical_indices(probe_wavelength, crystal)
    r = eo_response(freq, crystal, thickness, probe_wavelength, probe_duration)
    s = np.asarray(spectrum)
    detected = s * r.reshape((-1,) + (1,) * (s.ndim - 1))
    scale = 2 * np.pi * n0**3 * crystal.r41 * thickness / probe_wavelength
    return scale * spectrum_to_waveform(detected, freq, time)
