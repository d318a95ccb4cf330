"""The design-file schema: every section and key, its kind, default, range, meaning, example.

A key's kind is a dimension of :data:`thzarray.app.units.DIMENSIONS` (a quantity with
units), or one of ``str``, ``int``, ``bool``, ``choice``, ``vector:<kind>``,
``list:<kind>``, ``grid:<kind>`` (a list of values or a table ``{start, stop, points}``).
Ranges are in SI. designs/README.md documents every key; a test keeps the two in step.

Distances are defined once:

- a *range* is the distance from the coordinate origin along a direction ([budget].ranges,
  [steering].aperture_distance, the ``# range`` of a measured scan);
- a *plane distance* is the distance of a plane's centre from its own origin along its
  normal ([plane].distance);
- filament positions are coordinates in metres in the design's frame (+z: the laser's
  direction, origin at the lens or the laser's exit).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["KIND_KEYS", "MAX_FILAMENTS", "MAX_GRID_POINTS", "OUTPUT_FORMATS", "SCHEMA",
           "SOURCE_SECTIONS", "Spec", "applies"]

MAX_GRID_POINTS = 25_000_000
"""Largest observation grid a design may request (points x frequencies): its far field, two
result-sized complex buffers of 32 bytes a point, stays within the 2 GiB memory budget."""
MAX_FILAMENTS = 4096
"""Most filaments one design may hold."""
OUTPUT_FORMATS = ("png", "pdf", "html", "csv", "netcdf")
SOURCE_SECTIONS = ("filament", "filaments", "layout")
"""Sections that place the columns (a design has exactly one; [laser] may make them)."""

_POSITION = 1e4   # m: largest coordinate of a column or a plane (10 km)
_FREQ = (1e9, 1e14)  # Hz: 1 GHz to 100 THz


@dataclass(frozen=True)
class Spec:
    """One key of the schema: kind, default, SI range, meaning and an example value."""

    kind: str
    default: object = None
    required: bool = False
    low: float | None = None
    high: float | None = None
    low_open: bool = False
    choices: tuple = ()
    doc: str = ""
    example: str = ""


_Q = Spec

SCHEMA: dict[str, dict[str, Spec]] = {
    "design": {
        "name": _Q("str", required=True, doc="short name used in titles and file names",
                   example='"4x4 grid steered"'),
        "description": _Q("str", "", doc="free text shown in the gallery",
                          example='"invented scenario"'),
    },
    "medium": {
        "kind": _Q("choice", "air", choices=("air", "vacuum", "custom"),
                   doc="air (Ciddor + ITU-R P.453 + P.676), vacuum, or custom indices",
                   example='"air"'),
        "temperature": _Q("temperature", 15.0, low=-40, high=60, doc="air temperature",
                          example='"20 degC"'),
        "pressure": _Q("pressure", 101325.0, low=1e4, high=1.2e5, doc="total pressure",
                       example='"1013.25 hPa"'),
        "relative_humidity": _Q("fraction", 0.0, low=0.0, high=1.0,
                                doc="relative humidity, 0 to 100 %", example='"40 %"'),
        "co2": _Q("fraction", 450e-6, low=0.0, high=2e-3, doc="CO2 mole fraction",
                  example='"450 ppm"'),
        "laser_wavelength": _Q("length", None, low=0.3e-6, high=1.7e-6,
                               doc="vacuum wavelength of the driving laser (sets the group "
                                   "index); 800 nm, or [laser].wavelength",
                               example='"800 nm"'),
        "line_list": _Q("str", None,
                        doc="HITRAN-format line list (160-character records) for absorption "
                            "and dispersion above 1 THz, path relative to the design file",
                        example='"h2o_lines.par"'),
        "n_group": _Q("number", None, low=1.0, high=2.0,
                      doc="custom: optical group index of the driver", example="1.00028"),
        "n_thz": _Q("number", None, low=1.0, high=4.0, doc="custom: THz phase index",
                    example="1.00027"),
    },
    "laser": {
        "energy": _Q("energy", required=True, low=0.0, low_open=True, high=10.0,
                     doc="pulse energy (per beam)", example='"2 mJ"'),
        "duration": _Q("time", 50e-15, low=1e-15, high=1e-11,
                       doc="intensity FWHM of the pulse", example='"50 fs"'),
        "beam_radius": _Q("length", 5e-3, low=1e-5, high=1.0,
                          doc="1/e^2 intensity radius of the collimated beam at the lens",
                          example='"5 mm"'),
        "wavelength": _Q("length", 800e-9, low=0.3e-6, high=1.7e-6,
                         doc="vacuum wavelength", example='"800 nm"'),
        "focal_length": _Q("length", None, low=1e-3, high=1e4,
                           doc="lens focal length; omit for a collimated beam",
                           example='"1 m"'),
        "n2": _Q("n2", 3.2e-23, low=0.0, low_open=True, high=1e-15,
                 doc="Kerr index of air", example='"3.2e-19 cm^2/W"'),
        "clamped_intensity": _Q("intensity", 5e17, low=1e12, high=1e21,
                                doc="intensity inside the filament",
                                example='"5e13 W/cm^2"'),
        "core_radius": _Q("length", 50e-6, low=1e-7, high=1e-2, doc="plasma core radius",
                          example='"50 um"'),
        "collision_rate": _Q("rate", 2e12, low=0.0, high=1e15,
                             doc="electron collision rate", example='"2e12 1/s"'),
    },
    "plasma": {
        "electron_density": _Q("density", required=True, low=1e18, high=1e26,
                               doc="free-electron density", example='"1e16 cm^-3"'),
        "collision_rate": _Q("rate", required=True, low=0.0, high=1e15,
                             doc="electron collision rate", example='"2e12 1/s"'),
        "pulse_duration": _Q("time", 50e-15, low=1e-15, high=1e-11,
                             doc="intensity FWHM of the driving pulse", example='"50 fs"'),
        "peak_intensity": _Q("intensity", 5e17, low=1e12, high=1e21,
                             doc="peak (clamped) intensity in the core",
                             example='"5e13 W/cm^2"'),
        "radius": _Q("length", 50e-6, low=1e-7, high=1e-2, doc="plasma core radius",
                     example='"50 um"'),
    },
    "source": {
        "kind": _Q("choice", "single-colour", choices=("single-colour", "two-colour"),
                   doc="single-colour: current along the axis (ponderomotive, radially "
                       "polarized cone); two-colour: photocurrent across it (fundamental + "
                       "second harmonic, linearly polarized)", example='"two-colour"'),
        "polarization": _Q("vector:number", (1.0, 0.0, 0.0), low=-1e6, high=1e6,
                           doc="two-colour: laser polarization [x, y, z], the current's "
                               "direction; perpendicular to the columns' axis",
                           example="[1, 0, 0]"),
        "relative_phase": _Q("angle", math.pi / 2, low=-10 * math.pi, high=10 * math.pi,
                             doc="two-colour: phase of the second harmonic against the "
                                 "fundamental at the column's start (90 deg: largest current)",
                             example='"90 deg"'),
        "dephasing_length": _Q("length", None, low=1e-4, high=1e3,
                               doc="two-colour: length over which the relative phase turns "
                                   "by 360 deg; default from the air's Ciddor indices and "
                                   "the plasma density", example='"5 cm"'),
        "driver": _Q("choice", "air+plasma", choices=("air", "air+plasma"),
                     doc="group index of the driving pulse: the air's, or the air's plus "
                         "the plasma's n_e / (2 n_c) when the design states a plasma",
                     example='"air+plasma"'),
        "group_index": _Q("number", None, low=1.0, high=2.0,
                          doc="the driver's group index, overriding driver",
                          example="1.00032"),
        "plasma_z": _Q("list:length", None, low=0.0, high=1e3,
                       doc="positions along each column (from its start) of plasma_density "
                           "and plasma_collision_rate", example='["0 cm", "15 cm", "30 cm"]'),
        "plasma_density": _Q("list:density", None, low=1e18, high=1e26,
                             doc="electron density at plasma_z (needs [plasma] or [laser])",
                             example='["2e15 cm^-3", "1e16 cm^-3", "2e15 cm^-3"]'),
        "plasma_collision_rate": _Q("list:rate", None, low=0.0, high=1e15,
                                    doc="collision rate at plasma_z",
                                    example='["2e12 1/s", "2e12 1/s", "2e12 1/s"]'),
    },
    "filament": {
        "length": _Q("length", required=True, low=1e-9, high=1e3,
                     doc="column length", example='"30 cm"'),
        "start": _Q("vector:length", (0.0, 0.0, 0.0), low=-_POSITION, high=_POSITION,
                    doc="where the column starts [x, y, z]", example='["0 m", "0 m", "1 m"]'),
        "axis": _Q("vector:number", (0.0, 0.0, 1.0), low=-1e6, high=1e6,
                   doc="direction of the pulse [x, y, z], normalised", example="[0, 0, 1]"),
        "delay": _Q("time", 0.0, low=-1e-6, high=1e-6,
                    doc="time the pulse passes the start", example='"1.5 ps"'),
        "amplitude": _Q("number", 1.0, low=-1e6, high=1e6, doc="factor on the current",
                        example="1.0"),
        "profile_z": _Q("list:length", None, low=0.0, high=1e3,
                        doc="profile sample positions from the start, 0 to length",
                        example='["0 cm", "15 cm", "30 cm"]'),
        "profile_w": _Q("list:number", None, low=-1e6, high=1e6,
                        doc="longitudinal profile values at profile_z",
                        example="[0.2, 1.0, 0.2]"),
    },
    "layout": {
        "kind": _Q("choice", required=True,
                   choices=("line", "grid", "hexagonal", "ring", "random", "csv"),
                   doc="array builder", example='"grid"'),
        "length": _Q("length", None, low=1e-9, high=1e3,
                     doc="column length (from [laser] when that section is given)",
                     example='"30 mm"'),
        "count": _Q("int", None, low=1, high=MAX_FILAMENTS,
                    doc="line, ring, random: number of columns", example="8"),
        "shape": _Q("list:int", None, low=1, high=MAX_FILAMENTS, doc="grid: [nx, ny]",
                    example="[4, 4]"),
        "rings": _Q("int", None, low=0, high=36, doc="hexagonal: rings around the centre",
                    example="2"),
        "spacing": _Q("length", None, low=0.0, low_open=True, high=10.0,
                      doc="line, grid, hexagonal: pitch", example='"1.5 mm"'),
        "radius": _Q("length", None, low=0.0, low_open=True, high=10.0,
                     doc="ring, random: radius", example='"5 mm"'),
        "min_separation": _Q("length", 0.0, low=0.0, high=10.0,
                             doc="random: smallest distance between columns",
                             example='"1 mm"'),
        "seed": _Q("int", 0, low=0, high=2**32 - 1, doc="random: generator seed",
                   example="7"),
        "center_column": _Q("bool", False, doc="ring: add a column at the centre",
                            example="true"),
        "center": _Q("vector:length", (0.0, 0.0, 0.0), low=-_POSITION, high=_POSITION,
                      doc="centre of the starts [x, y, z] (z is added to the laser's onset)",
                      example='["0 m", "0 m", "0 m"]'),
        "axis": _Q("vector:number", (0.0, 0.0, 1.0), low=-1e6, high=1e6,
                   doc="common beam axis [x, y, z]", example="[0, 0, 1]"),
        "csv": _Q("str", None, doc="csv: layout table, path relative to the design file",
                  example='"positions.csv"'),
    },
    "steering": {
        "toward": _Q("list:angle", None, low=-10 * math.pi, high=10 * math.pi,
                     doc="target direction [theta, phi] (polar angle from +z, azimuth)",
                     example='["10 deg", "0 deg"]'),
        "method": _Q("choice", "true-time", choices=("true-time", "phase-only", "optimise"),
                     doc="true-time delays, delays folded into one period, or optimised",
                     example='"true-time"'),
        "design_freq": _Q("frequency", None, low=_FREQ[0], high=_FREQ[1],
                          doc="phase-only: frequency at which the folded delays are exact",
                          example='"0.3 THz"'),
        "max_delay": _Q("time", None, low=0.0, low_open=True, high=1e-6,
                        doc="optimise: largest delay the bench can set", example='"1 ps"'),
        "aperture_radius": _Q("length", None, low=1e-6, high=1e3,
                              doc="radius of the target aperture (with aperture_distance)",
                              example='"5 mm"'),
        "aperture_distance": _Q("length", None, low=0.0, low_open=True, high=1e6,
                                doc="range of the target aperture's centre from the origin",
                                example='"0.5 m"'),
        "band": _Q("list:frequency", None, low=_FREQ[0], high=_FREQ[1],
                   doc="[low, high] band of gains, steering and tolerances (or one frequency)",
                   example='["0.1 THz", "0.5 THz"]'),
        "band_points": _Q("int", 9, low=2, high=1024, doc="frequencies sampling the band",
                          example="9"),
        "delays": _Q("list:time", None, low=-1e-6, high=1e-6,
                     doc="stored delays, one per column (written by `steer --write`)",
                     example='["0 ps", "0.87 ps"]'),
    },
    "tolerance": {
        "timing_jitter": _Q("time", 0.0, low=0.0, high=1e-9, doc="rms timing error",
                            example='"0.2 ps"'),
        "transverse_error": _Q("length", 0.0, low=0.0, high=1.0,
                               doc="rms placement error across the axis", example='"50 um"'),
        "longitudinal_error": _Q("length", 0.0, low=0.0, high=10.0,
                                 doc="rms onset error along the axis", example='"1 mm"'),
        "trials": _Q("int", 1000, low=2, high=10**6, doc="simulated builds (Monte Carlo)",
                     example="2000"),
        "percentile": _Q("number", 10.0, low=0.0, high=100.0,
                         doc="percentile of the delivered gain to report", example="10"),
        "seed": _Q("int", 0, low=0, high=2**32 - 1, doc="generator seed", example="2"),
    },
    "observe": {
        "freq": _Q("grid:frequency", required=True, low=_FREQ[0], high=_FREQ[1],
                   doc="frequencies of the pattern: a list, or {start, stop, points}",
                   example='["0.1 THz", "0.3 THz"]'),
        "theta": _Q("grid:angle", {"start": 0.0, "stop": 0.2, "points": 201}, low=0.0,
                    high=math.pi, doc="polar angles from +z",
                    example='{ start = "0 deg", stop = "25 deg", points = 201 }'),
        "phi": _Q("grid:angle", {"start": 0.0, "stop": 2 * math.pi, "points": 73},
                  low=-10 * math.pi, high=10 * math.pi, doc="azimuths from +x",
                  example='{ start = "0 deg", stop = "360 deg", points = 73 }'),
    },
    "cone": {
        "target_angle": _Q("angle", None, low=0.0, high=math.pi / 2, low_open=True,
                           doc="wanted cone angle, marked on the design chart",
                           example='"3 deg"'),
        "band": _Q("list:frequency", None, low=_FREQ[0], high=_FREQ[1],
                   doc="[low, high] detection band of the chart (or one frequency)",
                   example='["0.1 THz", "0.5 THz"]'),
        "lengths": _Q("grid:length", {"start": 0.01, "stop": 2.0, "points": 200},
                      low=0.0, low_open=True, high=1e3, doc="plasma lengths of the chart",
                      example='{ start = "5 mm", stop = "30 cm", points = 200 }'),
    },
    "receiver": {
        "kind": _Q("choice", "narrowband", choices=("narrowband", "broadband"),
                   doc="narrowband (one linear polarization) or broadband power detector",
                   example='"narrowband"'),
        "center_freq": _Q("frequency", None, low=_FREQ[0], high=_FREQ[1],
                          doc="centre of the pass band", example='"0.1 THz"'),
        "bandwidth": _Q("frequency", None, low=1e6, high=_FREQ[1],
                        doc="full width of the pass band", example='"10 GHz"'),
        "polarization": _Q("vector:number", (1.0, 0.0, 0.0), low=-1e6, high=1e6,
                           doc="narrowband: polarization direction [x, y, z]",
                           example="[1, 0, 0]"),
        "area": _Q("area", None, low=1e-12, high=1.0,
                   doc="effective area (or beam_waist)", example='"1 mm^2"'),
        "beam_waist": _Q("length", None, low=1e-6, high=1.0,
                         doc="narrowband: Gaussian acceptance beam waist (1/e^2 radius)",
                         example='"5 mm"'),
        "response_csv": _Q("str", None,
                           doc="broadband: CSV of the spectral response (freq_hz,response)",
                           example='"response.csv"'),
        "band_points": _Q("int", 11, low=2, high=4096, doc="frequencies sampling the band",
                          example="11"),
        "nep": _Q("nep", None, low=1e-30, high=1.0,
                  doc="noise-equivalent power (with integration_time and repetition_rate)",
                  example='"1e-10 W/Hz^0.5"'),
        "integration_time": _Q("time", None, low=0.0, low_open=True, high=1e5,
                               doc="averaging time of the detector's reading",
                               example='"1 s"'),
        "repetition_rate": _Q("frequency", None, low=0.0, low_open=True, high=1e9,
                              doc="laser pulses per second", example='"1 kHz"'),
    },
    "plane": {
        "distance": _Q("length", required=True, low=0.0, low_open=True, high=_POSITION,
                       doc="plane distance: from origin to the plane's centre along normal",
                       example='"1.5 m"'),
        "normal": _Q("vector:number", (0.0, 0.0, 1.0), low=-1e6, high=1e6,
                     doc="plane normal [x, y, z]", example="[0, 0, 1]"),
        "origin": _Q("vector:length", (0.0, 0.0, 0.0), low=-_POSITION, high=_POSITION,
                     doc="point the plane distance is measured from",
                     example='["0 m", "0 m", "0 m"]'),
        "x": _Q("grid:length", {"start": -0.1, "stop": 0.1, "points": 81}, low=-_POSITION,
                high=_POSITION, doc="in-plane coordinates along the plane's x axis",
                example='{ start = "-12 cm", stop = "12 cm", points = 61 }'),
        "y": _Q("grid:length", {"start": -0.1, "stop": 0.1, "points": 81}, low=-_POSITION,
                high=_POSITION, doc="in-plane coordinates along the plane's y axis",
                example='{ start = "-12 cm", stop = "12 cm", points = 61 }'),
    },
    "budget": {
        "ranges": _Q("grid:length", {"start": 1.0, "stop": 50.0, "points": 50},
                     low=0.0, low_open=True, high=1e6,
                     doc="ranges of the receiver from the origin",
                     example='{ start = "1 m", stop = "50 m", points = 50 }'),
        "relative_humidity": _Q("list:fraction", (0.0, 0.5, 1.0), low=0.0, high=1.0,
                                doc="humidities to compare (air only)",
                                example='["0 %", "50 %", "100 %"]'),
        "theta": _Q("angle", None, low=0.0, high=math.pi,
                    doc="receiver direction; default the steering target, else the cone",
                    example='"2.7 deg"'),
        "phi": _Q("angle", 0.0, low=-10 * math.pi, high=10 * math.pi,
                  doc="receiver azimuth (with theta)", example='"0 deg"'),
    },
    "waveform": {
        "ranges": _Q("list:length", (1.0, 10.0, 30.0), low=0.0, low_open=True, high=1e6,
                     doc="ranges of the receiver from the origin", example='["1 m", "10 m"]'),
        "duration": _Q("time", 60e-12, low=1e-13, high=1e-8,
                       doc="time window of the waveforms", example='"60 ps"'),
        "bandwidth": _Q("frequency", 4e12, low=1e10, high=5e13,
                        doc="highest frequency of the waveforms", example='"4 THz"'),
        "theta": _Q("angle", None, low=0.0, high=math.pi,
                    doc="receiver direction; default the steering target, else the cone",
                    example='"3 deg"'),
        "phi": _Q("angle", 0.0, low=-10 * math.pi, high=10 * math.pi,
                  doc="receiver azimuth (with theta)", example='"0 deg"'),
        "polarization": _Q("vector:number", None, low=-1e6, high=1e6,
                           doc="field component recorded [x, y, z]; default the receiver's, "
                               "else the polar direction", example="[1, 0, 0]"),
        "crystal": _Q("choice", "ZnTe", choices=("ZnTe", "GaP"),
                      doc="electro-optic crystal", example='"GaP"'),
        "thickness": _Q("length", 1e-3, low=1e-6, high=0.05, doc="crystal thickness",
                        example='"0.5 mm"'),
        "probe_wavelength": _Q("length", 800e-9, low=0.5e-6, high=1.7e-6,
                               doc="probe vacuum wavelength", example='"800 nm"'),
        "probe_duration": _Q("time", 50e-15, low=0.0, high=1e-11,
                             doc="probe intensity FWHM", example='"50 fs"'),
        "probe_energy": _Q("energy", None, low=0.0, low_open=True, high=1.0,
                           doc="probe energy on the detectors (with integration_time and "
                               "repetition_rate: shot-noise SNR)", example='"10 nJ"'),
        "integration_time": _Q("time", None, low=0.0, low_open=True, high=1e5,
                               doc="averaging time per delay point", example='"100 ms"'),
        "repetition_rate": _Q("frequency", None, low=0.0, low_open=True, high=1e9,
                              doc="probe pulses per second", example='"1 kHz"'),
    },
    "calibration": {
        "kind": _Q("choice", required=True, choices=("energy", "peak_field", "amplitude"),
                   doc="what was measured: the receiver's energy at a range, the peak "
                       "field at a range, or a fitted current amplitude", example='"energy"'),
        "energy": _Q("energy", None, low=1e-50, high=10.0,
                     doc="energy: measured energy per pulse into the receiver",
                     example='"2 fJ"'),
        "peak_field": _Q("field", None, low=1e-50, high=1e10,
                         doc="peak_field: measured peak of the field along the recorded "
                             "polarization", example='"300 V/m"'),
        "amplitude": _Q("number", None, low=1e-50, high=1e30,
                        doc="amplitude: fitted current amplitude (model current = 1)",
                        example="0.8"),
        "range": _Q("length", None, low=0.0, low_open=True, high=1e6,
                    doc="energy, peak_field: range of the measurement from the origin, "
                        "along the budget's (waveform's) direction", example='"1.5 m"'),
        "uncertainty": _Q("fraction", 0.0, low=0.0, high=10.0,
                          doc="relative standard uncertainty of the measurement",
                          example='"10 %"'),
        "model_uncertainty": _Q("fraction", 0.0, low=0.0, high=10.0,
                                doc="relative uncertainty of the model's shape at that place",
                                example='"5 %"'),
    },
    "split": {
        "counts": _Q("list:int", None, low=1, high=MAX_FILAMENTS,
                     doc="beam counts N to compare; default 1 to 16 (or the layout's)",
                     example="[1, 2, 4, 9, 16]"),
        "family": _Q("choice", None, choices=("line", "grid", "ring", "hexagonal"),
                     doc="layout family; default the [layout] kind", example='"grid"'),
        "spacing": _Q("length", None, low=0.0, low_open=True, high=10.0,
                      doc="column spacing; default the [layout] spacing", example='"3 mm"'),
        "efficiency": _Q("fraction", 0.9, low=0.0, low_open=True, high=1.0,
                         doc="fraction of the pulse energy that reaches the N beams",
                         example='"90 %"'),
    },
    "bench": {
        "glass": _Q("choice", "fused_silica",
                    choices=("fused_silica", "N-BK7", "CaF2", "sapphire_o"),
                    doc="glass of the delay plates", example='"fused_silica"'),
        "passes": _Q("int", 2, low=1, high=8,
                     doc="passes over the stage travel (2: retroreflector)", example="2"),
        "stage_resolution": _Q("length", 1e-6, low=0.0, high=1e-2,
                               doc="smallest step of the delay stages", example='"1 um"'),
        "thickness_resolution": _Q("length", 10e-6, low=0.0, high=1e-2,
                                   doc="thickness step of the plates", example='"10 um"'),
        "step_resolution": _Q("length", 1e-6, low=0.0, high=1e-2,
                              doc="depth step of the stepped mirror", example='"1 um"'),
        "incidence": _Q("angle", 0.0, low=0.0, high=1.5,
                        doc="angle of incidence on the stepped mirror", example='"10 deg"'),
    },
    "outputs": {
        "formats": _Q("list:str", ("png", "html", "csv"),
                      doc="any of png, pdf, html, csv, netcdf", example='["png", "html"]'),
    },
}

KIND_KEYS = {
    "medium": ("kind", {"air": {"temperature", "pressure", "relative_humidity", "co2",
                                "line_list", "laser_wavelength"},
                        "vacuum": set(), "custom": {"n_group", "n_thz"}}),
    "layout": ("kind", {"line": {"count", "spacing", "length"},
                        "grid": {"shape", "spacing", "length"},
                        "hexagonal": {"rings", "spacing", "length"},
                        "ring": {"count", "radius", "length", "center_column"},
                        "random": {"count", "radius", "length", "min_separation", "seed"},
                        "csv": {"csv", "length"}}),
    "source": ("kind", {"single-colour": set(),
                        "two-colour": {"polarization", "relative_phase", "dephasing_length"}}),
    "calibration": ("kind", {"energy": {"energy", "range"},
                             "peak_field": {"peak_field", "range"},
                             "amplitude": {"amplitude"}}),
    "receiver": ("kind", {"narrowband": {"polarization", "area", "beam_waist"},
                          "broadband": {"area", "response_csv"}}),
    "steering": ("method", {"true-time": set(), "phase-only": {"design_freq"},
                            "optimise": {"max_delay"}}),
}
"""Keys that only some kinds use: section -> (the key that picks the kind, kind -> keys)."""


def applies(section: str, key: str, kind) -> bool:
    """Whether ``key`` of ``section`` is used by the section's ``kind`` (or method)."""
    if section not in KIND_KEYS:
        return True
    selector, table = KIND_KEYS[section]
    specific = set().union(*table.values())
    used = table.get(kind, set()) if isinstance(kind, str) else set()  # a bad kind: none
    return key not in specific or key in used
