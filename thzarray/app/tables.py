"""Tables on disk: layouts, detector responses and measured scans as CSV files.

The application's file I/O for tables: formatting and parsing the text (layouts, responses),
and reading and writing the files atomically, never over an existing file unless ``force``
(see :mod:`thzarray.app.output`). Measured angular scans are read by
:mod:`thzarray.app.scans`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from thzarray.app.output import write_text
from thzarray.array.layouts import check_separation
from thzarray.detect.receivers import BroadbandDetector
from thzarray.source.filament import Filament, as_filaments

__all__ = ["CSV_COLUMNS", "layout_from_csv", "layout_to_csv", "parse_response_csv",
           "read_layout", "read_response", "read_text", "response_detector", "write_layout"]

CSV_COLUMNS = ("x_m", "y_m", "z_m", "axis_x", "axis_y", "axis_z", "length_m", "delay_s",
               "amplitude")
"""Columns of a layout table (start, unit axis, length, delay, current amplitude)."""


def read_text(path, what: str) -> str:
    """The UTF-8 text of a file; an unreadable one raises ValueError naming ``what``."""
    try:
        return Path(path).read_text(encoding="utf-8")
    except OSError as exc:
        raise ValueError(f"{what} = {str(path)!r} cannot be read ({exc.strerror}); allowed: a "
                         "readable CSV file") from None


def layout_to_csv(layout) -> str:
    """The layout as CSV text with a unit-bearing header (uniform columns only).

    Returns
    -------
    str
        Header ``x_m,y_m,z_m,axis_x,axis_y,axis_z,length_m,delay_s,amplitude`` and one row per
        column, floats written exactly (``repr``).
    """
    fils = as_filaments(layout)
    for i, f in enumerate(fils):
        if not f.is_uniform:
            raise ValueError(f"layout[{i}] has a longitudinal profile; allowed: uniform columns "
                             "(profiles are not stored in layout tables)")
    rows = [",".join(CSV_COLUMNS)]
    for f in fils:
        vals = (*f.start, *f.axis, f.length, f.delay, f.amplitude)
        rows.append(",".join(repr(float(v)) for v in vals))
    return "\n".join(rows) + "\n"


def layout_from_csv(text: str) -> tuple:
    """Parse CSV text written by :func:`layout_to_csv` (lines starting with ``#`` are skipped).

    Raises
    ------
    ValueError
        On a wrong header, a short row or a bad number, naming the line and the column.
    """
    lines = [(i + 1, ln.strip()) for i, ln in enumerate(text.splitlines())]
    lines = [(i, ln) for i, ln in lines if ln and not ln.startswith("#")]
    if not lines:
        raise ValueError("layout table is empty; allowed: a header and at least one row")
    lineno, header = lines[0]
    names = tuple(h.strip() for h in header.split(","))
    if names != CSV_COLUMNS:
        raise ValueError(f"layout table header (line {lineno}) = {header!r}; allowed: "
                         f"{','.join(CSV_COLUMNS)}")
    fils = []
    for lineno, row in lines[1:]:
        cells = row.split(",")
        if len(cells) != len(CSV_COLUMNS):
            raise ValueError(f"layout table line {lineno} has {len(cells)} cells; allowed: "
                             f"{len(CSV_COLUMNS)}")
        vals = []
        for name, cell in zip(CSV_COLUMNS, cells):
            try:
                vals.append(float(cell))
            except ValueError:
                raise ValueError(f"layout table line {lineno}, {name} = {cell.strip()!r}; "
                                 "allowed: a real number") from None
        try:
            fils.append(Filament(vals[6], tuple(vals[0:3]), tuple(vals[3:6]), vals[7], vals[8]))
        except ValueError as exc:
            raise ValueError(f"layout table line {lineno}: {exc}") from None
    if not fils:
        raise ValueError("layout table has no rows; allowed: at least one column")
    check_separation(np.array([f.start for f in fils]))
    return tuple(fils)


def parse_response_csv(text: str, path="response"):
    """Parse a detector's spectral response from CSV text.

    The text has a header line naming the columns ``freq_hz,response`` (lines starting with
    ``#`` are comments), then rows of frequency (Hz, strictly increasing, > 0) and
    response (dimensionless, >= 0). Reading the file is :func:`thzarray.tables.read_response`.

    Parameters
    ----------
    text : str
    path : str
        Where the text came from, for messages.

    Returns
    -------
    (ndarray, ndarray)
        Frequencies (Hz) and response values, shape (K,) each.
    """
    lines = [ln.strip() for ln in text.splitlines()
             if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise ValueError(f"path = {str(path)!r} has no data; allowed: a header freq_hz,response "
                         "and at least two rows")
    header = [h.strip().lower() for h in lines[0].split(",")]
    if header != ["freq_hz", "response"]:
        raise ValueError(f"header = {lines[0]!r} in {str(path)!r}; allowed: 'freq_hz,response'")
    try:
        rows = np.array([[float(v) for v in ln.split(",")] for ln in lines[1:]])
    except ValueError:
        raise ValueError(f"path = {str(path)!r} has a row that is not two numbers; allowed: rows "
                         "'frequency,response'") from None
    if rows.ndim != 2 or rows.shape[1] != 2 or rows.shape[0] < 2:
        raise ValueError(f"path = {str(path)!r} has {rows.shape[0] if rows.ndim else 0} rows of "
                         "two numbers; allowed: at least two rows 'frequency,response'")
    return rows[:, 0].copy(), rows[:, 1].copy()


def read_layout(path) -> tuple:
    """Layout (tuple of Filament) from a CSV table (columns in :data:`CSV_COLUMNS`)."""
    return layout_from_csv(read_text(path, "layout"))


def write_layout(path, layout, force: bool = False) -> Path:
    """Write a layout table atomically; an existing file is kept unless ``force``."""
    return write_text(path, layout_to_csv(layout), force)


def read_response(path):
    """(freq (Hz), response) of a broadband detector from a ``freq_hz,response`` CSV."""
    return parse_response_csv(read_text(path, "response"), str(path))


def response_detector(path, area: float, normal=(0.0, 0.0, 1.0)) -> BroadbandDetector:
    """A broadband detector whose spectral response is read from a CSV file."""
    freq, response = read_response(path)
    return BroadbandDetector(freq, response, area, normal)
