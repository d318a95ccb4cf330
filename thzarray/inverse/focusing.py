"""The focusing that makes a wanted cone: lens focal length and pulse energy for a target.

The cone fixes the column length (exactly, :func:`thzarray.field.cone.length_for_cone`, at
one frequency; by root finding on :func:`thzarray.field.cone.band_cone_angle` for a band);
the column model of :func:`thzarray.source.laser.plasma_from_laser`
(:func:`~thzarray.source.laser.column_extent`) then gives, for each pulse energy, the lens
that makes that column (the column length does not decrease with the focal length).

The driver's group index that sets the cone is ``medium.n_group`` (linear air) unless
``group_index`` is given, e.g. ``PlasmaEstimate.group_index`` with the plasma's share
(:mod:`thzarray.field.cone`); the results record the one used.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from thzarray.air.medium import Medium
from thzarray.base.checks import as_float_array, check_scalar
from thzarray.field.cone import band_cone_angle, cone_angle, driver_medium, length_for_cone
from thzarray.source.laser import FilamentationModel, Pulse, column_extent

__all__ = ["ConeFocusing", "FocusingChart", "focusing_chart", "focusing_for_cone"]


def _grid_length(focal_length, energy, pulse, model):
    """Column lengths and onsets (m) on a (focal_length, energy) grid (NaN below threshold)."""
    col = column_extent(pulse, model, energy=np.asarray(energy, float)[None, :],
                        focal_length=np.asarray(focal_length, float)[:, None])
    return col["end"] - col["onset"], col["onset"]


@dataclass(frozen=True, eq=False)
class FocusingChart:
    """Cone angle at a band versus lens focal length and pulse energy.

    Attributes
    ----------
    focal_length : ndarray, shape (F,)
        Lens focal lengths (m).
    energy : ndarray, shape (E,)
        Pulse energies (J).
    length, onset : ndarray, shape (F, E)
        Column length and start from the lens (m) from the column model of
        :func:`~thzarray.source.laser.plasma_from_laser`; NaN where P/P_cr is below the
        collapse threshold.
    cone_angle : ndarray, shape (F, E)
        Cone angle (rad) of the column at the band; NaN where there is no column.
    group_index : float
        The driver's group index the cone angles were computed with.
    """

    focal_length: np.ndarray
    energy: np.ndarray
    length: np.ndarray
    onset: np.ndarray
    cone_angle: np.ndarray
    group_index: float


@dataclass(frozen=True, eq=False)
class ConeFocusing:
    """The lens for a wanted cone at each pulse energy, and what it rests on.

    Unpacks as ``focal_length, length = focusing_for_cone(...)``.

    Attributes
    ----------
    focal_length : ndarray, shape (E,)
        Lens focal length (m) per pulse energy; NaN where no focal length in the searched
        range gives the column (or P/P_cr is too low).
    length : float
        The column length (m) that gives the cone.
    group_index : float
        The driver's group index the cone was computed with.
    """

    focal_length: np.ndarray
    length: float
    group_index: float

    def __iter__(self):
        return iter((self.focal_length, self.length))


def _cone_of_length(length, freq, spectral_weight, medium):
    freq = np.asarray(freq, float)
    if freq.ndim == 0:
        return cone_angle(length, freq, medium)
    return band_cone_angle(float(length), freq, spectral_weight, medium)


def _check_pulse(pulse):
    pulse = Pulse(1e-3) if pulse is None else pulse
    if not isinstance(pulse, Pulse):
        raise ValueError(f"pulse = {type(pulse).__name__}; allowed: a Pulse (its duration, beam "
                         "radius and wavelength are used)")
    return pulse


def focusing_chart(focal_length, energy, freq, spectral_weight=None, *,
                   pulse: Pulse | None = None, model: FilamentationModel | None = None,
                   medium: Medium | None = None,
                   group_index: float | None = None) -> FocusingChart:
    """Data for a chart of cone angle versus focal length and pulse energy.

    Parameters
    ----------
    focal_length : array_like, shape (F,)
        Lens focal lengths (m), > 0.
    energy : array_like, shape (E,)
        Pulse energies (J), > 0.
    freq : float or array_like, shape (B,)
        One frequency (Hz) or increasing frequencies sampling the receiver band; a band
        uses :func:`~thzarray.field.cone.band_cone_angle`, one frequency
        :func:`~thzarray.field.cone.cone_angle`.
    spectral_weight : array_like, shape (B,), optional
        Spectral weight of the band (e.g. the receiver response).
    pulse : Pulse, optional
        Duration, beam radius and wavelength (its energy and lens are replaced by the
        grid); ``Pulse(1e-3)`` (50 fs, 5 mm, 800 nm) by default.
    model : FilamentationModel, optional
    medium : Medium, optional
        Defaults to vacuum, as in :mod:`thzarray.field.cone`.
    group_index : float, optional
        The driver's group index, 1 to 2; ``medium.n_group`` when None.

    Returns
    -------
    FocusingChart
        Arrays on the (focal_length, energy) grid, and the group index used.
    """
    medium = driver_medium(medium, group_index)
    pulse = _check_pulse(pulse)
    f = as_float_array("focal_length", focal_length, low=0.0, low_open=True, high=1e4, unit="m")
    en = as_float_array("energy", energy, low=0.0, low_open=True, high=10.0, unit="J")
    if f.ndim != 1 or en.ndim != 1:
        raise ValueError(f"focal_length, energy have shapes {f.shape}, {en.shape}; allowed: "
                         "1-D arrays")
    length, onset = _grid_length(f, en, pulse, model)
    cone = np.full(length.shape, np.nan)
    for idx in zip(*np.nonzero(np.isfinite(length))):
        cone[idx] = _cone_of_length(length[idx], freq, spectral_weight, medium)
    return FocusingChart(f, en, length, onset, cone, medium.n_group)


def focusing_for_cone(angle, energy, freq, spectral_weight=None, *,
                      pulse: Pulse | None = None, model: FilamentationModel | None = None,
                      medium: Medium | None = None, focal_range=(0.05, 50.0),
                      group_index: float | None = None) -> ConeFocusing:
    """Lens focal length (m) that gives a wanted cone angle at each pulse energy.

    Parameters
    ----------
    angle : float
        Wanted cone angle (rad), 0 to pi/2.
    energy : array_like, shape (E,)
        Pulse energies (J).
    freq, spectral_weight, pulse, model, medium, group_index
        As for :func:`focusing_chart`.
    focal_range : (float, float)
        Focal lengths searched (m).

    Returns
    -------
    ConeFocusing
        ``focal_length`` (shape (E,); NaN where no focal length in ``focal_range`` gives the
        column or P/P_cr is too low), the column ``length`` (m) and the ``group_index``
        used; unpacks as ``focal_length, length``.
    """
    medium = driver_medium(medium, group_index)
    pulse = _check_pulse(pulse)
    angle = check_scalar("angle", angle, low=0.0, low_open=True, high=np.pi / 2, unit="rad")
    en = as_float_array("energy", energy, low=0.0, low_open=True, high=10.0, unit="J")
    f_lo, f_hi = (check_scalar("focal_range", v, low=0.0, low_open=True, high=1e4, unit="m")
                  for v in focal_range)
    freq_arr = np.asarray(freq, float)
    if freq_arr.ndim == 0:
        target = float(length_for_cone(angle, freq_arr, medium))
    else:
        target = _band_length_for_cone(angle, freq_arr, spectral_weight, medium)
    out = np.full(en.shape, np.nan)
    for i, energy_i in np.ndenumerate(en):
        def gap(f, energy_i=energy_i):
            return float(_grid_length([f], [energy_i], pulse, model)[0][0, 0]) - target
        lo, hi = gap(f_lo), gap(f_hi)
        if np.isfinite(lo) and np.isfinite(hi) and lo * hi <= 0:
            out[i] = brentq(gap, f_lo, f_hi, xtol=1e-12, rtol=1e-12)
    return ConeFocusing(out, target, medium.n_group)


def _band_length_for_cone(angle, freq, spectral_weight, medium):
    """Column length whose band cone equals ``angle`` (bracketed by the single-f lengths)."""
    lengths = length_for_cone(angle, freq, medium)
    lo, hi = 0.5 * float(np.min(lengths)), 2.0 * float(np.max(lengths))

    def gap(length):
        return band_cone_angle(length, freq, spectral_weight, medium) - angle

    if gap(lo) * gap(hi) > 0:
        raise ValueError(f"angle = {np.degrees(angle):.6g} deg is not reached by the band's "
                         f"cone for lengths {lo:.4g} to {hi:.4g} m; allowed: a cone inside "
                         "the band's reachable range")
    return brentq(gap, lo, hi, xtol=1e-10, rtol=1e-10)
