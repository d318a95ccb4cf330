"""The design's ``[source]`` section applied to its columns: current direction, two-colour
profile, the driver's group index and a plasma that varies along the column.

- ``kind = "two-colour"``: every column carries a transverse photocurrent along
  ``polarization`` (:attr:`~thzarray.source.filament.Filament.current_direction`), shaped
  along the column by :func:`~thzarray.source.twocolour.two_colour_profile` (times the
  column's own profile, if any), with the dephasing length given or computed from the air's
  Ciddor indices and the plasma density (:func:`~thzarray.source.twocolour.dephasing_length`).
- The driver's group index: ``group_index`` when given; else the air's (``driver = "air"``);
  else the air's plus the plasma's :math:`n_e/(2n_c)`
  (:func:`~thzarray.source.plasma.plasma_group_index_shift`) when the design states a plasma
  (``[plasma]`` or ``[laser]``; with a density along the column, its mean over the column).
- ``plasma_z`` with ``plasma_density`` and/or ``plasma_collision_rate``: a
  :class:`~thzarray.source.column_plasma.ColumnPlasma` replaces the uniform plasma.

:func:`apply_source` returns the columns, the plasma and one line per choice made, which
every command prints with the design's notes.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["SourceSetting", "apply_source"]


@dataclass(frozen=True)
class _Product:
    """A column's own profile times the two-colour photocurrent, as one callable of s (m)."""

    own: object
    twocolour: object

    def __call__(self, s):
        return self.own.profile_values(s) * self.twocolour(s)


@dataclass(frozen=True, eq=False)
class SourceSetting:
    """What ``[source]`` made of the design's columns.

    Attributes
    ----------
    filaments : tuple of Filament
    plasma : Plasma, ColumnPlasma or None
    group_index : float
        The driver's group index given to every column.
    group_index_from : str
        Where it comes from (one phrase).
    dephasing_length : float or None
        L_d (m) of a two-colour source.
    notes : tuple of str
    """

    filaments: tuple
    plasma: object
    group_index: float
    group_index_from: str
    dephasing_length: float | None
    notes: tuple
    relative_phase: float = 0.0
    current_direction: tuple | None = None

    def column(self, length: float, axis=(0.0, 0.0, 1.0)):
        """A uniform column of ``length`` made the way this source makes the design's."""
        from thzarray.source.filament import Filament
        from thzarray.source.twocolour import two_colour_samples

        if self.dephasing_length is None:
            return Filament(length, axis=axis, group_index=self.group_index)
        across, _ = _across(self.current_direction, axis)
        return Filament(length, axis=axis, group_index=self.group_index,
                        current_direction=across,
                        profile=two_colour_samples(length, self.dephasing_length,
                                                   self.relative_phase, 64))


def _across(polarization, axis):
    """The polarization's part across ``axis``, normalised, and the angle it was turned by
    (None and the angle to the axis when it lies within 5 deg of the axis)."""
    p = np.asarray(polarization, float)
    p = p / np.max(np.abs(p))
    p = p / np.linalg.norm(p)
    a = np.asarray(axis, float)
    across = p - (p @ a) * a
    size = np.linalg.norm(across)
    if size < np.sin(np.radians(5.0)):
        return None, float(np.arccos(min(1.0, abs(p @ a))))
    return tuple(across / size), float(np.arcsin(min(1.0, abs(p @ a))))


def _density_of(plasma, column_plasma, length) -> float:
    """Mean electron density over a column (m^-3)."""
    if column_plasma is None:
        return float(plasma.electron_density)
    s = np.linspace(0.0, length, 257)
    n_e, _ = column_plasma.values_at(s, length)
    return float(np.trapezoid(n_e, s) / length)


def _column_plasma(sec, plasma, problems):
    from thzarray.source.column_plasma import ColumnPlasma

    given = {k: getattr(sec, k) for k in ("plasma_density", "plasma_collision_rate")
             if getattr(sec, k) is not None}
    if sec.plasma_z is None and not given:
        return None
    if sec.plasma_z is None or not given:
        problems.append("source.plasma_z: goes with plasma_density and/or "
                        "plasma_collision_rate; allowed: plasma_z and at least one of them")
        return None
    if plasma is None:
        problems.append("source.plasma_density: a plasma along the column needs the plasma "
                        "it varies from; allowed: add [plasma] or [laser]")
        return None
    z = np.asarray(sec.plasma_z, float)
    for key, values in given.items():
        if len(values) != z.size:
            problems.append(f"source.{key}: {len(values)} values for {z.size} plasma_z "
                            "positions; allowed: one value per position")
            return None
    try:
        return ColumnPlasma(plasma, **{("density" if k == "plasma_density" else
                                        "collision_rate"): (z, np.asarray(v, float))
                                       for k, v in given.items()})
    except ValueError as exc:
        problems.append(f"source.plasma_z: {exc}")
        return None


def apply_source(sec, filaments, medium, plasma, wavelength, estimate, problems):
    """Apply ``[source]`` (or its defaults when ``sec`` is None) to the columns.

    Parameters
    ----------
    sec : SourceSection or None
    filaments : tuple of Filament
    medium : Medium
    plasma : Plasma or None
    wavelength : float
        The driving laser's vacuum wavelength (m).
    estimate : PlasmaEstimate or None
        What ``[laser]`` found (its group index shift), when the design has one.
    problems : list of str
        Problems are appended here (one line each, naming the key).

    Returns
    -------
    SourceSetting or None
        None when a problem was found.
    """
    from thzarray.app.design.schema import SCHEMA
    from thzarray.app.design.sections import SECTION_TYPES
    from thzarray.source.plasma import plasma_group_index_shift
    from thzarray.source.twocolour import (
        dephasing_length,
        two_colour_profile,
        two_colour_samples,
    )

    if sec is None:
        sec = SECTION_TYPES["source"](**{k: s.default for k, s in SCHEMA["source"].items()})
    start = len(problems)
    column = _column_plasma(sec, plasma, problems)
    if len(problems) > start:
        return None
    notes = []
    length = max(f.length for f in filaments)
    n_e = None if plasma is None else _density_of(plasma, column, length)
    if sec.group_index is not None:
        n_g, origin = float(sec.group_index), "[source].group_index"
    elif sec.driver == "air" or plasma is None:
        n_g = float(medium.n_group)
        origin = ("the air's ([source].driver = 'air')" if sec.driver == "air" else
                  "the air's (no plasma stated)")
    else:
        shift = (estimate.plasma_group_index_shift if estimate is not None and column is None
                 else float(plasma_group_index_shift(n_e, wavelength)))
        n_g = float(medium.n_group) + shift
        origin = (f"the air's {medium.n_group:.7f} + the plasma's n_e/(2 n_c) = {shift:.3g}"
                  + (" (mean over the column)" if column is not None else ""))
    if not 1.0 <= n_g <= 2.0:
        problems.append(f"source.group_index: {n_g:.6g} is out of range; allowed: 1 to 2")
        return None
    notes.append(f"driver group index {n_g:.7f}: {origin}; THz index {medium.n_thz:.7f}")
    l_d = None
    changes = dict(group_index=n_g)
    out = []
    if sec.kind == "two-colour":
        if sec.dephasing_length is not None:
            l_d = float(sec.dephasing_length)
        else:
            try:
                l_d = dephasing_length(medium, wavelength, electron_density=n_e or 0.0)
            except ValueError as exc:
                problems.append(f"source.dephasing_length: not given and not computable "
                                f"({exc}); allowed: give it, e.g. '5 cm'")
                return None
            if not np.isfinite(l_d):
                problems.append("source.dephasing_length: the medium has no dispersion "
                                "between the two colours (vacuum); allowed: give it")
                return None
        notes.append(f"two-colour source: current along {tuple(round(v, 4) for v in sec.polarization)}, "
                     f"dephasing length {100 * l_d:.3g} cm"
                     f"{' (given)' if sec.dephasing_length is not None else ' (Ciddor)'}, "
                     f"relative phase {np.degrees(sec.relative_phase):.3g} deg; its "
                     "amplitude is the single-colour plasma current's, not a photocurrent "
                     "model's (absolute energies need a [calibration])")
        photo = two_colour_profile(l_d, sec.relative_phase)
        changes["current_direction"] = tuple(sec.polarization)
    tilt = 0.0
    for i, fil in enumerate(filaments):
        mine = dict(changes)
        if sec.kind == "two-colour":
            # 64 samples per dephasing length: far field within 2e-5 of the exact sine
            mine["profile"] = (two_colour_samples(fil.length, l_d, sec.relative_phase, 64)
                               if fil.is_uniform else _Product(fil, photo))
            across, angle = _across(sec.polarization, fil.axis)
            if across is None:
                problems.append(f"source.polarization: {tuple(sec.polarization)} is within "
                                f"{np.degrees(angle):.3g} deg of column {i}'s axis; allowed: "
                                "a direction across the columns (the laser's polarization)")
                return None
            mine["current_direction"], tilt = across, max(tilt, angle)
        try:
            out.append(fil.replace(**mine))
        except ValueError as exc:
            key = "polarization" if "current_direction" in str(exc) else "kind"
            problems.append(f"source.{key}: column {i}: {exc}")
            return None
    if tilt > 1e-9:
        notes.append(f"[source].polarization projected across the columns' axes (turned by "
                     f"up to {np.degrees(tilt):.3g} deg): a laser's polarization is "
                     "transverse to its beam")
    if column is not None:
        notes.append("plasma varies along the columns ([source].plasma_z): the current "
                     "spectrum is integrated along each column")
    return SourceSetting(tuple(out), plasma if column is None else column, n_g, origin, l_d,
                         tuple(notes), float(sec.relative_phase or 0.0),
                         tuple(sec.polarization) if sec.kind == "two-colour" else None)
