"""Static figures for papers (matplotlib, PNG and PDF). Perceptually uniform colour maps."""

from __future__ import annotations

import numpy as np
from matplotlib.figure import Figure

from thzarray.app.output import atomic_path

__all__ = ["bar_chart", "cone_chart", "cone_cuts", "delay_chart", "fit_plot", "histogram",
           "line_chart", "plane_maps", "save", "sky_map"]

_CMAP = "viridis"


def save(fig: Figure, path, force: bool = False, dpi: int = 120):
    """Save atomically; refuses to overwrite an existing file unless ``force``."""
    with atomic_path(path, force) as tmp:
        fig.savefig(tmp, dpi=dpi, bbox_inches="tight", format=str(path).rsplit(".", 1)[-1])
    return path


def cone_chart(lengths, freqs, angles, title, target_angle=None, target_lengths=None):
    """Cone angle (deg) versus plasma length (m) at several frequencies.

    Parameters
    ----------
    lengths : ndarray, shape (L,)
        Plasma lengths (m).
    freqs : ndarray, shape (F,)
        Frequencies (Hz).
    angles : ndarray, shape (F, L)
        Cone angles (rad).
    target_angle : float, optional
        Wanted cone angle (rad), drawn as a horizontal line.
    target_lengths : ndarray, shape (F,), optional
        Lengths (m) that give the target at each frequency (NaN where unreachable).
    """
    fig = Figure(figsize=(6.4, 4.2), layout="constrained")
    ax = fig.add_subplot()
    colours = _colours(len(freqs))
    for f, a, col in zip(freqs, angles, colours):
        ax.plot(lengths * 100, np.degrees(a), color=col, label=f"{f / 1e12:.3g} THz")
    if target_angle is not None:
        ax.axhline(np.degrees(target_angle), color="0.3", ls="--", lw=1,
                   label=f"target {np.degrees(target_angle):.3g} deg")
        if target_lengths is not None:
            for tl, col in zip(target_lengths, colours):
                if np.isfinite(tl):
                    ax.plot(tl * 100, np.degrees(target_angle), "o", color=col, ms=5)
    ax.set_xscale("log")
    ax.set_xlabel("plasma length (cm)")
    ax.set_ylabel("cone angle (deg)")
    ax.set_title(title)
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=8)
    return fig


def _sci(value, _pos=None):
    """Colour-bar tick labels with their own exponent (no offset text above the bar)."""
    return f"{value:.2g}"


def sky_map(x_deg, y_deg, intensity, title, pol=None, label="energy density (J/(Hz sr))",
            target=None):
    """Intensity in a polar projection: theta radial, phi around (x = theta cos phi, ...).

    Parameters
    ----------
    x_deg, y_deg : ndarray, shape (N,), (M,)
        Projected angles theta cos(phi), theta sin(phi) (deg).
    intensity : ndarray, shape (M, N)
        Values to show (rows along y).
    pol : (ndarray, ndarray), optional
        Polarization direction components (px, py), shape (M, N), drawn as short lines.
    target : (float, float), optional
        Projected position (deg) of a target, marked with a cross.
    """
    fig = Figure(figsize=(5.6, 4.8), layout="constrained")
    ax = fig.add_subplot()
    mesh = ax.pcolormesh(x_deg, y_deg, intensity, cmap=_CMAP, shading="auto")
    fig.colorbar(mesh, ax=ax, label=label, format=_sci)
    if pol is not None:
        step = max(1, len(x_deg) // 16)
        xx, yy = np.meshgrid(x_deg[::step], y_deg[::step])
        px, py = pol[0][::step, ::step], pol[1][::step, ::step]
        strong = intensity[::step, ::step] > 0.05 * np.nanmax(intensity)
        ax.quiver(xx[strong], yy[strong], px[strong], py[strong], color="white",
                  pivot="middle", headwidth=1, headlength=0, headaxislength=0, width=0.004,
                  scale=25)
    rmax = float(np.max(np.abs(x_deg)))
    for r in _nice_rings(rmax):
        t = np.linspace(0, 2 * np.pi, 200)
        ax.plot(r * np.cos(t), r * np.sin(t), color="white", lw=0.5, alpha=0.5)
    if target is not None:
        ax.plot(*target, marker="x", ms=10, mew=2, color="white")
        ax.plot(*target, marker="x", ms=12, mew=0.8, color="black")
        ax.annotate("target", target, textcoords="offset points", xytext=(6, 6),
                    color="white", fontsize=8)
    ax.set_aspect("equal")
    ax.set_xlabel("theta cos(phi) (deg)")
    ax.set_ylabel("theta sin(phi) (deg)")
    ax.set_title(title, fontsize=10)
    return fig


def cone_cuts(theta, freqs, values, title, label="energy density (J/(Hz sr))"):
    """Cuts through the cone: values versus polar angle at several frequencies.

    theta (rad) shape (T,), freqs (Hz) shape (F,), values shape (F, T).
    """
    fig = Figure(figsize=(6.4, 4.0), layout="constrained")
    ax = fig.add_subplot()
    for f, v, col in zip(freqs, values, _colours(len(freqs))):
        ax.plot(np.degrees(theta), v, color=col, label=f"{f / 1e12:.3g} THz")
    ax.set_xlabel("polar angle theta (deg)")
    ax.set_ylabel(label)
    ax.set_title(title)
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=8)
    return fig


def line_chart(x, ys, labels, xlabel, ylabel, title, logy=False, bands=None):
    """Curves sharing one x axis; ``bands`` (lower, upper) pairs shade a spread per curve."""
    fig = Figure(figsize=(6.4, 4.0), layout="constrained")
    ax = fig.add_subplot()
    for k, (y, lab, col) in enumerate(zip(ys, labels, _colours(len(ys)))):
        if bands is not None and bands[k] is not None:
            ax.fill_between(x, bands[k][0], bands[k][1], color=col, alpha=0.25, lw=0)
        ax.plot(x, y, color=col, label=lab, marker="o" if len(x) < 30 else None, ms=3)
    if logy:
        ax.set_yscale("log")
    ax.set_xlabel(xlabel)
    ax.set_ylabel(ylabel)
    ax.set_title(title, fontsize=10)
    ax.grid(True, alpha=0.3)
    if any(labels):
        ax.legend(fontsize=8)
    return fig


def _colours(n):
    from matplotlib import colormaps

    cmap = colormaps["viridis"]
    return [cmap(x) for x in np.linspace(0.0, 0.85, max(n, 1))]


def _nice_rings(rmax):
    step = 10 ** np.floor(np.log10(rmax / 2)) if rmax > 0 else 1.0
    for mult in (1, 2, 5):
        if rmax / (step * mult) <= 4:
            step *= mult
            break
    return np.arange(step, rmax + 1e-9, step)


def plane_maps(x, y, maps, titles, title, label, unit_scale=1e3, unit="mm"):
    """Side-by-side maps on a detector plane (x, y in m; each map shape (NY, NX))."""
    fig = Figure(figsize=(5.0 * len(maps) + 0.6, 4.4), layout="constrained")
    vmax = max(float(np.nanmax(m)) for m in maps)
    axes = fig.subplots(1, len(maps), squeeze=False, sharey=True)[0]
    for n, (ax, m, t) in enumerate(zip(axes, maps, titles)):
        mesh = ax.pcolormesh(x * unit_scale, y * unit_scale, m, cmap=_CMAP, shading="auto",
                             vmin=0, vmax=vmax)
        ax.set_aspect("equal")
        ax.set_title(t, fontsize=10)
        ax.set_xlabel(f"x ({unit})")
        if n == 0:
            ax.set_ylabel(f"y ({unit})")
    fig.colorbar(mesh, ax=list(axes), label=label, format=_sci)
    fig.suptitle(title)
    return fig


def bar_chart(labels, values, ylabel, title, logy=True):
    """Bars with their values written on top (e.g. single / incoherent / phased / ideal)."""
    fig = Figure(figsize=(6.0, 4.0), layout="constrained")
    ax = fig.add_subplot()
    colours = _colours(len(values))
    bars = ax.bar(labels, values, color=colours)
    for b, v in zip(bars, values):
        ax.annotate(f"{v:.3g}", (b.get_x() + b.get_width() / 2, v), ha="center", va="bottom",
                    fontsize=8)
    if logy:
        ax.set_yscale("log")
    ax.set_ylabel(ylabel)
    ax.set_title(title)
    ax.grid(True, axis="y", alpha=0.3)
    return fig


def histogram(samples, xlabel, title, markers=()):
    """Histogram of Monte Carlo samples with labelled vertical markers (label, value)."""
    fig = Figure(figsize=(6.0, 4.0), layout="constrained")
    ax = fig.add_subplot()
    ax.hist(samples, bins=40, color=_colours(1)[0], alpha=0.85)
    for (label, value), col in zip(markers, ("0.2", "tab:orange", "tab:red", "tab:green")):
        ax.axvline(value, color=col, ls="--", lw=1.2, label=f"{label} {value:.3g}")
    ax.set_xlabel(xlabel)
    ax.set_ylabel("builds")
    ax.set_title(title)
    if markers:
        ax.legend(fontsize=8)
    return fig


def fit_plot(angle, signal, model, sigma, title, xlabel="angle (deg)", curve=None):
    """Measured scan (error bars) with the fitted model as a smooth curve above, residuals
    below (angle in rad; ``curve`` = (angles (rad), model values) on a fine grid)."""
    fig = Figure(figsize=(6.4, 5.0), layout="constrained")
    top, bottom = fig.subplots(2, 1, sharex=True, height_ratios=[3, 1])
    deg = np.degrees(angle)
    if sigma is not None:
        top.errorbar(deg, signal, yerr=sigma, fmt="o", ms=3, color="0.3", label="measured")
    else:
        top.plot(deg, signal, "o", ms=3, color="0.3", label="measured")
    cx, cy = (deg, model) if curve is None else (np.degrees(curve[0]), curve[1])
    top.plot(cx, cy, color=_colours(2)[1], label="fitted model")
    top.set_ylabel("signal")
    top.set_title(title)
    top.legend(fontsize=8)
    top.grid(True, alpha=0.3)
    bottom.axhline(0, color="0.5", lw=0.8)
    resid = np.asarray(signal) - np.asarray(model)
    if sigma is not None:
        bottom.errorbar(deg, resid, yerr=sigma, fmt="o", ms=3, color=_colours(1)[0])
    else:
        bottom.plot(deg, resid, "o", ms=3, color=_colours(1)[0])
    bottom.set_xlabel(xlabel)
    bottom.set_ylabel("residual")
    bottom.grid(True, alpha=0.3)
    return fig


def delay_chart(theta, true_time, phase_only, lobe_tt, lobe_po, title):
    """Delays of each column (left) and the main lobe (right) versus the steering angle."""
    fig = Figure(figsize=(9.0, 3.8), layout="constrained")
    left, right = fig.subplots(1, 2)
    deg = np.degrees(theta)
    c_tt, c_po = _colours(2)
    for n in range(true_time.shape[0]):
        left.plot(deg, true_time[n] * 1e12, color=c_tt, lw=0.8,
                  label="true-time" if n == 0 else None)
        left.plot(deg, phase_only[n] * 1e12, color=c_po, lw=0.8, ls="--",
                  label="phase-only" if n == 0 else None)
    left.set_xlabel("target theta (deg)")
    left.set_ylabel("delay (ps)")
    left.grid(True, alpha=0.3)
    left.legend(fontsize=8)
    right.plot(deg, np.degrees(lobe_tt), "o-", ms=3, color=c_tt, label="true-time")
    right.plot(deg, np.degrees(lobe_po), "s--", ms=3, color=c_po, label="phase-only")
    right.plot(deg, deg, ":", color="0.5", label="lobe on target")
    right.set_xlabel("target theta (deg)")
    right.set_ylabel("main lobe theta (deg)")
    right.grid(True, alpha=0.3)
    right.legend(fontsize=8)
    fig.suptitle(title, fontsize=10)
    return fig
