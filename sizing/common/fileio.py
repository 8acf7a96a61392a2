"""Atomic output files: write to a temporary file beside the target, then rename."""
from __future__ import annotations

import os
import tempfile
from pathlib import Path


def atomic_write(path, data, mode: str = "w"):
    """Write text or bytes to ``path`` atomically (readers never see half a file).

    Parameters
    ----------
    path : str or Path
    data : str or bytes
    mode : "w" for text (UTF-8), "wb" for bytes
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=str(path.parent))
    try:
        with os.fdopen(fd, mode, **({} if "b" in mode else {"encoding": "utf-8", "newline": ""})) as fh:
            fh.write(data)
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    return path
