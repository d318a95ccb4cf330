r"""The plasma column's longitudinal current: a damped Drude-Lorentz response to the
ponderomotive push of the laser pulse.

Derivation (cold, collisional electron fluid; SI units; time dependence exp(-i w t))
------------------------------------------------------------------------------------
A linearly polarized pulse of intensity :math:`I(t - z/v_g)` and carrier angular frequency
:math:`\omega_0` pushes each electron with the ponderomotive force (F. F. Chen, Introduction
to Plasma Physics, ponderomotive-force section)

.. math:: F = -\frac{e^2}{4 m \omega_0^2}\nabla E_0^2,\qquad I = \tfrac12 n_0 c\,\varepsilon_0 E_0^2 .

Along the axis, with :math:`\partial_z I = -v_g^{-1}\,\partial_t I`,

.. math:: F_z = \frac{e^2}{2 m \omega_0^2 n_0 c\,\varepsilon_0 v_g}\,\frac{dI}{dt}.

The electrons (density :math:`n_e`, collision rate :math:`\nu`) obey
:math:`m\,\dot v = -eE_z + F_z - m\nu v`, carry :math:`J = -e n_e v`, and for a purely
longitudinal oscillation :math:`\varepsilon_0 \dot E_z = -J`. Eliminating :math:`v` and
:math:`E_z`,

.. math:: \ddot J + \nu \dot J + \omega_p^2 J = -\frac{e n_e}{m}\dot F_z,
          \qquad \omega_p^2 = \frac{n_e e^2}{\varepsilon_0 m}.

Fourier transforming with :math:`f(\omega) = \int f(t) e^{i\omega t} dt`,

.. math:: J(\omega) = \frac{e^3 n_e}{2 m^2 \omega_0^2 n_0 c\,\varepsilon_0 v_g}\,
          \frac{\omega^2\, I(\omega)}{\omega_p^2 - \omega^2 - i\nu\omega},

and for a Gaussian pulse :math:`I(t) = I_0 e^{-t^2/\tau^2}` (intensity FWHM
:math:`2\tau\sqrt{\ln 2}`), :math:`I(\omega) = I_0 \tau\sqrt{\pi}\,e^{-\omega^2\tau^2/4}`.
The line current of the column is :math:`\pi a^2 J` for a core radius :math:`a` much smaller
than the THz wavelength; it travels with the pulse, :math:`I(s, t) = I(t - s/v_g)`.

What is absolute and what needs calibration
-------------------------------------------
The spectrum is absolute (A s, i.e. A/Hz per unit angular frequency convention above) once
``electron_density``, ``collision_rate``, ``peak_intensity`` and ``radius`` are known, and the
far-field energy computed from it is in J/(Hz sr). In practice the effective density,
radius and clamped intensity of a filament are known to a factor of a few, and the formula
assumes the electrons are already present when the pulse arrives (electrons born during
the pulse feel only part of the push). Treat the absolute scale as needing one calibration
factor per setup; the *shape* of the spectrum and the angular pattern do not depend on it.
:func:`thzarray.source.spread.energy_range` propagates the published spreads of the
constants behind these inputs to an absolute energy.

Validity: a column wide compared with the plasma skin depth
-----------------------------------------------------------
The derivation treats the plasma as laterally infinite: the restoring field is the bulk
one, :math:`\varepsilon_0 \dot E_z = -J`. A column of finite radius a has a weaker restoring
field (the field of the separated charge spreads into the space around the column) and
its resonance lies below :math:`\omega_p`. The bulk response holds when the radius is
large compared with the collisionless skin depth :math:`c/\omega_p`; this package asks for
:math:`\omega_p a / c \geq` :data:`MIN_RADIUS_PARAMETER` = 2 (a stated heuristic
threshold, not derived) and says so otherwise (:func:`finite_radius_note`). Below it the
absolute spectrum, and the position of its peak, are not reliable; the shift is not
modelled.

The driver's speed in its own plasma
------------------------------------
Free electrons of density :math:`n_e` give the laser the cold-plasma index
:math:`n = \sqrt{1 - n_e/n_c}`, :math:`n_c = \varepsilon_0 m \omega_0^2 / e^2`, whose
group index is exactly :math:`1/n` (:math:`ck = \omega n = \sqrt{\omega^2 -
\omega_p^2}`). To first order the plasma adds :math:`n_e/(2 n_c)` to the optical group
index of the air (:func:`plasma_group_index_shift`; the next term is
:math:`\tfrac38 (n_e/n_c)^2`). At 1.3e23 m^-3 and 800 nm that is 3.7e-5, five times the
dry-air mismatch :math:`n_g - n_T` of 7.1e-6, so the cone of a long column depends on it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c, e, epsilon_0, m_e

from thzarray.base.checks import as_float_array, check_scalar

__all__ = [
    "MIN_RADIUS_PARAMETER",
    "Plasma",
    "critical_density",
    "finite_radius_note",
    "fwhm_to_gaussian_tau",
    "plasma_group_index_shift",
]

MIN_RADIUS_PARAMETER = 2.0
"""Smallest omega_p a / c for which the laterally infinite plasma model is used without a
note (a stated heuristic: the radius at least twice the skin depth c / omega_p)."""


def fwhm_to_gaussian_tau(fwhm):
    """The 1/e half-width ``tau`` of ``exp(-t^2/tau^2)`` for an intensity FWHM (s)."""
    return np.asarray(fwhm, dtype=float) / (2.0 * np.sqrt(np.log(2.0)))


@dataclass(frozen=True)
class Plasma:
    """Electron plasma of a filament core and the pulse that drives it.

    Parameters
    ----------
    electron_density : float
        Free-electron density (m^-3), 1e18 to 1e26. Air filaments: 1e21 to 1e23
        (common practice, no source).
    collision_rate : float
        Electron momentum-transfer collision rate nu (s^-1), 0 to 1e15. About 1e12 to 5e12
        at 1 atm (common practice, no source).
    pulse_duration : float
        Intensity FWHM of the Gaussian driving pulse (s).
    peak_intensity : float
        Peak (clamped) intensity in the core (W/m^2); 5e17 W/m^2 = 5e13 W/cm^2 is the usual
        clamped value at 800 nm (common practice, no source).
    laser_wavelength : float
        Vacuum wavelength of the driving laser (m).
    radius : float
        Radius of the plasma core (m), assumed much smaller than the THz wavelength.
    """

    electron_density: float
    collision_rate: float
    pulse_duration: float = 50e-15
    peak_intensity: float = 5e17
    laser_wavelength: float = 800e-9
    radius: float = 50e-6

    def __post_init__(self):
        for name, low, high, unit in (
            ("electron_density", 1e18, 1e26, "m^-3"),
            ("collision_rate", 0.0, 1e15, "1/s"),
            ("pulse_duration", 1e-15, 1e-11, "s"),
            ("peak_intensity", 1e12, 1e21, "W/m^2"),
            ("laser_wavelength", 1e-7, 2e-5, "m"),
            ("radius", 1e-7, 1e-2, "m"),
        ):
            object.__setattr__(self, name, check_scalar(name, getattr(self, name), low=low,
                                                        high=high, unit=unit))

    @property
    def plasma_angular_frequency(self) -> float:
        """Electron plasma angular frequency (rad/s): sqrt(n_e e^2 / (eps0 m_e))."""
        return float(np.sqrt(self.electron_density * e**2 / (epsilon_0 * m_e)))

    @property
    def plasma_frequency(self) -> float:
        """Electron plasma frequency (Hz)."""
        return self.plasma_angular_frequency / (2 * np.pi)

    @property
    def radius_parameter(self) -> float:
        """omega_p a / c: the core radius over the collisionless skin depth c / omega_p."""
        return self.plasma_angular_frequency * self.radius / c

    @property
    def group_index_shift(self) -> float:
        """What these electrons add to the laser's group index, n_e / (2 n_c) (first order)."""
        return float(plasma_group_index_shift(self.electron_density, self.laser_wavelength))

    @property
    def response_peak_frequency(self) -> float:
        """Frequency (Hz) where ``|1/(w_p^2 - w^2 - i nu w)|^2`` peaks: sqrt(w_p^2 - nu^2/2)/(2 pi).

        Zero when the oscillation is overdamped (nu^2 > 2 w_p^2).
        """
        arg = self.plasma_angular_frequency**2 - 0.5 * self.collision_rate**2
        return float(np.sqrt(max(arg, 0.0)) / (2 * np.pi))

    def response(self, freq):
        """Drude-Lorentz response 1/(w_p^2 - w^2 - i nu w) (s^2) at frequency ``freq`` (Hz)."""
        w = 2 * np.pi * as_float_array("freq", freq, low=0.0, unit="Hz")
        return 1.0 / (self.plasma_angular_frequency**2 - w**2 - 1j * self.collision_rate * w)

    def current_spectrum(self, freq, n_group: float = 1.0):
        """Line-current spectrum I(w) of the column (A s), exp(-i w t) convention.

        Parameters
        ----------
        freq : array_like
            Frequency (Hz), >= 0.
        n_group : float
            Group index of the pulse; the drive travels at v_g = c / n_group.

        Returns
        -------
        ndarray, complex
            Same shape as ``freq``.

        Notes
        -----
        .. math:: I(\\omega) = \\pi a^2 \\frac{e^3 n_e}{2 m^2 \\omega_0^2 c\\,\\varepsilon_0 v_g}
                  \\frac{\\omega^2 I_0 \\tau\\sqrt{\\pi} e^{-\\omega^2\\tau^2/4}}
                  {\\omega_p^2 - \\omega^2 - i\\nu\\omega}

        (derived in the module docstring; the optical phase index n_0 is set to 1).
        """
        ng = check_scalar("n_group", n_group, low=1.0, high=2.0)
        f = as_float_array("freq", freq, low=0.0, unit="Hz")
        w = 2 * np.pi * f
        w0 = 2 * np.pi * c / self.laser_wavelength
        v_g = c / ng
        tau = float(fwhm_to_gaussian_tau(self.pulse_duration))
        drive = self.peak_intensity * tau * np.sqrt(np.pi) * np.exp(-(w * tau) ** 2 / 4)
        coupling = e**3 * self.electron_density / (2 * m_e**2 * w0**2 * c * epsilon_0 * v_g)
        area = np.pi * self.radius**2
        return area * coupling * w**2 * drive * self.response(f)


def critical_density(wavelength=800e-9):
    """Critical electron density n_c = eps0 m w0^2 / e^2 at a laser wavelength (m^-3).

    Parameters
    ----------
    wavelength : array_like
        Vacuum wavelength of the laser (m), 1e-7 to 2e-5.

    Returns
    -------
    ndarray
        n_c (m^-3), shape of ``wavelength``; 1.74e27 m^-3 at 800 nm.

    Notes
    -----
    .. math:: n_c = \\frac{\\varepsilon_0 m_e \\omega_0^2}{e^2},\\qquad
              \\omega_0 = \\frac{2\\pi c}{\\lambda}

    (F. F. Chen, Introduction to Plasma Physics, electromagnetic waves in a plasma: the
    cut-off where the plasma frequency equals the wave frequency.)
    """
    wl = as_float_array("wavelength", wavelength, low=1e-7, high=2e-5, unit="m")
    w0 = 2 * np.pi * c / wl
    return epsilon_0 * m_e * w0**2 / e**2


def plasma_group_index_shift(electron_density, wavelength=800e-9):
    """The plasma's share of the laser's group index, n_e / (2 n_c) (first order in n_e/n_c).

    Parameters
    ----------
    electron_density : array_like
        Free-electron density (m^-3), 0 to below the critical density n_c (the first-order
        form is 3/4 n_e/n_c short of the exact shift: 4 % at n_e = n_c / 20).
    wavelength : float
        Vacuum wavelength of the laser (m).

    Returns
    -------
    ndarray
        Added group index (dimensionless), shape of ``electron_density``.

    Notes
    -----
    Cold, collisionless plasma: :math:`n = \\sqrt{1 - n_e/n_c}`, group index exactly
    :math:`1/n = 1 + n_e/(2n_c) + \\tfrac38 (n_e/n_c)^2 + \\dots`; this function returns

    .. math:: \\delta n_g = \\frac{n_e}{2 n_c}

    (F. F. Chen, Introduction to Plasma Physics, dispersion of light waves in a plasma,
    :math:`\\omega^2 = \\omega_p^2 + c^2 k^2`). It adds to the air's group index (the
    susceptibilities add; the cross term is of order :math:`(n-1)\\,n_e/n_c`).
    """
    n_c = float(critical_density(check_scalar("wavelength", wavelength, low=1e-7, high=2e-5,
                                              unit="m")))
    n_e = as_float_array("electron_density", electron_density, low=0.0, high=n_c,
                         high_open=True, unit="m^-3")
    return n_e / (2 * n_c)


def finite_radius_note(plasma: Plasma, minimum: float = MIN_RADIUS_PARAMETER) -> str:
    """A note when the column is too thin for the laterally infinite plasma model, else "".

    Parameters
    ----------
    plasma : Plasma
        The plasma whose ``radius_parameter`` (omega_p a / c) is checked.
    minimum : float
        Threshold on omega_p a / c, > 0; :data:`MIN_RADIUS_PARAMETER` (2) by default.

    Returns
    -------
    str
        Empty when omega_p a / c >= ``minimum``; otherwise one sentence a command can print.

    Notes
    -----
    The reason and the threshold are in the module docstring (section "Validity").
    """
    if not isinstance(plasma, Plasma):
        raise ValueError(f"plasma = {type(plasma).__name__}; allowed: a Plasma")
    minimum = check_scalar("minimum", minimum, low=0.0, low_open=True)
    value = plasma.radius_parameter
    if value >= minimum:
        return ""
    return (f"omega_p a / c = {value:.3g} < {minimum:g}: the plasma core (radius "
            f"{plasma.radius:.3g} m) is thin compared with the skin depth c / omega_p = "
            f"{c / plasma.plasma_angular_frequency:.3g} m; the laterally infinite plasma model "
            "overestimates the restoring field, the true resonance lies below the plasma "
            "frequency and the absolute spectrum is not reliable")
