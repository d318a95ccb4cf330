"""What a design says to every command: the band, the target, the phasing of its columns,
and which of its sections a command uses.

One design flows through every command. The phasing of its columns is resolved once, the
same way everywhere (:func:`phasing`):

1. delays asked for on the command line (``--toward``) are computed by the design's
   ``[steering].method``;
2. otherwise stored delays (``[steering].delays``, as ``steer --write`` writes them) are
   used as they are;
3. otherwise a ``[steering]`` section asks for delays toward ``[steering].toward`` (or the
   band cone when no direction is given), computed by its method;
4. otherwise the columns keep their own delays.

The band is ``--band``, else ``[steering].band``, else the receiver's pass band, else
``[cone].band``, else the observation frequencies. The target is the steering direction
(an :class:`~thzarray.array.targets.Aperture` when ``[steering]`` gives one), else the band
cone of the first column (:func:`thzarray.app.jobs.cones.cone_direction`).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from thzarray.app.design import Design
from thzarray.app.jobs.cones import cone_direction
from thzarray.array.targets import Aperture, Direction
from thzarray.base.geometry import unit_vectors

__all__ = ["Phasing", "band_of", "phasing", "section_notes", "target_of"]

# Sections each command uses; a present section a command does not use gets one line.
_USES = {
    "pattern": {"medium", "laser", "plasma", "steering", "observe", "cone", "calibration",
                "outputs"},
    "map": {"medium", "laser", "plasma", "steering", "receiver", "plane", "calibration",
            "outputs"},
    "budget": {"medium", "laser", "plasma", "steering", "receiver", "budget", "calibration",
               "outputs"},
    "waveform": {"medium", "laser", "plasma", "steering", "receiver", "waveform",
                 "calibration", "outputs"},
    "steer": {"medium", "laser", "plasma", "steering", "receiver", "cone", "observe",
              "outputs"},
    "compare": {"medium", "laser", "plasma", "steering", "receiver", "cone", "observe",
                "calibration", "outputs"},
    "split": {"medium", "laser", "steering", "receiver", "cone", "observe", "layout", "split",
              "outputs"},
    "bench": {"medium", "laser", "plasma", "steering", "receiver", "cone", "observe",
              "bench", "outputs"},
    "tolerance": {"medium", "laser", "plasma", "steering", "receiver", "cone", "observe",
                  "tolerance", "outputs"},
}
_WHO = {"tolerance": "tolerance", "receiver": "map, budget, waveform and the "
        "steering band", "plane": "map", "budget": "budget", "observe": "pattern (and as the "
        "last band)", "cone": "pattern (and as a band)", "steering": "every command",
        "waveform": "waveform (and a peak-field calibration)", "calibration": "every command "
        "that prints absolute energies or fields", "split": "split", "bench": "bench"}
_OPTIONAL = ("tolerance", "receiver", "plane", "budget", "observe", "cone", "waveform",
             "calibration", "split", "bench")
_ALWAYS = {"design", "source", "filament", "filaments", "layout"}


def section_notes(design: Design, command: str) -> list:
    """One line for each section of the design that ``command`` does not use."""
    used = _USES.get(command)
    if used is None:
        return []
    notes = []
    cal = design.sections.calibration
    if cal is not None and cal.kind == "peak_field" and "calibration" in used:
        used = used | {"waveform"}  # the calibration's model value is a waveform's peak
    for name in _OPTIONAL:
        if getattr(design.sections, name) is not None and name not in used | _ALWAYS:
            notes.append(f"[{name}] is not used by {command} (it is used by {_WHO[name]})")
    return notes


def _band_text(freq) -> str:
    if freq.size == 1:
        return f"{freq[0] / 1e12:.4g} THz"
    return f"{freq[0] / 1e12:.4g}-{freq[-1] / 1e12:.4g} THz ({freq.size} samples)"


def band_of(design: Design, override=None):
    """(freq (Hz), where it came from) of the band used for gains, steering and tolerances."""
    st = design.steering
    points = 9 if st is None else st.band_points
    if override is not None:
        band, source = np.atleast_1d(np.asarray(override, dtype=float)), "--band"
    elif st is not None and st.band is not None:
        band, source = np.asarray(st.band, dtype=float), "[steering].band"
    elif design.receiver_band is not None:
        return design.receiver_band, "the receiver's pass band"
    elif design.cone is not None and design.cone.band is not None:
        band, source = np.asarray(design.cone.band, dtype=float), "[cone].band"
    else:
        f = np.asarray(design.grid.freq, float)
        return f, "[observe].freq"
    if band.size == 1:
        return band, source
    return np.linspace(band[0], band[-1], points), source


def target_of(design: Design, band, toward=None):
    """(target, where its direction came from): a Direction, or an Aperture when the design's
    [steering] gives an aperture."""
    st = design.steering
    if toward is not None:
        (theta, phi), source = toward, "--toward"
    elif st is not None and st.toward is not None:
        (theta, phi), source = st.toward, "[steering].toward"
    else:
        (theta, phi), source = cone_direction(design, band), "the band cone of the first column"
    if not 0.0 <= theta <= np.pi:
        raise ValueError(f"toward theta = {np.degrees(theta):.6g} deg is not allowed; allowed: "
                         "0 to 180 deg")
    if st is not None and st.aperture_radius is not None:
        return Aperture(theta, phi, radius=st.aperture_radius,
                        distance=st.aperture_distance), source
    return Direction(theta, phi), source


@dataclass(frozen=True, eq=False)
class Phasing:
    """The columns with the delays a command uses, the target and the band.

    Attributes
    ----------
    filaments : tuple of Filament
        The columns with their delays.
    delays : ndarray, shape (N,)
        The delays (s).
    target : Direction or Aperture
    band : ndarray, shape (F,)
        Band samples (Hz).
    how : str
        Where the delays come from.
    band_source, target_source : str
        Where the band and the target direction come from.
    method : str or None
        The steering method that computed the delays (None when not computed here).
    design_result : SteeringDesign or None
        The designer's result for the ``optimise`` method.
    """

    filaments: tuple
    delays: np.ndarray
    target: object
    band: np.ndarray
    how: str
    band_source: str
    target_source: str
    method: str | None = None
    design_result: object = None

    def describe(self) -> str:
        """One line: target, band and delays used."""
        t = self.target
        where = (f"aperture of radius {t.radius * 1e3:.3g} mm at {t.distance:.4g} m"
                 if isinstance(t, Aperture) else "direction")
        return (f"target theta {np.degrees(t.theta):.4g} deg, phi {np.degrees(t.phi):.4g} deg "
                f"({where}, from {self.target_source}); band {_band_text(self.band)} (from "
                f"{self.band_source}); delays: {self.how}")

    def summary(self) -> dict:
        t = self.target
        out = {"target": {"theta_deg": float(np.degrees(t.theta)),
                          "phi_deg": float(np.degrees(t.phi)),
                          "kind": "aperture" if isinstance(t, Aperture) else "direction",
                          "from": self.target_source},
               "band_hz": self.band.tolist(), "band_from": self.band_source,
               "delays_s": self.delays.tolist(), "delays_from": self.how}
        if isinstance(t, Aperture):
            out["target"].update(radius_m=t.radius, range_m=t.distance)
        return out


def _computed(design, target, band, method):
    from thzarray.array.beam import ConeNullWarning
    from thzarray.array.designer import design_steering
    from thzarray.array.steering import phase_only_delays, steering_delays

    st = design.steering
    if method == "optimise":
        with warnings.catch_warnings():
            # the design's report carries the same statement in its notes
            warnings.simplefilter("ignore", ConeNullWarning)
            result = design_steering(design.filaments, target, band,
                                     max_delay=None if st is None else st.max_delay,
                                     medium=design.medium, plasma=design.plasma)
        return result.delays, result
    if method == "phase-only":
        return phase_only_delays(design.filaments, target.theta, target.phi, st.design_freq,
                                 design.medium), None
    return steering_delays(design.filaments, target.theta, target.phi, design.medium), None


def _check_target_size(design, target, freq):
    """Refuse an aperture whose quadrature cannot fit (gains, tolerances and the optimiser
    all evaluate the columns' fields at its nodes); ``check`` runs this too."""
    from thzarray.array.targets import target_field_bytes
    from thzarray.base.memory import DEFAULT_MEMORY_BUDGET

    if not isinstance(target, Aperture):
        return
    need = target_field_bytes(design.filaments, target, freq, design.medium)
    if need > DEFAULT_MEMORY_BUDGET:
        raise ValueError(f"steering.aperture_radius: {target.radius:g} m at "
                         f"{target.distance:g} m needs {need} bytes ({need / 2**30:.3g} GiB) of "
                         f"fields over the aperture for {len(design.filaments)} columns and "
                         f"{np.size(freq)} band frequencies; allowed: at most "
                         f"{DEFAULT_MEMORY_BUDGET} bytes: a smaller aperture or a compacter "
                         "layout")


def phasing(design: Design, toward=None, band=None) -> Phasing:
    """Resolve the design's delays, target and band (module docstring)."""
    from thzarray.array.layouts import with_delays

    freq, band_source = band_of(design, band)
    target, target_source = target_of(design, freq, toward)
    _check_target_size(design, target, freq)
    st = design.steering
    method = "true-time" if st is None else st.method
    result = None
    if toward is not None:
        delays, result = _computed(design, target, freq, method)
        how = f"{method} toward --toward"
        if st is not None and st.delays is not None:
            how += " (the stored [steering].delays are not used)"
    elif st is not None and st.delays is not None:
        delays, how, method = np.asarray(st.delays, dtype=float), "stored [steering].delays", None
    elif st is not None:
        delays, result = _computed(design, target, freq, method)
        how = f"{method} toward {target_source}"
    else:
        delays = np.array([f.delay for f in design.filaments])
        how, method = "the columns' own delays (no [steering])", None
    delays = np.asarray(delays, dtype=float)
    return Phasing(with_delays(design.filaments, delays), delays, target, freq, how,
                   band_source, target_source, method, result)


def near_ranges_note(filaments, ranges, what: str) -> str | None:
    """A note when some of ``ranges`` (m, from the origin) are no farther than the columns'
    far ends: those receiver points lie behind or beside the plasma, not in front of it."""
    ends = [np.linalg.norm(np.asarray(f.start) + f.length * np.asarray(f.axis))
            for f in filaments]
    far_end = float(max(ends))
    near = np.asarray(ranges, float)
    near = near[near <= far_end]
    if near.size == 0:
        return None
    return (f"{what} {', '.join(f'{r:g}' for r in near[:4])}{' ...' if near.size > 4 else ''} "
            f"m from the origin are no farther than the columns' far end ({far_end:.4g} m): "
            "those points lie behind or beside the plasma")


def target_unit_vector(target) -> np.ndarray:
    """Unit vector toward a target's centre."""
    return unit_vectors(target.theta, target.phi)[0]
