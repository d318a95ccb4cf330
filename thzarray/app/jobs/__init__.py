"""Design-level jobs: what the commands compute on a design, as arrays with their axes.

- ``context``   the band, the target and the phasing every command shares; section use.
- ``filament``  the cone chart and the far-field pattern.
- ``receiver``  the detector-plane map and the range budget.
- ``array``     steering and the lobe report, gains, tolerances, the delay chart.
- ``waveform``  E(t), the electro-optic trace and the spectrum at the design's ranges.
- ``bench``     the energy-split study and the bench settings sheet.
- ``cones``     where a column radiates, for any source; ``scale``: calibration and spreads.

Nothing here draws or writes files; the commands do that through the plotting layer.
"""

from thzarray.app.jobs.array import (
                                     DelayChart,
                                     SteerResult,
                                     band_sky,
                                     compare,
                                     delay_chart,
                                     steer,
                                     steered_design,
                                     tolerance_study,
)
from thzarray.app.jobs.context import Phasing, band_of, phasing, section_notes, target_of
from thzarray.app.jobs.filament import ConeChart, PatternResult, cone_chart, pattern, projected_grid
from thzarray.app.jobs.receiver import BudgetResult, DetectorMap, budget, detector_map
from thzarray.app.jobs.scale import Scale, absolute_scale
from thzarray.app.jobs.waveform import WaveformResult, waveforms

__all__ = ["BudgetResult", "ConeChart", "DelayChart", "DetectorMap", "PatternResult", "Phasing",
           "SteerResult", "band_of", "band_sky", "budget", "compare", "cone_chart",
           "delay_chart", "detector_map", "pattern", "phasing", "projected_grid",
           "section_notes", "steer", "steered_design", "target_of", "tolerance_study",
           "Scale", "absolute_scale", "WaveformResult", "waveforms"]
