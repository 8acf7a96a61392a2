"""sizing: requirement-driven conceptual aircraft sizing.

Python API (equal to the CLI)::

    import sizing
    spec = sizing.load("requirements/trainer-jet.yaml")
    result = sizing.solve(spec)
    result.to_frame(); result.diagram()

Conceptual-design estimates only: not for certification, airworthiness or
operational decisions.
"""
__version__ = "0.1.0"


def load(path):
    """Load and validate a requirement file (see :func:`sizing.spec.load`)."""
    from .spec import load as _load

    return _load(path)


def solve(spec):
    """Solve a loaded requirement file (see :func:`sizing.solve.solve`)."""
    from .solve import solve as _solve

    return _solve(spec)
