"""Commands about what a receiver records: the detector-plane map and the range budget.
"""

from __future__ import annotations

from thzarray.app.commands.common import (
    csv,
    emit,
    slug_of,
    spinner,
    write_all,
)

__all__ = ['cmd_budget', 'cmd_map']


def cmd_map(args):
    from thzarray.app import jobs
    from thzarray.app.design import load_design
    from thzarray.app.plots import interactive, static

    design = load_design(args.design)
    with spinner(args, "near field"):
        m = jobs.detector_map(design)
    slug = slug_of(design.name)
    unit = "J" if m.absolute else "J per (A s)^2"
    titles = [f"exact field at {m.distance:g} m", "far-field prediction"]
    title = f"{design.name}: receiver map"
    mid = len(m.y) // 2
    import xarray as xr

    ds = xr.Dataset({"near": (("y", "x"), m.near, {"units": unit}),
                     "far": (("y", "x"), m.far, {"units": unit})},
                    coords={"x": ("x", m.x, {"units": "m"}), "y": ("y", m.y, {"units": "m"})},
                    attrs={"design": design.name, "plane_distance_m": m.distance})
    files = write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_map", lambda: static.plane_maps(m.x, m.y, [m.near, m.far], titles,
                                                            title, f"energy ({unit})"),
                  lambda: interactive.plane_maps(m.x, m.y, [m.near, m.far], titles, title,
                                                 f"energy ({unit})"))],
        tables=[(f"{slug}_map_cut", csv(["x_m", "near_energy", "far_energy"],
                                         [m.x, m.near[mid], m.far[mid]]))],
        datasets=[(f"{slug}_map", ds)])
    summary = dict(m.summary(), design=design.name, files=files)
    ratio = summary["near_over_far_peak"]
    emit(args, summary, f"{design.name}: peak {summary['near_field_peak']['energy']:.3g} {unit} "
                         f"(far-field prediction x{1 / ratio if ratio else float('nan'):.3g}); "
                         f"wrote {len(files)} files to {args.out}")
    return 0


def cmd_budget(args):
    from thzarray.app import jobs
    from thzarray.app.design import load_design
    from thzarray.app.plots import interactive, static

    design = load_design(args.design)
    b = jobs.budget(design)
    slug = slug_of(design.name)
    unit = "J" if design.plasma is not None else "J per (A s)^2"
    labels = [f"RH {100 * h:.0f} %" for h in b.relative_humidity]
    title = f"{design.name}: range budget"
    cols = [b.distance] + [e for e in b.energy] + [a for a in b.absorption_db]
    header = (["distance_m"] + [f"energy_rh{100 * h:.0f}" for h in b.relative_humidity]
              + [f"absorption_db_rh{100 * h:.0f}" for h in b.relative_humidity])
    files = write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_budget",
                  lambda: static.line_chart(b.distance, list(b.energy), labels, "distance (m)",
                                            f"energy into receiver ({unit})", title, logy=True),
                  lambda: interactive.line_chart(b.distance, list(b.energy), labels,
                                                 "distance (m)", f"energy into receiver ({unit})",
                                                 title, logy=True))],
        tables=[(f"{slug}_budget", csv(header, cols))])
    summary = {"design": design.name, "distance_m": b.distance.tolist(),
               "relative_humidity": b.relative_humidity.tolist(), "energy": b.energy.tolist(),
               "absorption_db": b.absorption_db.tolist(), "theta_rad": float(b.theta),
               "energy_unit": unit, "files": files}
    last = ", ".join(f"{lab}: {e[-1]:.3g} {unit} ({a[-1]:.3g} dB absorbed)"
                     for lab, e, a in zip(labels, b.energy, b.absorption_db))
    emit(args, summary, f"{design.name} at {b.distance[-1]:g} m: {last}")
    return 0
