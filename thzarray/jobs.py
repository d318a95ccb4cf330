"""Design-level jobs: what the command line runs on a design, as arrays with their axes.

Each job takes a validated :class:`~thzarray.design.Design` and returns a frozen result with
coordinate arrays (SI) and a ``summary()`` dict of plain numbers for JSON output. Nothing
here draws or writes files; :mod:`thzarray.cli` does that through the plotting layer.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .cone import cone_angle, cone_range, length_for_cone
from .design import Design
from .farfield import far_field
from .polarization import polarization_map

__all__ = ["ConeChart", "PatternResult", "cone_chart", "pattern", "projected_grid"]


@dataclass(frozen=True, eq=False)
class ConeChart:
    """Cone angle versus plasma length at several frequencies (rad, m, Hz)."""

    lengths: np.ndarray
    freqs: np.ndarray
    angles: np.ndarray            # (F, L)
    target_angle: float | None
    target_lengths: np.ndarray | None  # (F,), NaN where unreachable

    def summary(self) -> dict:
        out = {"freq_hz": self.freqs.tolist()}
        if self.target_angle is not None:
            out["target_angle_deg"] = float(np.degrees(self.target_angle))
            out["length_for_target_m"] = [None if not np.isfinite(v) else float(v)
                                          for v in self.target_lengths]
        return out


def cone_chart(design: Design) -> ConeChart:
    """Cone angle of one uniform column versus length, at the band edges and centre."""
    if design.cone_band is not None:
        lo, hi = design.cone_band
        freqs = np.array([lo, 0.5 * (lo + hi), hi])
    else:
        freqs = np.unique(np.quantile(design.grid.freq, [0.0, 0.5, 1.0]))
    lengths = design.cone_lengths
    angles = cone_angle(lengths[None, :], freqs[:, None], design.medium)
    target_lengths = None
    if design.cone_target is not None:
        target_lengths = np.full(freqs.shape, np.nan)
        for i, f in enumerate(freqs):
            try:
                target_lengths[i] = float(length_for_cone(design.cone_target, f, design.medium))
            except ValueError:
                pass  # unreachable at this frequency: shown as a gap, stated in the summary
    return ConeChart(lengths, freqs, angles, design.cone_target, target_lengths)


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
    """Far-field products of a design.

    Attributes
    ----------
    freq : (F,) Hz; theta : (T,) rad; phi : (P,) rad
    energy_density : (F, T, P) J/(Hz sr) (per unit current spectrum without a plasma)
    sky_x, sky_y : (N,) rad projected angles; sky : (F, N, N); sky_pol : (2, F, N, N)
    cone_angles : (F,) rad, the maximum of the phi-averaged cut at each frequency
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

    def summary(self) -> dict:
        cut = self.energy_density.mean(axis=2)
        return {
            "freq_hz": self.freq.tolist(),
            "cone_angle_deg": np.degrees(self.cone_angles).tolist(),
            "peak_energy_density": cut.max(axis=1).tolist(),
            "energy_density_unit": "J/(Hz sr)" if self.absolute else "J/(Hz sr) per (A s)^2",
        }


def pattern(design: Design, sky_points: int = 121) -> PatternResult:
    """Far field on the design's grid, plus a projected sky map with polarization."""
    g = design.grid
    ff = far_field(design.sources, g.freq[:, None, None], g.theta[:, None], g.phi,
                   design.medium, design.plasma)
    dens = ff.energy_density
    cut = dens.mean(axis=2)
    cone = g.theta[np.argmax(cut, axis=1)]
    x, y, th, ph = projected_grid(float(g.theta.max()), sky_points)
    sky_ff = far_field(design.sources, g.freq[:, None, None], th[None], ph[None],
                       design.medium, design.plasma)
    axis = design.sources[0].axis
    pm = polarization_map(sky_ff, axis=axis)
    # Projected polarization direction: components along the map's x and y.
    direction = pm.direction
    pol = np.stack([direction[..., 0], direction[..., 1]])
    return PatternResult(g.freq, g.theta, g.phi, dens, x, y, sky_ff.energy_density, pol, cone,
                         design.plasma is not None)


def reachable_text(freq, medium) -> str:
    """Human description of the cone angles reachable at ``freq``."""
    return cone_range(freq, medium).describe()


@dataclass(frozen=True, eq=False)
class DetectorMap:
    """What the design's receiver records on the design's plane, beside the far field.

    Attributes
    ----------
    x, y : (NX,), (NY,) in-plane coordinates (m); freq : (F,) band samples (Hz)
    near, far : (NY, NX) energy per pulse (J, or per (A s)^2 without a plasma) from the exact
        finite-distance field and from the far-field prediction at the same points
    """

    x: np.ndarray
    y: np.ndarray
    freq: np.ndarray
    near: np.ndarray
    far: np.ndarray
    distance: float
    absolute: bool

    def summary(self) -> dict:
        def peak(m):
            j, i = np.unravel_index(np.argmax(m), m.shape)
            return {"x_m": float(self.x[i]), "y_m": float(self.y[j]), "energy": float(m[j, i])}

        return {"plane_distance_m": self.distance, "near_field_peak": peak(self.near),
                "far_field_peak": peak(self.far),
                "near_over_far_peak": float(self.near.max() / self.far.max())
                if self.far.max() > 0 else None,
                "energy_unit": "J" if self.absolute else "J per (A s)^2"}


def _needs(design: Design, *what):
    missing = [w for w in what if getattr(design, w) is None]
    if missing:
        raise ValueError(f"design {design.name!r}: this job needs section(s) "
                         + ", ".join(f"[{m}]" for m in missing) + "; allowed: add them")


def _receiver_energy(design, freq, field, surface):
    from .detectors import BroadbandDetector, detected_energy, received_energy

    if isinstance(design.receiver, BroadbandDetector):
        return detected_energy(design.receiver, freq, field, design.medium)
    if design.receiver.beam_waist is not None:
        return received_energy(design.receiver, freq, field, design.medium, surface)
    return received_energy(design.receiver, freq, field, design.medium)


def detector_map(design: Design) -> DetectorMap:
    """Exact finite-distance receiver map on the design's plane, and the far-field prediction.

    Both include ITU-R P.676 absorption of the design's air over the path from the origin.
    """
    from .atmosphere import Air, attenuate
    from .nearfield import field_at
    from .surfaces import plane_scan

    _needs(design, "receiver", "plane")
    pl = design.plane
    surf = plane_scan(pl["distance"], pl["x"], pl["y"], normal=pl["normal"], origin=pl["origin"])
    freq = design.band
    pts = surf.points
    e_near = field_at(design.sources, freq[:, None, None], pts, design.medium, design.plasma)
    # Far-field prediction seen from the sources' centre (the best far-field reference).
    centre = np.mean([0.5 * (np.asarray(f.start) + f.end) for f in design.sources], axis=0)
    rel = pts - centre
    dist = np.linalg.norm(rel, axis=-1)
    theta = np.arccos(np.clip(rel[..., 2] / dist, -1, 1))
    phi = np.arctan2(rel[..., 1], rel[..., 0])
    ff = far_field(design.sources, freq[:, None, None], theta, phi, design.medium, design.plasma)
    e_far = ff.cartesian / dist[..., None]
    air = _air(design)
    if air is not None:
        dist = np.linalg.norm(pts - np.asarray(design.sources[0].start), axis=-1)
        e_near = attenuate(e_near, freq[:, None, None], dist, air)
        e_far = attenuate(e_far, freq[:, None, None], dist, air)
    near = _receiver_energy(design, freq, e_near, surf)
    far = _receiver_energy(design, freq, e_far, surf)
    return DetectorMap(np.asarray(pl["x"]), np.asarray(pl["y"]), freq, near, far,
                       float(pl["distance"]), design.plasma is not None)


def _air(design: Design):
    """The design's air for P.676, or None in vacuum / custom media."""
    from .atmosphere import Air

    m = design.raw.get("medium", {}) or {}
    if m.get("kind", "air") != "air":
        return None
    from .units import parse_quantity

    t = parse_quantity(m.get("temperature", 15.0), "temperature")
    p = parse_quantity(m.get("pressure", 101325.0), "pressure") / 100
    rh = parse_quantity(m.get("relative_humidity", 0.0), "fraction")
    return Air.from_relative_humidity(t, p, rh)


def budget(design: Design):
    """Range budget of the design: energy into its receiver versus distance and humidity."""
    from .budget import range_budget
    from .units import parse_quantity

    _needs(design, "receiver")
    b = design.budget
    freq = design.band
    theta = b["theta"]
    if theta is None:
        centre = float(freq[len(freq) // 2])
        theta = float(cone_angle(design.sources[0].length, centre, design.medium))
    m = design.raw.get("medium", {}) or {}
    t = parse_quantity(m.get("temperature", 15.0), "temperature")
    p = parse_quantity(m.get("pressure", 101325.0), "pressure") / 100
    lw = parse_quantity(m.get("laser_wavelength", 800e-9), "length")
    return range_budget(design.sources, design.receiver, freq, b["distances"],
                        np.asarray(b["relative_humidity"], float), theta, b["phi"],
                        temperature_c=t, pressure_hpa=p, plasma=design.plasma,
                        laser_wavelength=lw)
