r"""Beam metrics of a steered layout: main lobe, pointing error, widths, side and grating
lobes, and the element level at the target.

The report climbs from the target to the band pattern's peak, measures the half-power widths
along :math:`\hat\theta` and :math:`\hat\phi` through it (:mod:`thzarray.array.lobes`), reads
the peak side lobe outside the main lobe's basin on a sky grid
(:func:`thzarray.array.maps.sky_grid`), finds the array factor's grating lobes at the band's
top frequency, and states how far below the cone maximum the element pattern is at the
target (:func:`thzarray.array.steering.cone_level`), warning when the target sits in the
element's null.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
from scipy.constants import c

from thzarray.air.medium import Medium
from thzarray.array import _kernels as _array_kernels
from thzarray.array.arrayfield import array_factor, array_far_field, check_method
from thzarray.array.lobes import (
    angle_between,
    climb,
    half_width,
    is_periodic,
    label_lobes,
    nearest_index,
    resolution_angle,
    to_db,
)
from thzarray.array.maps import sky_grid, sky_map
from thzarray.array.steering import cone_level
from thzarray.array.targets import check_target, target_fields
from thzarray.base.band import band_weights, check_band
from thzarray.source.filament import as_filaments, layout_extent
from thzarray.source.plasma import Plasma

__all__ = ["GRATING_LEVEL", "NULL_LEVEL_DB", "ConeNullWarning", "GratingLobe", "SteeringReport",
           "steering_report"]

NULL_LEVEL_DB = -20.0
"""A target whose element level is this far below the cone maximum (dB) is "in the null"."""
GRATING_LEVEL = 0.5
"""Array-factor level (relative to the in-phase maximum) above which a lobe counts as grating."""


class ConeNullWarning(UserWarning):
    """The target lies in the element pattern's null: phasing cannot put energy there."""


@dataclass(frozen=True)
class GratingLobe:
    """A lobe where the array factor nearly repeats its main lobe.

    Attributes
    ----------
    theta, phi : float
        Direction of the lobe's peak on the sky grid (rad).
    array_factor_db : float
        ``|AF|^2 / (sum |q_n|)^2`` there at the band's highest frequency (dB).
    pattern_db : float
        Band energy there relative to the main lobe's peak (dB), element pattern included.
    """

    theta: float
    phi: float
    array_factor_db: float
    pattern_db: float


@dataclass(frozen=True, eq=False)
class SteeringReport:
    """Beam metrics of a steered layout.

    Attributes
    ----------
    target : Direction or Aperture
    energy : float
        Band energy into the target (J/sr for a direction, J for a receiver).
    main_lobe : (float, float)
        (theta, phi) of the band pattern's peak reached from the target (rad).
    pointing_error : float
        Angle between main lobe and target (rad); the element pattern's slope pulls the
        lobe toward the cone when the target is on the cone's flank.
    beam_width : (float, float)
        Half-power full widths through the main lobe along theta-hat and phi-hat (rad).
    peak_sidelobe_db : float
        Largest band energy outside the main lobe relative to its peak (dB), on the sky grid;
        the rest of the cone usually sets it.
    peak_sidelobe : (float, float)
        Its direction (rad).
    grating_lobes : tuple of GratingLobe
        At the band's highest frequency ``grating_freq`` (Hz).
    grating_freq : float
    cone_level_db : float
        Element level at the target relative to the cone maximum, band sums (dB).
    notes : tuple of str
        Plain-language remarks (flank, null, squint, coarse grid).
    """

    target: object
    energy: float
    main_lobe: tuple
    pointing_error: float
    beam_width: tuple
    peak_sidelobe_db: float
    peak_sidelobe: tuple
    grating_lobes: tuple
    grating_freq: float
    cone_level_db: float
    notes: tuple


def _band_pattern(fils, freq, bw, medium, plasma):
    """Band energy per steradian at a few directions (numpy path: no thread start-up)."""
    def pattern(th, ph):
        ff = array_far_field(fils, freq[:, None], np.asarray(th)[None, :],
                             np.asarray(ph)[None, :], medium, plasma, compiled=False)
        return bw @ ff.energy_density
    return pattern


def steering_report(filaments, target, freq, medium: Medium | None = None,
                    plasma: Plasma | None = None, spectral_weight=None, *, sky_theta=None,
                    sky_phi=None, method: str = "auto") -> SteeringReport:
    """Main lobe, beam width, side lobes, grating lobes and cone level of a steered layout.

    Parameters
    ----------
    filaments : sequence of Filament
        The layout with its delays.
    target : Direction or Aperture
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    medium, plasma, spectral_weight : optional
    sky_theta, sky_phi : array_like, optional
        Sky grid (rad) for the side-lobe and grating-lobe search; default
        :func:`thzarray.array.maps.sky_grid`. A periodic phi grid (2 pi j / P) is wrapped.
    method : {"auto", "direct", "nufft"}
        How the sky map's field is summed (:func:`thzarray.array.maps.sky_map`).

    Returns
    -------
    SteeringReport

    Warns
    -----
    ConeNullWarning
        When the element level at the target is below ``NULL_LEVEL_DB``.
    """
    fils = as_filaments(filaments)
    target = check_target(target)
    method = check_method(method)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, spectral_weight)
    tf = target_fields(fils, target, freq, medium, plasma, spectral_weight)
    energy = tf.energy([f.delay for f in fils])
    level = cone_level(fils, target.theta, target.phi, freq, medium, plasma, spectral_weight)
    notes = []
    if level.band_db < NULL_LEVEL_DB:
        msg = (f"the target lies in the element pattern's null ({level.band_db:.1f} dB below "
               "the cone maximum): phasing multiplies the element pattern and cannot put "
               "energy there; steer onto the cone or tilt the columns")
        warnings.warn(msg, ConeNullWarning, stacklevel=2)
        notes.append(msg)
    elif level.band_db < -1.0:
        notes.append(f"the target is on the cone's flank, {level.band_db:.1f} dB below the "
                     "cone maximum; phasing gains N^2 over what one column sends there")
    pattern = _band_pattern(fils, freq, bw, medium, plasma)
    step = c / (freq[-1] * medium.n_thz * layout_extent(fils)) / 20
    th_m, ph_m, peak = climb(pattern, target.theta, target.phi, step)
    pointing = angle_between(th_m, ph_m, target.theta, target.phi)
    widths = tuple(half_width(pattern, th_m, ph_m, peak, step, a, 1.0)
                   + half_width(pattern, th_m, ph_m, peak, step, a, -1.0)
                   for a in ("theta", "phi"))
    if sky_theta is None or sky_phi is None:
        sky_theta, sky_phi = sky_grid(fils, freq, medium)
    sm = sky_map(fils, sky_theta, sky_phi, freq, medium, plasma, spectral_weight, method=method)
    wrap = is_periodic(sm.phi)
    i0, j0 = nearest_index(sm.theta, sm.phi, th_m, ph_m)
    win = (slice(max(i0 - 1, 0), i0 + 2), slice(max(j0 - 1, 0), j0 + 2))
    di, dj = np.unravel_index(np.argmax(sm.energy[win]), sm.energy[win].shape)
    region = _array_kernels.descending_region(sm.energy, win[0].start + di, win[1].start + dj,
                                              wrap)
    outside = np.where(region, -np.inf, sm.energy)
    if np.isfinite(outside).any():
        k = np.unravel_index(np.argmax(outside), outside.shape)
        psl, psl_dir = to_db(outside[k] / peak), (float(sm.theta[k[0]]), float(sm.phi[k[1]]))
    else:
        psl, psl_dir = -np.inf, (np.nan, np.nan)
    lobes = _grating_lobes(fils, freq[-1], medium, sm, peak, target, wrap)
    if lobes:
        notes.append(f"{len(lobes)} grating lobe(s) at {freq[-1]:.4g} Hz")
    if np.isfinite(widths[0]) and pointing > 0.5 * min(widths):
        notes.append(f"the main lobe peaks {np.degrees(pointing):.3g} deg from the target "
                     "(element-pattern slope or squint)")
    if sm.theta.size > 1 and np.diff(sm.theta).max() > 0.5 * 20 * step:
        notes.append("the sky grid is coarser than half the resolution angle; side lobes may "
                     "be missed (pass sky_theta, sky_phi)")
    return SteeringReport(target, energy, (th_m, ph_m), pointing, widths, psl, psl_dir,
                          tuple(lobes), float(freq[-1]), level.band_db, tuple(notes))


def _grating_lobes(fils, f_top, medium, sm, peak, target, wrap):
    if len(fils) < 2:
        return []
    top = np.sum(np.abs([f.amplitude for f in fils])) ** 2
    af = np.abs(array_factor(fils, f_top, sm.theta[:, None], sm.phi[None, :], medium)) ** 2 / top
    lab = label_lobes(af >= GRATING_LEVEL, wrap)
    starts = np.array([f.start for f in fils])
    res = resolution_angle(starts, f_top, medium)

    def af2(th, ph):
        return np.abs(array_factor(fils, f_top, th, ph, medium, compiled=False)) ** 2
    th_a, ph_a, _ = climb(af2, target.theta, target.phi, res / 20)
    i0, j0 = nearest_index(sm.theta, sm.phi, th_a, ph_a)
    win = lab[max(i0 - 2, 0):i0 + 3, max(j0 - 2, 0):j0 + 3]
    main = set(np.unique(win[win > 0]).tolist())
    lobes = []
    for k in np.unique(lab[lab > 0]):
        if int(k) in main:
            continue
        vals = np.where(lab == k, af, -np.inf)
        i, j = np.unravel_index(np.argmax(vals), vals.shape)
        lobes.append(GratingLobe(float(sm.theta[i]), float(sm.phi[j]), to_db(af[i, j]),
                                 to_db(sm.energy[i, j] / peak)))
    return sorted(lobes, key=lambda g: -g.pattern_db)
