"""Files a person owns: written whole or not at all, regular files only, read with a bound.

Why: a kill, a full disk or a second program writing at the same moment must
never leave a torn, empty or silently replaced file. Every file Tickbin writes
goes through ``atomic_output``: a temporary file in the same folder (so the
final rename stays on one file system), flushed to disk, given the old file's
mode (or the umask's for a new file) and renamed over the real file behind any
symbolic link. The previous version can be kept as ``NAME.bak``, itself
replaced by a rename. Temporary files carry ``.tickbin-`` in their name; those
a killed run left behind are removed the next time Tickbin writes in that
folder.

A read-modify-write of a drawer holds ``drawer_lock`` (an advisory lock on a
sidecar ``.NAME.lock`` file, there only while held; on systems without
``fcntl`` there is no lock and only the changed-on-disk check guards the file)
and compares ``DiskState`` before writing, so two runs never silently lose each
other's update.
"""

from __future__ import annotations

import contextlib
import hashlib
import os
import secrets
import stat
import tempfile
import time
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path

from core.errors import TickbinError

try:
    import fcntl
except ImportError:  # Windows: no advisory locks here (see the module docstring)
    fcntl = None  # type: ignore[assignment]

TEMP_MARK = ".tickbin-"
TEMP_SUFFIX = ".tmp"
STALE_AFTER_S = 300.0
"""A temporary file older than this was left by a run that was killed."""
LOCK_WAIT_S = 120.0
"""How long a read-modify-write waits for another Tickbin run on the same drawer."""
_SYSTEM_FOLDERS = ("/dev", "/proc", "/sys")


class FileTooLargeError(TickbinError):
    """A file over the reader's size limit (the limit is in ``limit`` bytes)."""

    def __init__(self, path: str, limit: int):
        super().__init__(f"{path}: larger than {limit:,} bytes")
        self.limit = limit


def _kind(mode: int) -> str:
    for test, name in ((stat.S_ISFIFO, "a pipe"), (stat.S_ISCHR, "a device"),
                       (stat.S_ISBLK, "a device"), (stat.S_ISSOCK, "a socket"),
                       (stat.S_ISDIR, "a folder")):
        if test(mode):
            return name
    return "not a regular file"


def real_target(path: str | os.PathLike[str]) -> Path:
    """The regular file a write to ``path`` lands in (symbolic links followed).

    Devices, pipes, sockets, folders and anything under /dev, /proc or /sys are
    refused with one line naming ``path``: Tickbin writes ordinary files only.
    """
    shown = os.fspath(path)
    real = Path(os.path.realpath(path))
    named = Path(os.path.abspath(path))
    if any(p == Path(top) or Path(top) in p.parents
           for top in _SYSTEM_FOLDERS for p in (named, real)):
        raise TickbinError(f"{shown}: a system file, not an ordinary file; choose a file "
                           "name in a folder of yours")
    try:
        mode = os.stat(real).st_mode
    except FileNotFoundError:
        if not real.parent.is_dir():
            raise TickbinError(f"{shown}: no such folder") from None
        return real
    except OSError as e:
        raise TickbinError(f"{shown}: cannot be written ({e.strerror or e})") from None
    if not stat.S_ISREG(mode):
        raise TickbinError(f"{shown}: {_kind(mode)}, not an ordinary file; Tickbin writes "
                           "only to ordinary files")
    return real


def same_file(a: str | os.PathLike[str], b: str | os.PathLike[str]) -> bool:
    """True when both names reach one existing file (links followed)."""
    try:
        return os.path.samefile(a, b)
    except OSError:
        return False


def check_output(path: str | os.PathLike[str],
                 drawer: str | os.PathLike[str] | None) -> Path:
    """``path`` as an output (sheet, netlist): an ordinary file, or a new one, that is not
    the ``drawer`` file it was made from (links followed). Returns the file written."""
    if drawer is not None and same_file(path, drawer):
        raise TickbinError(f"{os.fspath(path)} is the drawer file itself; choose another "
                           "file name for the output")
    return real_target(path)


def _umask() -> int:
    try:
        with open("/proc/self/status", encoding="ascii") as f:
            for line in f:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError, IndexError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def _give_mode(tmp: str, target: Path) -> None:
    """``tmp`` gets ``target``'s mode and owner, or the umask's mode for a new file."""
    try:
        st = os.stat(target)
    except FileNotFoundError:
        os.chmod(tmp, 0o666 & ~_umask())
        return
    os.chmod(tmp, stat.S_IMODE(st.st_mode))
    with contextlib.suppress(OSError):
        if (st.st_uid, st.st_gid) != (os.geteuid(), os.getegid()):
            os.chown(tmp, st.st_uid, st.st_gid)


def clean_stale_temporaries(folder: Path, now: float | None = None) -> None:
    """Remove Tickbin's temporary files in ``folder`` that a killed run left behind."""
    now = time.time() if now is None else now
    with contextlib.suppress(OSError), os.scandir(folder) as entries:
        for entry in entries:
            name = entry.name
            if not (name.startswith(".") and TEMP_MARK in name and name.endswith(TEMP_SUFFIX)):
                continue
            with contextlib.suppress(OSError):
                if (entry.is_file(follow_symlinks=False)
                        and now - entry.stat(follow_symlinks=False).st_mtime > STALE_AFTER_S):
                    os.unlink(entry.path)


def _temp_name(target: Path) -> Path:
    return target.with_name(f".{target.name}{TEMP_MARK}{secrets.token_hex(4)}{TEMP_SUFFIX}")


def _keep_backup(target: Path) -> None:
    """``target`` as it is now becomes ``target.bak``, replaced whole by a rename.

    A hard link costs nothing and keeps the bytes exactly; where links are not
    supported the bytes are copied to a temporary file first.
    """
    bak = target.with_name(target.name + ".bak")
    tmp = _temp_name(bak)
    try:
        try:
            os.link(target, tmp)
        except OSError:
            with open(target, "rb") as src, open(tmp, "xb") as dst:
                while chunk := src.read(1 << 20):
                    dst.write(chunk)
                dst.flush()
                os.fsync(dst.fileno())
        os.replace(tmp, bak)
    finally:
        with contextlib.suppress(OSError):
            os.unlink(tmp)


def _fsync_folder(folder: Path) -> None:
    with contextlib.suppress(OSError):
        fd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


@contextlib.contextmanager
def atomic_output(path: str | os.PathLike[str], *, backup: bool = False) -> Iterator[Path]:
    """A temporary file to write ``path``'s new content to; it replaces ``path`` on success.

    The caller writes the temporary path (any way it likes, e.g. a PDF writer);
    when the ``with`` block ends without an error the file is flushed, given
    the old file's mode, the old file kept as ``.bak`` (with ``backup``) and
    renamed over the real file. On any failure the old file is untouched, the
    temporary file removed and a ``TickbinError`` names ``path``.
    """
    target = real_target(path)
    existed = target.exists()
    clean_stale_temporaries(target.parent)
    tmp: str | None = None
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}{TEMP_MARK}", suffix=TEMP_SUFFIX,
                                   dir=target.parent)
        os.close(fd)
        yield Path(tmp)
        fd = os.open(tmp, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)
        _give_mode(tmp, target)
        if backup and existed:
            with contextlib.suppress(OSError):
                _keep_backup(target)
        os.replace(tmp, target)
        tmp = None
        _fsync_folder(target.parent)
    except OSError as e:
        kept = "the previous file is unchanged" if existed else "nothing was written"
        raise TickbinError(f"{os.fspath(path)}: not saved ({e.strerror or e}); {kept}") from None
    finally:
        if tmp is not None:
            with contextlib.suppress(OSError):
                os.unlink(tmp)


def write_bytes_atomically(path: str | os.PathLike[str], data: bytes, *,
                           backup: bool = False) -> Path:
    """Write ``data`` through ``atomic_output``; returns the real file written."""
    with atomic_output(path, backup=backup) as tmp, open(tmp, "wb") as f:
        f.write(data)
    return Path(os.path.realpath(path))


def write_text_atomically(path: str | os.PathLike[str], text: str, *, backup: bool = True,
                          encoding: str = "utf-8") -> Path:
    """Write ``text`` as it is (no newline translation); see ``atomic_output``."""
    return write_bytes_atomically(path, text.encode(encoding), backup=backup)


def read_regular_file(path: str | os.PathLike[str], limit: int) -> bytes:
    """The bytes of an ordinary file of at most ``limit`` bytes.

    A pipe, a device (/dev/zero) or a folder is refused before anything is read
    (the file is opened without waiting for a writer), and the limit is checked
    while reading, so neither can hang the program or fill its memory.
    Raises ``FileTooLargeError`` over the limit and ``TickbinError`` otherwise.
    """
    shown = os.fspath(path)
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0)
                     | getattr(os, "O_NOCTTY", 0))
    except OSError as e:
        raise TickbinError(f"{shown}: cannot read: {e.strerror or e}") from None
    try:
        mode = os.fstat(fd).st_mode
        if not stat.S_ISREG(mode):
            raise TickbinError(f"{shown}: {_kind(mode)}, not an ordinary file; give a file")
        chunks, size = [], 0
        while size <= limit:
            chunk = os.read(fd, min(1 << 20, limit + 1 - size))
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
    except OSError as e:
        raise TickbinError(f"{shown}: cannot read: {e.strerror or e}") from None
    finally:
        os.close(fd)
    if size > limit:
        raise FileTooLargeError(shown, limit)
    return b"".join(chunks)


# ---------------------------------------------------------------- read-modify-write

@dataclass(frozen=True)
class DiskState:
    """What a file held when it was read: size [bytes], modification time [ns], SHA-256.

    Two states mean the same content when size and hash agree; a touch that
    only moves the time is not a change.
    """

    size: int
    mtime_ns: int
    sha256: str

    @classmethod
    def of(cls, path: str | os.PathLike[str], data: bytes) -> DiskState:
        """The state of ``path`` whose bytes ``data`` were just read."""
        mtime = 0
        with contextlib.suppress(OSError):
            mtime = os.stat(path).st_mtime_ns
        return cls(len(data), mtime, hashlib.sha256(data).hexdigest())

    def same_content(self, other: DiskState | None) -> bool:
        return (other is not None and other.size == self.size
                and other.sha256 == self.sha256)


def disk_state(path: str | os.PathLike[str], limit: int) -> DiskState | None:
    """The state of ``path`` now, or None when it no longer exists (or is not readable)."""
    try:
        return DiskState.of(path, read_regular_file(path, limit))
    except TickbinError:
        return None


_HELD: dict[Path, int] = {}
"""Locks this process holds (real path -> depth), so a nested lock does not wait on itself."""


@contextlib.contextmanager
def drawer_lock(path: str | os.PathLike[str], wait_s: float = LOCK_WAIT_S,
                sleep: Callable[[float], None] = time.sleep) -> Iterator[None]:
    """Hold the lock of the drawer at ``path`` for a read-modify-write.

    Other Tickbin runs on the same drawer wait (up to ``wait_s`` seconds, then
    a ``TickbinError``). The lock is the sidecar ``.NAME.lock`` next to the
    real file (the drawer itself is replaced by a rename on save), removed again
    when the lock is let go.
    """
    real = Path(os.path.realpath(path))
    if fcntl is None or real in _HELD:
        _HELD[real] = _HELD.get(real, 0) + 1
        try:
            yield
        finally:
            _HELD[real] -= 1
            if not _HELD[real]:
                del _HELD[real]
        return
    lock = real.with_name(f".{real.name}.lock")
    deadline = time.monotonic() + wait_s
    while True:  # the lock file is removed after use: lock it, then make sure it is still there
        try:
            fd = os.open(lock, os.O_RDWR | os.O_CREAT, 0o666)
        except OSError as e:
            raise TickbinError(f"{os.fspath(path)}: not saved (cannot lock it: "
                               f"{e.strerror or e}); the previous file is unchanged") from None
        try:
            while True:
                try:
                    fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                    break
                except BlockingIOError:
                    if time.monotonic() > deadline:
                        raise TickbinError(f"{os.fspath(path)}: another Tickbin run is "
                                           "changing this drawer; nothing was changed, try "
                                           "again") from None
                    sleep(0.05)
            held = os.fstat(fd)
            now = os.stat(lock)
        except FileNotFoundError:
            os.close(fd)
            continue
        except BaseException:
            os.close(fd)
            raise
        if (now.st_dev, now.st_ino) == (held.st_dev, held.st_ino):
            break
        os.close(fd)
    _HELD[real] = 1
    try:
        yield
    finally:
        del _HELD[real]
        with contextlib.suppress(OSError):
            os.unlink(lock)
        os.close(fd)


def try_lock(path: str | os.PathLike[str]) -> int | None:
    """Lock ``path`` (created if need be) without waiting: an open descriptor that holds
    the lock until closed, or None when another holder has it.

    The operating system lets go when the holder's process ends, however it ends,
    so a lock nobody holds means its owner is gone (a crash, a kill). On systems
    without ``fcntl`` the lock is ``msvcrt``'s one-byte region lock.
    """
    fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o600)
    try:
        if fcntl is not None:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        else:  # pragma: no cover - Windows
            import msvcrt

            msvcrt.locking(fd, msvcrt.LK_NBLCK, 1)
    except OSError:
        os.close(fd)
        return None
    return fd
