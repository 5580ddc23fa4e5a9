"""pulsepick: from a wanted LED blink to standard parts that still blink right.

The computational core (values, parts, circuits, engines, solver, analyses)
never prints; the shell (``commands``, ``render``, ``cli``) renders results.
The Python API (``import pulsepick as pp``: ``pp.solve``, ``pp.check``,
``pp.night``, ``pp.day``, ``pp.bands``, ``pp.values``) lives in :mod:`pulsepick.api`.
"""

import sys as _sys
import types as _types

__version__ = "0.1.0"

#: The Python API (see :mod:`pulsepick.api`), imported on first use so that the
#: command line starts quickly.
_API = ("solve", "check", "night", "day", "bands", "values", "calibrate", "retune", "Result")
__all__ = ["__version__", *_API]


class _Package(_types.ModuleType):
    """The package module: the API functions stay visible over submodules of the same
    name. Importing ``pulsepick.solve`` (the solver module) would otherwise replace
    the attribute ``pulsepick.solve`` (the API function); the module stays reachable
    as ``sys.modules["pulsepick.solve"]`` and by ``from pulsepick.solve import ...``."""

    def __setattr__(self, name: str, value) -> None:
        if name in _API and isinstance(value, _types.ModuleType):
            return
        super().__setattr__(name, value)


_sys.modules[__name__].__class__ = _Package


def __getattr__(name: str):
    if name in _API:
        import importlib

        # imported by name: the package itself stays out of the import graph
        return getattr(importlib.import_module("pulsepick.api"), name)
    raise AttributeError(f"module 'pulsepick' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(__all__)
