"""What every command shares: unit flags, JSON and text output, writing files, progress.

Commands print only through :func:`emit` (text, or JSON with ``--json``) and :func:`say`
(stderr chatter), write only through :func:`write_all` (every path checked before anything
is written; atomic; no overwrite without ``--force``).
"""

from __future__ import annotations

import json
import re
import sys
from pathlib import Path

import numpy as np

__all__ = ["SAFETY", "SAFETY_SHORT", "UsageError", "csv", "emit", "medium_from_flags",
           "progress", "quantity", "quantity_list", "say", "silenced", "slug_of", "spinner",
           "toward", "write_all"]

SAFETY = """\
LASER SAFETY: the setups modelled here use class-4 femtosecond lasers. Direct and
scattered beams are an eye and skin hazard; filaments carry the hazard far past the
focus. Enclose the beam path, use interlocks, beam dumps and rated eyewear; never align
by eye. Ionized air produces ozone and nitrogen oxides: ventilate or extract. Follow
IEC 60825-1 / ANSI Z136.1 and your local laser safety officer."""


SAFETY_SHORT = ("Laser safety: class-4 beams are an eye and skin hazard; enclose the beam, "
                "ventilate ozone/NOx from ionized air, follow IEC 60825-1 / ANSI Z136.1 and "
                "your laser safety officer (`thzarray safety`).")


class UsageError(ValueError):
    """Bad command-line usage (exit code 2)."""


def quantity(flag, value, kind):
    from thzarray.app.units import UnitError, parse_quantity

    try:
        return parse_quantity(value, kind)
    except UnitError as exc:
        raise UsageError(f"--{flag}: {exc}") from None


def quantity_list(flag, text, kind):
    return np.array([quantity(flag, part.strip(), kind) for part in text.split(",") if part.strip()])


def medium_from_flags(args):
    from thzarray.air.medium import Medium

    if args.vacuum:
        return Medium.vacuum()
    return Medium.air(temperature_c=quantity("temperature", args.temperature, "temperature"),
                      pressure=quantity("pressure", args.pressure, "pressure"),
                      relative_humidity=quantity("humidity", args.humidity, "fraction"),
                      laser_wavelength=quantity("laser-wavelength", args.laser_wavelength,
                                                "length"))


def emit(args, result: dict, text: str):
    args.summary = result
    if args.json:
        print(json.dumps(finite(result), indent=2, sort_keys=True, default=jsonable,
                         allow_nan=False))
    else:
        print(text)


def finite(obj):
    """JSON has no inf or NaN: such numbers become null."""
    if isinstance(obj, dict):
        return {k: finite(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [finite(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return finite(obj.tolist())
    if isinstance(obj, (float, np.floating)) and not np.isfinite(obj):
        return None
    return obj


def jsonable(obj):
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, (np.floating, np.integer)):
        return obj.item()
    if isinstance(obj, Path):
        return str(obj)
    raise TypeError(type(obj).__name__)


def say(args, text):
    if not args.quiet and not args.json:
        print(text, file=sys.stderr)


def write_all(out: Path, force: bool, formats, figures=(), tables=(), datasets=()):
    """Write figures (name, static_fig, html_fig), CSV tables (name, text) and netCDF
    datasets (name, dataset); every path is checked before anything is written."""
    from thzarray.app.output import check_writable, write_text
    from thzarray.app.plots import interactive, static

    formats = set(formats)
    plan = []
    for name, sfig, ifig in figures:
        plan += [(out / f"{name}.{ext}", "static", sfig) for ext in ("png", "pdf") if ext in formats]
        if "html" in formats:
            plan.append((out / f"{name}.html", "html", ifig))
    if "csv" in formats:
        plan += [(out / f"{name}.csv", "csv", text) for name, text in tables]
    if "netcdf" in formats:
        plan += [(out / f"{name}.nc", "nc", ds) for name, ds in datasets]
    for path, _, _ in plan:
        check_writable(path, force)
    out.mkdir(parents=True, exist_ok=True)
    written = []
    for path, kind, obj in plan:
        obj = obj() if callable(obj) else obj
        if kind == "static":
            written.append(static.save(obj, path, force))
        elif kind == "html":
            written.append(interactive.save(obj, path, force))
        elif kind == "csv":
            written.append(write_text(path, obj, force))
        else:
            from thzarray.app.netcdf import write_netcdf

            written.append(write_netcdf(obj, path, force))
    return [str(p) for p in written]


def csv(header, columns):
    lines = [",".join(header)]
    for row in zip(*columns):
        lines.append(",".join(f"{v:.9g}" for v in row))
    return "\n".join(lines) + "\n"


def slug_of(name):
    return re.sub(r"[^a-z0-9]+", "_", name.lower()).strip("_") or "design"


class spinner:
    """A progress line for a single long step (off with --quiet, --json or no terminal)."""

    def __init__(self, args, what):
        self.on = not (args.quiet or args.json or not sys.stderr.isatty())
        self.what = what

    def __enter__(self):
        if self.on:
            print(f"computing {self.what} ...", file=sys.stderr, end="", flush=True)

    def __exit__(self, *exc):
        if self.on:
            print(" done", file=sys.stderr)
        return False


def toward(args):
    if getattr(args, "toward", None) is None:
        return None
    parts = args.toward.split(",")
    if len(parts) != 2:
        raise UsageError(f"--toward: {args.toward!r} is not allowed; allowed: THETA,PHI, e.g. "
                         "'9 deg,0 deg'")
    return tuple(quantity("toward", p.strip(), "angle") for p in parts)


class silenced:
    """Swallow what a sub-job prints (the demo prints one line of its own)."""

    def __enter__(self):
        import io

        self.old, sys.stdout = sys.stdout, io.StringIO()

    def __exit__(self, *exc):
        sys.stdout = self.old
        return False


def progress(items, args, what):
    if args.quiet or args.json or not sys.stderr.isatty():
        return items
    from tqdm import tqdm

    return tqdm(items, desc=what, unit=what.rstrip("s"), file=sys.stderr)
