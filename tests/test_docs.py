"""Nothing in the repository points at a file outside it, or at a references page it lacks.

Tests and docstrings cite ``docs/references.rst`` for the sources and computed values they
rely on; the page must exist wherever it is named. The repository must also stand alone: no
file may refer to a directory beside the checkout. Both are bookkeeping checks (common
practice, no source).
"""

import re
import shutil
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
# Written in pieces so that this file does not match itself.
OUTSIDE = [".." + "/shared", "/".join(["", "work", "shared"])]
MENTION = re.compile(rb"[\w./-]*references\.rst")
# What a working tree holds besides the repository's own files, when git cannot list them.
UNTRACKED = {".git", ".venv", "__pycache__", ".pytest_cache", ".hypothesis", "build",
             ".ruff_cache"}
GENERATED = ("docs/_build/", "docs/api/")


def repository_files():
    """The files of the repository: tracked plus new ones git does not ignore."""
    if shutil.which("git") and (ROOT / ".git").exists():
        out = subprocess.run(["git", "ls-files", "--cached", "--others", "--exclude-standard",
                              "-z"], cwd=ROOT, capture_output=True, check=True).stdout
        return [ROOT / name for name in out.decode().split("\0") if name]
    return [p for p in ROOT.rglob("*") if p.is_file()
            and not any(part in UNTRACKED or part.endswith(".egg-info")
                        for part in p.relative_to(ROOT).parts)
            and not p.relative_to(ROOT).as_posix().startswith(GENERATED)]


@pytest.fixture(scope="module")
def files():
    found = [p for p in repository_files() if p.is_file()]
    assert any(p.name == "test_docs.py" for p in found)  # the listing did find the repo
    return found


def test_every_named_references_page_exists(files):
    missing, seen = [], 0
    for path in files:
        for match in MENTION.finditer(path.read_bytes()):
            seen += 1
            name = match.group().decode()
            # Read from the repository root (as the tests write it) or from the naming file.
            targets = [(base / name).resolve() for base in (ROOT, path.parent)]
            if not any(t.is_file() and t.is_relative_to(ROOT) for t in targets):
                missing.append(f"{path.relative_to(ROOT)} names {name}")
    assert seen > 0  # the tests do cite the page
    assert missing == []


def test_nothing_points_outside_the_repository(files):
    offenders = [f"{path.relative_to(ROOT)} mentions {needle}"
                 for path in files for needle in OUTSIDE
                 if needle.encode() in path.read_bytes()]
    assert offenders == []


def test_the_references_page_is_in_the_docs():
    # The page is linked from the documentation's front page (its toctree).
    assert (ROOT / "docs/references.rst").is_file()
    assert re.search(r"^\s+references\s*$", (ROOT / "docs" / "index.rst").read_text(),
                     re.MULTILINE)
