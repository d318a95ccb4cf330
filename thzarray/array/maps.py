r"""Intensity maps of a layout: band energy on a (theta, phi) sky grid and spectral energy on a
(freq, theta) plane at one azimuth. Arrays only; the plotting layer draws them.

Both maps use :func:`thzarray.array.arrayfield.array_far_field` (element pattern times array factor
when the columns are identical, the general sum otherwise) and the energy density
:math:`d^2W/(df\,d\Omega) = 2 n_T\varepsilon_0 c|\mathbf F|^2` of
:mod:`thzarray.field.farfield`. The sky map is the band sum

.. math:: \frac{dW}{d\Omega}(\theta, \phi) = \sum_j \Delta f_j\, w_j\,
          \frac{d^2W}{df\,d\Omega}(f_j, \theta, \phi)

with the weights of :func:`thzarray.base.band.band_weights`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import c

from thzarray.air.medium import Medium
from thzarray.array.arrayfield import array_far_field, check_method
from thzarray.base.band import band_weights, check_band
from thzarray.base.checks import as_float_array, check_scalar
from thzarray.field.nufft import DEFAULT_RTOL
from thzarray.source.filament import as_filaments, layout_extent
from thzarray.source.plasma import Plasma

__all__ = ["FrequencyMap", "SkyMap", "frequency_map", "sky_grid", "sky_map"]

# Field evaluations (directions x frequencies) per pass; bounds temporary memory.
_CHUNK = 1 << 20


@dataclass(frozen=True, eq=False)
class SkyMap:
    """Band energy per steradian on a sky grid.

    Attributes
    ----------
    theta : ndarray, shape (T,)
        Polar angles from +z (rad).
    phi : ndarray, shape (P,)
        Azimuths from +x (rad).
    freq : ndarray, shape (F,)
        Band frequencies (Hz).
    energy : ndarray, shape (T, P)
        dW/dOmega (J/sr; per (A s)^2 without a plasma; J/(Hz sr) for one frequency).
    """

    theta: np.ndarray
    phi: np.ndarray
    freq: np.ndarray
    energy: np.ndarray

    @property
    def peak(self) -> tuple:
        """(theta, phi) of the grid's largest value (rad)."""
        i, j = np.unravel_index(np.argmax(self.energy), self.energy.shape)
        return float(self.theta[i]), float(self.phi[j])

    def relative_db(self, floor_db: float = -60.0) -> np.ndarray:
        """10 log10(energy / max), clipped below at ``floor_db``; shape (T, P)."""
        top = self.energy.max()
        with np.errstate(divide="ignore"):
            db = 10 * np.log10(self.energy / top) if top > 0 else np.full(self.energy.shape,
                                                                            -np.inf)
        return np.maximum(db, floor_db)


@dataclass(frozen=True, eq=False)
class FrequencyMap:
    """Spectral energy per steradian on a (freq, theta) plane at one azimuth.

    Attributes
    ----------
    freq : ndarray, shape (F,)
        Frequencies (Hz).
    theta : ndarray, shape (T,)
        Polar angles (rad).
    phi : float
        Azimuth of the cut (rad).
    energy_density : ndarray, shape (F, T)
        d2W/(df dOmega) (J/(Hz sr)).
    """

    freq: np.ndarray
    theta: np.ndarray
    phi: float
    energy_density: np.ndarray


def _axis(name, value, low=None, high=None):
    arr = as_float_array(name, value, low=low, high=high, unit="rad")
    if arr.ndim != 1:
        raise ValueError(f"{name} has shape {arr.shape}; allowed: a 1-D array of angles (rad)")
    return arr


def sky_map(filaments, theta, phi, freq, medium: Medium | None = None,
            plasma: Plasma | None = None, spectral_weight=None, *, method: str = "auto",
            rtol: float = DEFAULT_RTOL) -> SkyMap:
    """Band energy per steradian of a layout on a (theta, phi) grid.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    theta : array_like, shape (T,)
        Polar angles (rad), 0 to pi.
    phi : array_like, shape (P,)
        Azimuths (rad).
    freq : array_like, shape (F,)
        Increasing band frequencies (Hz).
    medium, plasma : optional
    spectral_weight : array_like, shape (F,), optional
        Spectral weight (see :func:`thzarray.base.band.band_weights`).
    method : {"auto", "direct", "nufft"}
        How the field is summed (:func:`thzarray.array.arrayfield.array_far_field`).
    rtol : float
        Tolerance of the non-uniform FFT path (relative to the largest field the columns can
        give).

    Returns
    -------
    SkyMap
    """
    fils = as_filaments(filaments)
    method = check_method(method)
    theta = _axis("theta", theta, 0.0, np.pi)
    phi = _axis("phi", phi)
    freq = check_band(freq)
    bw = band_weights(freq, spectral_weight)
    medium = Medium.vacuum() if medium is None else medium
    energy = np.empty((theta.size, phi.size))
    rows = max(1, _CHUNK // (phi.size * freq.size))
    for i0 in range(0, theta.size, rows):
        th = theta[i0:i0 + rows]
        ff = array_far_field(fils, freq[:, None, None], th[:, None], phi[None, :], medium, plasma,
                             method=method, rtol=rtol)
        energy[i0:i0 + rows] = np.tensordot(bw, ff.energy_density, axes=(0, 0))
    return SkyMap(theta, phi, freq, energy)


def frequency_map(filaments, theta, freq, phi: float = 0.0, medium: Medium | None = None,
                  plasma: Plasma | None = None) -> FrequencyMap:
    """Spectral energy per steradian on a (freq, theta) plane at azimuth ``phi``.

    Parameters
    ----------
    filaments : Filament or sequence of Filament
    theta : array_like, shape (T,)
        Polar angles (rad), 0 to pi.
    freq : array_like, shape (F,)
        Frequencies (Hz).
    phi : float
        Azimuth of the cut (rad).
    medium, plasma : optional

    Returns
    -------
    FrequencyMap
    """
    fils = as_filaments(filaments)
    theta = _axis("theta", theta, 0.0, np.pi)
    freq = check_band(freq)
    phi = check_scalar("phi", phi, unit="rad")
    ff = array_far_field(fils, freq[:, None], theta[None, :], phi, medium, plasma)
    return FrequencyMap(freq, theta, phi, ff.energy_density)


def sky_grid(filaments, freq, medium: Medium | None = None, *, theta_max: float = np.pi,
             max_points: int = 1 << 21):
    """A sky grid fine enough for the layout's narrowest features, for :func:`sky_map`.

    The step is a third of the resolution angle ``lambda_min / (n_T * extent)`` (extent: the
    largest distance between column ends), at most 0.5 degree, and is widened when the grid
    would exceed ``max_points``.

    Parameters
    ----------
    filaments : sequence of Filament
    freq : array_like, shape (F,)
        Band frequencies (Hz); the highest sets the resolution.
    medium : Medium, optional
    theta_max : float
        Largest polar angle (rad), up to pi.
    max_points : int
        Upper bound on T * P.

    Returns
    -------
    theta : ndarray, shape (T,)
        0 to ``theta_max`` inclusive (rad).
    phi : ndarray, shape (P,)
        Periodic azimuths 2 pi j / P (rad).
    """
    fils = as_filaments(filaments)
    freq = check_band(freq)
    medium = Medium.vacuum() if medium is None else medium
    tmax = check_scalar("theta_max", theta_max, low=0.0, low_open=True, high=np.pi, unit="rad")
    res = c / (freq[-1] * medium.n_thz * layout_extent(fils))
    step = min(res / 3, np.radians(0.5))
    span_phi = 2 * np.pi * (np.sin(tmax) if tmax < np.pi / 2 else 1.0)
    area = tmax * span_phi
    step = max(step, np.sqrt(area / max_points))
    nt = int(np.ceil(tmax / step)) + 1
    npz = max(8, int(np.ceil(span_phi / step)))
    return np.linspace(0.0, tmax, nt), 2 * np.pi * np.arange(npz) / npz
