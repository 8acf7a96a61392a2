"""Requirement files: YAML -> validated models (pydantic) -> :class:`Spec` with its SI tree.

:func:`load` returns a :class:`Spec`: the validated model, the raw data (for
trade studies, which change a value and validate again) and :meth:`Spec.tree`,
the same content as nested dicts of SI floats with the YAML's own key
names, which the physics and the solver read. Every error names the file,
the line and the field path, what was wrong and what would fit.
"""
from __future__ import annotations

import hashlib

from ..common import cache as disk_cache
from ..common.errors import InputError
from ..physics.propulsion import PROPELLER_TYPES
from . import units
from .reader import read_text, read_yaml

# pydantic and the file-format models (``schema``) are imported on first validation: a file
# found in the cache (``load(..., cache=True)``, :mod:`sizing.inputs.snapshot`) needs neither

EMPTY = "the file is empty; a requirement file is a mapping with title, aircraft and requirements"


class Spec:
    """A validated requirement file: the model, its raw data and its SI tree.

    ``model`` is the pydantic model, or for a file read from the cache its
    :class:`~sizing.inputs.snapshot.Node` stand-in (the same attributes).
    """

    def __init__(self, model, data: dict, path: str = "<memory>", text: str = "", tree: dict | None = None):
        self.model = model
        self.data = data
        self.path = path
        self.sha256 = hashlib.sha256(text.encode()).hexdigest() if text else ""
        self._tree = tree
        self.cached = False       # loaded with cache=True: the built problem may use the cache too

    @property
    def title(self) -> str:
        return self.model.title

    @property
    def requirements(self):
        return self.model.requirements

    @property
    def is_propeller(self) -> bool:
        return self.model.aircraft.propulsion.type in PROPELLER_TYPES

    def tree(self) -> dict:
        """Nested dicts of SI floats with the YAML's key names (defaults filled); a new copy."""
        if self._tree is None:
            self._tree = _si(self.model)
        return _copy(self._tree)

    def requirement(self, rid: str):
        for r in self.model.requirements:
            if r.id == rid:
                return r
        raise KeyError(rid)


def _copy(node):
    if isinstance(node, dict):
        return {k: _copy(v) for k, v in node.items()}
    if isinstance(node, list):
        return [_copy(v) for v in node]
    return node


def _si(obj):
    if isinstance(obj, units.Quantity):
        return obj.si
    fields = getattr(type(obj), "model_fields", None)
    if fields is not None:       # a pydantic model
        out = {}
        for name in fields:
            v = getattr(obj, name)
            if v is None:
                continue
            out[name] = _si(v)
        return out
    if isinstance(obj, (list, tuple)):
        return [_si(v) for v in obj]
    if isinstance(obj, bool) or isinstance(obj, str):
        return obj
    if isinstance(obj, int):
        return float(obj)
    return obj


def validate(data, filename: str = "<memory>", lines: dict | None = None, text: str = "") -> Spec:
    """Validate already-parsed YAML data; raise a located InputError.

    The error describes the first problem in file order and carries the
    others in ``InputError.others``.
    """
    from pydantic import ValidationError

    from .locate import located
    from .schema import RequirementFile

    lines = lines or {(): 1}
    if not isinstance(data, dict):
        raise InputError(f"a requirement file is a mapping with title, aircraft and requirements, "
                         f"got {units.describe(data)}", filename, 1)
    try:
        model = RequirementFile.model_validate(data)
    except ValidationError as e:
        errs = located(e, data, lines, filename, RequirementFile)
        if not errs:      # cannot happen with pydantic's errors, but never lose one
            raise InputError(f"invalid requirement file: {e}", filename) from None
        first = errs[0]
        raise InputError(first.message, first.file, first.line, first.field, errs[1:]) from None
    except RecursionError:
        raise InputError("a value refers to itself (cyclic alias) or is nested too deeply", filename) from None
    return Spec(model, data, filename, text)


def load_text(text: str, filename: str = "<memory>") -> Spec:
    data, lines = read_yaml(text, filename, EMPTY)
    return validate(data, filename, lines, text)


def load(path, cache: bool = False) -> Spec:
    """Read and validate a requirement file; raises :class:`InputError`.

    The file is only read, never written; devices, folders and pipes are
    refused (:func:`sizing.inputs.reader.read_text`). With ``cache=True`` (the
    command line's solve and charts) a file that validated before, with the
    same bytes and the same code, is read back from the on-disk cache
    (:mod:`sizing.common.cache`, off when ``SIZING_CACHE=0``) without pydantic; its
    ``model`` is then a :class:`~sizing.inputs.snapshot.Node` tree. A file
    that does not validate is never cached.
    """
    text = read_text(path)
    if not (cache and disk_cache.enabled()):
        return load_text(text, str(path))
    from . import snapshot

    name = disk_cache.key("spec", text.encode("utf-8", "surrogatepass"))
    payload = disk_cache.read(name)
    if payload is not None:
        try:
            model, data, tree = snapshot.restore(payload)
            spec = Spec(model, data, str(path), text, tree)
            spec.cached = True
            return spec
        except ValueError:
            pass                  # not ours after all: validate as if it were absent
    spec = load_text(text, str(path))
    spec.cached = True
    try:
        disk_cache.write(name, snapshot.store(spec.model, spec.data, _si(spec.model)))
    except snapshot.Unsupported:
        pass
    return spec


def json_schema() -> dict:
    """JSON Schema (draft 2020-12) of requirement files, from the same models.

    It checks what JSON Schema can express: key names, value types, the
    kinds, models and engine types, the number-then-unit form of dimensional
    values and the ranges of CLmax, Mach numbers and load factors. Units,
    the other ranges and cross-field rules are checked by :func:`load` only.
    """
    from .schema import RequirementFile

    schema = no_nulls(RequirementFile.model_json_schema())
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "sizing requirement file"
    schema["description"] = ("Performance requirements and aircraft data for requirement-driven "
                             "conceptual sizing (see docs/file-format.md). Dimensional values are strings "
                             "with a unit, e.g. '35000 ft', '250 kn'.")
    return schema


def no_nulls(node):
    """Drop pydantic's ``{"type": "null"}`` alternatives and null defaults: an
    empty value is an error in a requirement file (leave the key out instead)."""
    if isinstance(node, dict):
        out = {}
        for k, v in node.items():
            if k == "default" and v is None:
                continue
            if k == "anyOf" and isinstance(v, list):
                v = [a for a in v if a != {"type": "null"}]
                if len(v) == 1 and isinstance(v[0], dict):
                    inner = no_nulls(v[0])
                    out.update({kk: vv for kk, vv in inner.items() if kk not in out})
                    continue
            out[k] = no_nulls(v)
        return out
    if isinstance(node, list):
        return [no_nulls(v) for v in node]
    return node
