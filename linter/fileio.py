"""File writes that never leave a half-written file behind."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def write_atomic(path: str | Path, data: str | bytes) -> None:
    """Write to a temporary file in the same directory, then rename over `path`.

    The rename is atomic on POSIX and Windows, so a crash or a full disk leaves
    either the old file or the new one, never a mixture. The file mode of an
    existing file is kept.
    """
    target = Path(path)
    directory = target.parent if str(target.parent) else Path(".")
    payload = data.encode("utf-8") if isinstance(data, str) else data
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=directory)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(payload)
            handle.flush()
            os.fsync(handle.fileno())
        if target.exists():
            os.chmod(tmp, target.stat().st_mode & 0o7777)
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
