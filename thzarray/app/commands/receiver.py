"""Commands about what a receiver records: the detector-plane map and the range budget."""

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

__all__ = ["cmd_budget", "cmd_map"]


def cmd_map(args):
    import xarray as xr

    from thzarray.app import jobs
    from thzarray.app.design import load_design
    from thzarray.app.plots import interactive, static

    design = load_design(args.design)
    with spinner(args, "near field"):
        m = jobs.detector_map(design, toward(args))
    slug = slug_of(design.name)
    unit = "J" if m.absolute else "J per (A s)^2"
    titles = [f"exact field, plane distance {m.distance:g} m", "far-field prediction"]
    title = f"{design.name}: receiver map"
    mid = len(m.y) // 2
    ds = xr.Dataset({"near": (("y", "x"), m.near, {"units": unit}),
                     "far": (("y", "x"), m.far, {"units": unit})},
                    coords={"x": ("x", m.x, {"units": "m"}), "y": ("y", m.y, {"units": "m"})},
                    attrs={"design": design.name, "plane_distance_m": m.distance})
    summary = m.summary()
    near, far = summary["near_field_peak"], summary["far_field_peak"]
    caption = (f"What the receiver records on the plane at plane distance {m.distance:g} m: "
               f"exact field peak {near['energy']:.3g} {unit} at x = {1e3 * near['x_m']:.3g} mm, "
               f"far-field prediction {far['energy']:.3g} {unit} at x = "
               f"{1e3 * far['x_m']:.3g} mm; delays: {m.phased.how}")
    captions = {}
    files = write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_map", lambda: static.plane_maps(m.x, m.y, [m.near, m.far], titles,
                                                           title, f"energy ({unit})"),
                  lambda: interactive.plane_maps(m.x, m.y, [m.near, m.far], titles, title,
                                                 f"energy ({unit})"), caption)],
        tables=[(f"{slug}_map_cut", csv(["x_m", "near_energy", "far_energy"],
                                        [m.x, m.near[mid], m.far[mid]]))],
        datasets=[(f"{slug}_map", ds)], captions=captions)
    summary = dict(summary, design=design.name, files=files, captions=captions)
    ratio = summary["near_over_far_peak"]
    emit(args, summary, f"{design.name}: peak {m.scale.energy_text(near['energy'], unit)} on "
                        f"the plane at "
                        f"plane distance {m.distance:g} m (far-field prediction "
                        f"x{1 / ratio if ratio else float('nan'):.3g}); wrote {len(files)} files "
                        f"to {args.out}\ndelays: {m.phased.how}",
         design_notes(design, "map")
         + ([f"absolute scale: {m.scale.source}"] if m.scale.absolute else []))
    return 0


def _reach_text(label, reach, snr, ranges) -> str:
    """Where the SNR falls to 1, in words a reader can trust (the root is found on the
    far-field energy, meaningless inside the columns' own extent)."""
    if np.isinf(reach):
        return f"{label}: SNR above 1 beyond 1e9 m"
    if snr[0] < 1 and reach < ranges[0]:
        return f"{label}: SNR below 1 at every range from {ranges[0]:g} m (best {snr.max():.2g})"
    return f"{label}: SNR = 1 at {reach:.3g} m"


def cmd_budget(args):
    from thzarray.app import jobs
    from thzarray.app.design import load_design
    from thzarray.app.plots import interactive, static

    design = load_design(args.design)
    with spinner(args, "range budget"):
        res = jobs.budget(design, toward(args))
    b, scale = res.budget, res.scale
    slug = slug_of(design.name)
    unit = scale.unit
    labels = (["vacuum"] if np.isnan(b.relative_humidity).all()
              else [f"RH {100 * h:.0f} %" for h in b.relative_humidity])
    tags = ["vacuum"] if labels == ["vacuum"] else [f"rh{100 * h:.0f}" for h in
                                                    b.relative_humidity]
    title = f"{design.name}: range budget"
    cols = ([b.ranges] + list(b.energy) + list(b.far_field_energy) + list(b.absorption_db))
    header = (["range_m"] + [f"energy_{t}" for t in tags] + [f"far_field_energy_{t}"
                                                             for t in tags]
              + [f"absorption_db_{t}" for t in tags])
    if scale.low != scale.high:
        cols += [scale.low * e for e in b.energy] + [scale.high * e for e in b.energy]
        header += [f"energy_low_{t}" for t in tags] + [f"energy_high_{t}" for t in tags]
    if b.snr is not None:
        cols += list(b.snr)
        header += [f"snr_{t}" for t in tags]
    direction = (f"theta {np.degrees(b.theta):.3g} deg, phi {np.degrees(b.phi):.3g} deg "
                 f"(from {res.direction_from})")
    last = ", ".join(f"{lab}: {scale.energy_text(e[-1])} ({a[-1]:.3g} dB absorbed)"
                     for lab, e, a in zip(labels, b.energy, b.absorption_db))
    reach = ""
    if b.unit_snr_range is not None:
        reach = "; " + "; ".join(_reach_text(lab, r, snr, b.ranges)
                                 for lab, r, snr in zip(labels, b.unit_snr_range, b.snr))
    caption = (f"Energy into the receiver versus its range from the origin, looking along "
               f"{direction}; at {b.ranges[-1]:g} m {last}{reach}")
    curves = list(b.energy) + [b.far_field_energy[0]]
    names = labels + [f"far-field prediction ({labels[0]})"]
    captions = {}
    files = write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_budget",
                  lambda: static.line_chart(b.ranges, curves, names,
                                            "range from the origin (m)",
                                            f"energy into receiver ({unit})", title, logy=True),
                  lambda: interactive.line_chart(b.ranges, curves, names,
                                                 "range from the origin (m)",
                                                 f"energy into receiver ({unit})", title,
                                                 logy=True), caption)],
        tables=[(f"{slug}_budget", csv(header, cols))], captions=captions)
    summary = {"design": design.name, "range_m": b.ranges.tolist(),
               "relative_humidity": b.relative_humidity.tolist(), "energy": b.energy.tolist(),
               "energy_low": (scale.low * b.energy).tolist(),
               "energy_high": (scale.high * b.energy).tolist(),
               "far_field_energy": b.far_field_energy.tolist(),
               "far_field_error": b.far_field_error.tolist(),
               "absorption_db": b.absorption_db.tolist(), "theta_rad": float(b.theta),
               "phi_rad": float(b.phi), "direction_from": res.direction_from,
               "snr": None if b.snr is None else b.snr.tolist(),
               "unit_snr_range_m": None if b.unit_snr_range is None else
               [None if np.isinf(r) else float(r) for r in b.unit_snr_range],
               **scale.summary(), "files": files, "captions": captions,
               **res.phased.summary()}
    text = (f"{design.name}: receiver at ranges {b.ranges[0]:g} to {b.ranges[-1]:g} m from the "
            f"origin along {direction}; exact finite-distance field; at {b.ranges[-1]:g} m "
            f"{last}{reach}\ndelays: {res.phased.how}")
    notes = [f"absolute scale: {scale.source}"] if scale.absolute else []
    if b.snr is None:
        notes.append("no SNR: the receiver has no nep, integration_time and repetition_rate")
    from thzarray.app.jobs.context import near_ranges_note

    near = near_ranges_note(design.filaments, b.ranges, "budget ranges")
    notes += [near] if near else []
    emit(args, summary, text, design_notes(design, "budget") + notes + res.notes())
    return 0
