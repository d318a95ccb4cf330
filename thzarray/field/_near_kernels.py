r"""Compiled line integrals behind :mod:`thzarray.nearfield`, with a plain numpy twin.

Private module. For a field point x and a column n (start r_n, unit axis a, profile w(s)),
write d = x - r_n, z0 = d.a (axial coordinate), rho_vec = d - z0 a (rho = |rho_vec|),
u = z0 - s and R = sqrt(rho^2 + u^2). The full dipole field of the elements (Jackson eq.
9.18) reduces to three scalar integrals (see the derivation in :mod:`thzarray.nearfield`):

.. math::
    A = \int_0^L w\,e^{i\Phi}\,\alpha\,ds,\quad B = \int_0^L w\,e^{i\Phi}\,\beta\,ds,\quad
    C = \int_0^L w\,e^{i\Phi}\,\gamma\,ds,

    \tau = \frac{1}{k^2R^3} - \frac{i}{kR^2},\quad m = -\frac1R + 3\tau,\quad
    \alpha = \frac1R - \tau + \frac{u^2}{R^2} m,\quad \beta = \frac{u}{R^2} m,\quad
    \gamma = \frac{ik - 1/R}{R^2},

with :math:`\Phi(s) = k_g s + k(R(s) - |x|)` (the factor :math:`e^{ik|x|}` is restored
by the caller; :math:`R - |x|` is computed as :math:`(|q|^2 - 2x\cdot q)/(R + |x|)`, q the
source point, so that no large phase is ever rounded). Then the reduced fields are
:math:`\mathbf e = A\hat a + B\boldsymbol\rho` and
:math:`\mathbf h = C\,\boldsymbol\rho\times\hat a`.

A transverse current (unit direction :math:`\hat d \perp \hat a`) has
:math:`\hat R\cdot\hat d = \rho_d/R` with the constant :math:`\rho_d = \boldsymbol\rho\cdot\hat d`,
and :math:`\hat R\times\hat d = (\boldsymbol\rho\times\hat d + u\,\hat a\times\hat d)/R`, so

.. math::
    \mathbf e = A'\hat d + \rho_d\,(B'\boldsymbol\rho + B\hat a),\qquad
    \mathbf h = C\,\boldsymbol\rho\times\hat d + C'\,\hat a\times\hat d,

with :math:`A' = \int w e^{i\Phi}(1/R - \tau)ds`, :math:`B' = \int w e^{i\Phi} m/R^2 ds`
and :math:`C' = \int w e^{i\Phi} u\gamma\,ds`.

Quadrature (oscillation-aware, cost independent of the number of phase turns)
--------------------------------------------------------------------------------
[0, L] is cut at z0 and at the profile's breaks, and marched outward from the point
nearest to x in panels of length

.. math:: h = \min\left(c_A R_n,\ \sqrt{c_\Phi R_n^3 / (k\rho^2)}\right),

R_n the distance from x to the panel's near end: the first bound keeps the amplitude
(singular at s = z0 +- i rho) resolved, the second bounds the phase curvature
:math:`\Phi'' h^2 = k\rho^2 h^2/R^3 \le c_\Phi`. On each panel the phase is split into its
chord (linear) part and a small remainder :math:`\delta`; the smooth factor
:math:`g = w\,e^{i\delta}\,(\alpha,\beta,\gamma)` is expanded in Legendre polynomials from
its values at the P Gauss-Legendre nodes and integrated against the chord exponential
exactly (a Filon-type rule),

.. math:: \int_{-1}^{1} P_m(x)\,e^{i\theta x}dx = 2 i^m j_m(\theta),

j_m the spherical Bessel functions. For theta -> 0 the rule is Gauss-Legendre.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange
from scipy.special import roots_legendre, spherical_jn

__all__ = [
    "NODES",
    "C_AMPLITUDE",
    "C_PHASE",
    "line_fields",
    "line_fields_numpy",
    "panel_edges",
    "spherical_bessel_numpy",
]

NODES = 12
C_AMPLITUDE = 0.5
C_PHASE = 2.0
_SERIES_LIMIT = 1.0
_MILLER_EXTRA = 30


def _legendre_rule(p):
    """Nodes x_j and the matrix (2m+1) P_m(x_j) w_j / 2 of the Filon-Legendre rule."""
    x, w = roots_legendre(p)
    leg = np.empty((p, p))
    p_prev, p_cur = np.ones(p), x.copy()
    leg[0] = 1.0
    if p > 1:
        leg[1] = x
    for m in range(1, p - 1):
        p_next = ((2 * m + 1) * x * p_cur - m * p_prev) / (m + 1)
        p_prev, p_cur = p_cur, p_next
        leg[m + 1] = p_next
    scale = (2 * np.arange(p) + 1)[:, None] * w[None, :] / 2.0
    return x, np.ascontiguousarray(leg * scale)


_X, _LEG = _legendre_rule(NODES)


@njit(cache=True)
def _bisect_right(breaks, s):
    """Number of breaks <= s."""
    lo, hi = 0, breaks.shape[0]
    while lo < hi:
        mid = (lo + hi) // 2
        if breaks[mid] <= s:
            lo = mid + 1
        else:
            hi = mid
    return lo


@njit(cache=True)
def _bisect_left(breaks, s):
    """Number of breaks < s."""
    lo, hi = 0, breaks.shape[0]
    while lo < hi:
        mid = (lo + hi) // 2
        if breaks[mid] < s:
            lo = mid + 1
        else:
            hi = mid
    return lo


@njit(cache=True)
def _next_edge(s, direction, s_far, breaks, k, rho, z0, c_amp, c_phase):
    """Far end of the panel that starts at s and marches away from z0."""
    u = z0 - s
    r_near = math.sqrt(rho * rho + u * u)
    h = c_amp * r_near
    if rho > 0.0:
        h = min(h, math.sqrt(c_phase * r_near / k) * r_near / rho)
    if direction > 0:
        s_next = min(s + h, s_far)
        j = _bisect_right(breaks, s)
        if j < breaks.shape[0] and breaks[j] < s_next:
            s_next = breaks[j]
    else:
        s_next = max(s - h, s_far)
        j = _bisect_left(breaks, s) - 1
        if j >= 0 and breaks[j] > s_next:
            s_next = breaks[j]
    return s_next


@njit(cache=True)
def _bessel(theta, p, out):
    """Spherical Bessel j_m(theta), m = 0..p-1 (series, Miller or upward recurrence)."""
    x = abs(theta)
    if x <= _SERIES_LIMIT:
        lead = 1.0
        for m in range(p):
            term = lead
            acc = lead
            for kk in range(1, 14):
                term *= -0.5 * x * x / (kk * (2 * m + 2 * kk + 1))
                acc += term
            out[m] = acc
            lead *= x / (2 * m + 3)
    elif x < p:
        top = p + _MILLER_EXTRA + int(x)
        j_hi = 0.0
        j_cur = 1e-100
        for m in range(top, 0, -1):
            j_lo = (2 * m + 1) / x * j_cur - j_hi
            j_hi = j_cur
            j_cur = j_lo
            if m - 1 < p:
                out[m - 1] = j_cur
        j0 = math.sin(x) / x
        j1 = math.sin(x) / (x * x) - math.cos(x) / x
        scale = j0 / out[0] if abs(j0) > abs(j1) else j1 / out[1]
        for m in range(p):
            out[m] *= scale
    else:
        out[0] = math.sin(x) / x
        if p > 1:
            out[1] = math.sin(x) / (x * x) - math.cos(x) / x
        for m in range(1, p - 1):
            out[m + 1] = (2 * m + 1) / x * out[m] - out[m - 1]
    if theta < 0.0:
        for m in range(1, p, 2):
            out[m] = -out[m]


@njit(cache=True)
def _rel_phase(s, k, kg, rho, z0, xnorm, c_rr, c_ra, c_xr, c_xa):
    """Phase kg s + k (R - |x|) and R at the source point s."""
    u = z0 - s
    r = math.sqrt(rho * rho + u * u)
    num = c_rr + 2.0 * s * c_ra + s * s - 2.0 * c_xr - 2.0 * s * c_xa
    return kg * s + k * num / (r + xnorm), r


@njit(cache=True)
def _panel(sa, sb, coef, s_piece, k, kg, rho, z0, xnorm, c_rr, c_ra, c_xr, c_xa, nodes, leg,
           jb, transverse, acc):
    """Add the panel [sa, sb]'s contributions to A, B, C (acc[0:3]) of an axial current, or
    to A', B', C, B, C' (acc[0:5]) of a transverse one."""
    p = nodes.shape[0]
    half = 0.5 * (sb - sa)
    mid = 0.5 * (sa + sb)
    phi_a, _ = _rel_phase(sa, k, kg, rho, z0, xnorm, c_rr, c_ra, c_xr, c_xa)
    phi_b, _ = _rel_phase(sb, k, kg, rho, z0, xnorm, c_rr, c_ra, c_xr, c_xa)
    theta = 0.5 * (phi_b - phi_a)
    phi_m = 0.5 * (phi_a + phi_b)
    _bessel(theta, p, jb)
    sum_a = 0.0j
    sum_b = 0.0j
    sum_c = 0.0j
    sum_d = 0.0j
    sum_e = 0.0j
    for j in range(p):
        s = mid + half * nodes[j]
        phi, r = _rel_phase(s, k, kg, rho, z0, xnorm, c_rr, c_ra, c_xr, c_xa)
        delta = phi - phi_m - theta * nodes[j]
        t = s - s_piece
        prof = coef[0] + t * (coef[1] + t * (coef[2] + t * coef[3]))
        # Filon weight: sum_m (2m+1) P_m(x_j) w_j / 2 * 2 i^m j_m(theta)
        wr = 0.0
        wi = 0.0
        for m in range(0, p, 4):
            wr += leg[m, j] * jb[m]
        for m in range(1, p, 4):
            wi += leg[m, j] * jb[m]
        for m in range(2, p, 4):
            wr -= leg[m, j] * jb[m]
        for m in range(3, p, 4):
            wi -= leg[m, j] * jb[m]
        weight = 2.0 * complex(wr, wi) * prof * complex(math.cos(delta), math.sin(delta))
        u = z0 - s
        q1 = 1.0 / r
        q2 = q1 / (k * r)
        q3 = q2 / (k * r)
        tau = complex(q3, -q2)
        mm = -q1 + 3.0 * tau
        inv_r2 = q1 * q1
        beta = u * inv_r2 * mm
        gamma = complex(-q1 * inv_r2, k * inv_r2)
        if transverse:
            sum_a += weight * (q1 - tau)
            sum_b += weight * (inv_r2 * mm)
            sum_d += weight * beta
            sum_e += weight * (u * gamma)
        else:
            alpha = q1 - tau + u * u * inv_r2 * mm
            sum_a += weight * alpha
            sum_b += weight * beta
        sum_c += weight * gamma
    phase = half * complex(math.cos(phi_m), math.sin(phi_m))
    acc[0] += phase * sum_a
    acc[1] += phase * sum_b
    acc[2] += phase * sum_c
    if transverse:
        acc[3] += phase * sum_d
        acc[4] += phase * sum_e


@njit(cache=True)
def _column(x, k, kg, start, axis, breaks, coefs, nodes, leg, c_amp, c_phase, jb, transverse,
            acc):
    """A, B, C (acc[0:3]; transverse: A', B', C, B, C' in acc[0:5]) of one column at x, and
    rho_vec (acc[5:8] real)."""
    length = breaks[breaks.shape[0] - 1]
    dx = x[0] - start[0]
    dy = x[1] - start[1]
    dz = x[2] - start[2]
    z0 = dx * axis[0] + dy * axis[1] + dz * axis[2]
    rx = dx - z0 * axis[0]
    ry = dy - z0 * axis[1]
    rz = dz - z0 * axis[2]
    rho = math.sqrt(rx * rx + ry * ry + rz * rz)
    xnorm = math.sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2])
    c_rr = start[0] * start[0] + start[1] * start[1] + start[2] * start[2]
    c_ra = start[0] * axis[0] + start[1] * axis[1] + start[2] * axis[2]
    c_xr = x[0] * start[0] + x[1] * start[1] + x[2] * start[2]
    c_xa = x[0] * axis[0] + x[1] * axis[1] + x[2] * axis[2]
    for j in range(5):
        acc[j] = 0.0
    split = min(max(z0, 0.0), length)
    for part in range(2):
        direction = 1.0 if part == 0 else -1.0
        s_far = length if part == 0 else 0.0
        s = split
        while (s_far - s) * direction > 0.0:
            s_next = _next_edge(s, direction, s_far, breaks, k, rho, z0, c_amp, c_phase)
            sa = min(s, s_next)
            sb = max(s, s_next)
            piece = min(max(_bisect_right(breaks, 0.5 * (sa + sb)) - 1, 0), coefs.shape[0] - 1)
            _panel(sa, sb, coefs[piece], breaks[piece], k, kg, rho, z0, xnorm, c_rr, c_ra, c_xr,
                   c_xa, nodes, leg, jb, transverse, acc)
            s = s_next
    acc[5] = rx
    acc[6] = ry
    acc[7] = rz


@njit(cache=True, parallel=True)
def _line_fields(freq, points, start, axis, current, delay, amplitude, breaks, coefs, brk_off,
                 coef_off, n_group, n_thz, nodes, leg, c_amp, c_phase, out_e, out_h):
    m = freq.shape[0]
    nf = start.shape[0]
    p = nodes.shape[0]
    two_pi_over_c = 2.0 * np.pi / 299792458.0
    for i in prange(m):
        k = two_pi_over_c * freq[i] * n_thz
        wc = two_pi_over_c * freq[i]
        w = 2.0 * np.pi * freq[i]
        jb = np.empty(p)
        acc = np.empty(8, dtype=np.complex128)
        e0 = 0.0j
        e1 = 0.0j
        e2 = 0.0j
        h0 = 0.0j
        h1 = 0.0j
        h2 = 0.0j
        for n in range(nf):
            br = breaks[brk_off[n]:brk_off[n + 1]]
            cf = coefs[coef_off[n]:coef_off[n + 1]]
            ax = axis[n, 0]
            ay = axis[n, 1]
            az = axis[n, 2]
            dx = current[n, 0]
            dy = current[n, 1]
            dz = current[n, 2]
            transverse = dx != ax or dy != ay or dz != az
            kg = wc * n_group[n]
            _column(points[i], k, kg, start[n], axis[n], br, cf, nodes, leg, c_amp, c_phase,
                    jb, transverse, acc)
            q = amplitude[n] * complex(math.cos(w * delay[n]), math.sin(w * delay[n]))
            a_int = q * acc[0]
            b_int = q * acc[1]
            c_int = q * acc[2]
            rx = acc[5].real
            ry = acc[6].real
            rz = acc[7].real
            if transverse:
                rho_d = rx * dx + ry * dy + rz * dz
                b2 = rho_d * q * acc[3]
                b_int *= rho_d
                c2 = q * acc[4]
                e0 += a_int * dx + b_int * rx + b2 * ax
                e1 += a_int * dy + b_int * ry + b2 * ay
                e2 += a_int * dz + b_int * rz + b2 * az
                h0 += c_int * (ry * dz - rz * dy) + c2 * (ay * dz - az * dy)
                h1 += c_int * (rz * dx - rx * dz) + c2 * (az * dx - ax * dz)
                h2 += c_int * (rx * dy - ry * dx) + c2 * (ax * dy - ay * dx)
            else:
                e0 += a_int * ax + b_int * rx
                e1 += a_int * ay + b_int * ry
                e2 += a_int * az + b_int * rz
                h0 += c_int * (ry * az - rz * ay)
                h1 += c_int * (rz * ax - rx * az)
                h2 += c_int * (rx * ay - ry * ax)
        out_e[i, 0] = e0
        out_e[i, 1] = e1
        out_e[i, 2] = e2
        out_h[i, 0] = h0
        out_h[i, 1] = h1
        out_h[i, 2] = h2


def line_fields(freq, points, start, axis, current, delay, amplitude, breaks, coefs, brk_off,
                coef_off, n_group, n_thz):
    """Reduced fields e, h of all columns at M (frequency, point) pairs (compiled).

    Parameters
    ----------
    freq : ndarray, shape (M,)
        Frequency (Hz) of each pair.
    points : ndarray, shape (M, 3)
        Field points (m).
    start, axis, current : ndarray, shape (N, 3)
        Column starts (m), unit axes and unit current directions (equal to the axis, or
        perpendicular to it).
    delay, amplitude, n_group : ndarray, shape (N,)
        Delays (s), amplitudes and group indices.
    breaks, coefs : ndarray
        Concatenated profile breaks (m) and ascending cubic coefficients, (B,) and (P, 4),
        real or complex.
    brk_off, coef_off : ndarray of int64, shape (N + 1,)
        Offsets of each column's breaks and pieces.
    n_thz : float
        THz phase index of the medium.

    Returns
    -------
    (ndarray, ndarray), complex, shape (M, 3)
        ``sum_n q_n e^{i w t_n} (A a + B rho)`` (1/m) and ``sum_n q_n e^{i w t_n} C rho x a``
        (1/m) for axial currents, the forms of the module docstring for transverse ones,
        without the factor ``e^{ik|x|}``.
    """
    m = freq.shape[0]
    out_e = np.empty((m, 3), dtype=np.complex128)
    out_h = np.empty((m, 3), dtype=np.complex128)
    n_group = np.ascontiguousarray(np.broadcast_to(np.asarray(n_group, dtype=float),
                                                   (start.shape[0],)))
    _line_fields(freq, points, start, axis, current, delay, amplitude, breaks, coefs, brk_off,
                 coef_off, n_group, float(n_thz), _X, _LEG, C_AMPLITUDE, C_PHASE, out_e, out_h)
    return out_e, out_h


# --- numpy twin --------------------------------------------------------------------------

def spherical_bessel_numpy(theta, p):
    """j_m(theta) for m = 0..p-1 from scipy, shape theta.shape + (p,)."""
    theta = np.asarray(theta, dtype=float)
    return spherical_jn(np.arange(p), theta[..., None])


def panel_edges(z0, rho, k, breaks):
    """Sorted panel edges on [0, L] of the rule described in the module docstring."""
    length = breaks[-1]
    split = min(max(z0, 0.0), length)
    edges = [split]
    for direction, s_far in ((1.0, length), (-1.0, 0.0)):
        s = split
        while (s_far - s) * direction > 0.0:
            s = _next_edge.py_func(s, direction, s_far, breaks, k, rho, z0, C_AMPLITUDE, C_PHASE)
            edges.append(s)
    return np.unique(np.asarray(edges))


def _column_numpy(x, k, kg, start, axis, breaks, coefs, transverse=False):
    d = x - start
    z0 = float(d @ axis)
    rho_vec = d - z0 * axis
    rho = float(np.linalg.norm(rho_vec))
    xnorm = float(np.linalg.norm(x))
    edges = panel_edges(z0, rho, k, breaks)
    sa, sb = edges[:-1], edges[1:]
    half, mid = 0.5 * (sb - sa), 0.5 * (sa + sb)

    def rel_phase(s):
        q = start[None, :] + s[..., None] * axis[None, :]
        r = np.sqrt(rho**2 + (z0 - s) ** 2)
        return kg * s + k * (np.sum(q * q, -1) - 2 * q @ x) / (r + xnorm), r

    phi_a, _ = rel_phase(sa)
    phi_b, _ = rel_phase(sb)
    theta = 0.5 * (phi_b - phi_a)
    phi_m = 0.5 * (phi_a + phi_b)
    s = mid[:, None] + half[:, None] * _X[None, :]
    phi, r = rel_phase(s)
    delta = phi - phi_m[:, None] - theta[:, None] * _X[None, :]
    piece = np.clip(np.searchsorted(breaks, mid, side="right") - 1, 0, coefs.shape[0] - 1)
    t = s - breaks[piece][:, None]
    c = coefs[piece]
    prof = c[:, 0:1] + t * (c[:, 1:2] + t * (c[:, 2:3] + t * c[:, 3:4]))
    jb = spherical_bessel_numpy(theta, NODES)
    i_pow = 1j ** np.arange(NODES)
    weights = 2 * (jb * i_pow[None, :]) @ _LEG
    u = z0 - s
    tau = 1 / (k**2 * r**3) - 1j / (k * r**2)
    mm = -1 / r + 3 * tau
    alpha = 1 / r - tau + u**2 / r**2 * mm
    beta = u / r**2 * mm
    gamma = (1j * k - 1 / r) / r**2
    g = weights * prof * np.exp(1j * delta)
    scale = half * np.exp(1j * phi_m)
    if transverse:
        funcs = (1 / r - tau, mm / r**2, gamma, beta, u * gamma)
    else:
        funcs = (alpha, beta, gamma)
    return tuple(np.sum(scale * np.sum(g * f, axis=1)) for f in funcs) + (rho_vec,)


def line_fields_numpy(freq, points, start, axis, current, delay, amplitude, breaks, coefs,
                      brk_off, coef_off, n_group, n_thz):
    """Numpy twin of :func:`line_fields` (same arguments and returns; scipy Bessel functions)."""
    m = freq.shape[0]
    out_e = np.zeros((m, 3), dtype=complex)
    out_h = np.zeros((m, 3), dtype=complex)
    c = 299792458.0
    n_group = np.broadcast_to(np.asarray(n_group, dtype=float), (start.shape[0],))
    for i in range(m):
        w = 2 * np.pi * freq[i]
        k = w * n_thz / c
        for n in range(start.shape[0]):
            kg = w * n_group[n] / c
            br = breaks[brk_off[n]:brk_off[n + 1]]
            cf = coefs[coef_off[n]:coef_off[n + 1]]
            q = amplitude[n] * np.exp(1j * w * delay[n])
            a, d = axis[n], current[n]
            if np.array_equal(a, d):
                a_int, b_int, c_int, rho_vec = _column_numpy(points[i], k, kg, start[n], a, br,
                                                             cf)
                out_e[i] += q * (a_int * a + b_int * rho_vec)
                out_h[i] += q * c_int * np.cross(rho_vec, a)
                continue
            a1, b1, c_int, b2, c2, rho_vec = _column_numpy(points[i], k, kg, start[n], a, br, cf,
                                                           transverse=True)
            rho_d = rho_vec @ d
            out_e[i] += q * (a1 * d + rho_d * (b1 * rho_vec + b2 * a))
            out_h[i] += q * (c_int * np.cross(rho_vec, d) + c2 * np.cross(a, d))
    return out_e, out_h
