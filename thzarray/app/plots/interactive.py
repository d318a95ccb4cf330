"""Interactive figures (plotly) saved as self-contained HTML that works offline."""

from __future__ import annotations

import numpy as np
import plotly.graph_objects as go

from thzarray.app.output import write_text

__all__ = ["save", "sky_map", "cone_chart", "cone_cuts", "line_chart"]

_SCALE = "Viridis"


def save(fig, path, force: bool = False):
    """Write a self-contained HTML page (plotly.js embedded, no network needed)."""
    html = fig.to_html(include_plotlyjs=True, full_html=True,
                       config={"displaylogo": False, "responsive": True})
    return write_text(path, html, force)


def sky_map(x_deg, y_deg, intensity_by_freq, freqs, title, pol=None,
            label="energy density (J/(Hz sr))"):
    """Sky maps in a polar projection with a frequency slider.

    Parameters
    ----------
    x_deg, y_deg : ndarray, shape (N,), (M,)
        Projected angles theta cos(phi), theta sin(phi) (deg).
    intensity_by_freq : ndarray, shape (F, M, N)
    freqs : ndarray, shape (F,) (Hz)
    pol : (ndarray, ndarray), optional
        Polarization components (px, py), shape (F, M, N), drawn as short line segments.
    """
    fig = go.Figure()
    traces_per = 2 if pol is not None else 1
    for k, f in enumerate(freqs):
        fig.add_trace(go.Heatmap(x=x_deg, y=y_deg, z=intensity_by_freq[k], colorscale=_SCALE,
                                 colorbar=dict(title=label), visible=(k == 0),
                                 name=f"{f / 1e12:.3g} THz",
                                 hovertemplate="x %{x:.3f} deg<br>y %{y:.3f} deg<br>%{z:.3e}"
                                               "<extra></extra>"))
        if pol is not None:
            xs, ys = _segments(x_deg, y_deg, pol[0][k], pol[1][k], intensity_by_freq[k])
            fig.add_trace(go.Scatter(x=xs, y=ys, mode="lines", visible=(k == 0),
                                     line=dict(color="white", width=1), hoverinfo="skip",
                                     name="polarization", showlegend=False))
    steps = []
    for k, f in enumerate(freqs):
        vis = [False] * (traces_per * len(freqs))
        vis[traces_per * k: traces_per * (k + 1)] = [True] * traces_per
        steps.append(dict(method="update", label=f"{f / 1e12:.3g} THz",
                          args=[{"visible": vis}, {"title": f"{title} at {f / 1e12:.3g} THz"}]))
    fig.update_layout(title=f"{title} at {freqs[0] / 1e12:.3g} THz",
                      sliders=[dict(active=0, steps=steps, currentvalue=dict(prefix="frequency: "))],
                      xaxis=dict(title="theta cos(phi) (deg)", scaleanchor="y"),
                      yaxis=dict(title="theta sin(phi) (deg)"), template="plotly_white")
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
    fig.update_layout(title=title, xaxis=dict(title="plasma length (cm)", type="log"),
                      yaxis=dict(title="cone angle (deg)"), template="plotly_white")
    return fig


def cone_cuts(theta, freqs, values, title, label="energy density (J/(Hz sr))"):
    """Cuts through the cone at several frequencies."""
    fig = go.Figure()
    for f, v in zip(freqs, values):
        fig.add_trace(go.Scatter(x=np.degrees(theta), y=v, mode="lines",
                                 name=f"{f / 1e12:.3g} THz"))
    fig.update_layout(title=title, xaxis=dict(title="polar angle theta (deg)"),
                      yaxis=dict(title=label), template="plotly_white")
    return fig


def line_chart(x, ys, labels, xlabel, ylabel, title, logy=False, slider_label=None):
    """Several curves sharing one x axis; with ``slider_label`` one curve at a time."""
    fig = go.Figure()
    for k, (y, lab) in enumerate(zip(ys, labels)):
        fig.add_trace(go.Scatter(x=x, y=y, mode="lines", name=lab,
                                 visible=True if slider_label is None else (k == 0)))
    layout = dict(title=title, xaxis=dict(title=xlabel),
                  yaxis=dict(title=ylabel, type="log" if logy else "linear"),
                  template="plotly_white")
    if slider_label is not None:
        steps = [dict(method="update", label=lab,
                      args=[{"visible": [i == k for i in range(len(ys))]}])
                 for k, lab in enumerate(labels)]
        layout["sliders"] = [dict(active=0, steps=steps,
                                  currentvalue=dict(prefix=f"{slider_label}: "))]
    fig.update_layout(**layout)
    return fig


def plane_maps(x, y, maps, titles, title, label, unit_scale=1e3, unit="mm"):
    """Detector-plane maps, one per button (x, y in m; each map shape (NY, NX))."""
    fig = go.Figure()
    vmax = max(float(np.nanmax(m)) for m in maps)
    for k, (m, t) in enumerate(zip(maps, titles)):
        fig.add_trace(go.Heatmap(x=x * unit_scale, y=y * unit_scale, z=m, colorscale=_SCALE,
                                 zmin=0, zmax=vmax, visible=(k == 0), name=t,
                                 colorbar=dict(title=label)))
    buttons = [dict(label=t, method="update",
                    args=[{"visible": [i == k for i in range(len(maps))]}, {"title": f"{title}: {t}"}])
               for k, t in enumerate(titles)]
    fig.update_layout(title=f"{title}: {titles[0]}", template="plotly_white",
                      updatemenus=[dict(type="buttons", direction="right", buttons=buttons,
                                        x=0.0, y=1.12, xanchor="left")],
                      xaxis=dict(title=f"x ({unit})", scaleanchor="y"),
                      yaxis=dict(title=f"y ({unit})"))
    return fig


def bar_chart(labels, values, ylabel, title, logy=True):
    """Bars with hover values."""
    fig = go.Figure(go.Bar(x=list(labels), y=list(values), text=[f"{v:.3g}" for v in values],
                           textposition="outside", marker_color="#3b528b"))
    fig.update_layout(title=title, yaxis=dict(title=ylabel, type="log" if logy else "linear"),
                      template="plotly_white")
    return fig


def histogram(samples, xlabel, title, markers=()):
    """Histogram of Monte Carlo samples with labelled vertical markers (label, value)."""
    fig = go.Figure(go.Histogram(x=samples, nbinsx=40, marker_color="#21918c"))
    for label, value in markers:
        fig.add_vline(x=value, line_dash="dash", annotation_text=f"{label} {value:.3g}")
    fig.update_layout(title=title, xaxis=dict(title=xlabel), yaxis=dict(title="builds"),
                      template="plotly_white")
    return fig


def sky_slider(x_deg, y_deg, maps, steps, title, label, slider_label):
    """Projected sky maps (theta radial, phi around) with a slider over ``steps`` labels."""
    fig = go.Figure()
    for k, m in enumerate(maps):
        fig.add_trace(go.Heatmap(x=x_deg, y=y_deg, z=m, colorscale=_SCALE, visible=(k == 0),
                                 colorbar=dict(title=label), name=steps[k]))
    sl = [dict(method="update", label=s, args=[{"visible": [i == k for i in range(len(maps))]}])
          for k, s in enumerate(steps)]
    fig.update_layout(title=title, template="plotly_white",
                      sliders=[dict(active=0, steps=sl,
                                    currentvalue=dict(prefix=f"{slider_label}: "))],
                      xaxis=dict(title="theta cos(phi) (deg)", scaleanchor="y"),
                      yaxis=dict(title="theta sin(phi) (deg)"))
    return fig


def fit_plot(angle, signal, model, sigma, title):
    """Measured scan, fitted model and residuals (angle in rad)."""
    from plotly.subplots import make_subplots

    deg = np.degrees(angle)
    fig = make_subplots(rows=2, cols=1, shared_xaxes=True, row_heights=[0.75, 0.25])
    err = None if sigma is None else dict(type="data", array=list(sigma))
    fig.add_trace(go.Scatter(x=deg, y=signal, mode="markers", name="measured", error_y=err),
                  row=1, col=1)
    fig.add_trace(go.Scatter(x=deg, y=model, mode="lines", name="fitted model"), row=1, col=1)
    fig.add_trace(go.Scatter(x=deg, y=np.asarray(signal) - np.asarray(model), mode="markers",
                             name="residual"), row=2, col=1)
    fig.update_layout(title=title, template="plotly_white")
    fig.update_xaxes(title_text="angle (deg)", row=2, col=1)
    fig.update_yaxes(title_text="signal", row=1, col=1)
    fig.update_yaxes(title_text="residual", row=2, col=1)
    return fig
