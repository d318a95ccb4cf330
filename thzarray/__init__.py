"""thzarray: terahertz emission from femtosecond-laser plasma filaments in air, alone and in
phased arrays.

The package follows the signal from the laser to the detector. Each subpackage owns one
stage and imports only the stages before it (the order is ``thzarray._layers.LAYERS``; a
test checks every import):

- ``base``     ground floor: argument checks, the memory budget, band quadrature, geometry.
- ``air``      the medium: Ciddor and ITU-R P.453 indices, P.676 absorption, one ``Medium``.
- ``source``   laser settings to plasma (``Pulse``), the plasma current, the ``Filament``.
- ``field``    far and finite-distance fields, radiated energy, the cone, polarization,
               scan surfaces.
- ``array``    layouts, the array sum, targets, gains, steering delays, beam report, the
               delay designer, tolerances, sky maps.
- ``detect``   receivers and detectors, the range budget.
- ``inverse``  the focusing for a wanted cone, fits of measured scans.
- ``app``      design files, units, commands, tables, figures, sweeps, the command line
               (the only layer that touches files, unit strings, the terminal or plots).

The names below are the ones scripts use most; each lives in the module its docstring
names. Importing the package never imports a plotting library. SI units and radians
throughout.
"""

from thzarray._version import __version__
from thzarray.air.absorption import (
                                     attenuate,
                                     attenuation_coefficient,
                                     oxygen_attenuation,
                                     water_vapour_attenuation,
)
from thzarray.air.hitran import LineList, parse_hitran
from thzarray.air.medium import AirConditions, Medium
from thzarray.air.refractivity import complex_index
from thzarray.air.transmission import air_transmission, line_transmission
from thzarray.array import layouts
from thzarray.array.arrayfield import array_factor, array_far_field, factored_far_field
from thzarray.array.beam import (
                                     ConeNullWarning,
                                     GratingLobe,
                                     SteeringReport,
                                     steering_report,
)
from thzarray.array.designer import SteeringDesign, design_steering
from thzarray.array.gain import (
                                     ArrayGain,
                                     array_factor_directivity,
                                     array_gain,
                                     directivity,
)
from thzarray.array.layouts import with_delays
from thzarray.array.maps import FrequencyMap, SkyMap, frequency_map, sky_grid, sky_map
from thzarray.array.steering import (
                                     ConeLevel,
                                     SquintReport,
                                     cone_level,
                                     phase_only_delays,
                                     squint,
                                     steering_delays,
)
from thzarray.array.targets import Aperture, Direction
from thzarray.array.tolerance import ToleranceResult, tolerance
from thzarray.base.geometry import unit_vectors
from thzarray.detect.budget import RangeBudget, range_budget
from thzarray.detect.calibration import (
                                     Calibration,
                                     calibrate_amplitude,
                                     calibrate_energy,
                                     calibrate_field,
)
from thzarray.detect.electrooptic import (
                                     GAP,
                                     ZNTE,
                                     EOCrystal,
                                     eo_response,
                                     eo_trace,
)
from thzarray.detect.noise import eo_signal_to_noise, signal_to_noise
from thzarray.detect.receivers import (
                                     BroadbandDetector,
                                     NarrowbandReceiver,
                                     detected_energy,
                                     received_energy,
                                     surface_degree_of_radial_polarization,
                                     surface_polarization,
)
from thzarray.detect.traces import RangeWaveforms, range_waveforms
from thzarray.detect.waveform import Waveform, waveform
from thzarray.field.cone import (
                                     ConeRange,
                                     band_cone_angle,
                                     cone_angle,
                                     cone_range,
                                     length_for_cone,
)
from thzarray.field.energy import source_spectral_energy, spectral_energy, total_energy
from thzarray.field.farfield import FarField, far_field
from thzarray.field.nearfield import (
                                     NearField,
                                     field_at,
                                     fields_at,
                                     magnetic_field_at,
                                     spectral_fluence,
)
from thzarray.field.polarization import (
                                     PolarizationMap,
                                     degree_of_radial_polarization,
                                     polarization_map,
)
from thzarray.field.surfaces import (
                                     FarFieldDeparture,
                                     Surface,
                                     far_field_departure,
                                     line_scan,
                                     plane_scan,
                                     sphere_scan,
)
from thzarray.inverse.bench import (
                                     BenchSheet,
                                     DelaySetting,
                                     bench_sheet,
                                     echelon_steps,
                                     rounding_gain,
                                     stage_position,
)
from thzarray.inverse.focusing import (
                                     ConeFocusing,
                                     FocusingChart,
                                     focusing_chart,
                                     focusing_for_cone,
)
from thzarray.inverse.glass import (
                                     GLASSES,
                                     Glass,
                                     plate_thickness,
                                     stretched_duration,
)
from thzarray.inverse.leastsq import FitResult
from thzarray.inverse.scans import fit_delay_scan, fit_scan
from thzarray.inverse.split import SplitStudy, split_study
from thzarray.source.column_plasma import ColumnPlasma
from thzarray.source.filament import Filament
from thzarray.source.laser import (
                                     FilamentationModel,
                                     PlasmaEstimate,
                                     Pulse,
                                     collapse_distance,
                                     critical_power,
                                     plasma_from_laser,
)
from thzarray.source.plasma import (
                                     Plasma,
                                     critical_density,
                                     finite_radius_note,
                                     plasma_group_index_shift,
)
from thzarray.source.spread import EnergyRange, energy_range
from thzarray.source.twocolour import (
                                     TwoColourProfile,
                                     dephasing_length,
                                     phase_matched_angle,
                                     two_colour_profile,
                                     two_colour_samples,
)

__all__ = [
    "__version__",
    # air
    "LineList",
    "air_transmission",
    "complex_index",
    "line_transmission",
    "parse_hitran",
    "AirConditions",
    "Medium",
    "attenuate",
    "attenuation_coefficient",
    "oxygen_attenuation",
    "water_vapour_attenuation",
    # source
    "ColumnPlasma",
    "EnergyRange",
    "TwoColourProfile",
    "critical_density",
    "dephasing_length",
    "energy_range",
    "finite_radius_note",
    "phase_matched_angle",
    "plasma_group_index_shift",
    "two_colour_profile",
    "two_colour_samples",
    "Filament",
    "FilamentationModel",
    "Plasma",
    "PlasmaEstimate",
    "Pulse",
    "collapse_distance",
    "critical_power",
    "plasma_from_laser",
    # field
    "ConeRange",
    "FarField",
    "FarFieldDeparture",
    "NearField",
    "PolarizationMap",
    "Surface",
    "band_cone_angle",
    "cone_angle",
    "cone_range",
    "degree_of_radial_polarization",
    "far_field",
    "far_field_departure",
    "field_at",
    "fields_at",
    "length_for_cone",
    "line_scan",
    "magnetic_field_at",
    "plane_scan",
    "polarization_map",
    "source_spectral_energy",
    "spectral_energy",
    "spectral_fluence",
    "sphere_scan",
    "total_energy",
    "unit_vectors",
    # array
    "Aperture",
    "ArrayGain",
    "ConeLevel",
    "ConeNullWarning",
    "Direction",
    "FrequencyMap",
    "GratingLobe",
    "SkyMap",
    "SquintReport",
    "SteeringDesign",
    "SteeringReport",
    "ToleranceResult",
    "array_factor",
    "array_factor_directivity",
    "array_far_field",
    "array_gain",
    "cone_level",
    "design_steering",
    "directivity",
    "factored_far_field",
    "frequency_map",
    "layouts",
    "phase_only_delays",
    "sky_grid",
    "sky_map",
    "squint",
    "steering_delays",
    "steering_report",
    "tolerance",
    "with_delays",
    # detect
    "Calibration",
    "EOCrystal",
    "GAP",
    "RangeWaveforms",
    "Waveform",
    "ZNTE",
    "calibrate_amplitude",
    "calibrate_energy",
    "calibrate_field",
    "eo_response",
    "eo_signal_to_noise",
    "eo_trace",
    "range_waveforms",
    "signal_to_noise",
    "waveform",
    "BroadbandDetector",
    "NarrowbandReceiver",
    "RangeBudget",
    "detected_energy",
    "range_budget",
    "received_energy",
    "surface_degree_of_radial_polarization",
    "surface_polarization",
    # inverse
    "BenchSheet",
    "ConeFocusing",
    "DelaySetting",
    "GLASSES",
    "Glass",
    "SplitStudy",
    "bench_sheet",
    "echelon_steps",
    "plate_thickness",
    "rounding_gain",
    "split_study",
    "stage_position",
    "stretched_duration",
    "FitResult",
    "FocusingChart",
    "fit_delay_scan",
    "fit_scan",
    "focusing_chart",
    "focusing_for_cone",
]
