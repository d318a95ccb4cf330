"""The size of what a design asks the commands to compute, checked when the design loads.

Every command loads its design through :func:`~thzarray.app.design.load.parse_design`, and
so does ``thzarray check``: the estimates here run for all of them, so that a design
``check`` calls valid is one every command can run within the memory budget. Each estimate
uses the rule of the function that would refuse (the result's bytes against
:data:`~thzarray.base.memory.DEFAULT_MEMORY_BUDGET`); temporaries are chunked to fit by the
functions themselves. The ``[observe]`` grid is capped by its point count instead
(:data:`~thzarray.app.design.schema.MAX_GRID_POINTS`, chosen so that its far field fits).
"""

from __future__ import annotations

import numpy as np

from thzarray.app.design.checker import grid_values
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET

__all__ = ["MAX_TWO_COLOUR_PERIODS", "size_problems", "two_colour_problems"]

# Bytes a point of an exact near-field result takes (E and H, complex, 3 components), as
# thzarray.field.nearfield.fields_at counts them; a waveform point (complex, 3 components)
# as thzarray.detect.waveform.waveform counts them.
_NEAR_BYTES = 96
MAX_TWO_COLOUR_PERIODS = 1024
"""Most dephasing lengths one two-colour column may span (64 profile samples each): the
columns of the design and of its cone chart are sampled pieces, whose number sets the cost."""
_WAVEFORM_BYTES = 48


def _line(key, what, need, budget):
    return (f"{key}: {what} needs {need} bytes ({need / 2**30:.3g} GiB); allowed: at most "
            f"{int(budget)} bytes (the memory budget): fewer points")


def _plane_points(plane, receiver_band, filaments, medium, budget):
    """The map's own check of its points (none closer to a column than the near field
    allows), as a problem line or None."""
    from thzarray.field.nearfield import _check_inputs
    from thzarray.field.surfaces import plane_scan

    try:
        surf = plane_scan(plane.distance, grid_values(plane.x), grid_values(plane.y),
                          normal=plane.normal, origin=plane.origin)
        _check_inputs(filaments, np.asarray(receiver_band)[:, None, None], surf.points,
                      medium, budget)
    except ValueError as exc:
        return f"plane: {exc}"
    return None


def size_problems(sections, receiver_band, budget: float = DEFAULT_MEMORY_BUDGET,
                  filaments=None, medium=None) -> list:
    """One line per command whose result would not fit in ``budget`` bytes, and the map's
    check of its plane points (when ``filaments`` and ``medium`` are given).

    Parameters
    ----------
    sections : Sections
        The design's typed sections.
    receiver_band : ndarray or None
        Frequencies sampling the receiver's pass band (Hz).
    budget : float
        Memory budget (bytes).
    filaments : sequence of Filament, optional
    medium : Medium, optional
    """
    out = []
    n_band = 0 if receiver_band is None else int(np.size(receiver_band))
    plane = sections.plane
    if n_band and plane is not None:
        points = grid_values(plane.x).size * grid_values(plane.y).size
        need = _NEAR_BYTES * n_band * points
        if need > budget:
            out.append(_line("plane", f"the map's exact field on {points} points x {n_band} "
                                      "band frequencies", need, budget))
        elif filaments is not None and medium is not None:
            problem = _plane_points(plane, receiver_band, filaments, medium, budget)
            out += [problem] if problem else []
    if n_band:
        ranges = (50 if sections.budget is None
                  else grid_values(sections.budget.ranges).size)
        need = _NEAR_BYTES * n_band * ranges
        if need > budget:
            out.append(_line("budget.ranges", f"the budget's exact field at {ranges} ranges x "
                                              f"{n_band} band frequencies", need, budget))
    w = sections.waveform
    if w is not None and w.bandwidth * w.duration < 1.0:
        out.append(f"waveform.bandwidth: {w.bandwidth:g} Hz with duration {w.duration:g} s "
                   "leaves no frequency in the window; allowed: bandwidth x duration >= 1")
    elif w is not None:
        from thzarray.detect.waveform import waveform_grids

        try:
            freq, time = waveform_grids(w.duration, w.bandwidth)
        except ValueError as exc:
            return out + [f"waveform.duration: {exc}"]
        need = _WAVEFORM_BYTES * len(w.ranges) * (freq.size + time.size)
        if need > budget:
            out.append(_line("waveform.ranges", f"the waveforms at {len(w.ranges)} ranges x "
                                                f"{freq.size + time.size} samples", need,
                             budget))
    return out


def two_colour_problems(sections, filaments, dephasing_length) -> list:
    """Two-colour columns (the design's, and the longest of its cone chart) spanning more
    than :data:`MAX_TWO_COLOUR_PERIODS` dephasing lengths, one line each."""
    out = []
    limit = MAX_TWO_COLOUR_PERIODS * dephasing_length
    allowed = (f"allowed: at most {MAX_TWO_COLOUR_PERIODS} (columns up to {limit:.4g} m), or "
               "a longer source.dephasing_length")
    longest = max(f.length for f in filaments)
    if longest > limit:
        where = next((k for k in ("layout", "filament", "filaments", "laser")
                      if getattr(sections, k) is not None), "filament")
        out.append(f"{where}.length: a two-colour column of {longest:.4g} m spans "
                   f"{longest / dephasing_length:.4g} dephasing lengths of "
                   f"{dephasing_length:.4g} m; {allowed}")
    chart = 2.0 if sections.cone is None else float(grid_values(sections.cone.lengths).max())
    if chart > limit:
        out.append(f"cone.lengths: the chart's two-colour column of {chart:.4g} m spans "
                   f"{chart / dephasing_length:.4g} dephasing lengths of "
                   f"{dephasing_length:.4g} m; {allowed}")
    return out
