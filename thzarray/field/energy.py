r"""Energy a set of filaments radiates: per unit frequency over the sphere, and in total.

Two independent routes: :func:`spectral_energy` integrates the far-field energy density
:math:`2 n_T\varepsilon_0 c|\mathbf F|^2` (:mod:`thzarray.field.farfield`) over the sphere
with a quadrature fine enough for the sources' finest angular scale;
:func:`source_spectral_energy` integrates over the current first (one uniform column).
:func:`total_energy` sums dW/df over the band with the package's trapezoid rule
(:mod:`thzarray.base.band`).
"""

from __future__ import annotations

import numpy as np
from scipy.constants import c, epsilon_0
from scipy.special import roots_legendre, spherical_jn

from thzarray.air.medium import Medium
from thzarray.base.band import band_weights, check_band
from thzarray.base.checks import as_float_array
from thzarray.base.geometry import axis_frame
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET, check_result_fits
from thzarray.field.farfield import far_field, radiation_prefactor
from thzarray.source.column_plasma import ColumnPlasma
from thzarray.source.filament import Filament, as_filaments
from thzarray.source.plasma import Plasma

__all__ = ["source_spectral_energy", "spectral_energy", "total_energy"]


# Bytes of temporaries per sphere direction (directions, angles, the far field and its
# own work space) and per node of the source-space integral; blocks are sized from these.
_BYTES_PER_DIRECTION = 1024
_BYTES_PER_NODE = 256
# A single uniform column whose sphere rule would need more directions than this takes the
# source-space route (the same dW/df to the quadratures' accuracy, with far fewer nodes).
SPHERE_DIRECTIONS_FOR_SOURCE_ROUTE = 20_000_000
_NODES16, _WEIGHTS16 = roots_legendre(16)


def _sphere_plan(fils, freq_max, medium):
    """Sizes of the sphere rule that resolves the filaments' finest angular scale.

    The polar variable mu = cos(theta') about the first column's axis gets composite
    16-point Gauss-Legendre panels, at least three per oscillation of the pattern (phase
    spread k (n_g + n_T) L over mu in [-1, 1]), the last one refined toward mu = 1 where the
    cone sits; the azimuth gets the trapezoid rule, which converges spectrally for periodic
    integrands, with nodes for the transverse extent.

    Returns
    -------
    (frame, panels, nphi): the axis frame (ex, ey, ez), the number of uniform panels in mu
    and of azimuth nodes. Nothing of the rule's size is allocated.
    """
    n_group = max(f.group_index_in(medium) for f in fils)
    kmax = 2 * np.pi * freq_max * (n_group + medium.n_thz) / c
    frame = axis_frame(fils[0].axis)
    ex, ey, ez = frame
    pts = np.array([p for f in fils for p in (np.asarray(f.start), f.end)])
    rel = pts - pts.mean(axis=0)
    long_extent = np.ptp(pts @ ez) + max(f.length for f in fils)
    trans = np.max(np.hypot(rel @ ex, rel @ ey))
    tilt = max(np.linalg.norm(np.cross(ez, f.axis)) * f.length for f in fils)
    panels = int(np.ceil(3 * kmax * long_extent / np.pi)) + 8
    nphi = 2 * int(np.ceil(kmax * (trans + tilt))) + 16
    return frame, panels, nphi


def _mu_blocks(panels, per_block):
    """(mu, wmu) Gauss-Legendre nodes over [-1, 1] in blocks of at most ``per_block`` panels.

    The last uniform panel [1 - 2/panels, 1] is replaced by 24 panels graded toward mu = 1.
    """
    def nodes(edges):
        half = 0.5 * np.diff(edges)
        mid = 0.5 * (edges[1:] + edges[:-1])
        return ((mid[:, None] + half[:, None] * _NODES16[None, :]).ravel(),
                (half[:, None] * _WEIGHTS16[None, :]).ravel())

    for j0 in range(0, panels - 1, per_block):
        j1 = min(j0 + per_block, panels - 1)
        yield nodes(-1.0 + 2.0 * np.arange(j0, j1 + 1) / panels)
    last = 2.0 / panels
    yield nodes(np.unique(np.concatenate([[1.0 - last], 1.0 - np.geomspace(1e-8, last, 24),
                                          [1.0]])))


def _sphere_energy(fils, f, medium, plasma, memory_budget):
    """dW/df at one frequency by the sphere rule, in blocks that fit ``memory_budget``."""
    (ex, ey, ez), panels, nphi = _sphere_plan(fils, f, medium)
    per_block = max(16, int(memory_budget // (4 * _BYTES_PER_DIRECTION)))
    phi_step = min(nphi, max(1, per_block // 16))
    panels_per_block = max(1, per_block // (16 * phi_step))
    phi_all = 2 * np.pi * np.arange(nphi) / nphi
    total = 0.0
    for mu, wmu in _mu_blocks(panels, panels_per_block):
        st = np.sqrt(np.clip(1 - mu**2, 0.0, None))
        for p0 in range(0, nphi, phi_step):
            phi = phi_all[p0:p0 + phi_step]
            d = (st[:, None, None] * (np.cos(phi)[None, :, None] * ex
                                      + np.sin(phi)[None, :, None] * ey)
                 + mu[:, None, None] * ez)
            theta_g = np.arccos(np.clip(d[..., 2], -1.0, 1.0))
            phi_g = np.arctan2(d[..., 1], d[..., 0])
            del d
            ff = far_field(fils, f, theta_g, phi_g, medium, plasma,
                           memory_budget=memory_budget / 2)
            total += float(np.sum(ff.energy_density * wmu[:, None])) * (2 * np.pi / nphi)
    return total


def spectral_energy(filaments, freq, medium: Medium | None = None,
                    plasma: Plasma | None = None, *,
                    memory_budget: float = DEFAULT_MEMORY_BUDGET) -> np.ndarray:
    """Radiated energy per unit frequency dW/df (J/Hz) by integration over the sphere.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    freq : array_like
        Frequency (Hz), > 0; any shape.
    medium, plasma : as for :func:`far_field`.
    memory_budget : float
        Bytes this call may use (default 2 GiB): the sphere is integrated in blocks of
        directions that fit. One uniform column whose sphere rule would need more than
        ``SPHERE_DIRECTIONS_FOR_SOURCE_ROUTE`` directions is integrated in source space
        instead (:func:`source_spectral_energy`, the same quantity).

    Returns
    -------
    ndarray, shape of ``freq``

    Notes
    -----
    .. math:: \\frac{dW}{df} = \\oint 2 n_T\\varepsilon_0 c |\\mathbf F|^2 d\\Omega
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    freq = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    check_result_fits("spectral_energy", 8 * freq.size, memory_budget)
    single = (len(fils) == 1 and fils[0].is_uniform
              and not (isinstance(plasma, ColumnPlasma) and plasma.constant_on(fils[0]) is None))
    out = np.empty(freq.shape)
    for idx, f in np.ndenumerate(freq):
        _, panels, nphi = _sphere_plan(fils, f, medium)
        if single and 16 * (panels + 24) * nphi > SPHERE_DIRECTIONS_FOR_SOURCE_ROUTE:
            out[idx] = source_spectral_energy(fils[0], f, medium, plasma,
                                              memory_budget=memory_budget)[()]
        else:
            out[idx] = _sphere_energy(fils, f, medium, plasma, memory_budget)
    return out


def _angular_kernel(x, axial):
    """K(x) of :func:`source_spectral_energy`, with its series below x = 1e-3."""
    xs = np.maximum(x, 1e-3)
    if axial:
        return 8 * np.pi * np.where(x > 1e-3, spherical_jn(1, xs) / xs, 1 / 3 - x**2 / 30)
    return 4 * np.pi * np.where(x > 1e-3, spherical_jn(0, xs) - spherical_jn(1, xs) / xs,
                                2 / 3 - 2 * x**2 / 15)


def source_spectral_energy(filament: Filament, freq, medium: Medium | None = None,
                           plasma: Plasma | ColumnPlasma | None = None, *,
                           memory_budget: float = DEFAULT_MEMORY_BUDGET) -> np.ndarray:
    """dW/df (J/Hz) of one uniform column computed in source space, without the sphere.

    An independent route to :func:`spectral_energy`: integrating ``|F|^2`` over all directions
    analytically first turns the energy into a double integral over the current,

    .. math:: \\frac{dW}{df} = 2 n_T\\varepsilon_0 c \\left(\\frac{\\omega\\mu_0|I|q}{4\\pi}\\right)^2
              \\int_{-L}^{L} (L - |\\Delta|)\\, e^{i k_g\\Delta}\\, K(k_T|\\Delta|)\\, d\\Delta,

    with the angular kernel :math:`K(x) = \\oint |\\hat d - (\\hat r\\cdot\\hat d)\\hat r|^2
    e^{ix\\mu}d\\Omega` (:math:`\\mu = \\hat r\\cdot\\hat a`, spherical Bessel functions
    j_0, j_1): for a current along the axis :math:`|\\hat d_\\perp|^2 = 1 - \\mu^2` and
    :math:`K = 8\\pi j_1(x)/x`; for a transverse current :math:`|\\hat d_\\perp|^2 = 1 -
    (1 - \\mu^2)\\cos^2\\phi`, whose azimuthal mean is :math:`(1 + \\mu^2)/2`, and
    :math:`K = \\pi\\int_{-1}^{1}(1 + \\mu^2)e^{ix\\mu}d\\mu = 4\\pi\\,(j_0(x) - j_1(x)/x)`.
    The remaining integral is done by composite Gauss-Legendre quadrature with panels
    shorter than a third of the fastest oscillation; :math:`k_g` uses the column's group
    index.

    In vacuum this reduces to the long-wire result of C. A. Balanis, Antenna Theory,
    traveling-wave antennas: the integral is
    :math:`(4/k^2)[\\gamma + \\ln 2kL - \\mathrm{Ci}(2kL) - 1 + \\sin(2kL)/(2kL)]`.
    """
    if not isinstance(filament, Filament) or not filament.is_uniform:
        raise ValueError("filament = a profiled or non-Filament source; allowed: one uniform "
                         "Filament")
    medium = Medium.vacuum() if medium is None else medium
    if isinstance(plasma, ColumnPlasma):
        plasma = plasma.constant_on(filament)
        if plasma is None:
            raise ValueError("plasma = a ColumnPlasma varying along the column; allowed: a "
                             "plasma constant along it (use spectral_energy otherwise)")
    n_group = filament.group_index_in(medium)
    freq = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    length = filament.length
    check_result_fits("source_spectral_energy", 8 * freq.size, memory_budget)
    per_block = max(1, int(memory_budget // (4 * 16 * _BYTES_PER_NODE)))
    out = np.empty(freq.shape)
    for idx, f in np.ndenumerate(freq):
        w = 2 * np.pi * f
        kg, kt = w * n_group / c, w * medium.n_thz / c
        panels = int(np.ceil(3 * (kg + kt) * length / np.pi)) + 4
        integral = 0.0
        for j0 in range(0, panels, per_block):
            j = np.arange(j0, min(j0 + per_block, panels))
            lo, hi = length * j / panels, length * (j + 1) / panels
            half, mid = 0.5 * (hi - lo), 0.5 * (hi + lo)
            delta = (mid[:, None] + half[:, None] * _NODES16[None, :]).ravel()
            wts = (half[:, None] * _WEIGHTS16[None, :]).ravel()
            integral += 2 * np.sum(wts * (length - delta) * np.cos(kg * delta)
                                   * _angular_kernel(kt * delta, filament.is_axial))
        pref = (np.abs(radiation_prefactor(np.array([f]), medium, plasma, n_group)[0])
                * filament.amplitude)
        out[idx] = 2 * medium.n_thz * epsilon_0 * c * pref**2 * integral
    return out


def total_energy(filaments, freq, medium: Medium | None = None, plasma: Plasma | None = None,
                 *, memory_budget: float = DEFAULT_MEMORY_BUDGET):
    """Energy radiated per pulse (J): dW/df integrated over the given frequencies (trapezoid).

    Parameters
    ----------
    freq : array_like, shape (F,)
        Increasing frequencies (Hz) spanning the band of interest; the plasma spectrum should
        have fallen off at both ends.
    memory_budget : float
        Bytes this call may use (see :func:`spectral_energy`).
    """
    freq = check_band(freq, minimum=2)
    per_freq = spectral_energy(filaments, freq, medium, plasma, memory_budget=memory_budget)
    return float(np.sum(band_weights(freq) * per_freq))
