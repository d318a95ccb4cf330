"""Writing results: atomically, and never over an existing file unless asked to.

Every file the tool writes goes through :func:`write_bytes` / :func:`write_text`: the data
are written to a temporary file in the same directory and moved into place with
``os.replace``, so a reader never sees half a file and an interrupted run leaves the old
file intact and no temporary behind. Finished files get the mode the process umask gives
(as ``open`` would), not the 0600 of the temporary.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from thzarray.base.checks import shorten

__all__ = ["OutputExists", "atomic_path", "check_out_dir", "check_writable", "write_bytes",
           "write_text"]


class OutputExists(ValueError):
    """The output file exists and overwriting was not allowed."""


def check_writable(path, force: bool) -> Path:
    """Raise OutputExists when ``path`` exists and ``force`` is False.

    A path that is a directory, or lies under a file, is refused (ValueError) whatever
    ``force`` says.
    """
    path = Path(path)
    shown = shorten(str(path))
    if path.is_dir():
        raise ValueError(f"output {shown!r} is a directory; allowed: a file path")
    if path.exists() and not force:
        raise OutputExists(f"output {shown!r} exists; allowed: a new path, or --force to "
                           "overwrite")
    check_out_dir(path.parent, flag=f"output {shown!r}: directory")
    return path


def check_out_dir(path, flag: str = "--out") -> Path:
    """Raise ValueError unless ``path`` is, or can be made, a writable directory.

    Checked before any work, so that an unusable output directory (an existing file, a
    path under a file, a directory without write permission) is a one-line input error.
    """
    path = Path(path)
    shown = shorten(str(path))
    probe = path
    while not probe.exists():
        if probe.parent == probe:
            break
        probe = probe.parent
    if probe.exists() and not probe.is_dir():
        what = "is a file" if probe == path else f"lies under the file {shorten(str(probe))!r}"
        raise ValueError(f"{flag} = {shown!r} {what}; allowed: a directory (existing or new)")
    if probe.exists() and not os.access(probe, os.W_OK | os.X_OK):
        raise ValueError(f"{flag} = {shown!r}: {shorten(str(probe))!r} is not writable; "
                         "allowed: a directory you can write to")
    return path


def _umask() -> int:
    """The process umask, read without changing it where the system allows."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


class atomic_path:
    """Context manager yielding a temporary path that replaces ``path`` on success.

    For writers that want a file name (matplotlib, netCDF): ``with atomic_path(p, force)
    as tmp: fig.savefig(tmp)``. The temporary file keeps the target's suffix.
    """

    def __init__(self, path, force: bool = False):
        self.path = check_writable(path, force)
        self.tmp = None

    def __enter__(self) -> Path:
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(prefix=f".{self.path.stem}.", suffix=self.path.suffix,
                                       dir=self.path.parent)
        except OSError as exc:
            raise ValueError(f"output {shorten(str(self.path))!r} cannot be written "
                             f"({exc.strerror}); allowed: a path in a writable directory") from None
        os.close(fd)
        self.tmp = Path(tmp)
        return self.tmp

    def __exit__(self, exc_type, exc, tb):
        try:
            if exc_type is None:
                # mkstemp creates 0600; a finished file gets what open() would give it.
                os.chmod(self.tmp, 0o666 & ~_umask())
                os.replace(self.tmp, self.path)
        finally:
            # Also on KeyboardInterrupt or an error inside chmod/replace: no temporary left.
            if self.tmp is not None and self.tmp.exists():
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
