"""The version of the package (pyproject.toml carries the same number; a test checks they agree)."""
__version__ = "0.1.0"
