r"""A plasma whose electron density and collision rate vary along the column.

A real filament is not uniform: the electron density rises, clamps and falls along it, and
the collision rate follows the density of the neutral gas and the electron temperature. The
current it carries then changes its *spectrum*, not only its amplitude, along the column:

.. math:: I(s, \omega) = w(s)\, I\big(\omega;\ n_e(s),\ \nu(s),\ n_g\big),

where :math:`I(\omega; n_e, \nu, n_g)` is the line-current spectrum of
:meth:`thzarray.source.plasma.Plasma.current_spectrum` evaluated with the local density and
collision rate (the pulse, intensity, radius and wavelength of the reference
:class:`~thzarray.source.plasma.Plasma`), :math:`w(s)` the column's own profile and
:math:`n_g` the column's group index.

Resampling (what the field code integrates)
-------------------------------------------
For each frequency the product :math:`g_\omega(s) = w(s)\,I(\omega; s)` is sampled at the
nodes :math:`s_i`, the union of ``PROFILE_SAMPLES`` equidistant points on [0, L] and the
breaks of the column's profile, and interpolated by a not-a-knot cubic spline. The far and
near fields then integrate that piecewise cubic exactly (the transforms of
:mod:`thzarray.field._kernels` and :mod:`thzarray.field._near_kernels`), so their only error
is the interpolation error of :math:`g_\omega`,

.. math:: |g_\omega(s) - S_\omega(s)| \le \tfrac{5}{384}\,h^4 \max|\partial_s^4 g_\omega|,
          \qquad h \le L / (\mathrm{PROFILE\_SAMPLES} - 1),

(C. de Boor, A Practical Guide to Splines, cubic spline interpolation), and the radiation
integral's error is at most L times this, at every direction (the transform is exact for any
phase). The bound holds where :math:`g_\omega` has four continuous derivatives: smooth
density and collision profiles (callables, or sampled data, which are interpolated by PCHIP)
times a callable profile. At the data points of sampled (PCHIP, C1) profiles the second
derivative jumps and the local error there is of order :math:`h^2` times the jump.

Constant along the column
-------------------------
When neither the density nor the collision rate varies along a column (both ``None``, or
every sample equal), :meth:`ColumnPlasma.constant_on` returns an ordinary
:class:`~thzarray.source.plasma.Plasma` and the field code takes its usual path: the results
are then exactly those of that plasma.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np
from scipy.interpolate import CubicSpline, PchipInterpolator

from thzarray.base.checks import as_float_array
from thzarray.source.filament import PROFILE_SAMPLES, Filament
from thzarray.source.plasma import Plasma

__all__ = ["ColumnPlasma", "as_column_plasma"]


def _along(name, value):
    """A function of s (m) from a callable or a sampled (z, values) pair (PCHIP), or None."""
    if value is None:
        return None, None
    if callable(value):
        return value, None
    try:
        z, v = value
    except (TypeError, ValueError):
        raise ValueError(f"{name} = an object that is neither a function nor a (z, values) "
                         "pair; allowed: a callable of s (m) or two equal-length arrays") from None
    z = as_float_array(f"{name} z", z, unit="m")
    v = as_float_array(f"{name} values", v)
    if z.ndim != 1 or v.shape != z.shape or z.size < 2:
        raise ValueError(f"{name} = arrays of shapes {z.shape} and {v.shape}; allowed: two 1-D "
                         "arrays of equal length >= 2")
    if np.any(np.diff(z) <= 0):
        raise ValueError(f"{name} z is not strictly increasing; allowed: strictly increasing "
                         "positions along the column (m)")
    if z.size == 2:
        return (lambda s: np.interp(s, z, v)), (float(z[0]), float(z[-1]))
    return PchipInterpolator(z, v, extrapolate=False), (float(z[0]), float(z[-1]))


@dataclass(frozen=True)
class ColumnPlasma:
    """A filament plasma whose electron density and collision rate vary along the column.

    Parameters
    ----------
    plasma : Plasma
        The reference plasma: pulse, intensity, wavelength and radius, and the density and
        collision rate used where no profile is given.
    density : callable or (z, values) pair, optional
        Electron density n_e(s) (m^-3) at distance s (m) from each column's start; sampled
        data (z strictly increasing, covering [0, L] of every column it drives) are
        interpolated by PCHIP. None: ``plasma.electron_density`` everywhere.
    collision_rate : callable or (z, values) pair, optional
        Collision rate nu(s) (1/s), given like ``density``. None: ``plasma.collision_rate``.

    Notes
    -----
    Pass it as ``plasma=`` to :func:`thzarray.field.farfield.far_field`,
    :func:`thzarray.field.nearfield.fields_at` and the functions built on them. The same
    functions of s apply to every column, s measured from each column's start. The values
    must lie in the ranges :class:`Plasma` allows (checked when a column is evaluated).
    """

    plasma: Plasma
    density: object = field(default=None, compare=False)
    collision_rate: object = field(default=None, compare=False)
    _density: object = field(default=None, init=False, repr=False, compare=False)
    _collision: object = field(default=None, init=False, repr=False, compare=False)
    _spans: tuple = field(default=(), init=False, repr=False, compare=False)

    def __post_init__(self):
        if not isinstance(self.plasma, Plasma):
            raise ValueError(f"plasma = {type(self.plasma).__name__}; allowed: a Plasma")
        dens, span_d = _along("density", self.density)
        coll, span_c = _along("collision_rate", self.collision_rate)
        object.__setattr__(self, "_density", dens)
        object.__setattr__(self, "_collision", coll)
        object.__setattr__(self, "_spans", tuple((n, sp) for n, sp in
                                                 (("density", span_d),
                                                  ("collision_rate", span_c)) if sp))

    def values_at(self, s, length: float):
        """Electron density (m^-3) and collision rate (1/s) at s (m) on a column of ``length``.

        Returns
        -------
        (ndarray, ndarray)
            Both of the shape of ``s``.
        """
        s = np.asarray(s, dtype=float)
        for name, (lo, hi) in self._spans:
            tol = 1e-9 * length
            if lo > tol or hi < length - tol:
                raise ValueError(f"{name} z spans [{lo:g}, {hi:g}] m; allowed: a span covering "
                                 f"[0, {length:g}] m (the column's length)")
        out = []
        for name, fun, const in (("density", self._density, self.plasma.electron_density),
                                 ("collision_rate", self._collision, self.plasma.collision_rate)):
            if fun is None:
                out.append(np.full(s.shape, const))
                continue
            try:
                v = np.asarray(fun(np.clip(s, 0.0, length)), dtype=float)
            except Exception as exc:  # the user's function failed: report it as bad input
                raise ValueError(f"{name}: calling the function failed ({exc})") from None
            if v.shape != s.shape:
                raise ValueError(f"{name}: the function returned shape {v.shape}; allowed: the "
                                 f"shape of its argument {s.shape}")
            out.append(as_float_array(f"{name} along the column", v))
        return out[0], out[1]

    def nodes(self, fil: Filament) -> np.ndarray:
        """The resampling nodes on [0, L] of a column (module docstring), increasing (m)."""
        grid = np.linspace(0.0, fil.length, PROFILE_SAMPLES)
        if fil.is_uniform:
            return grid
        return np.unique(np.concatenate([grid, fil.pieces.breaks]))

    def constant_on(self, fil: Filament) -> Plasma | None:
        """The equivalent ordinary Plasma when nothing varies along ``fil``, else None."""
        if self._density is None and self._collision is None:
            return self.plasma
        dens, coll = self.values_at(self.nodes(fil), fil.length)
        if np.all(dens == dens[0]) and np.all(coll == coll[0]):
            return self._local(dens[0], coll[0])
        return None

    def _local(self, density, collision_rate) -> Plasma:
        try:
            return dataclasses.replace(self.plasma, electron_density=float(density),
                                       collision_rate=float(collision_rate))
        except ValueError as exc:
            raise ValueError(f"plasma along the column: {exc}") from None

    def local_current_spectrum(self, freq, s, length: float, n_group: float = 1.0):
        """Local line-current spectrum I(w; n_e(s), nu(s), n_g) (A s).

        Parameters
        ----------
        freq : array_like, shape (F,)
            Frequencies (Hz), >= 0.
        s : array_like, shape (S,)
            Distances from the column's start (m).
        length : float
            The column's length (m).
        n_group : float
            The column's group index.

        Returns
        -------
        ndarray, complex, shape (F, S)
        """
        freq = np.atleast_1d(as_float_array("freq", freq, low=0.0, unit="Hz"))
        dens, coll = self.values_at(np.atleast_1d(s), length)
        out = np.empty((freq.size, dens.size), dtype=complex)
        pairs = np.stack([dens, coll], axis=1)
        unique, inverse = np.unique(pairs, axis=0, return_inverse=True)
        for j, (n_e, nu) in enumerate(unique):
            out[:, inverse.ravel() == j] = self._local(n_e, nu).current_spectrum(
                freq, n_group)[:, None]
        return out

    def current_pieces(self, fil: Filament, freq, n_group: float):
        """The column's current w(s) I(w; s) as piecewise cubics, one set per frequency.

        Parameters
        ----------
        fil : Filament
        freq : array_like, shape (F,)
            Frequencies (Hz).
        n_group : float
            The column's group index.

        Returns
        -------
        breaks : ndarray, shape (P + 1,)
            Nodes (m), shared by every frequency.
        coefs : ndarray, complex, shape (F, P, 4)
            Ascending-power coefficients in s - breaks[j] (A s), the not-a-knot spline of
            the module docstring.
        """
        s = self.nodes(fil)
        g = self.local_current_spectrum(freq, s, fil.length, n_group) * fil.profile_values(s)[None, :]
        spline = CubicSpline(s, g, axis=1, bc_type="not-a-knot")
        coefs = np.ascontiguousarray(np.transpose(spline.c[::-1], (2, 1, 0)))
        return s, coefs


def as_column_plasma(plasma) -> ColumnPlasma | None:
    """``plasma`` as a ColumnPlasma (a Plasma is wrapped unchanged), or None."""
    if plasma is None or isinstance(plasma, ColumnPlasma):
        return plasma
    if isinstance(plasma, Plasma):
        return ColumnPlasma(plasma)
    raise ValueError(f"plasma = {type(plasma).__name__}; allowed: None, a Plasma or a "
                     "ColumnPlasma")
