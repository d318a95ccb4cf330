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
from thzarray.field.farfield import far_field, radiation_prefactor
from thzarray.source.column_plasma import ColumnPlasma
from thzarray.source.filament import Filament, as_filaments
from thzarray.source.plasma import Plasma

__all__ = ["source_spectral_energy", "spectral_energy", "total_energy"]


def _sphere_rule(fils, freq_max, medium):
    """Nodes and weights on the sphere that resolve the filaments' finest angular scale.

    The polar variable mu = cos(theta') about the first column's axis gets composite
    16-point Gauss-Legendre panels, at least three per oscillation of the pattern (phase
    spread k (n_g + n_T) L over mu in [-1, 1]); the azimuth gets the trapezoid rule, which
    converges spectrally for periodic integrands, with nodes for the transverse extent.
    """
    n_group = max(f.group_index_in(medium) for f in fils)
    kmax = 2 * np.pi * freq_max * (n_group + medium.n_thz) / c
    ex, ey, ez = axis_frame(fils[0].axis)
    pts = np.array([p for f in fils for p in (np.asarray(f.start), f.end)])
    rel = pts - pts.mean(axis=0)
    long_extent = np.ptp(pts @ ez) + max(f.length for f in fils)
    trans = np.max(np.hypot(rel @ ex, rel @ ey))
    tilt = max(np.linalg.norm(np.cross(ez, f.axis)) * f.length for f in fils)
    panels = int(np.ceil(3 * kmax * long_extent / np.pi)) + 8
    nodes16, weights16 = roots_legendre(16)
    edges = np.linspace(-1.0, 1.0, panels + 1)
    # Concentrate extra panels near mu = 1 where the cone sits.
    edges = np.unique(np.concatenate([edges, 1 - np.geomspace(1e-8, 2.0 / panels, 24)]))
    half = 0.5 * np.diff(edges)
    mid = 0.5 * (edges[1:] + edges[:-1])
    mu = (mid[:, None] + half[:, None] * nodes16[None, :]).ravel()
    wmu = (half[:, None] * weights16[None, :]).ravel()
    nphi = 2 * int(np.ceil(kmax * (trans + tilt))) + 16
    phi = 2 * np.pi * np.arange(nphi) / nphi
    wphi = np.full(nphi, 2 * np.pi / nphi)
    # Directions in the global frame.
    st = np.sqrt(np.clip(1 - mu**2, 0.0, None))
    d = (st[:, None, None] * (np.cos(phi)[None, :, None] * ex + np.sin(phi)[None, :, None] * ey)
         + mu[:, None, None] * ez)
    theta_g = np.arccos(np.clip(d[..., 2], -1.0, 1.0))
    phi_g = np.arctan2(d[..., 1], d[..., 0])
    return theta_g, phi_g, wmu[:, None] * wphi[None, :]


def spectral_energy(filaments, freq, medium: Medium | None = None,
                    plasma: Plasma | None = None) -> np.ndarray:
    """Radiated energy per unit frequency dW/df (J/Hz) by integration over the sphere.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    freq : array_like
        Frequency (Hz), > 0; any shape.
    medium, plasma : as for :func:`far_field`.

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
    out = np.empty(freq.shape)
    for idx, f in np.ndenumerate(freq):
        theta_g, phi_g, wts = _sphere_rule(fils, f, medium)
        ff = far_field(fils, f, theta_g, phi_g, medium, plasma)
        out[idx] = np.sum(ff.energy_density * wts)
    return out


def source_spectral_energy(filament: Filament, freq, medium: Medium | None = None,
                           plasma: Plasma | ColumnPlasma | None = None) -> np.ndarray:
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
    nodes16, weights16 = roots_legendre(16)
    out = np.empty(freq.shape)
    for idx, f in np.ndenumerate(freq):
        w = 2 * np.pi * f
        kg, kt = w * n_group / c, w * medium.n_thz / c
        panels = int(np.ceil(3 * (kg + kt) * length / np.pi)) + 4
        edges = np.linspace(0.0, length, panels + 1)
        half = 0.5 * np.diff(edges)
        mid = 0.5 * (edges[1:] + edges[:-1])
        delta = (mid[:, None] + half[:, None] * nodes16[None, :]).ravel()
        wts = (half[:, None] * weights16[None, :]).ravel()
        x = kt * delta
        xs = np.maximum(x, 1e-3)
        if filament.is_axial:
            kernel = 8 * np.pi * np.where(x > 1e-3, spherical_jn(1, xs) / xs, 1 / 3 - x**2 / 30)
        else:
            kernel = 4 * np.pi * np.where(x > 1e-3, spherical_jn(0, xs) - spherical_jn(1, xs) / xs,
                                          2 / 3 - 2 * x**2 / 15)
        integral = 2 * np.sum(wts * (length - delta) * np.cos(kg * delta) * kernel)
        pref = (np.abs(radiation_prefactor(np.array([f]), medium, plasma, n_group)[0])
                * filament.amplitude)
        out[idx] = 2 * medium.n_thz * epsilon_0 * c * pref**2 * integral
    return out


def total_energy(filaments, freq, medium: Medium | None = None, plasma: Plasma | None = None):
    """Energy radiated per pulse (J): dW/df integrated over the given frequencies (trapezoid).

    Parameters
    ----------
    freq : array_like, shape (F,)
        Increasing frequencies (Hz) spanning the band of interest; the plasma spectrum should
        have fallen off at both ends.
    """
    freq = check_band(freq, minimum=2)
    return float(np.sum(band_weights(freq) * spectral_energy(filaments, freq, medium, plasma)))
