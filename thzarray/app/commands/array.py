"""Commands about arrays: steering delays and the lobe report, gains, tolerances, sweeps."""

from __future__ import annotations

import numpy as np

from thzarray.app.commands.common import (
    UsageError,
    band_flag,
    csv,
    design_notes,
    emit,
    quantity,
    slug_of,
    spinner,
    toward,
    write_all,
)

__all__ = ["cmd_compare", "cmd_steer", "cmd_sweep", "cmd_tolerance"]


def _deg(x) -> str:
    """An angle in degrees for text, rounding values below 1e-4 deg to 0."""
    d = float(np.degrees(x))
    return f"{0.0 if abs(d) < 1e-4 else d:.3g}"


def _projected(target):
    deg = np.degrees(target.theta)
    return deg * np.cos(target.phi), deg * np.sin(target.phi)


def _steer_outputs(design, res, chart, args):
    from thzarray.app import jobs
    from thzarray.app.plots import interactive, static

    slug = slug_of(design.name)
    freq, target = res.phased.band, res.target
    theta_max = min(np.pi, 2.0 * max(target.theta, np.radians(1.0)))
    scales = np.linspace(0.0, 1.0, 5)
    maps = []
    for a in scales:
        x, y, m = jobs.band_sky(tuple(f.replace(delay=a * f.delay) for f in res.filaments),
                                freq, design.medium, design.plasma, theta_max, 101)
        maps.append(m)
    xd, yd = np.degrees(x), np.degrees(y)
    unit = "J/sr" if design.plasma is not None else "J/sr per (A s)^2"
    r = res.report
    title = (f"{design.name}: steered lobe (target {np.degrees(target.theta):.3g} deg, "
             f"{np.degrees(target.phi):.3g} deg)")
    lobe_caption = (f"Band energy on the sky with the delays ({res.phased.how}); target "
                    f"theta {np.degrees(target.theta):.3g} deg marked; main lobe at theta "
                    f"{np.degrees(r.main_lobe[0]):.3g} deg, phi {np.degrees(r.main_lobe[1]):.3g} "
                    f"deg; peak side lobe {r.peak_sidelobe_db:.3g} dB; element level at the "
                    f"target {r.cone_level_db:.3g} dB")
    chart_title = f"{design.name}: delays and lobe versus steering angle"
    chart_caption = (f"Delays of the {len(res.filaments)} columns and the main lobe versus the "
                     f"target's polar angle at phi {np.degrees(chart.phi):.3g} deg, true-time "
                     f"and phase-only (folded at {chart.design_freq / 1e12:.3g} THz)")
    delays_csv = csv(["x_m", "y_m", "z_m", "delay_s"],
                     [[f.start[0] for f in res.filaments], [f.start[1] for f in res.filaments],
                      [f.start[2] for f in res.filaments], res.delays])
    chart_csv = csv(["target_theta_rad", "lobe_true_time_rad", "lobe_phase_only_rad"],
                    [chart.theta, chart.lobe_true_time, chart.lobe_phase_only])
    captions = {}
    files = write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_steered",
                  lambda: static.sky_map(xd, yd, maps[-1], title, label=f"band energy ({unit})",
                                         target=_projected(target)),
                  lambda: interactive.sky_slider(xd, yd, maps, [f"{a:.2f}" for a in scales],
                                                 title, f"band energy ({unit})",
                                                 "fraction of the designed delays",
                                                 target=_projected(target)), lobe_caption),
                 (f"{slug}_delay_chart",
                  lambda: static.delay_chart(chart.theta, chart.true_time, chart.phase_only,
                                             chart.lobe_true_time, chart.lobe_phase_only,
                                             chart_title),
                  lambda: interactive.delay_chart(chart.theta, chart.true_time,
                                                  chart.phase_only, chart.lobe_true_time,
                                                  chart.lobe_phase_only, chart_title),
                  chart_caption)],
        tables=[(f"{slug}_delays", delays_csv), (f"{slug}_delay_chart", chart_csv)],
        captions=captions)
    return files, captions


def cmd_steer(args):
    from thzarray.app import jobs
    from thzarray.app.design import design_to_toml, load_design
    from thzarray.app.output import check_writable, write_text

    design = load_design(args.design)
    if args.write is not None:
        check_writable(args.write, args.force)
    band = band_flag(args)
    with spinner(args, "steering"):
        res = jobs.steer(design, toward(args), band)
        chart = jobs.delay_chart(design, toward(args), band)
    files, captions = _steer_outputs(design, res, chart, args)
    if args.write is not None:
        steered = jobs.steered_design(design, res)
        text = design_to_toml(steered, f"Written by `thzarray steer` from {design.name!r}: "
                                       f"[steering] carries the delays and the target.\n"
                                       "Quantities in SI units.")
        files.append(str(write_text(args.write, text, args.force)))
    summary = dict(res.summary(), design=design.name, files=files, captions=captions)
    d_ps = ", ".join(f"{1e12 * d:.4g}" for d in res.delays[:8])
    more = " ..." if len(res.delays) > 8 else ""
    r = res.report
    text = [f"{design.name}: {res.phased.describe()}",
            f"delays (ps): {d_ps}{more}",
            f"main lobe at theta {_deg(r.main_lobe[0])} deg, phi "
            f"{_deg(r.main_lobe[1])} deg ({_deg(r.pointing_error)} deg from "
            f"the target); peak side lobe {r.peak_sidelobe_db:.3g} dB; element level at the "
            f"target {r.cone_level_db:.3g} dB",
            f"wrote {len(files)} files to {args.out}"]
    emit(args, summary, "\n".join(text), design_notes(design, "steer") + list(r.notes))
    return 0


def cmd_compare(args):
    from thzarray.app import jobs
    from thzarray.app.design import load_design
    from thzarray.app.plots import interactive, static

    design = load_design(args.design)
    if not 2 <= args.trials <= 100_000:
        raise UsageError(f"--trials: {args.trials} is not allowed; allowed: 2 to 100000")
    g, phased = jobs.compare(design, toward(args), band_flag(args), trials=args.trials,
                             seed=args.seed)
    scale = jobs.absolute_scale(design, phased)
    k = scale.factor
    unit = g.unit if scale.absolute else f"{g.unit} per (A s)^2"
    labels = ["single", "incoherent", "phased", f"ideal N^2 (N={g.count})"]
    values = [1.0, g.incoherent_over_single, g.phased_over_single, g.ideal / g.single]
    title = f"{design.name}: gain over one filament"
    caption = (f"Energy toward the target over one filament's: incoherent "
               f"{g.incoherent_over_single:.3g}, phased {g.phased_over_single:.4g}, ideal N^2 "
               f"{g.ideal / g.single:.4g}; {phased.describe()}")
    captions = {}
    files = write_all(args.out, args.force, design.formats,
                      figures=[(f"{slug_of(design.name)}_gains",
                                lambda: static.bar_chart(labels, values, "energy / single",
                                                         title),
                                lambda: interactive.bar_chart(labels, values, "energy / single",
                                                              title), caption)],
                      tables=[(f"{slug_of(design.name)}_gains",
                               "case,energy,over_single\n" + "".join(
                                   f"{lab},{k * v * g.single:.9g},{v:.9g}\n"
                                   for lab, v in zip(labels, values)))], captions=captions)
    summary = {"design": design.name, "count": g.count, "single": k * g.single,
               "incoherent": k * g.incoherent, "incoherent_mc": k * g.incoherent_mc,
               "incoherent_mc_error": k * g.incoherent_mc_error, "phased": k * g.phased,
               "phased_low": scale.low * k * g.phased, "phased_high": scale.high * k * g.phased,
               "ideal": k * g.ideal, "coherent_limit": k * g.coherent_limit, "unit": unit,
               **scale.summary(),
               "phased_over_single": g.phased_over_single,
               "incoherent_over_single": g.incoherent_over_single,
               "phased_over_ideal": g.phased_over_ideal, "trials": g.trials,
               **phased.summary(), "files": files, "captions": captions}
    emit(args, summary, f"{design.name}: single 1, incoherent {g.incoherent_over_single:.3g} "
                        f"(Monte Carlo {g.incoherent_mc / g.single:.3g} +- "
                        f"{g.incoherent_mc_error / g.single:.2g}), phased "
                        f"{g.phased_over_single:.4g}, ideal N^2 {g.ideal / g.single:.4g}; phased "
                        f"{scale.energy_text(k * g.phased, unit)}\n{phased.describe()}",
         design_notes(design, "compare")
         + ([f"absolute scale: {scale.source}"] if scale.absolute else []))
    return 0


def cmd_tolerance(args):
    from thzarray.app import jobs
    from thzarray.app.design import load_design
    from thzarray.app.plots import interactive, static

    design = load_design(args.design)
    jitter = None if args.jitter is None else quantity("jitter", args.jitter, "jitter")
    with spinner(args, "Monte Carlo"):
        t, phased, jitter = jobs.tolerance_study(design, toward(args), band_flag(args), jitter)
    tol = design.tolerance
    band = phased.band
    band_text = (f"{band[0] / 1e12:.3g} THz" if band.size == 1
                 else f"{band[0] / 1e12:.3g}-{band[-1] / 1e12:.3g} THz")
    errors = (f"jitter {jitter * 1e12:.3g} ps, placement {tol.transverse_error * 1e6:.3g} um, "
              f"onset {tol.longitudinal_error * 1e3:.3g} mm")
    markers = [("mean", t.mean), ("exact mean", t.expected),
               (f"{t.percentile:g}th percentile", t.percentile_value)]
    title = f"{design.name}: delivered gain, {errors}, {band_text}"
    caption = (f"Gain delivered by {t.samples.size} simulated builds over the error-free "
               f"design ({errors}; band {band_text}): mean {t.mean:.3f} (exact {t.expected:.3f}), "
               f"{t.percentile:g}th percentile {t.percentile_value:.3f}")
    captions = {}
    files = write_all(args.out, args.force, design.formats,
                      figures=[(f"{slug_of(design.name)}_tolerance",
                                lambda: static.histogram(t.samples, "gain / error-free gain",
                                                         title, markers),
                                lambda: interactive.histogram(t.samples,
                                                              "gain / error-free gain", title,
                                                              markers), caption)],
                      tables=[(f"{slug_of(design.name)}_tolerance",
                               csv(["build", "gain"], [np.arange(t.samples.size), t.samples]))],
                      captions=captions)
    summary = {"design": design.name, "mean": t.mean, "std": t.std,
               "standard_error": t.standard_error, "percentile": t.percentile,
               "percentile_value": t.percentile_value, "expected_mean": t.expected,
               "trials": int(t.samples.size), "timing_jitter_s": jitter,
               "transverse_error_m": tol.transverse_error,
               "longitudinal_error_m": tol.longitudinal_error, **phased.summary(),
               "files": files, "captions": captions}
    emit(args, summary, f"{design.name}: mean gain {t.mean:.3f} +- {t.standard_error:.2g} "
                        f"(exact {t.expected:.3f}), spread {t.std:.3f}, {t.percentile:g}th "
                        f"percentile {t.percentile_value:.3f} ({errors})\n{phased.describe()}",
         design_notes(design, "tolerance"))
    return 0


def cmd_sweep(args):
    from thzarray.app.sweep import load_sweep, run_serial, run_sweep, sweep_figures

    sweep = load_sweep(args.sweep)
    show = not (args.quiet or args.json)
    if args.serial:
        result = run_serial(sweep, args.out, force=args.force, recompute=args.recompute,
                            progress=show)
    else:
        result = run_sweep(sweep, args.out, scheduler=args.scheduler, n_workers=args.workers,
                           force=args.force, recompute=args.recompute, progress=show)
    captions = {}
    files = sweep_figures(result.path, args.out, args.force, captions)
    summary = dict(result.summary(), figures=files, captions=captions)
    emit(args, summary, f"{sweep.name}: {result.describe()}; wrote {result.path} and "
                        f"{len(files)} figure files", design_notes(sweep.design, "sweep")
         + list(getattr(result, "notes", ())))
    return 0
