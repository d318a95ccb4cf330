"""thzarray: terahertz emission from femtosecond-laser plasma filaments in air, alone and in
phased arrays.

Which module owns what (arrows point down only; see DEVELOPERS.md):

- ``medium``        air indices: Ciddor optical group index, ITU-R P.453 THz index.
- ``plasma``        electron plasma and the spectrum of its ponderomotively driven current.
- ``filament``      one plasma column (length, start, axis, delay, weight, profile).
- ``_kernels``      compiled loops (numba) and their numpy twins; private.
- ``farfield``      far field of one or many columns; spectral-angular energy; total energy.
- ``cone``          cone angle <-> plasma length; reachable cones; band-averaged cone.
- ``polarization``  local polarization, Stokes parameters, degree of radial polarization.
- ``layouts``       array layouts (line, grid, hexagonal, ring, random, staggered), CSV
                    tables, array factor, factored element x array-factor path.
- ``_array_kernels`` compiled array-factor loops and their numpy twins; private.
- ``gain``          single / incoherent / phased / ideal N^2 gains, directivity, targets.
- ``steering``      true-time and phase-only delays, squint, steering designer and report.
- ``tolerance``     Monte Carlo of timing jitter and placement errors with the exact mean.
- ``maps``          sky and (theta, freq) maps of an array, as arrays with their axes.
- ``laser``         laser settings -> plasma: Marburger critical power and collapse distance,
                    focused beam, O2 ionization, plasma length and density estimates.
- ``fitting``       fits of measured angular and delay scans with covariance errors.
- ``nearfield``     exact finite-distance fields (Jackson eq. 9.18 along each column), E and H.
- ``_near_kernels`` compiled Filon-Legendre line integrals and their numpy twin; private.
- ``surfaces``      plane, sphere and line scans; where the far field stops being valid.
- ``atmosphere``    ITU-R P.676-12 Annex 1 line-by-line absorption of humid air.
- ``detectors``     narrow-band and broadband receivers, polarization on a surface.
- ``budget``        energy into a receiver versus range and humidity.

Edge layer (not imported by the package itself):

- ``units``         unit strings ("30 cm", "0.3 THz") -> SI floats (pint).
- ``design``        TOML design files: schema and validation of every problem at once.
- ``jobs``          design-level computations behind the commands.
- ``tables``        CSV files of layouts, measured scans and detector responses.
- ``report``        labelled datasets and netCDF; ``output``: atomic, no-overwrite writes.
- ``plots``         matplotlib and plotly figures.
- ``sweep``         parameter studies on dask.distributed, resumable.
- ``cli``           the ``thzarray`` command (top layer; the only module that prints).

Importing the package never imports a plotting library. SI units and radians throughout.
"""

from .cone import ConeRange, band_cone_angle, cone_angle, cone_range, length_for_cone
from .farfield import (FarField, far_field, source_spectral_energy, spectral_energy,
                       total_energy, unit_vectors)
from .filament import Filament
from .medium import Medium
from .plasma import Plasma
from .polarization import PolarizationMap, degree_of_radial_polarization, polarization_map
from .nearfield import NearField, field_at, fields_at, magnetic_field_at, spectral_fluence
from .surfaces import (FarFieldDeparture, Surface, far_field_departure, line_scan, plane_scan,
                       sphere_scan)
from .atmosphere import (Air, attenuate, attenuation_coefficient, oxygen_attenuation,
                         water_vapour_attenuation)
from .detectors import (BroadbandDetector, NarrowbandReceiver, detected_energy,
                        received_energy, surface_degree_of_radial_polarization,
                        surface_polarization)
from .budget import RangeBudget, range_budget
from . import layouts
from .layouts import array_factor, array_far_field, factored_far_field, with_delays
from .gain import ArrayGain, Direction, Receiver, array_factor_directivity, array_gain, directivity
from .steering import (ConeLevel, ConeNullWarning, GratingLobe, SquintReport, SteeringDesign,
                       SteeringReport, cone_level, design_steering, phase_only_delays, squint,
                       steering_delays, steering_report)
from .tolerance import ToleranceResult, tolerance
from .maps import FrequencyMap, SkyMap, frequency_map, sky_map
from .laser import (FocusingChart, PlasmaEstimate, collapse_distance, critical_power,
                    focusing_chart, focusing_for_cone, plasma_from_laser)
from .fitting import FitResult, fit_delay_scan, fit_scan, parse_scan_csv

__version__ = "0.1.0"

__all__ = [
    "FitResult",
    "FocusingChart",
    "PlasmaEstimate",
    "collapse_distance",
    "critical_power",
    "fit_delay_scan",
    "fit_scan",
    "focusing_chart",
    "focusing_for_cone",
    "plasma_from_laser",
    "parse_scan_csv",
    "ArrayGain",
    "ConeLevel",
    "ConeNullWarning",
    "Direction",
    "FrequencyMap",
    "GratingLobe",
    "Receiver",
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
    "sky_map",
    "squint",
    "steering_delays",
    "steering_report",
    "tolerance",
    "with_delays",
    "Air",
    "BroadbandDetector",
    "FarFieldDeparture",
    "NarrowbandReceiver",
    "NearField",
    "RangeBudget",
    "Surface",
    "attenuate",
    "attenuation_coefficient",
    "detected_energy",
    "far_field_departure",
    "field_at",
    "fields_at",
    "line_scan",
    "magnetic_field_at",
    "oxygen_attenuation",
    "plane_scan",
    "range_budget",
    "received_energy",
    "spectral_fluence",
    "sphere_scan",
    "surface_degree_of_radial_polarization",
    "surface_polarization",
    "water_vapour_attenuation",
    "ConeRange",
    "FarField",
    "Filament",
    "Medium",
    "Plasma",
    "PolarizationMap",
    "band_cone_angle",
    "cone_angle",
    "cone_range",
    "degree_of_radial_polarization",
    "far_field",
    "length_for_cone",
    "polarization_map",
    "source_spectral_energy",
    "spectral_energy",
    "total_energy",
    "unit_vectors",
]
