"""How far the design's absolute numbers can be trusted: calibration or published spreads.

Every absolute energy a command prints carries a low / nominal / high range, from one of:

1. ``[calibration]``: one measurement (an energy into the receiver or a peak field at a
   range, or a fitted current amplitude) sets the factor k on every model energy
   (:mod:`thzarray.detect.calibration`; fields scale by sqrt(k)); the range is
   k (1 -+ u(k)/k), one standard deviation. A calibration also makes the energies of a
   design without a plasma absolute (J).
2. ``[laser]`` without a calibration: the laser model's constants at their published low
   and high ends (:func:`thzarray.source.spread.energy_range`). The range is computed for
   the band energy of one column (the design's source, band and air) and applied as a
   factor to every energy of the design: a column's length and density also move its
   pattern, which this factor does not follow (stated in the output).
3. ``[plasma]`` as given: the user's density and collision rate set the scale; no spread
   is propagated (low = high = nominal), and the output says so.
4. No plasma: energies per (A s)^2 of current spectrum, no absolute scale.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Scale", "absolute_scale"]


@dataclass(frozen=True)
class Scale:
    """The factor on model energies and the range around it.

    Attributes
    ----------
    factor : float
        k, multiplies every model energy (1 without a calibration).
    low, high : float
        The range's ends relative to the calibrated nominal value (low <= 1 <= high).
    absolute : bool
        Whether energies are in J (a plasma, a laser or a calibration).
    source : str
        One phrase: where the scale and its range come from.
    """

    factor: float = 1.0
    low: float = 1.0
    high: float = 1.0
    absolute: bool = False
    source: str = "no plasma: energies per (A s)^2 of current spectrum"

    @property
    def unit(self) -> str:
        return "J" if self.absolute else "J per (A s)^2"

    @property
    def field_factor(self) -> float:
        return float(np.sqrt(self.factor))

    def energy_text(self, value: float, unit: str | None = None) -> str:
        """``"3.1e-15 J (range 1e-16 to 4e-14 J)"`` for a calibrated value (``unit`` default
        J, or J per (A s)^2)."""
        unit = self.unit if unit is None else unit
        if self.low == self.high == 1.0:
            return f"{value:.3g} {unit}"
        return (f"{value:.3g} {unit} (range {self.low * value:.2g} to "
                f"{self.high * value:.2g} {unit})")

    def summary(self) -> dict:
        return {"energy_factor": self.factor, "range_low_factor": self.low,
                "range_high_factor": self.high, "energy_unit": self.unit,
                "scale_from": self.source}


def _laser_range(design, band):
    """(low, high, phrase) of the published spread for the design's [laser] column."""
    from thzarray.app.design.source import apply_source
    from thzarray.base.band import band_weights
    from thzarray.field.energy import source_spectral_energy
    from thzarray.source.laser import FilamentationModel, Pulse
    from thzarray.source.spread import energy_range

    laser = design.laser
    pulse = Pulse(laser.energy, laser.duration, laser.beam_radius, laser.wavelength,
                  laser.focal_length)
    model = FilamentationModel(laser.n2, laser.clamped_intensity, laser.core_radius,
                               laser.collision_rate)
    wts = np.ones(1) if band.size == 1 else band_weights(band)

    def band_energy(fil, plasma, est):
        problems = []
        made = apply_source(design.sections.source, (fil,), design.medium, plasma,
                            laser.wavelength, est, problems)
        if made is None:
            raise ValueError("; ".join(problems))
        per = source_spectral_energy(made.filaments[0], band, design.medium, made.plasma)
        return float(np.sum(wts * per))

    rng = energy_range(band_energy, pulse, model, medium=design.medium)
    if rng.nominal <= 0:
        return 1.0, 1.0, "[laser]: the nominal column radiates nothing in the band"
    return (rng.low / rng.nominal, rng.high / rng.nominal,
            f"[laser] with the published spread of its constants (most from {rng.dominant}; "
            "applied as one factor to every energy)")


def _model_value(design, cal, phased):
    """The model's value (uncalibrated) at the calibration's place."""
    if cal.kind == "energy":
        from thzarray.app.jobs.receiver import budget_at

        return budget_at(design, phased, cal.range)
    from thzarray.app.jobs.waveform import peak_field_at

    return peak_field_at(design, phased, cal.range)


def absolute_scale(design, phased=None) -> Scale:
    """The design's scale (module docstring).

    Parameters
    ----------
    design : Design
    phased : Phasing, optional
        The phasing the command uses (a calibration at a range is computed with it);
        the design's own phasing by default.
    """
    from thzarray.app.jobs.context import band_of, phasing
    from thzarray.detect.calibration import (
        calibrate_amplitude,
        calibrate_energy,
        calibrate_field,
    )

    cal = design.sections.calibration
    if cal is not None:
        if cal.kind == "amplitude":
            made = calibrate_amplitude(cal.amplitude, cal.uncertainty * cal.amplitude)
            where = f"a fitted amplitude {cal.amplitude:.4g}"
        else:
            phased = phasing(design) if phased is None else phased
            model = _model_value(design, cal, phased)
            if not model > 0:
                raise ValueError(f"calibration.range: the model predicts {model:.3g} at "
                                 f"{cal.range:g} m; allowed: a place the design radiates to")
            if cal.kind == "energy":
                made = calibrate_energy(cal.energy, model, cal.uncertainty * cal.energy,
                                        cal.model_uncertainty)
                where = f"an energy of {cal.energy:.3g} J at {cal.range:g} m"
            else:
                made = calibrate_field(cal.peak_field, model, cal.uncertainty * cal.peak_field,
                                       cal.model_uncertainty)
                where = f"a peak field of {cal.peak_field:.3g} V/m at {cal.range:g} m"
        u = made.relative_uncertainty
        return Scale(made.energy_factor, max(0.0, 1.0 - u), 1.0 + u, True,
                     f"[calibration]: {where}, k = {made.energy_factor:.4g} +- "
                     f"{100 * u:.3g} % (one standard deviation)")
    if design.plasma is None:
        return Scale()
    if design.laser is not None:
        band, _ = band_of(design)
        low, high, phrase = _laser_range(design, band)
        return Scale(1.0, low, high, True, phrase)
    return Scale(1.0, 1.0, 1.0, True, "[plasma] as given (no spread propagated; add "
                                      "[calibration] to tie it to a measurement)")
