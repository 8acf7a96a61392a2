"""Output files of the charts: figure formats, CSV with the caution as a comment line, JSON text.

Every chart writes the same way: the figure (PNG, SVG or PDF by suffix, no timestamps,
atomically), optionally its data as CSV whose first lines are ``#`` comments (title,
caution) and whose column names carry their units, and a JSON object with every number
labelled by its key (non-finite numbers become null).
"""
from __future__ import annotations

import json
import math

from ..common.caution import CAUTION
from ..common.errors import InputError
from ..common.fileio import atomic_write

SUFFIXES = (".png", ".svg", ".pdf")


def check_output(path, field="-o/--output"):
    """The figure format ("png", "svg", "pdf") of an output path; a located error otherwise."""
    name = str(path).rsplit("/", 1)[-1]
    suffix = ("." + name.rsplit(".", 1)[-1].lower()) if "." in name else ""
    if suffix not in SUFFIXES:
        raise InputError(f"{str(path)!r}: {suffix or 'no suffix'} is not a figure format; use "
                         f"{', '.join(SUFFIXES)}", field=field)
    return suffix[1:]


def csv_text(frame, *comments, float_format="%.6g") -> str:
    """A DataFrame as CSV text after ``#`` comment lines (the caution always the last one); an
    empty cell where no number exists (NaN, and inf: never the text ``inf`` or ``nan``)."""
    import numpy as np

    head = "".join(f"# {c}\n" for c in comments + (CAUTION,) if c)
    frame = frame.replace([np.inf, -np.inf], np.nan)
    return head + frame.to_csv(index=False, lineterminator="\n", float_format=float_format)


def write_chart(figure_bytes, output, frame=None, data=None, comments=()) -> list:
    """Write ``figure_bytes(fmt)`` to ``output`` and, when ``data`` is given, the frame as CSV;
    returns the paths written."""
    fmt = check_output(output)
    written = [atomic_write(output, figure_bytes(fmt), "wb")]
    if data:
        written.append(atomic_write(data, csv_text(frame, *comments), "w"))
    return [str(p) for p in written]


def finite(o):
    """A JSON-ready copy: non-finite floats become None, numpy numbers plain floats."""
    if isinstance(o, dict):
        return {k: finite(v) for k, v in o.items()}
    if isinstance(o, (list, tuple)):
        return [finite(v) for v in o]
    if hasattr(o, "item") and not isinstance(o, (str, bytes)):
        o = o.item()
    if isinstance(o, float):
        return o if math.isfinite(o) else None
    return o


def json_text(obj) -> str:
    return json.dumps(finite(obj), indent=2, allow_nan=False)
