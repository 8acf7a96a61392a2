"""A validated requirement file kept in the on-disk cache, read back without pydantic.

Validating a file needs pydantic and the file-format models, whose import and
schema building cost more than the rest of a ``sizing solve`` together. A
file that validated once, byte for byte the same and with the same code and
libraries (:func:`sizing.common.cache.fingerprint`), validates to the same
models: :func:`store` keeps them as JSON and :func:`restore` gives them back as
:class:`Node` objects with the same attributes (every field and every property
the models define, evaluated when stored), the raw data and the SI tree. A
file that fails validation is never stored: its errors always come from the
models. Values of a type this module does not know are not stored either.
"""
from __future__ import annotations

import json
import math

from .units import Quantity

FORMAT = 1


class Unsupported(TypeError):
    """A value this snapshot cannot keep exactly (the file is then not cached)."""


class Node:
    """A read-only stand-in for one validated model: its fields and properties as attributes.

    Its own two attributes use pydantic's reserved ``model_`` prefix, so that no field of the
    file format can share their names."""

    __slots__ = ("model_name", "model_values")

    def __init__(self, kind: str, values: dict):
        object.__setattr__(self, "model_name", kind)
        object.__setattr__(self, "model_values", values)

    def __getattr__(self, name):
        if name.startswith("model_"):        # not set yet (a copy being made)
            raise AttributeError(name)
        try:
            return self.model_values[name]
        except KeyError:
            raise AttributeError(f"{self.model_name} has no attribute {name!r}") from None

    def __setattr__(self, name, value):
        raise AttributeError(f"{self.model_name} is read-only")

    def __eq__(self, other):
        return (isinstance(other, Node) and self.model_name == other.model_name
                and self.model_values == other.model_values)

    def __hash__(self):
        return hash((self.model_name, tuple(self.model_values)))

    def __reduce__(self):                    # copy, deepcopy and pickle
        return Node, (self.model_name, self.model_values)

    def __repr__(self):
        return f"{self.model_name}({', '.join(f'{k}={v!r}' for k, v in self.model_values.items())})"


def properties(cls) -> list:
    """Names of the properties the project's models define (pydantic's own excluded)."""
    out = []
    for c in cls.__mro__:
        if c.__module__.startswith("sizing."):
            out += [n for n, v in vars(c).items() if isinstance(v, property) and n not in out]
    return out


def dump(obj):
    """A validated model (or a value of one) as JSON-ready data; raises :class:`Unsupported`."""
    fields = getattr(type(obj), "model_fields", None)
    if fields is not None:
        values = {name: dump(getattr(obj, name)) for name in fields}
        for name in properties(type(obj)):
            values[name] = dump(getattr(obj, name))
        return {"m": type(obj).__name__, "v": values}
    if isinstance(obj, Quantity):
        return {"q": [obj.si, obj.text, obj.unit, obj.scale]}
    if isinstance(obj, list):
        return [dump(v) for v in obj]
    if isinstance(obj, tuple):
        return {"t": [dump(v) for v in obj]}
    if obj is None or type(obj) in (bool, str, int):
        return obj
    if type(obj) is float:
        return obj if math.isfinite(obj) else {"f": repr(obj)}
    raise Unsupported(f"cannot keep a {type(obj).__name__} in the cache")


def load(data):
    """The inverse of :func:`dump`: :class:`Node`, :class:`Quantity`, lists, tuples, numbers."""
    if isinstance(data, list):
        return [load(v) for v in data]
    if isinstance(data, dict):
        if "m" in data:
            return Node(data["m"], {k: load(v) for k, v in data["v"].items()})
        if "q" in data:
            return Quantity(*data["q"])
        if "t" in data:
            return tuple(load(v) for v in data["t"])
        if "f" in data:
            return float(data["f"])
    return data


def _plain(node):
    """The raw YAML data, the SI tree: only JSON's own types (floats finite or tagged)."""
    if isinstance(node, dict):
        if not all(type(k) is str for k in node):
            raise Unsupported("a mapping key that is not text")
        return {"d": {k: _plain(v) for k, v in node.items()}}
    if isinstance(node, list):
        return [_plain(v) for v in node]
    if node is None or type(node) in (bool, str, int):
        return node
    if type(node) is float:
        return node if math.isfinite(node) else {"f": repr(node)}
    raise Unsupported(f"cannot keep a {type(node).__name__} in the cache")


def _unplain(node):
    if isinstance(node, list):
        return [_unplain(v) for v in node]
    if isinstance(node, dict):
        if "d" in node:
            return {k: _unplain(v) for k, v in node["d"].items()}
        return float(node["f"])
    return node


def store(model, data, tree) -> bytes:
    """The cache payload of a validated file; raises :class:`Unsupported`."""
    return json.dumps({"format": FORMAT, "model": dump(model), "data": _plain(data), "tree": _plain(tree)},
                      allow_nan=False, separators=(",", ":")).encode()


def restore(payload: bytes):
    """(model, data, tree) from :func:`store`'s payload; raises ValueError on anything else."""
    try:
        d = json.loads(payload)
        if d.get("format") != FORMAT:
            raise ValueError("another format")
        return load(d["model"]), _unplain(d["data"]), _unplain(d["tree"])
    except (KeyError, TypeError, AttributeError, IndexError) as e:
        raise ValueError(f"not a snapshot: {e}") from None
