"""An optional on-disk cache of work that depends only on its inputs and this code.

``sizing solve`` (and the chart commands) keep two kinds of entries here: a
requirement file that validated (keyed on its exact bytes, see
:mod:`sizing.inputs.snapshot`) and the built CasADi functions of a problem
structure (see :mod:`sizing.problem.cached`). Every key includes the
:func:`fingerprint` of this code and the libraries the result depends on, so
a changed module or an upgraded library never meets an old entry. Every entry
carries the SHA-256 of its payload: a truncated, corrupted or foreign file is
ignored (and removed), never trusted. The folder is safe to delete at any time.

Where: ``$SIZING_CACHE_DIR``, else ``$XDG_CACHE_HOME/sizing``, else
``~/.cache/sizing``. Off when ``SIZING_CACHE`` is ``0``, ``off``, ``no`` or
``false`` (the test suite turns it off). Failing to read or write the cache
never fails a command: the work is simply done again.
"""
from __future__ import annotations

import contextlib
import hashlib
import os
import sys
import tempfile
from importlib.util import find_spec
from pathlib import Path

FORMAT = b"sizing-cache 1"
_PACKAGES = ("numpy", "casadi", "pydantic", "pydantic_core", "pint", "yaml")
_fingerprint = None


def enabled() -> bool:
    """Whether the cache is on (``SIZING_CACHE`` not set to 0/off/no/false)."""
    return os.environ.get("SIZING_CACHE", "").strip().lower() not in ("0", "off", "no", "false")


def folder() -> Path:
    """The cache folder (not created here)."""
    if os.environ.get("SIZING_CACHE_DIR"):
        return Path(os.environ["SIZING_CACHE_DIR"])
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "sizing"


def _stat_key(path) -> str:
    try:
        st = os.stat(path)
    except OSError:
        return f"{path}:missing"
    return f"{path}:{st.st_size}:{st.st_mtime_ns}"


def fingerprint() -> str:
    """Identity of this code and its libraries: every module of the package (path, size,
    modification time) and the installed files of numpy, CasADi, pydantic, pint and PyYAML
    (the same, for their package files), and the Python version. Computed once per process."""
    global _fingerprint
    if _fingerprint is None:
        h = hashlib.sha256(sys.version.encode())
        pkg = Path(__file__).resolve().parents[1]
        for path in sorted(pkg.rglob("*.py")):
            h.update(_stat_key(path).encode())
        for name in _PACKAGES:
            try:
                spec = find_spec(name)
            except (ImportError, ValueError):
                spec = None
            origin = spec.origin if spec is not None else None
            h.update(f"{name}={_stat_key(origin) if origin else 'absent'}".encode())
            if origin and spec.submodule_search_locations:
                # the package's version module (rewritten by every upgrade)
                for loc in spec.submodule_search_locations:
                    for vname in ("version.py", "_version.py", "version.pyi"):
                        h.update(_stat_key(os.path.join(loc, vname)).encode())
        _fingerprint = h.hexdigest()
    return _fingerprint


def key(kind: str, *parts) -> str:
    """A file name for an entry: the kind and the SHA-256 of the parts and the fingerprint."""
    h = hashlib.sha256(fingerprint().encode())
    for p in parts:
        h.update(b"\0")
        h.update(p if isinstance(p, bytes) else str(p).encode())
    return f"{kind}-{h.hexdigest()}"


def read(name: str) -> bytes | None:
    """The payload of an entry, or None (absent, off, unreadable, or not intact: removed)."""
    if not enabled():
        return None
    path = folder() / name
    try:
        blob = path.read_bytes()
    except OSError:
        return None
    head, sep, payload = blob.partition(b"\n")
    parts = head.split(b" ")
    if (sep and len(parts) == 3 and b" ".join(parts[:2]) == FORMAT
            and parts[2] == hashlib.sha256(payload).hexdigest().encode()):
        return payload
    with contextlib.suppress(OSError):      # damaged: never used, and not kept
        path.unlink()
    return None


def write(name: str, payload: bytes, keep: int = 200) -> None:
    """Store an entry atomically (best effort: a cache that cannot be written is skipped), keeping
    the ``keep`` newest entries of its kind (the part of the name before the first ``-``)."""
    if not enabled():
        return
    where = folder()
    blob = FORMAT + b" " + hashlib.sha256(payload).hexdigest().encode() + b"\n" + payload
    tmp = None
    try:
        where.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{name}.", suffix=".tmp", dir=str(where))
        with os.fdopen(fd, "wb") as fh:
            fh.write(blob)
        os.replace(tmp, where / name)
        tmp = None
        _prune(where, name.split("-", 1)[0], keep)
    except OSError:
        pass
    finally:
        if tmp is not None:
            with contextlib.suppress(OSError):
                os.unlink(tmp)


def _prune(where: Path, kind: str, keep: int) -> None:
    entries = list(where.glob(f"{kind}-*"))
    if len(entries) <= keep:
        return
    entries.sort(key=lambda p: p.stat().st_mtime_ns)
    for p in entries[:len(entries) - keep]:
        with contextlib.suppress(OSError):
            p.unlink()
