"""Reading input files safely: regular files only, a size cap, UTF-8 with or without a BOM.

Every file the tool reads (designs, sweep files, layout tables, scans, detector responses)
goes through :func:`read_text_capped`: special files (devices, pipes, directories) are
refused before anything is read, a file larger than the cap is refused with its size, and
messages never quote the file's content.
"""

from __future__ import annotations

import os
import re
import stat
from pathlib import Path

from thzarray.base.checks import shorten

__all__ = ["MAX_TABLE_BYTES", "quote_cell", "read_text_capped", "resolve_beside"]

MAX_TABLE_BYTES = 16 << 20
"""Largest CSV table read (16 MiB: a few hundred thousand rows)."""


def read_text_capped(path, max_bytes: int, what: str) -> str:
    """The UTF-8 text of a regular file of at most ``max_bytes`` bytes.

    Parameters
    ----------
    path : str or Path
        The file.
    max_bytes : int
        Largest size accepted (bytes).
    what : str
        What the file is (for messages), e.g. "design" or "scan".

    Raises
    ------
    ValueError
        One line naming ``what``, the path (shortened) and the reason.
    """
    name = shorten(str(path))
    try:
        fd = os.open(str(path), os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise ValueError(f"{what} = {name!r} cannot be read ({exc.strerror}); allowed: a "
                         "readable file") from None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode):
            raise ValueError(f"{what} = {name!r} is not a regular file; allowed: a readable "
                             "file")
        if info.st_size > max_bytes:
            raise ValueError(f"{what} = {name!r} has {info.st_size} bytes; allowed: at most "
                             f"{max_bytes} bytes")
        data = os.read(fd, max_bytes + 1)
        chunks = [data]
        while data and sum(map(len, chunks)) <= max_bytes:
            data = os.read(fd, max_bytes + 1)
            chunks.append(data)
        raw = b"".join(chunks)
    finally:
        os.close(fd)
    if len(raw) > max_bytes:
        raise ValueError(f"{what} = {name!r} grew past {max_bytes} bytes while read; allowed: "
                         "a file that does not change")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ValueError(f"{what} = {name!r} is not UTF-8 text (byte {exc.start}); allowed: a "
                         "UTF-8 text file") from None
    return text.removeprefix("\ufeff")


_CELL = re.compile(r"[\w.+\-^/%]{1,24}")


def quote_cell(cell: str) -> str:
    """A cell of an input file as it may appear in a message.

    Short cells made of the characters of numbers, column names and units are quoted; any
    other text (prose, paths with colons, a line of some unrelated file) is described by
    its length only, so a message never shows the content of a file that is not a table.
    """
    cell = cell.strip()
    return repr(cell) if _CELL.fullmatch(cell) else f"a cell of {len(cell)} characters"


def resolve_beside(path, base) -> Path:
    """``path`` taken relative to the directory of the file ``base`` (unless absolute)."""
    p = Path(path)
    if not p.is_absolute() and base is not None:
        p = Path(base).parent / p
    return p
