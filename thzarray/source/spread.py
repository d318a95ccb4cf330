r"""How far an absolute energy can be trusted: the published spreads propagated to it.

Absolute THz energies from the laser model rest on constants that the literature gives only
within wide bounds (:mod:`thzarray.source.constants`): the O2 cross-section alone spans a
factor 11.5, the Kerr index a factor 6, the clamped intensity enters to the eighth power.
:func:`energy_range` recomputes an energy with each constant in turn at its published low
and high end (:meth:`~thzarray.source.laser.FilamentationModel.variants`), the others at
their nominal values, and combines the ratios to the nominal energy as independent factors:

.. math:: E_{low} = E_0 \prod_i \min(1, r_i^-, r_i^+),\qquad
          E_{high} = E_0 \prod_i \max(1, r_i^-, r_i^+),\qquad
          r_i^\pm = E(c_i = c_i^\pm)/E_0 .

This is a worst-case bracket for effects that multiply; it ignores the correlations
between the constants (at clamping a higher n2 goes with a higher density, for instance)
and the model's own approximations (step 3 of :mod:`thzarray.source.laser`, the laterally
infinite plasma of :mod:`thzarray.source.plasma`). A variant whose critical power exceeds
the pulse's peak power makes no filament: its energy is 0 and so is the low end.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thzarray.source.laser import FilamentationModel, Pulse, plasma_from_laser
from thzarray.source.selffocusing import MARBURGER_MIN_POWER_RATIO

__all__ = ["EnergyRange", "energy_range"]


@dataclass(frozen=True)
class EnergyRange:
    """An absolute energy with its low and high ends from the published constants (J).

    Unpacks as ``low, nominal, high = energy_range(...)``.

    Attributes
    ----------
    low, nominal, high : float
        The energy with the nominal constants and the bracket of the module docstring (J).
    ratios : dict
        ``{name: (ratio at the low end, ratio at the high end)}``: each constant's energy
        over the nominal energy (1.0 where that end equals the model's value).
    notes : tuple of str
        Variants that made no filament.
    """

    low: float
    nominal: float
    high: float
    ratios: dict
    notes: tuple = ()

    def __iter__(self):
        return iter((self.low, self.nominal, self.high))

    @property
    def dominant(self) -> str:
        """The constant whose published spread moves the energy most (largest high/low)."""
        def span(pair):
            lo, hi = min(1.0, *pair), max(1.0, *pair)
            return np.inf if lo == 0 else hi / lo
        return max(self.ratios, key=lambda name: span(self.ratios[name]))

    def describe(self, unit: float = 1.0, name: str = "J") -> str:
        """``"3.1e-12 J (published constants: 2e-15 to 6e-12 J)"``, in ``unit`` of ``name``."""
        lo, nom, hi = (v / unit for v in (self.low, self.nominal, self.high))
        return (f"{nom:.2g} {name} (published constants: {lo:.2g} to {hi:.2g} {name}; "
                f"most from {self.dominant})")


def energy_range(compute_energy, pulse: Pulse, model: FilamentationModel | None = None, *,
                 medium=None) -> EnergyRange:
    """An absolute energy and its range over the published spread of the laser model's constants.

    Parameters
    ----------
    compute_energy : callable
        ``compute_energy(filament, plasma, estimate) -> float``: the energy (J, >= 0) of
        the column that :func:`~thzarray.source.laser.plasma_from_laser` returns, e.g.
        ``lambda fil, pl, est: total_energy(fil, freq, medium, pl)``.
    pulse : Pulse
        The laser settings.
    model : FilamentationModel, optional
        The nominal constants (defaults: the published nominal values).
    medium : Medium, optional
        Passed to :func:`~thzarray.source.laser.plasma_from_laser`.

    Returns
    -------
    EnergyRange
        ``low``, ``nominal``, ``high`` (J) and the ratio each constant's ends give.

    Raises
    ------
    ValueError
        When the nominal model makes no filament, or ``compute_energy`` returns a
        negative or non-finite value.

    Notes
    -----
    The combination rule and its limits are in the module docstring. Cost: one call of
    ``compute_energy`` per published end that differs from the model (11 with the
    defaults) plus the nominal one.
    """
    if not callable(compute_energy):
        raise ValueError(f"compute_energy = {type(compute_energy).__name__}; allowed: a "
                         "function (filament, plasma, estimate) -> energy in J")
    model = FilamentationModel() if model is None else model
    nominal = _energy(compute_energy, plasma_from_laser(pulse, model, medium=medium))
    if nominal <= 0:
        raise ValueError(f"compute_energy returned {nominal!r} J for the nominal model; "
                         "allowed: a positive energy to scale the range by")
    ratios = {name: [1.0, 1.0] for name in model.spread()}
    notes = []
    for name, end, variant in model.variants():
        ratio_pcr = pulse.peak_power / variant.critical_power(pulse.wavelength)
        if ratio_pcr <= MARBURGER_MIN_POWER_RATIO:
            ratios[name][end == "high"] = 0.0
            notes.append(f"{name} at its {end} end gives P/P_cr = {ratio_pcr:.3g}: no "
                         "filament, energy 0")
            continue
        energy = _energy(compute_energy, plasma_from_laser(pulse, variant, medium=medium))
        ratios[name][end == "high"] = energy / nominal
    low = nominal * float(np.prod([min(1.0, *r) for r in ratios.values()]))
    high = nominal * float(np.prod([max(1.0, *r) for r in ratios.values()]))
    return EnergyRange(low, nominal, high, {k: tuple(v) for k, v in ratios.items()},
                       tuple(notes))


def _energy(compute_energy, column):
    value = compute_energy(*column)
    try:
        value = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"compute_energy returned {type(value).__name__}; allowed: a float "
                         "(J)") from None
    if not (np.isfinite(value) and value >= 0):
        raise ValueError(f"compute_energy returned {value!r}; allowed: a finite energy >= 0 J")
    return value
