"""The command line in tests: in-process through :func:`sizing.cli.main` (quick: no new
interpreter, no re-import), or the installed console script for the few smoke tests that
must show the real entry point works.

# common practice, no source: a helper that runs the command line; it checks no published value."""
from __future__ import annotations

import contextlib
import io
import os
import signal
import subprocess
import sys
from pathlib import Path
from types import SimpleNamespace

from sizing import cli

ROOT = Path(__file__).resolve().parents[1]
SCRIPT = str(Path(sys.executable).with_name("sizing"))


class Hang(Exception):
    """The command did not finish in time."""


def _alarm(_sig, _frame):
    raise Hang()


def run(*args, cwd=None, limit_s=120):
    """``sizing ARGS`` in this process: an object with returncode, stdout and stderr, as
    :func:`subprocess.run` gives. A command that runs longer than limit_s raises Hang."""
    out, err = io.StringIO(), io.StringIO()
    here = os.getcwd()
    old = signal.signal(signal.SIGALRM, _alarm)
    signal.alarm(limit_s)
    try:
        os.chdir(cwd or ROOT)
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            rc = cli.main([str(a) for a in args])
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)
        os.chdir(here)
    return SimpleNamespace(returncode=rc, stdout=out.getvalue(), stderr=err.getvalue())


def script(*args, cwd=None, timeout=300, env=None):
    """``sizing ARGS`` through the installed console script, in a new process."""
    return subprocess.run([SCRIPT, *map(str, args)], capture_output=True, text=True, cwd=cwd or ROOT,
                          timeout=timeout, env=env)
