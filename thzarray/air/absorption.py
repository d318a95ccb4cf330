r"""Gaseous absorption of THz waves in humid air: ITU-R P.676 Annex 1, line by line.

The specific attenuation (Recommendation ITU-R P.676-12 (08/2019), Annex 1, eqs. (1)-(9))
is

.. math:: \gamma = 0.1820\, f\, \left[N''_{O}(f) + N''_{W}(f)\right]\quad\mathrm{dB/km},

with :math:`f` in GHz and the imaginary refractivities

.. math:: N''_{O} = \sum_i S_i F_i + N''_D(f), \qquad N''_{W} = \sum_i S_i F_i ,

summed over the oxygen lines of Table 1 and the water-vapour lines of Table 2 (shipped as
package data, see ``thzarray/data/README.md``). Line strengths, widths and shapes:

.. math::
    S_i^{O} = a_1 10^{-7} p\,\theta^3 e^{a_2(1-\theta)},\qquad
    S_i^{W} = b_1 10^{-1} e\,\theta^{3.5} e^{b_2(1-\theta)},

    F_i = \frac{f}{f_i}\left[\frac{\Delta f - \delta(f_i - f)}{(f_i - f)^2 + \Delta f^2}
          + \frac{\Delta f - \delta(f_i + f)}{(f_i + f)^2 + \Delta f^2}\right],

    \Delta f^{O} = \sqrt{[a_3 10^{-4}(p\,\theta^{0.8-a_4} + 1.1\,e\,\theta)]^2 + 2.25\times10^{-6}},

    \Delta f^{W}_0 = b_3 10^{-4}(p\,\theta^{b_4} + b_5\, e\,\theta^{b_6}),\quad
    \Delta f^{W} = 0.535\,\Delta f^{W}_0 + \sqrt{0.217\,(\Delta f^{W}_0)^2
                   + 2.1316\times10^{-12} f_i^2/\theta},

    \delta^{O} = (a_5 + a_6\theta) 10^{-4} (p + e)\theta^{0.8},\qquad \delta^{W} = 0,

and the dry continuum (the non-resonant Debye spectrum of oxygen below 10 GHz and the
pressure-induced nitrogen absorption above 100 GHz)

.. math:: N''_D = f p \theta^2\left[\frac{6.14\times10^{-5}}{d\,[1 + (f/d)^2]}
          + \frac{1.4\times10^{-12} p\,\theta^{1.5}}{1 + 1.9\times10^{-5} f^{1.5}}\right],
          \qquad d = 5.6\times10^{-4}(p + e)\theta^{0.8}.

Here :math:`p` is the DRY-air pressure and :math:`e` the water-vapour partial pressure
(hPa), :math:`\theta = 300/T` with T in kelvin. The water-vapour continuum is, as the
Recommendation specifies it, the pseudo-line at 1780 GHz in the last row of Table 2.

Humidity is handled as in :mod:`~thzarray.air.medium` (ITU-R P.453): ``e = RH * e_s(t, P)`` with
the P.453 saturation pressure, ``P_dry = P - e``, and vapour density ``rho = 216.7 e / T``.

Validity: 1 GHz to 1000 GHz (the Recommendation's range). Outside it the formula is still
evaluated but a :class:`UserWarning` is emitted; beyond 1 THz water-vapour lines the
Recommendation does not list (1.097 THz, 1.113 THz, 1.163 THz, ...) are missing and the
result underestimates the absorption.

Convention for fields: ``attenuation_coefficient`` returns the POWER attenuation
coefficient alpha (1/m): energy falls as exp(-alpha R) and a field amplitude as
exp(-alpha R / 2).
"""

from __future__ import annotations

import warnings
from functools import lru_cache
from importlib import resources

import numpy as np

from thzarray.air.medium import AirConditions, Medium
from thzarray.base.checks import as_float_array

__all__ = [
    "P676_EDITION",
    "air_conditions",
    "attenuate",
    "attenuation_coefficient",
    "db_per_km_to_per_m",
    "dry_continuum_parameters",
    "line_tables",
    "oxygen_attenuation",
    "oxygen_line_parameters",
    "water_vapour_attenuation",
    "water_line_parameters",
]

P676_EDITION = "ITU-R P.676-12 (08/2019), Annex 1, Tables 1 and 2"

_F_MIN_HZ, _F_MAX_HZ = 1e9, 1e12
_KELVIN = 273.15


@lru_cache(maxsize=None)
def _load_table(name: str) -> np.ndarray:
    text = resources.files("thzarray").joinpath("data", f"p676_{name}_lines.csv")
    with text.open("r", encoding="utf-8") as handle:
        table = np.loadtxt(handle, delimiter=",", comments="#", skiprows=3)
    table.setflags(write=False)
    return table


def line_tables() -> tuple[np.ndarray, np.ndarray]:
    """The packaged P.676 line tables (oxygen, water vapour), read-only arrays.

    Returns
    -------
    (ndarray, ndarray)
        Shapes (44, 7) and (35, 7): columns f0 (GHz), a1..a6 resp. b1..b6 of
        Recommendation ITU-R P.676-12 Annex 1, Tables 1 and 2.
    """
    return _load_table("oxygen"), _load_table("water_vapour")


def db_per_km_to_per_m(gamma_db_per_km):
    """Power attenuation coefficient (1/m) from a specific attenuation in dB/km.

    .. math:: \\alpha = \\gamma \\ln(10) / (10 \\cdot 1000)
    """
    return np.asarray(gamma_db_per_km, dtype=float) * np.log(10.0) / 1e4


def air_conditions(medium) -> AirConditions | None:
    """The air of a medium: its :class:`AirConditions`, or None for the vacuum.

    Raises ValueError for a medium given by its indices alone (no absorption is defined).
    """
    if isinstance(medium, AirConditions):
        return medium
    if not isinstance(medium, Medium):
        raise ValueError(f"medium = {type(medium).__name__}; allowed: a Medium from "
                         "Medium.air(...) or Medium.vacuum()")
    if medium.conditions is None and not medium.is_vacuum:
        raise ValueError(f"medium = indices n_group = {medium.n_group:.8g}, n_thz = "
                         f"{medium.n_thz:.8g} without air conditions: its absorption is not "
                         "defined; allowed: a Medium from Medium.air(...) or Medium.vacuum()")
    return medium.conditions


def _check_freq(freq):
    f = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    if np.any((f < _F_MIN_HZ) | (f > _F_MAX_HZ)):
        warnings.warn(f"freq outside 1-1000 GHz (got {f.min():.4g} to {f.max():.4g} Hz): "
                      f"{P676_EDITION} is valid from 1 GHz to 1 THz only; water lines above "
                      "1 THz are missing, so the absorption is underestimated there",
                      UserWarning, stacklevel=3)
    return f / 1e9


def _line_sum(f_ghz, f0, strength, width, shift):
    """Sum over lines of S_i F_i (lines on the last axis)."""
    f = f_ghz[..., None]
    lo = (width - shift * (f0 - f)) / ((f0 - f) ** 2 + width**2)
    hi = (width - shift * (f0 + f)) / ((f0 + f) ** 2 + width**2)
    return np.sum(strength * f / f0 * (lo + hi), axis=-1)


def _conditions(freq, medium):
    """Frequency (GHz), dry and vapour pressure (hPa, as P.676 writes them) and theta."""
    air = air_conditions(medium)
    f = _check_freq(freq)
    if air is None:
        return f, None, None, None
    theta = 300.0 / (air.temperature_c + _KELVIN)
    return f, air.dry_pressure / 100.0, air.vapour_pressure / 100.0, theta


def oxygen_line_parameters(p, e, theta):
    """Oxygen line centres, strengths, widths and interference factors of P.676 Table 1.

    Parameters
    ----------
    p, e : float
        Dry-air and water-vapour pressure (hPa, as the Recommendation writes them).
    theta : float
        300 / T (T in K).

    Returns
    -------
    (f0, S, width, delta) : tuple of ndarray, shape (44,)
        Centre (GHz), strength S_i (N'' = S_i F_i with F_i in 1/GHz), width (GHz) and
        the dimensionless interference factor of eqs. (3), (6a), (6b), (7).
    """
    f0, a1, a2, a3, a4, a5, a6 = _load_table("oxygen").T
    strength = a1 * 1e-7 * p * theta**3 * np.exp(a2 * (1 - theta))
    width = a3 * 1e-4 * (p * theta ** (0.8 - a4) + 1.1 * e * theta)
    width = np.sqrt(width**2 + 2.25e-6)
    shift = (a5 + a6 * theta) * 1e-4 * (p + e) * theta**0.8
    return f0, strength, width, shift


def water_line_parameters(p, e, theta):
    """Water-vapour line centres, strengths and widths of P.676 Table 2 (no interference).

    Same arguments as :func:`oxygen_line_parameters`; returns arrays of shape (35,), the
    last one the 1780 GHz continuum pseudo-line (eqs. (3), (6a), (6b)).
    """
    f0, b1, b2, b3, b4, b5, b6 = _load_table("water_vapour").T
    strength = b1 * 1e-1 * e * theta**3.5 * np.exp(b2 * (1 - theta))
    width0 = b3 * 1e-4 * (p * theta**b4 + b5 * e * theta**b6)
    width = 0.535 * width0 + np.sqrt(0.217 * width0**2 + 2.1316e-12 * f0**2 / theta)
    return f0, strength, width, np.zeros_like(f0)


def dry_continuum_parameters(p, e, theta):
    r"""Strengths of the dry continuum, eq. (8): the oxygen Debye term and the nitrogen term.

    Returns
    -------
    (S0, d, B) : tuple of float
        ``S0 = 6.14e-5 p theta^2``, the Debye width ``d = 5.6e-4 (p + e) theta^0.8`` (GHz)
        and ``B = 1.4e-12 p^2 theta^3.5``, so that
        :math:`N''_D = S_0 \frac{f/d}{1 + (f/d)^2} + \frac{B f}{1 + 1.9\times10^{-5} f^{1.5}}`.
    """
    d = 5.6e-4 * (p + e) * theta**0.8
    return 6.14e-5 * p * theta**2, d, 1.4e-12 * p**2 * theta**3.5


def oxygen_attenuation(freq, medium):
    """Specific attenuation by dry air, oxygen lines plus dry continuum (dB/km).

    Parameters
    ----------
    freq : array_like
        Frequency (Hz), valid 1e9 to 1e12 (a warning is emitted outside).
    medium : Medium
        From :meth:`Medium.air` (the vacuum gives zero).

    Returns
    -------
    ndarray
        gamma_o (dB/km), shape of ``freq``.

    Notes
    -----
    .. math:: \\gamma_o = 0.1820 f \\left[\\sum_i S_i F_i + N''_D(f)\\right]

    ITU-R P.676-12 Annex 1 eqs. (1)-(3), (5)-(9) and Table 1 (module docstring).
    """
    f, p, e, theta = _conditions(freq, medium)
    if p is None:
        return np.zeros_like(f)
    f0, strength, width, shift = oxygen_line_parameters(p, e, theta)
    s0, d, b = dry_continuum_parameters(p, e, theta)
    continuum = s0 * (f / d) / (1 + (f / d) ** 2) + b * f / (1 + 1.9e-5 * f**1.5)
    return 0.1820 * f * (_line_sum(f, f0, strength, width, shift) + continuum)


def water_vapour_attenuation(freq, medium):
    """Specific attenuation by water vapour, lines plus continuum pseudo-line (dB/km).

    Parameters
    ----------
    freq : array_like
        Frequency (Hz), valid 1e9 to 1e12 (a warning is emitted outside).
    medium : Medium
        From :meth:`Medium.air` (the vacuum gives zero).

    Returns
    -------
    ndarray
        gamma_w (dB/km), shape of ``freq``.

    Notes
    -----
    .. math:: \\gamma_w = 0.1820 f \\sum_i S_i F_i

    ITU-R P.676-12 Annex 1 eqs. (1)-(6) and Table 2, including its 1780 GHz continuum line.
    """
    f, p, e, theta = _conditions(freq, medium)
    if p is None:
        return np.zeros_like(f)
    f0, strength, width, shift = water_line_parameters(p, e, theta)
    return 0.1820 * f * _line_sum(f, f0, strength, width, shift)


def attenuation_coefficient(freq, medium):
    """Power attenuation coefficient alpha of humid air (1/m), ITU-R P.676 Annex 1.

    Parameters
    ----------
    freq : array_like
        Frequency (Hz); valid 1 GHz to 1 THz. Beyond 1 THz a warning is emitted and the
        value is an underestimate (lines above 1 THz are not in the Recommendation).
    medium : Medium
        From :meth:`Medium.air` (the vacuum gives zero).

    Returns
    -------
    ndarray
        alpha (1/m), shape of ``freq``; energy falls as exp(-alpha R).

    Notes
    -----
    .. math:: \\alpha = (\\gamma_o + \\gamma_w)\\,\\frac{\\ln 10}{10^4}
    """
    return db_per_km_to_per_m(oxygen_attenuation(freq, medium)
                              + water_vapour_attenuation(freq, medium))


def attenuate(field, freq, path_length, medium):
    """Cartesian field spectrum after a straight path through humid air.

    Parameters
    ----------
    field : array_like, complex, shape ``S + (3,)``
        Field spectrum (any unit), e.g. the result of :func:`~thzarray.field.nearfield.field_at`.
    freq : array_like
        Frequency (Hz), broadcastable to ``S``.
    path_length : array_like
        Path length through the air (m), >= 0, broadcastable to ``S``.
    medium : Medium
        From :meth:`Medium.air` (the vacuum leaves the field unchanged).

    Returns
    -------
    ndarray, complex, shape ``S + (3,)``
        ``field * exp(-alpha(f) R / 2)`` (amplitude factor of the power coefficient alpha).

    Notes
    -----
    .. math:: \\mathbf E(R) = \\mathbf E_0\\, e^{-\\alpha R/2}

    One path length per point: for an extended source the element-to-point paths differ
    by up to the source length L, an amplitude error of at most exp(alpha L / 2) - 1.
    """
    field = np.asarray(field)
    if field.ndim == 0 or field.shape[-1] != 3:
        raise ValueError(f"field has shape {field.shape}; allowed: Cartesian vectors on a last "
                         "axis of size 3")
    alpha = attenuation_coefficient(freq, medium)
    r = as_float_array("path_length", path_length, low=0.0, unit="m")
    factor = np.exp(-0.5 * alpha * r)
    try:
        np.broadcast_shapes(factor.shape, field.shape[:-1])
    except ValueError:
        raise ValueError(f"freq and path_length give shape {factor.shape}; allowed: shapes "
                         f"broadcastable to the field's {field.shape[:-1]}") from None
    return field * factor[..., None]
