"""Design files: the schema, the checker and the loader (one TOML file, SI inside).

``load_design(path)`` returns a validated :class:`Design`; ``DesignError`` lists every
problem, one line each.
"""

from thzarray.app.design.checker import Checker, DesignError, read_toml, suggest
from thzarray.app.design.load import Design, Grid, load_design, parse_design
from thzarray.app.design.schema import MAX_GRID_POINTS, SCHEMA, Spec

__all__ = ["Checker", "Design", "DesignError", "Grid", "MAX_GRID_POINTS", "SCHEMA", "Spec",
           "load_design", "parse_design", "read_toml", "suggest"]
