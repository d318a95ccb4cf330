r"""Cone angle of a filament's emission and the plasma length that gives a wanted cone.

One uniform column of length L along z radiates (see :mod:`~thzarray.field.farfield`)

.. math:: \frac{d^2W}{df\,d\Omega} \propto \sin^2\theta\,
          \frac{\sin^2 X}{(n_g - n_T\cos\theta)^2},
          \qquad X = \frac{\omega L}{2c}(n_g - n_T\cos\theta),

a hollow cone whose polar angle of maximum is the *cone angle*. With :math:`a = \omega L/2c`,
:math:`\mu = \cos\theta` and :math:`x = a(n_g - n_T\mu)`, setting the derivative of the log
of the pattern to zero gives, exactly,

.. math:: n_T\,a\left(\frac1x - \cot x\right) = \frac{\mu}{1-\mu^2},

whose left side increases and right side decreases with x inside each lobe
:math:`k\pi < x < (k+1)\pi` (the main lobe is :math:`|x| < \pi`), so every lobe has exactly one
maximum; we find it by bisection and keep the largest. For v = c (:math:`n_g = n_T = 1`) and
long columns the main-lobe condition tends to :math:`\tan x = 2x`, the long-wire rule
:math:`\cos\theta_m = 1 - 0.371\lambda/L` of C. A. Balanis, Antenna Theory (traveling-wave
antennas).

Given the angle instead, the same condition reads :math:`1 - x\cot x = \mu D/(n_T(1-\mu^2))`
with :math:`D = n_g - n_T\mu`; its left side grows monotonically on :math:`0\le x<\pi`, so the
length follows from one bisection: :math:`L = 2 c x/(\omega D)`.

Reachable cones. Very short columns radiate like a dipole (90 degrees). When
:math:`n_T > n_g` (humid air) the cone shrinks towards the Cherenkov angle
:math:`\arccos(n_g/n_T)` as the column grows, never below it. When :math:`n_T < n_g` (dry air)
the main lobe eventually loses to a side lobe near :math:`\arccos(n_T/n_g)`: the cone has a
minimum, reached at a finite length, and longer columns do not narrow it further.

Which group index. :math:`n_g` is the driver's group index. Every function here takes
``group_index``: None (the default) uses ``medium.n_group``, the linear air's optical group
index, exactly as before; a number replaces it, e.g. the column's index with the plasma's
share :math:`n_e/(2n_c)` (``PlasmaEstimate.group_index`` of
:func:`thzarray.source.laser.plasma_from_laser`), which in a filament can exceed the dry-air
mismatch :math:`n_g - n_T` several times and moves the cone of a long column. The index a
result used is the one given, else ``medium.n_group`` (:func:`driver_group_index`);
:class:`ConeRange` records it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c
from scipy.optimize import minimize_scalar

from thzarray.air.medium import Medium
from thzarray.base.band import band_weights, check_band
from thzarray.base.checks import as_float_array, check_scalar
from thzarray.field.farfield import far_field
from thzarray.source.filament import Filament

__all__ = [
    "ConeRange",
    "band_cone_angle",
    "cone_angle",
    "cone_range",
    "driver_group_index",
    "driver_medium",
    "length_for_cone",
]

_BISECT_STEPS = 80


def driver_medium(medium: Medium | None, group_index: float | None = None) -> Medium:
    """The medium the cone functions use: ``medium`` (vacuum when None) with its group index
    replaced by ``group_index`` (1 to 2) when that is given.

    With ``group_index=None`` the medium is returned unchanged (the same object).
    """
    medium = Medium.vacuum() if medium is None else medium
    if group_index is None:
        return medium
    return medium.with_group_index(check_scalar("group_index", group_index, low=1.0, high=2.0))


def driver_group_index(medium: Medium | None, group_index: float | None = None) -> float:
    """The driver's group index a cone function uses: ``group_index``, else ``medium.n_group``."""
    return driver_medium(medium, group_index).n_group


def _phi(x):
    """1/x - cot(x), regular at x = 0."""
    x = np.asarray(x, float)
    small = np.abs(x) < 1e-4
    xs = np.where(small, 1.0, x)
    return np.where(small, x / 3 + x**3 / 45, 1 / xs - np.cos(xs) / np.sin(xs))


def _one_minus_mu(x, a, medium):
    return (x / a - medium.mismatch) / medium.n_thz


def _stationary_h(x, a, medium):
    omm = _one_minus_mu(x, a, medium)
    mu = 1 - omm
    return medium.n_thz * a * _phi(x) - mu / (omm * (2 - omm))


def _lobe_shape(x, a, medium):
    """Pattern at x up to a factor common to one (L, f): (1 - mu^2) sinc^2(x)."""
    omm = _one_minus_mu(x, a, medium)
    return omm * (2 - omm) * np.sinc(x / np.pi) ** 2


def _bisect(fun, lo, hi):
    for _ in range(_BISECT_STEPS):
        mid = 0.5 * (lo + hi)
        neg = fun(mid) < 0
        lo = np.where(neg, mid, lo)
        hi = np.where(neg, hi, mid)
    return 0.5 * (lo + hi)


def _candidate_lobes(a, medium):
    """Lower and upper x of the lobes that can hold the global maximum, shape (K, ...)."""
    x_lo = a * medium.mismatch
    x_hi = a * (medium.n_group + medium.n_thz)
    k_first = np.floor(np.maximum(x_lo, 0.0) / np.pi)
    ks = [k_first + j for j in range(3)]
    if medium.n_thz < medium.n_group:
        x_env = a * (medium.n_group - medium.n_thz**2 / medium.n_group)
        k_env = np.floor(x_env / np.pi)
        ks += [k_env + j for j in (-1, 0, 1)]
    lows, highs = [], []
    for k in ks:
        lo = np.where(k == 0, -np.pi, k * np.pi)
        hi = (k + 1) * np.pi
        lows.append(np.maximum(lo, x_lo))
        highs.append(np.minimum(hi, x_hi))
    return np.stack(lows), np.stack(highs)


def _solve_cone(a, medium):
    lo, hi = _candidate_lobes(a, medium)
    valid = hi > lo
    lo_s = np.where(valid, lo, 0.0)
    hi_s = np.where(valid, hi, 1.0)
    ab = np.broadcast_to(a, lo.shape)
    x = _bisect(lambda xx: _stationary_h(xx, ab, medium), lo_s, hi_s)
    val = np.where(valid, _lobe_shape(x, ab, medium), -np.inf)
    best = np.argmax(val, axis=0)
    xb = np.take_along_axis(x, best[None], axis=0)[0]
    omm = _one_minus_mu(xb, a, medium)
    return 2 * np.arcsin(np.sqrt(np.clip(omm / 2, 0.0, 1.0))), best == 0


def cone_angle(length, freq, medium: Medium | None = None, *,
               group_index: float | None = None):
    """Polar angle (rad) of the maximum of one uniform column's far-field pattern.

    Exact (not the small-angle rule); see the module docstring for the method.

    Parameters
    ----------
    length : array_like
        Column length (m), > 0.
    freq : array_like
        Frequency (Hz), > 0; broadcast with ``length``.
    medium : Medium, optional
        Defaults to vacuum.
    group_index : float, optional
        The driver's group index, 1 to 2; ``medium.n_group`` when None (module docstring).

    Returns
    -------
    ndarray
        Cone angle (rad), shape ``np.broadcast_shapes(length.shape, freq.shape)``, for the
        group index given, else ``medium.n_group``.
    """
    medium = driver_medium(medium, group_index)
    length = as_float_array("length", length, low=0.0, low_open=True, unit="m")
    freq = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    a = np.pi * freq * length / c
    return _solve_cone(a, medium)[0]


@dataclass(frozen=True)
class ConeRange:
    """Cone angles one column can have at one frequency (rad).

    ``lowest`` is attained by a column of ``length_at_lowest`` (m) when that is finite;
    when it is infinite the lowest angle is only approached (n_thz >= n_group). ``highest``
    (pi/2) is approached by vanishingly short columns. ``group_index`` is the driver's group
    index the range was computed with.
    """

    lowest: float
    highest: float
    length_at_lowest: float
    group_index: float

    def describe(self) -> str:
        lo = np.degrees(self.lowest)
        bracket = "[" if np.isfinite(self.length_at_lowest) else "("
        return f"{bracket}{lo:.6g}, {np.degrees(self.highest):.6g}) deg"


def cone_range(freq, medium: Medium | None = None, *,
               group_index: float | None = None) -> ConeRange:
    """The range of cone angles reachable by a uniform column at one frequency.

    Parameters
    ----------
    freq : float
        Frequency (Hz), > 0.
    medium : Medium, optional
        Defaults to vacuum.
    group_index : float, optional
        The driver's group index, 1 to 2; ``medium.n_group`` when None.
    """
    medium = driver_medium(medium, group_index)
    f = float(as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz"))
    if medium.n_thz >= medium.n_group:
        return ConeRange(float(np.arccos(medium.n_group / medium.n_thz)), np.pi / 2, np.inf,
                         medium.n_group)
    # The main lobe disappears at x_lo = a (n_g - n_T) = pi; the minimum cone is reached
    # before that, where a side lobe takes over. Scan in a, then refine.
    a_end = np.pi / medium.mismatch
    a_grid = np.linspace(a_end * 1e-3, a_end, 4001)
    angles, main = _solve_cone(a_grid, medium)
    i = int(np.argmin(angles))
    lo_a, hi_a = a_grid[max(i - 1, 0)], a_grid[min(i + 1, a_grid.size - 1)]
    res = minimize_scalar(lambda aa: float(_solve_cone(np.array(aa), medium)[0]),
                          bounds=(lo_a, hi_a), method="bounded",
                          options={"xatol": 1e-12 * a_end})
    a_best = res.x if res.fun <= angles[i] else a_grid[i]
    lowest = float(min(res.fun, angles[i]))
    return ConeRange(lowest, np.pi / 2, float(a_best * c / (np.pi * f)), medium.n_group)


def _one_minus_xcotx(x):
    small = np.abs(x) < 1e-4
    xs = np.where(small, 1.0, x)
    return np.where(small, x**2 / 3 + x**4 / 45, 1 - xs * np.cos(xs) / np.sin(xs))


def length_for_cone(angle, freq, medium: Medium | None = None, *,
                    group_index: float | None = None):
    """Shortest uniform column length (m) whose cone angle is ``angle`` at ``freq``.

    Parameters
    ----------
    angle : array_like
        Wanted cone angle (rad), inside :func:`cone_range`.
    freq : array_like
        Frequency (Hz), > 0; broadcast with ``angle``.
    medium : Medium, optional
        Defaults to vacuum.
    group_index : float, optional
        The driver's group index, 1 to 2; ``medium.n_group`` when None (module docstring).

    Returns
    -------
    ndarray
        Length (m), shape ``np.broadcast_shapes(angle.shape, freq.shape)``, for the group
        index given, else ``medium.n_group``.

    Raises
    ------
    ValueError
        When an angle cannot be reached; the message gives the reachable range.
    """
    medium = driver_medium(medium, group_index)
    angle = as_float_array("angle", angle, low=0.0, high=np.pi, unit="rad")
    freq = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    angle, freq = np.broadcast_arrays(angle, freq)
    omm = 2 * np.sin(angle / 2) ** 2
    mu = 1 - omm
    d = medium.mismatch + medium.n_thz * omm
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = mu * d / (medium.n_thz * omm * (2 - omm))
    ok = (angle > 0) & (angle < np.pi / 2) & (d > 0) & (ratio > 0)
    x = _bisect(lambda xx: _one_minus_xcotx(xx) - np.where(ok, ratio, 1.0),
                np.zeros(angle.shape), np.full(angle.shape, np.pi))
    with np.errstate(divide="ignore", invalid="ignore"):
        length = np.where(ok, x * c / (np.pi * freq * np.where(ok, d, 1.0)), np.nan)
    if ok.all() and medium.n_thz < medium.n_group:
        # Beyond the minimum cone the main lobe is no longer the maximum.
        back = cone_angle(length, freq, medium)
        ok = np.isclose(back, angle, rtol=1e-7, atol=0.0)
    if not ok.all():
        bad = np.flatnonzero(~ok.ravel())[0]
        f_bad, a_bad = freq.ravel()[bad], angle.ravel()[bad]
        rng = cone_range(f_bad, medium)
        raise ValueError(f"angle = {np.degrees(a_bad):.6g} deg cannot be reached at freq = "
                         f"{f_bad:.6g} Hz in this medium; allowed: {rng.describe()}")
    return length


def band_cone_angle(length, freq, spectral_weight=None, medium: Medium | None = None,
                    plasma=None, *, group_index: float | None = None):
    """Cone angle (rad) of the band-integrated pattern of one uniform column.

    The pattern is :math:`P(\\theta) = \\int w(f)\\, d^2W/(df\\,d\\Omega)\\, df`, summed with
    the package's trapezoid rule (:func:`thzarray.base.band.band_weights`) over the given
    frequencies, with the energy density per unit current spectrum, times
    :math:`|I(f)|^2` of ``plasma`` when given.

    Parameters
    ----------
    length : float
        Column length (m).
    freq : array_like, shape (F,)
        Increasing frequencies (Hz) sampling the band.
    spectral_weight : array_like, shape (F,), optional
        Spectral weight (e.g. a detector's response), >= 0; default 1.
    medium : Medium, optional
    plasma : Plasma or ColumnPlasma, optional
        Includes the plasma's current spectrum (driven at the group index used; varying
        along the column for a ColumnPlasma).
    group_index : float, optional
        The driver's group index, 1 to 2; ``medium.n_group`` when None (module docstring).

    Returns
    -------
    float
        The angle (rad) for the group index given, else ``medium.n_group``.
    """
    medium = driver_medium(medium, group_index)
    freq = check_band(freq, minimum=2)
    fil = Filament(length)
    spectral = band_weights(freq, spectral_weight)

    def band(theta):
        ff = far_field(fil, freq[:, None], np.atleast_1d(theta)[None, :], 0.0, medium, plasma)
        return (ff.energy_density * spectral[:, None]).sum(axis=0)

    finest = float(np.min(cone_angle(length, freq, medium)))
    grid = np.linspace(finest / 50, np.pi / 2, int(np.ceil(50 * np.pi / 2 / finest)) + 1)
    values = band(grid)
    i = int(np.argmax(values))
    lo, hi = grid[max(i - 1, 0)], grid[min(i + 1, grid.size - 1)]
    res = minimize_scalar(lambda t: -band(t)[0], bounds=(lo, hi), method="bounded",
                          options={"xatol": 1e-12})
    return float(res.x)
