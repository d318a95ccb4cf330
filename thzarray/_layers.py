"""The layers of the package, lowest first: the one place their order is written.

A module's layer is the first directory under ``thzarray/``. Modules import from their own
layer and the layers below, never above (``tests/test_layers.py`` checks every import).
The physics core (every layer below ``app``) never imports the libraries in
:data:`CORE_FORBIDDEN`.
"""

LAYERS = ("base", "air", "source", "field", "array", "detect", "inverse", "app")

CORE_FORBIDDEN = frozenset({"matplotlib", "plotly", "argparse", "tqdm", "xarray", "h5netcdf",
                            "h5py", "pint", "tomllib", "dask", "distributed", "json", "csv"})
