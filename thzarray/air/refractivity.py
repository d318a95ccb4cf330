r"""Complex THz index of humid air: P.453 background, and absorption with dispersion of every line.

.. math:: n(f) = n_{P.453} + \rho\,10^{-6}\left[\sum_i S_iF_i(f) + N_D(f)\right]
          + \sum_j \Delta n_j(f),

- :math:`n_{P.453}` is :attr:`Medium.n_thz <thzarray.air.medium.Medium.n_thz>`, the
  non-dispersive radio refractivity of ITU-R P.453 (the value at zero frequency);
- :math:`S_iF_i` are the oxygen and water-vapour lines of ITU-R P.676-12 Annex 1 (Tables 1
  and 2, the 1780 GHz continuum pseudo-line included) with the complex line shape of
  :mod:`thzarray.air.lineshape` (Liebe's model: the imaginary part is P.676's :math:`F_i`,
  the real part the line's dispersion, zero at f = 0);
- :math:`N_D` is P.676's dry continuum made complex: the oxygen Debye term as Liebe writes
  it, :math:`S_0\,[-f/(f + id)]`, whose imaginary part is P.676's
  :math:`S_0 (f/d)/(1 + (f/d)^2)`, and the pressure-induced nitrogen term
  :math:`N''_N = Bf/(1 + 1.9\times10^{-5}f^{1.5})` (f in GHz), whose real part Liebe's model
  leaves out; here it is its Kramers-Kronig transform, zero at f = 0,

  .. math:: N'_N(f) = B\,a^{-2/3}\,h\!\left(a^{2/3}f\right),\qquad
            h(x) = \frac{2x^2}{\pi}\,\mathrm{P}\!\!\int_0^\infty
            \frac{dt}{(1 + t^{3/2})(t^2 - x^2)},\quad a = 1.9\times10^{-5},

  a universal function tabulated once by quadrature (at most 3e-3 ppm at 1 atm);
- :math:`\rho = 0.1820\,c\ln 10/(4\pi\times10^{7}) = 0.99977`: P.676's rounded constant
  0.1820 (dB/km per GHz ppm) against the exact :math:`4\pi\times10^{7}/(c\ln 10)`, applied
  to the whole complex sum so that :math:`2\omega\operatorname{Im}n/c` is exactly P.676's
  attenuation and the real part stays its Kramers-Kronig partner;
- :math:`\Delta n_j` are the lines of a user's HITRAN list (:mod:`thzarray.air.hitran`),
  added above 1 THz or replacing P.676's lines of their molecules.

Every term is analytic in the upper half of the complex frequency plane and Hermitian
(:math:`n(-f) = n(f)^*`), so the index is causal with a finite limit
:func:`high_frequency_index` far above every line. Time dependence
:math:`e^{-i\omega t}`; :math:`\operatorname{Im}n > 0` absorbs.
"""

from __future__ import annotations

import warnings
from functools import lru_cache

import numpy as np
from scipy import integrate
from scipy.constants import c
from scipy.interpolate import CubicSpline

from thzarray.air.absorption import (
    air_conditions,
    dry_continuum_parameters,
    oxygen_line_parameters,
    water_line_parameters,
)
from thzarray.air.hitran import LineList, hitran_lines
from thzarray.air.lineshape import Lines, line_index, line_index_limit
from thzarray.base.checks import as_float_array
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET

__all__ = [
    "P676_COVERAGE",
    "P676_SCALE",
    "complex_index",
    "high_frequency_index",
    "nitrogen_dispersion",
]

P676_COVERAGE = 1e12  # Hz: the highest frequency of ITU-R P.676 Annex 1
P676_SCALE = 0.1820 * c * np.log(10.0) / (4 * np.pi * 1e7)
_A_N2 = 1.9e-5                       # GHz^-1.5, P.676 eq. (8)
_X_SCALE = _A_N2 ** (2.0 / 3.0)      # x = a^(2/3) f, f in GHz
_STIELTJES = (np.pi / 1.5) / np.sin(np.pi / 1.5)  # int_0^inf dt / (1 + t^1.5)
_H_GRID = (1e-5, 1e5, 401)           # x range and nodes of the tabulated h(x)
_KELVIN = 273.15


def _h_quad(x: float) -> float:
    """h(x) by quadrature, the pole's singular part subtracted on [0, 2x] (its PV is 0)."""
    def g(t):
        return 1.0 / ((1 + t**1.5) * (t * t - x * x))

    def smooth(t):
        return (1.0 / ((1 + t**1.5) * (t + x)) - 1.0 / ((1 + x**1.5) * 2 * x)) / (t - x) \
            if t != x else 0.0

    opts = dict(limit=400, epsabs=0.0, epsrel=1e-11)
    with warnings.catch_warnings():
        # QUADPACK may report round-off at the level asked for; the table is checked
        # against an arbitrary-precision integral in the tests.
        warnings.simplefilter("ignore", integrate.IntegrationWarning)
        total = (integrate.quad(smooth, 0.0, 2 * x, points=[x], **opts)[0]
                 + integrate.quad(g, 2 * x, np.inf, **opts)[0])
    return 2 * x * x / np.pi * total


@lru_cache(maxsize=1)
def _h_table() -> CubicSpline:
    x = np.geomspace(*_H_GRID)
    return CubicSpline(np.log(x), [_h_quad(v) for v in x])


def nitrogen_dispersion(x):
    """The universal Kramers-Kronig partner h(x) of the nitrogen continuum (dimensionless).

    Parameters
    ----------
    x : array_like
        Scaled frequency :math:`a^{2/3} f` (f in GHz, a = 1.9e-5), >= 0.

    Returns
    -------
    ndarray
        h(x), shape of ``x``: 0 at x = 0, -2/pi times 2.4184 for x -> inf.

    Notes
    -----
    .. math:: h(x) = \\frac{2x^2}{\\pi}\\mathrm{P}\\!\\int_0^\\infty
              \\frac{dt}{(1 + t^{3/2})(t^2 - x^2)}

    Tabulated from 1e-5 to 1e5 (cubic spline in log x); below, its small-x limit
    :math:`-2x^2 I/\\pi` and above, its limit :math:`-2I/\\pi`, with
    :math:`I = \\int_0^\\infty dt/(1 + t^{3/2}) = (2\\pi/3)/\\sin(2\\pi/3)`
    (Gradshteyn & Ryzhik 3.241.2).
    """
    x = np.asarray(x, dtype=float)
    lo, hi, _ = _H_GRID
    inner = np.clip(x, lo, hi)
    out = _h_table()(np.log(inner))
    out = np.where(x < lo, -2 * _STIELTJES / np.pi * x * x, out)
    return np.where(x > hi, -2 * _STIELTJES / np.pi, out)


def _p676_lines(air, line_list: LineList | None) -> Lines:
    """P.676's lines (strengths in Hz, scaled by rho), without those a list replaces."""
    theta = 300.0 / (air.temperature_c + _KELVIN)
    p, e = air.dry_pressure / 100.0, air.vapour_pressure / 100.0
    replaced = set(line_list.molecules) if line_list is not None and \
        line_list.use == "replace" else set()
    parts = []
    for molecule, params in ((7, oxygen_line_parameters), (1, water_line_parameters)):
        f0, s, w, d = params(p, e, theta)
        keep = np.ones(f0.size, dtype=bool)
        if molecule in replaced:
            keep = f0 > P676_COVERAGE / 1e9  # the water continuum pseudo-line stays
        parts.append(Lines(1e9 * f0[keep], 1e3 * P676_SCALE * s[keep], 1e9 * w[keep], d[keep]))
    return parts[0].join(parts[1])


def _user_lines(air, line_list: LineList | None) -> Lines | None:
    if line_list is None:
        return None
    if not isinstance(line_list, LineList):
        raise ValueError(f"lines = {type(line_list).__name__}; allowed: a LineList from "
                         "parse_hitran(...) or None")
    chosen = line_list if line_list.use == "replace" else line_list.select(
        line_list.centre > P676_COVERAGE)
    return hitran_lines(chosen, air)


def _all_lines(air, line_list: LineList | None) -> Lines:
    lines = _p676_lines(air, line_list)
    extra = _user_lines(air, line_list)
    return lines if extra is None else lines.join(extra)


def _coverage(line_list: LineList | None) -> float:
    if line_list is None:
        return P676_COVERAGE
    if line_list.use == "replace":
        return line_list.coverage[1]
    return max(P676_COVERAGE, line_list.coverage[1])


def _continuum(freq_ghz, air):
    """Complex dry continuum (ppm): Liebe's Debye term plus the completed nitrogen term."""
    theta = 300.0 / (air.temperature_c + _KELVIN)
    s0, d, b = dry_continuum_parameters(air.dry_pressure / 100.0, air.vapour_pressure / 100.0,
                                        theta)
    f = freq_ghz
    debye = -s0 * f / (f + 1j * d)
    nitrogen = b / _X_SCALE * nitrogen_dispersion(_X_SCALE * f) + 1j * b * f / (1 + _A_N2 * f**1.5)
    return debye + nitrogen


def complex_index(freq, medium, lines: LineList | None = None, *,
                  memory_budget: float = DEFAULT_MEMORY_BUDGET):
    """Complex THz refractive index of the medium's air (dimensionless).

    Parameters
    ----------
    freq : array_like
        Frequency (Hz), >= 0. Above what the lines cover (1 THz for P.676 alone, else the
        list's coverage) a UserWarning is emitted: lines there are missing.
    medium : Medium
        From :meth:`Medium.air` (the vacuum gives 1; a medium without air conditions
        raises ValueError).
    lines : LineList, optional
        A HITRAN-format line list to add above 1 THz or to replace P.676's lines with.
    memory_budget : float
        Bytes for temporaries (frequencies x lines are chunked).

    Returns
    -------
    ndarray, complex, shape of ``freq``
        n = n' + i n''; the power attenuation coefficient is 4 pi f n'' / c.

    Notes
    -----
    .. math:: n(f) = n_{P.453} + \\rho 10^{-6}\\Big[\\sum_i S_iF_i(f) + N_D(f)\\Big]
              + \\sum_j \\Delta n_j(f)

    (module docstring; Liebe 1989, ITU-R P.676-12 Annex 1, ITU-R P.453).
    """
    f = as_float_array("freq", freq, low=0.0, unit="Hz")
    air = air_conditions(medium)
    if air is None:
        return np.ones(f.shape, dtype=complex)
    top = _coverage(lines)
    if np.any(f > top):
        warnings.warn(f"freq up to {f.max():.4g} Hz exceeds the {top:.4g} Hz that the loaded "
                      "lines cover; absorption and dispersion of lines above are missing",
                      UserWarning, stacklevel=2)
    dn = line_index(f, _all_lines(air, lines), memory_budget=memory_budget)
    dn += 1e-6 * P676_SCALE * _continuum(f / 1e9, air)
    return medium.n_thz + dn


def high_frequency_index(medium, lines: LineList | None = None) -> float:
    """The model's real index far above every line (the speed c / n of a front).

    Parameters
    ----------
    medium : Medium
    lines : LineList, optional

    Returns
    -------
    float
        :math:`n(\\infty) = n_{P.453} - \\sum 2S_i/f_i - \\rho 10^{-6}(S_0 + 2IB a^{-2/3}/\\pi)`;
        1 for the vacuum.
    """
    air = air_conditions(medium)
    if air is None:
        return 1.0
    all_lines = _all_lines(air, lines)
    theta = 300.0 / (air.temperature_c + _KELVIN)
    s0, _, b = dry_continuum_parameters(air.dry_pressure / 100.0, air.vapour_pressure / 100.0,
                                        theta)
    continuum = -s0 - 2 * _STIELTJES / np.pi * b / _X_SCALE
    return medium.n_thz + line_index_limit(all_lines) + 1e-6 * P676_SCALE * continuum
