r"""Array factors of layouts on a lattice at one frequency: row and column factors.

When the column starts sit on a lattice, :math:`\mathbf r_{ab} = \mathbf r_0 + a\mathbf a_1
+ b\mathbf a_2` (a line, a rectangular or a hexagonal grid, with or without empty sites),
the array factor at one frequency is a polynomial in two phasors,

.. math:: AF(\hat r) = e^{-ik\hat r\cdot\mathbf r_0}\sum_a z_1^a\sum_b P_{ab} z_2^b,
          \qquad z_j = e^{-ik\hat r\cdot\mathbf a_j},\quad P_{ab} = q_{ab}e^{i\omega t_{ab}},

evaluated by Horner's rule: three sine/cosine pairs per direction instead of one per
column. When :math:`P` is an outer product (equal amplitudes with delays linear in the
site indices, as true-time steering of a planar grid gives) the sum separates into a row
factor times a column factor (C. A. Balanis, Antenna Theory, planar arrays: the array
factor of a uniform planar array is the product of two linear-array factors). Both are
exact; only rounding differs from the direct sum (Horner's rule with unit-modulus z adds
about one ulp per site).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Lattice", "find_lattice", "lattice_far_field", "site_phasors"]

# Positions agree with the lattice to this fraction of the layout's extent.
_POSITION_TOL = 1e-10
# A lattice with more sites than this multiple of the columns is not worth it.
_MAX_FILL = 4
# Columns sampled when looking for the two shortest lattice vectors.
_SAMPLE = 16


@dataclass(frozen=True, eq=False)
class Lattice:
    """Column starts on a lattice.

    Attributes
    ----------
    origin, a1, a2 : ndarray, shape (3,)
        Site (0, 0) and the basis vectors (m); ``a2`` is zero for a line.
    index : ndarray, int, shape (N, 2)
        Each column's site (a, b), from 0.
    shape : tuple of int
        Number of sites (I, J) along a1 and a2.
    """

    origin: np.ndarray
    a1: np.ndarray
    a2: np.ndarray
    index: np.ndarray
    shape: tuple


def _shortest(diffs, scale, not_along=None):
    norms = np.linalg.norm(diffs, axis=1)
    ok = norms > _POSITION_TOL * scale
    if not_along is not None:
        cross = np.linalg.norm(np.cross(diffs, not_along), axis=1)
        ok &= cross > 1e-6 * norms * np.linalg.norm(not_along)
    if not ok.any():
        return None
    return diffs[np.flatnonzero(ok)[np.argmin(norms[ok])]]


def find_lattice(starts) -> Lattice | None:
    """The lattice the points ``starts`` (N, 3) (m) sit on, or None.

    The basis is the shortest difference between the points and the shortest one not
    parallel to it (among differences from up to 16 of the points); the points must have
    integer coordinates in it to ``1e-10`` of the layout's extent, and the lattice must have
    at most 4 sites per point.
    """
    starts = np.asarray(starts, dtype=float).reshape(-1, 3)
    n = starts.shape[0]
    if n < 2:
        return None
    scale = float(np.ptp(starts, axis=0).max())
    if scale == 0.0:
        return None
    picks = starts[np.linspace(0, n - 1, min(n, _SAMPLE)).astype(int)]
    diffs = (starts[None, :, :] - picks[:, None, :]).reshape(-1, 3)
    a1 = _shortest(diffs, scale)
    a2 = _shortest(diffs, scale, not_along=a1)
    basis = np.stack([a1] if a2 is None else [a1, a2], axis=1)  # (3, D)
    rel = starts - starts[0]
    coef = np.linalg.lstsq(basis, rel.T, rcond=None)[0].T  # (N, D)
    idx = np.rint(coef)
    if np.abs(rel - idx @ basis.T).max() > _POSITION_TOL * scale:
        return None
    idx = idx.astype(np.int64)
    low = idx.min(axis=0)
    idx -= low
    if idx.shape[1] == 1:
        idx = np.concatenate([idx, np.zeros_like(idx)], axis=1)
        a2 = np.zeros(3)
        low = np.append(low, 0)
    shape = (int(idx[:, 0].max()) + 1, int(idx[:, 1].max()) + 1)
    if shape[0] * shape[1] > _MAX_FILL * n:
        return None
    origin = starts[0] + low[0] * a1 + low[1] * a2
    return Lattice(origin, a1, a2, idx, shape)


def site_phasors(lattice: Lattice, delay, amplitude, omega):
    r"""Phasors :math:`q e^{i\omega t}` on the lattice's sites, as a matrix or, when it is an
    outer product, as its row and column factors.

    Parameters
    ----------
    lattice : Lattice
    delay, amplitude : ndarray, shape (N,)
        The columns' delays (s) and amplitudes.
    omega : float
        Angular frequency (rad/s).

    Returns
    -------
    ndarray, complex, shape (I, J), or tuple of ndarray, shapes (I,) and (J,)
        The pair when the matrix equals their outer product to 1e-13 of its largest entry.
    """
    mat = np.zeros(lattice.shape, dtype=complex)
    np.add.at(mat, (lattice.index[:, 0], lattice.index[:, 1]),
              amplitude * np.exp(1j * omega * delay))
    a, b = np.unravel_index(np.argmax(np.abs(mat)), mat.shape)
    top = mat[a, b]
    if top == 0:
        return mat
    rows, cols = mat[:, b], mat[a, :] / top
    if np.abs(np.outer(rows, cols) - mat).max() <= 1e-13 * abs(top):
        return rows, cols
    return mat


def _outer_angles(theta, phi, shape):
    """(theta (T,), phi (P,)) when theta varies only along the second-last axis of ``shape``
    and phi only along the last, else None."""
    if len(shape) < 1:
        return None
    p = shape[-1]
    bt = np.broadcast_to(theta, shape).reshape(-1, p)
    bp = np.broadcast_to(phi, shape).reshape(-1, p)
    if not (np.all(bt == bt[:, :1]) and np.all(bp == bp[:1, :])):
        return None
    return np.ascontiguousarray(bt[:, 0]), np.ascontiguousarray(bp[0])


def lattice_far_field(fils, freq, theta, phi, shape, medium, plasma):
    r"""Far field of uniform columns along +z with starts on a lattice, at one frequency.

    The column factor :math:`L_n\operatorname{sinc}(uL_n/2)e^{iuL_n/2}` depends on the
    polar angle only (:math:`u = \frac{\omega}{c}(n_g - n_T\cos\theta)`), so it is put on
    the lattice sites once per polar angle and the sum over the sites taken by Horner's
    rule (module docstring); the polarization is :math:`\hat\theta\cdot\hat z = -\sin\theta`
    (:mod:`thzarray.field.farfield`). Exact; equal to the direct sum up to rounding.

    Parameters
    ----------
    fils : tuple of Filament
    freq, theta, phi : ndarray
        Validated coordinates (Hz, rad) broadcasting to ``shape``.
    shape : tuple of int
    medium : Medium
    plasma : Plasma or ColumnPlasma or None

    Returns
    -------
    FarField or None
        None when the columns, the frequencies or the directions do not have this form.
    """
    from scipy.constants import c

    from thzarray.array import _lattice_kernels as _kernels
    from thzarray.field.farfield import FarField, radiation_prefactor, spectral_groups

    if freq.size != 1 or len(fils) < 3:
        return None
    first = fils[0]
    if any(not f.is_uniform or f.axis != (0.0, 0.0, 1.0) or not f.is_axial
           or f.group_index != first.group_index for f in fils):
        return None
    groups, varying, _ = spectral_groups(fils, medium, plasma)
    if varying or len(groups) != 1:
        return None
    angles = _outer_angles(theta, phi, shape)
    lattice = find_lattice([f.start for f in fils])
    if angles is None or lattice is None:
        return None
    (local, ng_key), _ = next(iter(groups.items()))
    th, ph = angles
    f0 = float(freq.reshape(-1)[0])
    w = 2 * np.pi * f0
    k = w * medium.n_thz / c
    u = w / c * (first.group_index_in(medium) - medium.n_thz * np.cos(th))
    phasor = np.array([f.amplitude for f in fils]) * np.exp(1j * w * np.array([f.delay
                                                                                for f in fils]))
    length = np.array([f.length for f in fils])
    factors = site_phasors(lattice, np.array([f.delay for f in fils]),
                           np.array([f.amplitude for f in fils]), w)
    if isinstance(factors, tuple) and np.all(length == length[0]):
        # Identical columns with separable phasors: element x row factor x column factor.
        half = 0.5 * u * length[0]
        column = length[0] * np.sinc(half / np.pi) * np.exp(1j * half)
        s = _kernels.lattice_separable(k, column, th, ph, lattice.origin, lattice.a1,
                                       lattice.a2, *factors)
    else:
        s = _kernels.lattice_columns(k, u, th, ph, lattice.origin, lattice.a1, lattice.a2,
                                     lattice.index, phasor, length, lattice.shape)
    pref = complex(np.asarray(radiation_prefactor(np.array(f0), medium, local, ng_key)))
    e_t = (pref * -np.sin(th)[:, None] * s).reshape(shape)
    return FarField(freq, theta, phi, e_t, np.zeros(shape, dtype=complex), medium)
