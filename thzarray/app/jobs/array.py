"""Jobs about arrays: steering and the lobe report, gains, tolerances, the delay chart.

Every job resolves the design's phasing once (:func:`thzarray.app.jobs.context.phasing`)
and works on the same target, band and delays.
"""

from __future__ import annotations

import dataclasses
import warnings
from dataclasses import dataclass

import numpy as np

from thzarray.app.design import Design, DesignError
from thzarray.app.jobs.context import Phasing, phasing
from thzarray.app.jobs.filament import projected_grid
from thzarray.base.band import band_weights
from thzarray.field.farfield import far_field

__all__ = ["DelayChart", "SteerResult", "band_sky", "compare", "delay_chart", "steer",
           "steered_design", "tolerance_study"]


@dataclass(frozen=True, eq=False)
class SteerResult:
    """The design's delays and what they deliver (SI): the phasing and its lobe report."""

    phased: Phasing
    report: object   # thzarray.array.beam.SteeringReport

    @property
    def filaments(self):
        return self.phased.filaments

    @property
    def delays(self):
        return self.phased.delays

    @property
    def target(self):
        return self.phased.target

    def summary(self) -> dict:
        r = self.report
        out = {"method": self.phased.method, **self.phased.summary(),
               "main_lobe_deg": [float(np.degrees(v)) for v in r.main_lobe],
               "pointing_error_deg": float(np.degrees(r.pointing_error)),
               "beam_width_deg": [float(np.degrees(v)) for v in r.beam_width],
               "peak_sidelobe_db": float(r.peak_sidelobe_db),
               "grating_lobes": [{"theta_deg": float(np.degrees(g.theta)),
                                  "phi_deg": float(np.degrees(g.phi)),
                                  "level_db": float(g.pattern_db)} for g in r.grating_lobes],
               "cone_level_db": float(r.cone_level_db), "report_notes": list(r.notes)}
        d = self.phased.design_result
        if d is not None:
            out["energy_over_plain"] = float(d.energy / d.plain_energy)
        return out


def steer(design: Design, toward=None, band=None) -> SteerResult:
    """The design's delays (stored, requested or computed) and their lobe report."""
    from thzarray.array.beam import ConeNullWarning, steering_report

    phased = phasing(design, toward, band)
    with warnings.catch_warnings():
        # the report's notes carry the same statement, and the command prints them
        warnings.simplefilter("ignore", ConeNullWarning)
        report = steering_report(phased.filaments, phased.target, phased.band, design.medium,
                                 design.plasma)
    return SteerResult(phased, report)


def steered_design(design: Design, result: SteerResult) -> Design:
    """The design with its [steering] carrying the delays and the target, ready to write."""
    from thzarray.app.design.sections import SECTION_TYPES

    st = design.steering or SECTION_TYPES["steering"](
        method="true-time", band_points=9)
    st = dataclasses.replace(st, delays=tuple(float(d) for d in result.delays),
                             toward=(result.target.theta, result.target.phi))
    return design.replace_sections(steering=st)


def compare(design: Design, toward=None, band=None, trials: int = 400, seed: int = 0):
    """Single / incoherent / phased / ideal energies of the phased layout toward its target."""
    from thzarray.array.gain import array_gain

    phased = phasing(design, toward, band)
    gain = array_gain(phased.filaments, phased.target, phased.band, medium=design.medium,
                      plasma=design.plasma, trials=trials, seed=seed)
    return gain, phased


def tolerance_problems(design: Design, phased) -> list:
    """``[tolerance].trials`` over the work cap for the phased layout, target and band (as
    :func:`thzarray.array.tolerance.tolerance` would refuse it), as a line; ``check`` and the
    job both run it."""
    from thzarray.array.tolerance import trials_problem

    t = design.tolerance
    if t is None:
        return []
    problem = trials_problem(t.trials, phased.filaments, phased.target, phased.band,
                             design.medium)
    return [] if problem is None else [f"tolerance.trials: {problem}"]


def tolerance_study(design: Design, toward=None, band=None, timing_jitter=None):
    """Monte Carlo of the design's [tolerance] errors on its phased layout.

    ``timing_jitter`` (s) overrides ``[tolerance].timing_jitter``.
    """
    from thzarray.array.tolerance import tolerance

    t = design.tolerance
    if t is None:
        raise ValueError(f"design {design.name!r}: this job needs section [tolerance]; "
                         "allowed: add it (timing_jitter, transverse_error, ...)")
    jitter = t.timing_jitter if timing_jitter is None else timing_jitter
    phased = phasing(design, toward, band)
    problems = tolerance_problems(design, phased)
    if problems:
        raise DesignError(problems)
    out = tolerance(phased.filaments, phased.target, phased.band, timing_jitter=jitter,
                    transverse_error=t.transverse_error,
                    longitudinal_error=t.longitudinal_error, trials=t.trials,
                    percentile=t.percentile, seed=t.seed, medium=design.medium,
                    plasma=design.plasma)
    return out, phased, jitter


@dataclass(frozen=True, eq=False)
class DelayChart:
    """Delays and main-lobe direction versus the steering angle (true-time and phase-only).

    Attributes
    ----------
    theta : (A,) target polar angles (rad) at azimuth ``phi``
    true_time, phase_only : (N, A) delays of each column (s)
    lobe_true_time, lobe_phase_only : (A,) polar angle (rad) of the band pattern's peak
        nearest the target in the ``phi`` plane
    design_freq : float, Hz, at which the phase-only delays are folded
    """

    theta: np.ndarray
    phi: float
    true_time: np.ndarray
    phase_only: np.ndarray
    lobe_true_time: np.ndarray
    lobe_phase_only: np.ndarray
    design_freq: float


def _lobe(fils, band, phi, theta_target, grid, medium, plasma):
    from thzarray.array.arrayfield import array_far_field

    ff = array_far_field(fils, band[:, None], grid[None, :], phi, medium, plasma)
    pattern = band_weights(band) @ ff.energy_density
    # The peak nearest the target: largest value within a window around it.
    window = np.abs(grid - theta_target) <= max(np.radians(5.0), 0.5 * theta_target)
    return float(grid[window][np.argmax(pattern[window])])


def delay_chart(design: Design, toward=None, band=None, points: int = 25) -> DelayChart:
    """Delays and lobe angle over a range of targets in the target's azimuth plane."""
    from thzarray.array.layouts import with_delays
    from thzarray.array.steering import phase_only_delays, steering_delays

    phased = phasing(design, toward, band)
    phi, top = phased.target.phi, max(phased.target.theta, np.radians(2.0))
    theta = np.linspace(0.0, min(1.5 * top, np.radians(60.0)), points)
    st = design.steering
    f0 = (st.design_freq if st is not None and st.design_freq is not None
          else float(np.sum(band_weights(phased.band) * phased.band)
                     / np.sum(band_weights(phased.band))))
    grid = np.linspace(0.0, min(2.0 * theta[-1] + np.radians(2.0), np.pi / 2), 721)
    fils = design.filaments
    tt = np.empty((len(fils), theta.size))
    po = np.empty_like(tt)
    lobes = np.empty((2, theta.size))
    for i, th in enumerate(theta):
        tt[:, i] = steering_delays(fils, th, phi, design.medium)
        po[:, i] = phase_only_delays(fils, th, phi, f0, design.medium)
        for j, d in enumerate((tt[:, i], po[:, i])):
            lobes[j, i] = _lobe(with_delays(fils, d), phased.band, phi, th, grid,
                                design.medium, design.plasma)
    return DelayChart(theta, float(phi), tt, po, lobes[0], lobes[1], float(f0))


def band_sky(filaments, freq, medium, plasma, theta_max: float, points: int = 121):
    """Band-integrated energy (J/sr) on a projected sky grid, summed with the package's
    band quadrature (:func:`thzarray.base.band.band_weights`).

    Returns x, y (rad, (N,)) and the map (N, N).
    """
    x, y, th, ph = projected_grid(theta_max, points)
    ff = far_field(filaments, freq[:, None, None], th[None], ph[None], medium, plasma)
    return x, y, np.tensordot(band_weights(freq), ff.energy_density, axes=(0, 0))
