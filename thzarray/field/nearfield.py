r"""Fields of filaments at finite distance: the exact line integral of the full dipole field.

Model
-----
Column n carries :math:`I_n(s,\omega) = q_n w_n(s) I(\omega) e^{i\omega(t_n + s n_g/c)}` at
:math:`\mathbf r_n + s\hat a_n` (the conventions of :mod:`~thzarray.field.farfield`; n_g the
column's group index), flowing along the axis (below) or across it (further below). With
:math:`e^{-i\omega t}` the current density is :math:`\mathbf J = -i\omega\mathbf P` for the
polarization :math:`\mathbf P = i\mathbf J/\omega`, and continuity
(:math:`\nabla\cdot\mathbf J = i\omega\rho`) gives the charge
:math:`\rho = -\nabla\cdot\mathbf P`; on the line, the charge per length is
:math:`\lambda = \frac{1}{i\omega}\frac{dI}{ds}`, plus the point charges
:math:`+I(0)/(i\omega)` where the current starts and :math:`-I(L)/(i\omega)` where it
stops (the column's ends; with :math:`e^{+i\omega t}` the signs would flip).
A source described completely by :math:`\mathbf P` radiates the superposition of the
fields of its dipoles :math:`d\mathbf p = (i I\,ds/\omega)\,\hat a`, end charges included.
Jackson's full point-dipole field (Classical Electrodynamics, 3rd ed., eq. 9.18) in a
medium of index :math:`n_T` (:math:`\varepsilon = n_T^2\varepsilon_0`, :math:`k = n_T\omega/c`)
then gives, with :math:`\mathbf R = \mathbf x - \mathbf r_n - s\hat a_n`, for a current
along the axis,

.. math::
    \mathbf E(\mathbf x,\omega) = \frac{i\omega\mu_0 I(\omega)}{4\pi}\sum_n q_n e^{i\omega t_n}
    \int_0^{L_n} w_n(s)\,e^{i k_g s}\,e^{ikR}
    \left[\frac{\hat a - (\hat R\cdot\hat a)\hat R}{R}
    + \left(3\hat R(\hat R\cdot\hat a) - \hat a\right)
      \left(\frac{1}{k^2R^3} - \frac{i}{kR^2}\right)\right] ds,

    \mathbf H(\mathbf x,\omega) = \frac{I(\omega)}{4\pi}\sum_n q_n e^{i\omega t_n}
    \int_0^{L_n} w_n(s)\,e^{i k_g s}\,e^{ikR}\left(ik - \frac1R\right)
    \frac{\hat R\times\hat a}{R}\,ds,

:math:`k_g = n_g\omega/c`: radiation, induction and quasi-static terms, no far-field or
Fresnel approximation. Far away, :math:`R e^{-ikR}\mathbf E(R\hat r) \to` the radiation
vector of :func:`thzarray.far_field`.

A transverse current (unit direction :math:`\hat d\perp\hat a`, the two-colour
photocurrent) is the superposition of the point dipoles :math:`d\mathbf p = (iI\,ds/\omega)\hat d`:
the same formulas with :math:`\hat a` replaced by :math:`\hat d` in the brackets (the
elements still sit at :math:`\mathbf r_n + s\hat a_n` and are still phased by
:math:`e^{ik_g s}`). Its charges differ: :math:`\mathbf P = (iI(s)/\omega)\,\hat d\,
\delta^2(\mathbf x_\perp)` has :math:`\rho = -\nabla\cdot\mathbf P =
-(iI(s)/\omega)\,(\hat d\cdot\nabla_\perp)\delta^2(\mathbf x_\perp)`, because
:math:`\hat d\cdot\hat a = 0` leaves no derivative along the column. There is no line
charge from :math:`dI/ds` and no end charge: what remains is a line of transverse dipoles,
charge :math:`\pm` piled on the two flanks of the core across :math:`\hat d`, of moment
:math:`iI(s)/\omega` per length. The dipole sum holds all of it, as for the axial current.

Quadrature: an oscillation-aware Filon-Legendre panel rule (see
``thzarray.field._near_kernels``), whose cost grows with the number of Fresnel zones along the
column, not with the number of phase turns.

Minimum distance: points closer to a column than ``MIN_DISTANCE_WAVELENGTHS`` (1/100) of
the THz wavelength in the medium raise ``ValueError`` (the line-current model assumes the
point lies well outside the plasma; a real filament core is some 100 um across).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.constants import c, mu_0

from thzarray.air.medium import Medium
from thzarray.base.checks import as_float_array
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET, check_result_fits, chunk_points
from thzarray.field import _near_kernels
from thzarray.field.farfield import radiation_prefactor, spectral_groups
from thzarray.source.column_plasma import ColumnPlasma
from thzarray.source.filament import as_filaments
from thzarray.source.plasma import Plasma

__all__ = [
    "MAX_POINT_COORDINATE",
    "MIN_DISTANCE_WAVELENGTHS",
    "NearField",
    "field_at",
    "fields_at",
    "magnetic_field_at",
    "spectral_fluence",
]

MIN_DISTANCE_WAVELENGTHS = 0.01
# Largest coordinate of a field point (m): keeps r^2 and every phase k r finite.
MAX_POINT_COORDINATE = 1e9

# Largest number of (frequency, point) pairs handled in one pass; bounds temporary memory.
_CHUNK_PAIRS = 1 << 18
# Temporary bytes per point of one chunk (inputs, kernel outputs, numpy-twin panels).
_TEMP_BYTES_PER_POINT = 4096


@dataclass(frozen=True, eq=False)
class NearField:
    """Electric and magnetic field spectra at points.

    Attributes
    ----------
    freq : ndarray
        Frequencies as given (Hz).
    points : ndarray, shape (..., 3)
        Field points as given (m).
    e : ndarray, complex, shape ``shape + (3,)``
        Electric field spectrum E(w) (V s / m).
    h : ndarray, complex, shape ``shape + (3,)``
        Magnetic field spectrum H(w) (A s / m).
    medium : Medium
    """

    freq: np.ndarray
    points: np.ndarray
    e: np.ndarray
    h: np.ndarray
    medium: Medium

    @property
    def fluence(self) -> np.ndarray:
        """Spectral fluence vector 2 Re(E x H*) (J/(m^2 Hz)), one-sided in frequency."""
        return spectral_fluence(self.e, self.h)


def spectral_fluence(e, h):
    """Energy per unit area and frequency carried by a field, 2 Re(E x H*) (J/(m^2 Hz)).

    Parameters
    ----------
    e, h : array_like, complex, shape (..., 3)
        Electric (V s/m) and magnetic (A s/m) field spectra.

    Returns
    -------
    ndarray, shape (..., 3)

    Notes
    -----
    Parseval's theorem with one-sided frequencies:
    :math:`\\int \\mathbf E(t)\\times\\mathbf H(t)\\,dt = \\int_0^\\infty 2\\,\\mathrm{Re}
    (\\mathbf E\\times\\mathbf H^*)\\,df`.
    """
    return 2.0 * np.real(np.cross(np.asarray(e), np.conj(np.asarray(h))))


def _pack(fils, medium, coefs=None):
    """Kernel arguments for ``fils``; ``coefs`` replaces each column's profile pieces by
    (breaks, coefs) pairs (a plasma varying along the column, at one frequency)."""
    breaks, coef_list, brk_off, coef_off = [], [], [0], [0]
    for i, f in enumerate(fils):
        br, cf = (f.pieces.breaks, f.pieces.coefs) if coefs is None else coefs[i]
        breaks.append(br)
        coef_list.append(cf)
        brk_off.append(brk_off[-1] + br.size)
        coef_off.append(coef_off[-1] + cf.shape[0])
    return (np.array([f.start for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.axis for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.current for f in fils], dtype=float).reshape(-1, 3),
            np.array([f.delay for f in fils]), np.array([f.amplitude for f in fils]),
            np.ascontiguousarray(np.concatenate(breaks)),
            np.ascontiguousarray(np.concatenate(coef_list)),
            np.array(brk_off, dtype=np.int64), np.array(coef_off, dtype=np.int64),
            np.array([f.group_index_in(medium) for f in fils], dtype=float))


def _distance_to_columns(points, fils):
    """Smallest distance (m) from each point (..., 3) to any column."""
    flat = points.reshape(-1, 3)
    best = np.full(flat.shape[0], np.inf)
    for f in fils:
        a = np.asarray(f.axis)
        d = flat - np.asarray(f.start)
        t = np.clip(d @ a, 0.0, f.length)
        best = np.minimum(best, np.linalg.norm(d - t[:, None] * a, axis=-1))
    return best.reshape(points.shape[:-1])


def _check_inputs(fils, freq, points, medium, memory_budget):
    freq = as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz")
    points = as_float_array("points", points, low=-MAX_POINT_COORDINATE,
                            high=MAX_POINT_COORDINATE, unit="m")
    if points.ndim == 0 or points.shape[-1] != 3:
        raise ValueError(f"points has shape {points.shape}; allowed: Cartesian points on a last "
                         "axis of size 3")
    try:
        shape = np.broadcast_shapes(freq.shape, points.shape[:-1])
    except ValueError:
        raise ValueError(f"freq and points have shapes {freq.shape} and {points.shape}; allowed: "
                         "freq broadcastable with points[..., 0] (e.g. freq[:, None, None] with "
                         "points of shape (ny, nx, 3))") from None
    # Before anything of the broadcast shape is allocated (the distance test below is).
    check_result_fits("fields_at", 96 * math.prod(shape), memory_budget)
    dist = _distance_to_columns(points, fils)
    limit = MIN_DISTANCE_WAVELENGTHS * c / (medium.n_thz * freq)
    too_close = np.broadcast_to(dist, shape) < np.broadcast_to(limit, shape)
    if too_close.any():
        idx = np.unravel_index(np.flatnonzero(too_close)[0], shape)
        d_bad = float(np.broadcast_to(dist, shape)[idx])
        lim = float(np.broadcast_to(limit, shape)[idx])
        raise ValueError(f"points: a point lies {d_bad:.4g} m from a filament; allowed: at least "
                         f"{MIN_DISTANCE_WAVELENGTHS:g} wavelength ({lim:.4g} m at that frequency)")
    return freq, points, shape


def fields_at(filaments, freq, points, medium: Medium | None = None,
              plasma: Plasma | ColumnPlasma | None = None, *, compiled: bool = True,
              memory_budget: float = DEFAULT_MEMORY_BUDGET) -> NearField:
    """Electric and magnetic field spectra of filaments at finite distance.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    freq : array_like
        Frequency (Hz), > 0; broadcast with ``points[..., 0]``.
    points : array_like, shape (..., 3)
        Field points (m), each at least ``MIN_DISTANCE_WAVELENGTHS`` wavelengths from every
        column, coordinates within +-``MAX_POINT_COORDINATE`` (1e9 m).
    medium : Medium, optional
        Defaults to vacuum.
    plasma : Plasma or ColumnPlasma, optional
        Sets the current spectrum (each column's group index); without it I(w) = 1 A s. A
        ColumnPlasma that varies along a column is resampled per frequency (error bound in
        :mod:`thzarray.source.column_plasma`).
    compiled : bool
        Numba kernel (default) or its numpy twin.
    memory_budget : float
        Bytes this call may use (default 2 GiB): points are processed in chunks that fit; a
        result (96 bytes per point for E and H) that does not fit raises ValueError.

    Returns
    -------
    NearField
        ``e`` and ``h`` of shape ``np.broadcast_shapes(freq.shape, points.shape[:-1]) + (3,)``.

    Notes
    -----
    The formulas are in the module docstring (Jackson eq. 9.18 integrated along the columns).
    """
    fils = as_filaments(filaments)
    medium = Medium.vacuum() if medium is None else medium
    freq, points, shape = _check_inputs(fils, freq, points, medium, memory_budget)
    groups, varying, column_plasma = spectral_groups(fils, medium, plasma)
    size = math.prod(shape)
    result_bytes = 96 * size  # E and H, complex, 3 components
    chunk = min(_CHUNK_PAIRS, chunk_points(memory_budget, result_bytes, _TEMP_BYTES_PER_POINT))
    bf = np.broadcast_to(freq, shape)
    bxyz = [np.broadcast_to(points[..., j], shape) for j in range(3)]
    kernel = _near_kernels.line_fields if compiled else _near_kernels.line_fields_numpy
    e = np.zeros((size, 3), dtype=complex)
    h = np.zeros((size, 3), dtype=complex)
    packs = [(local, ng, _pack(members, medium)) for (local, ng), members in groups.items()]
    for i0 in range(0, size, chunk):
        i1 = min(size, i0 + chunk)
        f_c = np.ascontiguousarray(bf.flat[i0:i1])
        p_c = np.ascontiguousarray(np.stack([b.flat[i0:i1] for b in bxyz], axis=-1))
        k = 2 * np.pi * f_c * medium.n_thz / c
        carrier = np.exp(1j * k * np.linalg.norm(p_c, axis=-1))
        for local, ng, packed in packs:
            e_c, h_c = kernel(f_c, p_c, *packed[:-1], packed[-1], medium.n_thz)
            pref = radiation_prefactor(f_c, medium, local, ng) * carrier
            e[i0:i1] += pref[:, None] * e_c
            h[i0:i1] += (pref / (2j * np.pi * f_c * mu_0))[:, None] * h_c
    if varying:
        _add_varying(varying, column_plasma, bf.ravel(), bxyz, medium, kernel, chunk, e, h)
    return NearField(freq, points, e.reshape(shape + (3,)), h.reshape(shape + (3,)), medium)


def _add_varying(fils, column_plasma, flat_freq, bxyz, medium, kernel, chunk, e, h):
    """Add the fields of columns whose plasma varies along them: per distinct frequency each
    column's current w(s) I(w; s) (A s) is resampled as piecewise cubics
    (:meth:`ColumnPlasma.current_pieces`) and integrated by the same line-integral kernel."""
    values, inverse = np.unique(flat_freq, return_inverse=True)
    inverse = inverse.ravel()
    order = np.argsort(inverse, kind="stable")
    bounds = np.searchsorted(inverse[order], np.arange(values.size + 1))
    ngs = [f.group_index_in(medium) for f in fils]
    for j, fj in enumerate(values):
        pieces = []
        for f, ng in zip(fils, ngs):
            br, cf = column_plasma.current_pieces(f, np.array([fj]), ng)
            pieces.append((br, cf[0]))
        packed = _pack(fils, medium, pieces)
        idx_all = order[bounds[j]:bounds[j + 1]]
        for i0 in range(0, idx_all.size, chunk):
            idx = idx_all[i0:i0 + chunk]
            f_c = np.full(idx.size, fj)
            p_c = np.ascontiguousarray(np.stack([b.ravel()[idx] for b in bxyz], axis=-1))
            e_c, h_c = kernel(f_c, p_c, *packed[:-1], packed[-1], medium.n_thz)
            k = 2 * np.pi * fj * medium.n_thz / c
            pref = (radiation_prefactor(f_c, medium, None)
                    * np.exp(1j * k * np.linalg.norm(p_c, axis=-1)))
            e[idx] += pref[:, None] * e_c
            h[idx] += (pref / (2j * np.pi * f_c * mu_0))[:, None] * h_c


def field_at(filaments, freq, points, medium: Medium | None = None,
             plasma: Plasma | ColumnPlasma | None = None, *, compiled: bool = True,
             memory_budget: float = DEFAULT_MEMORY_BUDGET) -> np.ndarray:
    """Electric field spectrum E(w) of filaments at points at finite distance (V s / m).

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    freq : array_like
        Frequency (Hz), > 0; broadcast with ``points[..., 0]``.
    points : array_like, shape (..., 3)
        Field points (m); closer than 1/100 wavelength to a column raises ValueError.
    medium : Medium, optional
        Defaults to vacuum.
    plasma : Plasma or ColumnPlasma, optional
        Sets the current spectrum (each column's group index); without it I(w) = 1 A s. A
        ColumnPlasma that varies along a column is resampled per frequency (error bound in
        :mod:`thzarray.source.column_plasma`).
    compiled : bool
        Numba kernel (default) or its numpy twin.
    memory_budget : float
        Bytes this call may use (default 2 GiB); see :func:`fields_at`.

    Returns
    -------
    ndarray, complex, shape ``np.broadcast_shapes(freq.shape, points.shape[:-1]) + (3,)``
        Cartesian components.

    Notes
    -----
    .. math:: \\mathbf E = \\frac{i\\omega\\mu_0 I}{4\\pi}\\sum_n q_n e^{i\\omega t_n}\\int_0^{L_n}
              w_n e^{ik_g s + ikR}\\left[\\frac{\\hat a - (\\hat R\\cdot\\hat a)\\hat R}{R}
              + (3\\hat R(\\hat R\\cdot\\hat a) - \\hat a)\\left(\\frac{1}{k^2R^3}
              - \\frac{i}{kR^2}\\right)\\right]ds

    (Jackson, Classical Electrodynamics, 3rd ed., eq. 9.18, integrated along each column;
    derivation in the module docstring). Normalisation:
    :math:`R e^{-ikR}\\mathbf E(R\\hat r) \\to` ``far_field(...).cartesian`` as R -> inf.
    """
    return fields_at(filaments, freq, points, medium, plasma, compiled=compiled,
                     memory_budget=memory_budget).e


def magnetic_field_at(filaments, freq, points, medium: Medium | None = None,
                      plasma: Plasma | ColumnPlasma | None = None, *, compiled: bool = True,
                      memory_budget: float = DEFAULT_MEMORY_BUDGET) -> np.ndarray:
    """Magnetic field spectrum H(w) of filaments at points at finite distance (A s / m).

    Parameters and shapes as for :func:`field_at`.

    Notes
    -----
    .. math:: \\mathbf H = \\frac{I}{4\\pi}\\sum_n q_n e^{i\\omega t_n}\\int_0^{L_n}
              w_n e^{ik_g s + ikR}\\left(ik - \\frac1R\\right)\\frac{\\hat R\\times\\hat a}{R}ds

    (the curl of the vector potential, Jackson eq. 9.18's magnetic part).
    """
    return fields_at(filaments, freq, points, medium, plasma, compiled=compiled,
                     memory_budget=memory_budget).h
