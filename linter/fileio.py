"""The one atomic file writer of the program (every command writes through it).

`write_atomic` writes to a hidden temporary file beside the target and renames
it over the target, so a crash, a full disk or a kill leaves either the old
file or the new one, never a mixture. Its promises:

* a new file gets the permissions the umask gives (0666 & ~umask), as `open`
  would; an existing file keeps its mode, and its owner and group when the
  process may set them (as root, say);
* a symbolic link is written through: the file it points at is replaced and
  the link stays a link;
* a path that is not a regular file (`/dev/stdout`, a named pipe) is written
  to directly: there is nothing to replace;
* a read-only file is refused (`ReadOnlyFile`), never silently replaced;
* SIGTERM, SIGHUP and Ctrl-C during the write remove the temporary file before
  the process ends (the handlers are installed only while a write is under way
  and the previous ones are restored afterwards).
"""

from __future__ import annotations

import errno
import os
import signal
import stat
import tempfile
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

# Temporary files being written right now; removed by the signal handler.
_PENDING: set[str] = set()
_SIGNALS = tuple(
    getattr(signal, name) for name in ("SIGTERM", "SIGHUP", "SIGINT") if hasattr(signal, name)
)


class ReadOnlyFile(PermissionError):
    """The target exists and is not writable by its permissions: refuse to replace it."""

    def __init__(self, path: str) -> None:
        super().__init__(errno.EACCES, "file is read-only (left unchanged)", path)


def current_umask() -> int:
    # os.umask can only be read by setting it; set it back at once. The CLI is
    # single-threaded while it writes, so nothing else sees the brief 0.
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def resolve_target(path: str | Path) -> Path:
    """The file a write to `path` must replace: symbolic links followed (write through).

    A dangling link points at a file that does not exist yet; it is created there.
    A link loop raises OSError(ELOOP).
    """
    target = Path(path)
    if not target.is_symlink():
        return target
    # strict=False: a dangling link still names where the new file goes. A loop
    # raises RuntimeError on older Pythons and OSError on newer ones.
    try:
        return Path(os.path.realpath(target, strict=True))
    except FileNotFoundError:
        return Path(os.path.realpath(target))
    except (OSError, RuntimeError) as e:
        if isinstance(e, OSError) and e.errno != errno.ELOOP:
            raise
        raise OSError(errno.ELOOP, "symbolic link loop", str(path)) from None


def _cleanup_and_reraise(signum: int, frame: object) -> None:
    for tmp in list(_PENDING):
        try:
            os.unlink(tmp)
        except OSError:
            pass
    _PENDING.clear()
    if signum == getattr(signal, "SIGINT", None):
        raise KeyboardInterrupt
    # End the process as the signal would have (exit status 128 + signum),
    # with the default action, now that nothing is left behind.
    signal.signal(signum, signal.SIG_DFL)
    os.kill(os.getpid(), signum)


@contextmanager
def _signals_clean_up() -> Iterator[None]:
    if threading.current_thread() is not threading.main_thread():
        yield  # signal handlers can only be set from the main thread
        return
    previous = {}
    for sig in _SIGNALS:
        try:
            previous[sig] = signal.signal(sig, _cleanup_and_reraise)
        except (OSError, ValueError):
            pass
    try:
        yield
    finally:
        for sig, handler in previous.items():
            signal.signal(sig, handler)


def write_atomic(path: str | Path, data: str | bytes) -> None:
    """Write `data` (str is encoded as UTF-8) to `path` atomically; see the module doc.

    Raises `ReadOnlyFile` when the target exists without write permission, and
    OSError for other I/O problems; the old file is then unchanged and no
    temporary file is left.
    """
    payload = data.encode("utf-8") if isinstance(data, str) else data
    try:
        special = not stat.S_ISREG(os.stat(path).st_mode)
    except (FileNotFoundError, NotADirectoryError):
        special = False
    if special:
        # /dev/stdout, a named pipe, a terminal: nothing to replace, so write to it
        with open(path, "wb") as handle:
            handle.write(payload)
        return
    target = resolve_target(path)
    directory = target.parent if str(target.parent) else Path(".")
    try:
        st: os.stat_result | None = target.stat()
    except FileNotFoundError:
        st = None
    if st is not None:
        if not (st.st_mode & 0o222) or (os.geteuid() != 0 and not os.access(target, os.W_OK)):
            raise ReadOnlyFile(str(path))
        mode = st.st_mode & 0o7777
    else:
        mode = 0o666 & ~current_umask()
    with _signals_clean_up():
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=directory)
        _PENDING.add(tmp)
        try:
            with os.fdopen(fd, "wb") as handle:
                handle.write(payload)
                handle.flush()
                os.fsync(handle.fileno())
            if st is not None and (st.st_uid != os.geteuid() or st.st_gid != os.getegid()):
                try:
                    os.chown(tmp, st.st_uid, st.st_gid)
                except PermissionError:
                    pass  # only root (or the owner, for the group) may; keep what we can
            os.chmod(tmp, mode)
            os.replace(tmp, target)
        except BaseException:
            try:
                os.unlink(tmp)
            except FileNotFoundError:
                pass
            raise
        finally:
            _PENDING.discard(tmp)
