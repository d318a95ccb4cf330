"""The propagation medium: the indices that set the cone, and the air they come from.

A filament's emission depends on the medium through two numbers: the group index
``n_group`` with which the laser pulse (and so the current it drives) travels along the
column, and the phase index ``n_thz`` of the emitted THz wave. Their difference sets the
phase mismatch along the column and therefore the cone.

:meth:`Medium.air` computes both for real air (Ciddor's optical group index at the laser
wavelength, ITU-R P.453's THz index; :mod:`thzarray.air.indices`) and keeps the air's
conditions (:class:`AirConditions`, its ``conditions``), so that the THz absorption
(:mod:`thzarray.air.absorption`) comes from the same object as the indices. A medium built
from two indices alone (:class:`Medium` directly) carries no air conditions and has no
defined absorption; :meth:`Medium.vacuum` has none to have.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from scipy.constants import c

from thzarray.air.indices import (
    ciddor_group_index,
    p453_refractivity,
    p453_saturation_pressure,
    vapour_density_to_pressure,
    vapour_pressure_to_density,
)
from thzarray.base.checks import check_scalar

__all__ = ["AirConditions", "Medium"]

_T_RANGE = (-40.0, 60.0)       # degC: P.453 and P.676's validity
_P_RANGE = (1e4, 1.2e5)        # Pa: total pressure
_WAVELENGTH_RANGE = (0.3e-6, 1.7e-6)  # m: Ciddor's validity


@dataclass(frozen=True)
class AirConditions:
    """Humid air: temperature, total pressure, water-vapour pressure and CO2 fraction (SI).

    Parameters
    ----------
    temperature_c : float
        Temperature (degC), -40 to 60.
    pressure : float
        Total pressure (Pa), 1e4 to 1.2e5.
    vapour_pressure : float
        Water-vapour partial pressure (Pa), from 0 up to the ITU-R P.453 saturation pressure.
    co2_fraction : float
        CO2 mole fraction (dimensionless), 0 to 2e-3; enters the optical index only.
    """

    temperature_c: float = 15.0
    pressure: float = 101325.0
    vapour_pressure: float = 0.0
    co2_fraction: float = 450e-6

    def __post_init__(self):
        set_ = object.__setattr__
        t = check_scalar("temperature_c", self.temperature_c, low=_T_RANGE[0],
                         high=_T_RANGE[1], unit="degC")
        p = check_scalar("pressure", self.pressure, low=_P_RANGE[0], high=_P_RANGE[1],
                         unit="Pa")
        e_sat = float(p453_saturation_pressure(t, p))
        set_(self, "temperature_c", t)
        set_(self, "pressure", p)
        set_(self, "vapour_pressure", check_scalar("vapour_pressure", self.vapour_pressure,
                                                   low=0.0, high=e_sat, unit="Pa"))
        set_(self, "co2_fraction", check_scalar("co2_fraction", self.co2_fraction, low=0.0,
                                                high=2e-3))

    @classmethod
    def from_relative_humidity(cls, temperature_c: float = 15.0, pressure: float = 101325.0,
                               relative_humidity: float = 0.0,
                               co2_fraction: float = 450e-6) -> "AirConditions":
        """Air at a relative humidity (fraction 0 to 1): ``e = RH e_s`` (ITU-R P.453 eq. (9))."""
        rh = check_scalar("relative_humidity", relative_humidity, low=0.0, high=1.0)
        t = check_scalar("temperature_c", temperature_c, low=_T_RANGE[0], high=_T_RANGE[1],
                         unit="degC")
        p = check_scalar("pressure", pressure, low=_P_RANGE[0], high=_P_RANGE[1], unit="Pa")
        return cls(t, p, rh * float(p453_saturation_pressure(t, p)), co2_fraction)

    @classmethod
    def from_vapour_density(cls, temperature_c: float = 15.0, pressure: float = 101325.0,
                            vapour_density: float = 7.5e-3,
                            co2_fraction: float = 450e-6) -> "AirConditions":
        """Air at a water-vapour density (kg/m^3): ``e = rho T / 216.7`` (ITU-R P.453 eq. (4))."""
        rho = check_scalar("vapour_density", vapour_density, low=0.0, high=0.2, unit="kg/m^3")
        t = check_scalar("temperature_c", temperature_c, low=_T_RANGE[0], high=_T_RANGE[1],
                         unit="degC")
        return cls(t, pressure, float(vapour_density_to_pressure(rho, t)), co2_fraction)

    @property
    def dry_pressure(self) -> float:
        """Partial pressure of dry air (Pa): total minus vapour pressure."""
        return self.pressure - self.vapour_pressure

    @property
    def relative_humidity(self) -> float:
        """Vapour pressure over the P.453 saturation pressure (fraction)."""
        return self.vapour_pressure / float(p453_saturation_pressure(self.temperature_c,
                                                                     self.pressure))

    @property
    def vapour_density(self) -> float:
        """Water-vapour density (kg/m^3), ``rho = 216.7 e / T`` (P.453 eq. (4), SI)."""
        return float(vapour_pressure_to_density(self.vapour_pressure, self.temperature_c))


@dataclass(frozen=True)
class Medium:
    """Indices that set a filament's phase matching, and the air they come from.

    Parameters
    ----------
    n_group : float
        Group index of the driving optical pulse (the current travels at c / n_group),
        1 to 2.
    n_thz : float
        Phase index of the THz wave, 1 to 4.
    conditions : AirConditions, optional
        The air's conditions when the indices come from :meth:`air`; None for a medium
        given by its indices alone (no absorption is defined for it) or for vacuum.
    laser_wavelength : float, optional
        Vacuum wavelength of the driving laser (m) at which ``n_group`` was computed.
    """

    n_group: float = 1.0
    n_thz: float = 1.0
    conditions: AirConditions | None = None
    laser_wavelength: float | None = None

    def __post_init__(self):
        object.__setattr__(self, "n_group", check_scalar("n_group", self.n_group, low=1.0,
                                                         high=2.0))
        object.__setattr__(self, "n_thz", check_scalar("n_thz", self.n_thz, low=1.0, high=4.0))
        if self.conditions is not None and not isinstance(self.conditions, AirConditions):
            raise ValueError(f"conditions = {type(self.conditions).__name__}; allowed: "
                             "AirConditions or None")
        if self.laser_wavelength is not None:
            object.__setattr__(self, "laser_wavelength", check_scalar(
                "laser_wavelength", self.laser_wavelength, low=_WAVELENGTH_RANGE[0],
                high=_WAVELENGTH_RANGE[1], unit="m"))

    @classmethod
    def vacuum(cls) -> "Medium":
        """Both indices equal to one, no air."""
        return cls(1.0, 1.0)

    @classmethod
    def air(cls, temperature_c: float = 15.0, pressure: float = 101325.0,
            relative_humidity: float = 0.0, co2_fraction: float = 450e-6,
            laser_wavelength: float = 800e-9) -> "Medium":
        """Real air: Ciddor group index at the laser wavelength, P.453 THz index, conditions kept.

        Parameters
        ----------
        temperature_c : float
            Temperature (degC), -40 to 60.
        pressure : float
            Total pressure (Pa), 1e4 to 1.2e5.
        relative_humidity : float
            Relative humidity as a fraction, 0 to 1.
        co2_fraction : float
            CO2 mole fraction, used by Ciddor's formula.
        laser_wavelength : float
            Vacuum wavelength of the driving laser (m), 0.3e-6 to 1.7e-6.

        Returns
        -------
        Medium
        """
        return cls.of_air(AirConditions.from_relative_humidity(
            temperature_c, pressure, relative_humidity, co2_fraction), laser_wavelength)

    @classmethod
    def of_air(cls, air: AirConditions, laser_wavelength: float = 800e-9) -> "Medium":
        """The medium of given air conditions (Ciddor group index, P.453 THz index)."""
        if not isinstance(air, AirConditions):
            raise ValueError(f"air = {type(air).__name__}; allowed: AirConditions")
        wl = check_scalar("laser_wavelength", laser_wavelength, low=_WAVELENGTH_RANGE[0],
                          high=_WAVELENGTH_RANGE[1], unit="m")
        n_group = float(ciddor_group_index(wl, air.temperature_c, air.pressure,
                                           air.relative_humidity, air.co2_fraction))
        n_thz = 1.0 + 1e-6 * float(p453_refractivity(air.temperature_c, air.dry_pressure,
                                                     air.vapour_pressure))
        return cls(n_group, n_thz, air, wl)

    def with_humidity(self, relative_humidity: float) -> "Medium":
        """The same air at another relative humidity (indices recomputed).

        Raises ValueError for a medium without air conditions.
        """
        if self.conditions is None:
            raise ValueError("medium = indices without air conditions; allowed: a Medium "
                             "from Medium.air(...) to change its humidity")
        now = self.conditions
        air = AirConditions.from_relative_humidity(now.temperature_c, now.pressure,
                                                   relative_humidity, now.co2_fraction)
        return Medium.of_air(air, self.laser_wavelength)

    def with_group_index(self, n_group: float) -> "Medium":
        """A copy whose driver travels at c / ``n_group`` (e.g. with the plasma's share)."""
        return replace(self, n_group=n_group)

    @property
    def is_vacuum(self) -> bool:
        """True for the vacuum (both indices 1, no air)."""
        return self.conditions is None and self.n_group == 1.0 and self.n_thz == 1.0

    @property
    def mismatch(self) -> float:
        """Index mismatch ``n_group - n_thz`` (dimensionless)."""
        return self.n_group - self.n_thz

    def coherence_length(self, freq):
        """Length over which the drive and the THz wave slip by half a period (m).

        .. math:: L_c = \\frac{c}{2 f |n_g - n_T|}

        Infinite when the indices are equal.
        """
        f = np.asarray(freq, dtype=float)
        with np.errstate(divide="ignore"):
            return c / (2 * f * abs(self.mismatch))
