"""Sweep integrity: a part is reused only for exactly its inputs and with its own numbers.

Regression tests of issue 12: a layout CSV changed between runs must not leave a stale part
(the reference is a fresh run of the changed sweep), and a part whose numbers were altered
is rejected and computed again. Bookkeeping checks: common practice, no source. That an
8 cm and a 1 m column have clearly different cones at 0.3 THz is the traveling-wave rule
cos(theta_m) = 1 - 0.371 lambda / L (Balanis, Antenna Theory, traveling-wave antennas),
checked below to 2 % as a sanity bound, not as the tested quantity.
"""
import json
import zipfile

import numpy as np
import pytest
import xarray as xr
from numpy.testing import assert_allclose
from scipy.constants import c

from thzarray.app import sweep as sw
from thzarray.app.cli import main

DESIGN = """\
[design]
name = "Table"

[medium]
relative_humidity = "0 %"

[layout]
kind = "csv"
csv = "columns.csv"

[observe]
freq = ["0.3 THz"]
theta = { start = "0 deg", stop = "12 deg", points = 7 }
phi = { start = "0 deg", stop = "360 deg", points = 3 }
"""

SWEEP = """\
[sweep]
name = "Table scan"
design = "table.toml"

[measures]
cone = {}

[vary]
"medium.relative_humidity" = ["0 %", "20 %"]
"""


def _setup(folder, length_cm):
    (folder / "table.toml").write_text(DESIGN)
    (folder / "columns.csv").write_text(f"x_mm,y_mm,length_cm\n0,0,{length_cm}\n")
    path = folder / "sweep.toml"
    path.write_text(SWEEP)
    return path


def _angles_deg(result):
    return np.degrees(result.dataset["cone_angle_uniform"].values)


def test_a_changed_layout_csv_recomputes_the_parts(tmp_path):
    path = _setup(tmp_path, 8)
    out = tmp_path / "out"
    first = sw.run_serial(sw.load_sweep(path), out, progress=False)
    (tmp_path / "columns.csv").write_text("x_mm,y_mm,length_cm\n0,0,100\n")
    again = sw.run_serial(sw.load_sweep(path), out, force=True, progress=False)
    fresh = sw.run_serial(sw.load_sweep(path), tmp_path / "fresh", progress=False)
    assert (again.reused, again.rejected, again.computed) == (0, 2, 2)
    xr.testing.assert_identical(again.dataset, fresh.dataset)
    old, new = _angles_deg(first), _angles_deg(again)
    # Balanis' rule for 8 cm and 1 m at 0.3 THz (vacuum-like dry air): far apart cones.
    lam = c / 0.3e12
    for angles, length in ((old, 0.08), (new, 1.0)):
        assert_allclose(angles, np.degrees(np.arccos(1 - 0.371 * lam / length)), rtol=0.02)
    assert np.all(np.abs(old - new) > 3.0)


def test_an_unchanged_sweep_reuses_every_part(tmp_path):
    path = _setup(tmp_path, 30)
    out = tmp_path / "out"
    first = sw.run_serial(sw.load_sweep(path), out, progress=False)
    again = sw.run_serial(sw.load_sweep(path), out, force=True, progress=False)
    assert (first.reused, first.rejected, first.computed) == (0, 0, 2)
    assert (again.reused, again.rejected, again.computed) == (2, 0, 0)
    xr.testing.assert_identical(again.dataset, first.dataset)


def _tamper(part, scale):
    """Rewrite a part's first data array, times ``scale``, keeping its header."""
    with np.load(part, allow_pickle=False) as npz:
        arrays = {k: npz[k] for k in npz.files}
    header = json.loads(str(arrays["header"]))
    i = next(i for i, e in enumerate(header["variables"]) if not e["coord"])
    arrays[f"a{i}"] = arrays[f"a{i}"] * scale
    with open(part, "wb") as fh:
        np.savez(fh, **arrays)


def test_a_part_with_altered_numbers_is_rejected(tmp_path):
    path = _setup(tmp_path, 30)
    out = tmp_path / "out"
    first = sw.run_serial(sw.load_sweep(path), out, progress=False)
    part = sorted(first.parts.glob("*.npz"))[0]
    _tamper(part, 1.5)
    assert zipfile.is_zipfile(part)  # a well-formed part, only its numbers differ
    status, _ = sw.inspect_part(part, json.loads(str(np.load(part)["header"]))["key"])
    assert status == "rejected"
    again = sw.run_serial(sw.load_sweep(path), out, force=True, progress=False)
    assert (again.reused, again.rejected, again.computed) == (1, 1, 1)
    xr.testing.assert_identical(again.dataset, first.dataset)


def test_the_rerun_reports_reused_rejected_and_recomputed(tmp_path, capsys):
    path = _setup(tmp_path, 30)
    out = tmp_path / "out"
    argv = [str(path), "--out", str(out), "--serial", "--quiet"]
    assert main(["sweep", *argv]) == 0
    capsys.readouterr()
    # Tamper with one part of the CLI's own run and rerun with --json.
    _tamper(sorted((out / "table_scan.parts").glob("*.npz"))[0], 2.0)
    assert main(["sweep", *argv, "--force", "--json"]) == 0
    summary = json.loads(capsys.readouterr().out)
    assert (summary["reused"], summary["rejected"], summary["recomputed"],
            summary["computed"]) == (1, 1, 1, 1)
    assert main(["sweep", *argv, "--force"]) == 0
    text = capsys.readouterr().out
    assert "2 reused, 0 rejected and recomputed, 0 computed new" in text


@pytest.mark.parametrize("junk", [b"", b"PK\x03\x04 not a zip", b"\x00" * 64])
def test_a_broken_part_is_rejected_not_missing(tmp_path, junk):
    path = _setup(tmp_path, 30)
    out = tmp_path / "out"
    first = sw.run_serial(sw.load_sweep(path), out, progress=False)
    part = sorted(first.parts.glob("*.npz"))[0]
    part.write_bytes(junk)
    assert sw.inspect_part(part, "any")[0] == "rejected"
    assert sw.inspect_part(tmp_path / "absent.npz", "any")[0] == "missing"
    again = sw.run_serial(sw.load_sweep(path), out, force=True, progress=False)
    assert (again.reused, again.rejected) == (1, 1)
