"""The demo: every example design through every command that applies, and the gallery
page.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from thzarray.app.commands.array import cmd_compare, cmd_steer, cmd_tolerance
from thzarray.app.commands.common import (
    SAFETY,
    SAFETY_SHORT,
    UsageError,
    emit,
    progress,
    say,
    silenced,
)
from thzarray.app.commands.filament import cmd_focus, cmd_pattern
from thzarray.app.commands.receiver import cmd_budget, cmd_map

__all__ = ['cmd_demo']


def jobs_for(design):
    """The subcommands that apply to a design, in gallery order."""
    jobs = [cmd_pattern]
    if design.receiver is not None and design.plane is not None:
        jobs.append(cmd_map)
    if design.receiver is not None:
        jobs.append(cmd_budget)
    if len(design.filaments) > 1 or design.steering is not None:
        jobs += [cmd_steer, cmd_compare]
    if design.tolerance is not None:
        jobs.append(cmd_tolerance)
    return jobs


def cmd_demo(args):
    from thzarray.app.design import load_design
    from thzarray.app.output import write_text

    designs = sorted(Path(args.designs).glob("*.toml"))
    if not designs:
        raise UsageError(f"--designs: {str(args.designs)!r} holds no *.toml designs; allowed: a "
                         "directory of design files")
    say(args, SAFETY)
    results = []
    for path in progress(designs, args, "designs"):
        design = load_design(path)
        files = []
        for job in jobs_for(design):
            sub = argparse.Namespace(design=path, out=args.out, force=args.force, json=True,
                                     quiet=True, debug=args.debug, toward=None, write=None,
                                     trials=400, seed=0)
            with silenced():
                job(sub)
            files += sub.summary.get("files", [])
        results.append({"design": design.name, "description": design.description,
                        "files": files})
    sub = argparse.Namespace(angle="6 deg", band="0.2 THz,0.4 THz", energy="0.5 mJ,1 mJ,2 mJ,4 mJ",
                             duration="50 fs", beam_radius="5 mm", focal="0.2 m,5 m",
                             vacuum=False, temperature="15 degC", pressure="1013.25 hPa",
                             humidity="0 %", laser_wavelength="800 nm", out=args.out,
                             force=args.force, json=True, quiet=True, debug=args.debug)
    with silenced():
        cmd_focus(sub)
    results.append({"design": "Focusing for a 6 degree cone (command line)",
                    "description": "thzarray focus --angle '6 deg' --band '0.2 THz,0.4 THz'",
                    "files": sub.summary["files"]})
    index = _gallery_index(results, args.out)
    write_text(args.out / "index.html", index, force=args.force)
    summary = {"designs": [r["design"] for r in results], "index": str(args.out / "index.html"),
               "files": [f for r in results for f in r["files"]]}
    emit(args, summary, f"gallery written to {args.out / 'index.html'} "
                         f"({len(summary['files'])} files from {len(results)} designs)")
    return 0


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
