"""The import rules of DEVELOPERS.md, derived from the paths of the modules.

Each module's layer is the first directory under ``thzarray/`` (``base``, ``air``, ...,
``app``); the order is :data:`thzarray._layers.LAYERS`. A module may import from its own
layer and the layers below it, never from a layer above, and nothing below ``app`` imports
the package root (whose ``__init__`` only re-exports) or a plotting, file-format or
terminal library.
"""
import ast
import subprocess
import sys
from pathlib import Path

from thzarray._layers import CORE_FORBIDDEN, LAYERS

PKG = Path(__file__).resolve().parents[1] / "thzarray"


def _imports(path):
    tree = ast.parse(path.read_text())
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield alias.name, node.lineno
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                yield "<relative>", node.lineno
            elif node.module == "thzarray":
                for alias in node.names:
                    sub = alias.name in LAYERS or alias.name.startswith("_")
                    yield (f"thzarray.{alias.name}" if sub else "thzarray"), node.lineno
            else:
                yield node.module, node.lineno


def _layer_of_path(path, root=PKG):
    rel = path.relative_to(root)
    if len(rel.parts) == 1:
        return None  # a top-level file: the package __init__ or a ground-floor private file
    return rel.parts[0]


def _layer_of_module(name):
    parts = name.split(".")
    if parts[0] != "thzarray":
        return "external"
    if len(parts) == 1:
        return "root"
    if parts[1] in LAYERS:
        return parts[1]
    return "top-level"


def _modules(root=PKG):
    return sorted(p for p in root.rglob("*.py") if "__pycache__" not in p.parts)


def test_every_module_sits_in_a_known_layer():
    stray = [str(p.relative_to(PKG)) for p in _modules()
             if _layer_of_path(p) is None and p.name not in ("__init__.py", "_version.py",
                                                              "_layers.py")]
    unknown = sorted({_layer_of_path(p) for p in _modules()} - set(LAYERS) - {None, "data"})
    assert not stray and not unknown, (stray, unknown)


def violations(root=PKG):
    """Every import that points up, is relative, imports the root, or is forbidden."""
    bad = []
    for path in _modules(root):
        layer = _layer_of_path(path, root)
        if layer is None:
            continue
        rank = LAYERS.index(layer)
        for mod, line in _imports(path):
            where = f"{path.relative_to(root)}:{line} imports {mod}"
            if mod == "<relative>":
                bad.append(where + " (use absolute imports)")
                continue
            target = _layer_of_module(mod)
            if target == "root":
                bad.append(where + " (the package root only re-exports)")
            elif target in LAYERS and LAYERS.index(target) > rank:
                bad.append(where + f" (layer {target} is above {layer})")
            elif target == "external" and layer != "app" and mod.split(".")[0] in CORE_FORBIDDEN:
                bad.append(where + " (the physics core does no files, units, terminal or plots)")
    return bad


def test_imports_point_down_only():
    bad = violations()
    assert not bad, "\n".join(bad)


def test_planted_violations_are_caught(tmp_path):
    # The check itself can fail: a fake package with one bad import of each kind.
    for layer, text in (("array", "from thzarray.app.cli import main\n"),
                        ("field", "import matplotlib\n"),
                        ("air", "from thzarray import Filament\n"),
                        ("source", "from .plasma import Plasma\n"),
                        ("detect", "from thzarray.field.farfield import far_field\n")):
        (tmp_path / layer).mkdir()
        (tmp_path / layer / "mod.py").write_text(text)
    bad = violations(tmp_path)
    assert len(bad) == 4 and not any(b.startswith("detect") for b in bad), bad


def test_importing_package_does_not_import_plotting():
    code = ("import sys, thzarray; "
            "bad = [m for m in ('matplotlib', 'plotly', 'xarray', 'tqdm', 'pint', 'dask') "
            "if m in sys.modules]; print(','.join(bad))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_package_exports_are_explicit():
    import thzarray

    assert thzarray.__all__ and all(hasattr(thzarray, n) for n in thzarray.__all__)
    assert len(set(thzarray.__all__)) == len(thzarray.__all__)
    assert "owns" in thzarray.__doc__
