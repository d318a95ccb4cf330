"""Sphinx configuration of the thzarray API reference (``make docs``, warnings are errors).

The reference is generated from the numpydoc docstrings: ``api.rst`` asks autosummary for the
package recursively, so a new public module appears without editing the docs. Private modules
(a leading underscore: the compiled kernels, the layer table, the version) are left out. The
build needs no network.
"""

import importlib
import sys

import thzarray

project = "thzarray"
author = "the thzarray developers"
copyright = "the thzarray developers"
release = thzarray.__version__
version = release

extensions = [
    "sphinx.ext.autodoc",
    "sphinx.ext.autosummary",
    "sphinx.ext.mathjax",
    "sphinx-mathjax-offline",  # serves MathJax from _static: formulas render without network
    "numpydoc",
]

templates_path = ["_templates"]
exclude_patterns = ["_build"]

# One page per module, written at build time into docs/api/ (not tracked).
autosummary_generate = True
autosummary_imported_members = False
autodoc_member_order = "bysource"
autodoc_typehints = "signature"

# numpydoc renders the sections; the class pages list their own members through autodoc.
numpydoc_show_class_members = False
numpydoc_class_members_toctree = False

html_theme = "alabaster"
html_title = f"thzarray {release}"
html_static_path = []


def _outside_all(app, what, name, obj, skip, options):
    """Document a module-level function or class exactly when its module's ``__all__`` has it.

    autodoc already follows ``__all__``; this makes the summary tables that autosummary writes
    on each module page follow it too (they would otherwise list every name without an
    underscore, including helpers the module keeps to itself), and keeps a declared public
    name on its page even before it has a docstring.
    """
    if getattr(obj, "__qualname__", None) != name:
        return None  # not a function or class defined at module level
    module = sys.modules.get(getattr(obj, "__module__", None) or "")
    public = getattr(module, "__all__", None)
    if public is None:
        return None
    return name not in public


def _lookup(path):
    """The object a dotted path names, importing its longest importable prefix, or None."""
    parts = path.split(".")
    for i in range(len(parts), 0, -1):
        try:
            obj = importlib.import_module(".".join(parts[:i]))
        except ImportError:
            continue
        for attr in parts[i:]:
            obj = getattr(obj, attr, None)
        return obj
    return None


def _where_defined(app, env, node, contnode):
    """Resolve a reference written through a re-export or an import to where it is defined.

    ``:func:`thzarray.far_field``` and, inside a module that imports it,
    ``:meth:`Medium.air``` point at the object's own page
    (``thzarray.field.farfield.far_field``, ``thzarray.air.medium.Medium.air``).
    """
    if node.get("refdomain") != "py":
        return None
    target = node["reftarget"]
    modname = node.get("py:module")
    obj = _lookup(f"{modname}.{target}") if modname else None
    obj = obj if obj is not None else _lookup(target)
    obj = getattr(obj, "fget", obj)  # a property: its getter carries the names
    if isinstance(obj, type(sys)):
        canonical = obj.__name__
    else:
        home, qualname = getattr(obj, "__module__", None), getattr(obj, "__qualname__", None)
        if not (isinstance(home, str) and isinstance(qualname, str)):
            return None
        canonical = f"{home}.{qualname}"
    if not canonical.startswith("thzarray.") or canonical == target:
        return None
    return env.get_domain("py").resolve_xref(
        env, node["refdoc"], app.builder, node["reftype"], canonical, node, contnode)


def setup(app):
    app.connect("autodoc-skip-member", _outside_all)
    app.connect("missing-reference", _where_defined)
