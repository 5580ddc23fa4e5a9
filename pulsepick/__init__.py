"""pulsepick: from a wanted LED blink to standard parts that still blink right.

The computational core (values, parts, circuits, engines, solver, analyses)
never prints; the shell (``commands``, ``render``, ``cli``) renders results.
"""

__version__ = "0.1.0"
