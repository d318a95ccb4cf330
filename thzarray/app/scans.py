"""Measured angular scans: reading the CSV, fitting it, and the fit as JSON.

Comma-separated text: ``#`` lines are comments, ``# key = value`` lines (before the header)
metadata: ``# freq = 0.3 THz`` and ``# range = 1.5 m`` (the range of the detector from the
origin, for a finite-distance fit) become SI floats through a unit
reader (``to_si``; the command line passes :func:`thzarray.app.units.parse_quantity`),
other keys stay text. Then a header naming the columns ``angle_deg`` / ``angle_rad`` /
``angle_mrad``, ``signal`` and optionally ``sigma`` (one-standard-deviation uncertainty of
the signal, > 0), then one row per angle. The fit itself is
:func:`thzarray.inverse.scans.fit_scan`.
"""

from __future__ import annotations

import re

import numpy as np

from thzarray.app.files import quote_cell
from thzarray.app.tables import read_text
from thzarray.base.checks import check_scalar
from thzarray.inverse.scans import UNITS, fit_scan

__all__ = ["fit_command_result", "fit_summary", "parse_scan_csv", "read_scan"]

_MIN_ROWS = 6


_ANGLE_UNITS = {"deg": np.pi / 180, "rad": 1.0, "mrad": 1e-3}
_SIGMA_NAMES = ("sigma",)
_METADATA_KINDS = {"freq": "frequency", "range": "length"}
# Physical ranges of the metadata (SI): the same as the design files'.
_METADATA_RANGES = {"freq": (1e9, 1e14), "range": (1e-6, 1e6)}


def _metadata_value(key, text, where, to_si):
    """SI float for ``freq`` and ``range`` through ``to_si``, else the text as written.

    Without ``to_si`` a plain number is taken as SI and a unit string stays text (the core
    does not read unit strings; the command line passes thzarray.app.units.parse_quantity).
    A value outside its physical range names how it was read and the unit probably meant.
    """
    if key == "distance":
        raise ValueError(f"{where}: 'distance' is not a scan key; allowed: '# range = 1.5 m' "
                         "(the range of the detector from the origin)")
    if key not in _METADATA_KINDS:
        return text
    if to_si is None:
        try:
            value = float(text)
        except ValueError:
            return text
    else:
        try:
            value = float(to_si(text, _METADATA_KINDS[key]))
        except ValueError as exc:
            raise ValueError(f"{where}: {key} = {exc}") from None
    low, high = _METADATA_RANGES[key]
    if not (np.isfinite(value) and low <= value <= high):
        from thzarray.app.units import DIMENSIONS, suggest_unit

        kind = _METADATA_KINDS[key]
        hint = suggest_unit(kind, text, low, high)
        raise ValueError(f"{where}: {key} = {str(text)[:40]!r}{hint} is not allowed; allowed: "
                         f"{low:g} to {high:g} {DIMENSIONS[kind][1]}")
    return value


def parse_scan_csv(text: str, source: str = "scan", to_si=None):
    """Parse an angular scan from CSV text.

    Parameters
    ----------
    text : str
        The CSV (format in the module docstring).
    source : str
        Where the text came from, for messages.
    to_si : callable, optional
        ``to_si(text, kind) -> float`` reading a unit string (``kind`` "frequency" for
        ``freq``, "length" for ``range``), e.g. :func:`thzarray.app.units.parse_quantity`;
        raises ``ValueError`` for bad text. Without it those values are floats only when
        written as plain SI numbers.

    Returns
    -------
    angle : ndarray, shape (N,)
        Detector angle from the filament axis (rad).
    signal : ndarray, shape (N,)
    sigma : ndarray, shape (N,), or None
        The uncertainty column when present.
    metadata : dict
        ``# key = value`` lines: ``freq`` (Hz) and ``range`` (m) as SI floats (see
        ``to_si``), other keys as text.

    Raises
    ------
    ValueError
        Naming the row (and line) and column of a malformed cell, a missing or unknown
        column, an angle outside 0 to 180 degrees, a non-positive sigma, or fewer than 6 rows.
    """
    metadata, header, rows = {}, None, []
    for line_no, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            key, eq, value = line[1:].partition("=")
            if eq and header is None and re.fullmatch(r"\s*\w+\s*", key):
                where = f"{source} line {line_no}"
                if key.strip() in metadata:
                    raise ValueError(f"{where}: {key.strip()!r} is given twice; allowed: each "
                                     "'# key = value' line once")
                metadata[key.strip()] = _metadata_value(key.strip(), value.strip(), where,
                                                        to_si)
            continue
        cells = [cell.strip() for cell in line.split(",")]
        if header is None:
            header = [cell.lower() for cell in cells]
            columns = _columns(header, source, line_no)
            continue
        rows.append((line_no, cells))
    if header is None:
        raise ValueError(f"{source}: no header line; allowed: a line naming the columns, e.g. "
                         "'angle_deg, signal, sigma'")
    if len(rows) < _MIN_ROWS:
        raise ValueError(f"{source}: {len(rows)} data rows; allowed: at least {_MIN_ROWS} "
                         "(more points than the fit's parameters)")
    table = np.empty((len(rows), len(header)))
    for r, (line_no, cells) in enumerate(rows, start=1):
        if len(cells) != len(header):
            raise ValueError(f"{source} row {r} (line {line_no}): {len(cells)} cells; allowed: "
                             f"{len(header)} cells, one per column ({', '.join(header)})")
        for j, cell in enumerate(cells):
            try:
                value = float(cell)
            except ValueError:
                value = np.nan
            if not np.isfinite(value):
                raise ValueError(f"{source} row {r} (line {line_no}), column {quote_cell(header[j])}: "
                                 f"{quote_cell(cell)} is not a number; allowed: finite decimal numbers")
            table[r - 1, j] = value
    angle_col, unit = columns["angle"]
    angle = table[:, angle_col] * _ANGLE_UNITS[unit]
    for r, value in enumerate(table[:, angle_col], start=1):
        if not 0.0 <= value * _ANGLE_UNITS[unit] <= np.pi:
            raise ValueError(f"{source} row {r} (line {rows[r - 1][0]}), column "
                             f"{quote_cell(header[angle_col])}: {value:g} is outside the allowed range "
                             f"0 to {np.pi / _ANGLE_UNITS[unit]:g} {unit} (angle from the "
                             "filament axis)")
    sigma = None
    if "sigma" in columns:
        sigma = table[:, columns["sigma"]]
        bad = np.flatnonzero(sigma <= 0)
        if bad.size:
            r = int(bad[0]) + 1
            raise ValueError(f"{source} row {r} (line {rows[r - 1][0]}), column 'sigma': "
                             f"{sigma[r - 1]:g} is not allowed; allowed: uncertainties > 0")
    return angle, table[:, columns["signal"]], sigma, metadata


def _columns(header, source, line_no):
    allowed = ("angle_deg | angle_rad | angle_mrad, signal, sigma (optional)")
    columns = {}
    for j, name in enumerate(header):
        if name.startswith("angle_") and name[6:] in _ANGLE_UNITS and "angle" not in columns:
            columns["angle"] = (j, name[6:])
        elif name in ("signal",) + _SIGMA_NAMES and name not in columns:
            columns[name] = j
        else:
            raise ValueError(f"{source} line {line_no}: column {quote_cell(name)} is not allowed "
                             f"(unknown or repeated); allowed columns: {allowed}")
    for need in ("angle", "signal"):
        if need not in columns:
            raise ValueError(f"{source} line {line_no}: the header has no {need!r} column; "
                             f"allowed columns: {allowed}")
    return columns


def _si(name, value, to_si, where):
    """An SI float from a float or a string (read by ``to_si``); None stays None."""
    if value is None:
        return None
    if isinstance(value, str):
        value = _metadata_value(name, value, where, to_si)
        if isinstance(value, str):
            raise ValueError(f"{where}: {name} = {value!r} is a unit string; allowed: an SI "
                             "number, or pass to_si=thzarray.units.parse_quantity")
        return value
    return check_scalar(name, value, low=0.0, low_open=True)


def _json_number(value):
    value = float(value)
    return value if np.isfinite(value) else None


def _cli_words(message: str) -> str:
    """A fit message in command-line syntax: ``fixed={'x': value}`` -> ``--fix x=VALUE``."""
    return re.sub(r"fixed=\{'(\w+)': value\}", r"--fix \1=VALUE", message)


def fit_summary(scan, path="scan", freq=None, range_=None, *, fixed=None,
                polarization=None, to_si=None, cli=False, medium=None,
                electron_density=None) -> dict:
    """Fit a parsed scan and return a JSON-ready dict (for ``thzarray fit``).

    Parameters
    ----------
    scan : tuple
        ``(angle, signal, sigma, metadata)`` as returned by :func:`parse_scan_csv` (the file
        is read by :func:`thzarray.tables.read_scan`).
    path : str
        Where the scan came from, for messages and the result's ``file``.
    freq : float or str, optional
        Frequency (Hz, or a string such as ``"0.3 THz"`` read by ``to_si``); the file's
        ``# freq = ...`` line when omitted.
    range_ : float or str, optional
        Range of the detector from the origin (m, or a string read by ``to_si``); the
        file's ``# range = ...`` line when omitted; the far field when neither is given.
    fixed : dict, optional
        Parameters held fixed (SI values), as for :func:`fit_scan`.
    polarization : 3-sequence of float, optional
        As for :func:`fit_scan`.
    to_si : callable, optional
        Reader of unit strings, as for :func:`parse_scan_csv`; the command line passes
        :func:`thzarray.app.units.parse_quantity`.
    cli : bool
        Word the messages in command-line syntax (``--fix name=VALUE``).
    medium : Medium, optional
        The air of the scan (its THz index and the linear-air mismatch predicted).
    electron_density : float, optional
        The column's electron density (m^-3), for the plasma-corrected mismatch predicted.

    Returns
    -------
    dict
        ``file``, ``model``, ``freq_hz``, ``range_m``, ``params``, ``errors``, ``units``,
        ``fixed``, ``correlation`` (``names``, ``matrix``), ``chi2``, ``dof``,
        ``chi2_per_dof``, ``errors_scaled_by_chi2``, ``ok``, ``messages``,
        ``residuals`` (``angle_rad``, ``signal``, ``sigma``, ``model``, ``residual``) and
        ``curve`` (the model on 400 angles spanning the scan), ``assumptions`` (the source and
        detector spectra the fit assumed) and ``predicted`` (the mismatch of linear air and,
        with an electron density, with the plasma's share); non-finite numbers become None.
    """
    angle, signal, sigma, metadata = scan
    freq = _si("freq", metadata.get("freq") if freq is None else freq, to_si, str(path))
    if freq is None:
        raise ValueError(f"freq: not given and {path} has no '# freq = ...' line; allowed: a "
                         "frequency such as '0.3 THz'")
    range_ = _si("range", metadata.get("range") if range_ is None else range_, to_si, str(path))
    result = fit_scan(angle, signal, freq, distance=range_, sigma=sigma,
                      polarization=polarization, fixed=fixed, medium=medium,
                      electron_density=electron_density)
    fine = np.linspace(angle.min(), angle.max(), 400)
    messages = [_cli_words(m) if cli else m for m in result.messages]
    return {
        "file": str(path),
        "model": result.kind,
        "freq_hz": _json_number(freq),
        "range_m": None if range_ is None else _json_number(range_),
        "params": {k: _json_number(v) for k, v in result.params.items()},
        "errors": {k: _json_number(v) for k, v in result.errors.items()},
        "units": {k: UNITS[k] for k in result.params},
        "fixed": {k: _json_number(v) for k, v in result.fixed.items()},
        "correlation": {"names": list(result.names),
                        "matrix": [[_json_number(v) for v in row] for row in result.correlation]},
        "chi2": _json_number(result.chi2),
        "dof": int(result.dof),
        "chi2_per_dof": _json_number(result.chi2_dof),
        "errors_scaled_by_chi2": bool(result.errors_scaled),
        "ok": bool(result.ok),
        "messages": messages,
        "residuals": {"angle_rad": angle.tolist(), "signal": signal.tolist(),
                      "sigma": None if sigma is None else sigma.tolist(),
                      "model": result.model.tolist(), "residual": result.residuals.tolist()},
        "curve": {"angle_rad": fine.tolist(), "model": result.evaluate(fine).tolist()},
        "assumptions": {k: str(v) for k, v in result.assumptions.items()},
        "predicted": {k: _json_number(v) for k, v in result.predicted.items()},
    }


def read_scan(path, to_si=None):
    """(angle, signal, sigma or None, metadata) of a measured scan CSV.

    ``to_si`` reads unit strings in ``# freq = 0.3 THz`` style metadata; default
    :func:`thzarray.app.units.parse_quantity`.
    """
    if to_si is None:
        from thzarray.app.units import parse_quantity as to_si
    return parse_scan_csv(read_text(path, "scan"), source=str(path), to_si=to_si)


def fit_command_result(path, freq=None, range_=None, *, fixed=None, polarization=None,
                       to_si=None, cli=False, medium=None, electron_density=None) -> dict:
    """Read and fit a scan file; the JSON-ready dict of :func:`fit_summary`."""
    if to_si is None:
        from thzarray.app.units import parse_quantity as to_si
    return fit_summary(read_scan(path, to_si), str(path), freq, range_, fixed=fixed,
                       polarization=polarization, to_si=to_si, cli=cli, medium=medium,
                       electron_density=electron_density)
