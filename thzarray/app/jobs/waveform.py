"""What a time-domain setup records at the design's ranges: E(t), the electro-optic trace,
the spectrum, their signal-to-noise ratio, through the design's air.

The receiver points lie at the ``[waveform].ranges`` from the origin along
``[waveform].theta, phi`` (else the target). The field is the exact finite-distance field
(:func:`thzarray.detect.waveform.waveform`, Jackson eq. 9.18 along each column) with the
plasma's current spectrum, carried through the air's lines (P.453 phase, every line's
absorption and dispersion, a ``[medium].line_list`` above 1 THz), projected on the recorded
polarization (``[waveform].polarization``, else the narrow-band receiver's, else the polar
direction), and sampled by electro-optic detection in the ``[waveform]`` crystal
(:func:`thzarray.detect.electrooptic.eo_trace`). With the design's humidity above zero the
same waveforms in dry air are computed beside them, so that the ringing the water lines
add can be seen. A ``[calibration]`` scales every field by sqrt(k).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thzarray.app.design import Design, DesignError
from thzarray.app.design.schema import SCHEMA
from thzarray.app.design.sections import SECTION_TYPES
from thzarray.app.jobs.context import Phasing, phasing
from thzarray.app.jobs.receiver import budget_ranges, receiver_direction
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET

__all__ = ["WaveformResult", "peak_field_at", "waveforms"]

_RINGING_AFTER = 3e-12
"""Margin (s) after the main pulse's end beyond which energy counts as ringing."""


def _section(design):
    w = design.sections.waveform
    if w is None:
        w = SECTION_TYPES["waveform"](**{k: s.default for k, s in SCHEMA["waveform"].items()})
    return w


def _polarization(design, w, theta, phi):
    from thzarray.base.geometry import unit_vectors
    from thzarray.detect.receivers import NarrowbandReceiver

    if w.polarization is not None:
        p, source = np.asarray(w.polarization, float), "[waveform].polarization"
    elif isinstance(design.receiver, NarrowbandReceiver):
        p, source = np.asarray(design.receiver.polarization, float), "the receiver's"
    else:
        p, source = unit_vectors(theta, phi)[1], "the polar direction theta-hat"
    return p / np.linalg.norm(p), source


def _traces(design, phased, w, ranges, theta, phi, medium, pol):
    """(time, freq, field (D, N), spectrum (D, K)) along ``pol`` at the ranges."""
    from thzarray.base.geometry import unit_vectors
    from thzarray.detect.waveform import waveform

    points = np.asarray(ranges, float)[:, None] * unit_vectors(theta, phi)[0]
    res = waveform(phased.filaments, points, w.duration, w.bandwidth, medium, design.plasma,
                   lines=design.lines)
    return res.time, res.freq, (res.field @ pol).T, (res.spectrum @ pol).T


def peak_field_at(design: Design, phased: Phasing, distance: float) -> float:
    """Peak ``|E(t)|`` (V/m, uncalibrated) along the recorded polarization at one range."""
    w = _section(design)
    theta, phi, _ = receiver_direction(w, phased)
    pol, _ = _polarization(design, w, theta, phi)
    _, _, field_, _ = _traces(design, phased, w, [distance], theta, phi, design.medium, pol)
    return float(np.abs(field_).max())


@dataclass(frozen=True, eq=False)
class WaveformResult:
    """Waveforms at the design's ranges (SI; fields calibrated when the design is).

    Attributes
    ----------
    ranges : (D,) m; time : (N,) s, retarded; freq : (K,) Hz
    field, field_dry : (D, N) V/m along ``polarization`` (``field_dry`` None in dry air)
    spectrum : (D, K) complex V s/m; eo_trace : (D, N) rad; eo_response : (K,) complex
    ringing : (D,) share of the energy arriving 3 ps after the dry pulse's end
    eo_snr : (D,) shot-noise SNR of the trace's peak, or None without probe settings
    """

    ranges: np.ndarray
    time: np.ndarray
    freq: np.ndarray
    field: np.ndarray
    field_dry: np.ndarray | None
    spectrum: np.ndarray
    eo_trace: np.ndarray
    eo_response: np.ndarray
    ringing: np.ndarray
    eo_snr: np.ndarray | None
    theta: float
    phi: float
    direction_from: str
    polarization: np.ndarray
    polarization_from: str
    crystal: str
    scale: object
    phased: Phasing

    def summary(self) -> dict:
        peak = np.abs(self.field).max(axis=1)
        return {
            "range_m": self.ranges.tolist(), "theta_rad": self.theta, "phi_rad": self.phi,
            "direction_from": self.direction_from,
            "polarization": self.polarization.tolist(),
            "polarization_from": self.polarization_from,
            "peak_field": peak.tolist(),
            "peak_field_low": (np.sqrt(self.scale.low) * peak).tolist(),
            "peak_field_high": (np.sqrt(self.scale.high) * peak).tolist(),
            "field_unit": "V/m" if self.scale.absolute else "V/m per A s",
            "peak_retardation_rad": np.abs(self.eo_trace).max(axis=1).tolist(),
            "ringing_fraction": self.ringing.tolist(),
            "eo_snr": None if self.eo_snr is None else self.eo_snr.tolist(),
            "crystal": self.crystal, **self.scale.summary(), **self.phased.summary()}


def range_problems(design: Design, phased: Phasing) -> list:
    """Receiver points of ``budget`` and ``waveform`` that lie closer to a column than the
    exact field allows (the near-field functions' own test), one line per command.

    ``check`` and both commands run it, so a design ``check`` calls valid is one they run.
    The budget is checked only with a ``[receiver]`` (it needs one); the waveforms always
    (the command uses the section's defaults when the design has no ``[waveform]``).
    """
    from thzarray.base.geometry import unit_vectors
    from thzarray.detect.waveform import waveform_grids
    from thzarray.field.nearfield import _check_inputs

    cases = []
    if design.receiver is not None:
        cases.append(("budget.ranges", design.budget, budget_ranges(design),
                      design.receiver_band))
    w = _section(design)
    freq, _ = waveform_grids(w.duration, w.bandwidth)
    cases.append(("waveform.ranges", w, np.asarray(w.ranges, float), freq[freq > 0]))
    out = []
    for key, section, ranges, band in cases:
        theta, phi, source = receiver_direction(section, phased)
        points = np.asarray(ranges, float)[:, None] * unit_vectors(theta, phi)[0]
        try:
            _check_inputs(phased.filaments, np.asarray(band, float)[:, None], points,
                          design.medium, DEFAULT_MEMORY_BUDGET)
        except ValueError as exc:
            out.append(f"{key}: along {source}, {str(exc).removeprefix('points: ')}; or "
                       "another direction")
    return out


def waveforms(design: Design, toward=None) -> WaveformResult:
    """Waveforms, electro-optic traces and spectra at the design's ranges (module docstring)."""
    from thzarray.app.jobs.scale import absolute_scale
    from thzarray.detect.electrooptic import GAP, ZNTE, eo_response, eo_trace
    from thzarray.detect.noise import eo_signal_to_noise
    from thzarray.detect.traces import ringing_fraction

    w = _section(design)
    phased = phasing(design, toward)
    problems = [p for p in range_problems(design, phased) if p.startswith("waveform.")]
    if problems:
        raise DesignError(problems)
    theta, phi, source = receiver_direction(w, phased)
    pol, pol_source = _polarization(design, w, theta, phi)
    ranges = np.asarray(w.ranges, float)
    scale = absolute_scale(design, phased)
    time, freq, field_, spectrum = _traces(design, phased, w, ranges, theta, phi,
                                           design.medium, pol)
    dry = None
    cond = design.medium.conditions
    if cond is not None and cond.relative_humidity > 0:
        dry = _traces(design, phased, w, ranges, theta, phi,
                      design.medium.with_humidity(0.0), pol)[2] * scale.field_factor
    field_ = field_ * scale.field_factor
    spectrum = spectrum * scale.field_factor
    crystal = {"ZnTe": ZNTE, "GaP": GAP}[w.crystal]
    trace = eo_trace(spectrum.T, freq, time, crystal, w.thickness, w.probe_wavelength,
                     w.probe_duration).T
    response = eo_response(freq, crystal, w.thickness, w.probe_wavelength, w.probe_duration)
    reference = field_ if dry is None else dry
    energy = np.cumsum(reference**2, axis=1)
    end = time[np.argmax(energy >= 0.99 * energy[:, -1:], axis=1)]
    ringing = np.array([float(ringing_fraction(time, f, e + _RINGING_AFTER))
                        for f, e in zip(field_, end)])
    snr = None
    if w.probe_energy is not None:
        snr = eo_signal_to_noise(np.abs(trace).max(axis=1), w.probe_energy, w.probe_wavelength,
                                 w.integration_time, w.repetition_rate)
    return WaveformResult(ranges, time, freq, field_, dry, spectrum, trace, response, ringing,
                          snr, float(theta), float(phi), source, pol, pol_source, w.crystal,
                          scale, phased)
