"""Tables on disk: layouts, measured scans and detector responses as CSV files.

The edge layer's file I/O for the physics core's text formats: the core parses and
formats text (:func:`thzarray.layouts.layout_from_csv`, :func:`thzarray.fitting.parse_scan_csv`,
:func:`thzarray.detectors.parse_response_csv`); this module reads and writes the files,
atomically and never over an existing file unless ``force`` (see :mod:`thzarray.output`).
Unit strings in scan metadata are read with :func:`thzarray.units.parse_quantity`.
"""

from __future__ import annotations

from pathlib import Path

from .detectors import BroadbandDetector, parse_response_csv
from .fitting import fit_summary, parse_scan_csv
from .layouts import layout_from_csv, layout_to_csv
from .output import write_text

__all__ = ["fit_command_result", "read_layout", "read_response", "read_scan",
           "response_detector", "write_layout"]


def _read(path, what: str) -> str:
    try:
        return Path(path).read_text(encoding="utf-8")
    except OSError as exc:
        raise ValueError(f"{what} = {str(path)!r} cannot be read ({exc.strerror}); allowed: a "
                         "readable CSV file") from None


def read_layout(path) -> tuple:
    """Layout (tuple of Filament) from a CSV table (columns in :data:`layouts.CSV_COLUMNS`)."""
    return layout_from_csv(_read(path, "layout"))


def write_layout(path, layout, force: bool = False) -> Path:
    """Write a layout table atomically; an existing file is kept unless ``force``."""
    return write_text(path, layout_to_csv(layout), force)


def read_response(path):
    """(freq (Hz), response) of a broadband detector from a ``freq_hz,response`` CSV."""
    return parse_response_csv(_read(path, "response"), str(path))


def response_detector(path, area: float, normal=(0.0, 0.0, 1.0)) -> BroadbandDetector:
    """A broadband detector whose spectral response is read from a CSV file."""
    freq, response = read_response(path)
    return BroadbandDetector(freq, response, area, normal)


def read_scan(path, to_si=None):
    """(angle, signal, sigma or None, metadata) of a measured scan CSV.

    ``to_si`` reads unit strings in ``# freq = 0.3 THz`` style metadata; default
    :func:`thzarray.units.parse_quantity`.
    """
    if to_si is None:
        from .units import parse_quantity as to_si
    return parse_scan_csv(_read(path, "scan"), source=str(path), to_si=to_si)


def fit_command_result(path, freq=None, distance=None, *, fixed=None, polarization=None,
                       to_si=None) -> dict:
    """Read and fit a scan file; the JSON-ready dict of :func:`thzarray.fitting.fit_summary`."""
    if to_si is None:
        from .units import parse_quantity as to_si
    return fit_summary(read_scan(path, to_si), str(path), freq, distance, fixed=fixed,
                       polarization=polarization, to_si=to_si)
