"""The interactive HTML figures render in a real browser (headless Chromium) without script
errors. .ci/run installs Debian's chromium when it is missing; in CI the test never skips."""
import os
import shutil
import subprocess
import tempfile
from pathlib import Path

import pytest

from thzarray.app.cli import main

ROOT = Path(__file__).resolve().parents[1]
CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
if CHROMIUM is None and os.environ.get("CI"):
    raise RuntimeError("CI run without chromium: .ci/run must install Debian's chromium")
pytestmark = pytest.mark.skipif(CHROMIUM is None, reason="chromium not installed (CI installs it)")

_CATCHER = ("<script>window.addEventListener('error', function (e) {"
            "document.documentElement.setAttribute('data-script-errors',"
            "(document.documentElement.getAttribute('data-script-errors') || '') + '|' + e.message);"
            "});</script>")
# After drawing, record any overlap between the title and the buttons, slider, colour-bar
# title or legend (common practice, no source: text that overlaps cannot be read).
_OVERLAP = ("<script>window.addEventListener('load', function () { setTimeout(function () {"
            "var title = document.querySelector('.gtitle'); var hits = [];"
            "if (title) { var t = title.getBoundingClientRect();"
            "document.querySelectorAll('.updatemenu-button, .slider-container, .cbtitle,"
            " .legend').forEach(function (el) { var r = el.getBoundingClientRect();"
            "if (r.width > 0 && r.left < t.right && t.left < r.right && r.top < t.bottom &&"
            " t.top < r.bottom) { hits.push(el.getAttribute('class')); } }); }"
            "document.documentElement.setAttribute('data-overlaps', hits.join(';'));"
            "}, 5000); });</script>")


def render(html_path: Path) -> tuple[str, str]:
    """Load a page in headless Chromium; return the DOM after scripts ran, and stderr."""
    text = html_path.read_text()
    probe = html_path.with_name(html_path.stem + "_probe.html")
    probe.write_text(text.replace("<head>", "<head>" + _CATCHER + _OVERLAP, 1))
    with tempfile.TemporaryDirectory() as profile:
        out = subprocess.run(
            [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
             "--no-first-run", "--disable-background-networking", "--disable-component-update",
             "--disable-sync", f"--user-data-dir={profile}", "--enable-logging=stderr", "--v=0",
             "--virtual-time-budget=20000", "--dump-dom", probe.as_uri()],
            capture_output=True, text=True, timeout=180)
    return out.stdout, out.stderr


def _check(dom, log):
    assert 'class="main-svg"' in dom, "plotly drew no figure"
    errors = dom.split('data-script-errors="')[1][:300] if 'data-script-errors="' in dom else ""
    assert not errors, f"a script error was raised: {errors}"
    assert "Uncaught" not in log
    assert 'data-overlaps=""' in dom, dom.split('data-overlaps="')[1][:200]


def test_gallery_figures_render(tmp_path):
    design = tmp_path / "d.toml"
    design.write_text("""
[design]
name = "browser check"
[medium]
relative_humidity = "40 %"
[filament]
length = "20 cm"
[observe]
freq = ["0.3 THz", "0.6 THz"]
theta = { start = "0 deg", stop = "8 deg", points = 41 }
phi = { start = "0 deg", stop = "360 deg", points = 13 }
[cone]
target_angle = "3 deg"
[outputs]
formats = ["html"]
""")
    assert main(["pattern", str(design), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    pages = sorted((tmp_path / "out").glob("*.html"))
    assert {p.stem.rsplit("_", 1)[-1] for p in pages} >= {"sky", "cuts", "chart"}
    for page in pages:
        dom, log = render(page)
        _check(dom, log)
        # the sky map carries a frequency slider with one step per frequency
        if page.stem.endswith("sky"):
            assert "0.3 THz" in dom and "0.6 THz" in dom


def test_broken_page_is_detected(tmp_path):
    # The probe itself can fail: a page whose script throws is reported.
    page = tmp_path / "bad.html"
    page.write_text("<html><head></head><body><script>undefinedFunction();</script></body></html>")
    dom, _ = render(page)
    assert 'data-script-errors="|' in dom and "undefinedFunction" in dom.split(
        'data-script-errors="')[1]
    assert 'class="main-svg"' not in dom


def test_overlapping_title_is_detected(tmp_path):
    # The overlap probe itself can fail: buttons drawn on top of the title are reported.
    import plotly.graph_objects as go

    from thzarray.app.plots.interactive import save

    fig = go.Figure(go.Scatter(x=[0, 1], y=[0, 1]))
    fig.update_layout(title=dict(text="a long title over the buttons", x=0.05, xanchor="left",
                                 y=0.9, yanchor="middle"), margin=dict(t=80),
                      updatemenus=[dict(type="buttons", direction="right", x=0.0, y=1.12,
                                        xanchor="left", yanchor="middle",
                                        buttons=[dict(label="a wide button", method="restyle",
                                                      args=[{}])])])
    page = save(fig, tmp_path / "overlap.html")
    dom, _ = render(page)
    assert "updatemenu-button" in dom.split('data-overlaps="')[1][:200]


def test_array_figures_render(tmp_path, array_design):
    # The steered-lobe page (delay-scale slider opening at the designed delays, target
    # marked), the delay chart, the gain bars and the tolerance histogram.
    design = array_design("browser array", formats=("html",))
    out = tmp_path / "out"
    for command in ("steer", "compare", "tolerance"):
        assert main([command, str(design), "--out", str(out), "--quiet"]) == 0
    pages = sorted(p for p in out.glob("*.html") if not p.stem.endswith("_probe"))
    assert len(pages) == 4
    for page in pages:
        dom, log = render(page)
        _check(dom, log)
        if page.stem.endswith("steered"):
            assert "fraction of the designed delays: 1.00" in dom and ">target<" in dom
