r"""Far field of one filament or a coherent set of them, and the energy they radiate.

Conventions (shared by the whole package)
-----------------------------------------
- Time dependence :math:`e^{-i\omega t}`; spectra :math:`f(\omega) = \int f(t) e^{i\omega t}dt`.
- A filament whose pulse passes its start at time :math:`t_n` contributes with phase
  :math:`e^{+i\omega t_n}`; the phase reference is the origin.
- The returned field is the radiation vector :math:`\mathbf F = \lim r e^{-ikr}\mathbf E(\omega)`
  (V s), so :math:`\mathbf E \approx \mathbf F e^{ikr}/r`, :math:`k = n_T\omega/c`.

The radiation integral
----------------------
Column n starts at :math:`\mathbf r_n` and runs along the unit axis :math:`\hat a_n`; its
pulse passes the start at :math:`t_n` and moves at :math:`c/n_{g,n}` (the column's group
index, :attr:`~thzarray.source.filament.Filament.group_index`, else the medium's). It
carries, in the unit direction :math:`\hat d_n`, the line current
:math:`q_n w_n(s) I(\omega) e^{i\omega(t_n + s n_{g,n}/c)}` at
:math:`\mathbf r_n + s\hat a_n`, :math:`0\le s\le L_n`: the current density is
:math:`\mathbf J = \hat d_n\,q_n w_n I e^{i\omega(t_n + s n_{g,n}/c)}\,\delta^2(\mathbf x_\perp)`.
Far away the vector potential is (J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 9.8)

.. math:: \mathbf A(r\hat r) \to \frac{\mu_0}{4\pi}\frac{e^{ikr}}{r}
          \int \mathbf J(\mathbf x') e^{-ik\hat r\cdot\mathbf x'} d^3x'
          = \frac{\mu_0}{4\pi}\frac{e^{ikr}}{r}\sum_n \hat d_n\, q_n I(\omega)
          e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)} \int_0^{L_n} w_n(s) e^{iu_n s} ds,

because the phase of the element at s is :math:`\omega s n_{g,n}/c - k s\,\hat r\cdot\hat a_n
= u_n s`, whatever the direction in which the current flows. The radiation field is
:math:`\mathbf E = i\omega\mathbf A_\perp = i\omega[\mathbf A - (\hat r\cdot\mathbf A)\hat r]`
(Jackson secs. 9.1-9.2), so

.. math:: \mathbf F = \frac{i\omega\mu_0 I(\omega)}{4\pi}\sum_n q_n
          \left[\hat d_n - (\hat r\cdot\hat d_n)\hat r\right]
          e^{i(\omega t_n - k\hat r\cdot\mathbf r_n)}\int_0^{L_n} w_n(s)e^{iu_n s}ds,
          \qquad u_n = \frac{\omega}{c}(n_{g,n} - n_T\,\hat r\cdot\hat a_n).

- Current along the axis (:math:`\hat d_n = \hat a_n`, the single-colour column): the
  polarization :math:`\hat a_n - (\hat r\cdot\hat a_n)\hat r` lies in the plane of the axis
  and the direction, radially about the axis, and vanishes on it: the hollow cone.
- Current across the axis (:math:`\hat d_n\perp\hat a_n`, the two-colour photocurrent along
  the laser polarization): the same longitudinal factor (the same phase matching
  :math:`u_n`), but the polarization :math:`\hat d_n - (\hat r\cdot\hat d_n)\hat r` is the
  projection of :math:`\hat d_n` across the line of sight: linear, along :math:`\hat d_n`
  near the axis, nonzero on the axis, zero only along :math:`\pm\hat d_n`.

For a uniform column the integral is :math:`L e^{iuL/2}\operatorname{sinc}(uL/2)`, exact and
finite at phase matching (u = 0) and on the axis. For a profiled column (real or complex
profile) it is the exact transform of the column's piecewise-cubic profile (see
:mod:`~thzarray.source.filament`), whose only error is the profile's interpolation error.
With a :class:`~thzarray.source.column_plasma.ColumnPlasma` whose density or collision rate
varies along the column, :math:`I(\omega)` moves inside the integral,
:math:`\int_0^{L} w(s) I(\omega; s) e^{ius} ds`, transformed exactly after resampling (error
bound in that module). The current spectrum is evaluated with each column's group index.

The spectral-angular energy density (one-sided in frequency, per hertz) follows from
Parseval's theorem and the Poynting flux :math:`n_T\varepsilon_0 c|\mathbf E|^2`:

.. math:: \frac{d^2W}{df\,d\Omega} = 2 n_T \varepsilon_0 c\,|\mathbf F|^2 \quad[\mathrm{J/(Hz\,sr)}].

Without a :class:`~thzarray.source.plasma.Plasma` the current spectrum is 1 A s at every frequency:
patterns are then per unit current spectrum and energies need the plasma's (or a measured)
calibration factor.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c, epsilon_0, mu_0

from thzarray.air.medium import Medium
from thzarray.base.checks import as_float_array
from thzarray.base.geometry import unit_vectors
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET, check_result_fits, chunk_points
from thzarray.field import _kernels, _profile_kernels
from thzarray.source.column_plasma import ColumnPlasma, as_column_plasma
from thzarray.source.filament import Filament, as_filaments
from thzarray.source.plasma import Plasma

__all__ = [
    "FarField",
    "check_directions",
    "far_field",
    "radiation_prefactor",
    "spectral_groups",
]

# Temporary bytes per evaluation point of the pointwise path (inputs, sums and the numpy
# twin's intermediate arrays), used to size chunks within the memory budget.
_TEMP_BYTES_PER_POINT = 512
# Bytes of resampled current pieces held at once for a column whose plasma varies along it.
_PIECE_BYTES = 1 << 24


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
    def magnitude_squared(self) -> np.ndarray:
        """``|e_theta|^2 + |e_phi|^2`` ((V s)^2), shape ``shape``."""
        return np.abs(self.e_theta) ** 2 + np.abs(self.e_phi) ** 2

    @property
    def energy_density(self) -> np.ndarray:
        """Spectral-angular energy density d2W/(df dOmega) (J/(Hz sr)), one-sided in f."""
        return 2.0 * self.medium.n_thz * epsilon_0 * c * self.magnitude_squared


def radiation_prefactor(freq, medium: Medium, plasma: Plasma | None, n_group=None):
    """The frequency-only factor i w mu0 I(w) / (4 pi) (V s / m), I = 1 A s without plasma.

    ``n_group`` is the driver's group index that sets the current spectrum (default
    ``medium.n_group``; a column's own with :attr:`Filament.group_index`).
    """
    w = 2 * np.pi * freq
    ng = medium.n_group if n_group is None else n_group
    current = 1.0 if plasma is None else plasma.current_spectrum(freq, ng)
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


def _pack_uniform(fils, medium):
    return (np.array([f.length for f in fils]),
            np.array([f.start for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.axis for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.current for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.delay for f in fils]),
            np.array([f.amplitude for f in fils]),
            np.array([f.group_index_in(medium) for f in fils], dtype=float))


def _column_phase(fil: Filament, freq, theta, phi, medium):
    """u = (w/c)(n_g - n_T r.a), the phase factor exp(i(w t_n - k r.r_n)) and the (theta, phi)
    components of the current direction, at points (freq, theta, phi) of equal shapes."""
    w = 2 * np.pi * freq
    kt = w * medium.n_thz / c
    r, t, p = unit_vectors(theta, phi)
    a = np.asarray(fil.axis)
    u = w * fil.group_index_in(medium) / c - kt * (r @ a)
    phase = np.exp(1j * (w * fil.delay - kt * (r @ np.asarray(fil.start))))
    d = np.asarray(fil.current)
    return u, phase, t @ d, p @ d


# Most distinct shared profile transforms kept per chunk (each one chunk of complex numbers).
_SHARED_TRANSFORMS = 4


def _transform_key(fil: Filament, medium):
    """What a profiled column's transform depends on (not its start, delay or amplitude)."""
    pieces = fil.pieces
    return (fil.axis, fil.group_index_in(medium), pieces.breaks.tobytes(),
            pieces.coefs.tobytes(), pieces.coefs.dtype.str)


def _profiled_sum(fil: Filament, freq, theta, phi, medium, compiled, cache=None):
    """Radiation-integral sums (theta, phi components) of one profiled column.

    ``cache`` (a dict kept for one set of points, its keys the transforms that more than one
    column needs) holds those transforms once computed: columns with the same profile, axis
    and group index (an array of identical columns) share one transform, since u does not
    depend on the start or the delay. Only shared transforms are kept, at most
    ``_SHARED_TRANSFORMS`` of them, each one chunk of complex numbers."""
    u, phase, d_t, d_p = _column_phase(fil, freq, theta, phi, medium)
    transform = (_profile_kernels.cubic_transform if compiled
                 else _profile_kernels.cubic_transform_numpy)
    pieces = fil.pieces
    key = _transform_key(fil, medium)
    shared = None if cache is None else cache.get(key)
    if shared is None:
        shared = transform(u, pieces.breaks, pieces.coefs)
        if cache is not None and key in cache:
            cache[key] = shared
    term = fil.amplitude * shared * phase
    return term * d_t, term * d_p


def spectral_groups(fils, medium: Medium, plasma):
    """Columns grouped by what sets their current spectrum (plasma and group index).

    Returns ``(groups, varying, column_plasma)``: groups maps (Plasma or None, group index
    or None) to the columns sharing one frequency-only prefactor; ``varying`` lists the
    columns whose current spectrum changes along them (a ColumnPlasma with a profile).
    """
    groups, varying = {}, []
    column_plasma = as_column_plasma(plasma)
    for f in fils:
        local = None if column_plasma is None else column_plasma.constant_on(f)
        if column_plasma is not None and local is None:
            varying.append(f)
            continue
        key = (local, None if local is None else f.group_index_in(medium))
        groups.setdefault(key, []).append(f)
    return groups, varying, column_plasma


def _group_sum(fils, freq, theta, phi, shape, pref, medium, compiled, chunk):
    """Sum of the fields of columns sharing the prefactor ``pref``, shape ``shape``."""
    size = int(np.prod(shape))
    uniform = [f for f in fils if f.is_uniform]
    profiled = [f for f in fils if not f.is_uniform]
    packed = _pack_uniform(uniform, medium) if uniform else None
    outer = _outer_layout(shape, freq, theta, phi)
    if packed is not None and outer is not None:
        grid = _kernels.uniform_grid if compiled else _kernels.uniform_grid_numpy
        scale = np.broadcast_to(pref, freq.shape).ravel()
        g_t, g_p = grid(freq.ravel(), theta.ravel(), phi.ravel(), *packed, medium.n_thz, scale)
        e_t, e_p = outer(g_t), outer(g_p)  # views when the axes are already in order
        if not profiled:
            return e_t, e_p
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
            acc_t, acc_p = kernel(f_c, t_c, p_c, *packed, medium.n_thz)
            e_t[i0:i1] += p_f * acc_t
            e_p[i0:i1] += p_f * acc_p
        keys = [_transform_key(fil, medium) for fil in profiled]
        shared_keys = [k for k in dict.fromkeys(keys) if keys.count(k) > 1]
        transforms = dict.fromkeys(shared_keys[:_SHARED_TRANSFORMS])
        for fil in profiled:
            st, sp = _profiled_sum(fil, f_c, t_c, p_c, medium, compiled, transforms)
            e_t[i0:i1] += p_f * st
            e_p[i0:i1] += p_f * sp
    return e_t.reshape(shape), e_p.reshape(shape)


def _varying_sum(fil, column_plasma, freq, theta, phi, shape, medium, compiled, chunk, out):
    """Add to ``out`` (e_t, e_p, flat) the field of a column whose current spectrum varies
    along it: for each distinct frequency the current w(s) I(w; s) is resampled as piecewise
    cubics (:meth:`ColumnPlasma.current_pieces`) and transformed exactly."""
    bf = np.broadcast_to(freq, shape).ravel()
    bt, bp = (np.broadcast_to(x, shape).ravel() for x in (theta, phi))
    values, inverse = np.unique(bf, return_inverse=True)
    inverse = inverse.ravel()
    order = np.argsort(inverse, kind="stable")
    bounds = np.searchsorted(inverse[order], np.arange(values.size + 1))
    transform = (_profile_kernels.cubic_transform if compiled
                 else _profile_kernels.cubic_transform_numpy)
    ng = fil.group_index_in(medium)
    per_call = max(1, min(values.size, _PIECE_BYTES // (64 * column_plasma.nodes(fil).size)))
    e_t, e_p = out
    for j0 in range(0, values.size, per_call):
        j1 = min(values.size, j0 + per_call)
        breaks, coefs = column_plasma.current_pieces(fil, values[j0:j1], ng)
        for j in range(j0, j1):
            pref = radiation_prefactor(values[j], medium, None)
            idx_all = order[bounds[j]:bounds[j + 1]]
            for i0 in range(0, idx_all.size, chunk):
                idx = idx_all[i0:i0 + chunk]
                u, phase, d_t, d_p = _column_phase(fil, bf[idx], bt[idx], bp[idx], medium)
                term = (pref * fil.amplitude) * transform(u, breaks, coefs[j - j0]) * phase
                e_t[idx] += term * d_t
                e_p[idx] += term * d_p


def far_field(filaments, freq, theta, phi, medium: Medium | None = None,
              plasma: Plasma | ColumnPlasma | None = None, *, compiled: bool = True,
              memory_budget: float = DEFAULT_MEMORY_BUDGET) -> FarField:
    """Far field of filaments summed coherently.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
        The columns; their fields add with their delays and amplitudes.
    freq : array_like
        Frequency (Hz), > 0.
    theta : array_like
        Polar angle from +z (rad), 0 to pi.
    phi : array_like
        Azimuth from +x (rad).
    medium : Medium, optional
        Defaults to vacuum.
    plasma : Plasma or ColumnPlasma, optional
        Sets the current spectrum, evaluated with each column's group index; without it the
        current spectrum is 1 A s. A :class:`~thzarray.source.column_plasma.ColumnPlasma`
        whose density or collision rate varies along a column makes that column's spectrum
        vary along it (resampled per frequency, error bound in its module docstring).
    compiled : bool
        Use the numba kernels (default) or their numpy twins.
    memory_budget : float
        Bytes this call may use (default 2 GiB): temporaries are chunked to fit; a result
        (32 bytes per point, 64 when columns with different current spectra are added) that
        does not fit by itself raises ValueError.

    Returns
    -------
    FarField
        Components of shape ``np.broadcast_shapes(freq.shape, theta.shape, phi.shape)``;
        pass e.g. ``freq[:, None, None], theta[:, None], phi`` for a (freq, theta, phi) grid.

    Notes
    -----
    The formula is in the module docstring (Jackson secs. 9.1-9.2).
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    freq, theta, phi, shape = check_directions(freq, theta, phi)
    groups, varying, column_plasma = spectral_groups(fils, medium, plasma)
    parts = len(groups) + len(varying)
    size = int(np.prod(shape))
    # A second result-sized buffer when several parts are added together.
    result_bytes = 32 * size * (1 if parts == 1 else 2)
    check_result_fits("far_field", result_bytes, memory_budget)
    chunk = chunk_points(memory_budget, result_bytes, _TEMP_BYTES_PER_POINT)
    if parts == 1 and groups:
        ((local, ng), members), = groups.items()
        pref = radiation_prefactor(freq, medium, local, ng)
        e_t, e_p = _group_sum(members, freq, theta, phi, shape, pref, medium, compiled, chunk)
        return FarField(freq, theta, phi, e_t, e_p, medium)
    e_t = np.zeros(size, dtype=complex)
    e_p = np.zeros(size, dtype=complex)
    for (local, ng), members in groups.items():
        pref = radiation_prefactor(freq, medium, local, ng)
        g_t, g_p = _group_sum(members, freq, theta, phi, shape, pref, medium, compiled, chunk)
        e_t += g_t.ravel()
        e_p += g_p.ravel()
    for fil in varying:
        _varying_sum(fil, column_plasma, freq, theta, phi, shape, medium, compiled, chunk,
                     (e_t, e_p))
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
