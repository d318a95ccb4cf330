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
from thzarray.air.medium import AirConditions, Medium
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
from thzarray.detect.receivers import (
                                     BroadbandDetector,
                                     NarrowbandReceiver,
                                     detected_energy,
                                     received_energy,
                                     surface_degree_of_radial_polarization,
                                     surface_polarization,
)
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
from thzarray.inverse.focusing import FocusingChart, focusing_chart, focusing_for_cone
from thzarray.inverse.leastsq import FitResult
from thzarray.inverse.scans import fit_delay_scan, fit_scan
from thzarray.source.filament import Filament
from thzarray.source.laser import (
                                     FilamentationModel,
                                     PlasmaEstimate,
                                     Pulse,
                                     collapse_distance,
                                     critical_power,
                                     plasma_from_laser,
)
from thzarray.source.plasma import Plasma

__all__ = [
    "__version__",
    # air
    "AirConditions",
    "Medium",
    "attenuate",
    "attenuation_coefficient",
    "oxygen_attenuation",
    "water_vapour_attenuation",
    # source
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
    "BroadbandDetector",
    "NarrowbandReceiver",
    "RangeBudget",
    "detected_energy",
    "range_budget",
    "received_energy",
    "surface_degree_of_radial_polarization",
    "surface_polarization",
    # inverse
    "FitResult",
    "FocusingChart",
    "fit_delay_scan",
    "fit_scan",
    "focusing_chart",
    "focusing_for_cone",
]
