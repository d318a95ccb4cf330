"""The design's detection side: the receiver (with its noise), the air's line list, and the
checks of ``[waveform]`` and ``[calibration]`` that need more than one key.

- ``[receiver]`` builds a :class:`~thzarray.detect.receivers.NarrowbandReceiver` or a
  :class:`~thzarray.detect.receivers.BroadbandDetector`; ``nep``, ``integration_time`` and
  ``repetition_rate`` go together and give the budget its signal-to-noise columns.
- ``[medium].line_list`` names a file of HITRAN-format records
  (:func:`~thzarray.air.hitran.parse_hitran`): its lines add to ITU-R P.676's above 1 THz
  in the budget and the waveforms.
- ``[calibration]`` states one measurement; :mod:`thzarray.app.jobs.scale` turns it into
  the factor every absolute output carries.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from thzarray.app.files import read_text_capped, resolve_beside

__all__ = ["MAX_LINE_LIST_BYTES", "check_calibration", "check_waveform", "line_list",
           "receiver_of"]

MAX_LINE_LIST_BYTES = 64 << 20
"""Largest line-list file read (64 MiB: about 400 000 records)."""

_NOISE = ("nep", "integration_time", "repetition_rate")


def _build(problems, path, builder, *args, **kwargs):
    try:
        return builder(*args, **kwargs)
    except ValueError as exc:
        problems.append(f"{path}: {exc}")
        return None


def receiver_of(r, path, problems):
    """The receiver object and the frequencies sampling its band ((None, None) on problems).

    Parameters
    ----------
    r : ReceiverSection
    path : Path or None
        The design file (for files named relative to it).
    problems : list of str
    """
    from thzarray.app.tables import response_detector
    from thzarray.detect.receivers import NarrowbandReceiver

    if r.center_freq is None or r.bandwidth is None:
        problems.append("receiver: needs center_freq and bandwidth; allowed: both given, "
                        "e.g. '0.1 THz' and '10 GHz'")
        return None, None
    lo, hi = r.center_freq - r.bandwidth / 2, r.center_freq + r.bandwidth / 2
    if lo <= 0:
        problems.append(f"receiver.bandwidth: {r.bandwidth:g} Hz is not allowed; allowed: "
                        "less than twice center_freq")
        return None, None
    noise = {k: getattr(r, k) for k in _NOISE}
    if any(v is not None for v in noise.values()) and any(v is None for v in noise.values()):
        missing = [k for k, v in noise.items() if v is None]
        problems.append(f"receiver.{missing[0]}: missing; allowed: nep, integration_time and "
                        "repetition_rate together (or none of them)")
        return None, None
    band = np.linspace(lo, hi, r.band_points)
    if r.kind == "broadband":
        if r.response_csv is None:
            problems.append("receiver.response_csv: missing; allowed: a CSV file of the "
                            "detector's spectral response (broadband kind)")
            return None, None
        if r.area is None:
            problems.append("receiver.area: missing; allowed: the broadband detector's "
                            "effective area, e.g. '1 cm^2'")
            return None, None
        made = _build(problems, "receiver.response_csv", response_detector,
                      resolve_beside(r.response_csv, path), area=r.area)
        if made is not None and noise["nep"] is not None:
            made = _build(problems, "receiver.nep", replace, made, **noise)
        return made, band
    if (r.area is None) == (r.beam_waist is None):
        problems.append("receiver: give exactly one of area and beam_waist; allowed: e.g. "
                        "area = '1 mm^2' or beam_waist = '5 mm'")
        return None, None
    return _build(problems, "receiver", NarrowbandReceiver, r.center_freq, r.bandwidth,
                  polarization=r.polarization, area=r.area, beam_waist=r.beam_waist,
                  **noise), band


def line_list(medium_section, path, problems):
    """The LineList named by ``[medium].line_list`` (None when not given or on problems)."""
    from thzarray.air.hitran import parse_hitran

    if medium_section is None or medium_section.line_list is None:
        return None
    if medium_section.kind != "air":
        problems.append("medium.line_list: the lines need air conditions; allowed: kind "
                        "'air'")
        return None
    target = resolve_beside(medium_section.line_list, path)
    try:
        text = read_text_capped(target, MAX_LINE_LIST_BYTES, "medium.line_list")
        return parse_hitran(text)
    except ValueError as exc:
        problems.append(f"medium.line_list: {exc}")
        return None


def check_waveform(w, problems):
    """Cross-key checks of ``[waveform]``."""
    if w is None:
        return
    probe = {k: getattr(w, k) for k in ("probe_energy", "integration_time", "repetition_rate")}
    if any(v is not None for v in probe.values()) and any(v is None for v in probe.values()):
        missing = [k for k, v in probe.items() if v is None]
        problems.append(f"waveform.{missing[0]}: missing; allowed: probe_energy, "
                        "integration_time and repetition_rate together (or none)")
    if w.bandwidth * w.duration > 2e5:
        problems.append(f"waveform.duration: {w.duration:g} s with bandwidth {w.bandwidth:g} Hz "
                        f"needs {w.bandwidth * w.duration:.3g} frequencies; allowed: duration x "
                        "bandwidth <= 200000")
    if len(w.ranges) > 64:
        problems.append(f"waveform.ranges: {len(w.ranges)} ranges; allowed: at most 64")
    if w.polarization is not None and not np.any(np.asarray(w.polarization) != 0):
        problems.append("waveform.polarization: [0, 0, 0] is not allowed; allowed: a nonzero "
                        "vector")


def check_calibration(cal, sections, problems):
    """Cross-key checks of ``[calibration]`` (what it needs from other sections)."""
    if cal is None:
        return
    needed = {"energy": "energy", "peak_field": "peak_field", "amplitude": "amplitude"}
    if getattr(cal, needed[cal.kind]) is None:
        problems.append(f"calibration.{needed[cal.kind]}: missing; allowed: the measured value "
                        f"for kind {cal.kind!r}")
    if cal.kind in ("energy", "peak_field") and cal.range is None:
        problems.append("calibration.range: missing; allowed: the range of the measurement "
                        "from the origin, e.g. '1.5 m'")
    if cal.kind == "energy" and sections.receiver is None:
        problems.append("calibration.kind: 'energy' compares with the receiver's energy; "
                        "allowed: add [receiver]")
