"""Provenance of results: hashes of input files (file I/O)."""

from __future__ import annotations

import hashlib
from os import PathLike

__all__ = ["sha256_file", "relative_path"]


def sha256_file(path: str | PathLike[str]) -> str:
    """SHA-256 of a file's bytes, hex.

    Examples
    --------
    >>> import tempfile, os
    >>> fd, p = tempfile.mkstemp(); os.write(fd, b"abc"); os.close(fd)
    3
    >>> sha256_file(p)[:16]
    'ba7816bf8f01cfea'
    >>> os.unlink(p)
    """
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for chunk in iter(lambda: f.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def relative_path(path: str | PathLike[str], base: str | PathLike[str]) -> str:
    """``path`` written relative to the folder ``base`` (as a session file names it).

    Results and calibrations then travel with their inputs instead of naming one machine's
    folders; a path on another drive stays absolute.

    Examples
    --------
    >>> relative_path("/data/rig/photos/a.jpg", "/data/rig")
    'photos/a.jpg'
    >>> relative_path("/data/calibration/cam.json", "/data/rig")
    '../calibration/cam.json'
    """
    import os

    try:
        return os.path.relpath(os.fspath(path), os.fspath(base))
    except ValueError:  # another drive (Windows)
        return os.fspath(path)
