"""Jobs about the columns' far field: the cone-versus-length chart and the pattern.

Each job takes a validated :class:`~thzarray.app.design.Design` and returns a frozen result
with coordinate arrays (SI) and a ``summary()`` dict of plain numbers for JSON output.
Nothing here draws or writes files.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thzarray.app.design import Design
from thzarray.app.design.checker import grid_values
from thzarray.app.jobs.cones import pattern_peak
from thzarray.app.jobs.context import Phasing, phasing
from thzarray.field.cone import cone_angle, length_for_cone
from thzarray.field.farfield import far_field
from thzarray.field.polarization import polarization_map

__all__ = ["ConeChart", "PatternResult", "cone_chart", "pattern", "projected_grid"]

_DEFAULT_LENGTHS = np.linspace(0.01, 2.0, 200)
_PEAK_LENGTHS = 40
"""Lengths of the chart when the cone is found from the pattern (two-colour, profiles)."""


@dataclass(frozen=True, eq=False)
class ConeChart:
    """Cone angle versus plasma length at several frequencies (rad, m, Hz)."""

    lengths: np.ndarray
    freqs: np.ndarray
    angles: np.ndarray            # (F, L)
    target_angle: float | None
    target_lengths: np.ndarray | None  # (F,), NaN where unreachable
    group_index: float

    def summary(self) -> dict:
        out = {"freq_hz": self.freqs.tolist(), "group_index": self.group_index}
        if self.target_angle is not None:
            out["target_angle_deg"] = float(np.degrees(self.target_angle))
            out["length_for_target_m"] = [None if not np.isfinite(v) else float(v)
                                          for v in self.target_lengths]
        return out


def cone_chart(design: Design) -> ConeChart:
    """Cone angle of the design's column versus length, at the band edges and centre.

    A uniform single-colour column uses :func:`~thzarray.field.cone.cone_angle` with the
    design's driver group index; any other source (two-colour, profiled, plasma varying
    along the column) the peak of its pattern (:func:`~thzarray.app.jobs.cones.pattern_peak`)
    at 40 lengths. The band is ``[cone].band`` (one frequency or [low, high]), else the observation
    frequencies' extremes and median.
    """
    cone = design.cone
    if cone is not None and cone.band is not None:
        band = np.asarray(cone.band, dtype=float)
        freqs = band if band.size == 1 else np.array([band[0], band.mean(), band[-1]])
    else:
        freqs = np.unique(np.quantile(design.grid.freq, [0.0, 0.5, 1.0]))
    lengths = _DEFAULT_LENGTHS if cone is None else grid_values(cone.lengths)
    n_g = design.source.group_index
    target = None if cone is None else cone.target_angle
    if _is_plain(design):
        angles = cone_angle(lengths[None, :], freqs[:, None], design.medium, group_index=n_g)
    else:
        lengths = np.geomspace(lengths.min(), lengths.max(), _PEAK_LENGTHS)
        axis = design.filaments[0].axis
        columns = [design.source.column(float(L), axis) for L in lengths]
        # a plasma varying along the design's columns is not defined along other lengths:
        # the chart uses its reference plasma
        plasma = getattr(design.plasma, "plasma", design.plasma)
        angles = np.array([[pattern_peak(col, np.array([f]), design.medium, plasma)
                            for col in columns] for f in freqs])
    target_lengths = None
    if target is not None:
        target_lengths = np.full(freqs.shape, np.nan)
        for i, f in enumerate(freqs):
            if not _is_plain(design):
                # first length whose peak reaches the target from above (angles fall with L)
                below = np.nonzero(angles[i] <= target)[0]
                if below.size and below[0] > 0:
                    j = below[0]
                    target_lengths[i] = np.interp(target, angles[i, j - 1:j + 1][::-1],
                                                  lengths[j - 1:j + 1][::-1])
                continue
            try:
                target_lengths[i] = float(length_for_cone(target, f, design.medium,
                                                          group_index=n_g))
            except ValueError:
                pass  # unreachable at this frequency: shown as a gap, stated in the summary
    return ConeChart(lengths, freqs, angles, target, target_lengths, n_g)


def _is_plain(design) -> bool:
    """A uniform column with its current along the axis and one plasma along it."""
    from thzarray.source.plasma import Plasma

    fil = design.filaments[0]
    return fil.is_axial and fil.is_uniform and (design.plasma is None
                                                 or isinstance(design.plasma, Plasma))


def projected_grid(theta_max: float, points: int):
    """Directions on a square grid of projected angles x = theta cos phi, y = theta sin phi.

    Returns x (rad, shape (N,)), y (rad, shape (N,)), theta and phi (rad, shape (N, N));
    corners beyond theta = pi are clipped to pi.
    """
    x = np.linspace(-theta_max, theta_max, points)
    xx, yy = np.meshgrid(x, x)
    theta = np.minimum(np.hypot(xx, yy), np.pi)
    phi = np.arctan2(yy, xx)
    return x, x.copy(), theta, phi


@dataclass(frozen=True, eq=False)
class PatternResult:
    """Far-field products of a design, with its columns phased as the design says.

    Attributes
    ----------
    freq : (F,) Hz; theta : (T,) rad; phi : (P,) rad
    energy_density : (F, T, P) J/(Hz sr) (per unit current spectrum without a plasma)
    sky_x, sky_y : (N,) rad projected angles; sky : (F, N, N); sky_pol : (2, F, N, N)
    cone_angles : (F,) rad, the maximum of the phi-averaged cut at each frequency
    phased : Phasing
    """

    freq: np.ndarray
    theta: np.ndarray
    phi: np.ndarray
    energy_density: np.ndarray
    sky_x: np.ndarray
    sky_y: np.ndarray
    sky: np.ndarray
    sky_pol: np.ndarray
    cone_angles: np.ndarray
    absolute: bool
    phased: Phasing
    scale: object = None    # thzarray.app.jobs.scale.Scale (applied to the energies)

    def summary(self) -> dict:
        cut = self.energy_density.mean(axis=2)
        return {
            "freq_hz": self.freq.tolist(),
            "cone_angle_deg": np.degrees(self.cone_angles).tolist(),
            "peak_energy_density": cut.max(axis=1).tolist(),
            "energy_density_unit": "J/(Hz sr)" if self.absolute else "J/(Hz sr) per (A s)^2",
            **self.scale.summary(), **self.phased.summary(),
        }


def pattern(design: Design, sky_points: int = 121, toward=None) -> PatternResult:
    """Far field on the design's grid, plus a projected sky map with polarization."""
    g = design.grid
    phased = phasing(design, toward)
    fils = phased.filaments
    ff = far_field(fils, g.freq[:, None, None], g.theta[:, None], g.phi, design.medium,
                   design.plasma)
    dens = ff.energy_density
    cut = dens.mean(axis=2)
    cone = g.theta[np.argmax(cut, axis=1)]
    x, y, th, ph = projected_grid(float(g.theta.max()), sky_points)
    sky_ff = far_field(fils, g.freq[:, None, None], th[None], ph[None], design.medium,
                       design.plasma)
    pm = polarization_map(sky_ff, axis=fils[0].axis)
    direction = pm.direction
    pol = np.stack([direction[..., 0], direction[..., 1]])
    from thzarray.app.jobs.scale import absolute_scale

    scale = absolute_scale(design, phased)
    return PatternResult(g.freq, g.theta, g.phi, dens * scale.factor, x, y,
                         sky_ff.energy_density * scale.factor, pol, cone, scale.absolute,
                         phased, scale)
