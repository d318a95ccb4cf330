"""The ``waveform`` command: what a time-domain setup records at the design's ranges."""

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

__all__ = ["cmd_waveform"]

# Water-vapour lines below 3 THz marked on the spectra (GHz): ITU-R P.676-12 Annex 1,
# Table 2 (line centres 556.936, 752.033, 987.927 GHz ...), from that table.
_WATER_LINES = (556.936e9, 752.033e9, 987.927e9, 1097.365e9, 1162.912e9, 1207.639e9,
                1228.789e9, 1410.618e9, 1602.219e9, 1661.008e9, 1716.770e9)


def cmd_waveform(args):
    import xarray as xr

    from thzarray.app import jobs
    from thzarray.app.design import load_design

    design = load_design(args.design)
    with spinner(args, "waveforms"):
        res = jobs.waveforms(design, toward(args))
    slug = slug_of(design.name)
    unit = res.summary()["field_unit"]
    labels = [f"{r:g} m" for r in res.ranges]
    air = design.medium.conditions
    where = ("vacuum" if air is None else f"air at {100 * air.relative_humidity:.0f} % RH, "
             f"{air.temperature_c:g} degC")
    title = f"{design.name}: waveforms through {where}"
    peaks = np.abs(res.field).max(axis=1)
    summary = res.summary()
    low, high = np.sqrt(res.scale.low), np.sqrt(res.scale.high)
    spread = (lambda p: "") if low == high else (
        lambda p: f" (range {low * p:.2g} to {high * p:.2g})")
    ring = ", ".join(f"{lab}: peak {p:.3g} {unit}{spread(p)}, ringing {100 * g:.2g} %"
                     for lab, p, g in zip(labels, peaks, res.ringing))
    snr = ("" if res.eo_snr is None else "; electro-optic SNR at the peak " + ", ".join(
        f"{lab}: {s:.3g}" for lab, s in zip(labels, res.eo_snr)))
    caption = (f"E(t) along {np.round(res.polarization, 3).tolist()} ({res.polarization_from}) "
               f"and the {res.crystal} electro-optic trace at each range, looking along theta "
               f"{np.degrees(res.theta):.3g} deg, phi {np.degrees(res.phi):.3g} deg; {ring}"
               f"{snr}; dashed: the same in dry air")
    lines = [f for f in _WATER_LINES if f <= res.freq[-1]]
    ds = xr.Dataset(
        {"field": (("range", "time"), res.field, {"units": unit}),
         "eo_trace": (("range", "time"), res.eo_trace, {"units": "rad"}),
         "spectrum_real": (("range", "freq"), res.spectrum.real, {"units": unit + " s"}),
         "spectrum_imag": (("range", "freq"), res.spectrum.imag, {"units": unit + " s"})},
        coords={"range": ("range", res.ranges, {"units": "m"}),
                "time": ("time", res.time, {"units": "s", "long_name": "retarded time"}),
                "freq": ("freq", res.freq, {"units": "Hz"})},
        attrs={"design": design.name, "crystal": res.crystal,
               "theta_rad": res.theta, "phi_rad": res.phi, "scale_from": res.scale.source})
    if res.field_dry is not None:
        ds["field_dry_air"] = (("range", "time"), res.field_dry, {"units": unit})
    header = (["time_s"] + [f"field_{r:g}m" for r in res.ranges]
              + [f"eo_trace_{r:g}m" for r in res.ranges])
    captions = {}
    files = write_all(
        args.out, args.force, design.formats,
        figures=[(f"{slug}_waveforms",
                  lambda: _plots().static_waveforms(res.time, res.field, res.field_dry,
                                                    res.eo_trace, labels, title, unit),
                  lambda: _plots().interactive_waveforms(res.time, res.field, res.field_dry,
                                                         res.eo_trace, labels, title, unit),
                  caption),
                 (f"{slug}_spectra",
                  lambda: _plots().static_spectra(res.freq, res.spectrum, labels,
                                                  f"{design.name}: spectra at the receiver",
                                                  lines),
                  lambda: _plots().interactive_spectra(res.freq, res.spectrum, labels,
                                                       f"{design.name}: spectra at the "
                                                       "receiver", lines),
                  "Spectrum of the field at each range (dB of its peak); dotted: water "
                  "lines (ITU-R P.676)")],
        tables=[(f"{slug}_waveforms", csv(header, [res.time, *res.field, *res.eo_trace]))],
        datasets=[(f"{slug}_waveforms", ds)], captions=captions)
    summary = dict(summary, design=design.name, files=files, captions=captions)
    text = (f"{design.name}: waveforms at {', '.join(labels)} along theta "
            f"{np.degrees(res.theta):.3g} deg, phi {np.degrees(res.phi):.3g} deg (from "
            f"{res.direction_from}); {ring}{snr}; wrote {len(files)} files to {args.out}\n"
            f"delays: {res.phased.how}")
    notes = [f"absolute scale: {res.scale.source}"] if res.scale.absolute else []
    if res.eo_snr is None:
        notes.append("no electro-optic SNR: [waveform] has no probe_energy, integration_time "
                     "and repetition_rate")
    from thzarray.app.jobs.context import near_ranges_note

    near = near_ranges_note(design.filaments, res.ranges, "waveform ranges")
    notes += [near] if near else []
    emit(args, summary, text, design_notes(design, "waveform") + notes)
    return 0


def _plots():
    from thzarray.app.plots import traces

    return traces
