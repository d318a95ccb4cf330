"""The design-file schema: every section and key, its kind, default, range and meaning.

A key's kind is a dimension of :data:`thzarray.app.units.DIMENSIONS` (a quantity with
units), or one of ``str``, ``int``, ``bool``, ``choice``, ``vector:<kind>``,
``list:<kind>``, ``grid:<kind>``. designs/README.md documents every key; a test keeps the
two in step.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["MAX_FILAMENTS", "MAX_GRID_POINTS", "OUTPUT_FORMATS", "SCHEMA", "Spec"]

# Largest observation grid a design may request (points x frequencies); larger requests
# are refused before any memory is allocated.
MAX_GRID_POINTS = 50_000_000


MAX_FILAMENTS = 4096
"""Most filaments one design may hold."""
OUTPUT_FORMATS = ("png", "pdf", "html", "csv", "netcdf")


@dataclass(frozen=True)
class Spec:
    """One key of the schema."""

    kind: str                 # a units.DIMENSIONS kind, or str/int/bool/choice/vector/...
    default: object = None
    required: bool = False
    low: float | None = None
    high: float | None = None
    low_open: bool = False
    choices: tuple = ()
    doc: str = ""


_Q = Spec  # short alias for the table below

SCHEMA: dict[str, dict[str, Spec]] = {
    "design": {
        "name": _Q("str", required=True, doc="short name used in titles and file names"),
        "description": _Q("str", "", doc="free text"),
    },
    "medium": {
        "kind": _Q("choice", "air", choices=("air", "vacuum", "custom"),
                   doc="air (Ciddor + ITU-R P.453), vacuum, or custom indices"),
        "temperature": _Q("temperature", 15.0, low=-40, high=100, doc="air temperature"),
        "pressure": _Q("pressure", 101325.0, low=1e4, high=1.2e5, doc="total pressure"),
        "relative_humidity": _Q("fraction", 0.0, low=0.0, high=1.0, doc="0 to 100 %"),
        "co2": _Q("fraction", 450e-6, low=0.0, high=2e-3, doc="CO2 fraction, e.g. '450 ppm'"),
        "laser_wavelength": _Q("length", 800e-9, low=0.3e-6, high=1.7e-6,
                               doc="vacuum wavelength of the driving laser"),
        "n_group": _Q("number", None, low=1.0, high=2.0, doc="custom: optical group index"),
        "n_thz": _Q("number", None, low=1.0, high=4.0, doc="custom: THz phase index"),
    },
    "plasma": {
        "electron_density": _Q("density", required=True, low=1e18, high=1e26),
        "collision_rate": _Q("rate", required=True, low=0.0, high=1e15),
        "pulse_duration": _Q("time", 50e-15, low=1e-15, high=1e-11, doc="intensity FWHM"),
        "peak_intensity": _Q("intensity", 5e17, low=1e12, high=1e21),
        "radius": _Q("length", 50e-6, low=1e-7, high=1e-2, doc="plasma core radius"),
    },
    "filament": {
        "length": _Q("length", required=True, low=0.0, high=1e3, low_open=True),
        "start": _Q("vector:length", (0.0, 0.0, 0.0), doc="[x, y, z]"),
        "axis": _Q("vector:number", (0.0, 0.0, 1.0), doc="[x, y, z], normalised"),
        "delay": _Q("time", 0.0, low=-1e-6, high=1e-6),
        "amplitude": _Q("number", 1.0, low=-1e6, high=1e6, doc="factor on the current"),
        "profile_z": _Q("list:length", None, doc="sample positions from the start"),
        "profile_w": _Q("list:number", None, doc="longitudinal profile values at profile_z"),
    },
    "layout": {
        "kind": _Q("choice", required=True,
                   choices=("line", "grid", "hexagonal", "ring", "random", "csv"),
                   doc="array builder"),
        "length": _Q("length", None, low=0.0, low_open=True, high=1e3, doc="column length"),
        "count": _Q("int", None, low=1, high=4096, doc="line, ring, random: columns"),
        "shape": _Q("list:int", None, doc="grid: [nx, ny]"),
        "rings": _Q("int", None, low=0, high=30, doc="hexagonal: rings around the centre"),
        "spacing": _Q("length", None, low=0.0, low_open=True, high=10.0, doc="pitch"),
        "radius": _Q("length", None, low=0.0, low_open=True, high=10.0, doc="ring, random"),
        "min_separation": _Q("length", 0.0, low=0.0, high=10.0, doc="random"),
        "seed": _Q("int", 0, low=0, high=2**32 - 1, doc="random: generator seed"),
        "center_column": _Q("bool", False, doc="ring: add a column at the centre"),
        "center": _Q("vector:length", (0.0, 0.0, 0.0)),
        "axis": _Q("vector:number", (0.0, 0.0, 1.0)),
        "csv": _Q("str", None, doc="csv: layout table (path relative to the design)"),
    },
    "steering": {
        "toward": _Q("list:angle", None, doc="[theta, phi] target direction"),
        "method": _Q("choice", "true-time", choices=("true-time", "phase-only", "optimise"),
                     doc="true-time delays, delays folded into one period, or optimised"),
        "design_freq": _Q("frequency", None, low=0.0, low_open=True, high=1e14,
                          doc="phase-only: design frequency"),
        "max_delay": _Q("time", None, low=0.0, low_open=True, high=1e-6,
                        doc="optimise: largest realisable delay"),
        "aperture_radius": _Q("length", None, low=0.0, low_open=True, high=1e3,
                              doc="target aperture radius (with aperture_distance)"),
        "aperture_distance": _Q("length", None, low=0.0, low_open=True, high=1e6,
                                doc="distance of the target aperture from the origin"),
        "band": _Q("list:frequency", None, doc="[low, high] band for gains and optimisation"),
        "band_points": _Q("int", 9, low=2, high=1024),
    },
    "tolerance": {
        "timing_jitter": _Q("time", 0.0, low=0.0, high=1e-9, doc="rms timing error"),
        "transverse_error": _Q("length", 0.0, low=0.0, high=1.0, doc="rms placement error"),
        "longitudinal_error": _Q("length", 0.0, low=0.0, high=10.0, doc="rms onset error"),
        "trials": _Q("int", 1000, low=2, high=10**6, doc="Monte Carlo builds"),
        "percentile": _Q("number", 10.0, low=0.0, high=100.0),
        "seed": _Q("int", 0, low=0, high=2**32 - 1),
    },
    "observe": {
        "freq": _Q("grid:frequency", required=True, low=0.0, low_open=True, high=1e14,
                   doc="a list, or {start, stop, points}"),
        "theta": _Q("grid:angle", {"start": 0.0, "stop": 0.2, "points": 201}, low=0.0,
                    high=math.pi, doc="polar angles"),
        "phi": _Q("grid:angle", {"start": 0.0, "stop": 2 * math.pi, "points": 73},
                  low=-10 * math.pi, high=10 * math.pi, doc="azimuths"),
    },
    "cone": {
        "target_angle": _Q("angle", None, low=0.0, high=math.pi / 2, low_open=True,
                           doc="wanted cone angle for the design chart"),
        "band": _Q("list:frequency", None, doc="[low, high] detection band"),
        "lengths": _Q("grid:length", {"start": 0.01, "stop": 2.0, "points": 200},
                      low=0.0, low_open=True, high=1e3, doc="plasma lengths of the chart"),
    },
    "receiver": {
        "kind": _Q("choice", "narrowband", choices=("narrowband", "broadband"),
                   doc="narrowband (one linear polarization) or broadband power detector"),
        "center_freq": _Q("frequency", None, low=0.0, low_open=True, high=1e14),
        "bandwidth": _Q("frequency", None, low=0.0, low_open=True, high=1e14),
        "polarization": _Q("vector:number", (1.0, 0.0, 0.0), doc="narrowband: [x, y, z]"),
        "area": _Q("area", None, low=0.0, low_open=True, high=1.0, doc="effective area"),
        "beam_waist": _Q("length", None, low=0.0, low_open=True, high=1.0,
                         doc="Gaussian acceptance beam waist (1/e^2 intensity radius)"),
        "response_csv": _Q("str", None, doc="broadband: CSV of the spectral response"),
        "band_points": _Q("int", 11, low=2, high=4096, doc="frequencies sampling the band"),
    },
    "plane": {
        "distance": _Q("length", required=True, low=0.0, low_open=True, high=1e5,
                       doc="distance of the plane's centre from origin along normal"),
        "normal": _Q("vector:number", (0.0, 0.0, 1.0)),
        "origin": _Q("vector:length", (0.0, 0.0, 0.0)),
        "x": _Q("grid:length", {"start": -0.1, "stop": 0.1, "points": 81}, low=-1e4, high=1e4),
        "y": _Q("grid:length", {"start": -0.1, "stop": 0.1, "points": 81}, low=-1e4, high=1e4),
    },
    "budget": {
        "distances": _Q("grid:length", {"start": 1.0, "stop": 50.0, "points": 50},
                        low=0.0, low_open=True, high=1e6),
        "relative_humidity": _Q("list:fraction", (0.0, 0.5, 1.0), low=0.0, high=1.0),
        "theta": _Q("angle", None, low=0.0, high=math.pi,
                    doc="receiver direction; default the cone angle at the band centre"),
        "phi": _Q("angle", 0.0, low=-10 * math.pi, high=10 * math.pi),
    },
    "outputs": {
        "formats": _Q("list:str", ("png", "html", "csv"),
                      doc="any of png, pdf, html, csv, netcdf"),
    },
}
