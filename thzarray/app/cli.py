"""The ``thzarray`` command: the argument parser and the entry point.

Exit codes: 0 success; 2 bad input or usage (one clear line per problem on stderr, no
traceback unless --debug); 1 internal error; 130 interrupted. Every subcommand takes
--out DIR, --json and --force; files are written atomically and never overwrite existing
files without --force. The commands themselves are in :mod:`thzarray.app.commands`.
"""

from __future__ import annotations

import argparse
import sys
import warnings
from pathlib import Path

from thzarray._version import __version__
from thzarray.app.commands.array import cmd_compare, cmd_steer, cmd_sweep, cmd_tolerance
from thzarray.app.commands.bench import cmd_bench, cmd_split
from thzarray.app.commands.common import SAFETY, SAFETY_SHORT, UsageError
from thzarray.app.commands.detection import cmd_waveform
from thzarray.app.commands.filament import (
    cmd_check,
    cmd_cone,
    cmd_fit,
    cmd_focus,
    cmd_pattern,
    cmd_safety,
)
from thzarray.app.commands.gallery import cmd_demo
from thzarray.app.commands.receiver import cmd_budget, cmd_map

__all__ = ["build_parser", "main"]


# Commands that take --out but never write there: an unusable --out is not their concern.
_WRITES_NOTHING = {"safety", "check", "cone"}


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
    parser.add_argument("--version", action="version", version=f"thzarray {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    design = ("design", "design file (TOML; reference: designs/README.md)")
    toward = ("target direction THETA,PHI, e.g. '9 deg,0 deg' (default: the design's "
              "[steering]: its stored delays, else its toward)")
    band = ("band LOW,HIGH or one frequency, e.g. '0.2 THz,0.4 THz' (default: [steering].band, "
            "else the receiver's, else [cone].band, else [observe].freq)")

    p = sub.add_parser("safety", help="print the laser-safety cautions")
    p.set_defaults(func=cmd_safety)

    p = _command(sub, "cone", "cone angle for a plasma length, or the length for an angle",
                 ["thzarray cone --length '30 cm' --freq '0.3 THz' --humidity '50 %'",
                  "thzarray cone --angle '3 deg' --freq '0.5 THz' --humidity '50 %'"], cmd_cone)
    what = p.add_mutually_exclusive_group(required=True)
    what.add_argument("--length", help="plasma length, e.g. '30 cm'")
    what.add_argument("--angle", help="wanted cone angle, e.g. '3 deg'")
    p.add_argument("--freq", required=True, help="frequency, e.g. '0.3 THz'")
    driver = p.add_mutually_exclusive_group()
    driver.add_argument("--group-index", help="the driver's group index, e.g. 1.00031 "
                                              "(default: the air's)")
    driver.add_argument("--electron-density", help="add the plasma's n_e/(2 n_c) to the air's "
                                                   "group index, e.g. '1e16 cm^-3'")
    _medium_flags(p)

    _command(sub, "check", "validate a design file (every problem, one line each)",
             ["thzarray check designs/single_filament.toml"], cmd_check, design)
    p = _command(sub, "pattern", "far-field sky maps, cuts through the cone, cone chart",
                 ["thzarray pattern designs/single_filament.toml --out results"], cmd_pattern,
                 design)
    p.add_argument("--toward", help=toward)
    p = _command(sub, "map", "what the receiver records on a detector plane (exact near field) "
                             "beside the far-field prediction",
                 ["thzarray map designs/lab_receiver.toml --out results"], cmd_map, design)
    p.add_argument("--toward", help=toward)
    p = _command(sub, "budget", "energy into the receiver versus its range from the origin and "
                                "humidity (exact field, far-field error beside it)",
                 ["thzarray budget designs/lab_receiver.toml --json"], cmd_budget, design)
    p.add_argument("--toward", help=toward)
    p = _command(sub, "waveform", "E(t), the electro-optic trace and the spectrum at the "
                                  "design's ranges through its air, with their SNR",
                 ["thzarray waveform designs/two_colour_grid.toml --out results"],
                 cmd_waveform, design,
                 note="Settings: [waveform] (ranges, time window, crystal, probe); a "
                      "[calibration] makes the fields absolute.")
    p.add_argument("--toward", help=toward)

    p = _command(sub, "steer", "delays that steer a layout toward a target, with the lobe "
                               "report and maps",
                 ["thzarray steer designs/grid_steering.toml",
                  "thzarray steer designs/grid_steering.toml --toward '9 deg,0 deg' "
                  "--write steered.toml"], cmd_steer, design,
                 note="With stored [steering].delays and no --toward, steer reports on them; "
                      "--write writes the whole design with [steering] carrying the delays "
                      "and the target, so that every later command uses both.")
    p.add_argument("--toward", help=toward)
    p.add_argument("--band", help=band)
    p.add_argument("--write", type=Path, help="also write the design with these delays")

    p = _command(sub, "compare", "single, incoherent, phased and ideal N^2 energies",
                 ["thzarray compare designs/grid_steering.toml --json"], cmd_compare, design)
    p.add_argument("--toward", help=toward)
    p.add_argument("--band", help=band)
    p.add_argument("--trials", type=int, default=400,
                   help="Monte Carlo trials of random phases (default 400)")
    p.add_argument("--seed", type=int, default=0, help="random seed (default 0)")

    p = _command(sub, "tolerance", "Monte Carlo of timing jitter and placement errors",
                 ["thzarray tolerance designs/grid_steering.toml",
                  "thzarray tolerance designs/grid_steering.toml --jitter '0.5 ps'"],
                 cmd_tolerance, design)
    p.add_argument("--toward", help=toward)
    p.add_argument("--band", help=band)
    p.add_argument("--jitter", help="rms timing jitter, e.g. '0.3 ps' (default: "
                                    "[tolerance].timing_jitter)")

    p = _command(sub, "split", "how many beams to split the laser into: energy into the target "
                               "versus N, incoherent and phased",
                 ["thzarray split designs/laser_array.toml"], cmd_split, design,
                 note="Needs [laser] (the whole pulse is split); [split] sets the counts, "
                      "family, spacing and efficiency (family and spacing default to the "
                      "[layout]).")
    p.add_argument("--toward", help=toward)

    p = _command(sub, "bench", "stage positions, glass-plate thicknesses and stepped-mirror "
                               "depths that realise the delays, with the error they leave",
                 ["thzarray bench designs/grid_steering.toml",
                  "thzarray bench designs/laser_array.toml --toward '5 deg,0 deg'"],
                 cmd_bench, design,
                 note="Uses the delays every command uses (stored [steering].delays, else "
                      "computed); [bench] sets the glass, passes and resolutions.")
    p.add_argument("--toward", help=toward)

    p = _command(sub, "fit", "fit a measured angular scan: effective length, mismatch, "
                             "amplitude, background",
                 ["thzarray fit designs/scan_synthetic.csv",
                  "thzarray fit scan.csv --freq '0.3 THz' --range '1.5 m' --json",
                  "thzarray fit scan.csv --fix background=0 --fix 'length=30 cm'"], cmd_fit,
                 ("data", "scan CSV file"),
                 note="CSV: columns angle_deg (or angle_rad, angle_mrad), signal, optional "
                      "sigma; metadata lines '# freq = 0.3 THz', '# range = 1.5 m' (the "
                      "detector's range from the origin, about which the scan pivots).")
    p.add_argument("--freq", help="frequency, e.g. '0.3 THz' (default: the file's '# freq')")
    p.add_argument("--range", help="range of the detector from the origin for a "
                                   "finite-distance fit, e.g. '1.5 m' (default: the file's "
                                   "'# range', else the far field)")
    p.add_argument("--fix", action="append", default=[], metavar="NAME=VALUE",
                   help="hold a parameter fixed, with units, e.g. background=0 or "
                        "'length=30 cm'; repeatable")
    p.add_argument("--electron-density", help="the column's electron density, for the "
                                              "plasma-corrected mismatch, e.g. '1e16 cm^-3'")
    _medium_flags(p)

    p = _command(sub, "focus", "pick lens and pulse energy for a target cone: cone angle at "
                               "the band versus focal length and energy",
                 ["thzarray focus --angle '6 deg' --band '0.2 THz,0.4 THz' "
                  "--energy '0.5 mJ,1 mJ,2 mJ'"], cmd_focus)
    p.add_argument("--angle", required=True, help="target cone angle, e.g. '6 deg'")
    p.add_argument("--band", required=True, help="receiver band LOW,HIGH, e.g. "
                                                 "'0.2 THz,0.4 THz', or one frequency")
    p.add_argument("--energy", default="0.5 mJ,1 mJ,2 mJ,4 mJ", help="pulse energies, comma list")
    p.add_argument("--duration", default="50 fs", help="pulse duration (intensity FWHM)")
    p.add_argument("--beam-radius", default="5 mm", help="1/e^2 intensity radius at the lens")
    p.add_argument("--focal", default="0.2 m,5 m", help="focal-length range of the chart LOW,HIGH")
    driver = p.add_mutually_exclusive_group()
    driver.add_argument("--driver", choices=("air", "air+plasma"), default="air+plasma",
                        help="driver's group index: the air's, or plus the laser model's "
                             "plasma n_e/(2 n_c) (default)")
    driver.add_argument("--group-index", help="the driver's group index, e.g. 1.00031")
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


def main(argv=None) -> int:
    parser = build_parser()
    debug = "--debug" in (sys.argv[1:] if argv is None else argv)
    try:
        args = parser.parse_args(argv)
        if getattr(args, "func", None) is None:
            parser.print_help()
            return 2
        if args.command not in _WRITES_NOTHING and getattr(args, "out", None) is not None:
            from thzarray.app.output import check_out_dir

            check_out_dir(args.out)
        if getattr(args, "write", None) is not None:
            from thzarray.app.output import check_writable

            check_writable(args.write, args.force)
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            args.caught = caught
            return args.func(args)
    except (UsageError, ValueError) as exc:
        if debug:
            raise
        from thzarray.app.design import DesignError

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
