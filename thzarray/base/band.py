r"""Band quadrature: how every band-averaged quantity in the package sums over frequency.

A band is sampled at increasing frequencies :math:`f_0 < \dots < f_{F-1}` (Hz). Every
band-averaged quantity (the band cone, sky maps, gains and steering, tolerances, scan fits,
receiver and detector energies, range budgets) is the trapezoid sum

.. math:: \int_{f_0}^{f_{F-1}} w(f)\,g(f)\,df \approx \sum_j \Delta f_j\, w_j\, g(f_j),
          \qquad \Delta f_0 = \tfrac{f_1 - f_0}{2},\quad
          \Delta f_j = \tfrac{f_{j+1} - f_{j-1}}{2},\quad
          \Delta f_{F-1} = \tfrac{f_{F-1} - f_{F-2}}{2},

with an optional spectral weight :math:`w_j \ge 0` (a detector response, a source spectrum).
This is the exact integral of the piecewise-linear interpolant of :math:`w g`. One frequency
alone gets the weight 1: the "band sum" is then the spectral density at that frequency.

:func:`passband_weights` is the same rule restricted to a pass band
:math:`[f_{lo}, f_{hi}]` inside the samples (the exact integral of the piecewise-linear
interpolant over the pass band); when the pass band is the whole sampled range it equals
:func:`band_weights`.
"""

from __future__ import annotations

import numpy as np

from thzarray.base.checks import as_float_array, check_scalar

__all__ = ["band_weights", "check_band", "passband_weights", "trapezoid_weights"]


def trapezoid_weights(x) -> np.ndarray:
    """Trapezoid-rule weights of 1-D increasing samples ``x`` (one sample: weight 1).

    .. math:: w_0 = (x_1 - x_0)/2,\\ w_i = (x_{i+1} - x_{i-1})/2,\\ w_{n-1} = (x_{n-1} - x_{n-2})/2
    """
    x = np.asarray(x, dtype=float)
    if x.size == 1:
        return np.ones(1)
    w = np.empty_like(x)
    w[0] = 0.5 * (x[1] - x[0])
    w[-1] = 0.5 * (x[-1] - x[-2])
    w[1:-1] = 0.5 * (x[2:] - x[:-2])
    return w


def check_band(freq, *, minimum: int = 1) -> np.ndarray:
    """Band frequencies (Hz) as a 1-D strictly increasing array of at least ``minimum``."""
    freq = np.atleast_1d(as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz"))
    if freq.ndim != 1 or freq.size < minimum or np.any(np.diff(freq) <= 0):
        what = "frequency" if minimum == 1 else f"{minimum} frequencies"
        raise ValueError(f"freq = array of shape {freq.shape}; allowed: a 1-D strictly "
                         f"increasing array of at least one {what} (Hz)".replace(
                             "at least one 2", "at least 2"))
    return freq


def _spectral(weight, shape):
    if weight is None:
        return 1.0
    w = as_float_array("spectral_weight", weight, low=0.0)
    if w.shape != shape:
        raise ValueError(f"spectral_weight has shape {w.shape}; allowed: the shape of freq "
                         f"{shape}")
    return w


def band_weights(freq, spectral_weight=None) -> np.ndarray:
    """Trapezoid weights (Hz) of the band samples times an optional spectral weight.

    Parameters
    ----------
    freq : array_like, shape (F,)
        Increasing frequencies (Hz), > 0. A single frequency gets weight 1.
    spectral_weight : array_like, shape (F,), optional
        Spectral weight, >= 0 (e.g. a detector response); default 1.

    Returns
    -------
    ndarray, shape (F,)
        :math:`\\Delta f_j w_j` (module docstring).
    """
    freq = check_band(freq)
    return trapezoid_weights(freq) * _spectral(spectral_weight, freq.shape)


def passband_weights(freq, low: float, high: float) -> np.ndarray:
    """Weights (Hz) integrating the piecewise-linear interpolant exactly over [low, high].

    Parameters
    ----------
    freq : array_like, shape (F,)
        Increasing sample frequencies (Hz), at least 2, spanning [low, high].
    low, high : float
        Pass-band edges (Hz), low < high.

    Returns
    -------
    ndarray, shape (F,)
        :math:`w_j = \\int_{low}^{high}\\Lambda_j(f)\\,df`, :math:`\\Lambda_j` the hat function
        of sample j; equal to :func:`band_weights` when [low, high] is the sampled range.
    """
    f = check_band(freq, minimum=2)
    low = check_scalar("low", low, low=0.0, unit="Hz")
    high = check_scalar("high", high, low=low, low_open=True, unit="Hz")
    if f[0] > low or f[-1] < high:
        raise ValueError(f"freq spans [{f[0]:.6g}, {f[-1]:.6g}] Hz; allowed: samples spanning the "
                         f"pass band [{low:.6g}, {high:.6g}] Hz")
    w = np.zeros_like(f)
    for j in range(f.size - 1):
        a, b = max(f[j], low), min(f[j + 1], high)
        if b <= a:
            continue
        h = f[j + 1] - f[j]
        ta, tb = (a - f[j]) / h, (b - f[j]) / h
        w[j + 1] += h * 0.5 * (tb**2 - ta**2)
        w[j] += h * ((tb - ta) - 0.5 * (tb**2 - ta**2))
    return w
