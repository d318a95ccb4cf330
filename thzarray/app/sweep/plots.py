"""Figures of a finished sweep, drawn from its netCDF file: one per measured variable.

Each variable is drawn against the first varied key. Further varied keys become separate
curves; a ``seed`` dimension becomes the mean with a shaded mean +- one standard deviation;
a ``freq`` (or ``source``) dimension gives one curve per value (up to six); other own
dimensions (``theta``, ``phi``) are reduced to their maximum, which the axis label says.
"""

from __future__ import annotations

from itertools import product
from pathlib import Path

import numpy as np

__all__ = ["sweep_figures"]

_MAX_CURVES = 12
_CURVE_DIMS = ("freq", "source")


def _label(dim, value, coord):
    unit = coord.attrs.get("units", "")
    if dim == "freq":
        return f"{value / 1e12:.3g} THz"
    return f"{dim} = {value:.4g}{' ' + unit if unit and unit != '1' else ''}"


def _curves(var, x_dim, sweep_dims):
    """(labels, mean curves, spread bands or None, reduced dims) of one variable."""
    da = var
    reduced = [d for d in da.dims if d not in sweep_dims and d not in _CURVE_DIMS
               and d != "seed"]
    if reduced:
        da = da.max(dim=reduced)
    spread = None
    if "seed" in da.dims:
        spread = da.std(dim="seed")
        da = da.mean(dim="seed")
    other = [d for d in da.dims if d != x_dim]
    labels, ys, bands = [], [], []
    for idx in product(*(range(da.sizes[d]) for d in other)):
        sel = dict(zip(other, idx))
        y = da.isel(sel).values
        labels.append(", ".join(_label(d, float(da[d].values[i]), da[d])
                                for d, i in sel.items()) or var.name)
        ys.append(np.asarray(y, dtype=float))
        if spread is not None:
            s = np.asarray(spread.isel(sel).values, dtype=float)
            bands.append((ys[-1] - s, ys[-1] + s))
        else:
            bands.append(None)
        if len(ys) >= _MAX_CURVES:
            break
    return labels, ys, bands, reduced


def sweep_figures(path, out_dir, force: bool = False, captions=None) -> list:
    """Write a PNG and an HTML figure per variable of the sweep's netCDF file.

    Parameters
    ----------
    path : path
        The sweep's netCDF file.
    out_dir : path
        Where to write ``<sweep>_<variable>.png`` and ``.html``.
    force : bool
        Overwrite existing figures.
    captions : dict, optional
        Filled with a caption per written figure file.

    Returns
    -------
    list of str
        The written files.
    """
    import xarray as xr

    from thzarray.app.commands.common import slug_of, write_all
    from thzarray.app.plots import interactive, static

    with xr.open_dataset(path, engine="h5netcdf") as ds:
        ds = ds.load()
    sweep_dims = [d for d in ds.coords if ds[d].attrs.get("key")]
    if not sweep_dims:
        return []
    x_dim = sweep_dims[0]
    x = np.asarray(ds[x_dim].values, dtype=float)
    x_unit = ds[x_dim].attrs.get("units", "")
    figures = []
    name = slug_of(ds.attrs.get("sweep", Path(path).stem))
    for var_name in ds.data_vars:
        var = ds[var_name]
        if x_dim not in var.dims:
            continue
        labels, ys, bands, reduced = _curves(var, x_dim, sweep_dims)
        unit = var.attrs.get("units", "")
        ylabel = (f"{var_name}{' (' + unit + ')' if unit and unit != '1' else ''}"
                  + (f", max over {', '.join(reduced)}" if reduced else ""))
        xlabel = f"{x_dim}{' (' + x_unit + ')' if x_unit and x_unit != '1' else ''}"
        title = f"{ds.attrs.get('sweep', name)}: {var_name} versus {x_dim}"
        caption = (f"{var_name} of the sweep {ds.attrs.get('sweep', name)!r} versus {x_dim}"
                   + (" (mean and one standard deviation over the seeds)"
                      if any(b is not None for b in bands) else ""))
        figures.append((f"{name}_{slug_of(var_name)}",
                        lambda ys=ys, labels=labels, ylabel=ylabel, xlabel=xlabel, title=title,
                        bands=bands: static.line_chart(x, ys, labels, xlabel, ylabel, title,
                                                       bands=bands),
                        lambda ys=ys, labels=labels, ylabel=ylabel, xlabel=xlabel, title=title,
                        bands=bands: interactive.line_chart(x, ys, labels, xlabel, ylabel,
                                                            title, bands=bands),
                        caption))
    return write_all(Path(out_dir), force, ("png", "html"), figures=figures, captions=captions)
