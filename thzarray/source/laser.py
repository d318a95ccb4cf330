r"""From laser settings to a plasma column: self-focusing, collapse, ionization, focusing.

Users set a pulse energy, a duration, a beam size and a lens; the emission models need a
plasma length, its position and an electron density. This module makes that estimate in
four documented steps, each with its assumptions and range of validity.

1. Critical power for self-focusing (J. H. Marburger, Prog. Quantum Electron. 4, 35 (1975)),

   .. math:: P_{cr} = \frac{3.77\,\lambda^2}{8\pi n_0 n_2}.

   The Kerr index of air is uncertain: :data:`N2_AIR` = 3.2e-19 cm^2/W at 800 nm, with a
   spread of about a factor :data:`N2_AIR_SPREAD` = 2 in the literature, so P_cr (about
   3 GW at 800 nm) and everything below inherit that factor.
2. Collapse distance of a collimated Gaussian beam (Marburger, same paper),

   .. math:: z_c = \frac{0.367\,z_R}{\sqrt{\left[(P/P_{cr})^{1/2} - 0.852\right]^2 - 0.0219}},
             \qquad z_R = \frac{\pi n_0 w_0^2}{\lambda},
             \qquad \frac{1}{z_f} = \frac{1}{z_c} + \frac{1}{f}\ \text{(lens of focal length f)}.

   Beam-radius convention: ``beam_radius`` is the 1/e^2 *intensity* radius w0 of the
   collimated beam, :math:`I \propto e^{-2r^2/w_0^2}` (the same number as the 1/e *field*
   radius). With it the check w0 = 5 mm, P/P_cr = 10, 800 nm gives 15.6 m and, with
   f = 2 m, 1.77 m; the same formula fed with the 1/e intensity radius (w0/sqrt 2) would
   halve z_R and give 7.8 m.
   The formula is a fit to numerical solutions for P/P_cr from just above 1 to a few tens;
   below :data:`MARBURGER_MIN_POWER_RATIO` (the bracket <= 0.0219) the beam does not
   collapse and the functions raise ``ValueError``.
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
   (:mod:`thzarray.source.ionization`).

Coordinates: the lens (or the laser exit for a collimated beam) is at the origin and the
beam travels along +z, so the :class:`~thzarray.source.filament.Filament` starts at
(0, 0, z_f).

The settings a user chooses are one frozen :class:`Pulse` (energy, duration, beam radius,
wavelength, lens); the properties of air that the estimate rests on (Kerr index, clamped
intensity, core radius, collision rate) are one frozen :class:`FilamentationModel`.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from scipy.constants import c, hbar

from thzarray.base.checks import as_float_array, check_scalar
from thzarray.source.filament import Filament
from thzarray.source.ionization import (
    AIR_DENSITY,
    CLAMPED_INTENSITY,
    O2_FRACTION,
    O2_PHOTONS,
    electron_density,
    keldysh_parameter,
)
from thzarray.source.plasma import Plasma, fwhm_to_gaussian_tau

__all__ = [
    "FilamentationModel",
    "MARBURGER_MIN_POWER_RATIO",
    "N2_AIR",
    "N2_AIR_SPREAD",
    "PlasmaEstimate",
    "Pulse",
    "collapse_distance",
    "column_extent",
    "critical_power",
    "focused_beam",
    "peak_power",
    "plasma_from_laser",
]

N2_AIR = 3.2e-23
"""Kerr index of air at 800 nm (m^2/W): 3.2e-19 cm^2/W, uncertain by a factor ~2."""
N2_AIR_SPREAD = 2.0
"""Factor by which published n2 values of air differ from :data:`N2_AIR` either way."""

_MARBURGER_A, _MARBURGER_B, _MARBURGER_C = 0.367, 0.852, 0.0219
MARBURGER_MIN_POWER_RATIO = (_MARBURGER_B + np.sqrt(_MARBURGER_C)) ** 2
"""Smallest P/P_cr for which Marburger's formula predicts a collapse (about 1.0000)."""

_MAX_SINGLE_FILAMENT_RATIO = 10.0
_MIN_F_NUMBER = 30.0


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
        return float(_rayleigh_range(self.beam_radius, self.wavelength))


@dataclass(frozen=True)
class FilamentationModel:
    """The properties of air that turn a pulse into a plasma column (SI).

    Parameters
    ----------
    n2 : float
        Kerr index of air (m^2/W), > 0; :data:`N2_AIR` at 800 nm by default.
    clamped_intensity : float
        Intensity inside the filament (W/m^2), 1e12 to 1e21.
    core_radius : float
        Radius of the plasma core (m), 1e-7 to 1e-2; about 50 um (common practice, no source).
    collision_rate : float
        Electron collision rate (s^-1), 0 to 1e15; 1e12 to 5e12 at 1 atm (common practice,
        no source).
    """

    n2: float = N2_AIR
    clamped_intensity: float = CLAMPED_INTENSITY
    core_radius: float = 50e-6
    collision_rate: float = 2e12

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

    def critical_power(self, wavelength: float = 800e-9) -> float:
        """P_cr (W) at ``wavelength`` with this model's Kerr index."""
        return float(critical_power(wavelength, self.n2))


def critical_power(wavelength=800e-9, n2=N2_AIR, n0: float = 1.0):
    """Critical power for self-focusing of a Gaussian beam (W).

    Parameters
    ----------
    wavelength : array_like
        Vacuum wavelength (m), 1e-7 to 2e-5.
    n2 : array_like
        Kerr index (m^2/W), > 0; :data:`N2_AIR` for air at 800 nm.
    n0 : float
        Linear refractive index, 1 to 4.

    Returns
    -------
    ndarray
        P_cr (W), shape ``np.broadcast_shapes(wavelength.shape, n2.shape)``.

    Notes
    -----
    .. math:: P_{cr} = \\frac{3.77\\,\\lambda^2}{8\\pi n_0 n_2}

    J. H. Marburger, Prog. Quantum Electron. 4, 35 (1975).
    """
    wl = as_float_array("wavelength", wavelength, low=1e-7, high=2e-5, unit="m")
    n2 = as_float_array("n2", n2, low=0.0, low_open=True, high=1e-15, unit="m^2/W")
    n0 = check_scalar("n0", n0, low=1.0, high=4.0)
    return 3.77 * wl**2 / (8 * np.pi * n0 * n2)


def peak_power(energy, duration):
    """Peak power (W) of a Gaussian pulse of energy ``energy`` (J) and intensity FWHM (s).

    .. math:: P = \\frac{E}{\\tau\\sqrt{\\pi}},\\qquad
              \\tau = \\frac{\\mathrm{FWHM}}{2\\sqrt{\\ln 2}}
    """
    energy = as_float_array("energy", energy, low=0.0, low_open=True, unit="J")
    duration = as_float_array("duration", duration, low=1e-15, high=1e-11, unit="s")
    return energy / (fwhm_to_gaussian_tau(duration) * np.sqrt(np.pi))


def _rayleigh_range(beam_radius, wavelength, n0=1.0):
    return np.pi * n0 * beam_radius**2 / wavelength


def _checked_ratio(power, p_cr):
    ratio = np.asarray(power / p_cr, dtype=float)
    bad = ratio <= MARBURGER_MIN_POWER_RATIO
    if np.any(bad):
        first = ratio[bad].ravel()[0]
        raise ValueError(f"power / critical_power = {first:.6g} is not allowed; allowed: "
                         f"P/P_cr > {MARBURGER_MIN_POWER_RATIO:.5f} (below it the beam does "
                         "not self-focus to a collapse)")
    return ratio


def collapse_distance(power, beam_radius, wavelength=800e-9, n2=N2_AIR, focal_length=None,
                      n0: float = 1.0):
    """Distance at which a collimated Gaussian beam self-focuses to a collapse (m).

    Parameters
    ----------
    power : array_like
        Peak power (W); P/P_cr must exceed :data:`MARBURGER_MIN_POWER_RATIO`.
    beam_radius : array_like
        1/e^2 intensity radius w0 of the collimated input beam (m), 1e-5 to 1.
    wavelength : float
        Vacuum wavelength (m).
    n2 : float
        Kerr index (m^2/W).
    focal_length : array_like, optional
        Focal length of a converging lens at the beam waist (m), > 0; none by default.
    n0 : float
        Linear refractive index.

    Returns
    -------
    ndarray
        z_c, or z_f with a lens (m), shape of the broadcast inputs.

    Raises
    ------
    ValueError
        When P/P_cr is at or below the collapse threshold.

    Notes
    -----
    .. math:: z_c = \\frac{0.367\\,z_R}{\\sqrt{[(P/P_{cr})^{1/2} - 0.852]^2 - 0.0219}},\\quad
              z_R = \\frac{\\pi n_0 w_0^2}{\\lambda},\\quad
              \\frac1{z_f} = \\frac1{z_c} + \\frac1f

    J. H. Marburger, Prog. Quantum Electron. 4, 35 (1975); w0 is the 1/e^2 intensity radius.
    """
    power = as_float_array("power", power, low=0.0, low_open=True, unit="W")
    w0 = as_float_array("beam_radius", beam_radius, low=1e-5, high=1.0, unit="m")
    p_cr = critical_power(wavelength, n2, n0)
    ratio = _checked_ratio(power, p_cr)
    z_r = _rayleigh_range(w0, np.asarray(wavelength, float), n0)
    z_c = _MARBURGER_A * z_r / np.sqrt((np.sqrt(ratio) - _MARBURGER_B) ** 2 - _MARBURGER_C)
    if focal_length is None:
        return z_c
    f = as_float_array("focal_length", focal_length, low=0.0, low_open=True, high=1e4, unit="m")
    return 1.0 / (1.0 / z_c + 1.0 / f)


def focused_beam(beam_radius, focal_length, wavelength=800e-9):
    """Waist radius, waist position and Rayleigh range of a focused Gaussian beam (m).

    A collimated beam (waist w0 at the lens, Rayleigh range z_R) behind a thin lens of focal
    length f (S. A. Self, Appl. Opt. 22, 658 (1983), eqs. 9 and 10 with the input waist at
    the lens):

    .. math:: w_f = \\frac{w_0}{\\sqrt{1 + (z_R/f)^2}},\\qquad
              d = \\frac{f}{1 + (f/z_R)^2},\\qquad z_{R,f} = \\frac{\\pi w_f^2}{\\lambda}

    Returns
    -------
    (waist, position, rayleigh_range) : tuple of ndarray
        Broadcast shape of the inputs.
    """
    w0 = as_float_array("beam_radius", beam_radius, low=1e-5, high=1.0, unit="m")
    f = as_float_array("focal_length", focal_length, low=0.0, low_open=True, high=1e4, unit="m")
    z_r = _rayleigh_range(w0, wavelength)
    waist = w0 / np.sqrt(1 + (z_r / f) ** 2)
    return waist, f / (1 + (f / z_r) ** 2), _rayleigh_range(waist, wavelength)


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
    z_c = collapse_distance(safe_power, w0, wavelength, model.n2)
    if focal_length is None:
        onset = z_c
        geo_end = z_c + _rayleigh_range(w0, wavelength)
        geo_name = "input Rayleigh range"
    else:
        onset = 1.0 / (1.0 / z_c + 1.0 / focal_length)
        _, focus, z_rf = focused_beam(w0, focal_length, wavelength)
        geo_end = np.maximum(focus, onset) + z_rf
        geo_name = "focal region"
    n_e = electron_density(model.clamped_intensity, duration)
    loss = n_e * np.pi * model.core_radius**2 * O2_PHOTONS * hbar * 2 * np.pi * c / wavelength
    budget = np.maximum(energy - p_cr * fwhm_to_gaussian_tau(duration) * np.sqrt(np.pi),
                        0.0) / loss
    end = np.minimum(geo_end, onset + budget)
    limited_by = np.where(onset + budget < geo_end, "energy budget", geo_name)
    nan = np.where(ok, 1.0, np.nan)
    return dict(onset=onset * nan, end=end * nan, limited_by=limited_by, budget=budget * nan,
                z_c=z_c * nan, power=power, p_cr=p_cr, n_e=n_e, loss=loss)


def plasma_from_laser(pulse: Pulse, model: FilamentationModel | None = None):
    """Estimate the plasma column made by a pulse: a Filament, its Plasma, and a summary.

    Parameters
    ----------
    pulse : Pulse
        The laser settings (energy, duration, beam radius, wavelength, lens).
    model : FilamentationModel, optional
        Kerr index, clamped intensity, core radius and collision rate of air; the defaults
        of :class:`FilamentationModel`.

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
    """
    if not isinstance(pulse, Pulse):
        raise ValueError(f"pulse = {type(pulse).__name__}; allowed: a Pulse(energy, duration, "
                         "beam_radius, wavelength, focal_length)")
    model = FilamentationModel() if model is None else model
    _checked_ratio(pulse.peak_power, critical_power(pulse.wavelength, model.n2))
    col = {k: v.item() for k, v in column_extent(pulse, model).items()}
    ratio = col["power"] / col["p_cr"]
    notes = []
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
    estimate = PlasmaEstimate(
        peak_power=col["power"], critical_power=col["p_cr"], power_ratio=ratio,
        collapse_distance=col["z_c"], onset=col["onset"], end=col["end"], length=length,
        limited_by=str(col["limited_by"]), budget_length=col["budget"],
        loss_per_metre=col["loss"], electron_density=col["n_e"],
        ionized_fraction=col["n_e"] / (O2_FRACTION * AIR_DENSITY),
        keldysh=float(keldysh_parameter(model.clamped_intensity, pulse.wavelength)),
        notes=tuple(notes))
    filament = Filament(length, start=(0.0, 0.0, col["onset"]))
    plasma = Plasma(electron_density=col["n_e"], collision_rate=model.collision_rate,
                    pulse_duration=pulse.duration, peak_intensity=model.clamped_intensity,
                    laser_wavelength=pulse.wavelength, radius=model.core_radius)
    return filament, plasma, estimate
