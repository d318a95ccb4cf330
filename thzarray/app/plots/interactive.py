"""Interactive figures (plotly) saved as HTML pages that work offline.

Every page of one output directory loads the same ``plotly.min.js``, written once beside
them (about 4.6 MB), so a gallery of many pages stays small. Titles sit above the plot
area with room for buttons and sliders; colour bars carry their exponent in the tick
labels, not above the bar.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import plotly.graph_objects as go

from thzarray.app.output import write_text

__all__ = ["PLOTLY_JS", "bar_chart", "cone_chart", "cone_cuts", "delay_chart", "fit_plot",
           "histogram", "line_chart", "plane_maps", "save", "sky_map", "sky_slider"]

_SCALE = "Viridis"
PLOTLY_JS = "plotly.min.js"
"""File name of the shared plotly library beside the pages."""


def _layout(fig, title, *, controls=False, **more):
    """Common layout: title on top, room for buttons or a slider, white template."""
    top = 110 if controls else 70
    fig.update_layout(title=dict(text=title, x=0.0, xanchor="left", y=0.98, yanchor="top",
                                 font=dict(size=16)),
                      margin=dict(t=top, l=70, r=30, b=60), template="plotly_white", **more)
    return fig


def _colorbar(label):
    return dict(title=dict(text=label, side="right"), exponentformat="e", showexponent="all",
                tickformat=".2e")


def save(fig, path, force: bool = False):
    """Write an HTML page that loads ``plotly.min.js`` from its own directory.

    The library file is written beside the page when it is not there yet (atomically).
    """
    from plotly.offline import get_plotlyjs

    path = Path(path)
    library = path.parent / PLOTLY_JS
    if not library.exists():
        path.parent.mkdir(parents=True, exist_ok=True)
        write_text(library, get_plotlyjs(), force=True)
    html = fig.to_html(include_plotlyjs="directory", full_html=True,
                       config={"displaylogo": False, "responsive": True})
    return write_text(path, html, force)


def _marker(x, y, name="target"):
    return go.Scatter(x=[x], y=[y], mode="markers+text", name=name, text=[name],
                      textposition="top center", textfont=dict(color="white"),
                      marker=dict(symbol="x", size=12, color="white",
                                  line=dict(color="black", width=1)),
                      hoverinfo="name", showlegend=False)


def sky_map(x_deg, y_deg, intensity_by_freq, freqs, title, pol=None,
            label="energy density (J/(Hz sr))", target=None):
    """Sky maps in a polar projection with a frequency slider.

    Parameters
    ----------
    x_deg, y_deg : ndarray, shape (N,), (M,)
        Projected angles theta cos(phi), theta sin(phi) (deg).
    intensity_by_freq : ndarray, shape (F, M, N)
    freqs : ndarray, shape (F,) (Hz)
    pol : (ndarray, ndarray), optional
        Polarization components (px, py), shape (F, M, N), drawn as short line segments.
    target : (float, float), optional
        Projected position (deg) of a target, marked on every map.
    """
    fig = go.Figure()
    per = 1 + (pol is not None)
    for k, f in enumerate(freqs):
        fig.add_trace(go.Heatmap(x=x_deg, y=y_deg, z=intensity_by_freq[k], colorscale=_SCALE,
                                 colorbar=_colorbar(label), visible=(k == 0),
                                 name=f"{f / 1e12:.3g} THz",
                                 hovertemplate="x %{x:.3f} deg<br>y %{y:.3f} deg<br>%{z:.3e}"
                                               "<extra></extra>"))
        if pol is not None:
            xs, ys = _segments(x_deg, y_deg, pol[0][k], pol[1][k], intensity_by_freq[k])
            fig.add_trace(go.Scatter(x=xs, y=ys, mode="lines", visible=(k == 0),
                                     line=dict(color="white", width=1), hoverinfo="skip",
                                     name="polarization", showlegend=False))
    if target is not None:
        fig.add_trace(_marker(*target))
    steps = []
    for k, f in enumerate(freqs):
        vis = [False] * (per * len(freqs)) + ([True] if target is not None else [])
        vis[per * k: per * (k + 1)] = [True] * per
        steps.append(dict(method="update", label=f"{f / 1e12:.3g} THz",
                          args=[{"visible": vis}, {"title.text": f"{title} at {f / 1e12:.3g} THz"}]))
    _layout(fig, f"{title} at {freqs[0] / 1e12:.3g} THz", controls=True,
            sliders=[dict(active=0, steps=steps, currentvalue=dict(prefix="frequency: "),
                          pad=dict(t=50))],
            xaxis=dict(title="theta cos(phi) (deg)", scaleanchor="y"),
            yaxis=dict(title="theta sin(phi) (deg)"))
    return fig


def _segments(x_deg, y_deg, px, py, intensity, count=16):
    step = max(1, len(x_deg) // count)
    half = 0.4 * step * (x_deg[1] - x_deg[0]) if len(x_deg) > 1 else 0.1
    xs, ys = [], []
    threshold = 0.05 * np.nanmax(intensity)
    for j in range(0, len(y_deg), step):
        for i in range(0, len(x_deg), step):
            if intensity[j, i] > threshold and np.isfinite(px[j, i]):
                n = np.hypot(px[j, i], py[j, i]) or 1.0
                dx, dy = half * px[j, i] / n, half * py[j, i] / n
                xs += [x_deg[i] - dx, x_deg[i] + dx, None]
                ys += [y_deg[j] - dy, y_deg[j] + dy, None]
    return xs, ys


def cone_chart(lengths, freqs, angles, title, target_angle=None, target_lengths=None):
    """Cone angle versus plasma length at several frequencies, target marked."""
    fig = go.Figure()
    for k, f in enumerate(freqs):
        fig.add_trace(go.Scatter(x=lengths * 100, y=np.degrees(angles[k]), mode="lines",
                                 name=f"{f / 1e12:.3g} THz"))
        if target_lengths is not None and np.isfinite(target_lengths[k]):
            fig.add_trace(go.Scatter(x=[target_lengths[k] * 100], y=[np.degrees(target_angle)],
                                     mode="markers", showlegend=False,
                                     name=f"length for target at {f / 1e12:.3g} THz"))
    if target_angle is not None:
        fig.add_hline(y=np.degrees(target_angle), line_dash="dash",
                      annotation_text=f"target {np.degrees(target_angle):.3g} deg")
    return _layout(fig, title, xaxis=dict(title="plasma length (cm)", type="log"),
                   yaxis=dict(title="cone angle (deg)"))


def cone_cuts(theta, freqs, values, title, label="energy density (J/(Hz sr))"):
    """Cuts through the cone at several frequencies."""
    fig = go.Figure()
    for f, v in zip(freqs, values):
        fig.add_trace(go.Scatter(x=np.degrees(theta), y=v, mode="lines",
                                 name=f"{f / 1e12:.3g} THz"))
    return _layout(fig, title, xaxis=dict(title="polar angle theta (deg)"),
                   yaxis=dict(title=label, exponentformat="e"))


def line_chart(x, ys, labels, xlabel, ylabel, title, logy=False, bands=None):
    """Several curves sharing one x axis; ``bands`` (lower, upper) pairs shade a spread."""
    fig = go.Figure()
    for k, (y, lab) in enumerate(zip(ys, labels)):
        if bands is not None and bands[k] is not None:
            lo, hi = bands[k]
            fig.add_trace(go.Scatter(x=np.concatenate([x, x[::-1]]),
                                     y=np.concatenate([hi, lo[::-1]]), fill="toself",
                                     line=dict(width=0), opacity=0.25, showlegend=False,
                                     hoverinfo="skip", name=f"{lab} spread"))
        fig.add_trace(go.Scatter(x=x, y=y, mode="lines+markers" if len(x) < 30 else "lines",
                                 name=lab))
    return _layout(fig, title, xaxis=dict(title=xlabel),
                   yaxis=dict(title=ylabel, type="log" if logy else "linear",
                              exponentformat="e"))


def plane_maps(x, y, maps, titles, title, label, unit_scale=1e3, unit="mm"):
    """Detector-plane maps, one per button (x, y in m; each map shape (NY, NX))."""
    fig = go.Figure()
    vmax = max(float(np.nanmax(m)) for m in maps)
    for k, (m, t) in enumerate(zip(maps, titles)):
        fig.add_trace(go.Heatmap(x=x * unit_scale, y=y * unit_scale, z=m, colorscale=_SCALE,
                                 zmin=0, zmax=vmax, visible=(k == 0), name=t,
                                 colorbar=_colorbar(label)))
    buttons = [dict(label=t, method="update",
                    args=[{"visible": [i == k for i in range(len(maps))]},
                          {"title.text": f"{title}: {t}"}])
               for k, t in enumerate(titles)]
    return _layout(fig, f"{title}: {titles[0]}", controls=True,
                   updatemenus=[dict(type="buttons", direction="right", buttons=buttons,
                                     x=0.0, y=1.0, xanchor="left", yanchor="bottom",
                                     pad=dict(b=8))],
                   xaxis=dict(title=f"x ({unit})", scaleanchor="y"),
                   yaxis=dict(title=f"y ({unit})"))


def bar_chart(labels, values, ylabel, title, logy=True):
    """Bars with hover values."""
    fig = go.Figure(go.Bar(x=list(labels), y=list(values), text=[f"{v:.3g}" for v in values],
                           textposition="outside", marker_color="#3b528b"))
    return _layout(fig, title, yaxis=dict(title=ylabel, type="log" if logy else "linear"))


def histogram(samples, xlabel, title, markers=()):
    """Histogram of Monte Carlo samples with labelled vertical markers (label, value)."""
    fig = go.Figure(go.Histogram(x=samples, nbinsx=40, marker_color="#21918c", name="builds"))
    for n, (label, value) in enumerate(markers):
        fig.add_vline(x=value, line_dash="dash", annotation_text=f"{label} {value:.3g}",
                      annotation_position="top left" if n % 2 else "top right")
    return _layout(fig, title, xaxis=dict(title=xlabel), yaxis=dict(title="builds"))


def sky_slider(x_deg, y_deg, maps, steps, title, label, slider_label, active=None,
               target=None):
    """Projected sky maps with a slider over ``steps`` labels, opening at ``active``.

    ``target`` (x, y) in projected degrees is marked on every map.
    """
    active = len(maps) - 1 if active is None else active
    fig = go.Figure()
    for k, m in enumerate(maps):
        fig.add_trace(go.Heatmap(x=x_deg, y=y_deg, z=m, colorscale=_SCALE, visible=(k == active),
                                 colorbar=_colorbar(label), name=steps[k]))
    if target is not None:
        fig.add_trace(_marker(*target))
    extra = [True] if target is not None else []
    sl = [dict(method="update", label=s,
               args=[{"visible": [i == k for i in range(len(maps))] + extra}])
          for k, s in enumerate(steps)]
    return _layout(fig, title, controls=True,
                   sliders=[dict(active=active, steps=sl, pad=dict(t=50),
                                 currentvalue=dict(prefix=f"{slider_label}: "))],
                   xaxis=dict(title="theta cos(phi) (deg)", scaleanchor="y"),
                   yaxis=dict(title="theta sin(phi) (deg)"))


def fit_plot(angle, signal, model, sigma, title, curve=None):
    """Measured scan with error bars, the fitted model as a smooth curve, and residuals.

    ``angle`` in rad; ``curve`` = (angles (rad), model values) on a fine grid.
    """
    from plotly.subplots import make_subplots

    deg = np.degrees(angle)
    fig = make_subplots(rows=2, cols=1, shared_xaxes=True, row_heights=[0.75, 0.25],
                        vertical_spacing=0.06)
    err = None if sigma is None else dict(type="data", array=list(sigma), visible=True)
    fig.add_trace(go.Scatter(x=deg, y=signal, mode="markers", name="measured", error_y=err),
                  row=1, col=1)
    cx, cy = (deg, model) if curve is None else (np.degrees(curve[0]), curve[1])
    fig.add_trace(go.Scatter(x=cx, y=cy, mode="lines", name="fitted model"), row=1, col=1)
    fig.add_trace(go.Scatter(x=deg, y=np.asarray(signal) - np.asarray(model), mode="markers",
                             name="residual", error_y=err), row=2, col=1)
    _layout(fig, title)
    fig.update_xaxes(title_text="angle (deg)", row=2, col=1)
    fig.update_yaxes(title_text="signal", row=1, col=1)
    fig.update_yaxes(title_text="residual", row=2, col=1)
    return fig


def delay_chart(theta, true_time, phase_only, lobe_tt, lobe_po, title):
    """Delays of each column and the main lobe versus the steering angle (all in SI)."""
    from plotly.subplots import make_subplots

    deg = np.degrees(theta)
    fig = make_subplots(rows=1, cols=2, subplot_titles=("delays", "main lobe"),
                        horizontal_spacing=0.12)
    # One trace per family, the columns separated by gaps: a thousand columns stay two
    # traces, which the browser draws at once.
    nx = deg.size
    xs = np.tile(np.append(deg, np.nan), true_time.shape[0])
    for delays, name, dash, color in ((true_time, "true-time", None, "#3b528b"),
                                      (phase_only, "phase-only", "dash", "#5ec962")):
        ys = np.full((delays.shape[0], nx + 1), np.nan)
        ys[:, :nx] = delays * 1e12
        fig.add_trace(go.Scatter(x=xs, y=ys.ravel(), mode="lines", name=name,
                                 line=dict(color=color, width=1, dash=dash),
                                 connectgaps=False), row=1, col=1)
    fig.add_trace(go.Scatter(x=deg, y=np.degrees(lobe_tt), mode="lines+markers",
                             name="lobe, true-time", line=dict(color="#3b528b")), row=1, col=2)
    fig.add_trace(go.Scatter(x=deg, y=np.degrees(lobe_po), mode="lines+markers",
                             name="lobe, phase-only", line=dict(color="#5ec962", dash="dash")),
                  row=1, col=2)
    fig.add_trace(go.Scatter(x=deg, y=deg, mode="lines", name="lobe on target",
                             line=dict(color="gray", dash="dot")), row=1, col=2)
    _layout(fig, title)
    fig.update_xaxes(title_text="target theta (deg)")
    fig.update_yaxes(title_text="delay (ps)", row=1, col=1)
    fig.update_yaxes(title_text="lobe theta (deg)", row=1, col=2)
    return fig
