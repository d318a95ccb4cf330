r"""Published constants of air filamentation at 800 nm, each with its spread and its source.

The laser model (:mod:`thzarray.source.laser`, :mod:`thzarray.source.ionization`) turns a
pulse into a plasma column with a handful of constants of air that the literature gives
only within wide bounds. Each is one :class:`PublishedValue` here: a low, a nominal and a
high value, the unit, and where each number comes from. "Verified" means the number was
read in the source's published abstract; "from memory" means it could not be checked at
the source while writing this and should be before relying on it.
:meth:`~thzarray.source.laser.FilamentationModel.variants` builds one model per published
end, and :func:`thzarray.source.spread.energy_range` propagates them to an absolute energy.

``o2_cross_section``: eight-photon ionization cross-section of O2 at 800 nm
    Nominal 3.3e-130 W^-8 m^16 s^-1 and high 3.6e-130 (its +1 sigma): A. Sharma et al.,
    Sci. Rep. 8, 2874 (2018), (3.3 +- 0.3)e-130, the first absolute count of the electrons
    (verified; the same abstract says earlier literature values spread over 2-3 orders of
    magnitude). A re-analysis of the same data gives (2.3 +- 0.3)e-130 (E. L. Ruden, APS
    DPP 2023 abstract; verified). Low 2.88e-131 W^-8 m^16 s^-1 = 2.88e-99 cm^16 W^-8 s^-1,
    the value commonly quoted from A. Couairon and A. Mysyrowicz, Phys. Rep. 441, 47
    (2007) (from memory), 11.5 times below the nominal one. Below saturation n_e is
    proportional to it.
``n2``: Kerr index of air at 800 nm
    Nominal 3.2e-19 cm^2/W (Couairon and Mysyrowicz 2007, from memory; gives P_cr = 3.0 GW
    with Marburger's Gaussian-beam formula). Low 0.8e-19 cm^2/W: the instantaneous
    (electronic) part alone, which is all that very short pulses feel (J. K. Wahlstrand,
    Y.-H. Cheng and H. M. Milchberg, Phys. Rev. Lett. 109, 113904 (2012), about 0.74e-19
    for N2 and 0.95e-19 for O2; from memory). High 5e-19 cm^2/W for pulses long enough to
    feel the full rotational (Raman) response (from memory). Measured critical powers of
    3 to 10 GW (W. Liu and S. L. Chin, Opt. Express 13, 5750 (2005), about 10 GW at
    ~40 fs; from memory) correspond to 3.2e-19 to 1e-19 cm^2/W with Marburger's formula; a
    recent simulation paper uses P_cr = 4.7 GW (C. Milian et al., arXiv 1501.07903,
    verified). The spread is a factor 4 down and 1.6 up, not the "factor of about 2" often
    quoted.
``clamped_intensity``: peak intensity inside a filament at 800 nm
    Nominal 5e13 W/cm^2 (common practice, no source; A. Becker et al., Appl. Phys. B 73,
    287 (2001) for N2, from memory). High 1e14 W/cm^2 (J. Kasparian, R. Sauerbrey and
    S. L. Chin, Appl. Phys. B 71, 877 (2000), "the critical laser intensity of self-guided
    light filaments in air"; value from memory). Low 4e13 W/cm^2 (from memory, no single
    source). n_e grows as its eighth power until the O2 is depleted.
``core_radius``: radius of the plasma core
    Nominal 50 um (a core about 100 um across: Couairon and Mysyrowicz 2007, from memory);
    low 25 um and high 100 um (plasma columns 50-200 um across are reported; from memory).
``collision_rate``: electron momentum-transfer collision rate at 1 atm
    Nominal 2e12 s^-1, low 1e12, high 5e12 (common practice, no source). Couairon and
    Mysyrowicz (2007) use a collision time of 350 fs, i.e. 2.9e12 s^-1 (from memory).
``collapse_factor``: factor on Marburger's 0.367 in the collapse distance
    Marburger's fit (J. H. Marburger, Prog. Quantum Electron. 4, 35 (1975)) is quoted as
    :math:`z_c = 0.367\,k a^2 / \sqrt{\dots}` with a beam radius a whose meaning differs
    between sources. This package reads a as the 1/e *intensity* radius, so
    :math:`k a^2` is the Rayleigh range :math:`\pi w_0^2/\lambda` of the 1/e^2 radius w0
    (factor 1, nominal and low). Sources that put the 1/e^2 intensity (1/e field) radius
    w0 in its place get :math:`0.367\,k w_0^2`, twice as far (factor 2, high); which
    reading Marburger intended was not checked at the source (from memory). With a lens
    the column then starts later and is shorter.
"""

from __future__ import annotations

from dataclasses import dataclass

from thzarray.base.checks import check_scalar

__all__ = ["PUBLISHED", "PublishedValue"]


@dataclass(frozen=True)
class PublishedValue:
    """One constant of the laser model: its published low, nominal and high values (SI).

    Attributes
    ----------
    name : str
        Field of :class:`~thzarray.source.laser.FilamentationModel` it sets.
    low, nominal, high : float
        Published range and the value used by default (low <= nominal <= high).
    unit : str
        SI unit.
    source : str
        Where the numbers come from (details in this module's docstring).
    """

    name: str
    low: float
    nominal: float
    high: float
    unit: str
    source: str

    def __post_init__(self):
        low = check_scalar(f"{self.name} low", self.low, low=0.0, unit=self.unit)
        nominal = check_scalar(f"{self.name} nominal", self.nominal, low=low, unit=self.unit)
        check_scalar(f"{self.name} high", self.high, low=nominal, unit=self.unit)


PUBLISHED = {v.name: v for v in (
    PublishedValue("o2_cross_section", 2.88e-131, 3.3e-130, 3.6e-130, "W^-8 m^16 s^-1",
                   "Sharma et al., Sci. Rep. 8, 2874 (2018) (nominal, high; verified); "
                   "Couairon & Mysyrowicz, Phys. Rep. 441, 47 (2007) (low; from memory)"),
    PublishedValue("n2", 0.8e-23, 3.2e-23, 5e-23, "m^2/W",
                   "Couairon & Mysyrowicz (2007) (nominal); Wahlstrand et al., PRL 109, "
                   "113904 (2012) (low); long-pulse values (high); all from memory"),
    PublishedValue("clamped_intensity", 4e17, 5e17, 1e18, "W/m^2",
                   "common practice (nominal); Kasparian et al., Appl. Phys. B 71, 877 "
                   "(2000) (high); from memory"),
    PublishedValue("core_radius", 25e-6, 50e-6, 100e-6, "m",
                   "core ~100 um across (nominal); columns 50-200 um across; from memory"),
    PublishedValue("collision_rate", 1e12, 2e12, 5e12, "1/s",
                   "common practice, no source"),
    PublishedValue("collapse_factor", 1.0, 1.0, 2.0, "1",
                   "Marburger's 0.367 k a^2 read with a = 1/e intensity radius (1) or the "
                   "1/e^2 intensity radius (2); from memory"),
)}
"""The published spread of each :class:`~thzarray.source.laser.FilamentationModel` constant."""
