"""Commands about one filament: cone angle and length, design check, far-field pattern,
focusing, and fits of measured scans.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from thzarray.app.commands.common import (
    SAFETY,
    UsageError,
    csv,
    emit,
    medium_from_flags,
    quantity,
    quantity_list,
    slug_of,
    spinner,
    write_all,
)

__all__ = ['cmd_check', 'cmd_cone', 'cmd_fit', 'cmd_focus', 'cmd_pattern', 'cmd_safety']


def cmd_safety(args):
    print(SAFETY)
    return 0


def cmd_cone(args):
    from thzarray.field.cone import cone_angle, length_for_cone

    medium = medium_from_flags(args)
    freq = quantity("freq", args.freq, "frequency")
    base = {"freq_hz": freq, "n_group": medium.n_group, "n_thz": medium.n_thz}
    if args.length is not None:
        length = quantity("length", args.length, "length")
        angle = float(cone_angle(length, freq, medium))
        result = dict(base, length_m=length, cone_angle_rad=angle,
                      cone_angle_deg=float(np.degrees(angle)))
        text = (f"cone angle {np.degrees(angle):.4g} deg for {length * 100:.4g} cm of plasma "
                f"at {freq / 1e12:.4g} THz")
    else:
        angle = quantity("angle", args.angle, "angle")
        length = float(length_for_cone(angle, freq, medium))
        result = dict(base, cone_angle_rad=angle, cone_angle_deg=float(np.degrees(angle)),
                      length_m=length)
        text = (f"plasma length {length * 100:.4g} cm gives a {np.degrees(angle):.4g} deg cone "
                f"at {freq / 1e12:.4g} THz")
    emit(args, result, text)
    return 0


def cmd_check(args):
    from thzarray.app.design import load_design

    d = load_design(args.design)
    result = {"design": d.name, "valid": True, "filaments": len(d.filaments),
              "grid_points": int(d.grid.freq.size * d.grid.theta.size * d.grid.phi.size)}
    emit(args, result, f"{args.design}: valid ({len(d.filaments)} filament(s))")
    return 0


def _pattern_outputs(design, out: Path, force: bool, quiet: bool):
    from thzarray.app import jobs
    from thzarray.app.output import check_writable, write_text
    from thzarray.app.plots import interactive, static

    slug = slug_of(design.name)
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
        from thzarray.app.netcdf import pattern_dataset, write_netcdf

        files.append(write_netcdf(pattern_dataset(pat, design.name), out / f"{slug}_pattern.nc",
                                  force))
    summary = dict(chart.summary(), **pat.summary())
    summary["design"] = design.name
    summary["files"] = [str(f) for f in files]
    return summary


def cmd_pattern(args):
    from thzarray.app.design import load_design

    design = load_design(args.design)
    summary = _pattern_outputs(design, args.out, args.force, args.quiet)
    cones = ", ".join(f"{a:.3g} deg at {f / 1e12:.3g} THz"
                      for a, f in zip(summary["cone_angle_deg"], summary["freq_hz"]))
    emit(args, summary, f"{design.name}: cone {cones}; wrote {len(summary['files'])} files "
                         f"to {args.out}")
    return 0


def cmd_fit(args):
    from thzarray.app.plots import interactive, static
    from thzarray.app.scans import fit_command_result
    from thzarray.app.units import parse_quantity

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
    freq = None if args.freq is None else quantity("freq", args.freq, "frequency")
    distance = None if args.distance is None else quantity("distance", args.distance, "length")
    result = fit_command_result(args.data, freq=freq, distance=distance, fixed=fixed or None,
                                to_si=parse_quantity)
    res = result["residuals"]
    slug = slug_of(Path(args.data).stem)
    title = f"fit of {Path(args.data).name}"
    result["files"] = write_all(
        args.out, args.force, ("png", "html", "csv"),
        figures=[(f"{slug}_fit",
                  lambda: static.fit_plot(np.asarray(res["angle_rad"]), res["signal"],
                                          res["model"], res.get("sigma"), title),
                  lambda: interactive.fit_plot(np.asarray(res["angle_rad"]), res["signal"],
                                               res["model"], res.get("sigma"), title))],
        tables=[(f"{slug}_fit_residuals",
                 csv(["angle_rad", "signal", "model", "residual"],
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
    emit(args, result, "\n".join(lines))
    return 0


def cmd_focus(args):
    from thzarray.app.plots import interactive, static
    from thzarray.inverse.focusing import focusing_chart, focusing_for_cone
    from thzarray.source.laser import Pulse

    medium = medium_from_flags(args)
    angle = quantity("angle", args.angle, "angle")
    band = quantity_list("band", args.band, "frequency")
    energy = quantity_list("energy", args.energy, "energy")
    focal_range = quantity_list("focal", args.focal, "length")
    if band.size != 2 or band[1] <= band[0]:
        raise UsageError(f"--band: {args.band!r} is not allowed; allowed: LOW,HIGH with LOW < HIGH")
    if focal_range.size != 2 or not 0 < focal_range[0] < focal_range[1]:
        raise UsageError(f"--focal: {args.focal!r} is not allowed; allowed: LOW,HIGH with "
                         "0 < LOW < HIGH")
    freq = np.linspace(band[0], band[1], 9)
    pulse = Pulse(float(energy[0]), duration=quantity("duration", args.duration, "time"),
                  beam_radius=quantity("beam-radius", args.beam_radius, "length"),
                  wavelength=medium.laser_wavelength or 800e-9)
    opts = dict(pulse=pulse, medium=medium)
    with spinner(args, "focusing chart"):
        focal, length = focusing_for_cone(angle, energy, freq, **opts)
        grid = np.geomspace(focal_range[0], focal_range[1], 40)
        chart = focusing_chart(grid, energy, freq, **opts)
    labels = [f"{e * 1e3:.3g} mJ" for e in energy]
    title = (f"cone angle at {band[0] / 1e12:.3g}-{band[1] / 1e12:.3g} THz vs lens focal length "
             f"(target {np.degrees(angle):.3g} deg)")
    curves = [np.degrees(chart.cone_angle[:, j]) for j in range(energy.size)]
    target = [np.full(grid.shape, np.degrees(angle))]
    files = write_all(args.out, args.force, ("png", "html", "csv"),
                       figures=[("focusing_chart",
                                 lambda: static.line_chart(grid, curves + target,
                                                           labels + ["target"], "lens focal length (m)",
                                                           "cone angle (deg)", title),
                                 lambda: interactive.line_chart(grid, curves + target,
                                                                labels + ["target"],
                                                                "lens focal length (m)",
                                                                "cone angle (deg)", title))],
                       tables=[("focusing_chart", csv(["focal_length_m"] + [f"cone_deg_{lab.replace(' ', '')}"
                                                                             for lab in labels],
                                                       [grid] + curves))])
    summary = {"target_angle_deg": float(np.degrees(angle)), "column_length_m": float(length),
               "energy_j": energy.tolist(),
               "focal_length_m": [None if not np.isfinite(f) else float(f) for f in focal],
               "files": files}
    rows = "\n".join(f"  {e * 1e3:5.3g} mJ: lens f = {f:.3f} m" if np.isfinite(f) else
                      f"  {e * 1e3:5.3g} mJ: no lens in range gives it" for e, f in zip(energy, focal))
    emit(args, summary, f"a {np.degrees(angle):.3g} deg cone needs a {100 * length:.3g} cm column:\n"
                         + rows)
    return 0
