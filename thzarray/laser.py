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
4. Electron density from the clamped intensity (about 5e13 W/cm^2 at 800 nm in air: common
   practice, no source), by eight-photon ionization of O2 (ionization energy 12.07 eV, 8 x
   1.55 eV photons) with the rate :math:`W = \sigma_8 I^8`,
   :math:`\sigma_8 = 3.3\times10^{-130}\ \mathrm{W^{-8}\,m^{16}\,s^{-1}}` measured by
   A. Sharma et al., Sci. Rep. 8, 2874 (2018), integrated over a Gaussian pulse:

   .. math:: n_e = n_{O_2}\left[1 - \exp\left(-\sigma_8 I^8 \tau\sqrt{\pi/8}\right)\right],
             \qquad I(t) = I e^{-t^2/\tau^2}.

   The Keldysh parameter at the clamped intensity is about 1.4, between the multiphoton
   and tunnelling limits, where a power law is only an estimate, and n_e grows as I^8 (10 %
   on the clamped intensity is a factor 2.1 on n_e): take n_e as good to an order of
   magnitude. The defaults give about 1.3e17 cm^-3 (2.4 % of the O2 ionized), at the upper
   end of the 1e15 to 1e17 cm^-3 usually quoted (common practice, no source). Nitrogen
   (15.58 eV, 11 photons) contributes far less and is left out.

Coordinates: the lens (or the laser exit for a collimated beam) is at the origin and the
beam travels along +z, so the :class:`~thzarray.filament.Filament` starts at (0, 0, z_f).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c, e, electron_volt, epsilon_0, hbar, k as k_boltzmann, m_e
from scipy.optimize import brentq

from ._validate import as_float_array, check_scalar
from .cone import band_cone_angle, cone_angle, length_for_cone
from .filament import Filament
from .medium import Medium
from .plasma import Plasma, fwhm_to_gaussian_tau

__all__ = [
    "CLAMPED_INTENSITY",
    "FocusingChart",
    "MARBURGER_MIN_POWER_RATIO",
    "N2_AIR",
    "N2_AIR_SPREAD",
    "PlasmaEstimate",
    "collapse_distance",
    "critical_power",
    "electron_density",
    "focused_beam",
    "focusing_chart",
    "focusing_for_cone",
    "keldysh_parameter",
    "peak_power",
    "plasma_from_laser",
    "ponderomotive_energy",
]

N2_AIR = 3.2e-23
"""Kerr index of air at 800 nm (m^2/W): 3.2e-19 cm^2/W, uncertain by a factor ~2."""
N2_AIR_SPREAD = 2.0
"""Factor by which published n2 values of air differ from :data:`N2_AIR` either way."""
CLAMPED_INTENSITY = 5e17
"""Clamped intensity in an air filament at 800 nm (W/m^2); common practice, no source."""

_MARBURGER_A, _MARBURGER_B, _MARBURGER_C = 0.367, 0.852, 0.0219
MARBURGER_MIN_POWER_RATIO = (_MARBURGER_B + np.sqrt(_MARBURGER_C)) ** 2
"""Smallest P/P_cr for which Marburger's formula predicts a collapse (about 1.0000)."""

_O2_IONIZATION_ENERGY = 12.07 * electron_volt  # J (NIST: 12.0697 eV)
_O2_PHOTONS = 8
_O2_SIGMA_8 = 3.3e-130  # W^-8 m^16 s^-1, Sharma et al., Sci. Rep. 8, 2874 (2018)
_O2_FRACTION = 0.2095  # mole fraction of O2 in dry air
_AIR_DENSITY = 101325.0 / (k_boltzmann * 288.15)  # molecules per m^3, 15 degC, 1 atm
_MAX_SINGLE_FILAMENT_RATIO = 10.0
_MIN_F_NUMBER = 30.0


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


def ponderomotive_energy(intensity, wavelength=800e-9):
    """Cycle-averaged quiver energy of a free electron (J), linear polarization.

    .. math:: U_p = \\frac{e^2 E_0^2}{4 m \\omega_0^2}
              = \\frac{e^2 I}{2 c\\,\\varepsilon_0 m\\,\\omega_0^2}

    (F. F. Chen, Introduction to Plasma Physics, ponderomotive-force section.)
    """
    intensity = as_float_array("intensity", intensity, low=0.0, unit="W/m^2")
    w0 = 2 * np.pi * c / check_scalar("wavelength", wavelength, low=1e-7, high=2e-5, unit="m")
    return e**2 * intensity / (2 * c * epsilon_0 * m_e * w0**2)


def keldysh_parameter(intensity, wavelength=800e-9, ionization_energy=_O2_IONIZATION_ENERGY):
    """Keldysh parameter sqrt(U_i / (2 U_p)): >> 1 multiphoton, << 1 tunnelling regime.

    (L. V. Keldysh, Sov. Phys. JETP 20, 1307 (1965).) ``ionization_energy`` in J, O2 by
    default.
    """
    u_i = check_scalar("ionization_energy", ionization_energy, low=0.0, low_open=True, unit="J")
    intensity = as_float_array("intensity", intensity, low=0.0, low_open=True, unit="W/m^2")
    return np.sqrt(u_i / (2 * ponderomotive_energy(intensity, wavelength)))


def electron_density(intensity=CLAMPED_INTENSITY, duration=50e-15, *, sigma=_O2_SIGMA_8,
                     photons=_O2_PHOTONS, neutral_density=_O2_FRACTION * _AIR_DENSITY):
    """Free-electron density left behind by a Gaussian pulse through K-photon ionization.

    Parameters
    ----------
    intensity : array_like
        Peak (clamped) intensity (W/m^2), > 0.
    duration : array_like
        Intensity FWHM of the pulse (s).
    sigma : float
        Generalised cross-section (W^-K m^2K s^-1); O2 at 800 nm by default (Sharma et al.,
        Sci. Rep. 8, 2874 (2018)).
    photons : int
        Number of photons K; 8 for O2 at 800 nm.
    neutral_density : float
        Density of ionizable molecules (m^-3); O2 in air at 15 degC, 1 atm by default.

    Returns
    -------
    ndarray
        n_e (m^-3), broadcast shape of ``intensity`` and ``duration``.

    Notes
    -----
    .. math:: n_e = n_0\\left[1 - \\exp\\left(-\\sigma I^K \\tau\\sqrt{\\pi/K}\\right)\\right],
              \\qquad \\tau = \\frac{\\mathrm{FWHM}}{2\\sqrt{\\ln 2}}

    (the time integral of :math:`\\sigma I^K e^{-K t^2/\\tau^2}`; depletion included).
    """
    intensity = as_float_array("intensity", intensity, low=0.0, low_open=True, high=1e21,
                               unit="W/m^2")
    duration = as_float_array("duration", duration, low=1e-15, high=1e-11, unit="s")
    sigma = check_scalar("sigma", sigma, low=0.0, low_open=True)
    k = int(check_scalar("photons", photons, low=1.0, high=40.0))
    n0 = check_scalar("neutral_density", neutral_density, low=0.0, low_open=True, unit="m^-3")
    tau = fwhm_to_gaussian_tau(duration)
    exponent = sigma * intensity**k * tau * np.sqrt(np.pi / k)
    return n0 * -np.expm1(-exponent)


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


def _column(energy, duration, w0, focal_length, wavelength, n2, clamped_intensity,
            core_radius):
    """Step 3 on broadcast arrays: onset, end (m), what set the end, n_e and loss per metre.

    Entries with P/P_cr at or below the collapse threshold are NaN.
    """
    power = peak_power(energy, duration)
    p_cr = critical_power(wavelength, n2)
    ok = power / p_cr > MARBURGER_MIN_POWER_RATIO
    safe_power = np.where(ok, power, 2 * MARBURGER_MIN_POWER_RATIO * p_cr)
    z_c = collapse_distance(safe_power, w0, wavelength, n2)
    if focal_length is None:
        onset = z_c
        geo_end = z_c + _rayleigh_range(w0, wavelength)
        geo_name = "input Rayleigh range"
    else:
        onset = 1.0 / (1.0 / z_c + 1.0 / focal_length)
        _, focus, z_rf = focused_beam(w0, focal_length, wavelength)
        geo_end = np.maximum(focus, onset) + z_rf
        geo_name = "focal region"
    n_e = electron_density(clamped_intensity, duration)
    loss = n_e * np.pi * core_radius**2 * _O2_PHOTONS * hbar * 2 * np.pi * c / wavelength
    budget = np.maximum(energy - p_cr * fwhm_to_gaussian_tau(duration) * np.sqrt(np.pi),
                        0.0) / loss
    end = np.minimum(geo_end, onset + budget)
    limited_by = np.where(onset + budget < geo_end, "energy budget", geo_name)
    nan = np.where(ok, 1.0, np.nan)
    return dict(onset=onset * nan, end=end * nan, limited_by=limited_by, budget=budget * nan,
                z_c=z_c * nan, power=power, p_cr=p_cr, n_e=n_e, loss=loss)


def plasma_from_laser(energy, duration, beam_radius, focal_length=None, *,
                      wavelength=800e-9, n2=N2_AIR, clamped_intensity=CLAMPED_INTENSITY,
                      core_radius=50e-6, collision_rate=2e12):
    """Estimate the plasma column made by a pulse: a Filament, its Plasma, and a summary.

    Parameters
    ----------
    energy : float
        Pulse energy (J).
    duration : float
        Intensity FWHM of the pulse (s).
    beam_radius : float
        1/e^2 intensity radius of the collimated beam at the lens (m).
    focal_length : float, optional
        Focal length of the lens (m); a collimated beam without one by default.
    wavelength : float
        Laser vacuum wavelength (m); the ionization model is for 800 nm.
    n2 : float
        Kerr index of air (m^2/W).
    clamped_intensity : float
        Intensity inside the filament (W/m^2).
    core_radius : float
        Radius of the plasma core (m); about 50 um (common practice, no source).
    collision_rate : float
        Electron collision rate (s^-1); 1e12 to 5e12 at 1 atm (common practice, no source).

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
    energy = check_scalar("energy", energy, low=0.0, low_open=True, high=10.0, unit="J")
    duration = check_scalar("duration", duration, low=1e-15, high=1e-11, unit="s")
    w0 = check_scalar("beam_radius", beam_radius, low=1e-5, high=1.0, unit="m")
    if focal_length is not None:
        focal_length = check_scalar("focal_length", focal_length, low=0.0, low_open=True,
                                    high=1e4, unit="m")
    radius = check_scalar("core_radius", core_radius, low=1e-7, high=1e-2, unit="m")
    _checked_ratio(peak_power(energy, duration), critical_power(wavelength, n2))
    col = {k: v.item() for k, v in _column(energy, duration, w0, focal_length, wavelength, n2,
                                           clamped_intensity, radius).items()}
    ratio = col["power"] / col["p_cr"]
    notes = []
    if ratio > _MAX_SINGLE_FILAMENT_RATIO:
        notes.append(f"P/P_cr = {ratio:.3g} > {_MAX_SINGLE_FILAMENT_RATIO:g}: several "
                     "filaments are likely; this is one effective column")
    if focal_length is not None and focal_length / (2 * w0) < _MIN_F_NUMBER:
        notes.append(f"f/(2 w0) = {focal_length / (2 * w0):.3g} < {_MIN_F_NUMBER:g}: tight "
                     "focusing; clamped intensity and density are likely higher than assumed")
    if abs(wavelength - 800e-9) > 50e-9:
        notes.append(f"wavelength = {wavelength:.4g} m: the O2 ionization model is for 800 nm")
    length = col["end"] - col["onset"]
    if length <= 0:
        raise ValueError(f"energy = {energy:g} J leaves no energy above the critical power "
                         f"(P/P_cr = {ratio:.6g}); allowed: P/P_cr > 1")
    estimate = PlasmaEstimate(
        peak_power=col["power"], critical_power=col["p_cr"], power_ratio=ratio,
        collapse_distance=col["z_c"], onset=col["onset"], end=col["end"], length=length,
        limited_by=str(col["limited_by"]), budget_length=col["budget"],
        loss_per_metre=col["loss"], electron_density=col["n_e"],
        ionized_fraction=col["n_e"] / (_O2_FRACTION * _AIR_DENSITY),
        keldysh=float(keldysh_parameter(clamped_intensity, wavelength)), notes=tuple(notes))
    filament = Filament(length, start=(0.0, 0.0, col["onset"]))
    plasma = Plasma(electron_density=col["n_e"], collision_rate=collision_rate,
                    pulse_duration=duration, peak_intensity=clamped_intensity,
                    laser_wavelength=wavelength, radius=radius)
    return filament, plasma, estimate


# --- choosing the focusing for a cone ------------------------------------------------------

def _grid_length(focal_length, energy, laser):
    """Column lengths and onsets (m) on a (focal_length, energy) grid (NaN below threshold)."""
    col = _column(np.asarray(energy, float)[None, :], laser["duration"], laser["beam_radius"],
                  np.asarray(focal_length, float)[:, None], laser["wavelength"], laser["n2"],
                  laser["clamped_intensity"], laser["core_radius"])
    return col["end"] - col["onset"], col["onset"]


@dataclass(frozen=True, eq=False)
class FocusingChart:
    """Cone angle at a band versus lens focal length and pulse energy.

    Attributes
    ----------
    focal_length : ndarray, shape (F,)
        Lens focal lengths (m).
    energy : ndarray, shape (E,)
        Pulse energies (J).
    length, onset : ndarray, shape (F, E)
        Column length and start from the lens (m) from the focal-region model of
        :func:`plasma_from_laser` (energy budget not applied: it only binds far above the
        energies of one filament); NaN where P/P_cr is below the collapse threshold.
    cone_angle : ndarray, shape (F, E)
        Cone angle (rad) of the column at the band; NaN where there is no column.
    """

    focal_length: np.ndarray
    energy: np.ndarray
    length: np.ndarray
    onset: np.ndarray
    cone_angle: np.ndarray


def _cone_of_length(length, freq, weights, medium):
    freq = np.asarray(freq, float)
    if freq.ndim == 0:
        return cone_angle(length, freq, medium)
    return band_cone_angle(float(length), freq, weights, medium)


def _laser(duration, beam_radius, wavelength, n2, clamped_intensity, core_radius):
    return dict(
        duration=check_scalar("duration", duration, low=1e-15, high=1e-11, unit="s"),
        beam_radius=check_scalar("beam_radius", beam_radius, low=1e-5, high=1.0, unit="m"),
        wavelength=check_scalar("wavelength", wavelength, low=1e-7, high=2e-5, unit="m"),
        n2=check_scalar("n2", n2, low=0.0, low_open=True, high=1e-15, unit="m^2/W"),
        clamped_intensity=check_scalar("clamped_intensity", clamped_intensity, low=1e12,
                                       high=1e21, unit="W/m^2"),
        core_radius=check_scalar("core_radius", core_radius, low=1e-7, high=1e-2, unit="m"))


def focusing_chart(focal_length, energy, freq, weights=None, *, duration=50e-15,
                   beam_radius=5e-3, wavelength=800e-9, n2=N2_AIR,
                   clamped_intensity=CLAMPED_INTENSITY, core_radius=50e-6,
                   medium: Medium | None = None) -> FocusingChart:
    """Data for a chart of cone angle versus focal length and pulse energy.

    Parameters
    ----------
    focal_length : array_like, shape (F,)
        Lens focal lengths (m), > 0.
    energy : array_like, shape (E,)
        Pulse energies (J), > 0.
    freq : float or array_like, shape (B,)
        One frequency (Hz) or increasing frequencies sampling the receiver band; a band
        uses :func:`thzarray.cone.band_cone_angle`, one frequency
        :func:`thzarray.cone.cone_angle`.
    weights : array_like, shape (B,), optional
        Spectral weight of the band (e.g. the receiver response).
    duration, beam_radius, wavelength, n2, clamped_intensity, core_radius : float
        As for :func:`plasma_from_laser`.
    medium : Medium, optional
        Defaults to vacuum, as in :mod:`thzarray.cone`.

    Returns
    -------
    FocusingChart
        Arrays on the (focal_length, energy) grid.
    """
    medium = Medium.vacuum() if medium is None else medium
    laser = _laser(duration, beam_radius, wavelength, n2, clamped_intensity, core_radius)
    f = as_float_array("focal_length", focal_length, low=0.0, low_open=True, high=1e4, unit="m")
    en = as_float_array("energy", energy, low=0.0, low_open=True, high=10.0, unit="J")
    if f.ndim != 1 or en.ndim != 1:
        raise ValueError(f"focal_length, energy have shapes {f.shape}, {en.shape}; allowed: "
                         "1-D arrays")
    length, onset = _grid_length(f, en, laser)
    cone = np.full(length.shape, np.nan)
    for idx in zip(*np.nonzero(np.isfinite(length))):
        cone[idx] = _cone_of_length(length[idx], freq, weights, medium)
    return FocusingChart(f, en, length, onset, cone)


def focusing_for_cone(angle, energy, freq, weights=None, *, duration=50e-15, beam_radius=5e-3,
                      wavelength=800e-9, n2=N2_AIR, clamped_intensity=CLAMPED_INTENSITY,
                      core_radius=50e-6, medium: Medium | None = None,
                      focal_range=(0.05, 50.0)):
    """Lens focal length (m) that gives a wanted cone angle at each pulse energy.

    The wanted column length follows from the cone (exactly, by
    :func:`thzarray.cone.length_for_cone` for one frequency, or by root finding on
    :func:`thzarray.cone.band_cone_angle` for a band); the focal length then from the
    column model of :func:`plasma_from_laser` by root finding (the column length does not
    decrease with f).

    Parameters
    ----------
    angle : float
        Wanted cone angle (rad).
    energy : array_like, shape (E,)
        Pulse energies (J).
    freq, weights, duration, beam_radius, wavelength, n2, clamped_intensity, core_radius, medium
        As for :func:`focusing_chart`.
    focal_range : (float, float)
        Focal lengths searched (m).

    Returns
    -------
    focal_length : ndarray, shape (E,)
        NaN where no focal length in ``focal_range`` gives the column (or P/P_cr is too low).
    length : float
        The column length (m) that gives the cone.
    """
    medium = Medium.vacuum() if medium is None else medium
    laser = _laser(duration, beam_radius, wavelength, n2, clamped_intensity, core_radius)
    angle = check_scalar("angle", angle, low=0.0, low_open=True, high=np.pi / 2, unit="rad")
    en = as_float_array("energy", energy, low=0.0, low_open=True, high=10.0, unit="J")
    f_lo, f_hi = (check_scalar("focal_range", v, low=0.0, low_open=True, high=1e4, unit="m")
                  for v in focal_range)
    freq_arr = np.asarray(freq, float)
    if freq_arr.ndim == 0:
        target = float(length_for_cone(angle, freq_arr, medium))
    else:
        target = _band_length_for_cone(angle, freq_arr, weights, medium)
    out = np.full(en.shape, np.nan)
    for i, energy_i in np.ndenumerate(en):
        def gap(f, energy_i=energy_i):
            return float(_grid_length([f], [energy_i], laser)[0][0, 0]) - target
        lo, hi = gap(f_lo), gap(f_hi)
        if np.isfinite(lo) and np.isfinite(hi) and lo * hi <= 0:
            out[i] = brentq(gap, f_lo, f_hi, xtol=1e-12, rtol=1e-12)
    return out, target


def _band_length_for_cone(angle, freq, weights, medium):
    """Column length whose band cone equals ``angle`` (bracketed by the single-f lengths)."""
    lengths = length_for_cone(angle, freq, medium)
    lo, hi = 0.5 * float(np.min(lengths)), 2.0 * float(np.max(lengths))

    def gap(length):
        return band_cone_angle(length, freq, weights, medium) - angle

    if gap(lo) * gap(hi) > 0:
        raise ValueError(f"angle = {np.degrees(angle):.6g} deg is not reached by the band's "
                         f"cone for lengths {lo:.4g} to {hi:.4g} m; allowed: a cone inside "
                         "the band's reachable range")
    return brentq(gap, lo, hi, xtol=1e-10, rtol=1e-10)
