r"""Calibration: one measured number sets the absolute scale of every model output.

The model's absolute scale rests on plasma numbers known to a factor of a few
(:mod:`thzarray.source.plasma`); the shape of spectra, patterns and waveforms does not.
A measurement at a known place fixes the scale as one factor k on energies (the current
spectrum's modulus squared), so fields scale by :math:`\sqrt k`:

- a measured energy W_m against the model's W: :math:`k = W_m/W`;
- a measured peak field (or any field amplitude, e.g. an electro-optic trace converted to
  field) E_m against the model's E: :math:`k = (E_m/E)^2`;
- a fitted current amplitude a (:mod:`thzarray.inverse`): :math:`k = a^2`.

Uncertainties are one standard deviation, relative, propagated to first order (the GUM's
law of propagation, JCGM 100:2008, sec. 5.1): :math:`u(k)/k = u(W_m)/W_m` for an energy,
:math:`2u(E_m)/E_m` for a field or amplitude, plus the model's own relative uncertainty in
quadrature when given; a calibrated energy carries :math:`u/W = u(k)/k`, a calibrated field
:math:`u/E = u(k)/(2k)`. Independent calibrations combine by the inverse-variance weighted
mean of :math:`\ln k` (first order, the same law).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thzarray.base.checks import as_float_array, check_scalar

__all__ = [
    "Calibration",
    "apply_to_energy",
    "apply_to_field",
    "calibrate_amplitude",
    "calibrate_energy",
    "calibrate_field",
    "combine_calibrations",
]


@dataclass(frozen=True)
class Calibration:
    """A factor on model energies, with its relative standard uncertainty.

    Parameters
    ----------
    energy_factor : float
        k, multiplies model energies (> 0); fields scale by sqrt(k).
    relative_uncertainty : float
        u(k)/k, one standard deviation (>= 0, < 1 for first-order propagation to hold).
    source : str
        What set it (free text, e.g. "pyroelectric, 2 m, 0 deg").
    """

    energy_factor: float
    relative_uncertainty: float = 0.0
    source: str = ""

    def __post_init__(self):
        object.__setattr__(self, "energy_factor", check_scalar(
            "energy_factor", self.energy_factor, low=0.0, low_open=True))
        object.__setattr__(self, "relative_uncertainty", check_scalar(
            "relative_uncertainty", self.relative_uncertainty, low=0.0, high=1.0,
            high_open=True))
        if not isinstance(self.source, str):
            raise ValueError(f"source = {self.source!r}; allowed: a string")

    @property
    def field_factor(self) -> float:
        """sqrt(k), multiplies model fields."""
        return float(np.sqrt(self.energy_factor))

    @property
    def field_relative_uncertainty(self) -> float:
        """u(sqrt k)/sqrt k = u(k)/(2k) (first order)."""
        return 0.5 * self.relative_uncertainty


# Bounds on a calibration's inputs (any unit): ratios, their squares and the relative
# uncertainties in quadrature stay finite.
_MAGNITUDE = (1e-50, 1e50)
_MAX_RELATIVE = 1e6


def _ratio(measured, model, name):
    m = check_scalar(f"measured {name}", measured, low=_MAGNITUDE[0], high=_MAGNITUDE[1])
    p = check_scalar(f"model {name}", model, low=_MAGNITUDE[0], high=_MAGNITUDE[1])
    return m, p


def _quadrature(*parts):
    return float(np.sqrt(np.sum(np.square(parts))))


def calibrate_energy(measured, model, uncertainty=0.0, model_uncertainty=0.0,
                     source: str = "") -> Calibration:
    """Calibration from an energy measured where the model predicts ``model``.

    Parameters
    ----------
    measured, model : float
        Measured and predicted energy (J, or the model's units), > 0.
    uncertainty : float
        Standard uncertainty of the measurement (same unit), >= 0.
    model_uncertainty : float
        Relative standard uncertainty of the prediction (e.g. detector position), >= 0.
    source : str

    Returns
    -------
    Calibration
        k = measured / model, u(k)/k = sqrt((u/measured)^2 + model_uncertainty^2).
    """
    m, p = _ratio(measured, model, "energy")
    u = check_scalar("uncertainty", uncertainty, low=0.0, high=_MAGNITUDE[1])
    um = check_scalar("model_uncertainty", model_uncertainty, low=0.0, high=_MAX_RELATIVE)
    return Calibration(m / p, _quadrature(u / m, um), source)


def calibrate_field(measured, model, uncertainty=0.0, model_uncertainty=0.0,
                    source: str = "") -> Calibration:
    """Calibration from a field amplitude (e.g. a peak field) measured at a known place.

    Parameters
    ----------
    measured, model : float
        Measured and predicted field amplitude (V/m), > 0.
    uncertainty : float
        Standard uncertainty of the measured amplitude (V/m), >= 0.
    model_uncertainty : float
        Relative standard uncertainty of the predicted amplitude, >= 0.
    source : str

    Returns
    -------
    Calibration
        k = (measured / model)^2, u(k)/k = 2 sqrt((u/measured)^2 + model_uncertainty^2).
    """
    m, p = _ratio(measured, model, "field")
    u = check_scalar("uncertainty", uncertainty, low=0.0, high=_MAGNITUDE[1])
    um = check_scalar("model_uncertainty", model_uncertainty, low=0.0, high=_MAX_RELATIVE)
    return Calibration((m / p) ** 2, 2 * _quadrature(u / m, um), source)


def calibrate_amplitude(amplitude, uncertainty=0.0, source: str = "") -> Calibration:
    """Calibration from a fitted current amplitude a (energies scale as a^2).

    Returns
    -------
    Calibration
        ``k = a^2, u(k)/k = 2 u(a)/|a|``.
    """
    a = abs(check_scalar("amplitude", amplitude))
    if a == 0:
        raise ValueError("amplitude = 0; allowed: a non-zero fitted amplitude")
    u = check_scalar("uncertainty", uncertainty, low=0.0)
    return Calibration(a * a, 2 * u / a, source)


def apply_to_energy(energy, calibration: Calibration):
    """Calibrated energies and their standard uncertainties.

    Parameters
    ----------
    energy : array_like
        Model energies (any shape).
    calibration : Calibration

    Returns
    -------
    (ndarray, ndarray)
        k W and k W u(k)/k, shapes of ``energy``.
    """
    w = as_float_array("energy", energy) * calibration.energy_factor
    return w, np.abs(w) * calibration.relative_uncertainty


def apply_to_field(field_, calibration: Calibration):
    """Calibrated fields (or spectra, or waveforms) and their standard uncertainties.

    Parameters
    ----------
    field_ : array_like, real or complex
        Model field values (any shape).
    calibration : Calibration

    Returns
    -------
    (ndarray, ndarray)
        ``sqrt(k) E`` and ``|sqrt(k) E| u(k)/(2k)``; the uncertainty is of the modulus (the
        calibration scales, it does not shift phases).
    """
    e = np.asarray(field_)
    if not np.all(np.isfinite(e)):
        raise ValueError("field has a non-finite value; allowed: finite numbers")
    out = e * calibration.field_factor
    return out, np.abs(out) * calibration.field_relative_uncertainty


def combine_calibrations(calibrations) -> Calibration:
    """Inverse-variance weighted mean of independent calibrations (in ln k).

    Returns
    -------
    Calibration
        :math:`\\ln k = \\sum w_i\\ln k_i/\\sum w_i`, :math:`w_i = (u_i/k_i)^{-2}`,
        :math:`u/k = (\\sum w_i)^{-1/2}`.
    """
    cals = list(calibrations)
    if not cals or not all(isinstance(x, Calibration) for x in cals):
        raise ValueError("calibrations: allowed: a non-empty sequence of Calibration")
    if any(x.relative_uncertainty == 0 for x in cals):
        raise ValueError("calibrations: one has zero uncertainty; allowed: all > 0 to weigh them")
    w = np.array([x.relative_uncertainty ** -2.0 for x in cals])
    log_k = np.array([np.log(x.energy_factor) for x in cals])
    return Calibration(float(np.exp(np.sum(w * log_k) / w.sum())), float(w.sum() ** -0.5),
                       "; ".join(x.source for x in cals if x.source))
