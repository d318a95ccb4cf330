r"""Steering a layout's emission toward a target: delays, squint, a designer and beam metrics.

True-time steering
------------------
Column n contributes toward :math:`\hat r_0` with phase
:math:`\omega t_n - k\hat r_0\cdot\mathbf r_n + u_n s_n`, where :math:`s_n` is its emission
centre along the axis (L/2 for a uniform column, the profile's centroid otherwise) and
:math:`u_n = (\omega/c)(n_g - n_T\hat r_0\cdot\hat a_n)`. All columns arrive in phase at every
frequency when

.. math:: t_n = \frac{n_T\,\hat r_0\cdot(\mathbf r_n + s_n\hat a_n) - n_g s_n}{c} + C,

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
(:func:`cone_level`) and warns (:class:`ConeNullWarning`) when the target sits in the null.

The designer
------------
:func:`design_steering` maximises the band energy into a target (direction or receiver,
:mod:`thzarray.gain`) over the delays with L-BFGS-B and the analytic gradient of
:meth:`thzarray.gain.TargetFields.energy_and_gradient`, within ``0 <= t_n <= max_delay``,
optionally trying several azimuths of the cone, and compares the result with plain
true-time steering.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
from scipy import ndimage
from scipy.constants import c
from scipy.optimize import brentq, minimize, minimize_scalar

from . import _array_kernels
from ._validate import as_float_array, check_scalar
from .cone import cone_angle
from .farfield import axis_frame, far_field, unit_vectors
from .filament import Filament, as_sources
from .gain import check_band, check_target, layout_extent, band_weights, target_fields
from .layouts import array_factor, array_far_field, with_delays
from .maps import sky_grid, sky_map
from .medium import Medium
from .plasma import Plasma

__all__ = [
    "ConeLevel",
    "ConeNullWarning",
    "GratingLobe",
    "SquintReport",
    "SteeringDesign",
    "SteeringReport",
    "cone_level",
    "design_steering",
    "phase_only_delays",
    "squint",
    "steering_delays",
    "steering_report",
]

# A target whose element level is this far below the cone maximum (dB) is "in the null".
NULL_LEVEL_DB = -20.0
# Array-factor level (relative to the in-phase maximum) above which a lobe counts as grating.
GRATING_LEVEL = 0.5


class ConeNullWarning(UserWarning):
    """The target lies in the element pattern's null: phasing cannot put energy there."""


def _direction(theta, phi):
    theta = check_scalar("theta", theta, low=0.0, high=np.pi, unit="rad")
    phi = check_scalar("phi", phi, unit="rad")
    return theta, phi, unit_vectors(theta, phi)[0]


def _emission_centre(fil: Filament) -> float:
    """Centroid of the column's profile along its axis (m); L/2 when uniform."""
    if fil.is_uniform:
        return 0.5 * fil.length
    h = np.diff(fil._breaks)
    powers = np.arange(4)
    m0 = np.sum(fil._coefs * h[:, None] ** (powers + 1) / (powers + 1), axis=1)
    m1 = np.sum(fil._coefs * h[:, None] ** (powers + 2) / (powers + 2), axis=1)
    total = m0.sum()
    if abs(total) < 1e-12 * np.sum(np.abs(m0)):
        return 0.5 * fil.length
    return float((np.sum(fil._breaks[:-1] * m0) + m1.sum()) / total)


def steering_delays(sources, theta, phi, medium: Medium | None = None) -> np.ndarray:
    """True-time delays that bring every column's contribution in phase toward (theta, phi).

    Parameters
    ----------
    sources : sequence of Filament
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
    .. math:: t_n = \\frac{n_T\\,\\hat r_0\\cdot(\\mathbf r_n + s_n\\hat a_n) - n_g s_n}{c} + C

    (module docstring; C. A. Balanis, Antenna Theory, arrays chapter).
    """
    fils = as_sources(sources)
    medium = Medium.vacuum() if medium is None else medium
    _, _, r0 = _direction(theta, phi)
    t = np.empty(len(fils))
    for i, f in enumerate(fils):
        s = _emission_centre(f)
        centre = np.asarray(f.start) + s * np.asarray(f.axis)
        t[i] = (medium.n_thz * (r0 @ centre) - medium.n_group * s) / c
    return t - t.min()


def phase_only_delays(sources, theta, phi, design_freq, medium: Medium | None = None):
    """Steering delays folded into one period of ``design_freq`` (a delay plate of limited depth).

    Parameters
    ----------
    sources : sequence of Filament
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
    folded = np.mod(steering_delays(sources, theta, phi, medium), 1.0 / f0)
    return folded - folded.min()


# --- geometry helpers -------------------------------------------------------------------------

def _tangent(theta0, phi0, u, v):
    """Directions at angular offsets (u, v) from r0 along theta-hat and phi-hat (rad).

    Exponential map: the direction lies at angle sqrt(u^2 + v^2) from r0, so offsets are true
    angles on the sky. Returns (theta, phi) arrays.
    """
    r0, t0, p0 = unit_vectors(theta0, phi0)
    u, v = np.atleast_1d(u), np.atleast_1d(v)
    rho = np.hypot(u, v)
    d = (np.cos(rho)[:, None] * r0
         + np.sinc(rho / np.pi)[:, None] * (u[:, None] * t0 + v[:, None] * p0))
    return np.arccos(np.clip(d[:, 2], -1.0, 1.0)), np.arctan2(d[:, 1], d[:, 0])


def _angle_between(t1, p1, t2, p2) -> float:
    a, b = unit_vectors(t1, p1)[0], unit_vectors(t2, p2)[0]
    return float(np.arctan2(np.linalg.norm(np.cross(a, b)), a @ b))


def _climb(fun, theta0, phi0, scale):
    """Local maximum of fun(theta, phi) reached from (theta0, phi0) (Nelder-Mead, tangent plane)."""
    values = fun(*_tangent(theta0, phi0, [0.0, scale, 0.0], [0.0, 0.0, scale]))
    ref = float(values.max())
    if ref <= 0:
        return theta0, phi0, 0.0
    res = minimize(lambda x: -fun(*_tangent(theta0, phi0, x[:1], x[1:]))[0] / ref,
                   np.zeros(2), method="Nelder-Mead",
                   options=dict(initial_simplex=[[0.0, 0.0], [scale, 0.0], [0.0, scale]],
                                xatol=1e-6 * scale, fatol=1e-14, maxiter=4000))
    if -res.fun * ref <= values[0] * (1 + 1e-12):  # the start is (on) the top: keep it
        return theta0, phi0, float(values[0])
    th, ph = _tangent(theta0, phi0, res.x[:1], res.x[1:])
    return float(th[0]), float(ph[0]), float(-res.fun * ref)


def _resolution(points, freq_max, medium):
    """lambda_min / (n_T * largest distance between points) (rad); inf for one point."""
    ext = float(np.max(np.linalg.norm(points[:, None] - points[None], axis=-1)))
    return np.inf if ext == 0 else c / (freq_max * medium.n_thz * ext)


# --- element level at the target ---------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class ConeLevel:
    """Element (single-column) energy at the target relative to the cone maximum.

    Attributes
    ----------
    freq : ndarray, shape (F,)
        Frequencies (Hz).
    level : ndarray, shape (F,)
        sum_n q_n^2 |g_n(target)|^2 / sum_n q_n^2 max|g_n|^2 at each frequency.
    band : float
        The same ratio of band sums (weights of :func:`thzarray.gain.band_weights`).
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


def _element_levels(fil, theta, phi, freq, medium, plasma):
    el = fil.replace(start=(0.0, 0.0, 0.0), delay=0.0, weight=1.0)
    at_target = far_field(el, freq, theta, phi, medium, plasma).intensity
    a = np.asarray(el.axis)
    e1 = axis_frame(a)[0]

    def angles(psi):
        d = np.cos(psi)[..., None] * a + np.sin(psi)[..., None] * e1
        return np.arccos(np.clip(d[..., 2], -1, 1)), np.arctan2(d[..., 1], d[..., 0])

    if el.is_uniform:
        psi = cone_angle(el.length, freq, medium)
    else:
        grid = np.linspace(0.0, np.pi, 2049)
        th, ph = angles(grid)
        vals = far_field(el, freq[:, None], th[None], ph[None], medium, plasma).intensity
        psi = np.empty(freq.size)
        for j, f in enumerate(freq):
            i = int(np.argmax(vals[j]))
            lo, hi = grid[max(i - 1, 0)], grid[min(i + 1, grid.size - 1)]
            res = minimize_scalar(
                lambda p: -far_field(el, f, *angles(np.array(p)), medium, plasma).intensity,
                bounds=(lo, hi), method="bounded", options={"xatol": 1e-10})
            psi[j] = res.x if -res.fun >= vals[j, i] else grid[i]
    th, ph = angles(psi)
    at_max = far_field(el, freq, th, ph, medium, plasma).intensity
    return at_target, np.maximum(at_max, at_target)


def cone_level(sources, theta, phi, freq, medium: Medium | None = None,
               plasma: Plasma | None = None, weight=None) -> ConeLevel:
    """How far below the cone maximum the element pattern is at (theta, phi).

    Parameters
    ----------
    sources : sequence of Filament
    theta, phi : float
        Target direction (rad).
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    medium, plasma, weight : optional

    Returns
    -------
    ConeLevel

    Notes
    -----
    The cone maximum of a uniform column is at :func:`thzarray.cone.cone_angle` from its
    axis; for a profiled column it is searched on a 2049-point grid of angles and refined.
    The array factor's magnitude is at most sum q_n whatever the delays, so
    ``N^2 * level`` bounds what phasing can gain toward the target over one column's cone
    maximum.
    """
    fils = as_sources(sources)
    theta, phi, _ = _direction(theta, phi)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, weight)
    num, den = np.zeros(freq.size), np.zeros(freq.size)
    cache = {}
    for f in fils:
        key = (f.length, f.axis, None if f.is_uniform else (f._breaks.tobytes(),
                                                            f._coefs.tobytes()))
        if key not in cache:
            cache[key] = _element_levels(f, theta, phi, freq, medium, plasma)
        t, m = cache[key]
        num += f.weight**2 * t
        den += f.weight**2 * m
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
        |AF(target)|^2 / |AF(lobe)|^2: the fraction of the lobe's peak the target receives.
    coherence : ndarray, shape (F,)
        |AF(target)|^2 / (sum |q_n|)^2: 1 when every column arrives in phase.
    """

    freq: np.ndarray
    theta: np.ndarray
    phi: np.ndarray
    pointing_error: np.ndarray
    target_level: np.ndarray
    coherence: np.ndarray


def squint(sources, theta, phi, freq, medium: Medium | None = None) -> SquintReport:
    """Where the array factor's main lobe points at each frequency, for the layout's delays.

    Parameters
    ----------
    sources : sequence of Filament
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
    fils = as_sources(sources)
    theta, phi, _ = _direction(theta, phi)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    starts = np.array([f.start for f in fils])
    top = np.sum(np.abs([f.weight for f in fils])) ** 2
    out = np.empty((5, freq.size))
    for j, f in enumerate(freq):
        def af2(th, ph, f=f):
            return np.abs(array_factor(fils, f, th, ph, medium, compiled=False)) ** 2
        at_target = float(af2(np.array([theta]), np.array([phi]))[0])
        res = _resolution(starts, f, medium)
        if np.isfinite(res):
            th, ph, peak = _climb(af2, theta, phi, res / 20)
        else:
            th, ph, peak = theta, phi, at_target
        peak = max(peak, at_target)
        out[:, j] = (th, ph, _angle_between(th, ph, theta, phi),
                     at_target / peak if peak > 0 else 0.0, at_target / top)
    return SquintReport(freq, *out)


# --- beam metrics -------------------------------------------------------------------------------

@dataclass(frozen=True)
class GratingLobe:
    """A lobe where the array factor nearly repeats its main lobe.

    Attributes
    ----------
    theta, phi : float
        Direction of the lobe's peak on the sky grid (rad).
    array_factor_db : float
        |AF|^2 / (sum |q_n|)^2 there at the band's highest frequency (dB).
    pattern_db : float
        Band energy there relative to the main lobe's peak (dB), element pattern included.
    """

    theta: float
    phi: float
    array_factor_db: float
    pattern_db: float


@dataclass(frozen=True, eq=False)
class SteeringReport:
    """Beam metrics of a steered layout.

    Attributes
    ----------
    target : Direction or Receiver
    energy : float
        Band energy into the target (J/sr for a direction, J for a receiver).
    main_lobe : (float, float)
        (theta, phi) of the band pattern's peak reached from the target (rad).
    pointing_error : float
        Angle between main lobe and target (rad); the element pattern's slope pulls the
        lobe toward the cone when the target is on the cone's flank.
    beam_width : (float, float)
        Half-power full widths through the main lobe along theta-hat and phi-hat (rad).
    peak_sidelobe_db : float
        Largest band energy outside the main lobe relative to its peak (dB), on the sky grid;
        the rest of the cone usually sets it.
    peak_sidelobe : (float, float)
        Its direction (rad).
    grating_lobes : tuple of GratingLobe
        At the band's highest frequency ``grating_freq`` (Hz).
    grating_freq : float
    cone_level_db : float
        Element level at the target relative to the cone maximum, band sums (dB).
    notes : tuple of str
        Plain-language remarks (flank, null, squint, coarse grid).
    """

    target: object
    energy: float
    main_lobe: tuple
    pointing_error: float
    beam_width: tuple
    peak_sidelobe_db: float
    peak_sidelobe: tuple
    grating_lobes: tuple
    grating_freq: float
    cone_level_db: float
    notes: tuple


def _band_pattern(fils, freq, bw, medium, plasma):
    """Band energy per steradian at a few directions (numpy path: no thread start-up)."""
    def pattern(th, ph):
        ff = array_far_field(fils, freq[:, None], np.asarray(th)[None, :],
                             np.asarray(ph)[None, :], medium, plasma, compiled=False)
        return bw @ ff.energy_density
    return pattern


def _half_width(pattern, theta0, phi0, peak, step, along, sign):
    """Distance (rad) from the peak to the half-power point along ``sign`` * tangent ``along``."""
    def cut(t):
        t = sign * np.atleast_1d(t)
        return pattern(*_tangent(theta0, phi0, *((t, 0 * t) if along == "theta" else (0 * t, t))))

    t_prev = 0.0
    for block in range(64):
        t = step * (block * 256 + np.arange(1, 257))
        if t[0] > np.pi / 2:
            break
        below = np.flatnonzero(cut(t) < 0.5 * peak)
        if below.size:
            i = below[0]
            lo = t[i - 1] if i > 0 else t_prev
            return brentq(lambda x: cut(x)[0] - 0.5 * peak, lo, t[i], xtol=1e-6 * step)
        t_prev = t[-1]
    return np.nan


def _periodic(phi):
    if phi.size < 3:
        return False
    d = np.diff(phi)
    return bool(np.allclose(d, d[0], rtol=1e-9) and np.isclose(phi[-1] + d[0] - phi[0],
                                                                2 * np.pi, rtol=1e-9))


def _labels(mask, wrap):
    lab, n = ndimage.label(mask, structure=np.ones((3, 3)))
    if wrap and n:
        parent = list(range(n + 1))

        def root(a):
            while parent[a] != a:
                a = parent[a]
            return a
        rows = mask.shape[0]
        for i in range(rows):
            for di in (-1, 0, 1):
                k = i + di
                if 0 <= k < rows and lab[i, -1] and lab[k, 0]:
                    ra, rb = root(lab[i, -1]), root(lab[k, 0])
                    if ra != rb:
                        parent[max(ra, rb)] = min(ra, rb)
        lab = np.array([root(a) for a in range(n + 1)])[lab]
    return lab


def _nearest(theta_grid, phi_grid, theta, phi):
    i = int(np.argmin(np.abs(theta_grid - theta)))
    dphi = np.angle(np.exp(1j * (phi_grid - phi)))
    return i, int(np.argmin(np.abs(dphi)))


def _db(x):
    return float(10 * np.log10(x)) if x > 0 else -np.inf


def steering_report(sources, target, freq, medium: Medium | None = None,
                    plasma: Plasma | None = None, weight=None, *, sky_theta=None,
                    sky_phi=None) -> SteeringReport:
    """Main lobe, beam width, side lobes, grating lobes and cone level of a steered layout.

    Parameters
    ----------
    sources : sequence of Filament
        The layout with its delays.
    target : Direction or Receiver
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    medium, plasma, weight : optional
    sky_theta, sky_phi : array_like, optional
        Sky grid (rad) for the side-lobe and grating-lobe search; default
        :func:`thzarray.maps.sky_grid`. A periodic phi grid (2 pi j / P) is wrapped.

    Returns
    -------
    SteeringReport

    Warns
    -----
    ConeNullWarning
        When the element level at the target is below ``NULL_LEVEL_DB``.
    """
    fils = as_sources(sources)
    target = check_target(target)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, weight)
    tf = target_fields(fils, target, freq, medium, plasma, weight)
    energy = tf.energy([f.delay for f in fils])
    level = cone_level(fils, target.theta, target.phi, freq, medium, plasma, weight)
    notes = []
    if level.band_db < NULL_LEVEL_DB:
        msg = (f"the target lies in the element pattern's null ({level.band_db:.1f} dB below "
               "the cone maximum): phasing multiplies the element pattern and cannot put "
               "energy there; steer onto the cone or tilt the columns")
        warnings.warn(msg, ConeNullWarning, stacklevel=2)
        notes.append(msg)
    elif level.band_db < -1.0:
        notes.append(f"the target is on the cone's flank, {level.band_db:.1f} dB below the "
                     "cone maximum; phasing gains N^2 over what one column sends there")
    pattern = _band_pattern(fils, freq, bw, medium, plasma)
    step = c / (freq[-1] * medium.n_thz * layout_extent(fils)) / 20
    th_m, ph_m, peak = _climb(pattern, target.theta, target.phi, step)
    pointing = _angle_between(th_m, ph_m, target.theta, target.phi)
    widths = tuple(_half_width(pattern, th_m, ph_m, peak, step, a, 1.0)
                   + _half_width(pattern, th_m, ph_m, peak, step, a, -1.0)
                   for a in ("theta", "phi"))
    if sky_theta is None or sky_phi is None:
        sky_theta, sky_phi = sky_grid(fils, freq, medium)
    sm = sky_map(fils, sky_theta, sky_phi, freq, medium, plasma, weight)
    wrap = _periodic(sm.phi)
    i0, j0 = _nearest(sm.theta, sm.phi, th_m, ph_m)
    win = (slice(max(i0 - 1, 0), i0 + 2), slice(max(j0 - 1, 0), j0 + 2))
    di, dj = np.unravel_index(np.argmax(sm.energy[win]), sm.energy[win].shape)
    region = _array_kernels.descending_region(sm.energy, win[0].start + di, win[1].start + dj,
                                              wrap)
    outside = np.where(region, -np.inf, sm.energy)
    if np.isfinite(outside).any():
        k = np.unravel_index(np.argmax(outside), outside.shape)
        psl, psl_dir = _db(outside[k] / peak), (float(sm.theta[k[0]]), float(sm.phi[k[1]]))
    else:
        psl, psl_dir = -np.inf, (np.nan, np.nan)
    lobes = _grating_lobes(fils, freq[-1], medium, sm, peak, target, wrap)
    if lobes:
        notes.append(f"{len(lobes)} grating lobe(s) at {freq[-1]:.4g} Hz")
    if np.isfinite(widths[0]) and pointing > 0.5 * min(widths):
        notes.append(f"the main lobe peaks {np.degrees(pointing):.3g} deg from the target "
                     "(element-pattern slope or squint)")
    if sm.theta.size > 1 and np.diff(sm.theta).max() > 0.5 * 20 * step:
        notes.append("the sky grid is coarser than half the resolution angle; side lobes may "
                     "be missed (pass sky_theta, sky_phi)")
    return SteeringReport(target, energy, (th_m, ph_m), pointing, widths, psl, psl_dir,
                          tuple(lobes), float(freq[-1]), level.band_db, tuple(notes))


def _grating_lobes(fils, f_top, medium, sm, peak, target, wrap):
    if len(fils) < 2:
        return []
    top = np.sum(np.abs([f.weight for f in fils])) ** 2
    af = np.abs(array_factor(fils, f_top, sm.theta[:, None], sm.phi[None, :], medium)) ** 2 / top
    lab = _labels(af >= GRATING_LEVEL, wrap)
    starts = np.array([f.start for f in fils])
    res = _resolution(starts, f_top, medium)

    def af2(th, ph):
        return np.abs(array_factor(fils, f_top, th, ph, medium, compiled=False)) ** 2
    th_a, ph_a, _ = _climb(af2, target.theta, target.phi, res / 20)
    i0, j0 = _nearest(sm.theta, sm.phi, th_a, ph_a)
    win = lab[max(i0 - 2, 0):i0 + 3, max(j0 - 2, 0):j0 + 3]
    main = set(np.unique(win[win > 0]).tolist())
    lobes = []
    for k in np.unique(lab[lab > 0]):
        if int(k) in main:
            continue
        vals = np.where(lab == k, af, -np.inf)
        i, j = np.unravel_index(np.argmax(vals), vals.shape)
        lobes.append(GratingLobe(float(sm.theta[i]), float(sm.phi[j]), _db(af[i, j]),
                                 _db(sm.energy[i, j] / peak)))
    return sorted(lobes, key=lambda g: -g.pattern_db)


# --- the designer -------------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class SteeringDesign:
    """Result of :func:`design_steering`.

    Attributes
    ----------
    delays : ndarray, shape (N,)
        Designed delays (s), smallest 0.
    target : Direction or Receiver
        The target designed for (its azimuth is the best of those tried).
    energy : float
        Band energy into the target with ``delays``.
    plain_delays : ndarray, shape (N,)
        True-time steering delays toward the same target.
    plain_energy : float
        Band energy with ``plain_delays``.
    coherent_limit : float
        The most any delays could deliver (see :mod:`thzarray.gain`).
    azimuths, azimuth_energies : ndarray, shape (A,)
        Azimuths tried (rad) and the designed energy at each.
    converged : bool
    message : str
        The optimiser's message.
    report, plain_report : SteeringReport
        Beam metrics of the design and of plain steering.
    """

    delays: np.ndarray
    target: object
    energy: float
    plain_delays: np.ndarray
    plain_energy: float
    coherent_limit: float
    azimuths: np.ndarray
    azimuth_energies: np.ndarray
    converged: bool
    message: str
    report: SteeringReport
    plain_report: SteeringReport

    @property
    def gain_over_plain(self) -> float:
        return self.energy / self.plain_energy if self.plain_energy > 0 else np.inf


def _optimise(tf, plain, bw, freq, max_delay):
    omega_c = 2 * np.pi * float(np.sum(bw * freq) / np.sum(bw))
    e0 = tf.coherent_limit
    if e0 <= 0:
        return plain, 0.0, True, "no energy reaches the target"
    starts = []
    if max_delay is None or np.ptp(plain) <= max_delay:
        starts.append(plain)
    if max_delay is not None:
        period = 2 * np.pi / omega_c
        if period <= max_delay:
            folded = np.mod(plain, period)
            starts.append(folded - folded.min())
        starts.append(np.clip(plain, 0.0, max_delay))
        if np.ptp(plain) > max_delay:
            starts.append(plain * (max_delay / np.ptp(plain)))  # a shallower steer that fits
    bounds = None if max_delay is None else [(0.0, max_delay * omega_c)] * tf.count

    def objective(x):
        e, g = tf.energy_and_gradient(x / omega_c)
        return -e / e0, -g / (e0 * omega_c)

    best = None
    for s in starts:
        res = minimize(objective, s * omega_c, jac=True, method="L-BFGS-B", bounds=bounds,
                       options=dict(ftol=1e-15, gtol=1e-12, maxiter=1000))
        if best is None or res.fun < best.fun:
            best = res
    d = best.x / omega_c
    d = d - d.min()
    return d, tf.energy(d), bool(best.success), str(best.message)


def design_steering(sources, target, freq, *, max_delay=None, azimuths=None,
                    medium: Medium | None = None, plasma: Plasma | None = None, weight=None,
                    sky_theta=None, sky_phi=None) -> SteeringDesign:
    """Delays that maximise the band energy into a target, compared with plain steering.

    Parameters
    ----------
    sources : sequence of Filament
        The layout (its own delays are ignored).
    target : Direction or Receiver
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    max_delay : float, optional
        Largest delay the hardware can realise (s); delays are kept in [0, max_delay].
    azimuths : array_like, optional
        Azimuths (rad) at which the target may sit on the cone (its polar angle, distance and
        radius kept); the best is chosen. Default: the target's own azimuth.
    medium, plasma, weight : optional
    sky_theta, sky_phi : array_like, optional
        Sky grid for the reports (see :func:`steering_report`).

    Returns
    -------
    SteeringDesign

    Notes
    -----
    Maximises :math:`W(t) = \\sum |\\sum_n g_n e^{i\\omega t_n}|^2` (:mod:`thzarray.gain`) by
    L-BFGS-B with the analytic gradient, in the scaled variables :math:`\\omega_c t_n`
    (:math:`\\omega_c` the band's weighted mean), from the plain steering delays and, with a
    delay limit, from them folded into one period at :math:`\\omega_c`, clipped to the limit
    and scaled down to fit it; the best optimum is kept.
    """
    fils = as_sources(sources)
    target = check_target(target)
    medium = Medium.vacuum() if medium is None else medium
    freq = check_band(freq)
    bw = band_weights(freq, weight)
    if max_delay is not None:
        max_delay = check_scalar("max_delay", max_delay, low=0.0, low_open=True, unit="s")
    az = (np.array([target.phi]) if azimuths is None
          else np.atleast_1d(as_float_array("azimuths", azimuths, unit="rad")))
    results = []
    for a in az:
        tgt = target.replace(phi=float(a))
        tf = target_fields(fils, tgt, freq, medium, plasma, weight)
        plain = steering_delays(fils, tgt.theta, tgt.phi, medium)
        d, e, ok, msg = _optimise(tf, plain, bw, freq, max_delay)
        results.append((e, tgt, tf, plain, d, ok, msg))
    energies = np.array([r[0] for r in results])
    e, tgt, tf, plain, d, ok, msg = results[int(np.argmax(energies))]
    kw = dict(sky_theta=sky_theta, sky_phi=sky_phi)
    report = steering_report(with_delays(fils, d), tgt, freq, medium, plasma, weight, **kw)
    plain_report = steering_report(with_delays(fils, plain), tgt, freq, medium, plasma, weight,
                                   **kw)
    return SteeringDesign(d, tgt, e, plain, tf.energy(plain), tf.coherent_limit, az, energies,
                          ok, msg, report, plain_report)
