"""The demo: every example design through every command that applies, and the gallery page.

The gallery is a report a person reads: one section per design with its description and
notes, and under every figure a caption with the key numbers and links to the interactive
page and the data. All pages share one ``plotly.min.js``.
"""

from __future__ import annotations

import argparse
import html
from pathlib import Path

from thzarray.app.commands.array import cmd_compare, cmd_steer, cmd_tolerance
from thzarray.app.commands.bench import cmd_bench, cmd_split
from thzarray.app.commands.common import (
    SAFETY,
    SAFETY_SHORT,
    UsageError,
    emit,
    progress,
    say,
    silenced,
)
from thzarray.app.commands.detection import cmd_waveform
from thzarray.app.commands.filament import cmd_focus, cmd_pattern
from thzarray.app.commands.receiver import cmd_budget, cmd_map

__all__ = ["cmd_demo", "jobs_for"]

_MAX_DESIGNS = 200


def jobs_for(design):
    """The subcommands that apply to a design, in gallery order."""
    jobs = [cmd_pattern]
    if design.receiver is not None and design.plane is not None:
        jobs.append(cmd_map)
    if design.receiver is not None:
        jobs.append(cmd_budget)
    if design.sections.waveform is not None:
        jobs.append(cmd_waveform)
    if len(design.filaments) > 1 or design.steering is not None:
        jobs += [cmd_steer, cmd_compare]
    if design.tolerance is not None:
        jobs.append(cmd_tolerance)
    if design.sections.split is not None and design.laser is not None:
        jobs.append(cmd_split)
    if design.sections.bench is not None:
        jobs.append(cmd_bench)
    return jobs


def _run(job, args, **extra):
    sub = argparse.Namespace(out=args.out, force=args.force, json=True, quiet=True,
                             debug=args.debug, caught=getattr(args, "caught", None), **extra)
    with silenced():
        job(sub)
    return sub.summary


def cmd_demo(args):
    from thzarray.app.design import load_design
    from thzarray.app.output import write_text

    designs = sorted(Path(args.designs).glob("*.toml"))[:_MAX_DESIGNS + 1]
    if not designs:
        raise UsageError(f"--designs: {str(args.designs)[:60]!r} holds no *.toml designs; "
                         "allowed: a directory of design files")
    if len(designs) > _MAX_DESIGNS:
        raise UsageError(f"--designs: more than {_MAX_DESIGNS} designs; allowed: at most "
                         f"{_MAX_DESIGNS}")
    say(args, SAFETY)
    results = []
    for path in progress(designs, args, "designs"):
        design = load_design(path)
        files, captions, notes = [], {}, []
        for job in jobs_for(design):
            s = _run(job, args, design=path, toward=None, write=None, trials=400, seed=0,
                     band=None, jitter=None)
            files += s.get("files", [])
            captions.update(s.get("captions", {}))
            notes += [n for n in s.get("notes", []) if n not in notes]
        results.append({"design": design.name, "description": design.description,
                        "files": files, "captions": captions, "notes": notes})
    s = _run(cmd_focus, args, angle="6 deg", band="0.2 THz,0.4 THz",
             energy="0.5 mJ,1 mJ,2 mJ,4 mJ", duration="50 fs", beam_radius="5 mm",
             focal="0.2 m,5 m", vacuum=False, temperature="15 degC", pressure="1013.25 hPa",
             humidity="0 %", laser_wavelength="800 nm", driver="air+plasma",
             group_index=None)
    results.append({"design": "Focusing for a 6 degree cone (command line)",
                    "description": "thzarray focus --angle '6 deg' --band '0.2 THz,0.4 THz' "
                                   "--energy '0.5 mJ,1 mJ,2 mJ,4 mJ'",
                    "files": s["files"], "captions": s.get("captions", {}),
                    "notes": s.get("notes", [])})
    write_text(args.out / "index.html", _gallery_index(results), force=args.force)
    summary = {"designs": [r["design"] for r in results], "index": str(args.out / "index.html"),
               "files": [f for r in results for f in r["files"]]}
    emit(args, summary, f"gallery written to {args.out / 'index.html'} "
                        f"({len(summary['files'])} files from {len(results)} designs)")
    return 0


def _figure(png, files, captions):
    stem = png[:-4]
    links = [f'<a href="{html.escape(stem)}.{ext}">{label}</a>'
             for ext, label in (("html", "interactive"), ("pdf", "PDF"), ("csv", "data"))
             if f"{stem}.{ext}" in files]
    caption = captions.get(png) or captions.get(f"{stem}.html", "")
    return (f'<figure><a href="{html.escape(stem + ".html" if stem + ".html" in files else png)}">'
            f'<img src="{html.escape(png)}" alt="{html.escape(caption or png)}"></a>'
            f"<figcaption>{html.escape(caption)}"
            + (f' <span class="links">[{" | ".join(links)}]</span>' if links else "")
            + "</figcaption></figure>")


def _gallery_index(results) -> str:
    sections = []
    for r in results:
        names = [Path(f).name for f in r["files"]]
        pngs = [n for n in names if n.endswith(".png")]
        shown = {p[:-4] for p in pngs}
        extra = [n for n in names if not n.endswith(".png") and Path(n).stem not in shown]
        notes = "".join(f"<li>{html.escape(n)}</li>" for n in r.get("notes", []))
        sections.append(
            f"<section><h2>{html.escape(r['design'])}</h2>\n"
            f"<p>{html.escape(r.get('description', ''))}</p>\n"
            + (f'<ul class="notes">{notes}</ul>\n' if notes else "")
            + '<div class="figures">'
            + "\n".join(_figure(p, set(names), r.get("captions", {})) for p in pngs)
            + "</div>\n"
            + (("<p>Also: " + ", ".join(f'<a href="{html.escape(n)}">{html.escape(n)}</a>'
                                        for n in extra) + "</p>\n") if extra else "")
            + "</section>")
    style = ("body{font-family:sans-serif;margin:2em;max-width:1400px}"
             ".figures{display:flex;flex-wrap:wrap;gap:16px}"
             "figure{width:420px;margin:0;border:1px solid #ddd;padding:8px}"
             "figure img{width:100%}figcaption{font-size:0.9em;line-height:1.35}"
             ".links{white-space:nowrap}.notes{font-size:0.9em;color:#444}")
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>thzarray gallery</title><style>{style}</style></head><body>\n"
            "<h1>thzarray gallery</h1>\n<p>Figures made by <code>make demo</code> from the "
            "example designs (invented scenarios). Click a figure for its interactive page. "
            + html.escape(SAFETY_SHORT) + "</p>\n" + "\n".join(sections) + "\n</body></html>\n")
