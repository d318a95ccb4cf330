r"""The complex line shape shared by every absorption line: absorption and dispersion at once.

A line at centre :math:`f_0` (Hz) with half width :math:`\gamma` (Hz, HWHM), strength
:math:`S` (Hz) and dimensionless interference (line-mixing) factor :math:`\delta` adds to
the complex refractive index of air

.. math:: \Delta n(f) = S\,\frac{f}{f_0}\left[\frac{1 - i\delta}{f_0 - f - i\gamma}
          - \frac{1 + i\delta}{f_0 + f + i\gamma}\right],

the complex form of the van Vleck-Weisskopf shape that H. J. Liebe's millimetre-wave
propagation model writes for every line (H. J. Liebe, Int. J. Infrared Millim. Waves 10,
631 (1989); H. J. Liebe, G. A. Hufford, M. G. Cotton, AGARD CP-542 (1993)). Its imaginary
part is exactly the shape :math:`F_i` of ITU-R P.676-12 Annex 1, eq. (5):

.. math:: \operatorname{Im}\Delta n = S\,\frac{f}{f_0}\left[
          \frac{\gamma - \delta(f_0 - f)}{(f_0 - f)^2 + \gamma^2}
          + \frac{\gamma - \delta(f_0 + f)}{(f_0 + f)^2 + \gamma^2}\right],

and its real part is the line's dispersion, zero at :math:`f = 0` (the static part of every
line belongs to the non-dispersive refractivity, ITU-R P.453) and
:math:`-2S/f_0` far above the line.

Conventions: time dependence :math:`e^{-i\omega t}`, a wave :math:`e^{i(n\omega z/c - \omega t)}`,
so :math:`\operatorname{Im} n > 0` absorbs (power coefficient
:math:`\alpha = 2\omega\operatorname{Im}n/c`). Both poles, :math:`f = f_0 - i\gamma` and
:math:`f = -f_0 - i\gamma`, lie in the lower half plane and
:math:`\Delta n(-f) = \Delta n(f)^*`: the response is causal and obeys the Kramers-Kronig
relations with :math:`\Delta n(\infty) = -2S/f_0`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thzarray.base.memory import DEFAULT_MEMORY_BUDGET, chunk_points

__all__ = ["Lines", "line_index", "line_index_limit"]

# Temporary bytes per (frequency, line) pair: a few complex arrays of that size.
_BYTES_PER_PAIR = 96


@dataclass(frozen=True, eq=False)
class Lines:
    """Lines at given air conditions: centre, strength, half width, interference.

    Attributes
    ----------
    centre : ndarray, shape (L,)
        Line centre (Hz), pressure shift included, > 0.
    strength : ndarray, shape (L,)
        Strength S (Hz): the line adds :math:`S F(f)` to the index, F in 1/Hz.
    width : ndarray, shape (L,)
        Half width at half maximum (Hz), > 0.
    mixing : ndarray, shape (L,)
        Dimensionless interference factor (zero for isolated lines).
    """

    centre: np.ndarray
    strength: np.ndarray
    width: np.ndarray
    mixing: np.ndarray

    def __post_init__(self):
        arrays = [np.atleast_1d(np.asarray(getattr(self, k), dtype=float))
                  for k in ("centre", "strength", "width", "mixing")]
        shape = arrays[0].shape
        if any(a.shape != shape or a.ndim != 1 for a in arrays):
            raise ValueError(f"lines: centre, strength, width, mixing have shapes "
                             f"{[a.shape for a in arrays]}; allowed: four 1-D arrays of one length")
        if not all(np.isfinite(a).all() for a in arrays):
            raise ValueError("lines: a non-finite value; allowed: finite numbers")
        if np.any(arrays[0] <= 0) or np.any(arrays[2] <= 0):
            raise ValueError("lines: a centre or width <= 0; allowed: centre > 0 Hz and "
                             "width > 0 Hz")
        for k, a in zip(("centre", "strength", "width", "mixing"), arrays):
            a.setflags(write=False)
            object.__setattr__(self, k, a)

    @property
    def size(self) -> int:
        return self.centre.size

    def join(self, other: "Lines") -> "Lines":
        """Both sets of lines together."""
        return Lines(*(np.concatenate([getattr(self, k), getattr(other, k)])
                       for k in ("centre", "strength", "width", "mixing")))


def line_index(freq, lines: Lines, *, memory_budget: float = DEFAULT_MEMORY_BUDGET):
    """Complex index contribution of lines at real frequencies (dimensionless).

    Parameters
    ----------
    freq : array_like
        Frequency (Hz), any shape, >= 0.
    lines : Lines
    memory_budget : float
        Bytes for temporaries: frequencies are processed in chunks that fit.

    Returns
    -------
    ndarray, complex, shape of ``freq``

    Notes
    -----
    .. math:: \\Delta n = \\sum_i S_i\\frac{f}{f_i}\\left[\\frac{1 - i\\delta_i}{f_i - f - i\\gamma_i}
              - \\frac{1 + i\\delta_i}{f_i + f + i\\gamma_i}\\right]

    (Liebe 1989; module docstring).
    """
    f = np.asarray(freq, dtype=float)
    flat = f.reshape(-1)
    out = np.zeros(flat.shape, dtype=complex)
    if lines.size == 0:
        return out.reshape(f.shape)
    chunk = max(1, chunk_points(memory_budget, out.nbytes, _BYTES_PER_PAIR * lines.size,
                                minimum=1))
    f0, s, g = lines.centre, lines.strength, lines.width
    lo, hi = 1 - 1j * lines.mixing, 1 + 1j * lines.mixing
    for i0 in range(0, flat.size, chunk):
        x = flat[i0:i0 + chunk, None]
        term = s / f0 * (lo / (f0 - x - 1j * g) - hi / (f0 + x + 1j * g))
        out[i0:i0 + chunk] = x[:, 0] * term.sum(axis=1)
    return out.reshape(f.shape)


def line_index_limit(lines: Lines) -> float:
    """The lines' contribution to the index far above every line (dimensionless).

    .. math:: \\Delta n(\\infty) = -\\sum_i 2 S_i / f_i
    """
    return float(-2.0 * np.sum(lines.strength / lines.centre))
