"""Independent references for the radiation of a traveling line current, by scipy quad.

Nothing here calls the code under test except to read a column's parameters and profile
values. The current element at distance s along the column is

    dI = q w(s) I(w; s) exp(i w (t0 + s n_g / c)) ds   flowing along the unit vector d,

placed at r0 + s a. The far field is built from the vector potential of that current
(J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 9.8 and E = i w A_perp, secs.
9.1-9.2), the near field from the superposition of point dipoles p = i dI / w (Jackson eq.
9.18, SI in a medium of index n). Each integral is split into pieces of about one phase turn
so that quad never sees many oscillations.
"""

import numpy as np
from scipy.constants import c, epsilon_0, mu_0
from scipy.integrate import quad


def _unit(theta, phi):
    return np.array([np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi), np.cos(theta)])


def _cuts(length, turns_per_metre, extra=()):
    n = int(turns_per_metre * length / np.pi) + 2
    return np.unique(np.concatenate([np.linspace(0.0, length, n), np.asarray(extra, float)]))


def _complex_quad(fun, lo, hi, scale):
    opts = dict(epsabs=1e-13 * scale * (hi - lo), epsrel=1e-11, limit=400)
    re = quad(lambda s: fun(s).real, lo, hi, **opts)[0]
    im = quad(lambda s: fun(s).imag, lo, hi, **opts)[0]
    return re + 1j * im


def far_field_quad(fil, freq, theta, phi, medium, direction=None, n_group=None, local=None):
    """Cartesian radiation vector F = lim r e^{-ikr} E (V s) of one column by quad.

    direction: unit current direction (default the axis); n_group: the driver's group index
    (default medium.n_group); local(s): the current spectrum at s (A s; default 1).
    """
    w = 2 * np.pi * freq
    k = w * medium.n_thz / c
    ng = medium.n_group if n_group is None else n_group
    r = _unit(theta, phi)
    a, r0 = np.asarray(fil.axis), np.asarray(fil.start)
    d = a if direction is None else np.asarray(direction, float)
    current = (lambda s: 1.0) if local is None else local

    def integrand(s):
        # phase of the element: its drive time and its path difference toward r
        phase = w * (fil.delay + s * ng / c) - k * (r @ (r0 + s * a))
        return complex(fil.profile_values(s)) * current(s) * np.exp(1j * phase)

    turns = abs(w * ng / c - k * (r @ a)) + 1.0
    scale = max(abs(integrand(s)) for s in np.linspace(0, fil.length, 33))
    total = sum(_complex_quad(integrand, lo, hi, scale)
                for lo, hi in zip(*(lambda x: (x[:-1], x[1:]))(_cuts(fil.length, turns))))
    a_vec = mu_0 / (4 * np.pi) * fil.amplitude * total * d  # r e^{-ikr} A
    return 1j * w * (a_vec - (r @ a_vec) * r)


def dipole_fields(p, centre, x, freq, medium):
    """Jackson eq. 9.18 (SI, eps = n^2 eps0): E and H of a point dipole p at ``centre``."""
    w = 2 * np.pi * freq
    k = w * medium.n_thz / c
    eps = medium.n_thz**2 * epsilon_0
    rv = x - centre
    r = np.linalg.norm(rv)
    n = rv / r
    e = (k**2 * np.cross(np.cross(n, p), n) / r
         + (3 * n * (n @ p) - p) * (1 / r**3 - 1j * k / r**2)) * np.exp(1j * k * r) / (4 * np.pi * eps)
    h = w * k / (4 * np.pi) * np.cross(n, p) * np.exp(1j * k * r) / r * (1 - 1 / (1j * k * r))
    return e, h


def near_field_quad(fil, freq, x, medium, direction=None, n_group=None, local=None):
    """E (V s/m) and H (A s/m) at x of the column as a superposition of point dipoles, by quad."""
    w = 2 * np.pi * freq
    ng = medium.n_group if n_group is None else n_group
    a, r0 = np.asarray(fil.axis), np.asarray(fil.start)
    d = a if direction is None else np.asarray(direction, float)
    current = (lambda s: 1.0) if local is None else local

    def fields(s):
        amp = (fil.amplitude * complex(fil.profile_values(s)) * current(s)
               * np.exp(1j * w * (fil.delay + s * ng / c)))
        e, h = dipole_fields(1j * amp / w * d, r0 + s * a, x, freq, medium)
        return np.concatenate([e, h])

    z0 = min(max((x - r0) @ a, 0.0), fil.length)
    # the breaks of sampled (PCHIP, C1) profiles are kinks of the integrand; a sampled
    # callable's spline (C2, 1024 pieces) is smooth enough for quad without them
    few = not fil.is_uniform and fil.pieces.breaks.size <= 64
    extra = [z0] + (list(fil.pieces.breaks) if few else [])
    cuts = _cuts(fil.length, (ng + medium.n_thz) * w / c, extra)
    out = np.zeros(6, dtype=complex)
    for lo, hi in zip(cuts[:-1], cuts[1:]):
        size = max(np.abs(fields(s)).max() for s in np.linspace(lo, hi, 5))
        for comp in range(6):
            out[comp] += _complex_quad(lambda s: fields(s)[comp], lo, hi, size)
    return out[:3], out[3:]
