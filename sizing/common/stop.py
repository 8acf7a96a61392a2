"""Stop requests: Ctrl-C (SIGINT) and SIGTERM honoured promptly, also inside the optimizer.

IPOPT runs inside CasADi, which polls Python's signal handlers while it
solves: the handler of :func:`handling` raises :class:`Interrupted`, CasADi
turns that into a failed solve (``NonIpopt_Exception_Thrown``) and goes on.
So the handler also records the request, and :func:`check`, called before
and after every solve, raises it again: a stop request is never taken for
a point that merely failed. :func:`worker_signals` makes a worker process
leave signals to its parent and die with it.
"""
from __future__ import annotations

import contextlib
import os
import signal
import sys
import threading

NAMES = {signal.SIGINT: "SIGINT (Ctrl-C)", signal.SIGTERM: "SIGTERM"}


class Interrupted(KeyboardInterrupt):
    """A stop request by a signal; ``exit_code`` is 128 + the signal number (130, 143)."""

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = int(signum)

    @property
    def exit_code(self) -> int:
        return 128 + self.signum

    def __str__(self) -> str:
        return f"stopped by {NAMES.get(self.signum, f'signal {self.signum}')}"


_requested: int | None = None
_depth = 0


def requested() -> int | None:
    """The signal number of a pending stop request, or None."""
    return _requested


def check() -> None:
    """Raise :class:`Interrupted` when a stop was requested (call around every solve)."""
    if _requested is not None:
        raise Interrupted(_requested)


def _handler(signum, _frame):
    global _requested
    _requested = signum
    raise Interrupted(signum)


class _Quiet:
    """sys.stderr, less CasADi's report of the interrupt it was asked to make (a line it
    writes in pieces, once a stop is requested)."""

    def __init__(self, stream):
        self.stream = stream
        self.pending = ""

    def write(self, text):
        if _requested is None and not self.pending:
            return self.stream.write(text)
        self.pending += text
        *lines, self.pending = self.pending.split("\n")
        for line in lines:
            if "KeyboardInterruptException" not in line:
                self.stream.write(line + "\n")
        return len(text)

    def flush_pending(self):
        if self.pending and "KeyboardInterruptException" not in self.pending:
            self.stream.write(self.pending)
        self.pending = ""

    def __getattr__(self, name):
        return getattr(self.stream, name)


@contextlib.contextmanager
def handling(signals=(signal.SIGINT, signal.SIGTERM)):
    """Within the block, SIGINT and SIGTERM raise :class:`Interrupted` (and are recorded for
    :func:`check`). A signal the caller ignores (a background job's SIGINT) stays ignored.
    Only the main thread can install handlers; elsewhere this does nothing."""
    global _requested, _depth
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    old = {}
    for s in signals:
        if signal.getsignal(s) is not signal.SIG_IGN:
            old[s] = signal.signal(s, _handler)
    if _depth == 0:
        _requested = None
    _depth += 1
    stream = sys.stderr
    quiet = sys.stderr = _Quiet(stream)
    try:
        yield
    finally:
        _depth -= 1
        for s, h in old.items():
            signal.signal(s, h)
        quiet.flush_pending()
        if sys.stderr is quiet:
            sys.stderr = stream
        if _depth == 0:
            _requested = None


def worker_signals(parent_pid: int) -> None:
    """In a worker process: ignore Ctrl-C (the parent decides), die at once on SIGTERM, and
    die when the parent dies (Linux PR_SET_PDEATHSIG; elsewhere a thread watching the
    parent's pid)."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    if not _parent_death_signal():
        threading.Thread(target=_watch_parent, args=(parent_pid,), daemon=True).start()
    if os.getppid() != parent_pid:      # the parent died before the watch began
        os.kill(os.getpid(), signal.SIGKILL)


def _parent_death_signal() -> bool:
    if not sys.platform.startswith("linux"):
        return False
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        PR_SET_PDEATHSIG = 1
        return libc.prctl(PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0) == 0
    except (OSError, AttributeError):
        return False


def _watch_parent(parent_pid: int) -> None:
    import time

    while os.getppid() == parent_pid:
        time.sleep(0.5)
    os.kill(os.getpid(), signal.SIGKILL)
