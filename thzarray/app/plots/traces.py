"""Figures of waveforms: E(t) and the electro-optic trace at several ranges, and their
spectra (matplotlib for PNG/PDF, plotly for HTML; same content)."""

from __future__ import annotations

import numpy as np

__all__ = ["static_spectra", "static_waveforms", "interactive_spectra",
           "interactive_waveforms"]


def _db(spectrum):
    mag = np.abs(spectrum)
    peak = mag.max()
    return 20 * np.log10(np.maximum(mag, peak * 1e-6) / peak) if peak > 0 else mag * 0


def static_waveforms(time, fields, dry, traces, labels, title, unit):
    """One row per range: E(t) (dry air dashed) and the electro-optic trace.

    Parameters
    ----------
    time : (N,) s; fields, traces : (D, N) (unit, rad); dry : (D, N) or None
    labels : D strings; unit : field unit text
    """
    from matplotlib.figure import Figure

    rows = len(labels)
    fig = Figure(figsize=(9.0, 1.9 * rows + 0.8), layout="constrained")
    axes = fig.subplots(rows, 2, squeeze=False, sharex=True)
    t_ps = time * 1e12
    for i, lab in enumerate(labels):
        ax = axes[i, 0]
        if dry is not None:
            ax.plot(t_ps, dry[i], color="0.6", ls="--", lw=0.9, label="dry air")
        ax.plot(t_ps, fields[i], color="C0", lw=1.0, label="design's air")
        ax.set_ylabel(f"E ({unit})", fontsize=8)
        ax.set_title(f"{lab}: field", fontsize=9)
        ax.grid(True, alpha=0.3)
        ax = axes[i, 1]
        ax.plot(t_ps, traces[i] * 1e3, color="C2", lw=1.0)
        ax.set_ylabel("retardation (mrad)", fontsize=8)
        ax.set_title(f"{lab}: electro-optic trace", fontsize=9)
        ax.grid(True, alpha=0.3)
    if dry is not None:
        axes[0, 0].legend(fontsize=7, loc="upper right")
    for ax in axes[-1]:
        ax.set_xlabel("retarded time (ps)")
    fig.suptitle(title, fontsize=10)
    return fig


def static_spectra(freq, spectra, labels, title, lines=()):
    """``|E(f)|`` in dB of each range's peak, the water lines marked."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(6.4, 4.0), layout="constrained")
    ax = fig.add_subplot()
    for s, lab in zip(spectra, labels):
        ax.plot(freq / 1e12, _db(s), lw=1.0, label=lab)
    for f in lines:
        ax.axvline(f / 1e12, color="0.7", lw=0.6, ls=":")
    ax.set_ylim(-60, 3)
    ax.set_xlabel("frequency (THz)")
    ax.set_ylabel("|E(f)| (dB of its peak)")
    ax.set_title(title, fontsize=10)
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=8)
    return fig


def interactive_waveforms(time, fields, dry, traces, labels, title, unit):
    """The same panels as :func:`static_waveforms`, zoomable."""
    import plotly.graph_objects as go
    from plotly.subplots import make_subplots

    from thzarray.app.plots.interactive import _layout

    rows = len(labels)
    fig = make_subplots(rows=rows, cols=2, shared_xaxes=True,
                        subplot_titles=[f"{lab}: {what}" for lab in labels
                                        for what in ("field", "electro-optic trace")])
    t_ps = time * 1e12
    for i in range(rows):
        if dry is not None:
            fig.add_trace(go.Scatter(x=t_ps, y=dry[i], name="dry air", showlegend=i == 0,
                                     line=dict(color="grey", dash="dash", width=1)), i + 1, 1)
        fig.add_trace(go.Scatter(x=t_ps, y=fields[i], name="design's air", showlegend=i == 0,
                                 line=dict(color="#1f77b4", width=1)), i + 1, 1)
        fig.add_trace(go.Scatter(x=t_ps, y=traces[i] * 1e3, name="trace (mrad)",
                                 showlegend=i == 0, line=dict(color="#2ca02c", width=1)),
                      i + 1, 2)
        fig.update_yaxes(title_text=f"E ({unit})", row=i + 1, col=1)
        fig.update_yaxes(title_text="mrad", row=i + 1, col=2)
    fig.update_xaxes(title_text="retarded time (ps)", row=rows)
    _layout(fig, title, height=260 * rows + 120)
    return fig


def interactive_spectra(freq, spectra, labels, title, lines=()):
    """The same curves as :func:`static_spectra`."""
    import plotly.graph_objects as go

    from thzarray.app.plots.interactive import _layout

    fig = go.Figure()
    for s, lab in zip(spectra, labels):
        fig.add_trace(go.Scatter(x=freq / 1e12, y=_db(s), name=lab))
    for f in lines:
        fig.add_vline(x=f / 1e12, line=dict(color="lightgrey", width=1, dash="dot"))
    fig.update_xaxes(title_text="frequency (THz)")
    fig.update_yaxes(title_text="|E(f)| (dB of its peak)", range=[-60, 3])
    _layout(fig, title)
    return fig
