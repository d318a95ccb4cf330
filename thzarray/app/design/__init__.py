"""Design files: the schema, the checker, the typed sections, the loader and the writer.

``load_design(path)`` returns a validated :class:`Design` (typed sections plus the physics
objects built from them, SI inside); ``DesignError`` lists every problem, one line each;
``design_to_toml`` writes a design that loads back to an equal one.
"""

from thzarray.app.design.checker import Checker, DesignError, GridSpec, read_toml, suggest
from thzarray.app.design.load import Design, Grid, load_design, parse_design
from thzarray.app.design.schema import MAX_GRID_POINTS, SCHEMA, Spec
from thzarray.app.design.sections import SECTION_TYPES, Sections
from thzarray.app.design.write import design_data, design_to_toml

__all__ = ["Checker", "Design", "DesignError", "Grid", "GridSpec", "MAX_GRID_POINTS", "SCHEMA",
           "SECTION_TYPES", "Sections", "Spec", "design_data", "design_to_toml", "load_design",
           "parse_design", "read_toml", "suggest"]
