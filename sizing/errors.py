"""The project's small exception tree; the CLI maps it to exit codes."""
from __future__ import annotations


class SizingError(Exception):
    """Base of every error this package raises on purpose."""


class InputError(SizingError, ValueError):
    """Bad input, located: file, line and field path (exit code 2)."""

    def __init__(self, message: str, file: str | None = None, line: int | None = None,
                 field: str | None = None):
        self.message, self.file, self.line, self.field = message, file, line, field
        super().__init__(self.describe())

    def describe(self) -> str:
        where = ""
        if self.file:
            where = f"{self.file}:{self.line}: " if self.line else f"{self.file}: "
        field = f"{self.field}: " if self.field else ""
        return f"{where}{field}{self.message}"


class ModelRangeError(SizingError, ValueError):
    """A physics model was asked for a value outside its validity range."""


class SolverError(SizingError, RuntimeError):
    """The optimizer failed to produce a verified answer (exit code 1)."""
