"""Inputs: requirement files from YAML text to validated models and the SI tree.

Lives here: ``reader`` (YAML with the line of every key), ``units`` (strings
with a unit -> SI), ``fields`` (pydantic field types and range checks),
``aircraft``, ``mission``, ``kinds`` and ``schema`` (the file format as
pydantic models), ``locate`` (located error messages), ``spec`` (``load``,
``validate``, :class:`Spec`, the JSON Schema) and ``rewrite`` (changed values
written back into the file's own text, comments and units kept).
May import: ``sizing.physics``, ``sizing.constraints``, ``sizing.weights`` and
``sizing.common``; yaml and pint are imported here and nowhere else.
"""
from .spec import Spec, json_schema, load, load_text, validate

__all__ = ["Spec", "json_schema", "load", "load_text", "validate"]
