"""Writing files without losing any: atomic replacement, one lock per stock file, new files that are
whole or absent, appends that roll back, and a guard that no output ever lands on an input.

Every write of drawerfit goes through here (the stock file, its backups and log, reports, exports,
saved designs and kits), so a full disk, a killed process or a symbolic link is handled in one place.
Bytes go out through ``os.write`` (``write_all``), so a test can fail any write in turn.
"""

from __future__ import annotations

import datetime as _dt
import errno
import json
import os
import re
import socket
import stat
import tempfile
from pathlib import Path
from typing import Iterable

from ..parts import DrawerfitError

__all__ = ["FileRefused", "read_limited", "write_all", "real_target", "check_replaceable", "atomic_write", "create_new",
           "append_line", "fsync_dir", "FileLock", "check_output", "stamp", "io_message",
           "LOG_SUFFIX", "LOCK_SUFFIX", "BACKUP_TAG"]

# Files `take` keeps beside a stock file: its log, its lock, and the backups it makes.
LOG_SUFFIX = ".takes.jsonl"
LOCK_SUFFIX = ".take-lock"
BACKUP_TAG = ".backup-"


class FileRefused(DrawerfitError):
    """A write refused before anything changed (an input as output, a read-only file, a held lock)."""


def stamp() -> str:
    """UTC time to the microsecond, usable in a file name."""
    return _dt.datetime.now(_dt.timezone.utc).strftime("%Y%m%dT%H%M%S.%fZ")


def io_message(exc: OSError) -> str:
    """An OSError in words, with the full-disk case said plainly."""
    if exc.errno in (errno.ENOSPC, errno.EDQUOT):
        return "the disk is full (or the quota is used up)"
    return exc.strerror or str(exc)


def read_limited(path: str | os.PathLike, limit: int, error: type[Exception], what: str) -> bytes:
    """The bytes of a small input file (spec, saved design, kit), refused with ``error`` when missing,
    unreadable or larger than ``limit`` (then it is not what it claims to be)."""
    try:
        if os.path.isdir(path):
            raise error(f"{path}: is a folder, not a {what}")
        size = os.path.getsize(path)
        if size > limit:
            raise error(f"{path}: {size:,} bytes is far more than a {what} holds (limit {limit:,}); not read")
        with open(path, "rb") as fh:
            return fh.read(limit + 1)
    except FileNotFoundError:
        raise error(f"{path}: no such file") from None
    except OSError as exc:
        raise error(f"{path}: cannot read ({io_message(exc)})") from None


def write_all(fd: int, data: bytes) -> None:
    """Every byte of ``data`` to ``fd`` (os.write may write fewer than asked)."""
    view = memoryview(data)
    while view:
        n = os.write(fd, view)
        view = view[n:]


def _fill(fd: int, data: bytes) -> None:
    """Every byte of ``data`` into a new file's descriptor, flushed to disk; the descriptor is closed."""
    try:
        write_all(fd, data)
        os.fsync(fd)
    finally:
        os.close(fd)


def fsync_dir(folder: str | os.PathLike) -> None:
    """Flush a folder's entries to disk (after a rename or a new file); best effort."""
    try:
        dfd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dfd)
    except OSError:
        pass
    finally:
        os.close(dfd)


def _unlink_quietly(path: str | os.PathLike) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def real_target(path: str | os.PathLike) -> Path:
    """The file a path names, through a symbolic link: writes go there, in its own folder.

    A path that is not itself a link is kept as written (its folder is the real one already)."""
    return Path(os.path.realpath(path)) if os.path.islink(path) else Path(path)


def check_replaceable(path: str | os.PathLike, what: str = "file") -> Path:
    """The real file behind ``path``, if it may be replaced in place; else FileRefused.

    Refused: a file that is not a regular file, one without write permission for anybody (a
    read-only file stays read-only, even for an administrator), one with several hard links (the
    other names would keep the old contents), and one whose folder cannot take a new file.
    """
    target = real_target(path)
    try:
        st = os.stat(target)
    except FileNotFoundError:
        raise FileRefused(f"{path}: no such {what}") from None
    except OSError as exc:
        raise FileRefused(f"{path}: cannot be read ({io_message(exc)})") from None
    shown = f"{path}" if Path(path) == target else f"{path} (a link to {target})"
    if not stat.S_ISREG(st.st_mode):
        raise FileRefused(f"{shown}: not a plain file")
    if not st.st_mode & 0o222 or not os.access(target, os.W_OK):
        raise FileRefused(f"{shown}: the {what} is read-only; nothing changed (make it writable first if the"
                          " change is wanted)")
    if st.st_nlink > 1:
        raise FileRefused(f"{shown}: the {what} has {st.st_nlink} hard links, and replacing it would leave the"
                          " other names with the old contents; nothing changed (keep one name, or use a"
                          " symbolic link)")
    if not os.access(target.parent, os.W_OK | os.X_OK):
        raise FileRefused(f"{shown}: its folder {target.parent} does not allow new files, which a safe"
                          " replacement needs; nothing changed")
    return target


def _default_mode() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


def atomic_write(path: str | os.PathLike, data: bytes | str) -> Path:
    """Replace (or create) the file at ``path`` with ``data`` all at once; returns the file written.

    A temporary file in the real file's folder is written, flushed to disk and given the old file's
    permissions (or the usual ones), then renamed over the file (atomic on one file system); the
    folder is flushed too.  On any failure the temporary file is removed and the old file is as it was.
    A symbolic link stays a link: the file it points to is the one replaced.
    """
    target = real_target(path)
    raw = data.encode("utf-8") if isinstance(data, str) else data
    try:
        mode = stat.S_IMODE(os.stat(target).st_mode)
    except FileNotFoundError:
        mode = _default_mode()
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    try:
        _fill(fd, raw)
        os.chmod(tmp, mode)
        os.replace(tmp, target)
    except BaseException:
        _unlink_quietly(tmp)
        raise
    fsync_dir(target.parent)
    return target


def create_new(path: str | os.PathLike, data: bytes, mode: int = 0o644) -> None:
    """Create ``path`` (never over an existing file) holding ``data``, flushed; whole or absent.

    FileExistsError when the name is taken; any other failure removes what was begun and re-raises.
    """
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, mode)
    try:
        _fill(fd, data)
    except BaseException:
        _unlink_quietly(path)
        raise
    fsync_dir(Path(path).parent)


def append_line(path: str | os.PathLike, text: str) -> None:
    """Append one line to ``path``, flushed; if the write fails the file is cut back to its old length."""
    data = (text.rstrip("\n") + "\n").encode("utf-8")
    existed = os.path.exists(path)
    fd = os.open(path, os.O_WRONLY | os.O_APPEND | os.O_CREAT, 0o644)
    try:
        size = os.fstat(fd).st_size
        try:
            write_all(fd, data)
            os.fsync(fd)
        except BaseException:
            try:
                os.ftruncate(fd, size)
            except OSError:
                pass
            raise
    finally:
        os.close(fd)
        if not existed and os.path.exists(path) and os.path.getsize(path) == 0:
            _unlink_quietly(path)


# --- the lock of a stock file ----------------------------------------------------------------------

_HOLDER = re.compile(r"^pid (\d+)(?: host (\S+))?(?: start (\d+))?(?: since (\S+))?")


def _start_ticks(pid: int) -> str | None:
    """When a process started (clock ticks since boot, Linux /proc), to tell a reused pid apart."""
    try:
        with open(f"/proc/{pid}/stat", "rb") as fh:
            text = fh.read().decode("ascii", "replace")
    except OSError:
        return None
    after = text.rsplit(")", 1)[-1].split()
    return after[19] if len(after) > 19 else None  # field 22 of proc(5): starttime


def _alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:  # it exists but belongs to someone else
        return True
    return True


class FileLock:
    """A lock file (``<file>.take-lock``) beside a file: one take or undo at a time.

    The lock is made whole or not at all (written to a temporary file, then linked into place, which
    fails if a lock exists), so a full disk never leaves an empty lock.  It records the process id,
    the host and the process start time.  A lock whose process is gone from this host (or whose pid
    now belongs to a process started later) is taken over, and ``note`` says so; a lock from another
    host, or one that cannot be read, is left alone and the take refused.
    """

    def __init__(self, target: str | os.PathLike):
        self.target = Path(target)
        self.path = self.target.with_name(self.target.name + LOCK_SUFFIX)
        self.held = False
        self.note: str | None = None

    def _content(self) -> bytes:
        pid = os.getpid()
        start = _start_ticks(pid)
        start_part = f" start {start}" if start else ""
        return f"pid {pid} host {socket.gethostname()}{start_part} since {stamp()}\n".encode("ascii", "replace")

    def _create(self) -> bool:
        """Make the lock; False when one exists.  OSError (e.g. a full disk) leaves no lock behind."""
        fd, tmp = tempfile.mkstemp(prefix=f".{self.path.name}.", suffix=".tmp", dir=self.path.parent)
        try:
            try:
                write_all(fd, self._content())
            finally:
                os.close(fd)
            try:
                os.link(tmp, self.path)
                return True
            except FileExistsError:
                return False
            except OSError as exc:
                if exc.errno not in (errno.EPERM, errno.ENOTSUP, errno.EOPNOTSUPP, errno.EXDEV, errno.EMLINK):
                    raise
            # a file system without hard links: create in place, removing it again if the write fails
            try:
                create_new(self.path, self._content())
            except FileExistsError:
                return False
            return True
        finally:
            _unlink_quietly(tmp)

    def _holder(self) -> str:
        try:
            with open(self.path, "rb") as fh:
                return fh.read(512).decode("utf-8", "replace").strip()
        except OSError:
            return ""

    def _stale(self, holder: str) -> str | None:
        """Why the lock's holder is gone (None when it may still be running, or cannot be told)."""
        m = _HOLDER.match(holder)
        if not m:
            return None
        pid, host, start = int(m.group(1)), m.group(2), m.group(3)
        if host is not None and host != socket.gethostname():
            return None
        if not _alive(pid):
            return f"process {pid} is no longer running"
        if start is not None and _start_ticks(pid) not in (None, start):
            return f"process {pid} has ended (its number now belongs to another process)"
        return None

    def _take_over(self) -> bool:
        """Replace a stale lock, with every other taker-over kept out by a lock on the folder."""
        try:
            import fcntl
        except ImportError:  # no flock: leave stale locks to the user
            return False
        try:
            dfd = os.open(self.path.parent, os.O_RDONLY)
        except OSError:
            return False
        try:
            fcntl.flock(dfd, fcntl.LOCK_EX)
            holder = self._holder()
            if not os.path.exists(self.path):
                return self._create()
            why = self._stale(holder)
            if why is None:
                return False
            os.unlink(self.path)
            if self._create():
                self.note = f"took over the lock {self.path.name} left by a take that did not finish ({why})"
                return True
            return False
        finally:
            os.close(dfd)  # releases the folder lock

    def acquire(self) -> "FileLock":
        try:
            got = self._create() or self._take_over()
        except OSError as exc:
            raise FileRefused(f"{self.path}: cannot make the lock ({io_message(exc)}); nothing changed") from None
        if not got:
            holder = self._holder()
            host = _HOLDER.match(holder)
            elsewhere = ""
            if host and host.group(2) and host.group(2) != socket.gethostname():
                elsewhere = f" The lock was made on another machine ({host.group(2)}), so it is not taken over."
            raise FileRefused(
                f"{self.path}: another take holds the lock ({holder or 'no details'}); nothing changed.{elsewhere}"
                " If no take is running, delete that lock file and try again")
        self.held = True
        return self

    def release(self) -> None:
        if self.held:
            _unlink_quietly(self.path)
            self.held = False

    def __enter__(self) -> "FileLock":
        return self.acquire()

    def __exit__(self, *exc) -> bool:
        self.release()
        return False


# --- outputs never land on inputs ------------------------------------------------------------------

# What each kind of output is, how its file is named, and how to tell a file we wrote ourselves.
_OUTPUTS = {
    "report": ("HTML report", (".html", ".htm")),
    "netlist": ("SPICE netlist", None),
    "bom": ("parts list", (".csv", ".xlsx")),
    "design": ("saved design", (".toml",)),
    "kit": ("saved kit", (".json",)),
}
_DATA_SUFFIXES = (".csv", ".tsv", ".txt", ".xlsx", ".xlsm", ".xls", ".toml", ".json", ".jsonl", ".html", ".htm")


def _same_file(a: Path, b: Path) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.realpath(a) == os.path.realpath(b)


def _ours(out: Path, kind: str) -> bool:
    """Whether an existing file is an output of this kind that drawerfit wrote (so it may be replaced)."""
    try:
        if kind == "bom" and out.suffix.lower() == ".xlsx":
            return _our_xlsx_bom(out)
        with open(out, "rb") as fh:
            head = fh.read(8192)
    except OSError:
        return False
    text = head.decode("utf-8-sig", "replace")
    if kind == "report":
        return 'name="generator" content="drawerfit' in text or b"Made by drawerfit" in _tail(out)
    if kind == "netlist":
        return "drawerfit export of" in text.split("\n", 1)[0] or "Generated by drawerfit" in text
    if kind == "bom":
        return text.startswith("Designator,Role value,")
    try:
        whole = out.read_text(encoding="utf-8-sig") if out.stat().st_size < 16 * 2**20 else ""
    except (OSError, UnicodeDecodeError):
        return False
    if kind == "design":
        import tomllib

        try:
            doc = tomllib.loads(whole)
        except tomllib.TOMLDecodeError:
            return False
        return "stock_checksum" in doc and "design" in doc
    try:
        doc = json.loads(whole)
    except ValueError:
        return False
    return isinstance(doc, dict) and "pick_list" in doc and "filled" in doc


def _tail(out: Path) -> bytes:
    try:
        with open(out, "rb") as fh:
            fh.seek(max(0, out.stat().st_size - 8192))
            return fh.read()
    except OSError:
        return b""


def _our_xlsx_bom(out: Path) -> bool:
    try:
        from openpyxl import load_workbook

        wb = load_workbook(out, read_only=True)
        try:
            first = next(wb.worksheets[0].iter_rows(min_row=1, max_row=1, values_only=True), ())
        finally:
            wb.close()
    except Exception:  # a damaged or foreign file is simply not ours
        return False
    return tuple(first[:2]) == ("Designator", "Role value")


def check_output(out: str | os.PathLike, inputs: Iterable, kind: str) -> Path:
    """The output path, or FileRefused when writing it would replace an input or a file not ours.

    ``inputs`` are every file the command reads (a path, or a (path, what it is) pair), including a
    stock file a saved design names; an
    output may not be any of them (through links too), nor a stock file's take log, lock or backup.
    An existing file is replaced only when it is an output of the same kind that drawerfit wrote.
    """
    what, suffixes = _OUTPUTS[kind]
    path = Path(out)
    if path.is_dir():
        raise FileRefused(f"{path}: is a folder; name the {what} file to write")
    if not path.parent.exists():
        raise FileRefused(f"{path}: the folder {path.parent} does not exist")
    for inp in inputs:
        inp, role = inp if isinstance(inp, tuple) else (inp, "read by this command")
        if inp and Path(inp).exists() and path.exists() and _same_file(path, Path(inp)):
            raise FileRefused(f"{path}: that is an input file ({role}); the {what} is not written over it."
                              " Choose another name")
    name = path.name
    if name.endswith((LOG_SUFFIX, LOCK_SUFFIX)) or BACKUP_TAG in name:
        raise FileRefused(f"{path}: that name belongs to the take history of a stock file; choose another name")
    suffix = path.suffix.lower()
    if suffixes is not None and suffix not in suffixes:
        raise FileRefused(f"{path}: a {what} is written as {' or '.join(suffixes)}; choose such a name")
    if suffixes is None and suffix in _DATA_SUFFIXES:
        raise FileRefused(f"{path}: a {what} is not written to a {suffix} file (that is how stock files,"
                          " specs and reports are named); use .cir or .sp")
    if path.exists() and not _ours(path, kind):
        raise FileRefused(f"{path}: exists and is not a {what} written by drawerfit, so it is left alone;"
                          " remove it or choose another name")
    return path
