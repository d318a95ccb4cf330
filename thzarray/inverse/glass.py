r"""Optical glass on the bench: index, group index and dispersion from Sellmeier equations.

A plate of glass delays the laser pulse that crosses it, relative to the same length of air,
by :math:`d\,(n_{g,glass} - n_{g,air})/c`, and adds the group delay dispersion
:math:`\mathrm{GDD} = d\,\lambda^3/(2\pi c^2)\, d^2n/d\lambda^2`, which lengthens the pulse.

Sellmeier equation (W. Sellmeier, 1871; the form every source below uses), :math:`\lambda`
the vacuum wavelength:

.. math:: n^2(\lambda) = 1 + \sum_i \frac{B_i\,\lambda^2}{\lambda^2 - C_i}.

Its derivatives are analytic: with :math:`N = n^2`,
:math:`N' = -\sum_i 2 B_i C_i \lambda/(\lambda^2 - C_i)^2`,
:math:`N'' = \sum_i 2 B_i C_i (3\lambda^2 + C_i)/(\lambda^2 - C_i)^3`, so
:math:`n' = N'/(2n)` and :math:`n'' = (N''/2 - n'^2)/n`;

.. math:: n_g = n - \lambda\frac{dn}{d\lambda},\qquad
          \beta_2 = \frac{\lambda^3}{2\pi c^2}\frac{d^2n}{d\lambda^2}\ \ (\mathrm{s^2/m}).

Glasses (coefficients with :math:`C_i` given in um^2 in the sources, stored here in m^2):

- ``fused_silica``: I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965), 0.21-3.71 um, 20 degC.
- ``N-BK7``: the maker's published coefficients, SCHOTT optical glass data sheet N-BK7,
  0.3-2.5 um, 20 degC (indices relative to air at 101.325 kPa, as catalogue indices are).
- ``CaF2``: I. H. Malitson, Appl. Opt. 2, 1103 (1963), 0.23-9.7 um, 24 degC.
- ``sapphire_o``: sapphire, ordinary ray: I. H. Malitson and M. J. Dodge, J. Opt. Soc. Am. 62,
  1405 (1972) (abstract), equation as published by M. J. Dodge in the CRC Handbook of Laser
  Science and Technology, Vol. IV, Optical Materials Part 2 (1986), p. 30; 0.2-5.0 um,
  20 degC. The primary texts were not read; the coefficients are those transcribed by
  several independent public codes from those sources.

Index convention: the catalogue index of N-BK7 is relative to air; using it as an absolute
index changes :math:`n_g - n_{g,air}` by about :math:`n_{air} - 1 \approx 2.7\times10^{-4}`,
a relative error of about 6e-4 on a plate's delay, far below what a plate is polished to.
The air's own group-velocity dispersion (about 2e-29 s^2/m, from memory) is neglected.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c

from thzarray.air.medium import Medium
from thzarray.base.checks import as_float_array, check_scalar, shorten

__all__ = [
    "GLASSES",
    "Glass",
    "air_group_index",
    "as_glass",
    "group_delay_dispersion",
    "group_index",
    "group_velocity_dispersion",
    "plate_thickness",
    "refractive_index",
    "stretched_duration",
]

_UM2 = 1e-12  # m^2 per um^2


@dataclass(frozen=True)
class Glass:
    """A transparent material described by a three-term Sellmeier equation.

    Parameters
    ----------
    name : str
        Short name (a key of :data:`GLASSES` for the built-in ones).
    b : tuple of float
        Sellmeier strengths B_i (dimensionless), each >= 0.
    c : tuple of float
        Sellmeier resonance terms C_i (m^2), each >= 0, same count as ``b``.
    wavelength_range : (float, float)
        Vacuum wavelengths (m) over which the equation was fitted.
    source : str
        Where the coefficients were published.
    """

    name: str
    b: tuple
    c: tuple
    wavelength_range: tuple
    source: str

    def __post_init__(self):
        for label in ("name", "source"):
            value = getattr(self, label)
            if not isinstance(value, str) or not value.strip():
                raise ValueError(f"{label} = {shorten(value)} is not allowed; allowed: a "
                                 "non-empty string")
        b = as_float_array("b", self.b, low=0.0)
        cc = as_float_array("c", self.c, low=0.0, unit="m^2")
        if b.ndim != 1 or b.shape != cc.shape:
            raise ValueError(f"b, c have shapes {b.shape}, {cc.shape}; allowed: two 1-D "
                             "sequences of the same length")
        lo, hi = (check_scalar("wavelength_range", v, low=0.0, low_open=True, unit="m")
                  for v in self.wavelength_range)
        if hi <= lo:
            raise ValueError(f"wavelength_range = ({lo:g}, {hi:g}) m; allowed: increasing")
        root = np.sqrt(cc)
        if np.any((root >= lo) & (root <= hi)):
            raise ValueError(f"c = {tuple(cc.tolist())!r} m^2 puts a resonance inside "
                             f"wavelength_range ({lo:g}, {hi:g}) m; allowed: sqrt(C_i) "
                             "outside the range")
        object.__setattr__(self, "b", tuple(b.tolist()))
        object.__setattr__(self, "c", tuple(cc.tolist()))
        object.__setattr__(self, "wavelength_range", (lo, hi))


GLASSES = {
    "fused_silica": Glass(
        "fused_silica", (0.6961663, 0.4079426, 0.8974794),
        tuple(v**2 * _UM2 for v in (0.0684043, 0.1162414, 9.896161)), (0.21e-6, 3.71e-6),
        "I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965)"),
    "N-BK7": Glass(
        "N-BK7", (1.03961212, 0.231792344, 1.01046945),
        tuple(v * _UM2 for v in (0.00600069867, 0.0200179144, 103.560653)), (0.3e-6, 2.5e-6),
        "SCHOTT optical glass data sheet N-BK7 (maker's Sellmeier coefficients)"),
    "CaF2": Glass(
        "CaF2", (0.5675888, 0.4710914, 3.8484723),
        tuple(v**2 * _UM2 for v in (0.050263605, 0.1003909, 34.649040)), (0.23e-6, 9.7e-6),
        "I. H. Malitson, Appl. Opt. 2, 1103 (1963)"),
    "sapphire_o": Glass(
        "sapphire_o", (1.4313493, 0.65054713, 5.3414021),
        tuple(v**2 * _UM2 for v in (0.0726631, 0.1193242, 18.028251)), (0.2e-6, 5.0e-6),
        "I. H. Malitson and M. J. Dodge, J. Opt. Soc. Am. 62, 1405 (1972); M. J. Dodge, CRC "
        "Handbook of Laser Science and Technology IV (1986), ordinary ray"),
}
"""The built-in glasses by name (module docstring)."""


def as_glass(glass) -> Glass:
    """A :class:`Glass`, or the built-in one named (case and '-'/'_'/' ' ignored)."""
    if isinstance(glass, Glass):
        return glass
    if isinstance(glass, str):
        def key(s):
            return s.strip().lower().replace("-", "_").replace(" ", "_")
        for name, g in GLASSES.items():
            if key(name) == key(glass):
                return g
    raise ValueError(f"glass = {glass!r} is not allowed; allowed: a Glass or one of "
                     f"{', '.join(GLASSES)}")


def _wavelength(glass, wavelength):
    lo, hi = glass.wavelength_range
    return as_float_array("wavelength", wavelength, low=lo, high=hi, unit="m")


def _sellmeier(glass, wl):
    """n, dn/dlambda (1/m), d2n/dlambda2 (1/m^2) at vacuum wavelengths wl (m)."""
    l2 = wl**2
    big_n, d1, d2 = np.ones_like(wl), np.zeros_like(wl), np.zeros_like(wl)
    for b, cc in zip(glass.b, glass.c):
        den = l2 - cc
        big_n = big_n + b * l2 / den
        d1 = d1 - 2 * b * cc * wl / den**2
        d2 = d2 + 2 * b * cc * (3 * l2 + cc) / den**3
    n = np.sqrt(big_n)
    dn = d1 / (2 * n)
    return n, dn, (0.5 * d2 - dn**2) / n


def refractive_index(glass, wavelength):
    """Phase index of a glass from its Sellmeier equation.

    Parameters
    ----------
    glass : Glass or str
        A :class:`Glass` or the name of a built-in one (:data:`GLASSES`).
    wavelength : array_like
        Vacuum wavelength (m), inside the glass's ``wavelength_range``.

    Returns
    -------
    ndarray
        n, shape of ``wavelength``.

    Notes
    -----
    .. math:: n^2 = 1 + \\sum_i \\frac{B_i\\lambda^2}{\\lambda^2 - C_i}

    with the published coefficients named in :data:`GLASSES` (module docstring).
    """
    g = as_glass(glass)
    return _sellmeier(g, _wavelength(g, wavelength))[0]


def group_index(glass, wavelength):
    """Group index of a glass, n - lambda dn/dlambda, from the analytic Sellmeier derivative.

    Parameters
    ----------
    glass : Glass or str
    wavelength : array_like
        Vacuum wavelength (m).

    Returns
    -------
    ndarray
        n_g, shape of ``wavelength``.

    Notes
    -----
    .. math:: n_g = n - \\lambda\\frac{dn}{d\\lambda}

    (e.g. M. Born and E. Wolf, Principles of Optics, group velocity).
    """
    g = as_glass(glass)
    wl = _wavelength(g, wavelength)
    n, dn, _ = _sellmeier(g, wl)
    return n - wl * dn


def group_velocity_dispersion(glass, wavelength):
    """Group-velocity dispersion beta_2 of a glass (s^2/m): the GDD per metre of glass.

    Parameters
    ----------
    glass : Glass or str
    wavelength : array_like
        Vacuum wavelength (m).

    Returns
    -------
    ndarray
        beta_2 (s^2/m), shape of ``wavelength``; 1 fs^2/mm = 1e-27 s^2/m.

    Notes
    -----
    .. math:: \\beta_2 = \\frac{d^2k}{d\\omega^2} = \\frac{\\lambda^3}{2\\pi c^2}
              \\frac{d^2 n}{d\\lambda^2}

    (standard result; e.g. J.-C. Diels and W. Rudolph, Ultrashort Laser Pulse Phenomena,
    chapter 1).
    """
    g = as_glass(glass)
    wl = _wavelength(g, wavelength)
    return wl**3 / (2 * np.pi * c**2) * _sellmeier(g, wl)[2]


def group_delay_dispersion(glass, wavelength, thickness):
    """Group delay dispersion (s^2) a pulse picks up crossing ``thickness`` of glass.

    Parameters
    ----------
    glass : Glass or str
    wavelength : array_like
        Vacuum wavelength (m).
    thickness : array_like
        Glass thickness crossed (m), >= 0; broadcast with ``wavelength``.

    Returns
    -------
    ndarray
        GDD = beta_2 * thickness (s^2).
    """
    d = as_float_array("thickness", thickness, low=0.0, unit="m")
    return group_velocity_dispersion(glass, wavelength) * d


def stretched_duration(duration, gdd):
    """Intensity FWHM of an unchirped Gaussian pulse after a group delay dispersion.

    Parameters
    ----------
    duration : array_like
        Intensity FWHM of the transform-limited input pulse (s), 1e-16 to 1e-9.
    gdd : array_like
        Group delay dispersion (s^2), any sign, ``|gdd| <= 1e-20``; broadcast with ``duration``.

    Returns
    -------
    ndarray
        Output FWHM (s), broadcast shape.

    Notes
    -----
    .. math:: \\tau' = \\tau\\sqrt{1 + \\left(\\frac{4\\ln 2\\,\\mathrm{GDD}}{\\tau^2}\\right)^2}

    (standard result for a Gaussian pulse; Diels and Rudolph, chapter 1). The pulse keeps its
    energy and spectrum and acquires a linear chirp.
    """
    tau = as_float_array("duration", duration, low=1e-16, high=1e-9, unit="s")
    phi2 = as_float_array("gdd", gdd, low=-1e-20, high=1e-20, unit="s^2")
    return tau * np.sqrt(1 + (4 * np.log(2) * phi2 / tau**2) ** 2)


def air_group_index(wavelength=800e-9, medium: Medium | None = None) -> float:
    """Group index of the air around the bench at a laser wavelength.

    Parameters
    ----------
    wavelength : float
        Vacuum wavelength (m); 0.3e-6 to 1.7e-6 when the index comes from air conditions.
    medium : Medium, optional
        The air: its conditions are used at ``wavelength`` (Ciddor, via
        :meth:`thzarray.air.medium.Medium.of_air`); a medium given by its indices alone (or
        the vacuum) gives its own ``n_group``. Default: ``Medium.air()`` (15 degC,
        101325 Pa, dry, 450 ppm CO2).

    Returns
    -------
    float
        n_g of air.
    """
    wl = check_scalar("wavelength", wavelength, low=0.0, low_open=True, unit="m")
    if medium is None:
        return Medium.air(laser_wavelength=wl).n_group
    if not isinstance(medium, Medium):
        raise ValueError(f"medium = {type(medium).__name__}; allowed: a Medium or None")
    if medium.conditions is None:
        return medium.n_group
    return Medium.of_air(medium.conditions, wl).n_group


def plate_thickness(delay, glass, wavelength=800e-9, *, medium: Medium | None = None):
    """Thickness of a glass plate whose added group delay, against the same air path, is ``delay``.

    Parameters
    ----------
    delay : array_like
        Wanted delays (s), 0 to 1e-3.
    glass : Glass or str
        The plate's material (:data:`GLASSES`).
    wavelength : float
        Vacuum laser wavelength (m).
    medium : Medium, optional
        The air the plate replaces (:func:`air_group_index`).

    Returns
    -------
    ndarray
        Thickness (m), shape of ``delay``.

    Notes
    -----
    .. math:: d = \\frac{c\\,t}{n_{g,glass} - n_{g,air}}
    """
    t = as_float_array("delay", delay, low=0.0, high=1e-3, unit="s")
    ng = float(group_index(glass, check_scalar("wavelength", wavelength, unit="m")))
    return c * t / (ng - air_group_index(wavelength, medium))
