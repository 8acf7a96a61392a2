"""Output files and folders written whole or not at all.

:func:`atomic_write` writes a file to a temporary name beside the target and
renames it (readers never see half a file); the file gets the mode an
ordinary new file would (the umask), or keeps the mode of the file it
replaces. :func:`check_writable` tells, before any work, whether a file can
be written there. :class:`FolderSwap` writes a set of files (a study's
outputs) into a fresh hidden folder and swaps it in for the old set whole:
files of an earlier set that the new one does not produce disappear, and two
processes writing to one folder never mix their sets.
"""
from __future__ import annotations

import contextlib
import os
import shutil
import signal
import stat
import tempfile
from pathlib import Path

from .errors import InputError


def umask() -> int:
    """The process umask, read without changing it where the system tells it (Linux)."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    old = os.umask(0o022)        # elsewhere: set and restore (brief, single-threaded use)
    os.umask(old)
    return old


def _new_mode(path: Path, default: int) -> int:
    """Mode for a file or folder replacing ``path``: the existing one's, else ``default``
    less the umask."""
    try:
        return stat.S_IMODE(path.stat().st_mode)
    except OSError:
        return default & ~umask()


FIELD = "-o/--output"


def _cannot(path, e: OSError, what="write") -> InputError:
    reason = e.strerror or str(e)
    if isinstance(e, IsADirectoryError):
        reason = "it is a folder; give a file name"
    elif isinstance(e, (NotADirectoryError, FileExistsError)):
        up = next((a for a in Path(path).parents if a.exists()), None)
        if up is not None and not up.is_dir():
            reason = f"{up} is a file, not a folder"
    return InputError(f"cannot {what} {path}: {reason}", field=FIELD)


def check_writable(path) -> Path:
    """Raise :class:`InputError` (exit 2) unless a file can be written at ``path``: not a
    folder, its folder creatable and writable. Call it before the work that fills the file."""
    path = Path(path)
    if path.is_dir():
        raise InputError(f"cannot write {path}: it is a folder; give a file name", field=FIELD)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=str(path.parent))
        os.close(fd)
        os.unlink(tmp)
    except OSError as e:
        raise _cannot(path, e) from None
    return path


def atomic_write(path, data, mode: str = "w"):
    """Write text or bytes to ``path`` atomically (readers never see half a file).

    The file gets the mode of the file it replaces, or the umask's for a new file
    (0644 under the usual umask 022). A path that cannot be written (a folder, a
    read-only file system) is an :class:`InputError` naming the reason.

    Parameters
    ----------
    path : str or Path
    data : str or bytes
    mode : "w" for text (UTF-8), "wb" for bytes
    """
    path = Path(path)
    if path.is_dir():
        raise InputError(f"cannot write {path}: it is a folder; give a file name", field=FIELD)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=str(path.parent))
    except OSError as e:
        raise _cannot(path, e) from None
    try:
        os.fchmod(fd, _new_mode(path, 0o666))
        with os.fdopen(fd, mode, **({} if "b" in mode else {"encoding": "utf-8", "newline": ""})) as fh:
            fh.write(data)
        os.replace(tmp, path)
    except BaseException as e:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        if isinstance(e, OSError):
            raise _cannot(path, e) from None
        raise
    return path


@contextlib.contextmanager
def _locked(folder: Path):
    """An exclusive lock on a folder (flock on its descriptor) while the block runs; a no-op
    where the system has none."""
    try:
        import fcntl
    except ImportError:          # not POSIX: no lock
        yield
        return
    fd = os.open(folder, os.O_RDONLY)
    try:
        fcntl.flock(fd, fcntl.LOCK_EX)
        yield
    finally:
        os.close(fd)              # closing releases the lock


@contextlib.contextmanager
def _signals_held():
    """SIGINT and SIGTERM wait until the block is done (a swap is never left half-done)."""
    held = {signal.SIGINT, signal.SIGTERM}
    try:
        old = signal.pthread_sigmask(signal.SIG_BLOCK, held)
    except (AttributeError, ValueError, OSError):
        yield
        return
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)


class FolderSwap:
    """A folder whose files are replaced as one set.

    Creating it checks the place and makes a hidden staging folder beside the
    target, so a file in the way, a read-only folder or a foreign folder is an
    :class:`InputError` before any work is done. Write the files into
    :attr:`staging`, then :meth:`commit` swaps the staging folder in for the
    old one (under a lock on the parent folder, with Ctrl-C and SIGTERM held
    for the two renames). Leaving the ``with`` block without a commit removes
    the staging folder and leaves the old set untouched.

    ``replaceable``: names of the files a set consists of; an existing target
    folder holding anything else is refused rather than deleted.
    """

    def __init__(self, path, replaceable=()):
        self.path = Path(path)                              # as given (for messages)
        self.target = Path(os.path.realpath(path))          # the folder itself, links followed
        self.replaceable = frozenset(replaceable)
        self.committed = False
        here = Path(os.path.realpath(os.getcwd()))
        if self.target == here or self.target in here.parents:
            raise InputError(f"cannot write the outputs to {self.path}: it is the current folder or holds "
                             f"it, and the outputs replace the folder whole; give a subfolder", field=FIELD)
        self._refuse_foreign()
        try:
            self.target.parent.mkdir(parents=True, exist_ok=True)
            self.staging = Path(tempfile.mkdtemp(prefix=f".{self.target.name}.", suffix=".new",
                                                 dir=str(self.target.parent)))
        except OSError as e:
            raise _cannot(self.path, e, "write the outputs to") from None
        try:
            os.chmod(self.staging, _new_mode(self.target, 0o777))
        except OSError:
            pass

    def _refuse_foreign(self):
        p = self.target
        try:
            names = sorted(os.listdir(p))
        except FileNotFoundError:          # no folder yet (or another study is swapping it in)
            names = None
        except NotADirectoryError as e:
            if not p.exists():                 # a folder on the way is a file
                raise _cannot(self.path, e, "write the outputs to") from None
            raise InputError(f"cannot write the outputs to {self.path}: it is a file, not a folder",
                             field=FIELD) from None
        except OSError as e:
            raise _cannot(self.path, e, "write the outputs to") from None
        if names is not None:
            foreign = [n for n in names if n not in self.replaceable]
            if foreign:
                shown = ", ".join(foreign[:3]) + (f" and {len(foreign) - 3} more" if len(foreign) > 3 else "")
                raise InputError(f"cannot write the outputs to {self.path}: the folder holds files that are not a "
                                 f"study's outputs ({shown}), and its old outputs are replaced as a whole; "
                                 f"give an empty or new folder", field=FIELD)

    def commit(self) -> None:
        """Swap the staging folder in for the old set (which is removed)."""
        old = None
        t = self.target
        with _locked(t.parent), _signals_held():
            self._refuse_foreign()          # another process may have put something there meanwhile
            if t.exists():
                old = Path(tempfile.mkdtemp(prefix=f".{t.name}.", suffix=".old", dir=str(t.parent)))
                os.replace(t, old / "set")
            os.replace(self.staging, t)
            self.committed = True
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)

    def discard(self) -> None:
        if not self.committed:
            shutil.rmtree(self.staging, ignore_errors=True)

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.discard()
        return False
