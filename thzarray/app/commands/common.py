"""What every command shares: unit flags, JSON and text output, notes, writing files.

Commands print only through :func:`emit` (text, or JSON with ``--json``), which also
carries, in both forms, every note and warning the library computed while the command ran
(``note: ...`` lines on stdout, ``warning: ...`` lines on stderr; ``notes`` and
``warnings`` in the JSON). Files are written only through :func:`write_all` (every path
checked before anything is written; atomic; no overwrite without ``--force``), which also
records a caption with the key numbers for each figure (the gallery shows them).
"""

from __future__ import annotations

import json
import re
import sys
from pathlib import Path

import numpy as np

__all__ = ["SAFETY", "SAFETY_SHORT", "UsageError", "band_flag", "csv", "emit", "finite",
           "medium_from_flags", "progress", "quantity", "quantity_list", "say", "silenced",
           "slug_of", "spinner", "toward", "write_all"]

SAFETY = """\
LASER SAFETY: the setups modelled here use class-4 femtosecond lasers. Direct and
scattered beams are an eye and skin hazard; filaments carry the hazard far past the
focus. Enclose the beam path, use interlocks, beam dumps and rated eyewear; never align
by eye. Ionized air produces ozone and nitrogen oxides: ventilate or extract. Follow
IEC 60825-1 / ANSI Z136.1 and your local laser safety officer."""

SAFETY_SHORT = ("Laser safety: class-4 beams are an eye and skin hazard; enclose the beam, "
                "ventilate ozone/NOx from ionized air, follow IEC 60825-1 / ANSI Z136.1 and "
                "your laser safety officer (`thzarray safety`).")

# Physical ranges of command-line quantities (SI), the same as the design files'.
RANGES = {
    "frequency": (1e9, 1e14, False), "length": (0.0, 1e3, True), "angle": (0.0, np.pi, False),
    "time": (1e-15, 1e-11, False), "energy": (0.0, 10.0, True),
    "temperature": (-40.0, 60.0, False), "pressure": (1e4, 1.2e5, False),
    "fraction": (0.0, 1.0, False), "jitter": (0.0, 1e-9, False),
}


class UsageError(ValueError):
    """Bad command-line usage (exit code 2)."""


def quantity(flag, value, kind, bounds=None):
    """The SI value of a flag, in its physical range; bad ones raise UsageError naming it.

    ``bounds`` (low, high, low_open) overrides the kind's range from :data:`RANGES`.
    """
    from thzarray.app.units import UnitError, parse_quantity, suggest_unit

    unit_kind = "time" if kind == "jitter" else kind
    try:
        out = parse_quantity(value, unit_kind)
    except UnitError as exc:
        raise UsageError(f"--{flag}: {exc}") from None
    low, high, low_open = bounds if bounds is not None else RANGES.get(kind, (None, None, False))
    too_low = low is not None and (out <= low if low_open else out < low)
    if too_low or (high is not None and out > high):
        from thzarray.app.design.checker import Checker
        from thzarray.app.design.schema import Spec
        from thzarray.app.units import DIMENSIONS

        spec = Spec(unit_kind, low=low, high=high, low_open=low_open)
        hint = suggest_unit(unit_kind, value, low, high, low_open)
        raise UsageError(f"--{flag}: {str(value)[:60]!r}{hint} is out of range; allowed: "
                         f"{Checker.range_text(spec, DIMENSIONS[unit_kind][1])}")
    return out


def quantity_list(flag, text, kind, bounds=None):
    """Comma-separated quantities of one kind, in SI."""
    parts = [p.strip() for p in str(text).split(",") if p.strip()]
    if not parts or len(parts) > 64:
        raise UsageError(f"--{flag}: {str(text)[:60]!r} is not allowed; allowed: 1 to 64 "
                         "comma-separated values")
    return np.array([quantity(flag, p, kind, bounds) for p in parts])


def band_flag(args, flag="band"):
    """``--band``: one frequency, or LOW,HIGH; None when not given."""
    text = getattr(args, flag.replace("-", "_"), None)
    if text is None:
        return None
    band = quantity_list(flag, text, "frequency")
    if band.size > 2 or (band.size == 2 and band[1] <= band[0]):
        raise UsageError(f"--{flag}: {text!r} is not allowed; allowed: one frequency, or "
                         "LOW,HIGH with LOW < HIGH")
    return band


def medium_from_flags(args):
    from thzarray.air.medium import Medium

    if args.vacuum:
        return Medium.vacuum()
    return Medium.air(temperature_c=quantity("temperature", args.temperature, "temperature"),
                      pressure=quantity("pressure", args.pressure, "pressure"),
                      relative_humidity=quantity("humidity", args.humidity, "fraction"),
                      laser_wavelength=quantity("laser-wavelength", args.laser_wavelength,
                                                "length", (0.3e-6, 1.7e-6, False)))


def _unique(items):
    out = []
    for item in items:
        if item not in out:
            out.append(item)
    return out


def emit(args, result: dict, text: str, notes=()):
    """Print the command's result (text, or JSON with --json) with every note and warning.

    ``notes`` are the command's own (design notes, sections it does not use, library
    notes); warnings are those the library raised while the command ran (caught by the
    entry point in ``args.caught``), except numpy's RuntimeWarnings, which never reach the
    user.
    """
    caught = getattr(args, "caught", None) or []
    # numpy's floating-point RuntimeWarnings (overflow, invalid value in a temporary) are not
    # messages for the user: results are checked finite and non-finite numbers are reported
    # as such; the package's own warnings are UserWarnings.
    warns = _unique(f"{w.category.__name__}: {w.message}" for w in caught
                    if not issubclass(w.category, RuntimeWarning))
    notes = _unique(str(n) for n in notes)
    result = dict(result, notes=notes, warnings=warns)
    args.summary = result
    if args.json:
        print(json.dumps(finite(result), indent=2, sort_keys=True, default=jsonable,
                         allow_nan=False))
        return
    print(text)
    for n in notes:
        print(f"note: {n}")
    for w in warns:
        print(f"warning: {w}", file=sys.stderr)


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


def write_all(out: Path, force: bool, formats, figures=(), tables=(), datasets=(),
              captions=None):
    """Write figures (name, static_fig, html_fig[, caption]), CSV tables (name, text) and
    netCDF datasets (name, dataset); every path is checked before anything is written.

    Returns the written paths (str); with a ``captions`` dict, each figure file's caption
    (its key numbers) is recorded there for the gallery.
    """
    from thzarray.app.output import check_writable, write_text
    from thzarray.app.plots import interactive, static

    formats = set(formats)
    plan = []
    for entry in figures:
        name, sfig, ifig = entry[:3]
        caption = entry[3] if len(entry) > 3 else ""
        plan += [(out / f"{name}.{ext}", "static", sfig, caption) for ext in ("png", "pdf")
                 if ext in formats]
        if "html" in formats:
            plan.append((out / f"{name}.html", "html", ifig, caption))
    if "csv" in formats:
        plan += [(out / f"{name}.csv", "csv", text, "") for name, text in tables]
    if "netcdf" in formats:
        plan += [(out / f"{name}.nc", "nc", ds, "") for name, ds in datasets]
    for path, _, _, _ in plan:
        check_writable(path, force)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ValueError(f"--out = {str(out)[:80]!r} cannot be made a directory "
                         f"({exc.strerror}); allowed: a writable directory") from None
    written = []
    for path, kind, obj, caption in plan:
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
        if captions is not None and caption:
            captions[Path(path).name] = caption
    return [str(p) for p in written]


def csv(header, columns):
    lines = [",".join(header)]
    for row in zip(*columns):
        lines.append(",".join(f"{v:.9g}" for v in row))
    return "\n".join(lines) + "\n"


def slug_of(name):
    return re.sub(r"[^a-z0-9]+", "_", name.lower()).strip("_")[:60] or "design"


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
    """``--toward THETA,PHI`` as (theta, phi) in rad, or None."""
    if getattr(args, "toward", None) is None:
        return None
    parts = args.toward.split(",")
    if len(parts) != 2:
        raise UsageError(f"--toward: {args.toward[:60]!r} is not allowed; allowed: THETA,PHI, "
                         "e.g. '9 deg,0 deg'")
    theta = quantity("toward", parts[0].strip(), "angle")
    phi = quantity("toward", parts[1].strip(), "angle", (-10 * np.pi, 10 * np.pi, False))
    return theta, phi


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


def design_notes(design, command: str) -> list:
    """Notes every design-based command prints: the loader's and the unused sections."""
    from thzarray.app.jobs import section_notes

    return list(design.notes) + section_notes(design, command)
