r"""Line lists in the HITRAN 160-character format: parsing and conversion to the air's lines.

Format (L. S. Rothman et al., "The HITRAN 2004 molecular spectroscopic database",
J. Quant. Spectrosc. Radiat. Transfer 96, 139 (2005), Table 1; the fixed-width record used
by every HITRAN edition since): columns 1-2 molecule (I2), 3 isotopologue (I1), 4-15
wavenumber :math:`\nu` (F12.6, cm^-1), 16-25 intensity :math:`S` at 296 K (E10.3,
cm^-1/(molecule cm^-2)), 26-35 Einstein A (E10.3, s^-1), 36-40 air-broadened half width
:math:`\gamma_{air}` (F5.4, cm^-1/atm, HWHM at 296 K), 41-45 self-broadened half width
:math:`\gamma_{self}` (F5.3), 46-55 lower-state energy :math:`E''` (F10.4, cm^-1), 56-59
temperature exponent :math:`n_{air}` (F4.2), 60-67 air pressure shift :math:`\delta_{air}`
(F8.6, cm^-1/atm), then quantum numbers, error and reference codes, the line-mixing flag
and the statistical weights (columns 68-160, not used here). The intensities include the
natural isotopologue abundance.

Conversion to the air's conditions (temperature T, total pressure p, the molecule's
partial pressure :math:`p_s`; the HITRAN definitions, Rothman et al. 1998, JQSRT 60, 665,
appendix; :math:`c_2 = hc/k`):

.. math::
    S(T) = S(T_{ref})\,\frac{Q(T_{ref})}{Q(T)}\,
           \frac{e^{-c_2E''/T}}{e^{-c_2E''/T_{ref}}}\,
           \frac{1 - e^{-c_2\nu/T}}{1 - e^{-c_2\nu/T_{ref}}},\qquad T_{ref} = 296\ \mathrm K,

    \gamma(p, T) = \left(\frac{T_{ref}}{T}\right)^{n_{air}}
                   \left[\gamma_{air}(p - p_s) + \gamma_{self}\,p_s\right],\qquad
    \nu^* = \nu + \delta_{air}\,p .

Partition-function ratio: the classical rigid rotor, :math:`Q(T_{ref})/Q(T) =
(T_{ref}/T)^{q}` with q = 1.5 for non-linear molecules (H2O, O3, CH4) and q = 1 for linear
ones (CO2, N2O, CO, O2), the vibrational partition function taken as 1 (common practice,
no source; accurate near room temperature, where few molecules are vibrationally
excited). Molecules not in that table need their exponent given.

Line shape: the van Vleck-Weisskopf shape of :mod:`thzarray.air.lineshape` (the one ITU-R
P.676 uses), complex so that every line brings its dispersion. Equating the absorption
coefficient :math:`\alpha = S N g_{VVW}(\nu)`, :math:`g_{VVW} = \frac{1}{\pi}
\left(\frac{\nu}{\nu_0}\right)^2\left[\frac{\gamma}{(\nu_0-\nu)^2+\gamma^2}
+ \frac{\gamma}{(\nu_0+\nu)^2+\gamma^2}\right]` (N the molecule's number density), with
:math:`\alpha = 2\omega\operatorname{Im}n/c` gives the line strength in the index

.. math:: S_{Hz} = \frac{S(T)\,N\,c^2}{4\pi^2 f_0}\qquad(\text{SI: } S \text{ in m per molecule}).

The frequency factor is the Rayleigh-Jeans form :math:`(\nu/\nu_0)^2`
(:math:`h\nu \ll kT`: hf/kT = 0.16 at 1 THz and 296 K), as in P.676; Doppler broadening is
left out (about 1 MHz HWHM at 0.5 THz against pressure widths of some GHz at 1e4 Pa and
above, the smallest pressure :class:`~thzarray.air.medium.AirConditions` allows).

Molecule number densities: water vapour from the air's vapour pressure, CO2 from its
``co2_fraction`` (of dry air), O2 from the fraction 0.2095 of dry air (from memory: the
U.S. Standard Atmosphere 1976 value); any other molecule needs its mole fraction of dry
air given.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np
from scipy.constants import atm, c, h, k

from thzarray.air.lineshape import Lines
from thzarray.air.medium import AirConditions

__all__ = ["HITRAN_REFERENCE_TEMPERATURE", "LineList", "hitran_lines", "parse_hitran"]

HITRAN_REFERENCE_TEMPERATURE = 296.0  # K

# Rigid-rotor exponents q of Q(T) ~ T^q: non-linear 1.5, linear 1 (HITRAN molecule ids).
_PARTITION_EXPONENTS = {1: 1.5, 2: 1.0, 3: 1.5, 4: 1.0, 5: 1.0, 6: 1.5, 7: 1.0}
_O2_DRY_FRACTION = 0.2095
_USES = ("above", "replace")
# (first column, last column) of each field used, 1-based inclusive, HITRAN 2004 format.
_FIELDS = {
    "molecule": (1, 2), "isotopologue": (3, 3), "wavenumber": (4, 15), "intensity": (16, 25),
    "einstein_a": (26, 35), "gamma_air": (36, 40), "gamma_self": (41, 45),
    "lower_energy": (46, 55), "n_air": (56, 59), "delta_air": (60, 67),
}
_PER_CM_TO_HZ = 100.0 * c            # wavenumber (cm^-1) -> frequency (Hz)
_PER_CM_ATM_TO_HZ_PA = _PER_CM_TO_HZ / atm
_PER_CM_TO_J = 100.0 * h * c         # energy of a wavenumber (cm^-1) in J


def _frozen(values, dtype):
    a = np.asarray(values, dtype=dtype).reshape(-1)
    a.setflags(write=False)
    return a


@dataclass(frozen=True, eq=False)
class LineList:
    """Spectral lines read from a HITRAN-format list, in SI units.

    Attributes
    ----------
    molecule, isotopologue : ndarray of int, shape (L,)
        HITRAN molecule and isotopologue numbers (1 = H2O, 2 = CO2, 7 = O2, ...).
    centre : ndarray, shape (L,)
        Line frequency (Hz) at zero pressure.
    intensity : ndarray, shape (L,)
        Line intensity at 296 K (m per molecule; HITRAN's cm^-1/(molecule cm^-2) x 1e-2).
    gamma_air, gamma_self : ndarray, shape (L,)
        Pressure-broadened half widths at 296 K (Hz/Pa).
    lower_energy : ndarray, shape (L,)
        Lower-state energy (J).
    n_air : ndarray, shape (L,)
        Temperature exponent of the half widths.
    delta_air : ndarray, shape (L,)
        Air pressure shift (Hz/Pa).
    coverage : (float, float)
        Frequency range (Hz) the list claims to cover; outside it lines are missing.
    use : str
        "above": ITU-R P.676's lines are kept and only this list's lines above 1 THz are
        added; "replace": this list's lines replace P.676's lines of the molecules it
        holds (H2O, O2). P.676's continua (dry air, the water pseudo-line) are kept.
    mole_fractions : mapping of int to float
        Mole fractions of dry air for molecules other than H2O, CO2 and O2.
    partition_exponents : mapping of int to float
        Exponents q of Q ~ T^q for molecules not in the built-in table.
    """

    molecule: np.ndarray
    isotopologue: np.ndarray
    centre: np.ndarray
    intensity: np.ndarray
    gamma_air: np.ndarray
    gamma_self: np.ndarray
    lower_energy: np.ndarray
    n_air: np.ndarray
    delta_air: np.ndarray
    coverage: tuple
    use: str = "above"
    mole_fractions: dict = field(default_factory=dict)
    partition_exponents: dict = field(default_factory=dict)

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "molecule", _frozen(self.molecule, int))
        set_(self, "isotopologue", _frozen(self.isotopologue, int))
        n = self.molecule.size
        for name in ("centre", "intensity", "gamma_air", "gamma_self", "lower_energy",
                     "n_air", "delta_air"):
            a = _frozen(getattr(self, name), float)
            if a.size != n or not np.isfinite(a).all():
                raise ValueError(f"{name} has {a.size} values (finite: {np.isfinite(a).all()}); "
                                 f"allowed: {n} finite values, one per line")
            set_(self, name, a)
        if n and (np.any(self.centre <= 0) or np.any(self.intensity < 0)):
            raise ValueError("lines: a wavenumber <= 0 or an intensity < 0; allowed: "
                             "wavenumber > 0 and intensity >= 0")
        lo, hi = (float(x) for x in self.coverage)
        if not 0 <= lo < hi:
            raise ValueError(f"coverage = {self.coverage!r}; allowed: 0 <= low < high (Hz)")
        set_(self, "coverage", (lo, hi))
        if self.use not in _USES:
            raise ValueError(f"use = {self.use!r}; allowed: one of {_USES}")
        set_(self, "mole_fractions", MappingProxyType(
            {int(m): _fraction(m, x) for m, x in dict(self.mole_fractions).items()}))
        set_(self, "partition_exponents", MappingProxyType(
            {int(m): float(q) for m, q in dict(self.partition_exponents).items()}))

    @property
    def size(self) -> int:
        return self.molecule.size

    @property
    def molecules(self) -> tuple:
        """The molecule numbers present, sorted."""
        return tuple(int(m) for m in np.unique(self.molecule))

    def select(self, keep) -> "LineList":
        """The lines where the boolean array ``keep`` is true (same settings)."""
        keep = np.asarray(keep, dtype=bool)
        arrays = {name: getattr(self, name)[keep] for name in (
            "molecule", "isotopologue", "centre", "intensity", "gamma_air", "gamma_self",
            "lower_energy", "n_air", "delta_air")}
        return LineList(**arrays, coverage=self.coverage, use=self.use,
                        mole_fractions=dict(self.mole_fractions),
                        partition_exponents=dict(self.partition_exponents))


def _fraction(molecule, value):
    x = float(value)
    if not 0.0 <= x <= 1.0:
        raise ValueError(f"mole_fractions[{molecule}] = {value!r}; allowed: 0 to 1")
    return x


def _field(line, number, name):
    first, last = _FIELDS[name]
    text = line[first - 1:last]
    try:
        return float(text) if name not in ("molecule", "isotopologue") else int(text)
    except ValueError:
        raise ValueError(f"line {number}: {name} = {text!r} (columns {first}-{last}) is not a "
                         "number; allowed: the HITRAN 160-character record") from None


def parse_hitran(text, *, coverage=None, use: str = "above", mole_fractions=None,
                 partition_exponents=None) -> LineList:
    """Read line records in the HITRAN 160-character format.

    Parameters
    ----------
    text : str or iterable of str
        The records, one per line (the contents of a ``.par`` file); blank lines are
        skipped, every other line must be 160 characters (trailing newline aside).
    coverage : (float, float), optional
        Frequency range (Hz) the list covers; default from 0 to the highest line.
    use : {"above", "replace"}
        How the list combines with ITU-R P.676's lines (see :class:`LineList`).
    mole_fractions : dict, optional
        Molecule number -> mole fraction of dry air, for molecules other than H2O, CO2, O2.
    partition_exponents : dict, optional
        Molecule number -> exponent q of Q(T) ~ T^q, for molecules not built in.

    Returns
    -------
    LineList
    """
    lines = text.splitlines() if isinstance(text, str) else [str(s) for s in text]
    rows = []
    for number, raw in enumerate(lines, start=1):
        line = raw.rstrip("\r\n")
        if not line.strip():
            continue
        if len(line) != 160:
            raise ValueError(f"line {number} has {len(line)} characters; allowed: 160 "
                             "(HITRAN 2004 record format)")
        rows.append([_field(line, number, name) for name in _FIELDS])
    if not rows:
        raise ValueError("text holds no line records; allowed: at least one 160-character record")
    cols = dict(zip(_FIELDS, np.array(rows, dtype=float).T))
    centre = cols["wavenumber"] * _PER_CM_TO_HZ
    if coverage is None:
        coverage = (0.0, float(centre.max()))
    return LineList(
        molecule=cols["molecule"].astype(int), isotopologue=cols["isotopologue"].astype(int),
        centre=centre, intensity=cols["intensity"] * 1e-2,
        gamma_air=cols["gamma_air"] * _PER_CM_ATM_TO_HZ_PA,
        gamma_self=cols["gamma_self"] * _PER_CM_ATM_TO_HZ_PA,
        lower_energy=cols["lower_energy"] * _PER_CM_TO_J, n_air=cols["n_air"],
        delta_air=cols["delta_air"] * _PER_CM_ATM_TO_HZ_PA, coverage=coverage, use=use,
        mole_fractions=mole_fractions or {}, partition_exponents=partition_exponents or {})


def _partial_pressures(line_list: LineList, air: AirConditions) -> dict:
    """Partial pressure (Pa) of each molecule in the list."""
    out = {}
    for m in line_list.molecules:
        if m == 1:
            out[m] = air.vapour_pressure
        elif m in line_list.mole_fractions:
            out[m] = line_list.mole_fractions[m] * air.dry_pressure
        elif m == 2:
            out[m] = air.co2_fraction * air.dry_pressure
        elif m == 7:
            out[m] = _O2_DRY_FRACTION * air.dry_pressure
        else:
            raise ValueError(f"mole_fractions has no entry for molecule {m}; allowed: a mole "
                             "fraction of dry air for every molecule other than 1, 2, 7")
    return out


def _exponent(line_list: LineList, m: int) -> float:
    if m in line_list.partition_exponents:
        return line_list.partition_exponents[m]
    if m in _PARTITION_EXPONENTS:
        return _PARTITION_EXPONENTS[m]
    raise ValueError(f"partition_exponents has no entry for molecule {m}; allowed: the "
                     "exponent q of Q(T) ~ T^q (1.5 non-linear, 1 linear) for molecules "
                     f"other than {sorted(_PARTITION_EXPONENTS)}")


def hitran_lines(line_list: LineList, air: AirConditions) -> Lines:
    """The list's lines at the air's temperature, pressure and composition.

    Parameters
    ----------
    line_list : LineList
    air : AirConditions

    Returns
    -------
    Lines
        Centres (pressure shift included), strengths (Hz), half widths (Hz), no mixing.

    Notes
    -----
    .. math:: S_{Hz} = \\frac{S(T) N c^2}{4\\pi^2 f_0},\\quad
              \\gamma = (T_{ref}/T)^{n_{air}}[\\gamma_{air}(p - p_s) + \\gamma_{self} p_s],
              \\quad f^* = f_0 + \\delta_{air} p

    (HITRAN definitions; module docstring).
    """
    t = air.temperature_c + 273.15
    t_ref = HITRAN_REFERENCE_TEMPERATURE
    pressures = _partial_pressures(line_list, air)
    p_self = np.array([pressures[int(m)] for m in line_list.molecule])
    q = np.array([_exponent(line_list, int(m)) for m in line_list.molecule])
    f0 = line_list.centre
    boltzmann = np.exp(-line_list.lower_energy / k * (1 / t - 1 / t_ref))
    stimulated = -np.expm1(-h * f0 / (k * t)) / -np.expm1(-h * f0 / (k * t_ref))
    intensity = line_list.intensity * (t_ref / t) ** q * boltzmann * stimulated
    density = p_self / (k * t)
    width = (t_ref / t) ** line_list.n_air * (line_list.gamma_air * (air.pressure - p_self)
                                              + line_list.gamma_self * p_self)
    centre = f0 + line_list.delta_air * air.pressure
    strength = intensity * density * c**2 / (4 * np.pi**2 * centre)
    return Lines(centre, strength, width, np.zeros_like(f0))
