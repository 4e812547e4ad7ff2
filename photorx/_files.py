"""Atomic file writing shared by every exporter: no partial file is ever left behind.

The content is written to a temporary file in the destination directory, flushed to
disk, and moved over the destination with :func:`os.replace` (atomic on POSIX and on
Windows for a same-volume rename). On any failure the temporary file is removed and the
destination keeps its previous content, or stays absent.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

__all__ = ["atomic_write_bytes", "atomic_write_text"]


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def atomic_write_bytes(path, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically; return the path."""
    path = Path(path)
    directory = path.parent if str(path.parent) else Path(".")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=directory)
    except OSError as exc:  # name the file the user asked for, not the temporary one
        raise OSError(exc.errno, exc.strerror, str(path)) from None
    try:
        # mkstemp makes the file private (0600); give it the mode a plain open() would
        os.chmod(tmp, 0o666 & ~_umask())
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
    return path


def atomic_write_text(path, text: str, encoding: str = "utf-8") -> Path:
    """Write ``text`` to ``path`` atomically (UTF-8, ``\\n`` line ends); return the path."""
    return atomic_write_bytes(path, text.encode(encoding))
