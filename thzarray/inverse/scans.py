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

with band weights :math:`w_j` (normalised to sum 1, see "Spectra" below), :math:`\hat p` the
detector's
polarization (all components when ``polarization`` is None), :math:`\mathbf F` the far-field
radiation vector of :func:`~thzarray.field.farfield.far_field` or, when ``distance`` is given,
:math:`R\,\mathbf E` from :func:`~thzarray.field.nearfield.field_at` at the point
:math:`R(\sin\theta, 0, \cos\theta)` (the scan pivots about the origin). :math:`\theta_c` is
the far-field cone angle (:func:`~thzarray.field.cone.cone_angle`) at the band's mean frequency, so
``amplitude`` A is the signal above ``background`` B at the cone: the peak height for one
frequency in the far field, close to it otherwise. Parameters:

- ``length`` (m): the effective length L of a uniform column;
- ``mismatch``: :math:`n_g - n_T`, with :math:`n_T` from ``medium`` (the optical group index
  of the model is :math:`n_T + \text{mismatch}`);
- ``start`` (m): where the column starts on the axis; only with ``distance``, because one
  column's far-field pattern does not depend on it;
- ``amplitude``, ``background``: in the units of the signal.

Spectra: what the band sum assumes about the source and the detector
--------------------------------------------------------------------
:math:`\mathbf F` is the field per unit current spectrum, and the radiation integral
carries the factor :math:`i\omega\mu_0/4\pi` (Jackson, secs. 9.1-9.2): at the peak of
its cone a uniform column's :math:`|\mathbf F|^2 = (\omega\mu_0 L/4\pi)^2
\sin^2\theta_c\,\mathrm{sinc}^2 x_c` grows with frequency. The band weights are

.. math:: w_j \propto \Delta f_j\, R(f_j)\, S(f_j),

with :math:`\Delta f_j` the trapezoid weights (:mod:`thzarray.base.band`), :math:`R` the
detector's power response (``detector_response``) and :math:`S = |I(f)|^2` the power
spectrum of the column's *current* (``source_spectrum``; a
:class:`~thzarray.source.plasma.Plasma` gives its own). Both default to flat: a flat
current spectrum, whose radiated field then grows as f, seen by a flat detector. A source
whose radiated field spectrum :math:`|\omega I|^2` is flat has :math:`S \propto f^{-2}`.
The fitted length depends on these spectra (high frequencies make narrower cones), so the
result says which it used (``FitResult.assumptions``) and adds a note when a band was fitted
with either left at its default. With one frequency the spectra cancel.

The mismatch next to its predictions
------------------------------------
``FitResult.predicted`` holds ``mismatch_linear_air`` = ``medium.n_group - medium.n_thz``
(Ciddor's group index of linear air) and, when ``electron_density`` is given,
``mismatch_with_plasma``, which adds the plasma's share :math:`n_e/(2n_c)` of the optical
group index (:func:`~thzarray.source.plasma.plasma_group_index_shift`, at the medium's laser
wavelength, 800 nm when it has none). A fitted mismatch well above the first points to the
driver's own plasma (or the Kerr effect and refocusing, which are not modelled).

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

The least-squares engine, its uncertainties and the unconstrained-parameter flags are in
:mod:`thzarray.inverse.leastsq`. Reading scan files is the application's
(:mod:`thzarray.app.scans`).
"""

from __future__ import annotations

import numpy as np
from scipy.constants import c, mu_0

from thzarray.air.medium import Medium
from thzarray.base.band import band_weights
from thzarray.base.checks import as_float_array, check_scalar, unit_vector
from thzarray.field.cone import cone_angle, length_for_cone
from thzarray.field.farfield import far_field
from thzarray.field.nearfield import field_at
from thzarray.inverse.leastsq import FitResult, check_data, check_signal, parameters, solve
from thzarray.source.filament import Filament
from thzarray.source.plasma import Plasma, plasma_group_index_shift

__all__ = ["UNITS", "fit_delay_scan", "fit_scan"]

UNITS = {"length": "m", "start": "m", "mismatch": "1", "amplitude": "signal",
         "background": "signal", "spacing": "m", "timing_offset": "s"}
"""Unit of each fit parameter ("signal": the unit of the measured signal)."""

_MISMATCH_SCALE = 1e-4
_MISMATCH_MAX = 1e-2


def _spectrum(name, value, freq, medium):
    """|I|^2 or R at the band's frequencies (array, >= 0) and its description."""
    if value is None:
        what = "current spectrum" if name == "source_spectrum" else "detector response"
        return np.ones(freq.shape), f"flat {what} (assumed: not given)"
    if isinstance(value, Plasma):
        power = np.abs(value.current_spectrum(freq, medium.n_group)) ** 2
        return power, (f"|I(f)|^2 of the given Plasma (n_e = {value.electron_density:.3g} "
                       f"m^-3, collision rate {value.collision_rate:.3g} 1/s)")
    arr = as_float_array(name, value, low=0.0)
    if arr.shape != freq.shape:
        raise ValueError(f"{name} has shape {arr.shape}; allowed: one value per frequency, "
                         f"shape {freq.shape}" + (", or a Plasma" if name == "source_spectrum"
                                                  else ""))
    return arr, f"given at the {freq.size} band frequencies"


def _band(freq, source_spectrum, detector_response, medium):
    """Band samples (Hz), weights summing to 1 and what the weights assume (module docstring).

    The package's one band quadrature (:func:`thzarray.base.band.band_weights`) times the
    detector response and the current's power spectrum; the normalisation cancels in the
    model (the amplitude absorbs it).
    """
    freq = np.atleast_1d(as_float_array("freq", freq, low=0.0, low_open=True, unit="Hz"))
    if freq.ndim != 1:
        raise ValueError(f"freq has shape {freq.shape}; allowed: one frequency or a 1-D band")
    source, source_text = _spectrum("source_spectrum", source_spectrum, freq, medium)
    detector, detector_text = _spectrum("detector_response", detector_response, freq, medium)
    wts = band_weights(freq, source * detector)
    if not wts.sum() > 0:
        raise ValueError("source_spectrum * detector_response = all zero over the band; "
                         "allowed: non-negative values, not all zero")
    if freq.size == 1:
        assumed = dict(source_spectrum="one frequency: the spectra do not enter",
                       detector_response="one frequency: the spectra do not enter")
        notes = ()
    else:
        assumed = dict(source_spectrum=source_text, detector_response=detector_text)
        defaulted = [n for n, v in (("source_spectrum", source_spectrum),
                                    ("detector_response", detector_response)) if v is None]
        notes = (() if not defaulted else
                 (f"note: {' and '.join(defaulted)} not given: assumed flat over the band "
                  "(a flat current spectrum radiates a field growing with f); the fitted "
                  "parameters depend on them: declare them",))
    return freq, wts / wts.sum(), assumed, notes


def _predicted_mismatch(medium, electron_density):
    """The mismatch of linear air and, with an electron density, with the plasma's share."""
    out = {"mismatch_linear_air": medium.mismatch}
    if electron_density is not None:
        wavelength = medium.laser_wavelength or 800e-9
        out["mismatch_with_plasma"] = medium.mismatch + float(
            plasma_group_index_shift(electron_density, wavelength))
    return out


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


def _band_guess_length(theta, signal, freq, wts, medium, pol, distance, length0):
    """Refine a single-frequency length guess for a band: the length on a grid from
    length0 / 4 to 4 length0 whose band pattern (medium's mismatch, amplitude and background
    solved linearly) best matches the scan. A band's cone is not the cone at its mean
    frequency, and a poor start can leave the fit in a side minimum."""
    best, best_cost = length0, np.inf
    design = np.ones((theta.size, 2))
    for length in np.geomspace(length0 / 4, 4 * length0, 49):
        values = dict(length=length, mismatch=medium.mismatch, start=0.0)
        design[:, 0] = _scan_power(values, theta, freq, wts, medium, pol, distance, False)[0]
        coef, *_ = np.linalg.lstsq(design, signal, rcond=None)
        cost = float(np.sum((design @ coef - signal) ** 2))
        if coef[0] > 0 and cost < best_cost:
            best, best_cost = length, cost
    return float(best)


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
             source_spectrum=None, detector_response=None, medium: Medium | None = None,
             electron_density=None, fixed=None, initial=None, strict=False) -> FitResult:
    """Fit one column's model to an angular scan of a THz signal.

    Parameters
    ----------
    angle : array_like, shape (N,)
        Polar angle of the detector from the column's axis (rad), 0 to pi, in the x-z plane.
    signal : array_like, shape (N,)
        Measured signal (any unit, proportional to the band-weighted ``|E|^2``).
    freq : float or array_like, shape (B,)
        Detection frequency (Hz), or frequencies sampling the detection band.
    distance : float, optional
        Distance from the origin to the detector (m, 1e-6 to 1e6) for the finite-distance model; the far
        field by default.
    sigma : float or array_like, shape (N,), optional
        1-sigma uncertainty of each signal value (> 0). Without it the errors are scaled by
        chi2/dof.
    polarization : 3-sequence of float, optional
        Direction the detector is sensitive to (normalised); all components by default.
    source_spectrum : array_like, shape (B,), or Plasma, optional
        Power spectrum ``|I(f)|^2`` of the column's current at the band's frequencies (any
        scale, >= 0), or a :class:`~thzarray.source.plasma.Plasma` whose current spectrum
        to use; flat by default (see "Spectra" in the module docstring).
    detector_response : array_like, shape (B,), optional
        The detector's power response at the band's frequencies (any scale, >= 0); flat by
        default.
    medium : Medium, optional
        Sets n_thz and the starting mismatch; :meth:`Medium.air` (dry standard air) by
        default.
    electron_density : float, optional
        Electron density of the column (m^-3), e.g. ``PlasmaEstimate.electron_density``:
        adds ``mismatch_with_plasma`` to ``FitResult.predicted``.
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
        ``distance``, ``start`` (those not in ``fixed``); ``assumptions`` the source and
        detector spectra used; ``predicted`` the mismatch of linear air (and with the
        plasma's share).

    Notes
    -----
    The model and the criteria for an unconstrained parameter are in the module docstring.
    """
    medium = Medium.air() if medium is None else medium
    theta = as_float_array("angle", angle, low=0.0, high=np.pi, unit="rad")
    if theta.ndim != 1:
        raise ValueError(f"angle has shape {theta.shape}; allowed: a 1-D array")
    freq, wts, assumed, notes = _band(freq, source_spectrum, detector_response, medium)
    predicted = _predicted_mismatch(medium, electron_density)
    if distance is not None:
        distance = check_scalar("distance", distance, low=1e-6, high=1e6, unit="m")
    pol = None if polarization is None else unit_vector("polarization", polarization)
    signal_arr = check_signal(signal)
    f_mean = float(np.sum(wts * freq))
    length0 = (_guess_length(theta, signal_arr, f_mean, medium)
               if signal_arr.shape == theta.shape else 1.0)
    if freq.size > 1 and signal_arr.shape == theta.shape and np.all(np.isfinite(signal_arr)):
        length0 = _band_guess_length(theta, signal_arr, freq, wts, medium, pol, distance,
                                     length0)
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
    problem, fixed, values = parameters(defaults, bounds, scales, fixed, initial, allowed)
    signal_arr, sigma = check_data("angle", theta, signal_arr, sigma, len(problem.names))

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
    return solve(kind, problem, model, signal_arr, sigma, fixed, theta, evaluate, own_scale,
                 strict, search, UNITS, notes=notes, assumptions=assumed, predicted=predicted)


def fit_delay_scan(delay, angle, signal, freq, length, *, source_spectrum=None,
                   detector_response=None, sigma=None, medium: Medium | None = None,
                   fixed=None, initial=None, strict=False) -> FitResult:
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
    source_spectrum, detector_response, sigma, medium, fixed, initial, strict
        As for :func:`fit_scan`.

    Returns
    -------
    FitResult
        ``params`` has ``spacing`` (m, along +x), ``timing_offset`` (s), ``amplitude`` and
        ``background``; ``x`` is the delay. ``evaluate(delay, angle=...)`` gives the model;
        ``assumptions`` the spectra used.

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
    freq, wts, assumed, notes = _band(freq, source_spectrum, detector_response, medium)
    length = check_scalar("length", length, low=1e-6, high=1e3, unit="m")
    signal_arr = check_signal(signal)
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
    problem, fixed, values = parameters(defaults, bounds, scales, fixed, initial, allowed)
    signal_arr, sigma = check_data("delay", tau, signal_arr, sigma, len(problem.names))
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

    return solve("delay scan", problem, model, signal_arr, sigma, fixed, tau, evaluate,
                 own_scale, strict, units=UNITS, notes=notes, assumptions=assumed)


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


