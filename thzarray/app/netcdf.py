"""Results as numbers: labelled datasets (xarray) written to netCDF with units as attributes.

xarray gives gridded results named coordinates and attributes; h5netcdf writes netCDF-4
without a system library. Files are written atomically (see :mod:`thzarray.output`).
"""

from __future__ import annotations

import numpy as np

from thzarray.app.output import atomic_path

__all__ = ["pattern_dataset", "write_netcdf"]


def pattern_dataset(pattern, name: str):
    """A PatternResult as an xarray Dataset with coordinates (freq, theta, phi) and units."""
    import xarray as xr

    unit = "J/(Hz sr)" if pattern.absolute else "J/(Hz sr) per (A s)^2"
    return xr.Dataset(
        {"energy_density": (("freq", "theta", "phi"), pattern.energy_density,
                            {"units": unit, "long_name": "spectral-angular energy density"}),
         "cone_angle": (("freq",), pattern.cone_angles,
                        {"units": "rad", "long_name": "polar angle of the azimuth-averaged maximum"})},
        coords={"freq": ("freq", pattern.freq, {"units": "Hz"}),
                "theta": ("theta", pattern.theta, {"units": "rad", "long_name": "polar angle"}),
                "phi": ("phi", pattern.phi, {"units": "rad", "long_name": "azimuth"})},
        attrs={"design": name, "source": "thzarray far field (traveling line-current model)"},
    )


def write_netcdf(dataset, path, force: bool = False):
    """Write a Dataset to netCDF-4 (h5netcdf engine) atomically."""
    with atomic_path(path, force) as tmp:
        dataset.to_netcdf(tmp, engine="h5netcdf")
    return path


def dataset_to_numpy(dataset, var: str) -> np.ndarray:
    """The values of one variable (helper for tests and scripts)."""
    return np.asarray(dataset[var].values)
