"""Commands about one filament: cone angle and length, design check, far-field pattern,
focusing, and fits of measured scans.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from thzarray.app.commands.common import (
    SAFETY,
    UsageError,
    band_flag,
    csv,
    design_notes,
    emit,
    medium_from_flags,
    quantity,
    quantity_list,
    slug_of,
    spinner,
    toward,
    write_all,
)

__all__ = ["cmd_check", "cmd_cone", "cmd_fit", "cmd_focus", "cmd_pattern", "cmd_safety"]


def cmd_safety(args):
    print(SAFETY)
    return 0


def cmd_cone(args):
    from thzarray.field.cone import cone_angle, length_for_cone

    medium = medium_from_flags(args)
    freq = quantity("freq", args.freq, "frequency")
    n_g, origin = _driver_flags(args, medium)
    base = {"freq_hz": freq, "n_group": n_g, "n_group_from": origin, "n_thz": medium.n_thz}
    if args.length is not None:
        length = quantity("length", args.length, "length")
        angle = float(cone_angle(length, freq, medium, group_index=n_g))
        result = dict(base, length_m=length, cone_angle_rad=angle,
                      cone_angle_deg=float(np.degrees(angle)))
        text = (f"cone angle {np.degrees(angle):.4g} deg for {length * 100:.4g} cm of plasma "
                f"at {freq / 1e12:.4g} THz")
    else:
        angle = quantity("angle", args.angle, "angle", (0.0, np.pi / 2, True))
        length = float(length_for_cone(angle, freq, medium, group_index=n_g))
        result = dict(base, cone_angle_rad=angle, cone_angle_deg=float(np.degrees(angle)),
                      length_m=length)
        text = (f"plasma length {length * 100:.4g} cm gives a {np.degrees(angle):.4g} deg cone "
                f"at {freq / 1e12:.4g} THz")
    emit(args, result, text + f" (driver group index {n_g:.8g}: {origin}; THz index "
                              f"{medium.n_thz:.8g})")
    return 0


def _driver_flags(args, medium):
    """(group index, where from) of ``--group-index`` / ``--electron-density``."""
    from thzarray.source.plasma import plasma_group_index_shift

    if args.group_index is not None:
        n_g = quantity("group-index", args.group_index, "number", (1.0, 2.0, False))
        return n_g, "--group-index"
    if args.electron_density is not None:
        n_e = quantity("electron-density", args.electron_density, "density", (0.0, 1e26, False))
        shift = float(plasma_group_index_shift(n_e, medium.laser_wavelength or 800e-9))
        return medium.n_group + shift, f"the air's plus the plasma's n_e/(2 n_c) = {shift:.3g}"
    return medium.n_group, "the air's"


def cmd_check(args):
    from thzarray.app.design import DesignError, load_design
    from thzarray.app.jobs import phasing
    from thzarray.app.jobs.waveform import range_problems

    d = load_design(args.design)
    phased = phasing(d)
    from thzarray.app.jobs.array import tolerance_problems

    problems = range_problems(d, phased) + tolerance_problems(d, phased)
    if problems:
        raise DesignError(problems)
    result = {"design": d.name, "valid": True, "filaments": len(d.filaments),
              "grid_points": int(d.grid.size), **phased.summary()}
    if d.estimate is not None:
        e = d.estimate
        result["laser"] = {"power_ratio": e.power_ratio, "onset_m": e.onset, "end_m": e.end,
                           "length_m": e.length, "limited_by": e.limited_by,
                           "electron_density_m3": e.electron_density,
                           "critical_power_w": e.critical_power}
    text = f"{args.design}: valid ({len(d.filaments)} filament(s)); {phased.describe()}"
    emit(args, result, text, design_notes(d, "check"))
    return 0


def _pattern_outputs(args, design):
    from thzarray.app import jobs
    from thzarray.app.plots import interactive, static

    slug = slug_of(design.name)
    chart = jobs.cone_chart(design)
    pat = jobs.pattern(design, toward=toward(args))
    title = design.name
    unit = "J/(Hz sr)" if pat.absolute else "J/(Hz sr) per (A s)^2"
    label = f"energy density ({unit})"
    cut = pat.energy_density.mean(axis=2)
    chart_title = f"{title}: cone angle vs plasma length"
    chart_caption = ("Cone angle of one uniform column versus its length at "
                     + ", ".join(f"{f / 1e12:.3g}" for f in chart.freqs) + " THz"
                     + ("" if chart.target_angle is None else
                        f"; target {np.degrees(chart.target_angle):.3g} deg reached at "
                        + ", ".join("-" if not np.isfinite(v) else f"{100 * v:.3g} cm"
                                    for v in chart.target_lengths)))
    cones = ", ".join(f"{np.degrees(a):.3g} deg at {f / 1e12:.3g} THz"
                      for a, f in zip(pat.cone_angles, pat.freq))
    sky_caption = (f"Sky map at {pat.freq[0] / 1e12:.3g} THz with the local polarization "
                   f"(white strokes); cone {cones}; delays: {pat.phased.how}")
    cut_caption = f"Azimuth-averaged cuts through the cone: maxima at {cones}"
    figures = [
        (f"{slug}_cone_chart",
         lambda: static.cone_chart(chart.lengths, chart.freqs, chart.angles, chart_title,
                                   chart.target_angle, chart.target_lengths),
         lambda: interactive.cone_chart(chart.lengths, chart.freqs, chart.angles, chart_title,
                                        chart.target_angle, chart.target_lengths),
         chart_caption),
        (f"{slug}_sky",
         lambda: static.sky_map(np.degrees(pat.sky_x), np.degrees(pat.sky_y), pat.sky[0],
                                f"{title}: sky map at {pat.freq[0] / 1e12:.3g} THz",
                                pol=(pat.sky_pol[0, 0], pat.sky_pol[1, 0]), label=label),
         lambda: interactive.sky_map(np.degrees(pat.sky_x), np.degrees(pat.sky_y), pat.sky,
                                     pat.freq, f"{title}: sky map",
                                     pol=(pat.sky_pol[0], pat.sky_pol[1]), label=label),
         sky_caption),
        (f"{slug}_cuts",
         lambda: static.cone_cuts(pat.theta, pat.freq, cut, f"{title}: cuts through the cone",
                                  label=label),
         lambda: interactive.cone_cuts(pat.theta, pat.freq, cut,
                                       f"{title}: cuts through the cone", label=label),
         cut_caption),
    ]
    lines = ["theta_rad," + ",".join(f"energy_density_{f / 1e12:.4g}THz" for f in pat.freq)]
    lines += [f"{t:.9g}," + ",".join(f"{v:.9g}" for v in cut[:, i])
              for i, t in enumerate(pat.theta)]
    datasets = []
    if "netcdf" in design.formats:
        from thzarray.app.netcdf import pattern_dataset

        datasets = [(f"{slug}_pattern", pattern_dataset(pat, design.name))]
    captions = {}
    files = write_all(args.out, args.force, design.formats, figures=figures,
                      tables=[(f"{slug}_cuts", "\n".join(lines) + "\n")], datasets=datasets,
                      captions=captions)
    summary = dict(chart.summary(), **pat.summary(), design=design.name, files=files,
                   captions=captions)
    return summary, pat


def cmd_pattern(args):
    from thzarray.app.design import load_design

    design = load_design(args.design)
    summary, pat = _pattern_outputs(args, design)
    cones = ", ".join(f"{a:.3g} deg at {f / 1e12:.3g} THz"
                      for a, f in zip(summary["cone_angle_deg"], summary["freq_hz"]))
    emit(args, summary, f"{design.name}: cone {cones}; wrote {len(summary['files'])} files "
                        f"to {args.out}\ndelays: {pat.phased.how}",
         design_notes(design, "pattern")
         + ([f"absolute scale: {pat.scale.source}"] if pat.scale.absolute else []))
    return 0


_FIX_KINDS = {"length": "length", "start": "length", "mismatch": "number",
              "amplitude": "number", "background": "number", "spacing": "length",
              "timing_offset": "time"}


def _fixed(items) -> dict:
    from thzarray.app.units import UnitError, parse_quantity

    fixed = {}
    for item in items:
        name, sep, value = item.partition("=")
        name = name.strip()
        if not sep or name not in _FIX_KINDS:
            raise UsageError(f"--fix: {item[:60]!r} is not allowed; allowed: NAME=VALUE with "
                             f"NAME one of {', '.join(_FIX_KINDS)}, e.g. background=0 or "
                             "'length=30 cm'")
        try:
            fixed[name] = parse_quantity(value.strip(), _FIX_KINDS[name])
        except UnitError as exc:
            raise UsageError(f"--fix: {name}: {exc}") from None
    return fixed


def cmd_fit(args):
    from thzarray.app.plots import interactive, static
    from thzarray.app.scans import fit_command_result
    from thzarray.app.units import parse_quantity

    fixed = _fixed(args.fix)
    freq = None if args.freq is None else quantity("freq", args.freq, "frequency")
    rng = None if args.range is None else quantity("range", args.range, "length")
    n_e = (None if args.electron_density is None else
           quantity("electron-density", args.electron_density, "density", (0.0, 1e26, False)))
    result = fit_command_result(args.data, freq=freq, range_=rng, fixed=fixed or None,
                                to_si=parse_quantity, cli=True, medium=medium_from_flags(args),
                                electron_density=n_e)
    res = result["residuals"]
    curve = result["curve"]
    slug = slug_of(Path(args.data).stem)
    title = f"fit of {Path(args.data).name} ({result['model']})"
    params = ", ".join(f"{k} = {v:.4g}" for k, v in result["params"].items() if v is not None)
    captions = {}
    sigma = res.get("sigma")
    result["files"] = write_all(
        args.out, args.force, ("png", "html", "csv"),
        figures=[(f"{slug}_fit",
                  lambda: static.fit_plot(np.asarray(res["angle_rad"]), res["signal"],
                                          res["model"], sigma, title,
                                          curve=(np.asarray(curve["angle_rad"]),
                                                 curve["model"])),
                  lambda: interactive.fit_plot(np.asarray(res["angle_rad"]), res["signal"],
                                               res["model"], sigma, title,
                                               curve=(np.asarray(curve["angle_rad"]),
                                                      curve["model"])),
                  f"Measured scan with its fitted model and residuals: {params}; chi2/dof "
                  f"{result['chi2_per_dof']:.3g}")],
        tables=[(f"{slug}_fit_residuals",
                 csv(["angle_rad", "signal", "model", "residual"],
                     [res["angle_rad"], res["signal"], res["model"], res["residual"]]))],
        captions=captions)
    result["captions"] = captions
    units = result.get("units", {})
    head = f"{Path(args.data).name}: {result['model']} fit"
    if result.get("chi2_per_dof") is not None:
        head += f", chi2/dof {result['chi2_per_dof']:.3g}"
    lines = [head]
    for name, value in result["params"].items():
        err = result["errors"].get(name)
        unit = units.get(name, "")
        unit = "" if unit in ("1", "dimensionless") else unit
        lines.append(f"  {name} = {value:.6g} +- {err:.2g} {unit}".rstrip() if err is not None
                     else f"  {name} = {value:.6g} {unit} (fixed or unconstrained)".rstrip())
    pred = result.get("predicted", {})
    if pred.get("mismatch_linear_air") is not None:
        lines.append(f"  predicted mismatch: linear air {pred['mismatch_linear_air']:.3g}"
                     + (f", with the plasma {pred['mismatch_with_plasma']:.3g}"
                        if pred.get("mismatch_with_plasma") is not None else
                        " (--electron-density adds the plasma's share)"))
    assumed = "; ".join(f"{k}: {v}" for k, v in result.get("assumptions", {}).items())
    emit(args, result, "\n".join(lines), result.get("messages", [])
         + ([f"the fit assumed {assumed}"] if assumed else []))
    return 0


def cmd_focus(args):
    from thzarray.app.plots import interactive, static
    from thzarray.inverse.focusing import focusing_chart, focusing_for_cone
    from thzarray.source.laser import Pulse

    medium = medium_from_flags(args)
    angle = quantity("angle", args.angle, "angle", (0.0, np.pi / 2, True))
    band = band_flag(args)
    energy = quantity_list("energy", args.energy, "energy")
    focal_range = quantity_list("focal", args.focal, "length")
    if focal_range.size != 2 or not 0 < focal_range[0] < focal_range[1]:
        raise UsageError(f"--focal: {args.focal!r} is not allowed; allowed: LOW,HIGH with "
                         "0 < LOW < HIGH")
    freq = band[0] if band.size == 1 else np.linspace(band[0], band[1], 9)
    band_text = (f"{band[0] / 1e12:.3g} THz" if band.size == 1
                 else f"{band[0] / 1e12:.3g}-{band[1] / 1e12:.3g} THz")
    pulse = Pulse(float(energy[0]), duration=quantity("duration", args.duration, "time"),
                  beam_radius=quantity("beam-radius", args.beam_radius, "length",
                                       (1e-5, 1.0, False)),
                  wavelength=medium.laser_wavelength or 800e-9)
    n_g, origin = _focus_driver(args, medium, pulse)
    opts = dict(pulse=pulse, medium=medium, group_index=n_g)
    notes = [f"driver group index {n_g:.7f}: {origin}"]
    with spinner(args, "focusing chart"):
        focal, length = focusing_for_cone(angle, energy, freq, **opts)
        grid = np.geomspace(focal_range[0], focal_range[1], 40)
        chart = focusing_chart(grid, energy, freq, **opts)
        notes += _laser_notes(pulse, energy, focal)
    labels = [f"{e * 1e3:.3g} mJ" for e in energy]
    title = (f"cone angle at {band_text} vs lens focal length "
             f"(target {np.degrees(angle):.3g} deg)")
    curves = [np.degrees(chart.cone_angle[:, j]) for j in range(energy.size)]
    target = [np.full(grid.shape, np.degrees(angle))]
    lens_text = ", ".join(f"{lab}: f = {f:.3g} m" if np.isfinite(f) else f"{lab}: none"
                          for lab, f in zip(labels, focal))
    captions = {}
    files = write_all(
        args.out, args.force, ("png", "html", "csv"),
        figures=[("focusing_chart",
                  lambda: static.line_chart(grid, curves + target, labels + ["target"],
                                            "lens focal length (m)", "cone angle (deg)", title),
                  lambda: interactive.line_chart(grid, curves + target, labels + ["target"],
                                                 "lens focal length (m)", "cone angle (deg)",
                                                 title),
                  f"Cone angle at {band_text} versus lens focal length; a "
                  f"{np.degrees(angle):.3g} deg cone needs a {100 * length:.3g} cm column: "
                  f"{lens_text}")],
        tables=[("focusing_chart",
                 csv(["focal_length_m"] + [f"cone_deg_{lab.replace(' ', '')}" for lab in labels],
                     [grid] + curves))],
        captions=captions)
    summary = {"target_angle_deg": float(np.degrees(angle)), "column_length_m": float(length),
               "group_index": n_g, "group_index_from": origin,
               "energy_j": energy.tolist(), "band_hz": np.atleast_1d(freq).tolist(),
               "focal_length_m": [None if not np.isfinite(f) else float(f) for f in focal],
               "files": files, "captions": captions}
    rows = "\n".join(f"  {e * 1e3:5.3g} mJ: lens f = {f:.3f} m" if np.isfinite(f) else
                     f"  {e * 1e3:5.3g} mJ: no lens from {focal_range[0]:g} to "
                     f"{focal_range[1]:g} m gives it" for e, f in zip(energy, focal))
    emit(args, summary, f"a {np.degrees(angle):.3g} deg cone at {band_text} needs a "
                        f"{100 * length:.3g} cm column:\n" + rows, notes)
    return 0


def _focus_driver(args, medium, pulse):
    """The driver's group index for ``focus``: --group-index, else the air's, plus (with
    --driver air+plasma, the default) the laser model's n_e/(2 n_c) at the clamped
    intensity (the same for every energy and lens of the nominal model)."""
    from thzarray.source.ionization import electron_density
    from thzarray.source.laser import FilamentationModel

    if args.group_index is not None:
        return quantity("group-index", args.group_index, "number", (1.0, 2.0, False)), \
            "--group-index"
    if args.driver == "air":
        return medium.n_group, "the air's (--driver air)"
    from thzarray.source.plasma import plasma_group_index_shift

    model = FilamentationModel()
    n_e = float(electron_density(model.clamped_intensity, pulse.duration,
                                 sigma=model.o2_cross_section))
    shift = float(plasma_group_index_shift(n_e, pulse.wavelength))
    return medium.n_group + shift, (f"the air's {medium.n_group:.7f} + the laser model's "
                                    f"plasma n_e/(2 n_c) = {shift:.3g}")


def _laser_notes(pulse, energies, focal) -> list:
    """What the laser model says for each pulse energy at its lens (or why there is none)."""
    from thzarray.source.laser import critical_power, plasma_from_laser

    notes = []
    p_cr = critical_power(pulse.wavelength)
    for e, f in zip(energies, focal):
        p = pulse.replace(energy=float(e))
        ratio = p.peak_power / p_cr
        if ratio <= 1.0:
            notes.append(f"{e * 1e3:.3g} mJ: P/P_cr = {ratio:.3g} is below the critical power; "
                         "the beam does not collapse into a filament")
            continue
        if not np.isfinite(f):
            notes.append(f"{e * 1e3:.3g} mJ: P/P_cr = {ratio:.3g}; no lens in the searched "
                         "range makes the column")
            continue
        try:
            _, _, est = plasma_from_laser(p.replace(focal_length=float(f)))
        except ValueError as exc:
            notes.append(f"{e * 1e3:.3g} mJ: {exc}")
            continue
        notes += [f"{e * 1e3:.3g} mJ: {n}" for n in est.notes]
    return notes
