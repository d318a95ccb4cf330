"""Where a design's columns radiate: the cone of its first column, for any source.

A uniform single-colour column (current along its axis, one plasma along it) has the cone
of :func:`~thzarray.field.cone.cone_angle` / :func:`~thzarray.field.cone.band_cone_angle`,
computed with the column's own group index. Any other column (a two-colour photocurrent
across the axis, a profile, a plasma varying along the column) radiates where its
band-integrated far field peaks: :func:`pattern_peak` finds that polar angle about the
column's axis numerically (a grid of 1/4 lobe width, then a bounded refinement), in the
azimuth where the column radiates most (across the current for a transverse one).
"""

from __future__ import annotations

import numpy as np
from scipy.optimize import minimize_scalar

from thzarray.base.band import band_weights
from thzarray.base.geometry import angles_of

__all__ = ["cone_direction", "pattern_peak", "reference_azimuth"]

_MAX_GRID = 4001


def reference_azimuth(fil) -> np.ndarray:
    """Unit vector across the column's axis in the azimuth of its brightest emission.

    Along the axis-x plane (the y-plane for an axis near x) for a current along the axis;
    across both the axis and the current for a transverse current (whose field vanishes
    only along itself).
    """
    a = np.asarray(fil.axis, float)
    if fil.is_axial:
        ref = np.array([1.0, 0.0, 0.0]) if abs(a[0]) < 0.99 else np.array([0.0, 1.0, 0.0])
        e1 = ref - (ref @ a) * a
    else:
        e1 = np.cross(a, np.asarray(fil.current, float))
    return e1 / np.linalg.norm(e1)


def pattern_peak(fil, freq, medium, plasma=None) -> float:
    """Polar angle from the column's axis (rad) where its band energy density peaks.

    Parameters
    ----------
    fil : Filament
    freq : ndarray, shape (F,)
        Band samples (Hz), weighted by the package's trapezoid rule (one frequency: weight 1).
    medium : Medium
    plasma : Plasma or ColumnPlasma, optional

    Returns
    -------
    float
        The angle (rad), 0 to pi/2.
    """
    from thzarray.field.farfield import far_field

    freq = np.atleast_1d(np.asarray(freq, float))
    wts = np.ones(1) if freq.size == 1 else band_weights(freq)
    fil = fil.replace(start=(0.0, 0.0, 0.0), delay=0.0)
    a, e1 = np.asarray(fil.axis, float), reference_azimuth(fil)

    def band(angle):
        angle = np.atleast_1d(angle)
        th, ph = angles_of(np.cos(angle)[:, None] * a + np.sin(angle)[:, None] * e1)
        ff = far_field(fil, freq[:, None], th[None, :], ph[None, :], medium, plasma)
        return (ff.energy_density * wts[:, None]).sum(axis=0)

    # Lobe width in angle about sqrt(lambda / L) near the axis: sample at a quarter of it.
    wavelength = 2.99792458e8 / (medium.n_thz * freq.max())
    step = 0.25 * min(np.sqrt(wavelength / fil.length), wavelength / fil.length * 4)
    count = int(min(_MAX_GRID, max(401, np.ceil(0.5 * np.pi / step) + 1)))
    grid = np.linspace(0.0, 0.5 * np.pi, count)
    values = band(grid)
    i = int(np.argmax(values))
    if i == 0 and values[0] >= values[1]:
        return 0.0
    lo, hi = grid[max(i - 1, 0)], grid[min(i + 1, count - 1)]
    res = minimize_scalar(lambda t: -band(t)[0], bounds=(lo, hi), method="bounded",
                          options={"xatol": 1e-10})
    return float(res.x)


def cone_direction(design, band) -> tuple:
    """(theta, phi) of the first column's cone (its band peak) in the reference azimuth."""
    from thzarray.field.cone import band_cone_angle, cone_angle
    from thzarray.source.plasma import Plasma

    fil = design.filaments[0]
    medium = design.medium
    plain = (fil.is_axial and fil.is_uniform
             and (design.plasma is None or isinstance(design.plasma, Plasma)))
    if plain:
        n_g = fil.group_index_in(medium)
        if band.size == 1:
            cone = float(cone_angle(fil.length, band[0], medium, group_index=n_g))
        else:
            cone = band_cone_angle(fil.length, band, medium=medium, group_index=n_g)
    else:
        cone = pattern_peak(fil, band, medium, design.plasma)
    a, e1 = np.asarray(fil.axis, float), reference_azimuth(fil)
    theta, phi = angles_of(np.cos(cone) * a + np.sin(cone) * e1)
    return float(theta), float(phi)
