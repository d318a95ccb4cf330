r"""Compiled energies of many simulated builds (the tolerance Monte Carlo), with a numpy twin.

Private module: :func:`thzarray.array.tolerance.tolerance` draws the errors and calls it; the
tests compare the kernel with its twin.

Build s moves column n's timing, transverse position and onset; toward quadrature node j
every frequency sees the same extra delay (module docstring of
:mod:`thzarray.array.tolerance`)

.. math:: \tau_{snj} = \delta t_{sn} + \delta u_{sn} U_{nj} + \delta v_{sn} V_{nj}
          + \delta s_{sn} W_{nj},

with :math:`U, V = -(n_T/c)\,\hat e_{1,2}\cdot\hat r_j` and
:math:`W = (n_g - n_T\hat a_n\cdot\hat r_j)/c`, so its energy is

.. math:: E_s = \sum_{f,j,c} \Big|\sum_n g_{nfjc}\, e^{i\omega_f \tau_{snj}}\Big|^2 .

The kernel gives each thread one frequency and a block of nodes, passes over the columns'
fields once for 32 builds at a time (the fields of a large layout do not fit in cache), and
runs the nodes in an inner loop of plain arithmetic (sine-cosine pairs from
:func:`thzarray.base.trig.cis`) that the compiler vectorises; the twin forms every phase
with numpy.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from thzarray.base.trig import cis

__all__ = ["node_blocks", "trial_energies", "trial_energies_numpy"]


_BLOCK = 128  # most nodes per task
_BUILDS = 32  # builds that share one pass over the fields


@njit(cache=True, parallel=True)
def _trial_energies(gr, gi, omega, u, v, w, dt, du, dv, ds, partial):
    ntrial = dt.shape[0]
    nblock, ncol, nf, _, m = gr.shape
    for task in prange(nf * nblock):
        f = task // nblock
        blk = task - f * nblock
        wf = omega[f]
        # One array per component (the compiler vectorises the loop below only when the
        # accumulators it writes are separate arrays).
        acc0 = np.empty((_BUILDS, m))
        acc1 = np.empty((_BUILDS, m))
        acc2 = np.empty((_BUILDS, m))
        acc3 = np.empty((_BUILDS, m))
        for s0 in range(0, ntrial, _BUILDS):
            nb = min(ntrial, s0 + _BUILDS) - s0
            acc0[:] = 0.0
            acc1[:] = 0.0
            acc2[:] = 0.0
            acc3[:] = 0.0
            for n in range(ncol):
                un = u[blk, n]
                vn = v[blk, n]
                wn = w[blk, n]
                g0r = gr[blk, n, f, 0]
                g0i = gi[blk, n, f, 0]
                g1r = gr[blk, n, f, 1]
                g1i = gi[blk, n, f, 1]
                for b in range(nb):
                    t0 = dt[s0 + b, n]
                    eu = du[s0 + b, n]
                    ev = dv[s0 + b, n]
                    es = ds[s0 + b, n]
                    a0 = acc0[b]
                    a1 = acc1[b]
                    a2 = acc2[b]
                    a3 = acc3[b]
                    for j in range(m):  # vectorised: arithmetic only
                        cr, ci = cis(wf * (t0 + eu * un[j] + ev * vn[j] + es * wn[j]))
                        a0[j] += g0r[j] * cr - g0i[j] * ci
                        a1[j] += g0r[j] * ci + g0i[j] * cr
                        a2[j] += g1r[j] * cr - g1i[j] * ci
                        a3[j] += g1r[j] * ci + g1i[j] * cr
            for b in range(nb):
                total = 0.0
                for j in range(m):
                    total += (acc0[b, j] * acc0[b, j] + acc1[b, j] * acc1[b, j]
                              + acc2[b, j] * acc2[b, j] + acc3[b, j] * acc3[b, j])
                partial[s0 + b, task] = total


def _blocks(x, size):
    """(..., J) -> (J / size, ..., size), zero-padded: node blocks on the leading axis."""
    nblock = -(-x.shape[-1] // size)
    out = np.zeros((nblock,) + x.shape[:-1] + (size,))
    for b in range(nblock):
        part = x[..., b * size:(b + 1) * size]
        out[b, ..., :part.shape[-1]] = part
    return out


def node_blocks(g, u, v, w):
    """The fields and delays per metre rearranged for :func:`trial_energies`: real and
    imaginary parts and u, v, w in zero-padded node blocks on a leading axis. A caller that
    sums several batches of builds on the same fields makes them once."""
    g = np.asarray(g, dtype=np.complex128).transpose(0, 1, 3, 2)  # (N, F, 2, J)
    size = int(min(_BLOCK, 1 << max(0, int(g.shape[3] - 1).bit_length())))
    return (_blocks(g.real, size), _blocks(g.imag, size),
            *(_blocks(np.asarray(x, dtype=float), size) for x in (u, v, w)))


def trial_energies(g, omega, u, v, w, dt, du, dv, ds, *, blocks=None):
    """Energy of each simulated build (module docstring).

    Parameters
    ----------
    g : ndarray, complex, shape (N, F, J, 2)
        Column fields at the nodes with the designed delays applied.
    omega : ndarray, shape (F,)
        Angular frequencies (rad/s).
    u, v, w : ndarray, shape (N, J)
        Delay per metre of transverse (two directions) and onset error toward each node (s/m).
    dt, du, dv, ds : ndarray, shape (S, N)
        Each build's timing (s), transverse (m, m) and onset (m) errors.
    blocks : tuple, optional
        ``node_blocks(g, u, v, w)``, when the caller has it already.

    Returns
    -------
    ndarray, shape (S,)
        Energies in the unit of ``g`` squared.

    Notes
    -----
    Working memory: the fields once more (real and imaginary parts in node blocks).
    """
    gr, gi, ub, vb, wb = node_blocks(g, u, v, w) if blocks is None else blocks
    partial = np.empty((np.shape(dt)[0], gr.shape[2] * gr.shape[0]))
    _trial_energies(gr, gi, np.ascontiguousarray(omega, dtype=float), ub, vb, wb,
                    *(np.ascontiguousarray(x, dtype=float) for x in (dt, du, dv, ds)), partial)
    return partial.sum(axis=1)


def trial_energies_numpy(g, omega, u, v, w, dt, du, dv, ds):
    """Numpy twin of :func:`trial_energies` (same arguments and returns)."""
    tau = (dt[..., None] + du[..., None] * u + dv[..., None] * v + ds[..., None] * w)  # (S,N,J)
    phase = np.exp(1j * omega[None, None, :, None] * tau[:, :, None, :])  # (S, N, F, J)
    s = np.einsum("nfjc,snfj->sfjc", g, phase)
    return np.sum(np.abs(s) ** 2, axis=(1, 2, 3))
