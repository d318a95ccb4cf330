"""Jobs about what the design's receiver records: the detector-plane map and the range budget.

Both use the design's phasing (:func:`thzarray.app.jobs.context.phasing`): a steered layout
is mapped and budgeted with its delays.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c

from thzarray.app.design import Design
from thzarray.app.design.checker import grid_values
from thzarray.app.jobs.context import Phasing, phasing
from thzarray.base.geometry import angles_of
from thzarray.field.farfield import far_field

__all__ = ["BudgetResult", "DetectorMap", "FAR_FIELD_TOLERANCE", "budget", "detector_map"]

FAR_FIELD_TOLERANCE = 0.05
"""Relative error of the far-field prediction above which the budget says so."""

_DEFAULT_BUDGET = dict(ranges=np.linspace(1.0, 50.0, 50), relative_humidity=(0.0, 0.5, 1.0),
                       theta=None, phi=0.0)


@dataclass(frozen=True, eq=False)
class DetectorMap:
    """What the design's receiver records on the design's plane, beside the far field.

    Attributes
    ----------
    x, y : (NX,), (NY,) in-plane coordinates (m); freq : (F,) band samples (Hz)
    near, far : (NY, NX) energy per pulse (J, or per (A s)^2 without a plasma) from the exact
        finite-distance field and from the far-field prediction at the same points
    distance : float
        Plane distance: from the plane's origin to its centre along its normal (m).
    phased : Phasing
    """

    x: np.ndarray
    y: np.ndarray
    freq: np.ndarray
    near: np.ndarray
    far: np.ndarray
    distance: float
    absolute: bool
    phased: Phasing
    scale: object = None    # thzarray.app.jobs.scale.Scale (applied to near and far)

    def summary(self) -> dict:
        def peak(m):
            j, i = np.unravel_index(np.argmax(m), m.shape)
            return {"x_m": float(self.x[i]), "y_m": float(self.y[j]), "energy": float(m[j, i])}

        return {"plane_distance_m": self.distance, "near_field_peak": peak(self.near),
                "far_field_peak": peak(self.far),
                "near_over_far_peak": float(self.near.max() / self.far.max())
                if self.far.max() > 0 else None,
                "energy_unit": "J" if self.absolute else "J per (A s)^2",
                **self.scale.summary(), **self.phased.summary()}


def _needs(design: Design, *what):
    missing = [w for w in what if getattr(design.sections, w) is None]
    if missing:
        raise ValueError(f"design {design.name!r}: this job needs section(s) "
                         + ", ".join(f"[{m}]" for m in missing) + "; allowed: add them")


def _receiver_energy(design, freq, field, surface):
    from thzarray.detect.receivers import BroadbandDetector, detected_energy, received_energy

    if isinstance(design.receiver, BroadbandDetector):
        return detected_energy(design.receiver, freq, field, design.medium)
    if design.receiver.beam_waist is not None:
        return received_energy(design.receiver, freq, field, design.medium, surface)
    return received_energy(design.receiver, freq, field, design.medium)


def detector_map(design: Design, toward=None) -> DetectorMap:
    """Exact finite-distance receiver map on the design's plane, and the far-field prediction.

    Both include ITU-R P.676 absorption of the design's air over the path from the first
    column's start.
    """
    from thzarray.air.absorption import attenuate
    from thzarray.field.nearfield import field_at
    from thzarray.field.surfaces import plane_scan

    _needs(design, "receiver", "plane")
    pl = design.plane
    phased = phasing(design, toward)
    fils = phased.filaments
    x, y = grid_values(pl.x), grid_values(pl.y)
    surf = plane_scan(pl.distance, x, y, normal=pl.normal, origin=pl.origin)
    freq = design.receiver_band
    pts = surf.points
    e_near = field_at(fils, freq[:, None, None], pts, design.medium, design.plasma)
    # Far-field prediction seen from the columns' centre (the best far-field reference).
    centre = np.mean([0.5 * (np.asarray(f.start) + f.end) for f in fils], axis=0)
    rel = pts - centre
    dist = np.linalg.norm(rel, axis=-1)
    theta, phi = angles_of(rel / dist[..., None])
    ff = far_field(fils, freq[:, None, None], theta, phi, design.medium, design.plasma)
    # E ~ F(r') exp(ik(R' + r'.c)) / R' with F referenced to the origin and R', r' seen from
    # the centre c; the phase matters for a receiver that overlaps the field with a beam.
    k = 2 * np.pi * freq[:, None, None] * design.medium.n_thz / c
    path = dist + (rel / dist[..., None]) @ centre
    e_far = ff.cartesian * (np.exp(1j * k * path) / dist)[..., None]
    if design.medium.conditions is not None:
        dist = np.linalg.norm(pts - np.asarray(fils[0].start), axis=-1)
        e_near = attenuate(e_near, freq[:, None, None], dist, design.medium)
        e_far = attenuate(e_far, freq[:, None, None], dist, design.medium)
    from thzarray.app.jobs.scale import absolute_scale

    scale = absolute_scale(design, phased)
    near = _receiver_energy(design, freq, e_near, surf) * scale.factor
    far = _receiver_energy(design, freq, e_far, surf) * scale.factor
    return DetectorMap(x, y, freq, near, far, float(pl.distance), scale.absolute, phased,
                       scale)


@dataclass(frozen=True, eq=False)
class BudgetResult:
    """The range budget of a design and where its receiver points.

    ``budget`` holds the energies with the scale's factor applied (calibrated); ``scale``
    the factor and range every absolute number carries (:mod:`thzarray.app.jobs.scale`).
    """

    budget: object          # thzarray.detect.budget.RangeBudget
    direction_from: str
    phased: Phasing
    scale: object = None    # thzarray.app.jobs.scale.Scale

    def notes(self) -> list:
        """Ranges where the far-field prediction is off by more than the tolerance."""
        err = np.abs(self.budget.far_field_error).max(axis=0)
        bad = self.budget.ranges[err > FAR_FIELD_TOLERANCE]
        if not bad.size:
            return []
        return [f"the far-field prediction is off by more than {100 * FAR_FIELD_TOLERANCE:g} % "
                f"out to {bad.max():.4g} m (worst {100 * err.max():.3g} %); the budget uses the "
                "exact finite-distance field"]


def _budget_options(design):
    b = design.budget
    return dict(_DEFAULT_BUDGET) if b is None else dict(
        ranges=grid_values(b.ranges), relative_humidity=b.relative_humidity, theta=b.theta,
        phi=b.phi)


def budget_ranges(design) -> np.ndarray:
    """The budget's receiver ranges (m): ``[budget].ranges`` or the section's default."""
    return np.asarray(_budget_options(design)["ranges"], float)


def receiver_direction(section, phased):
    """(theta, phi, where from): a section's theta/phi when given, else the target's."""
    if section is not None and section.theta is not None:
        name = type(section).__name__.removesuffix("Section").lower()
        return section.theta, section.phi, f"[{name}].theta, phi"
    return phased.target.theta, phased.target.phi, f"the target ({phased.target_source})"


def budget_at(design: Design, phased: Phasing, distance: float) -> float:
    """The model's energy into the receiver at one range, in the design's own air (J)."""
    from thzarray.detect.budget import range_budget

    _needs(design, "receiver")
    theta, phi, _ = receiver_direction(design.budget, phased)
    result = range_budget(phased.filaments, design.receiver, design.receiver_band, [distance],
                          theta, phi, medium=design.medium, plasma=design.plasma,
                          lines=design.lines)
    return float(result.energy[0, 0])


def budget(design: Design, toward=None) -> BudgetResult:
    """Range budget of the design: energy into its receiver versus range and humidity.

    The receiver looks along ``[budget].theta, phi`` when given, else toward the steering
    target (the band cone when the design has no steering). With ``[medium].line_list``
    the lines add to P.676's above 1 THz; with the receiver's noise settings the budget has
    signal-to-noise ratios and the range where they fall to 1.
    """
    from thzarray.app.design import DesignError
    from thzarray.app.jobs.scale import absolute_scale
    from thzarray.app.jobs.waveform import range_problems
    from thzarray.detect.budget import range_budget

    _needs(design, "receiver")
    opts = _budget_options(design)
    freq = design.receiver_band
    phased = phasing(design, toward)
    problems = [p for p in range_problems(design, phased) if p.startswith("budget.")]
    if problems:
        raise DesignError(problems)
    theta, phi, source = receiver_direction(design.budget, phased)
    humidity = (None if design.medium.conditions is None
                else np.asarray(opts["relative_humidity"], float))
    scale = absolute_scale(design, phased)
    result = range_budget(phased.filaments, design.receiver, freq, opts["ranges"], theta, phi,
                          medium=design.medium, relative_humidity=humidity,
                          plasma=design.plasma, lines=design.lines, energy_factor=scale.factor)
    return BudgetResult(result, source, phased, scale)
