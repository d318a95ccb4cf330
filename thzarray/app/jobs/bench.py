"""From laser to bench: how many beams to split the laser into, and what to set on the bench
to realise the design's delays.

- :func:`split` runs :func:`thzarray.inverse.split.split_study` on the design's ``[laser]``
  (the whole pulse), the ``[split]`` counts, family, spacing and efficiency (the family and
  spacing default to the design's ``[layout]``), toward the design's target over its band.
- :func:`bench` turns the delays every command uses (:func:`~thzarray.app.jobs.context.phasing`)
  into stage positions, plate thicknesses and stepped-mirror depths with
  :func:`thzarray.inverse.bench.bench_sheet` and the ``[bench]`` settings; with ``[laser]``
  the plates' lengthening of each beam and its effect on P/P_cr and the column follow
  (without it, the lengthening of a ``[plasma].pulse_duration`` pulse only).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thzarray.app.design import Design
from thzarray.app.design.schema import SCHEMA
from thzarray.app.design.sections import SECTION_TYPES
from thzarray.app.jobs.context import Phasing, phasing

__all__ = ["BenchResult", "SplitResult", "bench", "split", "split_counts"]

_DEFAULT_COUNTS = {"line": tuple(range(1, 17)), "ring": tuple(range(1, 17)),
                   "grid": (1, 2, 4, 6, 9, 12, 16, 20, 25), "hexagonal": (1, 7, 19, 37)}


def _defaults(name):
    return SECTION_TYPES[name](**{k: s.default for k, s in SCHEMA[name].items()})


def _pulse(laser, energy=None):
    from thzarray.source.laser import Pulse

    return Pulse(laser.energy if energy is None else energy, laser.duration,
                 laser.beam_radius, laser.wavelength, laser.focal_length)


def _model(laser):
    from thzarray.source.laser import FilamentationModel

    return FilamentationModel(laser.n2, laser.clamped_intensity, laser.core_radius,
                              laser.collision_rate)


def split_counts(design: Design):
    """(family, spacing, counts, efficiency, where each came from)."""
    sec = design.sections.split or _defaults("split")
    lay = design.sections.layout
    family = sec.family or (lay.kind if lay is not None and lay.kind in _DEFAULT_COUNTS
                            else None)
    if family is None:
        raise ValueError("split.family: missing and the design has no [layout] of a family "
                         "kind; allowed: one of line, grid, ring, hexagonal")
    spacing = sec.spacing if sec.spacing is not None else (
        None if lay is None else lay.spacing)
    if spacing is None:
        raise ValueError("split.spacing: missing and the design's [layout] gives none; "
                         "allowed: a column spacing, e.g. '3 mm'")
    counts = np.asarray(sec.counts if sec.counts is not None else _DEFAULT_COUNTS[family])
    return family, float(spacing), counts, float(sec.efficiency)


@dataclass(frozen=True, eq=False)
class SplitResult:
    """The split study of the design, and the phasing whose target and band it used."""

    study: object       # thzarray.inverse.split.SplitStudy (energies scaled by ``scale``)
    laser_energy: float
    phased: Phasing
    scale: object = None  # thzarray.app.jobs.scale.Scale

    def summary(self) -> dict:
        s = self.study
        best = int(np.argmax(s.phased)) if s.best_count else None
        return {"family": s.family, "spacing_m": s.spacing, "laser_energy_j": self.laser_energy,
                "counts": s.counts.tolist(), "efficiency": s.efficiency.tolist(),
                "energy_per_beam_j": s.energy_per_beam.tolist(),
                "power_ratio": s.power_ratio.tolist(), "has_column": s.has_column.tolist(),
                "multi_filament": s.multi_filament.tolist(), "length_m": s.length.tolist(),
                "single": s.single.tolist(), "incoherent": s.incoherent.tolist(),
                "phased": s.phased.tolist(), "energy_unit": s.unit,
                "best_count": s.best_count,
                "best_phased": None if best is None else float(s.phased[best]),
                **({} if self.scale is None else self.scale.summary()),
                **self.phased.summary()}


def split(design: Design, toward=None) -> SplitResult:
    """Energy into the design's target versus the number of beams (module docstring)."""
    from dataclasses import replace

    from thzarray.app.jobs.scale import absolute_scale
    from thzarray.inverse.split import split_study

    if design.laser is None:
        raise ValueError(f"design {design.name!r}: split needs [laser] (the pulse to split); "
                         "allowed: add a [laser] section")
    phased = phasing(design, toward)
    family, spacing, counts, efficiency = split_counts(design)
    study = split_study(_pulse(design.laser), counts, family, spacing, phased.target,
                        phased.band, efficiency=efficiency, model=_model(design.laser),
                        medium=design.medium)
    scale = absolute_scale(design, phased)
    k = scale.factor
    study = replace(study, single=k * study.single, incoherent=k * study.incoherent,
                    phased=k * study.phased)
    return SplitResult(study, float(design.laser.energy), phased, scale)


@dataclass(frozen=True, eq=False)
class BenchResult:
    """The bench sheet of the design's delays."""

    sheet: object       # thzarray.inverse.bench.BenchSheet
    phased: Phasing

    def summary(self) -> dict:
        s = self.sheet
        out = {"delays_s": s.delays.tolist(), "wavelength_m": s.wavelength,
               "air_group_index": s.air_group_index, "passes": s.passes,
               "glass": s.glass.name, "glass_source": s.glass.source,
               "glass_group_index": s.glass_group_index,
               "echelon_step_m": None if not np.isfinite(s.echelon_step) else s.echelon_step}
        for d in (s.stage, s.plate, s.echelon):
            key = d.device.replace(" ", "_")
            out[key] = {"setting_m": d.setting.tolist(), "resolution_m": d.resolution,
                        "delay_step_s": d.quantum, "error_s": d.error.tolist(),
                        "rms_error_s": d.rms_error, "expected_gain": d.expected_gain,
                        "realised_gain": d.realised_gain}
        out.update(plate_gdd_s2=s.gdd.tolist(),
                   duration_after_plate_s=[None if not np.isfinite(v) else float(v)
                                           for v in s.duration],
                   power_ratio_after_plate=[None if not np.isfinite(v) else float(v)
                                            for v in s.power_ratio],
                   **self.phased.summary())
        return out


def bench(design: Design, toward=None) -> BenchResult:
    """Bench settings for the design's delays (module docstring)."""
    from thzarray.inverse.bench import bench_sheet

    sec = design.sections.bench or _defaults("bench")
    phased = phasing(design, toward)
    opts = dict(glass=sec.glass, medium=design.medium, passes=sec.passes,
                stage_resolution=sec.stage_resolution,
                thickness_resolution=sec.thickness_resolution,
                step_resolution=sec.step_resolution, incidence=sec.incidence)
    if design.laser is not None:
        per_beam = design.laser.energy
        sheet = bench_sheet(phased.delays, _pulse(design.laser, per_beam), phased.band,
                            model=_model(design.laser), **opts)
    else:
        duration = None
        plasma = design.sections.plasma
        if plasma is not None:
            duration = plasma.pulse_duration
        sheet = bench_sheet(phased.delays, None, phased.band,
                            wavelength=design.medium.laser_wavelength or 800e-9,
                            duration=duration, **opts)
    return BenchResult(sheet, phased)
