"""The project's small exception tree.

The CLI maps the exceptions to exit codes: :class:`InputError` 2, other
:class:`SizingError` 1. :class:`FieldError` is raised inside the
requirement-file models and becomes a located :class:`InputError`
(:func:`sizing.inputs.locate.located`).
"""
from __future__ import annotations


class SizingError(Exception):
    """Base of every error this package raises on purpose."""


class InputError(SizingError, ValueError):
    """Bad input, located: file, line and field path (exit code 2).

    ``others`` holds further problems found in the same file (each an
    :class:`InputError`); :meth:`describe` lists them after the first.

    >>> InputError("mach -0.6 must lie in (0, 5]", "a.yaml", 12, "requirements[1].mach").describe()
    'a.yaml:12: requirements[1].mach: mach -0.6 must lie in (0, 5]'
    """

    def __init__(self, message: str, file: str | None = None, line: int | None = None,
                 field: str | None = None, others=()):
        self.message, self.file, self.line, self.field = message, file, line, field
        self.others = tuple(others)
        super().__init__(self.describe())

    def where(self) -> str:
        """'file:line: field: ' prefix (parts that are known)."""
        where = ""
        if self.file:
            where = f"{self.file}:{self.line}: " if self.line else f"{self.file}: "
        field = f"{self.field}: " if self.field else ""
        return f"{where}{field}"

    def describe(self) -> str:
        text = f"{self.where()}{self.message}"
        if self.others:
            n = len(self.others)
            text += f"\n  and {n} more problem{'s' if n > 1 else ''}:"
            for o in self.others:
                text += f"\n    {o.where()}{o.message}"
        return text


class FieldError(ValueError):
    """A model-level check that blames one field (path relative to the model).

    Raised inside pydantic validators; :func:`located` points the message at
    that field's line.
    """

    def __init__(self, field, message: str):
        self.path = tuple(field) if isinstance(field, (tuple, list)) else (field,)
        super().__init__(message)


class ModelRangeError(SizingError, ValueError):
    """A physics model was asked for a value outside its validity range."""


class SolverError(SizingError, RuntimeError):
    """The optimizer failed to produce a verified answer (exit code 1)."""
