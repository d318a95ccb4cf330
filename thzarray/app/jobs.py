"""Design-level jobs: what the command line runs on a design, as arrays with their axes.

Each job takes a validated :class:`~thzarray.design.Design` and returns a frozen result with
coordinate arrays (SI) and a ``summary()`` dict of plain numbers for JSON output. Nothing
here draws or writes files; :mod:`thzarray.cli` does that through the plotting layer.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thzarray.app.design import Design
from thzarray.base.band import band_weights
from thzarray.field.cone import cone_angle, cone_range, length_for_cone
from thzarray.field.farfield import far_field
from thzarray.field.polarization import polarization_map

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
    ff = far_field(design.filaments, g.freq[:, None, None], g.theta[:, None], g.phi,
                   design.medium, design.plasma)
    dens = ff.energy_density
    cut = dens.mean(axis=2)
    cone = g.theta[np.argmax(cut, axis=1)]
    x, y, th, ph = projected_grid(float(g.theta.max()), sky_points)
    sky_ff = far_field(design.filaments, g.freq[:, None, None], th[None], ph[None],
                       design.medium, design.plasma)
    axis = design.filaments[0].axis
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
    from thzarray.detect.receivers import (
        BroadbandDetector,
        detected_energy,
        received_energy,
    )

    if isinstance(design.receiver, BroadbandDetector):
        return detected_energy(design.receiver, freq, field, design.medium)
    if design.receiver.beam_waist is not None:
        return received_energy(design.receiver, freq, field, design.medium, surface)
    return received_energy(design.receiver, freq, field, design.medium)


def detector_map(design: Design) -> DetectorMap:
    """Exact finite-distance receiver map on the design's plane, and the far-field prediction.

    Both include ITU-R P.676 absorption of the design's air over the path from the origin.
    """
    from thzarray.air.absorption import attenuate
    from thzarray.field.nearfield import field_at
    from thzarray.field.surfaces import plane_scan

    _needs(design, "receiver", "plane")
    pl = design.plane
    surf = plane_scan(pl["distance"], pl["x"], pl["y"], normal=pl["normal"], origin=pl["origin"])
    freq = design.receiver_band
    pts = surf.points
    e_near = field_at(design.filaments, freq[:, None, None], pts, design.medium, design.plasma)
    # Far-field prediction seen from the filaments' centre (the best far-field reference).
    centre = np.mean([0.5 * (np.asarray(f.start) + f.end) for f in design.filaments], axis=0)
    rel = pts - centre
    dist = np.linalg.norm(rel, axis=-1)
    theta = np.arccos(np.clip(rel[..., 2] / dist, -1, 1))
    phi = np.arctan2(rel[..., 1], rel[..., 0])
    ff = far_field(design.filaments, freq[:, None, None], theta, phi, design.medium, design.plasma)
    # E ~ F(r') exp(ik(R' + r'.c)) / R' with F referenced to the origin and R', r' seen from
    # the centre c; the phase matters for a receiver that overlaps the field with a beam.
    k = 2 * np.pi * freq[:, None, None] * design.medium.n_thz / 299792458.0
    path = dist + (rel / dist[..., None]) @ centre
    e_far = ff.cartesian * (np.exp(1j * k * path) / dist)[..., None]
    if design.medium.conditions is not None:
        dist = np.linalg.norm(pts - np.asarray(design.filaments[0].start), axis=-1)
        e_near = attenuate(e_near, freq[:, None, None], dist, design.medium)
        e_far = attenuate(e_far, freq[:, None, None], dist, design.medium)
    near = _receiver_energy(design, freq, e_near, surf)
    far = _receiver_energy(design, freq, e_far, surf)
    return DetectorMap(np.asarray(pl["x"]), np.asarray(pl["y"]), freq, near, far,
                       float(pl["distance"]), design.plasma is not None)


def budget(design: Design):
    """Range budget of the design: energy into its receiver versus distance and humidity."""
    from thzarray.detect.budget import range_budget

    _needs(design, "receiver")
    b = design.budget
    freq = design.receiver_band
    theta = b["theta"]
    if theta is None:
        centre = float(freq[len(freq) // 2])
        theta = float(cone_angle(design.filaments[0].length, centre, design.medium))
    humidity = (None if design.medium.conditions is None
                else np.asarray(b["relative_humidity"], float))
    return range_budget(design.filaments, design.receiver, freq, b["distances"], theta,
                        b["phi"], medium=design.medium, relative_humidity=humidity,
                        plasma=design.plasma)


# --- arrays: steering, gains, tolerances ----------------------------------------------------

def steering_band(design: Design) -> np.ndarray:
    """Band samples (Hz) for gains and steering: [steering].band, else the receiver's band,
    else [cone].band, else the observation frequencies."""
    st = design.steering or {}
    if st.get("band") is not None:
        lo, hi = st["band"]
        return np.linspace(lo, hi, st.get("band_points") or 9)
    if design.receiver_band is not None:
        return design.receiver_band
    if design.cone_band is not None:
        return np.linspace(design.cone_band[0], design.cone_band[1], 9)
    f = np.asarray(design.grid.freq, float)
    return f if f.size >= 2 else np.array([0.999 * f[0], f[0], 1.001 * f[0]])


def steering_target(design: Design, toward=None):
    """The target (Direction, or Receiver when an aperture is given) of a design.

    ``toward`` (theta, phi) in rad overrides [steering].toward; without either the target is
    the band cone of the first column at phi = 0.
    """
    from thzarray.array.targets import Aperture, Direction
    from thzarray.field.cone import band_cone_angle

    st = design.steering or {}
    if toward is None and st.get("toward") is not None:
        toward = tuple(float(v) for v in st["toward"])
    if toward is None:
        freq = steering_band(design)
        toward = (band_cone_angle(design.filaments[0].length, freq, medium=design.medium), 0.0)
    theta, phi = toward
    if not 0.0 <= theta <= np.pi:
        raise ValueError(f"toward theta = {np.degrees(theta):.6g} deg is not allowed; allowed: "
                         "0 to 180 deg")
    if st.get("aperture_radius") is not None:
        return Aperture(theta, phi, radius=st["aperture_radius"],
                        distance=st["aperture_distance"])
    return Direction(theta, phi)


@dataclass(frozen=True, eq=False)
class SteerResult:
    """Delays for a design and what they deliver (SI)."""

    method: str
    target: object
    delays: np.ndarray
    filaments: tuple
    report: object
    design: object = None  # SteeringDesign when optimised

    def summary(self) -> dict:
        r = self.report
        out = {"method": self.method, "delays_s": self.delays.tolist(),
               "target_theta_deg": float(np.degrees(self.target.theta)),
               "target_phi_deg": float(np.degrees(self.target.phi)),
               "main_lobe_deg": [float(np.degrees(v)) for v in r.main_lobe],
               "pointing_error_deg": float(np.degrees(r.pointing_error)),
               "beam_width_deg": [float(np.degrees(v)) for v in r.beam_width],
               "peak_sidelobe_db": float(r.peak_sidelobe_db),
               "grating_lobes": [{"theta_deg": float(np.degrees(g.theta)),
                                  "phi_deg": float(np.degrees(g.phi)),
                                  "level_db": float(g.pattern_db)} for g in r.grating_lobes],
               "cone_level_db": float(r.cone_level_db), "notes": list(r.notes)}
        if self.design is not None:
            out["energy_over_plain"] = float(self.design.energy / self.design.plain_energy)
        return out


def steer(design: Design, toward=None) -> SteerResult:
    """Delays that steer the design's layout toward its target, and their report."""
    import warnings

    from thzarray.array.beam import ConeNullWarning, steering_report
    from thzarray.array.designer import design_steering
    from thzarray.array.layouts import with_delays
    from thzarray.array.steering import phase_only_delays, steering_delays

    target = steering_target(design, toward)
    freq = steering_band(design)
    st = design.steering or {}
    method = st.get("method") or "true-time"
    with warnings.catch_warnings():
        # the report's notes carry the same statement; the CLI prints them
        warnings.simplefilter("ignore", ConeNullWarning)
        if method == "optimise":
            d = design_steering(design.filaments, target, freq, max_delay=st.get("max_delay"),
                                medium=design.medium, plasma=design.plasma)
            return SteerResult(method, target, d.delays, with_delays(design.filaments, d.delays),
                               d.report, d)
        if method == "phase-only":
            delays = phase_only_delays(design.filaments, target.theta, target.phi,
                                       st["design_freq"], design.medium)
        else:
            delays = steering_delays(design.filaments, target.theta, target.phi, design.medium)
        steered = with_delays(design.filaments, delays)
        report = steering_report(steered, target, freq, design.medium, design.plasma)
    return SteerResult(method, target, np.asarray(delays), steered, report)


def compare(design: Design, toward=None, trials: int = 400, seed: int = 0):
    """Single / incoherent / phased / ideal energies of the steered layout toward its target."""
    from thzarray.array.gain import array_gain

    res = steer(design, toward) if design.steering is not None or toward is not None else None
    filaments = res.filaments if res is not None else design.filaments
    target = res.target if res is not None else steering_target(design, toward)
    return array_gain(filaments, target, steering_band(design), medium=design.medium,
                      plasma=design.plasma, trials=trials, seed=seed), target


def tolerance_study(design: Design, toward=None):
    """Monte Carlo of the design's [tolerance] errors on its steered layout."""
    from thzarray.array.tolerance import tolerance

    if design.tolerance is None:
        raise ValueError(f"design {design.name!r}: this job needs section [tolerance]; "
                         "allowed: add it (timing_jitter, transverse_error, ...)")
    t = design.tolerance
    res = steer(design, toward)
    out = tolerance(res.filaments, res.target, steering_band(design),
                    timing_jitter=t["timing_jitter"], transverse_error=t["transverse_error"],
                    longitudinal_error=t["longitudinal_error"], trials=t["trials"],
                    percentile=t["percentile"], seed=t["seed"], medium=design.medium,
                    plasma=design.plasma)
    return out, res


def design_with_delays_toml(design: Design, filaments) -> str:
    """A TOML design equal to ``design`` but with explicit [[filaments]] carrying delays."""
    lines = []
    for section, table in design.raw.items():
        if section in ("filament", "filaments", "layout", "steering"):
            continue
        lines.append(f"[{section}]")
        lines += [f"{k} = {_toml_value(v)}" for k, v in table.items()]
        lines.append("")
    for f in filaments:
        lines.append("[[filaments]]")
        lines.append(f"length = {f.length!r}")
        lines.append(f"start = [{', '.join(repr(float(v)) for v in f.start)}]")
        lines.append(f"axis = [{', '.join(repr(float(v)) for v in f.axis)}]")
        lines.append(f"delay = {f.delay!r}")
        lines.append(f"amplitude = {f.amplitude!r}")
        lines.append("")
    return "# Written by `thzarray steer` (delays in s, lengths in m).\n" + "\n".join(lines)


def _toml_value(v):
    import json

    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{k} = {_toml_value(x)}" for k, x in v.items()) + " }"
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, str):
        return json.dumps(v)
    return repr(v)


def band_sky(filaments, freq, medium, plasma, theta_max: float, points: int = 121):
    """Band-integrated energy (J/sr) on a projected sky grid, summed with the package's
    band quadrature (:func:`thzarray.base.band.band_weights`).

    Returns x, y (rad, (N,)) and the map (N, N).
    """
    x, y, th, ph = projected_grid(theta_max, points)
    ff = far_field(filaments, freq[:, None, None], th[None], ph[None], medium, plasma)
    return x, y, np.tensordot(band_weights(freq), ff.energy_density, axes=(0, 0))
