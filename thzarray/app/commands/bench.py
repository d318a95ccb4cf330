"""Commands from laser to bench: ``split`` (how many beams) and ``bench`` (what to set)."""

from __future__ import annotations

import numpy as np

from thzarray.app.commands.common import (
    csv,
    design_notes,
    emit,
    slug_of,
    spinner,
    toward,
    write_all,
)

__all__ = ["cmd_bench", "cmd_split", "sheet_csv"]

_SHEET_COLUMNS = ("filament", "delay_s", "stage_position_m", "stage_error_s",
                  "plate_thickness_m", "plate_error_s", "plate_gdd_s2", "duration_s",
                  "power_ratio", "column_length_m", "column_onset_m", "mirror_depth_m",
                  "mirror_error_s")


def _cell(v) -> str:
    return "" if not np.isfinite(v) else f"{float(v):.10g}"


def _device_lines(s):
    return [f"{d.device}: resolution {d.resolution:.6g} m = delay step {d.quantum:.6g} s; "
            f"rounding error rms {d.rms_error:.6g} s (largest here "
            f"{np.max(np.abs(d.error)):.6g} s); gain kept {d.realised_gain:.6f} with these "
            f"settings (expected {d.expected_gain:.6f})" for d in (s.stage, s.plate, s.echelon)]


def _plate_line(s):
    if s.pulse is None:
        if np.all(np.isnan(s.duration)):
            return "glass plates' effect on the beams: not computed (no [laser], no duration)"
        return (f"glass plates lengthen the pulse to {s.duration.max():.4g} s FWHM at most; "
                "their effect on P/P_cr and the column needs [laser]")
    lost = int(np.sum(s.column_length == 0))
    return (f"glass plates: FWHM {s.duration.min():.4g} to {s.duration.max():.4g} s, P/P_cr "
            f"{s.power_ratio.min():.4g} to {s.power_ratio.max():.4g}, column "
            f"{s.column_length.min():.4g} to {s.column_length.max():.4g} m"
            + (f"; {lost} of {s.count} beams make no column" if lost else ""))


def sheet_csv(sheet) -> str:
    """The bench sheet as CSV: '#' lines with the set-up and the gains, one row per filament.

    Columns (SI units in their titles): ``filament, delay_s, stage_position_m,
    stage_error_s, plate_thickness_m, plate_error_s, plate_gdd_s2, duration_s, power_ratio,
    column_length_m, column_onset_m, mirror_depth_m, mirror_error_s``; an empty cell where a
    value is not known (no pulse) or a beam makes no column.
    """
    s = sheet
    f = s.freq
    head = [f"bench settings for {s.count} filaments; wavelength {s.wavelength:.6g} m; air "
            f"group index {s.air_group_index:.8f}; band {f[0]:.6g} to {f[-1]:.6g} Hz",
            f"glass: {s.glass.name} ({s.glass.source}); group index "
            f"{s.glass_group_index:.6f}", *_device_lines(s), _plate_line(s),
            f"delay stage: travel crossed {s.passes} times; stepped mirror at incidence "
            f"{s.incidence:.6g} rad, " + (f"linear ramp, step height {s.echelon_step:.6g} m"
                                          if np.isfinite(s.echelon_step)
                                          else "delays not a linear ramp")]
    lines = [f"# {h}" for h in head] + [",".join(_SHEET_COLUMNS)]
    for i in range(s.count):
        vals = (s.delays[i], s.stage.setting[i], s.stage.error[i], s.plate.setting[i],
                s.plate.error[i], s.gdd[i], s.duration[i], s.power_ratio[i],
                s.column_length[i], s.column_onset[i], s.echelon.setting[i],
                s.echelon.error[i])
        lines.append(",".join([str(i)] + [_cell(v) for v in vals]))
    return "\n".join(lines) + "\n"


def _split_figures(study, title, caption):
    from thzarray.app.plots import interactive, static

    def masked(v):
        return np.where(v > 0, v, np.nan)

    ys = [masked(study.single), masked(study.incoherent), masked(study.phased)]
    names = ["one column", "N columns, random phases", "N columns, steered"]
    label = f"energy into the target ({study.unit})"
    return [("split", lambda: static.line_chart(study.counts, ys, names, "beams N", label,
                                                title, logy=True),
             lambda: interactive.line_chart(study.counts, ys, names, "beams N", label, title,
                                            logy=True), caption)]


def cmd_split(args):
    from thzarray.app.design import load_design
    from thzarray.app.jobs.bench import split

    design = load_design(args.design)
    with spinner(args, "split study"):
        res = split(design, toward(args))
    s = res.study
    slug = slug_of(design.name)
    title = f"{design.name}: splitting {1e3 * res.laser_energy:.3g} mJ over N beams"
    none = s.counts[~s.has_column]
    multi = s.counts[s.multi_filament & s.has_column]
    best = (f"best N = {s.best_count} ({res.scale.energy_text(s.phased.max(), s.unit)} phased, "
            f"{s.phased_over_single[np.argmax(s.phased)]:.3g} x one column)"
            if s.best_count else "no N makes a column")
    flags = ((f"; no column (P/P_cr too low) at N = {', '.join(map(str, none))}"
              if none.size else "")
             + (f"; several filaments per beam likely (P/P_cr > 10) at N = "
                f"{', '.join(map(str, multi))}" if multi.size else ""))
    caption = (f"Energy into the target ({res.phased.target_source}) versus the number of "
               f"beams, {s.family} layout at {1e3 * s.spacing:.3g} mm spacing, efficiency "
               f"{100 * s.efficiency[0]:.3g} %: {best}{flags}")
    header = ["count", "efficiency", "energy_per_beam_j", "power_ratio", "length_m",
              "single", "incoherent", "phased"]
    cols = [s.counts, s.efficiency, s.energy_per_beam, s.power_ratio, s.length, s.single,
            s.incoherent, s.phased]
    captions = {}
    files = write_all(args.out, args.force, design.formats,
                      figures=[(f"{slug}_{name}", a, b, c) for name, a, b, c in
                               _split_figures(s, title, caption)],
                      tables=[(f"{slug}_split", csv(header, cols))], captions=captions)
    summary = dict(res.summary(), design=design.name, files=files, captions=captions)
    text = (f"{design.name}: {s.family} of N beams from one {1e3 * res.laser_energy:.3g} mJ "
            f"pulse toward {res.phased.target_source}: {best}{flags}\n"
            + "\n".join(f"  N = {n:3d}: P/P_cr {r:7.3g}, column {100 * L:6.3g} cm, phased "
                        f"{p:.3g} {s.unit}" for n, r, L, p in
                        zip(s.counts, s.power_ratio, s.length, s.phased))
            + f"\nwrote {len(files)} files to {args.out}")
    notes = list(s.notes)
    if design.sections.source is not None and design.sections.source.kind == "two-colour":
        notes.append("split uses the laser model's single-colour columns; [source] two-colour "
                     "is not applied to the study")
    notes.append(f"energy scale: {res.scale.source}; the range is that of the design's own "
                 "column, applied to every N (each N's column moves its own way)")
    emit(args, summary, text, design_notes(design, "split") + notes)
    return 0


def cmd_bench(args):
    from thzarray.app.design import load_design
    from thzarray.app.jobs.bench import bench

    design = load_design(args.design)
    with spinner(args, "bench sheet"):
        res = bench(design, toward(args))
    s = res.sheet
    slug = slug_of(design.name)
    title = f"{design.name}: bench settings"
    best = max((s.stage, s.plate, s.echelon), key=lambda d: d.realised_gain)
    caption = ("Delay error left by rounding each device's setting, per filament; gain kept: "
               + ", ".join(f"{d.device} {d.realised_gain:.4f}"
                           for d in (s.stage, s.plate, s.echelon)))
    captions = {}
    files = write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_bench", lambda: _static_sheet(s, title),
                  lambda: _table_page(s, title), caption)],
        tables=[(f"{slug}_bench", sheet_csv(s))], captions=captions)
    summary = dict(res.summary(), design=design.name, files=files, captions=captions)
    rows = "\n".join(
        f"  {i:3d}: delay {1e12 * t:8.4g} ps | stage {1e3 * x:9.5g} mm | plate "
        f"{1e3 * d:8.4g} mm | mirror {1e6 * h:8.4g} um"
        for i, (t, x, d, h) in enumerate(zip(s.delays, s.stage.setting, s.plate.setting,
                                             s.echelon.setting)))
    text = (f"{design.name}: bench settings for {s.count} filaments ({s.glass.name} plates, "
            f"{s.passes}-pass stage)\n{rows}\n" + "\n".join(_device_lines(s)) + "\n"
            + _plate_line(s) + f"\nsmallest loss: {best.device}; wrote {len(files)} files to "
            f"{args.out}\ndelays: {res.phased.how}")
    notes = [] if design.laser is not None else [
        "no [laser]: the plates' effect on P/P_cr and the column is not computed"]
    emit(args, summary, text, design_notes(design, "bench") + notes)
    return 0


def _static_sheet(s, title):
    from matplotlib.figure import Figure

    fig = Figure(figsize=(6.4, 4.0), layout="constrained")
    ax = fig.add_subplot()
    idx = np.arange(s.count)
    for k, d in enumerate((s.stage, s.plate, s.echelon)):
        ax.plot(idx + 0.1 * (k - 1), d.error * 1e15, "o", ms=4,
                label=f"{d.device} (gain kept {d.realised_gain:.4f})")
    ax.axhline(0, color="0.5", lw=0.8)
    ax.set_xlabel("filament")
    ax.set_ylabel("delay error after rounding (fs)")
    ax.set_title(title, fontsize=10)
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=8)
    return fig


def _table_page(s, title):
    import plotly.graph_objects as go

    from thzarray.app.plots.interactive import _layout

    def col(values, scale, digits):
        return [("" if not np.isfinite(v) else f"{v * scale:.{digits}g}") for v in values]

    head = ["filament", "delay (ps)", "stage (mm)", "plate (mm)", "plate GDD (fs^2)",
            "FWHM after plate (fs)", "P/P_cr", "mirror depth (um)"]
    cells = [list(range(s.count)), col(s.delays, 1e12, 6), col(s.stage.setting, 1e3, 7),
             col(s.plate.setting, 1e3, 6), col(s.gdd, 1e30, 5), col(s.duration, 1e15, 5),
             col(s.power_ratio, 1.0, 4), col(s.echelon.setting, 1e6, 6)]
    fig = go.Figure(go.Table(header=dict(values=head), cells=dict(values=cells)))
    notes = "<br>".join(_device_lines(s) + [_plate_line(s)])
    fig.add_annotation(text=notes, x=0, y=-0.02, xref="paper", yref="paper", showarrow=False,
                       align="left", xanchor="left", yanchor="top", font=dict(size=11))
    return _layout(fig, title, height=380 + 26 * min(s.count, 40))
