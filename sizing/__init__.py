"""sizing: requirement-driven conceptual aircraft sizing.

Python API (equal to the CLI)::

    import sizing
    spec = sizing.load("requirements/trainer-jet.yaml")
    result = sizing.solve(spec)
    result.to_frame(); result.diagram()

The package is built in layers, one folder each (lower first): ``common``,
``physics``, ``constraints`` and ``weights``, ``inputs``, ``problem``,
``charts``, ``reports``, ``studies``; ``cli`` on top. ``sizing.atmosphere``,
``sizing.aero`` and ``sizing.propulsion`` are the physics modules, re-exported.

Conceptual-design estimates only: not for certification, airworthiness,
structural design or operational decisions.
"""
from .common.version import __version__

_REEXPORTED = {"atmosphere": "physics.atmosphere", "aero": "physics.aero", "propulsion": "physics.propulsion"}


def load(path):
    """Load and validate a requirement file (see :func:`sizing.inputs.spec.load`)."""
    from .inputs.spec import load as _load

    return _load(path)


def solve(spec, sensitivities=True):
    """Solve a loaded requirement file (see :func:`sizing.problem.solve`)."""
    from .problem import solve as _solve

    return _solve(spec, sensitivities=sensitivities)


def __getattr__(name):
    """``sizing.atmosphere.isa`` and the like: the physics modules, imported on first use."""
    if name in _REEXPORTED:
        import importlib

        return importlib.import_module(f".{_REEXPORTED[name]}", __name__)
    raise AttributeError(f"module 'sizing' has no attribute {name!r}")


__all__ = ["__version__", "load", "solve"]
