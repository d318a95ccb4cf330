"""The import rules of DEVELOPERS.md: layers point one way; the core never plots or parses."""
import ast
import subprocess
import sys
from pathlib import Path

PKG = Path(__file__).resolve().parents[1] / "thzarray"
EDGE = {"cli", "design", "jobs", "report", "output", "units", "plots", "sweep", "tables"}
FORBIDDEN_IN_CORE = {"matplotlib", "plotly", "argparse", "tqdm", "xarray", "h5netcdf", "pint",
                     "tomllib"}


def _imports(path):
    tree = ast.parse(path.read_text())
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield alias.name, 0
        elif isinstance(node, ast.ImportFrom):
            yield (node.module or ""), node.level


def _module_name(path):
    rel = path.relative_to(PKG).with_suffix("")
    return rel.parts[0]


def test_core_does_not_import_edge_or_plotting():
    bad = []
    for path in PKG.rglob("*.py"):
        name = _module_name(path)
        if name in EDGE or name == "__init__":
            continue
        for mod, level in _imports(path):
            top = mod.split(".")[0]
            if level == 0 and top in FORBIDDEN_IN_CORE:
                bad.append(f"{path.name} imports {mod}")
            if level > 0 and top in EDGE:
                bad.append(f"{path.name} imports .{mod}")
    assert not bad, bad


def test_plots_do_not_import_cli():
    for path in (PKG / "plots").glob("*.py"):
        for mod, level in _imports(path):
            assert not mod.endswith("cli"), f"{path.name} imports {mod}"


def test_importing_package_does_not_import_plotting():
    code = ("import sys, thzarray; "
            "bad = [m for m in ('matplotlib', 'plotly', 'xarray', 'tqdm', 'pint') if m in sys.modules]; "
            "print(','.join(bad))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_package_exports_are_explicit():
    import thzarray

    assert thzarray.__all__ and all(hasattr(thzarray, n) for n in thzarray.__all__)
    assert "module owns what" in thzarray.__doc__
