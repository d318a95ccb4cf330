r"""Steering a layout's emission toward a target: delays, squint, a designer and beam metrics.

True-time steering
------------------
Column n contributes toward :math:`\hat r_0` with phase
:math:`\omega t_n - k\hat r_0\cdot\mathbf r_n + u_n s_n`, where :math:`s_n` is its emission
centre along the axis (L/2 for a uniform column, the profile's centroid otherwise, see
:attr:`thzarray.source.filament.Filament.emission_centre`) and
:math:`u_n = (\omega/c)(n_{g,n} - n_T\hat r_0\cdot\hat a_n)`, :math:`n_{g,n}` the column's
group index (:attr:`~thzarray.source.filament.Filament.group_index`, else the medium's). The
phase is set by where and when the current flows, not by its direction: a transverse
(two-colour) current is steered by the same delays. All columns arrive in phase at every
frequency when

.. math:: t_n = \frac{n_T\,\hat r_0\cdot(\mathbf r_n + s_n\hat a_n) - n_{g,n} s_n}{c} + C,

C chosen so that the smallest delay is 0. For identical columns the centre term is common
and this is the array's true-time-delay rule; for two columns at spacing d,
:math:`\sin\theta_0 = c\,\Delta t/(n_T d)` (C. A. Balanis, Antenna Theory, arrays chapter).
A delay plate of limited depth realises these delays only modulo one period of a design
frequency (:func:`phase_only_delays`); the beam is then exact at that frequency and its
harmonics and squints in between (:func:`squint`).

Steering onto the cone's flank
------------------------------
Phasing multiplies the element pattern by the array factor; it cannot lift the element
pattern. One column's cone is hollow (null on its axis), so a target off the cone gets
:math:`N^2` times what *one column sends there*, not :math:`N^2` times the cone's maximum.
Every report states the element level at the target relative to the cone maximum
(:func:`cone_level`) and warns (:class:`~thzarray.array.beam.ConeNullWarning`) when the
target sits in the null.

The beam metrics of a steered layout are in :mod:`thzarray.array.beam`, the delay designer
in :mod:`thzarray.array.designer`.
"""


from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c
from scipy.optimize import minimize_scalar

from thzarray.air.medium import Medium
from thzarray.array.arrayfield import array_factor
from thzarray.array.lobes import angle_between, climb, resolution_angle
from thzarray.base.band import band_weights, check_band
from thzarray.base.checks import check_scalar
from thzarray.base.geometry import axis_frame, unit_vectors
from thzarray.field.cone import cone_angle
from thzarray.field.farfield import far_field
from thzarray.source.column_plasma import ColumnPlasma
from thzarray.source.filament import as_filaments
from thzarray.source.plasma import Plasma

__all__ = [
    "ConeLevel",
    "SquintReport",
    "cone_level",
    "phase_only_delays",
    "squint",
    "steering_delays",
]

def _direction(theta, phi):
    theta = check_scalar("theta", theta, low=0.0, high=np.pi, unit="rad")
    phi = check_scalar("phi", phi, unit="rad")
    return theta, phi, unit_vectors(theta, phi)[0]


def steering_delays(filaments, theta, phi, medium: Medium | None = None) -> np.ndarray:
    """True-time delays that bring every column's contribution in phase toward (theta, phi).

    Parameters
    ----------
    filaments : sequence of Filament
    theta, phi : float
        Target direction (rad); theta in [0, pi].
    medium : Medium, optional
        Defaults to vacuum.

    Returns
    -------
    ndarray, shape (N,)
        Delays (s), the smallest 0; valid at all frequencies.

    Notes
    -----
    .. math:: t_n = \\frac{n_T\\,\\hat r_0\\cdot(\\mathbf r_n + s_n\\hat a_n) - n_{g,n} s_n}{c} + C

    (module docstring; C. A. Balanis, Antenna Theory, arrays chapter).
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    _, _, r0 = _direction(theta, phi)
    t = np.empty(len(fils))
    for i, f in enumerate(fils):
        s = f.emission_centre
        centre = np.asarray(f.start) + s * np.asarray(f.axis)
        t[i] = (medium.n_thz * (r0 @ centre) - f.group_index_in(medium) * s) / c
    return t - t.min()


def phase_only_delays(filaments, theta, phi, design_freq, medium: Medium | None = None):
    """Steering delays folded into one period of ``design_freq`` (a delay plate of limited depth).

    Parameters
    ----------
    filaments : sequence of Filament
    theta, phi : float
        Target direction (rad).
    design_freq : float
        Frequency (Hz) at which the folded delays are exact.
    medium : Medium, optional

    Returns
    -------
    ndarray, shape (N,)
        Delays in [0, 1/design_freq) (s), smallest 0.

    Notes
    -----
    .. math:: t_n' = t_n \\bmod (1/f_0)

    exact at :math:`f_0` and its harmonics, squinting elsewhere (see :func:`squint`).
    """
    f0 = check_scalar("design_freq", design_freq, low=0.0, low_open=True, unit="Hz")
    folded = np.mod(steering_delays(filaments, theta, phi, medium), 1.0 / f0)
    return folded - folded.min()


# --- element level at the target ---------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class ConeLevel:
    """Element (single-column) energy at the target relative to the cone maximum.

    Attributes
    ----------
    freq : ndarray, shape (F,)
        Frequencies (Hz).
    level : ndarray, shape (F,)
        ``sum_n q_n^2 |g_n(target)|^2 / sum_n q_n^2 max|g_n|^2`` at each frequency.
    band : float
        The same ratio of band sums (weights of :func:`thzarray.base.band.band_weights`).
    """

    freq: np.ndarray
    level: np.ndarray
    band: float

    @property
    def band_db(self) -> float:
        return float(10 * np.log10(self.band)) if self.band > 0 else -np.inf

    @property
    def level_db(self) -> np.ndarray:
        with np.errstate(divide="ignore"):
            return 10 * np.log10(self.level)


def _varies_along(plasma, fil) -> bool:
    """True when ``plasma`` is a ColumnPlasma that varies along ``fil``."""
    return isinstance(plasma, ColumnPlasma) and plasma.constant_on(fil) is None


def _element_levels(fil, theta, phi, freq, medium, plasma):
    el = fil.replace(start=(0.0, 0.0, 0.0), delay=0.0, amplitude=1.0)
    at_target = far_field(el, freq, theta, phi, medium, plasma).magnitude_squared
    a = np.asarray(el.axis)
    # The pattern of a transverse current is largest in the plane across its direction.
    e1 = axis_frame(a)[0] if el.is_axial else np.cross(a, el.current)

    def angles(psi):
        d = np.cos(psi)[..., None] * a + np.sin(psi)[..., None] * e1
        return np.arccos(np.clip(d[..., 2], -1, 1)), np.arctan2(d[..., 1], d[..., 0])

    if el.is_uniform and el.is_axial and not _varies_along(plasma, el):
        column_medium = medium if el.group_index is None else medium.with_group_index(
            el.group_index)
        psi = cone_angle(el.length, freq, column_medium)
    else:
        grid = np.linspace(0.0, np.pi, 2049)
        th, ph = angles(grid)
        vals = far_field(el, freq[:, None], th[None], ph[None], medium, plasma).magnitude_squared
        psi = np.empty(freq.size)
        for j, f in enumerate(freq):
            i = int(np.argmax(vals[j]))
            lo, hi = grid[max(i - 1, 0)], grid[min(i + 1, grid.size - 1)]
            res = minimize_scalar(
                lambda p: -far_field(el, f, *angles(np.array(p)), medium, plasma).magnitude_squared,
                bounds=(lo, hi), method="bounded", options={"xatol": 1e-10})
            psi[j] = res.x if -res.fun >= vals[j, i] else grid[i]
    th, ph = angles(psi)
    at_max = far_field(el, freq, th, ph, medium, plasma).magnitude_squared
    return at_target, np.maximum(at_max, at_target)


def cone_level(filaments, theta, phi, freq, medium: Medium | None = None,
               plasma: Plasma | None = None, spectral_weight=None) -> ConeLevel:
    """How far below the cone maximum the element pattern is at (theta, phi).

    Parameters
    ----------
    filaments : sequence of Filament
    theta, phi : float
        Target direction (rad).
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    medium, plasma, spectral_weight : optional

    Returns
    -------
    ConeLevel

    Notes
    -----
    The cone maximum of a uniform axial column is at :func:`thzarray.field.cone.cone_angle`
    from its axis (in the medium with the column's group index); for a profiled or
    transverse column, or a plasma varying along it, it is searched on a 2049-point grid of
    angles (in the plane across the current for a transverse one) and refined.
    The array factor's magnitude is at most sum q_n whatever the delays, so
    ``N^2 * level`` bounds what phasing can gain toward the target over one column's cone
    maximum.
    """
    fils = as_filaments(filaments)
    theta, phi, _ = _direction(theta, phi)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, spectral_weight)
    num, den = np.zeros(freq.size), np.zeros(freq.size)
    cache = {}
    for f in fils:
        key = (f.length, f.axis, f.current_direction, f.group_index, f.pieces.key())
        if key not in cache:
            cache[key] = _element_levels(f, theta, phi, freq, medium, plasma)
        t, m = cache[key]
        num += f.amplitude**2 * t
        den += f.amplitude**2 * m
    with np.errstate(invalid="ignore", divide="ignore"):
        level = np.where(den > 0, num / den, 0.0)
    band = float(np.sum(bw * num) / np.sum(bw * den)) if np.sum(bw * den) > 0 else 0.0
    return ConeLevel(freq, level, band)


# --- squint -------------------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class SquintReport:
    """Main-lobe direction of the array factor across a band.

    Attributes
    ----------
    freq : ndarray, shape (F,)
        Frequencies (Hz).
    theta, phi : ndarray, shape (F,)
        Direction (rad) of the array-factor lobe reached by climbing from the target.
    pointing_error : ndarray, shape (F,)
        Angle between that lobe and the target (rad).
    target_level : ndarray, shape (F,)
        ``|AF(target)|^2 / |AF(lobe)|^2``: the fraction of the lobe's peak the target receives.
    coherence : ndarray, shape (F,)
        ``|AF(target)|^2 / (sum |q_n|)^2``: 1 when every column arrives in phase.
    """

    freq: np.ndarray
    theta: np.ndarray
    phi: np.ndarray
    pointing_error: np.ndarray
    target_level: np.ndarray
    coherence: np.ndarray


def squint(filaments, theta, phi, freq, medium: Medium | None = None) -> SquintReport:
    """Where the array factor's main lobe points at each frequency, for the layout's delays.

    Parameters
    ----------
    filaments : sequence of Filament
        The layout with its delays (e.g. from :func:`phase_only_delays`).
    theta, phi : float
        Target direction (rad).
    freq : array_like, shape (F,)
        Increasing frequencies (Hz).
    medium : Medium, optional

    Returns
    -------
    SquintReport

    Notes
    -----
    True-time delays keep the lobe on the target at all frequencies; a phase progression
    fixed at :math:`f_0` moves a linear array's lobe to
    :math:`\\sin\\theta(f) = (f_0/f)\\sin\\theta_0` (beam squint).
    """
    fils = as_filaments(filaments)
    theta, phi, _ = _direction(theta, phi)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    starts = np.array([f.start for f in fils])
    top = np.sum(np.abs([f.amplitude for f in fils])) ** 2
    out = np.empty((5, freq.size))
    for j, f in enumerate(freq):
        def af2(th, ph, f=f):
            return np.abs(array_factor(fils, f, th, ph, medium, compiled=False)) ** 2
        at_target = float(af2(np.array([theta]), np.array([phi]))[0])
        res = resolution_angle(starts, f, medium)
        if np.isfinite(res):
            th, ph, peak = climb(af2, theta, phi, res / 20)
        else:
            th, ph, peak = theta, phi, at_target
        peak = max(peak, at_target)
        out[:, j] = (th, ph, angle_between(th, ph, theta, phi),
                     at_target / peak if peak > 0 else 0.0, at_target / top)
    return SquintReport(freq, *out)


