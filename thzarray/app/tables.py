"""Tables on disk: layouts, detector responses and measured scans as CSV files.

The application's file I/O for tables: formatting and parsing the text (layouts, responses),
and reading and writing the files atomically, never over an existing file unless ``force``
(see :mod:`thzarray.app.output`). Measured angular scans are read by
:mod:`thzarray.app.scans`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from thzarray.app.files import MAX_TABLE_BYTES, quote_cell, read_text_capped
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
    """The UTF-8 text of a table file (regular, at most 16 MiB, BOM accepted)."""
    return read_text_capped(path, MAX_TABLE_BYTES, what)


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


_LAYOUT_COLUMNS = {
    # name: (kind of its unit, required, default)
    "x": ("length", True, None), "y": ("length", True, None), "z": ("length", False, 0.0),
    "axis_x": ("number", False, None), "axis_y": ("number", False, None),
    "axis_z": ("number", False, None), "length": ("length", False, None),
    "delay": ("time", False, 0.0), "amplitude": ("number", False, 1.0),
}
_MAX_ROWS = 100_000


def _layout_header(header: str, lineno: int):
    """Column index -> (name, SI factor) from a header such as ``x_mm,y_mm,delay_ps``."""
    from thzarray.app.units import UnitError, parse_quantity

    allowed = ("x_<unit>, y_<unit> (required), z_<unit>, axis_x, axis_y, axis_z, "
               "length_<unit>, delay_<unit>, amplitude; e.g. x_mm,y_mm,delay_ps")
    columns = {}
    for j, raw in enumerate(header.split(",")):
        cell = raw.strip()
        name, unit = (cell, "") if cell in _LAYOUT_COLUMNS else cell.rpartition("_")[::2]
        if name not in _LAYOUT_COLUMNS or name in columns.values():
            raise ValueError(f"layout table header (line {lineno}): column {quote_cell(cell)} is "
                             f"unknown or repeated; allowed: {allowed}")
        kind = _LAYOUT_COLUMNS[name][0]
        if kind == "number":
            if unit:
                raise ValueError(f"layout table header (line {lineno}): column {quote_cell(cell)} "
                                 f"takes no unit; allowed: {name}")
            factor = 1.0
        else:
            if not unit:
                raise ValueError(f"layout table header (line {lineno}): column {quote_cell(cell)} "
                                 f"needs a unit, e.g. {name}_mm; allowed: {allowed}")
            try:
                factor = parse_quantity(f"1 {unit}", kind)
            except UnitError:
                raise ValueError(f"layout table header (line {lineno}): column {quote_cell(cell)} "
                                 f"has no {kind} unit {unit[:20]!r}; allowed: {allowed}") from None
        columns[j] = (name, factor)
    names = {n for n, _ in columns.values()}
    for need in ("x", "y"):
        if need not in names:
            raise ValueError(f"layout table header (line {lineno}) has no {need!r} column; "
                             f"allowed: {allowed}")
    axes = {"axis_x", "axis_y", "axis_z"} & names
    if axes and len(axes) != 3:
        raise ValueError(f"layout table header (line {lineno}) gives {sorted(axes)}; allowed: "
                         "all three of axis_x, axis_y, axis_z or none")
    return columns


def layout_from_csv(text: str, *, default_length=None, center=(0.0, 0.0, 0.0),
                    axis=(0.0, 0.0, 1.0)) -> tuple:
    """Parse a layout table: one column per row, units in the header.

    The header names the columns with their units, ``x_mm,y_mm,z_m,delay_ps`` (any length
    or time unit; ``axis_x, axis_y, axis_z`` and ``amplitude`` are plain numbers). ``x`` and
    ``y`` are required; ``z`` defaults to 0, the axis to ``axis``, the length to
    ``default_length``, the delay to 0 and the amplitude to 1. Positions are relative to
    ``center``. Lines starting with ``#`` are comments. :func:`layout_to_csv` writes the
    same format with every column in SI.

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
    columns = _layout_header(header, lineno)
    if "length" not in {n for n, _ in columns.values()} and default_length is None:
        raise ValueError(f"layout table header (line {lineno}) has no length column and the "
                         "design gives no [layout].length; allowed: one of them")
    if len(lines) - 1 > _MAX_ROWS:
        raise ValueError(f"layout table has {len(lines) - 1} rows; allowed: at most {_MAX_ROWS}")
    c0 = np.asarray(center, dtype=float)
    fils = []
    for lineno, row in lines[1:]:
        cells = row.split(",")
        if len(cells) != len(columns):
            raise ValueError(f"layout table line {lineno} has {len(cells)} cells; allowed: "
                             f"{len(columns)}, one per header column")
        vals = {n: d for n, (_, _, d) in _LAYOUT_COLUMNS.items()}
        for j, cell in enumerate(cells):
            name, factor = columns[j]
            try:
                v = float(cell) * factor
            except ValueError:
                v = float("nan")
            if not np.isfinite(v):
                raise ValueError(f"layout table line {lineno}, {name} = {quote_cell(cell)}; "
                                 "allowed: a finite real number") from None
            vals[name] = v
        ax = axis if vals["axis_x"] is None else (vals["axis_x"], vals["axis_y"], vals["axis_z"])
        length = default_length if vals["length"] is None else vals["length"]
        start = tuple((c0 + (vals["x"], vals["y"], vals["z"])).tolist())
        try:
            fils.append(Filament(length, start, ax, vals["delay"], vals["amplitude"]))
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
        raise ValueError(f"header = {quote_cell(lines[0])} in {str(path)[:80]!r}; allowed: "
                         "'freq_hz,response'")
    try:
        rows = np.array([[float(v) for v in ln.split(",")] for ln in lines[1:]])
    except ValueError:
        raise ValueError(f"path = {str(path)!r} has a row that is not two numbers; allowed: rows "
                         "'frequency,response'") from None
    if rows.ndim != 2 or rows.shape[1] != 2 or rows.shape[0] < 2:
        raise ValueError(f"path = {str(path)!r} has {rows.shape[0] if rows.ndim else 0} rows of "
                         "two numbers; allowed: at least two rows 'frequency,response'")
    return rows[:, 0].copy(), rows[:, 1].copy()


def read_layout(path, **kw) -> tuple:
    """Layout (tuple of Filament) from a CSV table (format in :func:`layout_from_csv`)."""
    return layout_from_csv(read_text(path, "layout"), **kw)


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
