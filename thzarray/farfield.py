r"""Far field of one filament or a coherent set of them, and the energy they radiate.

Conventions (shared by the whole package)
-----------------------------------------
- Time dependence :math:`e^{-i\omega t}`; spectra :math:`f(\omega) = \int f(t) e^{i\omega t}dt`.
- A filament whose pulse passes its start at time :math:`t_n` contributes with phase
  :math:`e^{+i\omega t_n}`; the phase reference is the origin.
- The returned field is the radiation vector :math:`\mathbf F = \lim r e^{-ikr}\mathbf E(\omega)`
  (V s), so :math:`\mathbf E \approx \mathbf F e^{ikr}/r`, :math:`k = n_T\omega/c`.

The field (J. D. Jackson, Classical Electrodynamics, 3rd ed., secs. 9.1-9.2,
:math:`\mathbf E = i\omega\mathbf A_\perp` far away) of currents
:math:`q_n w_n(s) I(\omega) e^{i\omega(t_n + s n_g/c)}` on columns
:math:`\mathbf r_n + s\hat a_n`, :math:`0\le s\le L_n`, is

.. math:: \mathbf F = \frac{i\omega\mu_0 I(\omega)}{4\pi}\sum_n q_n
          \left[\hat a_n - (\hat r\cdot\hat a_n)\hat r\right]
          e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)}\int_0^{L_n} w_n(s)e^{iu_n s}ds,
          \qquad u_n = \frac{\omega}{c}(n_g - n_T\,\hat r\cdot\hat a_n).

For a uniform column the integral is :math:`L e^{iuL/2}\operatorname{sinc}(uL/2)`, exact and
finite at phase matching (u = 0) and on the axis. For a profiled column it is the exact
transform of the column's piecewise-cubic profile (see :mod:`thzarray.filament`), whose
only error is the profile's interpolation error.

The spectral-angular energy density (one-sided in frequency, per hertz) follows from
Parseval's theorem and the Poynting flux :math:`n_T\varepsilon_0 c|\mathbf E|^2`:

.. math:: \frac{d^2W}{df\,d\Omega} = 2 n_T \varepsilon_0 c\,|\mathbf F|^2 \quad[\mathrm{J/(Hz\,sr)}].

Without a :class:`~thzarray.plasma.Plasma` the current spectrum is 1 A s at every frequency:
patterns are then per unit current spectrum and energies need the plasma's (or a measured)
calibration factor.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c, epsilon_0, mu_0
from scipy.special import roots_legendre, spherical_jn

from . import _kernels
from ._memory import DEFAULT_MEMORY_BUDGET, check_result_fits, chunk_points
from ._validate import as_float_array
from .filament import Filament, as_sources
from .medium import Medium
from .plasma import Plasma

__all__ = [
    "FarField",
    "axis_frame",
    "check_directions",
    "far_field",
    "radiation_prefactor",
    "spectral_energy",
    "source_spectral_energy",
    "total_energy",
    "unit_vectors",
]

# Temporary bytes per evaluation point of the pointwise path (inputs, sums and the numpy
# twin's intermediate arrays), used to size chunks within the memory budget.
_TEMP_BYTES_PER_POINT = 512


def unit_vectors(theta, phi):
    """Spherical unit vectors r-hat, theta-hat, phi-hat, each of shape (..., 3).

    Parameters
    ----------
    theta, phi : array_like
        Polar and azimuthal angles (rad), broadcast together.
    """
    theta, phi = np.broadcast_arrays(np.asarray(theta, float), np.asarray(phi, float))
    st, ct, sp, cp = np.sin(theta), np.cos(theta), np.sin(phi), np.cos(phi)
    r = np.stack([st * cp, st * sp, ct], axis=-1)
    t = np.stack([ct * cp, ct * sp, -st], axis=-1)
    p = np.stack([-sp, cp, np.zeros_like(sp)], axis=-1)
    return r, t, p


@dataclass(frozen=True, eq=False)
class FarField:
    """Far-field radiation vector on a grid of frequencies and directions.

    Attributes
    ----------
    freq, theta, phi : ndarray
        The coordinates as given (Hz, rad, rad), broadcastable to ``shape``.
    e_theta, e_phi : ndarray, complex, shape ``shape``
        Spherical components of the radiation vector r e^{-ikr} E (V s).
    medium : Medium
        The medium the field was computed in.
    """

    freq: np.ndarray
    theta: np.ndarray
    phi: np.ndarray
    e_theta: np.ndarray
    e_phi: np.ndarray
    medium: Medium

    @property
    def shape(self) -> tuple:
        return self.e_theta.shape

    @property
    def cartesian(self) -> np.ndarray:
        """Cartesian radiation vector (V s), shape ``shape + (3,)``."""
        _, t, p = unit_vectors(self.theta, self.phi)
        return self.e_theta[..., None] * t + self.e_phi[..., None] * p

    @property
    def intensity(self) -> np.ndarray:
        """|e_theta|^2 + |e_phi|^2 ((V s)^2), shape ``shape``."""
        return np.abs(self.e_theta) ** 2 + np.abs(self.e_phi) ** 2

    @property
    def energy_density(self) -> np.ndarray:
        """Spectral-angular energy density d2W/(df dOmega) (J/(Hz sr)), one-sided in f."""
        return 2.0 * self.medium.n_thz * epsilon_0 * c * self.intensity


def radiation_prefactor(freq, medium: Medium, plasma: Plasma | None):
    """The frequency-only factor i w mu0 I(w) / (4 pi) (V s / m), I = 1 A s without plasma."""
    w = 2 * np.pi * freq
    current = 1.0 if plasma is None else plasma.current_spectrum(freq, medium.n_group)
    return 1j * w * mu_0 * current / (4 * np.pi)


def check_directions(freq, theta, phi):
    """Validate freq (> 0), theta (0 to pi) and phi; return them and their broadcast shape."""
    freq = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    theta = as_float_array("theta", theta, low=0.0, high=np.pi, unit="rad")
    phi = as_float_array("phi", phi, unit="rad")
    try:
        shape = np.broadcast_shapes(freq.shape, theta.shape, phi.shape)
    except ValueError:
        raise ValueError(f"freq, theta, phi have shapes {freq.shape}, {theta.shape}, "
                         f"{phi.shape}; allowed: shapes that broadcast together "
                         "(e.g. freq[:, None, None], theta[:, None], phi)") from None
    return freq, theta, phi, shape


def _pack_uniform(fils):
    return (np.array([f.length for f in fils]),
            np.array([f.start for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.axis for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.delay for f in fils]),
            np.array([f.weight for f in fils]))


def _profiled_sum(fil: Filament, freq, theta, phi, medium, compiled):
    """Radiation-integral sums (theta, phi components) of one profiled column."""
    w = 2 * np.pi * freq
    kt = w * medium.n_thz / c
    r, t, p = unit_vectors(theta, phi)
    a = np.asarray(fil.axis)
    u = w * medium.n_group / c - kt * (r @ a)
    transform = _kernels.cubic_transform if compiled else _kernels.cubic_transform_numpy
    s = transform(u, fil._breaks, fil._coefs)
    term = fil.weight * s * np.exp(1j * (w * fil.delay - kt * (r @ np.asarray(fil.start))))
    return term * (t @ a), term * (p @ a)


def far_field(sources, freq, theta, phi, medium: Medium | None = None,
              plasma: Plasma | None = None, *, compiled: bool = True,
              memory_budget: float = DEFAULT_MEMORY_BUDGET) -> FarField:
    """Far field of filaments summed coherently.

    Parameters
    ----------
    sources : Filament or sequence of Filament
        The columns; their fields add with their delays and weights.
    freq : array_like
        Frequency (Hz), > 0.
    theta : array_like
        Polar angle from +z (rad), 0 to pi.
    phi : array_like
        Azimuth from +x (rad).
    medium : Medium, optional
        Defaults to vacuum.
    plasma : Plasma, optional
        Sets the current spectrum; without it the current spectrum is 1 A s.
    compiled : bool
        Use the numba kernels (default) or their numpy twins.
    memory_budget : float
        Bytes this call may use (default 2 GiB): temporaries are chunked to fit; a result
        (32 bytes per point) that does not fit by itself raises ValueError.

    Returns
    -------
    FarField
        Components of shape ``np.broadcast_shapes(freq.shape, theta.shape, phi.shape)``;
        pass e.g. ``freq[:, None, None], theta[:, None], phi`` for a (freq, theta, phi) grid.

    Notes
    -----
    The formula is in the module docstring (Jackson secs. 9.1-9.2).
    """
    fils = as_sources(sources)
    medium = Medium.vacuum() if medium is None else medium
    freq, theta, phi, shape = check_directions(freq, theta, phi)
    size = int(np.prod(shape))
    result_bytes = 32 * size
    check_result_fits("far_field", result_bytes, memory_budget)
    chunk = chunk_points(memory_budget, result_bytes, _TEMP_BYTES_PER_POINT)
    uniform = [f for f in fils if f.is_uniform]
    profiled = [f for f in fils if not f.is_uniform]
    packed = _pack_uniform(uniform) if uniform else None
    outer = _outer_layout(shape, freq, theta, phi)
    pref = radiation_prefactor(freq, medium, plasma)
    if packed is not None and outer is not None:
        grid = _kernels.uniform_grid if compiled else _kernels.uniform_grid_numpy
        scale = np.broadcast_to(pref, freq.shape).ravel()
        g_t, g_p = grid(freq.ravel(), theta.ravel(), phi.ravel(), *packed, medium.n_group,
                        medium.n_thz, scale)
        e_t, e_p = outer(g_t), outer(g_p)  # views when the axes are already in order
        if not profiled:
            return FarField(freq, theta, phi, e_t, e_p, medium)
        e_t, e_p = e_t.ravel(), e_p.ravel()
        pointwise_uniform = False
    else:
        e_t = np.zeros(size, dtype=complex)
        e_p = np.zeros(size, dtype=complex)
        pointwise_uniform = packed is not None
    bf, bt, bp = (np.broadcast_to(x, shape) for x in (freq, theta, phi))
    bpref = np.broadcast_to(pref, shape)
    kernel = _kernels.uniform_sum if compiled else _kernels.uniform_sum_numpy
    for i0 in range(0, size, chunk):
        i1 = min(size, i0 + chunk)
        f_c, t_c, p_c = (np.ascontiguousarray(x.flat[i0:i1]) for x in (bf, bt, bp))
        p_f = bpref.flat[i0:i1]
        if pointwise_uniform:
            acc_t, acc_p = kernel(f_c, t_c, p_c, *packed, medium.n_group, medium.n_thz)
            e_t[i0:i1] += p_f * acc_t
            e_p[i0:i1] += p_f * acc_p
        for fil in profiled:
            st, sp = _profiled_sum(fil, f_c, t_c, p_c, medium, compiled)
            e_t[i0:i1] += p_f * st
            e_p[i0:i1] += p_f * sp
    return FarField(freq, theta, phi, e_t.reshape(shape), e_p.reshape(shape), medium)


def _outer_layout(shape, *arrays):
    """If each array varies along at most one axis, and no two along the same one, return a
    function mapping the (F, T, P) outer-grid result to ``shape``; otherwise None."""
    ndim = len(shape)
    axes = []
    for arr in arrays:
        dims = (1,) * (ndim - arr.ndim) + arr.shape
        varying = [i for i, d in enumerate(dims) if d > 1]
        if len(varying) > 1:
            return None
        axes.append(varying[0] if varying else None)
    present = [a for a in axes if a is not None]
    if len(set(present)) != len(present):
        return None
    keep = [i for i, a in enumerate(axes) if a is not None]
    order = sorted(keep, key=lambda i: axes[i])

    def arrange(result):
        squeezed = result.reshape([result.shape[i] for i in keep])
        perm = [keep.index(i) for i in order]
        return np.transpose(squeezed, perm).reshape(shape)

    return arrange


# --- energy ---------------------------------------------------------------------------------

def axis_frame(axis):
    """Orthonormal frame (x', y', z') with z' along the unit vector ``axis``."""
    z = np.asarray(axis, float)
    helper = np.array([1.0, 0.0, 0.0]) if abs(z[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    x = np.cross(helper, z)
    x /= np.linalg.norm(x)
    return x, np.cross(z, x), z


def _sphere_rule(fils, freq_max, medium):
    """Nodes and weights on the sphere that resolve the sources' finest angular scale.

    The polar variable mu = cos(theta') about the first column's axis gets composite
    16-point Gauss-Legendre panels, at least three per oscillation of the pattern (phase
    spread k (n_g + n_T) L over mu in [-1, 1]); the azimuth gets the trapezoid rule, which
    converges spectrally for periodic integrands, with nodes for the transverse extent.
    """
    kmax = 2 * np.pi * freq_max * (medium.n_group + medium.n_thz) / c
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


def spectral_energy(sources, freq, medium: Medium | None = None,
                    plasma: Plasma | None = None) -> np.ndarray:
    """Radiated energy per unit frequency dW/df (J/Hz) by integration over the sphere.

    Parameters
    ----------
    sources : Filament or sequence of Filament
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
    fils = as_sources(sources)
    medium = Medium.vacuum() if medium is None else medium
    freq = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    out = np.empty(freq.shape)
    for idx, f in np.ndenumerate(freq):
        theta_g, phi_g, wts = _sphere_rule(fils, f, medium)
        ff = far_field(fils, f, theta_g, phi_g, medium, plasma)
        out[idx] = np.sum(ff.energy_density * wts)
    return out


def source_spectral_energy(filament: Filament, freq, medium: Medium | None = None,
                           plasma: Plasma | None = None) -> np.ndarray:
    """dW/df (J/Hz) of one uniform column computed in source space, without the sphere.

    An independent route to :func:`spectral_energy`: integrating |F|^2 over all directions
    analytically first turns the energy into a double integral over the current,

    .. math:: \\frac{dW}{df} = 2 n_T\\varepsilon_0 c \\left(\\frac{\\omega\\mu_0|I|q}{4\\pi}\\right)^2
              \\int_{-L}^{L} (L - |\\Delta|)\\, e^{i k_g\\Delta}\\, 8\\pi
              \\frac{j_1(k_T|\\Delta|)}{k_T|\\Delta|}\\, d\\Delta,

    using :math:`\\int (1-\\mu^2) e^{ix\\mu} d\\mu\\,d\\phi = 8\\pi j_1(x)/x` (spherical Bessel
    function j_1). The remaining integral is done by composite Gauss-Legendre quadrature
    with panels shorter than a third of the fastest oscillation.

    In vacuum this reduces to the long-wire result of C. A. Balanis, Antenna Theory,
    traveling-wave antennas: the integral is
    :math:`(4/k^2)[\\gamma + \\ln 2kL - \\mathrm{Ci}(2kL) - 1 + \\sin(2kL)/(2kL)]`.
    """
    if not isinstance(filament, Filament) or not filament.is_uniform:
        raise ValueError("filament = a profiled or non-Filament source; allowed: one uniform "
                         "Filament")
    medium = Medium.vacuum() if medium is None else medium
    freq = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    length = filament.length
    nodes16, weights16 = roots_legendre(16)
    out = np.empty(freq.shape)
    for idx, f in np.ndenumerate(freq):
        w = 2 * np.pi * f
        kg, kt = w * medium.n_group / c, w * medium.n_thz / c
        panels = int(np.ceil(3 * (kg + kt) * length / np.pi)) + 4
        edges = np.linspace(0.0, length, panels + 1)
        half = 0.5 * np.diff(edges)
        mid = 0.5 * (edges[1:] + edges[:-1])
        delta = (mid[:, None] + half[:, None] * nodes16[None, :]).ravel()
        wts = (half[:, None] * weights16[None, :]).ravel()
        x = kt * delta
        kernel = 8 * np.pi * np.where(x > 1e-3, spherical_jn(1, np.maximum(x, 1e-3))
                                      / np.maximum(x, 1e-3), 1 / 3 - x**2 / 30)
        integral = 2 * np.sum(wts * (length - delta) * np.cos(kg * delta) * kernel)
        pref = np.abs(radiation_prefactor(np.array([f]), medium, plasma)[0]) * filament.weight
        out[idx] = 2 * medium.n_thz * epsilon_0 * c * pref**2 * integral
    return out


def total_energy(sources, freq, medium: Medium | None = None, plasma: Plasma | None = None):
    """Energy radiated per pulse (J): dW/df integrated over the given frequencies (trapezoid).

    Parameters
    ----------
    freq : array_like, shape (F,)
        Increasing frequencies (Hz) spanning the band of interest; the plasma spectrum should
        have fallen off at both ends.
    """
    freq = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    if freq.ndim != 1 or freq.size < 2 or np.any(np.diff(freq) <= 0):
        raise ValueError(f"freq = array of shape {freq.shape}; allowed: a 1-D increasing array "
                         "of at least 2 frequencies")
    return float(np.trapezoid(spectral_energy(sources, freq, medium, plasma), freq))
