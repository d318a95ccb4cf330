r"""From laser settings to a plasma column: self-focusing, collapse, ionization, focusing.

Users set a pulse energy, a duration, a beam size and a lens; the emission models need a
plasma length, its position and an electron density. This module makes that estimate in
five documented steps, each with its assumptions and range of validity.

1. Critical power for self-focusing, Marburger's :math:`3.77\lambda^2/(8\pi n_0 n_2)`
   (:func:`~thzarray.source.selffocusing.critical_power`). The Kerr index of air is
   uncertain: published values run from 0.8e-19 to 5e-19 cm^2/W around the nominal 3.2e-19
   (:mod:`thzarray.source.constants`), so P_cr (3.0 GW nominal) and everything below
   inherit a factor 4 down and 1.6 up.
2. Collapse distance of a collimated Gaussian beam, Marburger's fit, with the lens rule
   :math:`1/z_f = 1/z_c + 1/f` (:func:`~thzarray.source.selffocusing.collapse_distance`;
   ``beam_radius`` is the 1/e^2 intensity radius, and the factor-2 ambiguity of the
   published beam-radius convention is the model's ``collapse_factor``).
3. Plasma onset and length (a heuristic, labelled as such). The column starts at the
   nonlinear focus z_f. It ends at the end of the focal region, the linear focus of the
   Gaussian beam plus one Rayleigh range of the focused beam (S. A. Self, Appl. Opt. 22,
   658 (1983) for the focus), or, without a lens, one Rayleigh range of the input beam
   beyond z_c (common practice, no source), unless the energy budget runs out first: the
   pulse loses :math:`K\hbar\omega_0` per electron created (multiphoton absorption only;
   heating of the plasma neglected, so this loss is a lower bound and the budget length an
   upper bound) and the filament stops when the power falls to P_cr. Validity: a single
   filament for 1 < P/P_cr < about 10 (multiple filaments beyond, common practice, no
   source) and moderate focusing, f/(2 w0) >= 30 (tighter focusing raises the clamped
   intensity and density above the values assumed in step 4).
4. Electron density from the clamped intensity by eight-photon ionization of O2
   (:mod:`thzarray.source.ionization`), uncertain by more than an order of magnitude.
5. The driver's group index in the column. The plasma slows the pulse's envelope: it adds
   :math:`n_e/(2n_c)` to the air's optical group index
   (:func:`~thzarray.source.plasma.plasma_group_index_shift`), 3.7e-5 at the nominal
   density, five times the dry-air mismatch :math:`n_g - n_T`. :class:`PlasmaEstimate`
   reports the air's, the plasma's and the summed group index; pass ``group_index`` to the
   cone functions (:mod:`thzarray.field.cone`) to use it. Only the trailing part of the
   pulse travels in the full density, and the Kerr effect (:math:`n_2 I` = 1.6e-5 at the
   clamped intensity) and refocusing cycles change the speed of the ionization front by
   similar amounts that are not modelled: take the summed index as an estimate, the air's
   alone as the other bound.

Coordinates: the lens (or the laser exit for a collimated beam) is at the origin and the
beam travels along +z, so the :class:`~thzarray.source.filament.Filament` starts at
(0, 0, z_f).

The settings a user chooses are one frozen :class:`Pulse` (energy, duration, beam radius,
wavelength, lens); the properties of air that the estimate rests on (Kerr index, O2
cross-section, clamped intensity, core radius, collision rate, collapse convention) are one
frozen :class:`FilamentationModel`, whose published spreads
(:meth:`FilamentationModel.variants`) :func:`thzarray.source.spread.energy_range`
propagates to an absolute energy. The self-focusing functions live in
:mod:`thzarray.source.selffocusing` and are re-exported here.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from scipy.constants import c, hbar

from thzarray.air.medium import Medium
from thzarray.base.checks import as_float_array, check_scalar
from thzarray.source.constants import PUBLISHED
from thzarray.source.filament import Filament
from thzarray.source.ionization import (
    AIR_DENSITY,
    CLAMPED_INTENSITY,
    O2_FRACTION,
    O2_PHOTONS,
    O2_SIGMA_8,
    electron_density,
    keldysh_parameter,
)
from thzarray.source.plasma import (
    Plasma,
    critical_density,
    finite_radius_note,
    fwhm_to_gaussian_tau,
    plasma_group_index_shift,
)
from thzarray.source.selffocusing import (
    MARBURGER_MIN_POWER_RATIO,
    N2_AIR,
    check_power_ratio,
    collapse_distance,
    critical_power,
    focused_beam,
    peak_power,
    rayleigh_range,
)

__all__ = [
    "FilamentationModel",
    "MARBURGER_MIN_POWER_RATIO",
    "N2_AIR",
    "PlasmaEstimate",
    "Pulse",
    "collapse_distance",
    "column_extent",
    "critical_power",
    "focused_beam",
    "peak_power",
    "plasma_from_laser",
]

_MAX_SINGLE_FILAMENT_RATIO = 10.0
_MIN_F_NUMBER = 30.0
# Extra phase (rad) that the plasma's share of the group index may add over the column at
# the plasma frequency before the estimate says that the cone depends on it.
_PLASMA_SLIP_NOTE = 1.0


@dataclass(frozen=True)
class Pulse:
    """The laser settings a user chooses (SI).

    Parameters
    ----------
    energy : float
        Pulse energy (J), > 0 and <= 10.
    duration : float
        Intensity FWHM of the Gaussian pulse (s), 1e-15 to 1e-11.
    beam_radius : float
        1/e^2 intensity radius of the collimated beam at the lens (m), 1e-5 to 1.
    wavelength : float
        Vacuum wavelength (m), 1e-7 to 2e-5; the ionization model is for 800 nm.
    focal_length : float, optional
        Focal length of the lens (m), > 0 and <= 1e4; None for a collimated beam.
    """

    energy: float
    duration: float = 50e-15
    beam_radius: float = 5e-3
    wavelength: float = 800e-9
    focal_length: float | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "energy", check_scalar("energy", self.energy, low=0.0, low_open=True,
                                          high=10.0, unit="J"))
        set_(self, "duration", check_scalar("duration", self.duration, low=1e-15, high=1e-11,
                                            unit="s"))
        set_(self, "beam_radius", check_scalar("beam_radius", self.beam_radius, low=1e-5,
                                               high=1.0, unit="m"))
        set_(self, "wavelength", check_scalar("wavelength", self.wavelength, low=1e-7,
                                              high=2e-5, unit="m"))
        if self.focal_length is not None:
            set_(self, "focal_length", check_scalar("focal_length", self.focal_length,
                                                    low=0.0, low_open=True, high=1e4,
                                                    unit="m"))

    def replace(self, **changes) -> "Pulse":
        """A copy with some settings changed (validated again)."""
        return replace(self, **changes)

    @property
    def peak_power(self) -> float:
        """Peak power (W) of the Gaussian pulse, :func:`peak_power`."""
        return float(peak_power(self.energy, self.duration))

    @property
    def rayleigh_range(self) -> float:
        """Rayleigh range pi w0^2 / lambda of the collimated input beam (m)."""
        return float(rayleigh_range(self.beam_radius, self.wavelength))


@dataclass(frozen=True)
class FilamentationModel:
    """The properties of air that turn a pulse into a plasma column (SI).

    The defaults are the nominal values of :data:`thzarray.source.constants.PUBLISHED`;
    their published spread (low / nominal / high, sources and "from memory" marks in
    :mod:`thzarray.source.constants`):

    =================  =========  =========  =========  ==============  =======================
    parameter          low        nominal    high       unit            source
    =================  =========  =========  =========  ==============  =======================
    n2                 0.8e-23    3.2e-23    5e-23      m^2/W           from memory
    o2_cross_section   2.88e-131  3.3e-130   3.6e-130   W^-8 m^16 s^-1  Sharma 2018; low: 2007
    clamped_intensity  4e17       5e17       1e18       W/m^2           from memory
    core_radius        25e-6      50e-6      100e-6     m               from memory
    collision_rate     1e12       2e12       5e12       1/s             no source
    collapse_factor    1          1          2          1               beam-radius convention
    =================  =========  =========  =========  ==============  =======================

    Parameters
    ----------
    n2 : float
        Kerr index of air (m^2/W), > 0; :data:`N2_AIR` at 800 nm by default.
    clamped_intensity : float
        Intensity inside the filament (W/m^2), 1e12 to 1e21.
    core_radius : float
        Radius of the plasma core (m), 1e-7 to 1e-2.
    collision_rate : float
        Electron collision rate (s^-1), 0 to 1e15.
    o2_cross_section : float
        Eight-photon ionization cross-section of O2 (W^-8 m^16 s^-1), > 0.
    collapse_factor : float
        Factor on Marburger's 0.367 in the collapse distance, 0.25 to 4: 1 for the
        convention of :func:`collapse_distance`, 2 for the reading that puts the 1/e^2
        radius where the 1/e intensity radius belongs.
    """

    n2: float = N2_AIR
    clamped_intensity: float = CLAMPED_INTENSITY
    core_radius: float = PUBLISHED["core_radius"].nominal
    collision_rate: float = PUBLISHED["collision_rate"].nominal
    o2_cross_section: float = O2_SIGMA_8
    collapse_factor: float = PUBLISHED["collapse_factor"].nominal

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "n2", check_scalar("n2", self.n2, low=0.0, low_open=True, high=1e-15,
                                      unit="m^2/W"))
        set_(self, "clamped_intensity", check_scalar("clamped_intensity",
                                                     self.clamped_intensity, low=1e12,
                                                     high=1e21, unit="W/m^2"))
        set_(self, "core_radius", check_scalar("core_radius", self.core_radius, low=1e-7,
                                               high=1e-2, unit="m"))
        set_(self, "collision_rate", check_scalar("collision_rate", self.collision_rate,
                                                  low=0.0, high=1e15, unit="1/s"))
        set_(self, "o2_cross_section", check_scalar("o2_cross_section", self.o2_cross_section,
                                                    low=0.0, low_open=True, high=1e-120,
                                                    unit="W^-8 m^16 s^-1"))
        set_(self, "collapse_factor", check_scalar("collapse_factor", self.collapse_factor,
                                                   low=0.25, high=4.0))

    def critical_power(self, wavelength: float = 800e-9) -> float:
        """P_cr (W) at ``wavelength`` with this model's Kerr index."""
        return float(critical_power(wavelength, self.n2))

    def replace(self, **changes) -> "FilamentationModel":
        """A copy with some constants changed (validated again)."""
        return replace(self, **changes)

    def spread(self) -> dict:
        """Each constant's published (low, this model's value, high), by parameter name.

        The low and high ends are those of :data:`thzarray.source.constants.PUBLISHED`.
        """
        return {name: (v.low, getattr(self, name), v.high) for name, v in PUBLISHED.items()}

    def variants(self) -> tuple:
        """This model with one constant at a time at its published low or high end.

        Returns
        -------
        tuple of (str, str, FilamentationModel)
            ``(name, "low" or "high", model)`` for every constant whose published end
            differs from this model's value, in the order of
            :data:`thzarray.source.constants.PUBLISHED`.
        """
        out = []
        for name, v in PUBLISHED.items():
            for end, value in (("low", v.low), ("high", v.high)):
                if value != getattr(self, name):
                    out.append((name, end, self.replace(**{name: value})))
        return tuple(out)


@dataclass(frozen=True)
class PlasmaEstimate:
    """What :func:`plasma_from_laser` assumed and found (SI units).

    Attributes
    ----------
    peak_power, critical_power : float
        Peak power of the pulse and P_cr (W); ``power_ratio`` is their ratio.
    collapse_distance : float
        Marburger's z_c of the collimated beam (m), without the lens.
    onset, end, length : float
        Where the column starts and ends along +z from the lens (m), and its length.
    limited_by : str
        Which step set the end: ``"focal region"``, ``"input Rayleigh range"`` or
        ``"energy budget"``.
    budget_length : float
        Length after which the energy budget would stop the filament (m).
    loss_per_metre : float
        Energy the pulse loses per metre of plasma (J/m).
    electron_density : float
        n_e (m^-3); ``ionized_fraction`` is n_e over the O2 density.
    keldysh : float
        Keldysh parameter at the clamped intensity.
    air_group_index : float
        Optical group index of the air at the laser wavelength (``medium.n_group``).
    plasma_group_index_shift : float
        What the column's electrons add to it, n_e / (2 n_c)
        (:func:`~thzarray.source.plasma.plasma_group_index_shift`).
    group_index : float
        Their sum: the driver's group index in the column (pass it as ``group_index`` to
        :mod:`thzarray.field.cone` and :mod:`thzarray.inverse.focusing`); an estimate, see
        step 5 of the module docstring.
    kerr_index_shift : float
        n2 times the clamped intensity: the Kerr effect's index change at the peak, a
        measure of what step 5 leaves out (not included in ``group_index``).
    radius_parameter : float
        omega_p a / c of the core (:attr:`~thzarray.source.plasma.Plasma.radius_parameter`).
    notes : tuple of str
        Validity warnings for this estimate (empty when all assumptions hold).
    """

    peak_power: float
    critical_power: float
    power_ratio: float
    collapse_distance: float
    onset: float
    end: float
    length: float
    limited_by: str
    budget_length: float
    loss_per_metre: float
    electron_density: float
    ionized_fraction: float
    keldysh: float
    air_group_index: float
    plasma_group_index_shift: float
    group_index: float
    kerr_index_shift: float
    radius_parameter: float
    notes: tuple = ()


def column_extent(pulse: Pulse, model: FilamentationModel | None = None, *, energy=None,
                  focal_length=None) -> dict:
    """Where the column starts and ends (step 3), on a grid of energies and focal lengths.

    Parameters
    ----------
    pulse : Pulse
        Duration, beam radius and wavelength (and the energy and lens unless overridden).
    model : FilamentationModel, optional
        Defaults to ``FilamentationModel()``.
    energy : array_like, optional
        Pulse energies (J) replacing ``pulse.energy``; broadcast with ``focal_length``.
    focal_length : array_like, optional
        Focal lengths (m) replacing ``pulse.focal_length``.

    Returns
    -------
    dict of ndarray
        ``onset``, ``end`` (m from the lens), ``limited_by`` (text), ``budget`` (budget
        length, m), ``z_c`` (collapse distance without the lens, m), ``power``, ``p_cr`` (W),
        ``n_e`` (m^-3), ``loss`` (J/m); entries with P/P_cr at or below the collapse
        threshold are NaN.
    """
    model = FilamentationModel() if model is None else model
    energy = pulse.energy if energy is None else as_float_array(
        "energy", energy, low=0.0, low_open=True, high=10.0, unit="J")
    if focal_length is None:
        focal_length = pulse.focal_length
    else:
        focal_length = as_float_array("focal_length", focal_length, low=0.0, low_open=True,
                                      high=1e4, unit="m")
    wavelength, w0, duration = pulse.wavelength, pulse.beam_radius, pulse.duration
    power = peak_power(energy, duration)
    p_cr = critical_power(wavelength, model.n2)
    ok = power / p_cr > MARBURGER_MIN_POWER_RATIO
    safe_power = np.where(ok, power, 2 * MARBURGER_MIN_POWER_RATIO * p_cr)
    z_c = collapse_distance(safe_power, w0, wavelength, model.n2,
                            collapse_factor=model.collapse_factor)
    if focal_length is None:
        onset = z_c
        geo_end = z_c + rayleigh_range(w0, wavelength)
        geo_name = "input Rayleigh range"
    else:
        onset = 1.0 / (1.0 / z_c + 1.0 / focal_length)
        _, focus, z_rf = focused_beam(w0, focal_length, wavelength)
        geo_end = np.maximum(focus, onset) + z_rf
        geo_name = "focal region"
    n_e = electron_density(model.clamped_intensity, duration, sigma=model.o2_cross_section)
    loss = n_e * np.pi * model.core_radius**2 * O2_PHOTONS * hbar * 2 * np.pi * c / wavelength
    budget = np.maximum(energy - p_cr * fwhm_to_gaussian_tau(duration) * np.sqrt(np.pi),
                        0.0) / loss
    end = np.minimum(geo_end, onset + budget)
    limited_by = np.where(onset + budget < geo_end, "energy budget", geo_name)
    nan = np.where(ok, 1.0, np.nan)
    return dict(onset=onset * nan, end=end * nan, limited_by=limited_by, budget=budget * nan,
                z_c=z_c * nan, power=power, p_cr=p_cr, n_e=n_e, loss=loss)


def plasma_from_laser(pulse: Pulse, model: FilamentationModel | None = None, *,
                      medium: Medium | None = None):
    """Estimate the plasma column made by a pulse: a Filament, its Plasma, and a summary.

    Parameters
    ----------
    pulse : Pulse
        The laser settings (energy, duration, beam radius, wavelength, lens).
    model : FilamentationModel, optional
        Kerr index, O2 cross-section, clamped intensity, core radius, collision rate and
        collapse convention; the nominal defaults of :class:`FilamentationModel`.
    medium : Medium, optional
        The air, for its optical group index (``medium.n_group``) and THz index; by default
        dry standard air at the pulse's wavelength (:meth:`Medium.air`), or vacuum (with a
        note) for a wavelength outside Ciddor's 0.3-1.7 um.

    Returns
    -------
    filament : Filament
        Uniform column from (0, 0, onset) along +z.
    plasma : Plasma
        Electron density from :func:`electron_density`, with the pulse's duration and the
        clamped intensity.
    estimate : PlasmaEstimate

    Notes
    -----
    The steps and their validity are in the module docstring. Onset :math:`z_f`; end
    :math:`\\min(z_{geo}, z_f + L_E)` with the geometric end :math:`z_{geo}` (focal region or
    input Rayleigh range) and the budget length

    .. math:: L_E = \\frac{E - P_{cr}\\tau\\sqrt\\pi}{n_e \\pi a^2 K\\hbar\\omega_0}.

    The driver's group index in the column is
    :math:`n_{g,air} + n_e/(2 n_c)` (step 5). ``notes`` says when the plasma's share adds
    more than 1 rad of phase over the column at the plasma frequency,
    :math:`2\\pi f_p L\\,n_e/(2n_c)/c > 1` (then the cone of the column depends on it), and
    when the core is thin compared with the skin depth
    (:func:`~thzarray.source.plasma.finite_radius_note`).
    """
    if not isinstance(pulse, Pulse):
        raise ValueError(f"pulse = {type(pulse).__name__}; allowed: a Pulse(energy, duration, "
                         "beam_radius, wavelength, focal_length)")
    model = FilamentationModel() if model is None else model
    check_power_ratio(pulse.peak_power, critical_power(pulse.wavelength, model.n2))
    col = {k: v.item() for k, v in column_extent(pulse, model).items()}
    ratio = col["power"] / col["p_cr"]
    notes = []
    medium = _laser_medium(pulse, medium, notes)
    if ratio > _MAX_SINGLE_FILAMENT_RATIO:
        notes.append(f"P/P_cr = {ratio:.3g} > {_MAX_SINGLE_FILAMENT_RATIO:g}: several "
                     "filaments are likely; this is one effective column")
    w0, focal_length = pulse.beam_radius, pulse.focal_length
    if focal_length is not None and focal_length / (2 * w0) < _MIN_F_NUMBER:
        notes.append(f"f/(2 w0) = {focal_length / (2 * w0):.3g} < {_MIN_F_NUMBER:g}: tight "
                     "focusing; clamped intensity and density are likely higher than assumed")
    if abs(pulse.wavelength - 800e-9) > 50e-9:
        notes.append(f"wavelength = {pulse.wavelength:.4g} m: the O2 ionization model is for "
                     "800 nm")
    length = col["end"] - col["onset"]
    if length <= 0:
        raise ValueError(f"energy = {pulse.energy:g} J leaves no energy above the critical "
                         f"power (P/P_cr = {ratio:.6g}); allowed: P/P_cr > 1")
    filament = Filament(length, start=(0.0, 0.0, col["onset"]))
    plasma = Plasma(electron_density=col["n_e"], collision_rate=model.collision_rate,
                    pulse_duration=pulse.duration, peak_intensity=model.clamped_intensity,
                    laser_wavelength=pulse.wavelength, radius=model.core_radius)
    n_c = float(critical_density(pulse.wavelength))
    if col["n_e"] >= n_c:
        raise ValueError(f"electron density {col['n_e']:.3g} m^-3 >= the critical density "
                         f"{n_c:.3g} m^-3 at wavelength = {pulse.wavelength:.4g} m: the pulse "
                         "cannot travel in its own plasma; allowed: a wavelength or model "
                         "with n_e below n_c")
    shift = float(plasma_group_index_shift(col["n_e"], pulse.wavelength))
    slip = 2 * np.pi * plasma.plasma_frequency * length * shift / c
    if slip > _PLASMA_SLIP_NOTE:
        notes.append(f"the plasma adds {shift:.3g} to the driver's group index "
                     f"({shift / max(abs(medium.mismatch), 1e-300):.3g} times the air's "
                     f"|n_g - n_thz| = {abs(medium.mismatch):.3g}), {slip:.3g} rad over this "
                     "column at the plasma frequency: the cone depends on it; pass "
                     "group_index=estimate.group_index to the cone functions")
    radius_note = finite_radius_note(plasma)
    if radius_note:
        notes.append(radius_note)
    estimate = PlasmaEstimate(
        peak_power=col["power"], critical_power=col["p_cr"], power_ratio=ratio,
        collapse_distance=col["z_c"], onset=col["onset"], end=col["end"], length=length,
        limited_by=str(col["limited_by"]), budget_length=col["budget"],
        loss_per_metre=col["loss"], electron_density=col["n_e"],
        ionized_fraction=col["n_e"] / (O2_FRACTION * AIR_DENSITY),
        keldysh=float(keldysh_parameter(model.clamped_intensity, pulse.wavelength)),
        air_group_index=medium.n_group, plasma_group_index_shift=shift,
        group_index=medium.n_group + shift,
        kerr_index_shift=model.n2 * model.clamped_intensity,
        radius_parameter=plasma.radius_parameter, notes=tuple(notes))
    return filament, plasma, estimate


def _laser_medium(pulse, medium, notes):
    """The air the column forms in (see :func:`plasma_from_laser`)."""
    if medium is not None:
        if not isinstance(medium, Medium):
            raise ValueError(f"medium = {type(medium).__name__}; allowed: a Medium or None")
        return medium
    if 0.3e-6 <= pulse.wavelength <= 1.7e-6:
        return Medium.air(laser_wavelength=pulse.wavelength)
    notes.append(f"wavelength = {pulse.wavelength:.4g} m is outside Ciddor's 0.3-1.7 um: the "
                 "air's group index is taken as 1 (vacuum)")
    return Medium.vacuum()
