"""Plotting layer: static figures (matplotlib, PNG/PDF) and interactive HTML (plotly).

The physics core never imports this package. Functions here take arrays with their axes
and labels (SI inside; degrees and THz only on the axes) and return figure objects; saving
goes through :mod:`thzarray.output` so files are written atomically.

- ``static``       matplotlib figures (object-oriented API, no global pyplot state).
- ``interactive``  plotly figures saved as self-contained HTML that works offline.
"""

__all__ = ["static", "interactive"]
