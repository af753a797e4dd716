"""Atomic file writes and strict JSON, shared by every module that writes a file.

An output is written to a temporary name in the same folder (created with mode 0o666 so the
umask applies as for any new file), flushed, fsynced and renamed over the target; a failure
leaves an existing file untouched and no temporary file behind.
"""

from __future__ import annotations

import math
import os
import secrets
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from .errors import ProfilecheckError

__all__ = ["atomic_write_bytes", "atomic_write_text", "json_safe"]


def atomic_write_bytes(path: str | os.PathLike[str], data: bytes, *,
                       error: type[ProfilecheckError] = ProfilecheckError) -> None:
    """Write ``data`` to ``path`` atomically; ``error`` is raised when the folder is missing."""
    p = Path(path)
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise error(f"{p}: folder {parent} does not exist")
    tmp = parent / f".{p.name}.{secrets.token_hex(6)}.tmp"
    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, p)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise


def atomic_write_text(path: str | os.PathLike[str], text: str, *,
                      error: type[ProfilecheckError] = ProfilecheckError) -> None:
    """:func:`atomic_write_bytes` of UTF-8 text."""
    atomic_write_bytes(path, text.encode("utf-8"), error=error)


def json_safe(o: Any) -> Any:
    """A JSON-safe copy: non-finite floats become null, numpy scalars plain numbers,
    tuples lists, keys strings."""
    if isinstance(o, float):
        return o if math.isfinite(o) else None
    if isinstance(o, Mapping):
        return {str(k): json_safe(v) for k, v in o.items()}
    if isinstance(o, (list, tuple)):
        return [json_safe(v) for v in o]
    if hasattr(o, "item") and callable(o.item) and not isinstance(o, (str, bytes)):  # numpy scalar
        return json_safe(o.item())
    return o
