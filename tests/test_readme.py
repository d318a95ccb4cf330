"""Every `>>>` example in README.md runs and prints exactly what the README shows."""
import doctest
from pathlib import Path

import numpy as np

README = Path(__file__).resolve().parents[1] / "README.md"


def test_readme_examples(monkeypatch):
    # README examples open files by paths relative to the repository root.
    monkeypatch.chdir(README.parent)
    np.set_printoptions(legacy=False)
    result = doctest.testfile(str(README), module_relative=False,
                              optionflags=doctest.NORMALIZE_WHITESPACE | doctest.ELLIPSIS,
                              verbose=False)
    assert result.attempted > 0
    assert result.failed == 0, f"{result.failed} README example(s) failed; see output above"
