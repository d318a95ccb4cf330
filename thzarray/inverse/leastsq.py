r"""The least-squares engine behind the scan fits: errors, correlations, and plain words
when the data cannot constrain a parameter.

Uncertainties
-------------
scipy.optimize.least_squares minimises :math:`\sum_i [(S_i - y_i)/\sigma_i]^2`. The
covariance is :math:`(J^T J)^{-1}` of the weighted residuals' Jacobian (central differences
at the solution), multiplied by :math:`\chi^2/\mathrm{dof}` when no ``sigma`` is given (the
noise is then estimated from the scatter; ``chi2`` is the plain sum of squared residuals).

When the data cannot constrain a parameter
------------------------------------------
A parameter is flagged unconstrained when it does not change the model, when the Jacobian's
column-normalised condition number exceeds ``1e6`` (near-singular covariance; the message
names the parameters of the near-null direction), or when its 1-sigma error exceeds a
scale of its own: :math:`\max(|p|, s_p)` with :math:`s_p` = 1e-4 for ``mismatch`` (air's
:math:`|n_g - n_T|` is below it), L for ``start``, one period of the mean frequency for
``timing_offset``, 0 for ``length``, ``amplitude`` and ``spacing``, and the amplitude for
``background``. The result is then returned with ``ok = False``, ``constrained[name] =
False`` and a message saying what to fix; ``strict=True`` raises ``ValueError`` with the
same message instead. Pairs correlated beyond +-0.999 get a note (not a flag): the linearised
errors of such a valley may understate the range of values the data allow.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import least_squares

from thzarray.base.checks import as_float_array, check_scalar

__all__ = ["FitResult", "Problem", "check_data", "parameters", "solve"]

_CONDITION_LIMIT = 1e6
_CLOSE_CORRELATION = 0.999
_NO_EFFECT = 1e-10


@dataclass(frozen=True, eq=False)
class FitResult:
    """Best-fit parameters of a scan, their uncertainties and the fit's diagnostics.

    Attributes
    ----------
    kind : str
        ``"far-field scan"``, ``"finite-distance scan"`` or ``"delay scan"``.
    names : tuple of str
        The fitted parameters, in the order of ``correlation``.
    params, errors : dict
        Best-fit values and 1-sigma uncertainties by name (SI units, as the caller states); an
        error is ``inf`` for a parameter that does not change the model.
    fixed : dict
        Parameters held fixed, with their values.
    correlation, covariance : ndarray, shape (P, P)
        Correlation and covariance matrices in the order of ``names``.
    x : ndarray, shape (N,)
        The scan coordinate: angle (rad), or delay (s) for a delay scan.
    data, model, residuals : ndarray, shape (N,)
        Measured signal, best-fit model, and data minus model.
    sigma : ndarray, shape (N,), or None
        Measurement uncertainties as given.
    chi2 : float
        Sum of squared weighted residuals (plain residuals when ``sigma`` is None).
    dof : int
        N minus the number of fitted parameters.
    errors_scaled : bool
        True when the errors were scaled by chi2/dof (no ``sigma`` given).
    constrained : dict
        Whether the data constrain each fitted parameter.
    messages : tuple of str
        Why a parameter is not constrained and what to do, then notes (starting "note:")
        on pairs correlated beyond +-0.999 and on what the fit assumed; empty when all is
        well.
    assumptions : dict
        What the model assumed that the data do not fit, in words by name (e.g. the source
        and detector spectra of a band).
    predicted : dict
        Independent predictions of fitted parameters to compare with ``params`` (e.g. the
        mismatch of linear air and with the plasma's share), by name.
    """

    kind: str
    names: tuple
    params: dict
    errors: dict
    fixed: dict
    correlation: np.ndarray
    covariance: np.ndarray
    x: np.ndarray
    data: np.ndarray
    model: np.ndarray
    residuals: np.ndarray
    sigma: np.ndarray | None
    chi2: float
    dof: int
    errors_scaled: bool
    constrained: dict
    messages: tuple
    _evaluate: object = field(default=None, repr=False, compare=False)
    assumptions: dict = field(default_factory=dict)
    predicted: dict = field(default_factory=dict)

    @property
    def ok(self) -> bool:
        """True when every fitted parameter is constrained by the data."""
        return all(self.constrained.values())

    @property
    def chi2_dof(self) -> float:
        """chi2 / dof (the residual variance when no sigma was given)."""
        return self.chi2 / self.dof

    @property
    def normalized_residuals(self) -> np.ndarray:
        """Residuals over sigma, or over the estimated noise sqrt(chi2/dof) without sigma."""
        scale = np.sqrt(self.chi2_dof) if self.sigma is None else self.sigma
        return self.residuals / scale

    def evaluate(self, x, **extra):
        """The best-fit model at other scan coordinates ``x`` (same kind as ``self.x``).

        A delay scan also needs ``angle=`` (rad), broadcast with ``x``.
        """
        return self._evaluate(np.asarray(x, dtype=float), **extra)

    def residual_plot_data(self) -> dict:
        """Arrays for a residual plot: x, data, model, residuals, normalized residuals, sigma."""
        return dict(x=self.x, data=self.data, model=self.model, residuals=self.residuals,
                    normalized_residuals=self.normalized_residuals, sigma=self.sigma)


@dataclass(frozen=True)
class Problem:
    names: tuple
    start: np.ndarray
    scale: np.ndarray
    lower: np.ndarray
    upper: np.ndarray


def _central_jacobian(fun, u, lower, upper):
    """Central-difference Jacobian in scaled variables (one-sided next to a bound)."""
    columns = []
    for i in range(u.size):
        h = 1e-5 * max(1.0, abs(u[i]))
        up, dn = u.copy(), u.copy()
        up[i] = min(u[i] + h, upper[i])
        dn[i] = max(u[i] - h, lower[i])
        columns.append((fun(up) - fun(dn)) / (up[i] - dn[i]))
    return np.stack(columns, axis=-1)


def _diagnose(jac, names, values, errors, corr, own_scale, units):
    """Flags and messages for parameters the data cannot constrain, and close correlations."""
    constrained = {n: True for n in names}
    messages = []
    norms = np.linalg.norm(jac, axis=0)
    dead = norms <= _NO_EFFECT * max(norms.max(), np.finfo(float).tiny)
    for i in np.flatnonzero(dead):
        constrained[names[i]] = False
        messages.append(f"{names[i]}: changing it does not change the model over these data; "
                        f"fix it (fixed={{'{names[i]}': value}}) or extend the scan")
    live = np.flatnonzero(~dead)
    if live.size:
        s, vt = np.linalg.svd(jac[:, live] / norms[live], full_matrices=False)[1:]
        cond = s[0] / s[-1] if s[-1] > 0 else np.inf
        if cond > _CONDITION_LIMIT:
            null = vt[-1]
            involved = [names[live[j]] for j in np.flatnonzero(np.abs(null) > 0.3)]
            for n in involved:
                constrained[n] = False
            messages.append(f"{', '.join(involved)}: the covariance is near-singular "
                            f"(condition number {cond:.3g} > {_CONDITION_LIMIT:g}): these data "
                            "constrain only a combination of them; fix one or add data")
    for n in names:
        limit = max(abs(values[n]), own_scale.get(n, 0.0))
        if constrained[n] and not errors[n] <= limit:
            constrained[n] = False
            messages.append(f"{n}: 1-sigma error {errors[n]:.3g} {units.get(n, '')} exceeds "
                            f"{limit:.3g} {units.get(n, '')}; the data do not constrain it; fix it "
                            f"(fixed={{'{n}': value}}) or add data")
    for i, j in zip(*np.triu_indices(len(names), 1)):
        if constrained[names[i]] and constrained[names[j]] and abs(corr[i, j]) > _CLOSE_CORRELATION:
            messages.append(f"note: {names[i]} and {names[j]} are correlated at "
                            f"{corr[i, j]:.4f}; the data constrain mostly a combination and "
                            "the linearised errors may understate the range; consider fixing "
                            "one")
    return constrained, tuple(messages)


def solve(kind, problem: Problem, model, data, sigma, fixed, x, evaluate, own_scale, strict,
          search=None, units=None, *, notes=(), assumptions=None, predicted=None):
    """Run least_squares on scaled variables and build the FitResult.

    ``search = (search_model, factor, i)``: the same curves with parameter i multiplied by
    ``factor(p)``; the iterations use it (cheaper), the final point and errors ``model``.
    ``notes`` (strings starting "note:") are appended to the messages; ``assumptions`` and
    ``predicted`` are stored on the result as given.
    """
    # Without sigma the residuals are weighted by one over the data's size: the solver's
    # tolerances then do not depend on the signal's unit (the covariance below is
    # invariant to that constant).
    weight = 1.0 / sigma if sigma is not None else 1.0 / max(float(np.max(np.abs(data))),
                                                               np.finfo(float).tiny)
    lo, hi = problem.lower / problem.scale, problem.upper / problem.scale

    def residual(u):
        return (model(u * problem.scale) - data) * weight

    u0 = np.clip(problem.start / problem.scale, lo, hi)
    if search is None:
        u = _minimise(residual, u0, lo, hi)
    else:
        search_model, factor, i = search
        scale = problem.scale.copy()
        scale[i] *= factor(problem.start)

        def search_residual(v):
            return (search_model(v * scale) - data) * weight

        p = _minimise(search_residual, u0, lo, hi) * scale
        p[i] /= factor(p)
        u = np.clip(p / problem.scale, lo, hi)
    jac = _central_jacobian(residual, u, lo, hi)
    best = model(u * problem.scale)
    resid = data - best
    chi2_weighted = float(np.sum((resid * weight) ** 2))
    chi2 = chi2_weighted if sigma is not None else float(np.sum(resid**2))
    dof = data.size - len(problem.names)
    s, vt = np.linalg.svd(jac, full_matrices=False)[1:]
    with np.errstate(divide="ignore"):
        inv_s2 = np.where(s > s[0] * 1e-15, 1.0 / s**2, np.inf)
    cov_u = (vt.T * inv_s2) @ vt if np.all(np.isfinite(inv_s2)) else _cov_with_null(jac)
    if sigma is None:
        cov_u = cov_u * chi2_weighted / dof
    cov = cov_u * np.outer(problem.scale, problem.scale)
    err = np.sqrt(np.abs(np.diag(cov)))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(err, err)
    values = dict(zip(problem.names, (float(v) for v in u * problem.scale)))
    errors = dict(zip(problem.names, (float(v) for v in err)))
    constrained, messages = _diagnose(jac, problem.names, values, errors, corr,
                                      own_scale(values), units or {})
    if strict and not all(constrained.values()):
        raise ValueError("; ".join(m for m in messages if not m.startswith("note:")))
    return FitResult(kind, problem.names, values, errors, dict(fixed), corr, cov, x, data, best,
                     resid, sigma, chi2, dof, sigma is None, constrained,
                     messages + tuple(notes),
                     lambda xx, **extra: evaluate(values, xx, **extra),
                     dict(assumptions or {}), dict(predicted or {}))


def _minimise(residual, u0, lo, hi):
    return least_squares(residual, u0, bounds=(lo, hi), method="trf", x_scale=1.0,
                         xtol=1e-12, ftol=1e-12, gtol=1e-12, max_nfev=2000).x


def _cov_with_null(jac):
    """Covariance when some directions are not constrained: inf on those parameters."""
    norms = np.linalg.norm(jac, axis=0)
    dead = norms <= _NO_EFFECT * max(norms.max(), np.finfo(float).tiny)
    cov = np.full((jac.shape[1], jac.shape[1]), np.nan)
    live = np.flatnonzero(~dead)
    if live.size:
        cov[np.ix_(live, live)] = np.linalg.pinv(jac[:, live].T @ jac[:, live])
    cov[dead, dead] = np.inf
    return cov


def parameters(defaults, bounds, scales, fixed, initial, allowed):
    """Split defaults into free and fixed parameters and build the scaled problem."""
    fixed = {} if fixed is None else dict(fixed)
    initial = {} if initial is None else dict(initial)
    for name in list(fixed) + list(initial):
        if name not in allowed:
            raise ValueError(f"parameter {name!r} is not allowed here; allowed: "
                             f"{', '.join(allowed)}")
    values = dict(defaults)
    values.update({k: check_scalar(f"initial[{k!r}]", v) for k, v in initial.items()})
    values.update({k: check_scalar(f"fixed[{k!r}]", v) for k, v in fixed.items()})
    names = tuple(n for n in allowed if n not in fixed)
    if not names:
        raise ValueError("fixed = every parameter; allowed: at least one free parameter")
    return Problem(names,
                    np.array([values[n] for n in names]),
                    np.array([scales[n] for n in names]),
                    np.array([bounds[n][0] for n in names]),
                    np.array([bounds[n][1] for n in names])), fixed, values


# Bounds on measured numbers (any unit): residuals / sigma then square and sum without
# overflow for any number of points a file may hold.
MAX_SIGNAL = 1e50
SIGMA_RANGE = (1e-50, 1e50)


def check_signal(signal):
    """The measured values as a finite float array with |signal| <= MAX_SIGNAL."""
    return as_float_array("signal", signal, low=-MAX_SIGNAL, high=MAX_SIGNAL)


# Below this share of the largest |signal| no measurement resolves anything, and the
# weighted residuals (residual / sigma) would overflow.
_SIGMA_FLOOR = 1e-12


def check_data(x_name, x, signal, sigma, n_free):
    signal = check_signal(signal)
    if signal.ndim != 1 or signal.shape != x.shape:
        raise ValueError(f"signal has shape {signal.shape}; allowed: a 1-D array of the shape "
                         f"of {x_name} {x.shape}")
    if sigma is not None:
        sigma = as_float_array("sigma", sigma, low=SIGMA_RANGE[0], high=SIGMA_RANGE[1])
        try:
            sigma = np.broadcast_to(sigma, signal.shape).astype(float)
        except ValueError:
            raise ValueError(f"sigma has shape {sigma.shape}; allowed: one number or the shape "
                             f"of signal {signal.shape}") from None
        floor = _SIGMA_FLOOR * float(np.max(np.abs(signal), initial=0.0))
        if sigma.size and float(sigma.min()) < floor:
            raise ValueError(f"sigma = {float(sigma.min()):.3g} is not allowed; allowed: >= "
                             f"{floor:.3g} ({_SIGMA_FLOOR:g} x the largest |signal|)")
    if signal.size <= n_free:
        raise ValueError(f"{x_name} has {signal.size} points; allowed: more points than the "
                         f"{n_free} free parameters")
    return signal, sigma
