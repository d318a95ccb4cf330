r"""Transmission of a THz field through humid air: amplitude, phase and dispersion together.

With time dependence :math:`e^{-i\omega t}` a plane wave travelling a distance R gains the
factor

.. math:: T(f, R) = \exp\!\left(i\,\frac{\omega}{c}\,n(f)\,R\right),\qquad \omega = 2\pi f,

with the complex index n of :func:`thzarray.air.refractivity.complex_index`:
:math:`|T|^2 = e^{-\alpha R}` with P.676's power attenuation coefficient :math:`\alpha`, and
the phase :math:`\omega R\,\operatorname{Re}n/c` holds P.453's non-dispersive refractivity
plus the dispersion of every line. A spectrum :math:`E(f)` becomes :math:`T(f)E(f)`, and
the field in time :math:`E(t) = 2\operatorname{Re}\int_0^\infty T E\,e^{-i\omega t}df` is
causal: nothing arrives before :math:`t = R\,n(\infty)/c`
(:func:`~thzarray.air.refractivity.high_frequency_index`); the lines ring afterwards.

:func:`line_transmission` is the same factor divided by the P.453 part
:math:`e^{i\omega n_{P.453}R/c}`, for fields that already carry that phase (the results of
:func:`thzarray.field.nearfield.field_at`, or :math:`\mathbf F e^{ikr}/r` from the far field,
:math:`k = n_{thz}\omega/c`).
"""

from __future__ import annotations

import numpy as np
from scipy.constants import c

from thzarray.air.absorption import air_conditions
from thzarray.air.hitran import LineList
from thzarray.air.refractivity import complex_index
from thzarray.base.checks import as_float_array
from thzarray.base.memory import DEFAULT_MEMORY_BUDGET

__all__ = ["air_transmission", "line_transmission"]


def _check(freq, distance, medium):
    f = as_float_array("freq", freq, low=0.0, unit="Hz")
    r = as_float_array("distance", distance, low=0.0, unit="m")
    try:
        np.broadcast_shapes(f.shape, r.shape)
    except ValueError:
        raise ValueError(f"freq and distance have shapes {f.shape} and {r.shape}; allowed: "
                         "shapes that broadcast together") from None
    air_conditions(medium)
    return f, r


def air_transmission(freq, distance, medium, lines: LineList | None = None, *,
                     memory_budget: float = DEFAULT_MEMORY_BUDGET):
    """Complex amplitude factor of a THz field after a straight path through the air.

    Parameters
    ----------
    freq : array_like
        Frequency (Hz), >= 0.
    distance : array_like
        Path length (m), >= 0, broadcastable with ``freq``.
    medium : Medium
        From :meth:`Medium.air`; the vacuum gives exp(i w R / c); a medium without air
        conditions raises ValueError.
    lines : LineList, optional
        A HITRAN-format list for the lines above 1 THz (or in place of P.676's).
    memory_budget : float
        Bytes for temporaries.

    Returns
    -------
    ndarray, complex, shape ``np.broadcast_shapes(freq.shape, distance.shape)``

    Notes
    -----
    .. math:: T = \\exp\\left(i\\frac{2\\pi f}{c} n(f) R\\right),\\qquad
              |T|^2 = e^{-\\alpha R}

    (exp(-i w t) convention; module docstring).
    """
    f, r = _check(freq, distance, medium)
    n = complex_index(f, medium, lines, memory_budget=memory_budget)
    return np.exp(1j * 2 * np.pi * f / c * n * r)


def line_transmission(freq, distance, medium, lines: LineList | None = None, *,
                      memory_budget: float = DEFAULT_MEMORY_BUDGET):
    """The transmission without the P.453 phase: lines' absorption and dispersion only.

    Parameters and shapes as for :func:`air_transmission`.

    Notes
    -----
    .. math:: T_{lines} = \\exp\\left(i\\frac{2\\pi f}{c}\\,[n(f) - n_{P.453}]\\,R\\right)

    Multiplies fields that already carry :math:`e^{i n_{P.453}\\omega R/c}`.
    """
    f, r = _check(freq, distance, medium)
    n = complex_index(f, medium, lines, memory_budget=memory_budget)
    return np.exp(1j * 2 * np.pi * f / c * (n - medium.n_thz) * r)
