r"""Fitting measured scans: the plasma column that best explains an angular or delay scan.

Measured cones rarely match an ideal length: focusing, the profile of the column and the
air all move them. The fits here return *effective* parameters of the package's
traveling-current model, with uncertainties and correlations, and say plainly when the data
cannot constrain one of them.

Angular scan (:func:`fit_scan`)
-------------------------------
A detector moves in the x-z plane at polar angle :math:`\theta` from the column's axis (+z).
The model signal is

.. math:: S(\theta) = A\,\frac{P(\theta)}{P_{ff}(\theta_c)} + B,\qquad
          P(\theta) = \sum_j w_j\,|\hat p\cdot\mathbf F(f_j, \theta)|^2,

with band weights :math:`w_j` (normalised to sum 1), :math:`\hat p` the detector's
polarization (all components when ``polarization`` is None), :math:`\mathbf F` the far-field
radiation vector of :func:`thzarray.farfield.far_field` or, when ``distance`` is given,
:math:`R\,\mathbf E` from :func:`thzarray.nearfield.field_at` at the point
:math:`R(\sin\theta, 0, \cos\theta)` (the scan pivots about the origin). :math:`\theta_c` is
the far-field cone angle (:func:`thzarray.cone.cone_angle`) at the band's mean frequency, so
``amplitude`` A is the signal above ``background`` B at the cone: the peak height for one
frequency in the far field, close to it otherwise. Parameters:

- ``length`` (m): the effective length L of a uniform column;
- ``mismatch``: :math:`n_g - n_T`, with :math:`n_T` from ``medium`` (the optical group index
  of the model is :math:`n_T + \text{mismatch}`);
- ``start`` (m): where the column starts on the axis; only with ``distance``, because one
  column's far-field pattern does not depend on it;
- ``amplitude``, ``background``: in the units of the signal.

Delay scan of two columns (:func:`fit_delay_scan`)
--------------------------------------------------
Two parallel columns of known length along +z, the second displaced by ``spacing`` along +x
and delayed by the stage delay :math:`\tau` plus an unknown ``timing_offset`` :math:`t_0`.
Far-field detectors at angles :math:`\theta` in the x-z plane record

.. math:: S(\tau, \theta) = \frac{A}{N_0}\sum_j w_j\,
          \left|\mathbf F_1 + \mathbf F_2\,e^{i\omega_j(\tau + t_0)}\right|^2 + B,

where :math:`\mathbf F_2` is the second column's field without delay (the package's
:math:`e^{+i\omega\,\mathrm{delay}}` convention) and :math:`N_0 = \max_\theta
\sum_j w_j 4|\mathbf F_1|^2`. The fringes peak at :math:`\tau = n_T d\sin\theta/c - t_0`:
spacing and timing separate only when at least two angles are scanned, and with one
frequency only modulo a period (use a band).

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

Reading scans (:func:`parse_scan_csv`; files: :func:`thzarray.tables.read_scan`)
-------------------------------------
Comma-separated text: ``#`` lines are comments, ``# key = value`` lines (before the header)
metadata: ``# freq = 0.3 THz`` and ``# distance = 1.5 m`` become SI floats through a
unit reader the caller passes (``to_si``; the command line passes
:func:`thzarray.units.parse_quantity`, since the core reads no unit strings itself), other
keys stay text. Then a header naming the columns ``angle_deg`` / ``angle_rad`` /
``angle_mrad``, ``signal`` and optionally ``sigma`` (one-standard-deviation uncertainty of
the signal, > 0), then one row per angle. Reading the file is the only input/output in
this module: the command line's way in.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np
from scipy.constants import c, mu_0
from scipy.optimize import least_squares

from ._validate import as_float_array, check_scalar, check_vector3
from .cone import cone_angle, length_for_cone
from .farfield import far_field
from .filament import Filament
from .medium import Medium

__all__ = [
    "FitResult",
    "UNITS",
    "fit_summary",
    "fit_delay_scan",
    "fit_scan",
    "parse_scan_csv",
]

UNITS = {"length": "m", "start": "m", "mismatch": "1", "amplitude": "signal",
         "background": "signal", "spacing": "m", "timing_offset": "s"}
"""Unit of each fit parameter ("signal": the unit of the measured signal)."""

_CONDITION_LIMIT = 1e6
_CLOSE_CORRELATION = 0.999
_NO_EFFECT = 1e-10
_MISMATCH_SCALE = 1e-4
_MISMATCH_MAX = 1e-2
_MIN_ROWS = 6


# --- the result -------------------------------------------------------------------------

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
        Best-fit values and 1-sigma uncertainties by name (units in :data:`UNITS`); an
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
        on pairs correlated beyond +-0.999; empty when all is well.
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


# --- the least-squares engine shared by the fits ----------------------------------------

@dataclass(frozen=True)
class _Problem:
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


def _diagnose(jac, names, values, errors, corr, own_scale):
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
            messages.append(f"{n}: 1-sigma error {errors[n]:.3g} {UNITS[n]} exceeds "
                            f"{limit:.3g} {UNITS[n]}; the data do not constrain it; fix it "
                            f"(fixed={{'{n}': value}}) or add data")
    for i, j in zip(*np.triu_indices(len(names), 1)):
        if constrained[names[i]] and constrained[names[j]] and abs(corr[i, j]) > _CLOSE_CORRELATION:
            messages.append(f"note: {names[i]} and {names[j]} are correlated at "
                            f"{corr[i, j]:.4f}; the data constrain mostly a combination and "
                            "the linearised errors may understate the range; consider fixing "
                            "one")
    return constrained, tuple(messages)


def _solve(kind, problem: _Problem, model, data, sigma, fixed, x, evaluate, own_scale, strict,
           search=None):
    """Run least_squares on scaled variables and build the FitResult.

    ``search = (search_model, factor, i)``: the same curves with parameter i multiplied by
    ``factor(p)``; the iterations use it (cheaper), the final point and errors ``model``.
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
                                      own_scale(values))
    if strict and not all(constrained.values()):
        raise ValueError("; ".join(m for m in messages if not m.startswith("note:")))
    return FitResult(kind, problem.names, values, errors, dict(fixed), corr, cov, x, data, best,
                     resid, sigma, chi2, dof, sigma is None, constrained, messages,
                     lambda xx, **extra: evaluate(values, xx, **extra))


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


def _parameters(defaults, bounds, scales, fixed, initial, allowed):
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
    return _Problem(names,
                    np.array([values[n] for n in names]),
                    np.array([scales[n] for n in names]),
                    np.array([bounds[n][0] for n in names]),
                    np.array([bounds[n][1] for n in names])), fixed, values


def _check_data(x_name, x, signal, sigma, n_free):
    signal = as_float_array("signal", signal)
    if signal.ndim != 1 or signal.shape != x.shape:
        raise ValueError(f"signal has shape {signal.shape}; allowed: a 1-D array of the shape "
                         f"of {x_name} {x.shape}")
    if sigma is not None:
        sigma = np.broadcast_to(as_float_array("sigma", sigma, low=0.0, low_open=True),
                                signal.shape).astype(float)
    if signal.size <= n_free:
        raise ValueError(f"{x_name} has {signal.size} points; allowed: more points than the "
                         f"{n_free} free parameters")
    return signal, sigma


def _band(freq, weights):
    freq = np.atleast_1d(as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz"))
    if freq.ndim != 1:
        raise ValueError(f"freq has shape {freq.shape}; allowed: one frequency or a 1-D band")
    if weights is None:
        weights = np.ones_like(freq)
    weights = as_float_array("weights", weights, low=0.0)
    if weights.shape != freq.shape or weights.sum() <= 0:
        raise ValueError(f"weights = array of shape {weights.shape}; allowed: non-negative "
                         f"weights of the shape of freq {freq.shape}, not all zero")
    return freq, weights / weights.sum()


# --- angular scans ----------------------------------------------------------------------

def _scan_power(values, theta, freq, wts, medium, pol, distance, reference=True):
    """Band power P(theta) at the scan angles and, with ``reference``, at the far-field cone."""
    med = Medium(medium.n_thz + values["mismatch"], medium.n_thz)
    fil = Filament(values["length"], start=(0.0, 0.0, values.get("start", 0.0)))
    angles = theta
    if reference:
        theta_c = cone_angle(values["length"], float(np.sum(wts * freq)), med)
        angles = np.append(theta, theta_c) if distance is None else np.atleast_1d(theta_c)
    if distance is None or reference:
        power = _band_power(far_field(fil, freq[:, None], angles[None, :], 0.0, med).cartesian,
                            wts, pol)
    if distance is not None:
        from .nearfield import field_at

        points = distance * np.stack([np.sin(theta), np.zeros_like(theta), np.cos(theta)], -1)
        near = _band_power(distance * field_at(fil, freq[:, None], points[None, :, :], med),
                           wts, pol)
        power = np.append(near, power) if reference else near
    if not reference:
        return power, None
    if power[-1] <= 0:
        raise ValueError("polarization = a direction that sees no field in the scan (x-z) "
                         "plane; allowed: a direction with an x or z component")
    return power[:-1], power[-1]


def _scan_signal(values, theta, freq, wts, medium, pol, distance):
    """Model signal at polar angles ``theta`` for a parameter dict (see module docstring)."""
    power, ref = _scan_power(values, theta, freq, wts, medium, pol, distance)
    return values["amplitude"] * power / ref + values["background"]


def _search_scale(values, freq, wts):
    """Cheap positive stand-in for the cone power: L^2 <(w mu0 / 4 pi)^2>, (V s)^2."""
    return values["length"] ** 2 * float(np.sum(wts * (freq * mu_0 / 2) ** 2))


def _band_power(vec, wts, pol):
    """sum_j w_j |p . F_j|^2 over the first (frequency) axis of ``vec`` (..., 3)."""
    power = (np.sum(np.abs(vec) ** 2, axis=-1) if pol is None
             else np.abs(vec @ pol) ** 2)
    return np.tensordot(wts, power, axes=(0, 0))


def _guess_length(theta, signal, f_mean, medium):
    """Column length whose cone sits at the angle of the largest signal."""
    i = int(np.argmax(signal))
    peak = float(theta[i])
    try:
        return float(length_for_cone(peak, f_mean, medium))
    except ValueError:
        # Long-wire rule of Balanis (Antenna Theory, traveling-wave antennas).
        return 0.371 * c / f_mean / max(1.0 - np.cos(peak), 1e-6)


def fit_scan(angle, signal, freq, distance=None, sigma=None, polarization=None, *,
             weights=None, medium: Medium | None = None, fixed=None, initial=None,
             strict=False) -> FitResult:
    """Fit one column's model to an angular scan of a THz signal.

    Parameters
    ----------
    angle : array_like, shape (N,)
        Polar angle of the detector from the column's axis (rad), 0 to pi, in the x-z plane.
    signal : array_like, shape (N,)
        Measured signal (any unit, proportional to the band-weighted |E|^2).
    freq : float or array_like, shape (B,)
        Detection frequency (Hz), or frequencies sampling the detection band.
    distance : float, optional
        Distance from the origin to the detector (m) for the finite-distance model; the far
        field by default.
    sigma : float or array_like, shape (N,), optional
        1-sigma uncertainty of each signal value (> 0). Without it the errors are scaled by
        chi2/dof.
    polarization : 3-sequence of float, optional
        Direction the detector is sensitive to (normalised); all components by default.
    weights : array_like, shape (B,), optional
        Band weights (e.g. the detector response); equal by default.
    medium : Medium, optional
        Sets n_thz and the starting mismatch; :meth:`Medium.air` (dry standard air) by
        default.
    fixed : dict, optional
        Parameters held at given values (SI), e.g. ``{"mismatch": 1e-5}``.
    initial : dict, optional
        Starting values; by default the length whose cone is at the angle of the largest
        signal, the medium's mismatch, start 0, and the signal's range.
    strict : bool
        Raise ``ValueError`` instead of returning a flagged result when a parameter is not
        constrained.

    Returns
    -------
    FitResult
        ``params`` has ``length``, ``mismatch``, ``amplitude``, ``background`` and, with
        ``distance``, ``start`` (those not in ``fixed``).

    Notes
    -----
    The model and the criteria for an unconstrained parameter are in the module docstring.
    """
    medium = Medium.air() if medium is None else medium
    theta = as_float_array("angle", angle, low=0.0, high=np.pi, unit="rad")
    if theta.ndim != 1:
        raise ValueError(f"angle has shape {theta.shape}; allowed: a 1-D array")
    freq, wts = _band(freq, weights)
    if distance is not None:
        distance = check_scalar("distance", distance, low=0.0, low_open=True, unit="m")
    pol = None if polarization is None else check_vector3("polarization", polarization,
                                                          nonzero=True)
    pol = None if pol is None else pol / np.linalg.norm(pol)
    signal_arr = as_float_array("signal", signal)
    f_mean = float(np.sum(wts * freq))
    length0 = (_guess_length(theta, signal_arr, f_mean, medium)
               if signal_arr.shape == theta.shape else 1.0)
    background0 = float(np.min(signal_arr))
    amplitude0 = max(float(np.max(signal_arr)) - background0, np.finfo(float).tiny)
    allowed = ("length", "start", "mismatch", "amplitude", "background")
    if distance is None:
        allowed = tuple(n for n in allowed if n != "start")
    defaults = dict(length=length0, start=0.0, mismatch=medium.mismatch, amplitude=amplitude0,
                    background=background0)
    bounds = dict(length=(1e-6, 1e3), start=(-1e3, 1e3),
                  mismatch=(1.0 - medium.n_thz, _MISMATCH_MAX), amplitude=(0.0, np.inf),
                  background=(-np.inf, np.inf))
    scales = dict(length=length0, start=length0, mismatch=_MISMATCH_SCALE,
                  amplitude=amplitude0, background=amplitude0)
    problem, fixed, values = _parameters(defaults, bounds, scales, fixed, initial, allowed)
    signal_arr, sigma = _check_data("angle", theta, signal_arr, sigma, len(problem.names))

    def evaluate(vals, th):
        return _scan_signal(vals | fixed_values, th, freq, wts, medium, pol, distance)

    fixed_values = {n: values[n] for n in allowed if n not in problem.names}
    if distance is None:
        fixed_values["start"] = 0.0

    def model(p):
        return evaluate(dict(zip(problem.names, p)), theta)

    def own_scale(vals):
        merged = vals | fixed_values
        return dict(mismatch=_MISMATCH_SCALE, start=merged["length"],
                    background=abs(merged["amplitude"]))

    search = None
    if "amplitude" in problem.names:
        # Same family of curves with the amplitude over a cheap scale instead of the power at
        # the cone: the iterations skip cone_angle, the final point and errors use the model.
        def search_model(p):
            vals = dict(zip(problem.names, p)) | fixed_values
            power, _ = _scan_power(vals, theta, freq, wts, medium, pol, distance, False)
            return vals["amplitude"] * power / _search_scale(vals, freq, wts) + vals["background"]

        def factor(p):
            vals = dict(zip(problem.names, p)) | fixed_values
            ref = _scan_power(vals, theta[:1], freq, wts, medium, pol, distance)[1]
            return _search_scale(vals, freq, wts) / ref

        search = (search_model, factor, problem.names.index("amplitude"))
    kind = "far-field scan" if distance is None else "finite-distance scan"
    return _solve(kind, problem, model, signal_arr, sigma, fixed, theta, evaluate, own_scale,
                  strict, search)


# --- delay scans of two columns ---------------------------------------------------------

def fit_delay_scan(delay, angle, signal, freq, length, *, weights=None, sigma=None,
                   medium: Medium | None = None, fixed=None, initial=None,
                   strict=False) -> FitResult:
    """Fit the spacing and timing offset of two parallel columns to delay scans.

    Parameters
    ----------
    delay : array_like, shape (N,)
        Stage delay of the second column's pulse (s) for each sample.
    angle : array_like, shape (N,)
        Far-field detector angle from +z in the x-z plane (rad) for each sample; at least
        two different angles separate spacing from timing.
    signal : array_like, shape (N,)
        Measured signal.
    freq : float or array_like, shape (B,)
        Detection frequency or band (Hz); a band makes the fringe order unambiguous.
    length : float
        Length of each column (m), e.g. from :func:`fit_scan`.
    weights, sigma, medium, fixed, initial, strict
        As for :func:`fit_scan`.

    Returns
    -------
    FitResult
        ``params`` has ``spacing`` (m, along +x), ``timing_offset`` (s), ``amplitude`` and
        ``background``; ``x`` is the delay. ``evaluate(delay, angle=...)`` gives the model.

    Notes
    -----
    Model in the module docstring; far field only.
    """
    medium = Medium.air() if medium is None else medium
    tau = as_float_array("delay", delay, unit="s")
    theta = as_float_array("angle", angle, low=0.0, high=np.pi, unit="rad")
    if tau.ndim != 1 or theta.shape != tau.shape:
        raise ValueError(f"delay, angle have shapes {tau.shape}, {theta.shape}; allowed: 1-D "
                         "arrays of equal shape")
    freq, wts = _band(freq, weights)
    length = check_scalar("length", length, low=1e-6, high=1e3, unit="m")
    signal_arr = as_float_array("signal", signal)
    f_mean = float(np.sum(wts * freq))
    known = {**(initial or {}), **(fixed or {})}.get("spacing")
    known = None if known is None else check_scalar("spacing", known, unit="m")
    spacing0, offset0 = _guess_spacing(tau, theta, signal_arr, medium, known)
    background0 = float(np.min(signal_arr))
    amplitude0 = max(float(np.max(signal_arr)) - background0, np.finfo(float).tiny)
    allowed = ("spacing", "timing_offset", "amplitude", "background")
    defaults = dict(spacing=spacing0, timing_offset=offset0, amplitude=amplitude0,
                    background=background0)
    bounds = dict(spacing=(-1e2, 1e2), timing_offset=(-1.0, 1.0), amplitude=(0.0, np.inf),
                  background=(-np.inf, np.inf))
    scales = dict(spacing=max(abs(spacing0), c / f_mean), timing_offset=1.0 / f_mean,
                  amplitude=amplitude0, background=amplitude0)
    problem, fixed, values = _parameters(defaults, bounds, scales, fixed, initial, allowed)
    signal_arr, sigma = _check_data("delay", tau, signal_arr, sigma, len(problem.names))
    fixed_values = {n: values[n] for n in allowed if n not in problem.names}
    first = Filament(length)
    unique, inverse = np.unique(theta, return_inverse=True)
    f1 = far_field(first, freq[:, None], unique[None, :], 0.0, medium).cartesian
    norm = float(np.max(_band_power(2 * f1, wts, None)))
    w = 2 * np.pi * freq[:, None]

    def pair_signal(vals, tt, th_index, f1_th, th):
        f2 = far_field(first.replace(start=(vals["spacing"], 0.0, 0.0)), freq[:, None],
                       th[None, :], 0.0, medium).cartesian
        phase = np.exp(1j * w * (tt[None, :] + vals["timing_offset"]))[..., None]
        total = f1_th[:, th_index] + f2[:, th_index] * phase
        return vals["amplitude"] * _band_power(total, wts, None) / norm + vals["background"]

    def model(p):
        return pair_signal(dict(zip(problem.names, p)) | fixed_values, tau, inverse, f1, unique)

    def evaluate(vals, tt, angle):
        tt, th = np.broadcast_arrays(tt, as_float_array("angle", angle, low=0.0, high=np.pi))
        u, inv = np.unique(th, return_inverse=True)
        f1_u = far_field(first, freq[:, None], u[None, :], 0.0, medium).cartesian
        return pair_signal(vals | fixed_values, tt.ravel(), inv.ravel(), f1_u, u).reshape(tt.shape)

    def own_scale(vals):
        return dict(timing_offset=1.0 / f_mean,
                    background=abs((vals | fixed_values)["amplitude"]))

    return _solve("delay scan", problem, model, signal_arr, sigma, fixed, tau, evaluate,
                  own_scale, strict)


def _guess_spacing(tau, theta, signal, medium, spacing=None):
    """Spacing and offset from the delay of the largest signal at each angle.

    The fringes peak at tau = n_T d sin(theta) / c - t0 (module docstring): a line fit over
    the angles, or the offset alone when the spacing is known or only one angle was scanned.
    """
    if signal.shape != tau.shape:
        return 0.0 if spacing is None else float(spacing), 0.0
    angles = np.unique(theta)
    peaks = np.array([tau[theta == a][np.argmax(signal[theta == a])] for a in angles])
    slowness = medium.n_thz * np.sin(angles) / c
    if spacing is None and angles.size >= 2:
        spacing, intercept = np.polyfit(slowness, peaks, 1)
        return float(spacing), float(-intercept)
    spacing = 0.0 if spacing is None else float(spacing)
    return spacing, float(np.mean(spacing * slowness - peaks))


# --- reading scans ----------------------------------------------------------------------

_ANGLE_UNITS = {"deg": np.pi / 180, "rad": 1.0, "mrad": 1e-3}
_SIGMA_NAMES = ("sigma",)
_METADATA_KINDS = {"freq": "frequency", "distance": "length"}


def _metadata_value(key, text, where, to_si):
    """SI float for ``freq`` and ``distance`` through ``to_si``, else the text as written.

    Without ``to_si`` a plain number is taken as SI and a unit string stays text (the core
    does not read unit strings; the command line passes thzarray.units.parse_quantity).
    """
    if key not in _METADATA_KINDS:
        return text
    if to_si is None:
        try:
            value = float(text)
        except ValueError:
            return text
    else:
        try:
            value = float(to_si(text, _METADATA_KINDS[key]))
        except ValueError as exc:
            raise ValueError(f"{where}: {key} = {exc}") from None
    if not (np.isfinite(value) and value > 0):
        raise ValueError(f"{where}: {key} = {text!r} is not allowed; allowed: a finite value > 0")
    return value


def parse_scan_csv(text: str, source: str = "scan", to_si=None):
    """Parse an angular scan from CSV text.

    Parameters
    ----------
    text : str
        The CSV (format in the module docstring).
    source : str
        Where the text came from, for messages.
    to_si : callable, optional
        ``to_si(text, kind) -> float`` reading a unit string (``kind`` "frequency" for
        ``freq``, "length" for ``distance``), e.g. :func:`thzarray.units.parse_quantity`;
        raises ``ValueError`` for bad text. Without it those values are floats only when
        written as plain SI numbers.

    Returns
    -------
    angle : ndarray, shape (N,)
        Detector angle from the filament axis (rad).
    signal : ndarray, shape (N,)
    sigma : ndarray, shape (N,), or None
        The uncertainty column when present.
    metadata : dict
        ``# key = value`` lines: ``freq`` (Hz) and ``distance`` (m) as SI floats (see
        ``to_si``), other keys as text.

    Raises
    ------
    ValueError
        Naming the row (and line) and column of a malformed cell, a missing or unknown
        column, an angle outside 0 to 180 degrees, a non-positive sigma, or fewer than 6 rows.
    """
    metadata, header, rows = {}, None, []
    for line_no, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            key, eq, value = line[1:].partition("=")
            if eq and header is None and re.fullmatch(r"\s*\w+\s*", key):
                where = f"{source} line {line_no}"
                metadata[key.strip()] = _metadata_value(key.strip(), value.strip(), where,
                                                        to_si)
            continue
        cells = [cell.strip() for cell in line.split(",")]
        if header is None:
            header = [cell.lower() for cell in cells]
            columns = _columns(header, source, line_no)
            continue
        rows.append((line_no, cells))
    if header is None:
        raise ValueError(f"{source}: no header line; allowed: a line naming the columns, e.g. "
                         "'angle_deg, signal, sigma'")
    if len(rows) < _MIN_ROWS:
        raise ValueError(f"{source}: {len(rows)} data rows; allowed: at least {_MIN_ROWS} "
                         "(more points than the fit's parameters)")
    table = np.empty((len(rows), len(header)))
    for r, (line_no, cells) in enumerate(rows, start=1):
        if len(cells) != len(header):
            raise ValueError(f"{source} row {r} (line {line_no}): {len(cells)} cells; allowed: "
                             f"{len(header)} cells, one per column ({', '.join(header)})")
        for j, cell in enumerate(cells):
            try:
                value = float(cell)
            except ValueError:
                value = np.nan
            if not np.isfinite(value):
                raise ValueError(f"{source} row {r} (line {line_no}), column {header[j]!r}: "
                                 f"{cell!r} is not a number; allowed: finite decimal numbers")
            table[r - 1, j] = value
    angle_col, unit = columns["angle"]
    angle = table[:, angle_col] * _ANGLE_UNITS[unit]
    for r, value in enumerate(table[:, angle_col], start=1):
        if not 0.0 <= value * _ANGLE_UNITS[unit] <= np.pi:
            raise ValueError(f"{source} row {r} (line {rows[r - 1][0]}), column "
                             f"{header[angle_col]!r}: {value:g} is outside the allowed range "
                             f"0 to {np.pi / _ANGLE_UNITS[unit]:g} {unit} (angle from the "
                             "filament axis)")
    sigma = None
    if "sigma" in columns:
        sigma = table[:, columns["sigma"]]
        bad = np.flatnonzero(sigma <= 0)
        if bad.size:
            r = int(bad[0]) + 1
            raise ValueError(f"{source} row {r} (line {rows[r - 1][0]}), column 'sigma': "
                             f"{sigma[r - 1]:g} is not allowed; allowed: uncertainties > 0")
    return angle, table[:, columns["signal"]], sigma, metadata


def _columns(header, source, line_no):
    allowed = ("angle_deg | angle_rad | angle_mrad, signal, sigma (optional)")
    columns = {}
    for j, name in enumerate(header):
        if name.startswith("angle_") and name[6:] in _ANGLE_UNITS and "angle" not in columns:
            columns["angle"] = (j, name[6:])
        elif name in ("signal",) + _SIGMA_NAMES and name not in columns:
            columns[name] = j
        else:
            raise ValueError(f"{source} line {line_no}: column {name!r} is not allowed "
                             f"(unknown or repeated); allowed columns: {allowed}")
    for need in ("angle", "signal"):
        if need not in columns:
            raise ValueError(f"{source} line {line_no}: the header has no {need!r} column; "
                             f"allowed columns: {allowed}")
    return columns


# --- the command line's entry point -----------------------------------------------------

def _si(name, value, to_si, where):
    """An SI float from a float or a string (read by ``to_si``); None stays None."""
    if value is None:
        return None
    if isinstance(value, str):
        value = _metadata_value(name, value, where, to_si)
        if isinstance(value, str):
            raise ValueError(f"{where}: {name} = {value!r} is a unit string; allowed: an SI "
                             "number, or pass to_si=thzarray.units.parse_quantity")
        return value
    return check_scalar(name, value, low=0.0, low_open=True)


def _json_number(value):
    value = float(value)
    return value if np.isfinite(value) else None


def fit_summary(scan, path="scan", freq=None, distance=None, *, fixed=None,
                polarization=None, to_si=None) -> dict:
    """Fit a parsed scan and return a JSON-ready dict (for ``thzarray fit``).

    Parameters
    ----------
    scan : tuple
        ``(angle, signal, sigma, metadata)`` as returned by :func:`parse_scan_csv` (the file
        is read by :func:`thzarray.tables.read_scan`).
    path : str
        Where the scan came from, for messages and the result's ``file``.
    freq : float or str, optional
        Frequency (Hz, or a string such as ``"0.3 THz"`` read by ``to_si``); the file's
        ``# freq = ...`` line when omitted.
    distance : float or str, optional
        Detector distance (m, or a string read by ``to_si``); the file's
        ``# distance = ...`` line when omitted; the far field when neither is given.
    fixed : dict, optional
        Parameters held fixed (SI values), as for :func:`fit_scan`.
    polarization : 3-sequence of float, optional
        As for :func:`fit_scan`.
    to_si : callable, optional
        Reader of unit strings, as for :func:`parse_scan_csv`; the command line passes
        :func:`thzarray.units.parse_quantity`.

    Returns
    -------
    dict
        ``file``, ``model``, ``freq_hz``, ``distance_m``, ``params``, ``errors``, ``units``,
        ``fixed``, ``correlation`` (``names``, ``matrix``), ``chi2``, ``dof``,
        ``chi2_per_dof``, ``errors_scaled_by_chi2``, ``ok``, ``messages`` and
        ``residuals`` (``angle_rad``, ``signal``, ``model``, ``residual``); non-finite
        numbers become None.
    """
    angle, signal, sigma, metadata = scan
    freq = _si("freq", metadata.get("freq") if freq is None else freq, to_si, str(path))
    if freq is None:
        raise ValueError(f"freq: not given and {path} has no '# freq = ...' line; allowed: a "
                         "frequency such as '0.3 THz'")
    distance = _si("distance", metadata.get("distance") if distance is None else distance,
                   to_si, str(path))
    result = fit_scan(angle, signal, freq, distance=distance, sigma=sigma,
                      polarization=polarization, fixed=fixed)
    return {
        "file": str(path),
        "model": result.kind,
        "freq_hz": _json_number(freq),
        "distance_m": None if distance is None else _json_number(distance),
        "params": {k: _json_number(v) for k, v in result.params.items()},
        "errors": {k: _json_number(v) for k, v in result.errors.items()},
        "units": {k: UNITS[k] for k in result.params},
        "fixed": {k: _json_number(v) for k, v in result.fixed.items()},
        "correlation": {"names": list(result.names),
                        "matrix": [[_json_number(v) for v in row] for row in result.correlation]},
        "chi2": _json_number(result.chi2),
        "dof": int(result.dof),
        "chi2_per_dof": _json_number(result.chi2_dof),
        "errors_scaled_by_chi2": bool(result.errors_scaled),
        "ok": bool(result.ok),
        "messages": list(result.messages),
        "residuals": {"angle_rad": angle.tolist(), "signal": signal.tolist(),
                      "model": result.model.tolist(), "residual": result.residuals.tolist()},
    }
