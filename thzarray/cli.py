"""The ``thzarray`` command.

Exit codes: 0 success; 2 bad input or usage (one clear line per problem on stderr, no
traceback unless --debug); 1 internal error. Every subcommand takes --out DIR, --json and
--force; files are written atomically and never overwrite existing files without --force.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

import numpy as np

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


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # one line, exit 2
        raise UsageError(f"{self.prog}: {message}")


def _common(p):
    p.add_argument("--out", type=Path, default=Path("thzarray-out"),
                   help="directory for figures and tables (default: ./thzarray-out)")
    p.add_argument("--json", action="store_true", help="print machine-readable results on stdout")
    p.add_argument("--force", action="store_true", help="overwrite existing output files")
    p.add_argument("--quiet", action="store_true", help="no progress bar or chatter")
    p.add_argument("--debug", action="store_true", help="show tracebacks of internal errors")


def _medium_flags(p):
    g = p.add_argument_group("medium (default: air at 15 degC, 1013.25 hPa, dry)")
    g.add_argument("--vacuum", action="store_true", help="vacuum instead of air")
    g.add_argument("--temperature", default="15 degC", help="air temperature, e.g. '20 degC'")
    g.add_argument("--pressure", default="1013.25 hPa", help="total pressure, e.g. '1000 hPa'")
    g.add_argument("--humidity", default="0 %", help="relative humidity, e.g. '50 %%'")
    g.add_argument("--laser-wavelength", default="800 nm", help="laser wavelength, e.g. '800 nm'")


def _command(sub, name, help_text, examples, func, positional=None, note=""):
    """A subcommand with its examples, the safety line and the common flags."""
    epilog = ("examples:\n" if len(examples) > 1 else "example:\n") + "".join(
        f"  {e}\n" for e in examples) + (f"\n{note}\n" if note else "") + "\n" + SAFETY_SHORT
    p = sub.add_parser(name, help=help_text, epilog=epilog,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    if positional is not None:
        p.add_argument(positional[0], type=Path, help=positional[1])
    _common(p)
    p.set_defaults(func=func)
    return p


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="thzarray",
                     description="THz emission from femtosecond-laser plasma filaments in air, "
                                 "alone and in phased arrays.",
                     epilog=SAFETY, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--version", action="version", version="thzarray 0.1.0")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    design = ("design", "design file (TOML; reference: designs/README.md)")

    p = sub.add_parser("safety", help="print the laser-safety cautions")
    p.set_defaults(func=cmd_safety)

    p = _command(sub, "cone", "cone angle for a plasma length, or the length for an angle",
                 ["thzarray cone --length '30 cm' --freq '0.3 THz' --humidity '50 %'",
                  "thzarray cone --angle '3 deg' --freq '0.5 THz' --humidity '50 %'"], cmd_cone)
    what = p.add_mutually_exclusive_group(required=True)
    what.add_argument("--length", help="plasma length, e.g. '30 cm'")
    what.add_argument("--angle", help="wanted cone angle, e.g. '3 deg'")
    p.add_argument("--freq", required=True, help="frequency, e.g. '0.3 THz'")
    _medium_flags(p)

    _command(sub, "check", "validate a design file (every problem, one line each)",
             ["thzarray check designs/single_filament.toml"], cmd_check, design)
    _command(sub, "pattern", "far-field sky maps, cuts through the cone, cone chart",
             ["thzarray pattern designs/single_filament.toml --out results"], cmd_pattern, design)
    _command(sub, "map", "what the receiver records on a detector plane (exact near field) "
                         "beside the far-field prediction",
             ["thzarray map designs/lab_receiver.toml --out results"], cmd_map, design)
    _command(sub, "budget", "energy into the receiver versus range and humidity",
             ["thzarray budget designs/lab_receiver.toml --json"], cmd_budget, design)

    toward = ("target direction THETA,PHI, e.g. '9 deg,0 deg' (default: the design's "
              "[steering].toward)")
    p = _command(sub, "steer", "delays that steer a layout toward a target, with the lobe "
                               "report and maps",
                 ["thzarray steer designs/grid_steering.toml",
                  "thzarray steer designs/grid_steering.toml --toward '9 deg,0 deg' "
                  "--write steered.toml"], cmd_steer, design)
    p.add_argument("--toward", help=toward)
    p.add_argument("--write", type=Path, help="also write a new design file with these delays")

    p = _command(sub, "compare", "single, incoherent, phased and ideal N^2 energies",
                 ["thzarray compare designs/grid_steering.toml --json"], cmd_compare, design)
    p.add_argument("--toward", help=toward)
    p.add_argument("--shots", type=int, default=400, help="Monte Carlo draws (default 400)")
    p.add_argument("--seed", type=int, default=0, help="random seed (default 0)")

    p = _command(sub, "tolerance", "Monte Carlo of timing jitter and placement errors",
                 ["thzarray tolerance designs/grid_steering.toml"], cmd_tolerance, design)
    p.add_argument("--toward", help=toward)

    p = _command(sub, "fit", "fit a measured angular scan: effective length, mismatch, "
                             "amplitude, background",
                 ["thzarray fit designs/scan_synthetic.csv",
                  "thzarray fit scan.csv --freq '0.3 THz' --distance '1.5 m' --json",
                  "thzarray fit scan.csv --fix background=0"], cmd_fit,
                 ("data", "scan CSV file"),
                 note="CSV: columns angle_deg (or angle_rad), signal, optional sigma; metadata "
                      "lines '# freq = 0.3 THz', '# distance = 1.5 m'.")
    p.add_argument("--freq", help="frequency, e.g. '0.3 THz' (default: the file's '# freq')")
    p.add_argument("--distance", help="detector distance for a finite-distance fit, e.g. "
                                      "'1.5 m' (default: the file's '# distance', else far field)")
    p.add_argument("--fix", action="append", default=[], metavar="NAME=VALUE",
                   help="hold a parameter fixed (SI), e.g. background=0; repeatable")

    p = _command(sub, "focus", "pick lens and pulse energy for a target cone: cone angle at "
                               "the band versus focal length and energy",
                 ["thzarray focus --angle '6 deg' --band '0.2 THz,0.4 THz' "
                  "--energy '0.5 mJ,1 mJ,2 mJ'"], cmd_focus)
    p.add_argument("--angle", required=True, help="target cone angle, e.g. '6 deg'")
    p.add_argument("--band", required=True, help="receiver band LOW,HIGH, e.g. '0.2 THz,0.4 THz'")
    p.add_argument("--energy", default="0.5 mJ,1 mJ,2 mJ,4 mJ", help="pulse energies, comma list")
    p.add_argument("--duration", default="50 fs", help="pulse duration (intensity FWHM)")
    p.add_argument("--beam-radius", default="5 mm", help="1/e^2 intensity radius at the lens")
    p.add_argument("--focal", default="0.2 m,5 m", help="focal-length range of the chart LOW,HIGH")
    _medium_flags(p)

    p = _command(sub, "sweep", "parameter study over design keys and seeds on dask (local "
                               "cluster by default), resumable",
                 ["thzarray sweep designs/sweeps/length_scan.toml --out results",
                  "thzarray sweep study.toml --scheduler tcp://HOST:8786"], cmd_sweep,
                 ("sweep", "sweep file (TOML)"), note="Sweep-file format: designs/sweeps/README.md.")
    p.add_argument("--workers", type=int, default=2,
                   help="worker processes of the local cluster on 127.0.0.1 (default 2)")
    where = p.add_mutually_exclusive_group()
    where.add_argument("--scheduler", metavar="ADDRESS",
                       help="use a running dask scheduler, e.g. tcp://HOST:8786")
    where.add_argument("--serial", action="store_true", help="run in this process without dask")
    p.add_argument("--recompute", action="store_true", help="ignore finished parts")

    p = _command(sub, "demo", "run every design in designs/ and write the gallery",
                 ["thzarray demo --out gallery --force"], cmd_demo)
    p.add_argument("--designs", type=Path, default=Path("designs"),
                   help="directory of example designs (default: ./designs)")
    return parser


# --- helpers ------------------------------------------------------------------------------

def _quantity(flag, value, kind):
    from .units import UnitError, parse_quantity

    try:
        return parse_quantity(value, kind)
    except UnitError as exc:
        raise UsageError(f"--{flag}: {exc}") from None


def _medium_from_flags(args):
    from .medium import Medium

    if args.vacuum:
        return Medium.vacuum()
    return Medium.air(temperature_c=_quantity("temperature", args.temperature, "temperature"),
                      pressure_hpa=_quantity("pressure", args.pressure, "pressure") / 100,
                      relative_humidity=_quantity("humidity", args.humidity, "fraction"),
                      laser_wavelength_m=_quantity("laser-wavelength", args.laser_wavelength,
                                                   "length"))


def _emit(args, result: dict, text: str):
    args.summary = result
    if args.json:
        print(json.dumps(_finite(result), indent=2, sort_keys=True, default=_jsonable,
                         allow_nan=False))
    else:
        print(text)


def _finite(obj):
    """JSON has no inf or NaN: such numbers become null."""
    if isinstance(obj, dict):
        return {k: _finite(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_finite(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return _finite(obj.tolist())
    if isinstance(obj, (float, np.floating)) and not np.isfinite(obj):
        return None
    return obj


def _jsonable(obj):
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, (np.floating, np.integer)):
        return obj.item()
    if isinstance(obj, Path):
        return str(obj)
    raise TypeError(type(obj).__name__)


def _say(args, text):
    if not args.quiet and not args.json:
        print(text, file=sys.stderr)


# --- subcommands ---------------------------------------------------------------------------

def cmd_safety(args):
    print(SAFETY)
    return 0


def cmd_cone(args):
    from .cone import cone_angle, length_for_cone

    medium = _medium_from_flags(args)
    freq = _quantity("freq", args.freq, "frequency")
    base = {"freq_hz": freq, "n_group": medium.n_group, "n_thz": medium.n_thz}
    if args.length is not None:
        length = _quantity("length", args.length, "length")
        angle = float(cone_angle(length, freq, medium))
        result = dict(base, length_m=length, cone_angle_rad=angle,
                      cone_angle_deg=float(np.degrees(angle)))
        text = (f"cone angle {np.degrees(angle):.4g} deg for {length * 100:.4g} cm of plasma "
                f"at {freq / 1e12:.4g} THz")
    else:
        angle = _quantity("angle", args.angle, "angle")
        length = float(length_for_cone(angle, freq, medium))
        result = dict(base, cone_angle_rad=angle, cone_angle_deg=float(np.degrees(angle)),
                      length_m=length)
        text = (f"plasma length {length * 100:.4g} cm gives a {np.degrees(angle):.4g} deg cone "
                f"at {freq / 1e12:.4g} THz")
    _emit(args, result, text)
    return 0


def cmd_check(args):
    from .design import load_design

    d = load_design(args.design)
    result = {"design": d.name, "valid": True, "filaments": len(d.sources),
              "grid_points": int(d.grid.freq.size * d.grid.theta.size * d.grid.phi.size)}
    _emit(args, result, f"{args.design}: valid ({len(d.sources)} filament(s))")
    return 0


def _pattern_outputs(design, out: Path, force: bool, quiet: bool):
    from . import jobs
    from .plots import interactive, static
    from .output import check_writable, write_text

    slug = _slug(design.name)
    chart = jobs.cone_chart(design)
    pat = jobs.pattern(design)
    title = design.name
    files = []
    planned = []
    formats = set(design.formats)
    for kind in ("cone_chart", "sky", "cuts"):
        for ext in ("png", "pdf", "html"):
            if ext in formats:
                planned.append(out / f"{slug}_{kind}.{ext}")
    if "csv" in formats:
        planned.append(out / f"{slug}_cuts.csv")
    if "netcdf" in formats:
        planned.append(out / f"{slug}_pattern.nc")
    for path in planned:
        check_writable(path, force)  # refuse before computing or writing anything
    out.mkdir(parents=True, exist_ok=True)
    unit = "J/(Hz sr)" if pat.absolute else "J/(Hz sr) per (A s)^2"
    label = f"energy density ({unit})"
    cut = pat.energy_density.mean(axis=2)
    figs = {
        "cone_chart": (static.cone_chart(chart.lengths, chart.freqs, chart.angles,
                                         f"{title}: cone angle vs plasma length",
                                         chart.target_angle, chart.target_lengths),
                       interactive.cone_chart(chart.lengths, chart.freqs, chart.angles,
                                              f"{title}: cone angle vs plasma length",
                                              chart.target_angle, chart.target_lengths)),
        "sky": (static.sky_map(np.degrees(pat.sky_x), np.degrees(pat.sky_y), pat.sky[0],
                               f"{title}: sky map at {pat.freq[0] / 1e12:.3g} THz",
                               pol=(pat.sky_pol[0, 0], pat.sky_pol[1, 0]), label=label),
                interactive.sky_map(np.degrees(pat.sky_x), np.degrees(pat.sky_y), pat.sky,
                                    pat.freq, f"{title}: sky map",
                                    pol=(pat.sky_pol[0], pat.sky_pol[1]), label=label)),
        "cuts": (static.cone_cuts(pat.theta, pat.freq, cut, f"{title}: cuts through the cone",
                                  label=label),
                 interactive.cone_cuts(pat.theta, pat.freq, cut,
                                       f"{title}: cuts through the cone", label=label)),
    }
    for kind, (sfig, ifig) in figs.items():
        for ext in ("png", "pdf"):
            if ext in formats:
                files.append(static.save(sfig, out / f"{slug}_{kind}.{ext}", force))
        if "html" in formats:
            files.append(interactive.save(ifig, out / f"{slug}_{kind}.html", force))
    if "csv" in formats:
        lines = ["theta_rad," + ",".join(f"energy_density_{f / 1e12:.4g}THz" for f in pat.freq)]
        for i, t in enumerate(pat.theta):
            lines.append(f"{t:.9g}," + ",".join(f"{v:.9g}" for v in cut[:, i]))
        files.append(write_text(out / f"{slug}_cuts.csv", "\n".join(lines) + "\n", force))
    if "netcdf" in formats:
        from .report import pattern_dataset, write_netcdf

        files.append(write_netcdf(pattern_dataset(pat, design.name), out / f"{slug}_pattern.nc",
                                  force))
    summary = dict(chart.summary(), **pat.summary())
    summary["design"] = design.name
    summary["files"] = [str(f) for f in files]
    return summary


def _write_all(out: Path, force: bool, formats, figures=(), tables=(), datasets=()):
    """Write figures (name, static_fig, html_fig), CSV tables (name, text) and netCDF
    datasets (name, dataset); every path is checked before anything is written."""
    from .output import check_writable, write_text
    from .plots import interactive, static

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
            from .report import write_netcdf

            written.append(write_netcdf(obj, path, force))
    return [str(p) for p in written]


def _csv(header, columns):
    lines = [",".join(header)]
    for row in zip(*columns):
        lines.append(",".join(f"{v:.9g}" for v in row))
    return "\n".join(lines) + "\n"


def _slug(name):
    import re

    return re.sub(r"[^a-z0-9]+", "_", name.lower()).strip("_") or "design"


def cmd_pattern(args):
    from .design import load_design

    design = load_design(args.design)
    summary = _pattern_outputs(design, args.out, args.force, args.quiet)
    cones = ", ".join(f"{a:.3g} deg at {f / 1e12:.3g} THz"
                      for a, f in zip(summary["cone_angle_deg"], summary["freq_hz"]))
    _emit(args, summary, f"{design.name}: cone {cones}; wrote {len(summary['files'])} files "
                         f"to {args.out}")
    return 0


def cmd_map(args):
    from . import jobs
    from .design import load_design
    from .plots import interactive, static

    design = load_design(args.design)
    with _spinner(args, "near field"):
        m = jobs.detector_map(design)
    slug = _slug(design.name)
    unit = "J" if m.absolute else "J per (A s)^2"
    titles = [f"exact field at {m.distance:g} m", "far-field prediction"]
    title = f"{design.name}: receiver map"
    mid = len(m.y) // 2
    import xarray as xr

    ds = xr.Dataset({"near": (("y", "x"), m.near, {"units": unit}),
                     "far": (("y", "x"), m.far, {"units": unit})},
                    coords={"x": ("x", m.x, {"units": "m"}), "y": ("y", m.y, {"units": "m"})},
                    attrs={"design": design.name, "plane_distance_m": m.distance})
    files = _write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_map", lambda: static.plane_maps(m.x, m.y, [m.near, m.far], titles,
                                                            title, f"energy ({unit})"),
                  lambda: interactive.plane_maps(m.x, m.y, [m.near, m.far], titles, title,
                                                 f"energy ({unit})"))],
        tables=[(f"{slug}_map_cut", _csv(["x_m", "near_energy", "far_energy"],
                                         [m.x, m.near[mid], m.far[mid]]))],
        datasets=[(f"{slug}_map", ds)])
    summary = dict(m.summary(), design=design.name, files=files)
    ratio = summary["near_over_far_peak"]
    _emit(args, summary, f"{design.name}: peak {summary['near_field_peak']['energy']:.3g} {unit} "
                         f"(far-field prediction x{1 / ratio if ratio else float('nan'):.3g}); "
                         f"wrote {len(files)} files to {args.out}")
    return 0


def cmd_budget(args):
    from . import jobs
    from .design import load_design
    from .plots import interactive, static

    design = load_design(args.design)
    b = jobs.budget(design)
    slug = _slug(design.name)
    unit = "J" if design.plasma is not None else "J per (A s)^2"
    labels = [f"RH {100 * h:.0f} %" for h in b.relative_humidity]
    title = f"{design.name}: range budget"
    cols = [b.distance] + [e for e in b.energy] + [a for a in b.absorption_db]
    header = (["distance_m"] + [f"energy_rh{100 * h:.0f}" for h in b.relative_humidity]
              + [f"absorption_db_rh{100 * h:.0f}" for h in b.relative_humidity])
    files = _write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_budget",
                  lambda: static.line_chart(b.distance, list(b.energy), labels, "distance (m)",
                                            f"energy into receiver ({unit})", title, logy=True),
                  lambda: interactive.line_chart(b.distance, list(b.energy), labels,
                                                 "distance (m)", f"energy into receiver ({unit})",
                                                 title, logy=True))],
        tables=[(f"{slug}_budget", _csv(header, cols))])
    summary = {"design": design.name, "distance_m": b.distance.tolist(),
               "relative_humidity": b.relative_humidity.tolist(), "energy": b.energy.tolist(),
               "absorption_db": b.absorption_db.tolist(), "theta_rad": float(b.theta),
               "energy_unit": unit, "files": files}
    last = ", ".join(f"{lab}: {e[-1]:.3g} {unit} ({a[-1]:.3g} dB absorbed)"
                     for lab, e, a in zip(labels, b.energy, b.absorption_db))
    _emit(args, summary, f"{design.name} at {b.distance[-1]:g} m: {last}")
    return 0


class _spinner:
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


def _toward(args):
    if getattr(args, "toward", None) is None:
        return None
    parts = args.toward.split(",")
    if len(parts) != 2:
        raise UsageError(f"--toward: {args.toward!r} is not allowed; allowed: THETA,PHI, e.g. "
                         "'9 deg,0 deg'")
    return tuple(_quantity("toward", p.strip(), "angle") for p in parts)


def _steer_outputs(design, res, args):
    from . import jobs
    from .plots import interactive, static

    slug = _slug(design.name)
    freq = jobs.steering_band(design)
    theta_max = min(np.pi, 2.0 * max(res.target.theta, np.radians(1.0)))
    scales = np.linspace(0.0, 1.0, 5)
    maps = []
    for a in scales:
        x, y, m = jobs.band_sky(res.sources if a == 1 else
                                tuple(f.replace(delay=a * f.delay) for f in res.sources),
                                freq, design.medium, design.plasma, theta_max, 101)
        maps.append(m)
    xd, yd = np.degrees(x), np.degrees(y)
    unit = "J/sr" if design.plasma is not None else "J/sr per (A s)^2"
    title = f"{design.name}: steered lobe (target {np.degrees(res.target.theta):.3g} deg)"
    delays_csv = _csv(["x_m", "y_m", "z_m", "delay_s"],
                      [[f.start[0] for f in res.sources], [f.start[1] for f in res.sources],
                       [f.start[2] for f in res.sources], res.delays])
    return _write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_steered",
                  lambda: static.sky_map(xd, yd, maps[-1], title, label=f"band energy ({unit})"),
                  lambda: interactive.sky_slider(xd, yd, maps, [f"{a:.2f}" for a in scales],
                                                 title, f"band energy ({unit})",
                                                 "fraction of the designed delays"))],
        tables=[(f"{slug}_delays", delays_csv)])


def cmd_steer(args):
    from . import jobs
    from .design import load_design
    from .output import check_writable, write_text

    design = load_design(args.design)
    if args.write is not None:
        check_writable(args.write, args.force)
    with _spinner(args, "steering"):
        res = jobs.steer(design, _toward(args))
    files = _steer_outputs(design, res, args)
    if args.write is not None:
        files.append(str(write_text(args.write, jobs.design_with_delays_toml(design, res.sources),
                                    args.force)))
    summary = dict(res.summary(), design=design.name, files=files)
    d_ps = ", ".join(f"{1e12 * d:.4g}" for d in res.delays[:8])
    more = " ..." if len(res.delays) > 8 else ""
    text = [f"{design.name}: {res.method} delays (ps): {d_ps}{more}",
            f"main lobe at theta {summary['main_lobe_deg'][0]:.3g} deg, phi "
            f"{summary['main_lobe_deg'][1]:.3g} deg ({summary['pointing_error_deg']:.3g} deg from "
            f"the target); peak side lobe {summary['peak_sidelobe_db']:.3g} dB; element level at "
            f"the target {summary['cone_level_db']:.3g} dB"]
    text += [f"note: {n}" for n in summary["notes"]]
    text.append(f"wrote {len(files)} files to {args.out}")
    _emit(args, summary, "\n".join(text))
    return 0


def cmd_compare(args):
    from . import jobs
    from .design import load_design
    from .plots import interactive, static

    design = load_design(args.design)
    if args.shots < 2:
        raise UsageError(f"--shots: {args.shots} is not allowed; allowed: 2 or more")
    g, target = jobs.compare(design, _toward(args), shots=args.shots, seed=args.seed)
    labels = ["single", "incoherent", "phased", f"ideal N^2 (N={g.count})"]
    values = [1.0, g.incoherent_over_single, g.phased_over_single, g.ideal / g.single]
    title = f"{design.name}: gain over one filament"
    files = _write_all(args.out, args.force, design.formats,
                       figures=[(f"{_slug(design.name)}_gains",
                                 lambda: static.bar_chart(labels, values, "energy / single", title),
                                 lambda: interactive.bar_chart(labels, values, "energy / single",
                                                               title))],
                       tables=[(f"{_slug(design.name)}_gains",
                                "case,energy,over_single\n" + "".join(
                                    f"{lab},{v * g.single:.9g},{v:.9g}\n"
                                    for lab, v in zip(labels, values)))])
    summary = {"design": design.name, "count": g.count, "single": g.single,
               "incoherent": g.incoherent, "incoherent_mc": g.incoherent_mc,
               "incoherent_mc_error": g.incoherent_mc_error, "phased": g.phased, "ideal": g.ideal,
               "coherent_limit": g.coherent_limit, "unit": g.unit,
               "phased_over_single": g.phased_over_single,
               "incoherent_over_single": g.incoherent_over_single,
               "phased_over_ideal": g.phased_over_ideal,
               "target_theta_deg": float(np.degrees(target.theta)), "files": files}
    _emit(args, summary, f"{design.name}: single 1, incoherent {g.incoherent_over_single:.3g} "
                         f"(Monte Carlo {g.incoherent_mc / g.single:.3g} +- "
                         f"{g.incoherent_mc_error / g.single:.2g}), phased "
                         f"{g.phased_over_single:.4g}, ideal N^2 {g.ideal / g.single:.4g}")
    return 0


def cmd_tolerance(args):
    from . import jobs
    from .design import load_design
    from .plots import interactive, static

    design = load_design(args.design)
    with _spinner(args, "Monte Carlo"):
        t, res = jobs.tolerance_study(design, _toward(args))
    markers = [("mean", t.mean), ("exact mean", t.expected),
               (f"{t.percentile:g}th percentile", t.percentile_value)]
    title = f"{design.name}: delivered gain with errors"
    files = _write_all(args.out, args.force, design.formats,
                       figures=[(f"{_slug(design.name)}_tolerance",
                                 lambda: static.histogram(t.samples, "gain / error-free gain",
                                                          title, markers),
                                 lambda: interactive.histogram(t.samples, "gain / error-free gain",
                                                               title, markers))],
                       tables=[(f"{_slug(design.name)}_tolerance",
                                _csv(["build", "gain"], [np.arange(t.samples.size), t.samples]))])
    summary = {"design": design.name, "mean": t.mean, "std": t.std,
               "standard_error": t.standard_error, "percentile": t.percentile,
               "percentile_value": t.percentile_value, "expected_mean": t.expected,
               "shots": int(t.samples.size), "files": files}
    _emit(args, summary, f"{design.name}: mean gain {t.mean:.3f} +- {t.standard_error:.2g} "
                         f"(exact {t.expected:.3f}), spread {t.std:.3f}, {t.percentile:g}th "
                         f"percentile {t.percentile_value:.3f}")
    return 0


def _jobs_for(design):
    """The subcommands that apply to a design, in gallery order."""
    jobs = [cmd_pattern]
    if design.receiver is not None and design.plane is not None:
        jobs.append(cmd_map)
    if design.receiver is not None:
        jobs.append(cmd_budget)
    if len(design.sources) > 1 or design.steering is not None:
        jobs += [cmd_steer, cmd_compare]
    if design.tolerance is not None:
        jobs.append(cmd_tolerance)
    return jobs


def cmd_fit(args):
    from .tables import fit_command_result
    from .plots import interactive, static
    from .units import parse_quantity

    fixed = {}
    for item in args.fix:
        name, sep, value = item.partition("=")
        if not sep or not name.strip():
            raise UsageError(f"--fix: {item!r} is not allowed; allowed: NAME=VALUE, e.g. "
                             "background=0")
        try:
            fixed[name.strip()] = float(value)
        except ValueError:
            raise UsageError(f"--fix: {item!r} has a value that is not a number; allowed: "
                             "NAME=VALUE in SI units") from None
    freq = None if args.freq is None else _quantity("freq", args.freq, "frequency")
    distance = None if args.distance is None else _quantity("distance", args.distance, "length")
    result = fit_command_result(args.data, freq=freq, distance=distance, fixed=fixed or None,
                                to_si=parse_quantity)
    res = result["residuals"]
    slug = _slug(Path(args.data).stem)
    title = f"fit of {Path(args.data).name}"
    result["files"] = _write_all(
        args.out, args.force, ("png", "html", "csv"),
        figures=[(f"{slug}_fit",
                  lambda: static.fit_plot(np.asarray(res["angle_rad"]), res["signal"],
                                          res["model"], res.get("sigma"), title),
                  lambda: interactive.fit_plot(np.asarray(res["angle_rad"]), res["signal"],
                                               res["model"], res.get("sigma"), title))],
        tables=[(f"{slug}_fit_residuals",
                 _csv(["angle_rad", "signal", "model", "residual"],
                      [res["angle_rad"], res["signal"], res["model"], res["residual"]]))])
    units = result.get("units", {})
    lines = [f"{Path(args.data).name}: {result['model']} fit, chi2/dof "
             f"{result['chi2_per_dof']:.3g}" if result.get("chi2_per_dof") is not None else
             f"{Path(args.data).name}: {result['model']} fit"]
    for name, value in result["params"].items():
        err = result["errors"].get(name)
        unit = units.get(name, "")
        unit = "" if unit in ("1", "dimensionless") else unit
        lines.append(f"  {name} = {value:.6g} +- {err:.2g} {unit}".rstrip() if err is not None
                     else f"  {name} = {value:.6g} {unit} (fixed or unconstrained)".rstrip())
    lines += [f"note: {m}" for m in result.get("messages", [])]
    _emit(args, result, "\n".join(lines))
    return 0


def _quantity_list(flag, text, kind):
    return np.array([_quantity(flag, part.strip(), kind) for part in text.split(",") if part.strip()])


def cmd_focus(args):
    from .laser import focusing_chart, focusing_for_cone
    from .plots import interactive, static

    medium = _medium_from_flags(args)
    angle = _quantity("angle", args.angle, "angle")
    band = _quantity_list("band", args.band, "frequency")
    energy = _quantity_list("energy", args.energy, "energy")
    focal_range = _quantity_list("focal", args.focal, "length")
    if band.size != 2 or band[1] <= band[0]:
        raise UsageError(f"--band: {args.band!r} is not allowed; allowed: LOW,HIGH with LOW < HIGH")
    if focal_range.size != 2 or not 0 < focal_range[0] < focal_range[1]:
        raise UsageError(f"--focal: {args.focal!r} is not allowed; allowed: LOW,HIGH with "
                         "0 < LOW < HIGH")
    freq = np.linspace(band[0], band[1], 9)
    opts = dict(duration=_quantity("duration", args.duration, "time"),
                beam_radius=_quantity("beam-radius", args.beam_radius, "length"), medium=medium)
    with _spinner(args, "focusing chart"):
        focal, length = focusing_for_cone(angle, energy, freq, **opts)
        grid = np.geomspace(focal_range[0], focal_range[1], 40)
        chart = focusing_chart(grid, energy, freq, **opts)
    labels = [f"{e * 1e3:.3g} mJ" for e in energy]
    title = (f"cone angle at {band[0] / 1e12:.3g}-{band[1] / 1e12:.3g} THz vs lens focal length "
             f"(target {np.degrees(angle):.3g} deg)")
    curves = [np.degrees(chart.cone_angle[:, j]) for j in range(energy.size)]
    target = [np.full(grid.shape, np.degrees(angle))]
    files = _write_all(args.out, args.force, ("png", "html", "csv"),
                       figures=[("focusing_chart",
                                 lambda: static.line_chart(grid, curves + target,
                                                           labels + ["target"], "lens focal length (m)",
                                                           "cone angle (deg)", title),
                                 lambda: interactive.line_chart(grid, curves + target,
                                                                labels + ["target"],
                                                                "lens focal length (m)",
                                                                "cone angle (deg)", title))],
                       tables=[("focusing_chart", _csv(["focal_length_m"] + [f"cone_deg_{lab.replace(' ', '')}"
                                                                             for lab in labels],
                                                       [grid] + curves))])
    summary = {"target_angle_deg": float(np.degrees(angle)), "column_length_m": float(length),
               "energy_j": energy.tolist(),
               "focal_length_m": [None if not np.isfinite(f) else float(f) for f in focal],
               "files": files}
    rows = "\n".join(f"  {e * 1e3:5.3g} mJ: lens f = {f:.3f} m" if np.isfinite(f) else
                      f"  {e * 1e3:5.3g} mJ: no lens in range gives it" for e, f in zip(energy, focal))
    _emit(args, summary, f"a {np.degrees(angle):.3g} deg cone needs a {100 * length:.3g} cm column:\n"
                         + rows)
    return 0


def cmd_sweep(args):
    from .sweep import load_sweep, run_serial, run_sweep

    sweep = load_sweep(args.sweep)
    show = not (args.quiet or args.json)
    if args.serial:
        result = run_serial(sweep, args.out, force=args.force, recompute=args.recompute,
                            progress=show)
    else:
        result = run_sweep(sweep, args.out, scheduler=args.scheduler, n_workers=args.workers,
                           force=args.force, recompute=args.recompute, progress=show)
    summary = result.summary()
    _emit(args, summary, f"{sweep.name}: {summary['tasks']} tasks ({result.computed} computed, "
                         f"{result.reused} reused); wrote {result.path}")
    return 0


def cmd_demo(args):
    from .design import load_design
    from .output import write_text

    designs = sorted(Path(args.designs).glob("*.toml"))
    if not designs:
        raise UsageError(f"--designs: {str(args.designs)!r} holds no *.toml designs; allowed: a "
                         "directory of design files")
    _say(args, SAFETY)
    results = []
    for path in _progress(designs, args, "designs"):
        design = load_design(path)
        files = []
        for job in _jobs_for(design):
            sub = argparse.Namespace(design=path, out=args.out, force=args.force, json=True,
                                     quiet=True, debug=args.debug, toward=None, write=None,
                                     shots=400, seed=0)
            with _silenced():
                job(sub)
            files += sub.summary.get("files", [])
        results.append({"design": design.name, "description": design.description,
                        "files": files})
    sub = argparse.Namespace(angle="6 deg", band="0.2 THz,0.4 THz", energy="0.5 mJ,1 mJ,2 mJ,4 mJ",
                             duration="50 fs", beam_radius="5 mm", focal="0.2 m,5 m",
                             vacuum=False, temperature="15 degC", pressure="1013.25 hPa",
                             humidity="0 %", laser_wavelength="800 nm", out=args.out,
                             force=args.force, json=True, quiet=True, debug=args.debug)
    with _silenced():
        cmd_focus(sub)
    results.append({"design": "Focusing for a 6 degree cone (command line)",
                    "description": "thzarray focus --angle '6 deg' --band '0.2 THz,0.4 THz'",
                    "files": sub.summary["files"]})
    index = _gallery_index(results, args.out)
    write_text(args.out / "index.html", index, force=args.force)
    summary = {"designs": [r["design"] for r in results], "index": str(args.out / "index.html"),
               "files": [f for r in results for f in r["files"]]}
    _emit(args, summary, f"gallery written to {args.out / 'index.html'} "
                         f"({len(summary['files'])} files from {len(results)} designs)")
    return 0


class _silenced:
    """Swallow what a sub-job prints (the demo prints one line of its own)."""

    def __enter__(self):
        import io

        self.old, sys.stdout = sys.stdout, io.StringIO()

    def __exit__(self, *exc):
        sys.stdout = self.old
        return False


def _progress(items, args, what):
    if args.quiet or args.json or not sys.stderr.isatty():
        return items
    from tqdm import tqdm

    return tqdm(items, desc=what, unit=what.rstrip("s"), file=sys.stderr)


def _gallery_index(results, out: Path) -> str:
    import html

    rows = []
    for r in results:
        links = []
        for f in r["files"]:
            name = Path(f).name
            if name.endswith(".png"):
                links.append(f'<a href="{html.escape(name)}"><img src="{html.escape(name)}" '
                             f'alt="{html.escape(name)}" width="280"></a>')
            else:
                links.append(f'<a href="{html.escape(name)}">{html.escape(name)}</a>')
        rows.append(f"<section><h2>{html.escape(r['design'])}</h2>\n"
                    f"<p>{html.escape(r.get('description', ''))}</p>\n<p>" + "\n".join(links)
                    + "</p></section>")
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            "<title>thzarray gallery</title><style>body{font-family:sans-serif;margin:2em}"
            "img{margin:4px;border:1px solid #ccc}</style></head><body>\n"
            "<h1>thzarray gallery</h1>\n<p>Figures made by <code>make demo</code> from the "
            "example designs (invented scenarios). "
            + html.escape(SAFETY_SHORT) + "</p>\n" + "\n".join(rows) + "\n</body></html>\n")


# --- entry point ---------------------------------------------------------------------------

def main(argv=None) -> int:
    parser = build_parser()
    debug = "--debug" in (sys.argv[1:] if argv is None else argv)
    try:
        args = parser.parse_args(argv)
        if getattr(args, "func", None) is None:
            parser.print_help()
            return 2
        return args.func(args)
    except (UsageError, ValueError) as exc:
        if debug:
            raise
        from .design import DesignError

        lines = exc.problems if isinstance(exc, DesignError) else str(exc).splitlines()
        for line in lines:
            print(f"thzarray: error: {line}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("thzarray: interrupted", file=sys.stderr)
        return 130
    except Exception as exc:  # an internal error: one line, traceback only with --debug
        if debug:
            raise
        print(f"thzarray: internal error: {type(exc).__name__}: {exc} (rerun with --debug "
              "for the traceback)", file=sys.stderr)
        return 1


if __name__ == "__main__":
    sys.exit(main())
