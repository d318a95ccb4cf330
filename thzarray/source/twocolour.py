r"""Two-colour filaments: the dephasing length and the sign-alternating photocurrent it makes.

A pulse at :math:`\omega` and its second harmonic :math:`2\omega` with relative phase
:math:`\varphi` ionize the air asymmetrically: the electrons keep a net drift along the
laser polarization that goes as :math:`\sin\varphi` (photocurrent model, K. Y. Kim et al.,
Opt. Express 15, 4577 (2007)). The current is *transverse* and radiates the THz pulse
polarized along it.

Dephasing along the column (derived). The carriers' relative phase advances as
:math:`\varphi(s) = \varphi_0 + (k_{2\omega} - 2k_\omega)s = \varphi_0 +
\frac{4\pi}{\lambda}[n(\lambda/2) - n(\lambda)]\,s` with the optical *phase* indices, so it
turns by :math:`2\pi` over the dephasing length

.. math:: L_d = \frac{\lambda}{2\,|n(\lambda/2) - n(\lambda)|}

(:func:`dephasing_length`): about 5.2 cm for 800 nm in dry standard air with Ciddor's
indices (P. E. Ciddor, Appl. Opt. 35, 1566 (1996); computed). Free electrons shorten it:
the cold-plasma index :math:`\sqrt{1 - n_e/n_c}` is lower at :math:`\omega` than at
:math:`2\omega` (:math:`n_c \propto \omega^2`), adding :math:`\tfrac38 n_e/n_c(\lambda)` to
the difference to first order. The Kerr effect and the group walk-off of the two pulses are
not included.

The local THz current is proportional to :math:`\sin(\varphi_0 + 2\pi s/L_d)`
(:func:`two_colour_profile`, :func:`two_colour_samples`): a real, sign-alternating
longitudinal profile for a column's current amplitude.

Cone angle versus length (what this model predicts). The radiation integral of a column
weights the profile with :math:`e^{ius}`, :math:`u = \frac{\omega}{c}(n_g - n_T\cos\theta)`
(:mod:`thzarray.field.farfield`); writing :math:`\sin` as two exponentials, the term
:math:`e^{-i2\pi s/L_d}` adds up in phase where :math:`u = 2\pi/L_d`, i.e. at

.. math:: \cos\theta_{pm} = \frac{n_g - c/(f L_d)}{n_T}

(:func:`phase_matched_angle`): off axis, where the slip between the driver and the THz
wave compensates the sign changes of the source (the off-axis phase matching of Y. S. You,
T. I. Oh and K. Y. Kim, Phys. Rev. Lett. 109, 183902 (2012)). For L >> L_d the emission
peaks there whatever the length: the angle is set by L_d and the frequency, about 6 deg at
1 THz for L_d = 5 cm, and a longer column only narrows the cone (lobe width in u about
:math:`2\pi/L`) and raises it (field proportional to L). A column shorter than L_d sees
almost one sign and behaves like a uniform column weighted by :math:`\sin\varphi_0`, whose
cone depends on its length. Over a whole number of periods the current integrates to zero:
nothing is radiated where a uniform column would be in phase (u = 0). A transverse current
radiates on the axis too (no :math:`\sin\theta` null); its cone is the same peak of the
array factor, and :func:`thzarray.far_field` with this profile on today's longitudinal
:class:`~thzarray.source.filament.Filament` gives the same peak: both lie within
:math:`1.5 L_d/(2\pi L)` lobe widths of :math:`\theta_{pm}` (5 % at L = 5 L_d; the
counter-rotating half of the sine; checked in the tests by quadrature).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c

from thzarray.air.indices import ciddor_index
from thzarray.air.medium import Medium
from thzarray.base.checks import as_float_array, check_count, check_scalar
from thzarray.source.plasma import critical_density

__all__ = [
    "TwoColourProfile",
    "dephasing_length",
    "phase_matched_angle",
    "two_colour_profile",
    "two_colour_samples",
]

_CIDDOR_RANGE = (0.3e-6, 1.7e-6)


def dephasing_length(medium: Medium, wavelength: float = 800e-9, *,
                     electron_density: float = 0.0) -> float:
    """Length over which the relative phase of a two-colour pulse turns by 2 pi (m).

    Parameters
    ----------
    medium : Medium
        Air with conditions (:meth:`Medium.air` or :meth:`Medium.of_air`): the optical phase
        indices come from Ciddor's formula at those conditions. :meth:`Medium.vacuum` has no
        dispersion and gives ``inf`` (or the plasma's value alone). A medium given by its
        indices alone is refused: its dispersion at the two wavelengths is unknown.
    wavelength : float
        Fundamental vacuum wavelength (m), 0.6e-6 to 1.7e-6 (both it and its half inside
        Ciddor's 0.3-1.7 um).
    electron_density : float
        Free electrons along the column (m^-3), 0 to a tenth of the critical density at
        ``wavelength``; 0 for neutral air.

    Returns
    -------
    float
        L_d (m); ``inf`` when the two phase indices are equal.

    Notes
    -----
    .. math:: L_d = \\frac{\\lambda}{2\\,|n(\\lambda/2) - n(\\lambda)|},\\qquad
              n = n_{air} + \\sqrt{1 - n_e/n_c(\\lambda)} - 1

    with Ciddor's (1996) phase index of the medium's air and the cold-plasma index
    (:math:`n_c(\\lambda/2) = 4 n_c(\\lambda)`); the derivation is in the module docstring.
    """
    if not isinstance(medium, Medium):
        raise ValueError(f"medium = {type(medium).__name__}; allowed: a Medium from "
                         "Medium.air(...) or Medium.vacuum()")
    wl = check_scalar("wavelength", wavelength, low=2 * _CIDDOR_RANGE[0], high=_CIDDOR_RANGE[1],
                      unit="m")
    n_c = float(critical_density(wl))
    n_e = check_scalar("electron_density", electron_density, low=0.0, high=0.1 * n_c,
                       unit="m^-3")
    if medium.conditions is not None:
        air = medium.conditions
        n_fund, n_harm = ciddor_index(np.array([wl, wl / 2]), air.temperature_c, air.pressure,
                                      air.relative_humidity, air.co2_fraction)
        neutral = float(n_harm - n_fund)
    elif medium.is_vacuum:
        neutral = 0.0
    else:
        raise ValueError("medium = indices without air conditions; allowed: a Medium from "
                         "Medium.air(...) / Medium.of_air(...) (the dispersion between the "
                         "two colours comes from its air) or Medium.vacuum()")
    plasma = np.sqrt(1 - n_e / (4 * n_c)) - np.sqrt(1 - n_e / n_c)
    difference = abs(neutral + float(plasma))
    return np.inf if difference == 0 else wl / (2 * difference)


@dataclass(frozen=True)
class TwoColourProfile:
    """The two-colour photocurrent along a column, sin(phase + 2 pi s / L_d), as a callable.

    Usable as ``Filament(length, profile=TwoColourProfile(...))``; s in metres from the
    column's start.

    Parameters
    ----------
    dephasing_length : float
        L_d (m), > 0; ``inf`` for no dephasing (a constant profile sin(phase)).
    phase : float
        Relative phase phi0 of the two colours at the column's start (rad).
    """

    dephasing_length: float
    phase: float = 0.0

    def __post_init__(self):
        l_d = self.dephasing_length
        if not (isinstance(l_d, (int, float, np.floating)) and l_d == np.inf):
            l_d = check_scalar("dephasing_length", l_d, low=0.0, low_open=True, unit="m")
        object.__setattr__(self, "dephasing_length", float(l_d))
        object.__setattr__(self, "phase", check_scalar("phase", self.phase, unit="rad"))

    def __call__(self, s):
        """The profile at distances ``s`` (m) from the column's start, same shape."""
        s = as_float_array("s", s, unit="m")
        return np.sin(self.phase + 2 * np.pi * s / self.dephasing_length)


def two_colour_profile(dephasing_length: float, phase: float = 0.0) -> TwoColourProfile:
    """The local photocurrent of a two-colour column, a callable of s (m).

    .. math:: w(s) = \\sin\\left(\\varphi_0 + \\frac{2\\pi s}{L_d}\\right)

    (K. Y. Kim et al., Opt. Express 15, 4577 (2007), with the dephasing of the module
    docstring). See :class:`TwoColourProfile` for the parameters.
    """
    return TwoColourProfile(dephasing_length, phase)


def two_colour_samples(length: float, dephasing_length: float, phase: float = 0.0,
                       points_per_period: int = 64):
    """The two-colour photocurrent sampled along a column: ``(z, w)`` arrays.

    Parameters
    ----------
    length : float
        Column length (m), > 0.
    dephasing_length : float
        L_d (m), > 0 (``inf`` allowed).
    phase : float
        Relative phase at the column's start (rad).
    points_per_period : int
        Samples per dephasing length, 8 to 4096; at least 65 samples in all.

    Returns
    -------
    z, w : ndarray, shape (N,)
        Equidistant positions from 0 to ``length`` (m) and sin(phase + 2 pi z / L_d).
    """
    length = check_scalar("length", length, low=0.0, low_open=True, high=1e3, unit="m")
    profile = TwoColourProfile(dephasing_length, phase)
    per = check_count("points_per_period", points_per_period, low=8, high=4096)
    count = max(65, int(np.ceil(per * length / profile.dephasing_length)) + 1)
    z = np.linspace(0.0, length, count)
    return z, profile(z)


def phase_matched_angle(freq, dephasing_length: float, medium: Medium | None = None, *,
                        group_index: float | None = None):
    """Polar angle (rad) at which a long two-colour column's emission is phase matched.

    Parameters
    ----------
    freq : array_like
        THz frequency (Hz), > 0.
    dephasing_length : float
        L_d (m), > 0 and finite.
    medium : Medium, optional
        Sets n_thz and the driver's group index; vacuum by default.
    group_index : float, optional
        The driver's group index (e.g. with the plasma's share); ``medium.n_group`` when
        None.

    Returns
    -------
    ndarray
        theta_pm (rad), shape of ``freq``.

    Raises
    ------
    ValueError
        Where no direction satisfies the condition (``|cos theta|`` would exceed 1); the
        message gives the frequencies that have one.

    Notes
    -----
    .. math:: \\cos\\theta_{pm} = \\frac{n_g - c/(f L_d)}{n_T}

    (the stationary point u = 2 pi / L_d of the radiation integral; module docstring.)
    """
    medium = Medium.vacuum() if medium is None else medium
    n_g = medium.n_group if group_index is None else check_scalar(
        "group_index", group_index, low=1.0, high=2.0)
    f = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    l_d = check_scalar("dephasing_length", dephasing_length, low=0.0, low_open=True, unit="m")
    cos_t = (n_g - c / (f * l_d)) / medium.n_thz
    bad = np.abs(cos_t) > 1
    if np.any(bad):
        f_lo = c / (l_d * (n_g + medium.n_thz))
        f_hi = c / (l_d * (n_g - medium.n_thz)) if n_g > medium.n_thz else np.inf
        raise ValueError(f"freq = {f[bad].ravel()[0]:.6g} Hz has no phase-matched direction "
                         f"for L_d = {l_d:.6g} m; allowed: {f_lo:.6g} Hz <= freq <= "
                         f"{f_hi:.6g} Hz")
    return np.arccos(cos_t)
