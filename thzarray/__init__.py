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

__version__ = "0.1.0"

__all__ = [
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
