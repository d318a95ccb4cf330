r"""A sine-cosine pair the compiler can vectorise, for the compiled sums.

The far-field and array-factor sums spend their time on :math:`e^{i x}` for every (direction,
column) pair. The C library's ``sin``/``cos`` are scalar calls, so a loop that makes them runs
one term at a time; :func:`cis` is plain arithmetic (no calls, no branches) that LLVM turns
into SIMD instructions when it sits in an inner loop, several terms per instruction.

Method (J. F. Hart et al., Computer Approximations, Wiley 1968, ch. 4 and 6; W. J. Cody and
W. Waite, Software Manual for the Elementary Functions, Prentice-Hall 1980, ch. 8):

1. Reduce :math:`r = x - 2\pi n`, :math:`n = \lfloor x/2\pi + 1/2\rfloor`, with
   :math:`2\pi` split into three parts of 24, 24 and 53 bits (Cody-Waite) so that each product
   :math:`n\,P_k` is exact for :math:`|n| < 2^{29}` (:math:`|x|` below about 3e9 rad); then
   :math:`|r| \le \pi`.
2. Taylor series of :math:`\sin y` and :math:`\cos y` at :math:`y = r/4`,
   :math:`|y| \le \pi/4`, through :math:`y^{15}` and :math:`y^{16}`: the first omitted terms
   are below 5e-17 and 3e-18.
3. Two complex squarings give :math:`e^{ir} = (e^{iy})^4`.

Measured against numpy's ``sin``/``cos`` (tests/test_trig.py): within 2e-15 for
:math:`|x| \le 3\times10^9`. Above that the reduction loses exactness in proportion to
:math:`|x|`, as the phase itself does (its rounding is :math:`|x|\cdot 10^{-16}`); the result
stays a unit phasor to rounding.
"""

from __future__ import annotations

import numpy as np
from numba import njit

__all__ = ["cis", "cis_numpy"]

# 2 pi = _P1 + _P2 + _P3: _P1 and _P2 carry 24 bits each (float32 values), _P3 the rest
# (the 50-digit value of 2 pi minus the two, rounded to double).
_P1 = 6.2831854820251465
_P2 = -1.7484555314695172e-07
_P3 = -6.8604979977715316e-15
_INV_2PI = 0.15915494309189535

# 1/k! with alternating signs, for the series in y^2.
_S3, _S5, _S7 = -1.0 / 6.0, 1.0 / 120.0, -1.0 / 5040.0
_S9, _S11, _S13, _S15 = 1.0 / 362880.0, -1.0 / 39916800.0, 1.0 / 6227020800.0, \
    -1.0 / 1307674368000.0
_C2, _C4, _C6, _C8 = -0.5, 1.0 / 24.0, -1.0 / 720.0, 1.0 / 40320.0
_C10, _C12, _C14, _C16 = -1.0 / 3628800.0, 1.0 / 479001600.0, -1.0 / 87178291200.0, \
    1.0 / 20922789888000.0


@njit(cache=True, inline="always")
def cis(x):
    """(cos x, sin x) by branch-free arithmetic (module docstring); x in rad, finite."""
    n = np.floor(x * _INV_2PI + 0.5)
    r = ((x - n * _P1) - n * _P2) - n * _P3
    y = 0.25 * r
    y2 = y * y
    s = y * (1.0 + y2 * (_S3 + y2 * (_S5 + y2 * (_S7 + y2 * (_S9 + y2 * (
        _S11 + y2 * (_S13 + y2 * _S15)))))))
    co = 1.0 + y2 * (_C2 + y2 * (_C4 + y2 * (_C6 + y2 * (_C8 + y2 * (
        _C10 + y2 * (_C12 + y2 * (_C14 + y2 * _C16)))))))
    c2 = co * co - s * s
    s2 = 2.0 * co * s
    return c2 * c2 - s2 * s2, 2.0 * c2 * s2


def cis_numpy(x):
    """Numpy twin of :func:`cis`: the C library's cosine and sine."""
    x = np.asarray(x, dtype=float)
    return np.cos(x), np.sin(x)
