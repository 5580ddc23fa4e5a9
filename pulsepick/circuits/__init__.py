"""Blinker circuits: oscillator cores and LED stages, one module each.

A core module (``schmitt``, ``schmitt_steered``, ``timer555``) defines a ``Core``
object and calls ``register_core``; a stage module (``direct``, ``pulse``, ``fade``,
``transistor``) defines a ``Stage`` and calls ``register_stage``. Each supplies the fast-engine
formulas (closed forms and quadrature over numpy arrays) and, separately, the
equations the reference engine integrates. ``pulsepick.circuits.registry`` imports
the modules listed in ``CIRCUIT_MODULES``; adding a circuit means adding a module
and its name there.
"""

CIRCUIT_MODULES = (
    "schmitt",
    "schmitt_steered",
    "timer555",
    "direct",
    "pulse",
    "fade",
    "transistor",
    "dusk_hold",
)
