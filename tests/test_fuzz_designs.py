"""Fuzz corpus (issue 12): mutated example designs and CSV files through the CLI entry.

Every case (tests/fuzzing.py: seeded mutations of every design under designs/, of a layout
table, a detector response and a measured scan) runs in-process through
``thzarray.app.cli.main``: ``check`` for the designs (``fit`` for the scans), then, for
each design that ``check`` accepts (about 40 of the seeded cases), the cheapest job that
uses what was mutated, on cut-down grids. Each run must exit 0 with finite numbers in its
JSON and its CSV files, or 2 with one ``thzarray: error:`` line per problem, at least one
naming the mutated key (or the file's role), and no line longer than a few hundred
characters. Exit 1 (an internal error) or a traceback fails the case. Common practice, no
source.
"""
import json
import re

import pytest
from fuzzing import cheap_job, corpus

from thzarray.app.cli import main
from thzarray.app.design import load_design

pytestmark = pytest.mark.slow

CASES = corpus()
MAX_LINE = 400  # characters: a bad value is echoed in at most ~80


def _reject_constant(name):
    raise AssertionError(f"non-finite number {name} in the JSON output")


def _run(argv, out, capsys):
    rc = main([*argv, "--out", str(out), "--quiet", "--json", "--force"])
    cap = capsys.readouterr()
    return rc, cap.out, cap.err


def _assert_outcome(case, rc, stdout, stderr, what):
    assert "Traceback" not in stderr, f"{case.name} ({what}): traceback\n{stderr[-2000:]}"
    assert rc in (0, 2), f"{case.name} ({what}): exit {rc}\n{stderr[-2000:]}"
    lines = stderr.splitlines()
    for line in lines:
        assert len(line) <= MAX_LINE, f"{case.name} ({what}): a line of {len(line)} chars"
    if rc == 2:
        errors = [ln for ln in lines if ln.startswith("thzarray: error: ")]
        assert errors, f"{case.name} ({what}): exit 2 without an error line\n{stderr}"
        text = "\n".join(errors).lower()
        assert any(n.lower()[:40] in text for n in case.names), (
            f"{case.name} ({what}): no line names any of {case.names}\n{stderr}")
    else:
        json.loads(stdout, parse_constant=_reject_constant)


def _assert_finite_csv(out):
    for path in out.rglob("*.csv"):
        bad = re.search(r"(?i)(?<![a-z])(nan|inf)(?![a-z])", path.read_text())
        assert bad is None, f"{path.name}: {bad.group(0)} in a written table"


def test_the_corpus_is_large_and_covers_every_example():
    from fuzzing import DESIGNS

    assert len(CASES) >= 400
    stems = {c.name.split("#")[0] for c in CASES}
    assert {p.stem for p in DESIGNS} <= stems
    assert {"layout.csv", "response.csv", "scan.csv"} <= stems


@pytest.mark.parametrize("index", range(len(CASES)), ids=lambda i: CASES[i].name[:60])
def test_fuzz_case(index, tmp_path, capsys):
    case = CASES[index]
    for name, content in case.files.items():
        target = tmp_path / name
        if isinstance(content, bytes):
            target.write_bytes(content)
        else:
            target.write_text(content, encoding="utf-8")
    argv = [a.replace("{dir}", str(tmp_path)) for a in case.argv]
    rc, stdout, stderr = _run(argv, tmp_path / "out", capsys)
    _assert_outcome(case, rc, stdout, stderr, argv[0])
    if rc == 0 and argv[0] == "check":  # about 40 of the seeded cases
        job = cheap_job(case, load_design(argv[1]))
        rc, stdout, stderr = _run([job, argv[1]], tmp_path / "job", capsys)
        _assert_outcome(case, rc, stdout, stderr, job)
        assert rc == 0, f"{case.name}: check accepted the design, {job} refused it\n{stderr}"
        _assert_finite_csv(tmp_path / "job")
    if rc == 0 and argv[0] == "fit":
        _assert_finite_csv(tmp_path / "out")
