"""Parameter sweeps: one design, some of its keys over lists or ranges, run in parallel.

- ``spec``      sweep files: axes, measures, seeds, tasks (:func:`load_sweep`).
- ``measures``  the registry of quantities a sweep computes (:func:`register_measure`).
- ``store``     one part file per finished task, gathered into a labelled Dataset.
- ``run``       serial or dask.distributed runs, resumable (:func:`run_sweep`).
- ``plots``     one figure per measured variable, drawn from the netCDF file.
"""

from thzarray.app.sweep.measures import MEASURES, Measure, measure_cut, register_measure
from thzarray.app.sweep.plots import sweep_figures
from thzarray.app.sweep.run import SweepResult, run_serial, run_sweep
from thzarray.app.sweep.spec import (
           MAX_TASKS,
           Axis,
           Sweep,
           Task,
           load_sweep,
           parse_sweep,
)
from thzarray.app.sweep.store import gather, inspect_part, output_paths

__all__ = ["MAX_TASKS", "MEASURES", "Axis", "Measure", "Sweep", "SweepResult", "Task", "gather",
           "inspect_part", "load_sweep", "measure_cut", "output_paths", "parse_sweep",
           "register_measure", "run_serial", "run_sweep", "sweep_figures"]
