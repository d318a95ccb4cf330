"""Writing results: atomically, and never over an existing file unless asked to.

Every file the tool writes goes through :func:`write_bytes` / :func:`write_text`: the data
are written to a temporary file in the same directory and moved into place with
``os.replace``, so a reader never sees half a file and an interrupted run leaves the old
file intact.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

__all__ = ["OutputExists", "check_writable", "write_bytes", "write_text", "atomic_path"]


class OutputExists(ValueError):
    """The output file exists and overwriting was not allowed."""


def check_writable(path, force: bool) -> Path:
    """Raise OutputExists when ``path`` exists and ``force`` is False."""
    path = Path(path)
    if path.exists() and not force:
        raise OutputExists(f"output {str(path)!r} exists; allowed: a new path, or --force to "
                           "overwrite")
    return path


class atomic_path:
    """Context manager yielding a temporary path that replaces ``path`` on success.

    For writers that want a file name (matplotlib, netCDF): ``with atomic_path(p, force)
    as tmp: fig.savefig(tmp)``. The temporary file keeps the target's suffix.
    """

    def __init__(self, path, force: bool = False):
        self.path = check_writable(path, force)
        self.tmp = None

    def __enter__(self) -> Path:
        self.path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{self.path.stem}.", suffix=self.path.suffix,
                                   dir=self.path.parent)
        os.close(fd)
        self.tmp = Path(tmp)
        return self.tmp

    def __exit__(self, exc_type, exc, tb):
        if exc_type is None:
            os.replace(self.tmp, self.path)
        elif self.tmp is not None and self.tmp.exists():
            self.tmp.unlink()
        return False


def write_bytes(path, data: bytes, force: bool = False) -> Path:
    """Write ``data`` to ``path`` atomically; refuse to overwrite unless ``force``."""
    with atomic_path(path, force) as tmp:
        tmp.write_bytes(data)
    return Path(path)


def write_text(path, text: str, force: bool = False) -> Path:
    """Write UTF-8 ``text`` to ``path`` atomically; refuse to overwrite unless ``force``."""
    return write_bytes(path, text.encode("utf-8"), force)
