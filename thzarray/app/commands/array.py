"""Commands about arrays: steering delays and the lobe report, gains, tolerances, sweeps.
"""

from __future__ import annotations

import numpy as np

from thzarray.app.commands.common import (
    UsageError,
    csv,
    emit,
    slug_of,
    spinner,
    toward,
    write_all,
)

__all__ = ['cmd_compare', 'cmd_steer', 'cmd_sweep', 'cmd_tolerance']


def _steer_outputs(design, res, args):
    from thzarray.app import jobs
    from thzarray.app.plots import interactive, static

    slug = slug_of(design.name)
    freq = jobs.steering_band(design)
    theta_max = min(np.pi, 2.0 * max(res.target.theta, np.radians(1.0)))
    scales = np.linspace(0.0, 1.0, 5)
    maps = []
    for a in scales:
        x, y, m = jobs.band_sky(res.filaments if a == 1 else
                                tuple(f.replace(delay=a * f.delay) for f in res.filaments),
                                freq, design.medium, design.plasma, theta_max, 101)
        maps.append(m)
    xd, yd = np.degrees(x), np.degrees(y)
    unit = "J/sr" if design.plasma is not None else "J/sr per (A s)^2"
    title = f"{design.name}: steered lobe (target {np.degrees(res.target.theta):.3g} deg)"
    delays_csv = csv(["x_m", "y_m", "z_m", "delay_s"],
                      [[f.start[0] for f in res.filaments], [f.start[1] for f in res.filaments],
                       [f.start[2] for f in res.filaments], res.delays])
    return write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_steered",
                  lambda: static.sky_map(xd, yd, maps[-1], title, label=f"band energy ({unit})"),
                  lambda: interactive.sky_slider(xd, yd, maps, [f"{a:.2f}" for a in scales],
                                                 title, f"band energy ({unit})",
                                                 "fraction of the designed delays"))],
        tables=[(f"{slug}_delays", delays_csv)])


def cmd_steer(args):
    from thzarray.app import jobs
    from thzarray.app.design import load_design
    from thzarray.app.output import check_writable, write_text

    design = load_design(args.design)
    if args.write is not None:
        check_writable(args.write, args.force)
    with spinner(args, "steering"):
        res = jobs.steer(design, toward(args))
    files = _steer_outputs(design, res, args)
    if args.write is not None:
        files.append(str(write_text(args.write, jobs.design_with_delays_toml(design, res.filaments),
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
    emit(args, summary, "\n".join(text))
    return 0


def cmd_compare(args):
    from thzarray.app import jobs
    from thzarray.app.design import load_design
    from thzarray.app.plots import interactive, static

    design = load_design(args.design)
    if args.trials < 2:
        raise UsageError(f"--trials: {args.trials} is not allowed; allowed: 2 or more")
    g, target = jobs.compare(design, toward(args), trials=args.trials, seed=args.seed)
    labels = ["single", "incoherent", "phased", f"ideal N^2 (N={g.count})"]
    values = [1.0, g.incoherent_over_single, g.phased_over_single, g.ideal / g.single]
    title = f"{design.name}: gain over one filament"
    files = write_all(args.out, args.force, design.formats,
                       figures=[(f"{slug_of(design.name)}_gains",
                                 lambda: static.bar_chart(labels, values, "energy / single", title),
                                 lambda: interactive.bar_chart(labels, values, "energy / single",
                                                               title))],
                       tables=[(f"{slug_of(design.name)}_gains",
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
    emit(args, summary, f"{design.name}: single 1, incoherent {g.incoherent_over_single:.3g} "
                         f"(Monte Carlo {g.incoherent_mc / g.single:.3g} +- "
                         f"{g.incoherent_mc_error / g.single:.2g}), phased "
                         f"{g.phased_over_single:.4g}, ideal N^2 {g.ideal / g.single:.4g}")
    return 0


def cmd_tolerance(args):
    from thzarray.app import jobs
    from thzarray.app.design import load_design
    from thzarray.app.plots import interactive, static

    design = load_design(args.design)
    with spinner(args, "Monte Carlo"):
        t, res = jobs.tolerance_study(design, toward(args))
    markers = [("mean", t.mean), ("exact mean", t.expected),
               (f"{t.percentile:g}th percentile", t.percentile_value)]
    title = f"{design.name}: delivered gain with errors"
    files = write_all(args.out, args.force, design.formats,
                       figures=[(f"{slug_of(design.name)}_tolerance",
                                 lambda: static.histogram(t.samples, "gain / error-free gain",
                                                          title, markers),
                                 lambda: interactive.histogram(t.samples, "gain / error-free gain",
                                                               title, markers))],
                       tables=[(f"{slug_of(design.name)}_tolerance",
                                csv(["build", "gain"], [np.arange(t.samples.size), t.samples]))])
    summary = {"design": design.name, "mean": t.mean, "std": t.std,
               "standard_error": t.standard_error, "percentile": t.percentile,
               "percentile_value": t.percentile_value, "expected_mean": t.expected,
               "trials": int(t.samples.size), "files": files}
    emit(args, summary, f"{design.name}: mean gain {t.mean:.3f} +- {t.standard_error:.2g} "
                         f"(exact {t.expected:.3f}), spread {t.std:.3f}, {t.percentile:g}th "
                         f"percentile {t.percentile_value:.3f}")
    return 0


def cmd_sweep(args):
    from thzarray.app.sweep import load_sweep, run_serial, run_sweep

    sweep = load_sweep(args.sweep)
    show = not (args.quiet or args.json)
    if args.serial:
        result = run_serial(sweep, args.out, force=args.force, recompute=args.recompute,
                            progress=show)
    else:
        result = run_sweep(sweep, args.out, scheduler=args.scheduler, n_workers=args.workers,
                           force=args.force, recompute=args.recompute, progress=show)
    summary = result.summary()
    emit(args, summary, f"{sweep.name}: {summary['tasks']} tasks ({result.computed} computed, "
                         f"{result.reused} reused); wrote {result.path}")
    return 0
