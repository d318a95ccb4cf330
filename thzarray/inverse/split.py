r"""How many filaments to split one laser into: the energy-split study.

One pulse of energy E is divided into N equal beams with a total splitting efficiency
:math:`\eta` (the fraction of E that reaches the N beams together; beam splitters keep the
duration, beam radius, wavelength and lens of every beam). Each beam carries
:math:`E_N = \eta E / N` and goes through the laser model of
:func:`thzarray.source.laser.plasma_from_laser`:

- its peak power over the critical power, :math:`P/P_{cr} \propto E_N`, falls as 1/N; at or
  below the collapse threshold (P/P_cr <= 1: no self-focusing, or no energy above P_cr) the
  beam makes **no column** and contributes nothing;
- above :data:`MULTI_FILAMENT_RATIO` (P/P_cr > 10) the laser model notes that a beam likely
  breaks into several filaments and treats it as one effective column;
- the column starts later and ends sooner as :math:`E_N` falls (Marburger's collapse
  distance grows, the energy budget shrinks). The model's electron density comes from the
  clamped intensity and so does not depend on :math:`E_N`.

The N identical columns are placed as the laser model says (starts at the model's onset on
+z) on a layout family (line, grid, ring, hexagonal patch, :mod:`thzarray.array.layouts`)
with a given spacing, steered toward the target with true-time delays
(:func:`thzarray.array.steering.steering_delays`) and summed over the band with the Plasma's
absolute current spectrum (:func:`thzarray.array.gain.array_gain`). The study reports,
against N, the energy into the target of one column, of the N columns with random phases
(incoherent, exactly N times one column) and phased:

.. math:: W_{phased}(N) \le N^2\,W_1(E_N),

with equality toward a :class:`~thzarray.array.targets.Direction` (identical columns all in
phase there); over an :class:`~thzarray.array.targets.Aperture` the columns are in phase
only at its centre. Phasing gains N^2 while each column weakens with :math:`E_N`: the N that
maximises the phased energy is the answer to "how many filaments".
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thzarray.air.medium import Medium
from thzarray.array import layouts
from thzarray.array.gain import array_gain
from thzarray.array.layouts import with_delays
from thzarray.array.steering import steering_delays
from thzarray.array.targets import check_target
from thzarray.base.band import check_band
from thzarray.base.checks import as_float_array, check_scalar, shorten
from thzarray.source.laser import (
    FilamentationModel,
    Pulse,
    column_extent,
    plasma_from_laser,
)

__all__ = [
    "LAYOUT_FAMILIES",
    "MULTI_FILAMENT_RATIO",
    "SplitStudy",
    "beam_column",
    "check_pulse",
    "family_layout",
    "split_study",
]

LAYOUT_FAMILIES = ("line", "grid", "ring", "hexagonal")
"""Layout families the study builds (see :func:`family_layout`)."""

MULTI_FILAMENT_RATIO = 10.0
"""P/P_cr above which the laser model notes several filaments per beam (its validity limit)."""


def check_pulse(pulse) -> Pulse:
    """The pulse itself when it is a :class:`~thzarray.source.laser.Pulse`; ValueError otherwise."""
    if not isinstance(pulse, Pulse):
        raise ValueError(f"pulse = {type(pulse).__name__}; allowed: a Pulse(energy, duration, "
                         "beam_radius, wavelength, focal_length)")
    return pulse


def beam_column(pulse: Pulse, model: FilamentationModel | None = None):
    """The column one beam makes, or None when it makes none.

    Parameters
    ----------
    pulse : Pulse
        The beam's own settings (energy, duration, beam radius, wavelength, lens).
    model : FilamentationModel, optional

    Returns
    -------
    (Filament, Plasma, PlasmaEstimate) or None
        :func:`~thzarray.source.laser.plasma_from_laser` of the beam; None when P/P_cr is at
        or below the collapse threshold or no energy is left above the critical power (the
        column would have no length).
    """
    pulse = check_pulse(pulse)
    model = FilamentationModel() if model is None else model
    col = column_extent(pulse, model)
    onset, end = float(col["onset"]), float(col["end"])
    if not (np.isfinite(onset) and end - onset > 0):
        return None
    return plasma_from_laser(pulse, model)


def _grid_shape(count):
    ny = max(d for d in range(1, int(np.sqrt(count)) + 1) if count % d == 0)
    return count // ny, ny


def family_layout(family: str, count: int, spacing: float, length: float, *,
                  onset: float = 0.0) -> tuple:
    """N columns of one family along +z, starts in the plane z = ``onset``, centred on the axis.

    Parameters
    ----------
    family : str
        ``"line"`` (along x), ``"grid"`` (nx by ny with ny the largest divisor of N not above
        sqrt(N), x fastest; a prime N gives a line), ``"ring"`` (N on a circle whose
        neighbouring columns are ``spacing`` apart, radius spacing / (2 sin(pi/N)); N = 1 is
        one column on the axis) or ``"hexagonal"`` (N = 1 + 3r(r + 1): 1, 7, 19, 37, ...).
    count : int
        Number of columns N, >= 1.
    spacing : float
        Distance between neighbouring columns (m), > 0.
    length : float
        Column length (m), > 0.
    onset : float
        z of the column starts (m).

    Returns
    -------
    tuple of Filament
    """
    if family not in LAYOUT_FAMILIES:
        raise ValueError(f"family = {family!r} is not allowed; allowed: one of "
                         f"{', '.join(LAYOUT_FAMILIES)}")
    n = int(count)
    d = check_scalar("spacing", spacing, low=0.0, low_open=True, unit="m")
    centre = (0.0, 0.0, check_scalar("onset", onset, unit="m"))
    if family == "line" or (family == "ring" and n == 1):
        return layouts.line(n, d, length, center=centre)
    if family == "grid":
        return layouts.grid(_grid_shape(n), d, length, center=centre)
    if family == "ring":
        return layouts.ring(n, d / (2 * np.sin(np.pi / n)), length, center=centre)
    rings = int(round((np.sqrt(12 * n - 3) - 3) / 6))
    if 1 + 3 * rings * (rings + 1) != n:
        allowed = ", ".join(str(1 + 3 * r * (r + 1)) for r in range(5))
        raise ValueError(f"count = {n} is not allowed for a hexagonal patch; allowed: "
                         f"1 + 3 r (r + 1) columns ({allowed}, ...)")
    return layouts.hexagonal(rings, d, length, center=centre)


@dataclass(frozen=True, eq=False)
class SplitStudy:
    """Energy into a target against the number of beams one pulse is split into.

    Attributes
    ----------
    counts : ndarray of int, shape (K,)
        Beam counts N studied.
    efficiency : ndarray, shape (K,)
        Total splitting efficiency at each N.
    energy_per_beam : ndarray, shape (K,)
        eta E / N (J).
    power_ratio : ndarray, shape (K,)
        P/P_cr of each beam.
    has_column : ndarray of bool, shape (K,)
        Whether a beam makes a column (P/P_cr above the collapse threshold and energy left
        above P_cr).
    below_critical : ndarray of bool, shape (K,)
        P/P_cr <= 1.
    multi_filament : ndarray of bool, shape (K,)
        P/P_cr > :data:`MULTI_FILAMENT_RATIO`.
    length, onset : ndarray, shape (K,)
        Column length (m; 0 without a column) and start from the lens (m; NaN without).
    electron_density : ndarray, shape (K,)
        Column electron density (m^-3; NaN without a column).
    single, incoherent, phased : ndarray, shape (K,)
        Band energy into the target of one column, of the N columns with random phases
        (exact mean) and of the steered layout (J/sr toward a Direction, J into an
        Aperture); 0 without a column.
    best_count : int
        The N of largest phased energy (the smallest such N on a tie); 0 when no N makes a
        column.
    unit : str
        Unit of the energies.
    family : str
        Layout family.
    spacing : float
        Neighbour spacing (m).
    notes : tuple of str
        What the laser model flagged, one line per count concerned.
    """

    counts: np.ndarray
    efficiency: np.ndarray
    energy_per_beam: np.ndarray
    power_ratio: np.ndarray
    has_column: np.ndarray
    below_critical: np.ndarray
    multi_filament: np.ndarray
    length: np.ndarray
    onset: np.ndarray
    electron_density: np.ndarray
    single: np.ndarray
    incoherent: np.ndarray
    phased: np.ndarray
    best_count: int
    unit: str
    family: str
    spacing: float
    notes: tuple = ()

    @property
    def phased_over_single(self) -> np.ndarray:
        """Phased energy over one column's (the array gain; 0 without a column)."""
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(self.single > 0, self.phased / self.single, 0.0)


def _check_counts(counts):
    arr = np.atleast_1d(np.asarray(counts))
    ok = (arr.ndim == 1 and arr.size >= 1 and np.issubdtype(arr.dtype, np.integer)
          and np.all(arr >= 1) and np.all(np.diff(arr) > 0))
    if not ok:
        raise ValueError(f"counts = {shorten(arr.tolist())} is not allowed; allowed: "
                         "strictly increasing integers >= 1")
    return arr.astype(int)


def split_study(pulse: Pulse, counts, family: str, spacing: float, target, freq, *,
                efficiency=1.0, model: FilamentationModel | None = None,
                medium: Medium | None = None, spectral_weight=None) -> SplitStudy:
    """Split one pulse into N beams, make N columns, phase them: energy into a target versus N.

    Parameters
    ----------
    pulse : Pulse
        The whole laser pulse (its energy is split; duration, beam radius, wavelength and
        lens are every beam's).
    counts : array_like of int, shape (K,)
        Beam counts N, strictly increasing, >= 1.
    family : str
        Layout family (:func:`family_layout`).
    spacing : float
        Neighbour spacing of the columns (m).
    target : Direction or Aperture
        Where the energy is wanted; the layout is steered toward its centre.
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    efficiency : float or array_like, shape (K,)
        Fraction of the pulse energy that reaches the N beams together, in (0, 1]; one
        value per count to model losses growing with N.
    model : FilamentationModel, optional
    medium : Medium, optional
        Defaults to vacuum, as in :mod:`thzarray.array.gain`.
    spectral_weight : array_like, shape (F,), optional
        Receiver response over the band.

    Returns
    -------
    SplitStudy
        Arrays over the counts.

    Notes
    -----
    .. math:: E_N = \\frac{\\eta E}{N},\\qquad
              W_{phased}(N) = \\sum_j \\Delta f_j w_j \\int 2 n_T\\varepsilon_0 c
              \\Big|\\sum_{n=1}^N \\mathbf g_n e^{i\\omega_j t_n}\\Big|^2 d\\Omega

    with the true-time steering delays t_n and the fields g_n of columns made by
    :func:`~thzarray.source.laser.plasma_from_laser` (module docstring).
    """
    pulse = check_pulse(pulse)
    model = FilamentationModel() if model is None else model
    medium = Medium.vacuum() if medium is None else medium
    counts = _check_counts(counts)
    if family not in LAYOUT_FAMILIES:
        raise ValueError(f"family = {family!r} is not allowed; allowed: one of "
                         f"{', '.join(LAYOUT_FAMILIES)}")
    spacing = check_scalar("spacing", spacing, low=0.0, low_open=True, unit="m")
    target = check_target(target)
    freq = check_band(freq)
    eta = as_float_array("efficiency", efficiency, low=0.0, low_open=True, high=1.0)
    if eta.ndim == 0:
        eta = np.full(counts.shape, float(eta))
    elif eta.shape != counts.shape:
        raise ValueError(f"efficiency has shape {eta.shape}; allowed: one number or one per "
                         f"count, shape {counts.shape}")
    for n in counts:  # refuse a bad count for the family before any physics is run
        family_layout(family, int(n), spacing, 1.0)
    k = counts.size
    per_beam = eta * pulse.energy / counts
    p_cr = model.critical_power(pulse.wavelength)
    out = {name: np.zeros(k) for name in ("ratio", "length", "single", "incoherent", "phased")}
    onset, density = np.full(k, np.nan), np.full(k, np.nan)
    has = np.zeros(k, dtype=bool)
    notes = []
    for i, (n, energy) in enumerate(zip(counts, per_beam)):
        beam = pulse.replace(energy=float(energy))
        out["ratio"][i] = beam.peak_power / p_cr
        made = beam_column(beam, model)
        if made is None:
            notes.append(f"N = {n}: P/P_cr = {out['ratio'][i]:.4g} per beam: no column")
            continue
        fil, plasma, est = made
        notes.extend(f"N = {n}: {note}" for note in est.notes)
        has[i] = True
        out["length"][i], onset[i], density[i] = est.length, est.onset, est.electron_density
        lay = family_layout(family, int(n), spacing, est.length, onset=est.onset)
        lay = with_delays(lay, steering_delays(lay, target.theta, target.phi, medium))
        g = array_gain(lay, target, freq, medium=medium, plasma=plasma,
                       spectral_weight=spectral_weight, trials=2)
        out["single"][i], out["incoherent"][i], out["phased"][i] = (g.single, g.incoherent,
                                                                    g.phased)
    phased = out["phased"]
    best = int(counts[int(np.argmax(phased))]) if np.any(phased > 0) else 0
    return SplitStudy(counts, eta, per_beam, out["ratio"], has, out["ratio"] <= 1.0,
                      out["ratio"] > MULTI_FILAMENT_RATIO, out["length"], onset, density,
                      out["single"], out["incoherent"], phased, best, target.unit, family,
                      spacing, tuple(notes))
