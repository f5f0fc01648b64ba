"""Small file helpers: atomic writes and hashing."""
from __future__ import annotations

import contextlib
import hashlib
import os
import tempfile
from collections.abc import Iterator
from pathlib import Path

__all__ = ["temp_beside", "atomic_path", "atomic_write_bytes", "atomic_write_text", "sha256_file"]


def temp_beside(path: Path) -> Path:
    """A new, empty, uniquely named file beside ``path`` (same file system, so a rename onto
    ``path`` is atomic), readable like an ordinary output file (mode 644)."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    os.close(fd)
    os.chmod(tmp, 0o644)
    return Path(tmp)


@contextlib.contextmanager
def atomic_path(path: Path) -> Iterator[Path]:
    """Yield a temporary path beside ``path``; rename it onto ``path`` when the block ends
    normally, remove it when the block raises (no partial file is ever left)."""
    tmp = temp_beside(path)
    try:
        yield tmp
        os.replace(tmp, path)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise


def atomic_write_bytes(path: Path, data: bytes) -> None:
    """Write to a temporary file beside ``path`` and rename it into place (no partial file)."""
    with atomic_path(Path(path)) as tmp:
        tmp.write_bytes(data)


def atomic_write_text(path: Path, text: str) -> None:
    atomic_write_bytes(path, text.encode("utf-8"))


def sha256_file(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()
