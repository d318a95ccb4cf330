"""Sweep measures: the quantities a parameter study can compute for each design.

A registry (:data:`MEASURES`); :func:`register_measure` adds one. A measure receives the
validated :class:`~thzarray.app.design.Design`, the task's seed (``None`` for measures that
do not draw random numbers) and its options in SI units, and returns an xarray Dataset whose
dimensions are its own (``freq``, ``theta``...).

>>> @register_measure("peak", doc="largest energy density")      # doctest: +SKIP
... def peak(design, seed):
...     ...                                   # return an xarray.Dataset
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field, replace
from typing import Callable, Mapping

import numpy as np

from thzarray.app.design import Design, Spec
from thzarray.field.cone import cone_angle
from thzarray.field.energy import spectral_energy
from thzarray.field.farfield import far_field

__all__ = ["MEASURES", "Measure", "measure_cone", "measure_cut", "measure_energy_density",
           "measure_jittered_cut", "measure_spectral_energy", "measure_tolerance",
           "register_measure"]


@dataclass(frozen=True)
class Measure:
    """One quantity a sweep can compute for each design.

    Attributes
    ----------
    name : str
        Name used in sweep files.
    compute : callable
        ``compute(design, seed, **options) -> xarray.Dataset``.
    seeded : bool
        True when the result depends on ``seed`` (Monte Carlo); such measures get one task
        per seed, the others one task per grid point.
    options : mapping of str to Spec
        Options a sweep file may set under ``[measures.<name>]``, with their kinds and ranges
        (the design-file schema's :class:`~thzarray.design.Spec`).
    doc : str
        One line for listings.
    """

    name: str
    compute: Callable
    seeded: bool = False
    options: Mapping[str, Spec] = field(default_factory=dict)
    doc: str = ""


MEASURES: dict[str, Measure] = {}


def register_measure(name: str, *, seeded: bool = False, options=None, doc: str = "",
                     replace_existing: bool = False):
    """Decorator adding ``compute(design, seed, **options) -> Dataset`` to :data:`MEASURES`.

    Parameters
    ----------
    name : str
        Measure name in sweep files (letters, digits, underscores).
    seeded : bool
        The measure draws random numbers from ``numpy.random.default_rng(seed)``.
    options : mapping of str to Spec, optional
        Options with their kinds, defaults and ranges.
    doc : str
        One line; defaults to the first line of the function's docstring.
    replace_existing : bool
        Allow replacing a measure of the same name.
    """
    if not isinstance(name, str) or not re.fullmatch(r"[a-z][a-z0-9_]*", name):
        raise ValueError(f"measure name = {name!r} is not allowed; allowed: lower-case "
                         "letters, digits and underscores, starting with a letter")
    if name in MEASURES and not replace_existing:
        raise ValueError(f"measure name = {name!r} is taken; allowed: a new name, or "
                         "replace_existing=True")

    def add(compute):
        text = doc or (compute.__doc__ or "").strip().split("\n")[0]
        MEASURES[name] = Measure(name, compute, seeded, dict(options or {}), text)
        return compute

    return add


def _phased(design):
    """The design's columns with the delays every command uses (its [steering])."""
    from thzarray.app.jobs import phasing

    return phasing(design).filaments


def _energy_unit(design):
    return "J/(Hz sr)" if design.plasma is not None else "J/(Hz sr) per (A s)^2"


def _coords(design, names):
    g = design.grid
    table = {"freq": ("freq", g.freq, {"units": "Hz"}),
             "theta": ("theta", g.theta, {"units": "rad", "long_name": "polar angle"}),
             "phi": ("phi", g.phi, {"units": "rad", "long_name": "azimuth"})}
    return {n: table[n] for n in names}


def _energy_density(design, sources):
    """Energy density (F, T, P) of ``sources`` on the design's (freq, theta, phi) grid."""
    g = design.grid
    return far_field(sources, g.freq[:, None, None], g.theta[:, None], g.phi, design.medium,
                     design.plasma).energy_density


def _cut_dataset(design, sources, prefix):
    import xarray as xr

    g = design.grid
    cut = _energy_density(design, sources).mean(axis=2)
    cone = g.theta[np.argmax(cut, axis=1)]
    return xr.Dataset(
        {f"{prefix}cut": (("freq", "theta"), cut,
                          {"units": _energy_unit(design),
                           "long_name": "azimuth-averaged spectral-angular energy density"}),
         f"{prefix}cone_angle": (("freq",), cone,
                                 {"units": "rad",
                                  "long_name": "polar angle of the azimuth-averaged maximum"})},
        coords=_coords(design, ("freq", "theta")))


@register_measure("cut")
def measure_cut(design: Design, seed):
    """Azimuth-averaged energy density (freq, theta) and the polar angle of its maximum,
    with the design's columns phased as its [steering] says.

    .. math:: \\bar u(f, \\theta) = \\langle 2 n_T \\varepsilon_0 c |\\mathbf F|^2
              \\rangle_\\phi ,\\qquad \\theta_c(f) = \\arg\\max_\\theta \\bar u

    on the design's observation grid (Jackson secs. 9.1-9.2 through
    :func:`~thzarray.farfield.far_field`).
    """
    return _cut_dataset(design, _phased(design), "")


@register_measure("energy_density")
def measure_energy_density(design: Design, seed):
    """Spectral-angular energy density on the full (freq, theta, phi) grid, J/(Hz sr)."""
    import xarray as xr

    return xr.Dataset(
        {"energy_density": (("freq", "theta", "phi"), _energy_density(design, _phased(design)),
                            {"units": _energy_unit(design),
                             "long_name": "spectral-angular energy density"})},
        coords=_coords(design, ("freq", "theta", "phi")))


@register_measure("spectral_energy")
def measure_spectral_energy(design: Design, seed):
    """Radiated energy per unit frequency dW/df (freq,), J/Hz, integrated over the sphere."""
    import xarray as xr

    unit = "J/Hz" if design.plasma is not None else "J/Hz per (A s)^2"
    dw = spectral_energy(_phased(design), design.grid.freq, design.medium, design.plasma)
    return xr.Dataset({"spectral_energy": (("freq",), dw, {"units": unit,
                                                          "long_name": "dW/df over the sphere"})},
                      coords=_coords(design, ("freq",)))


@register_measure("cone")
def measure_cone(design: Design, seed):
    """Cone angle of a uniform column of each source's length (source, freq), rad.

    Exact maximum of the single-colour pattern, :func:`~thzarray.field.cone.cone_angle`,
    with each column's driver group index (``[source]``).
    """
    import xarray as xr

    lengths = np.array([s.length for s in design.filaments])
    angle = np.stack([cone_angle(s.length, design.grid.freq, design.medium,
                                 group_index=s.group_index_in(design.medium))
                      for s in design.filaments])
    return xr.Dataset(
        {"cone_angle_uniform": (("source", "freq"), angle,
                                {"units": "rad",
                                 "long_name": "cone angle of a uniform column of this length"})},
        coords=dict(_coords(design, ("freq",)),
                    source=("source", np.arange(lengths.size), {"long_name": "source index"})))


@register_measure("jittered_cut", seeded=True,
                  options={"timing_jitter": Spec("time", required=True, low=0.0, high=1e-9,
                                                 doc="rms error of each column's delay")})
def measure_jittered_cut(design: Design, seed, timing_jitter):
    """The cut of one simulated build whose column delays carry Gaussian timing errors.

    Each column's delay becomes :math:`t_n + \\sigma_t\\,\\xi_n` with independent
    :math:`\\xi_n \\sim N(0, 1)` drawn from ``numpy.random.default_rng(seed)``; the
    azimuth-averaged cut and its maximum are then those of :func:`measure_cut`
    (common practice, no source).
    """
    rng = np.random.default_rng(seed)
    phased = _phased(design)
    shifts = timing_jitter * rng.standard_normal(len(phased))
    sources = tuple(replace(s, delay=s.delay + float(d)) for s, d in zip(phased, shifts))
    return _cut_dataset(design, sources, "jittered_")


@register_measure("tolerance", seeded=True,
                  doc="Monte Carlo of the design's [tolerance] errors on its steered layout")
def measure_tolerance(design: Design, seed):
    """Mean, spread and percentile of the delivered gain (:func:`thzarray.tolerance.tolerance`)
    for the design's [steering] target and [tolerance] errors, with the task's seed."""
    import xarray as xr

    from thzarray.app.jobs import tolerance_study

    if design.tolerance is None:
        raise ValueError(f"design {design.name!r}: the tolerance measure needs a [tolerance] "
                         "section; allowed: add it")
    design = design.replace_sections(tolerance=replace(design.tolerance, seed=int(seed)))
    t, _, _ = tolerance_study(design)
    return xr.Dataset({
        "gain_mean": ((), t.mean, {"units": "1", "long_name": "mean delivered gain"}),
        "gain_std": ((), t.std, {"units": "1"}),
        "gain_percentile": ((), t.percentile_value,
                            {"units": "1", "percentile": float(t.percentile)}),
        "gain_expected": ((), t.expected, {"units": "1", "long_name": "exact random-phase mean"}),
    })


@register_measure("split", doc="Energy into the design's target versus the number of beams "
                               "one [laser] pulse is split into ([split])")
def measure_split(design: Design, seed):
    """The split study of :func:`thzarray.app.jobs.bench.split` (count,): one column,
    random phases and phased energies into the target, P/P_cr and column length per beam."""
    import xarray as xr

    from thzarray.app.jobs.bench import split

    s = split(design).study
    unit = s.unit
    return xr.Dataset(
        {"split_single": (("count",), s.single, {"units": unit, "long_name": "one column"}),
         "split_incoherent": (("count",), s.incoherent,
                              {"units": unit, "long_name": "N columns, random phases"}),
         "split_phased": (("count",), s.phased, {"units": unit, "long_name": "N columns, steered"}),
         "split_power_ratio": (("count",), s.power_ratio, {"units": "1", "long_name": "P/P_cr"}),
         "split_length": (("count",), s.length, {"units": "m", "long_name": "column length"}),
         "split_best_count": ((), s.best_count, {"units": "1"})},
        coords={"count": ("count", s.counts, {"long_name": "beams"})})
