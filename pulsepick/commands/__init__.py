"""The sub-commands of the ``pulsepick`` program, one module each.

A command module defines:

``NAME``          the word typed after ``pulsepick``;
``SUMMARY``       one line for the command list;
``EXAMPLES``      a few lines shown at the end of ``--help``;
``add_arguments(parser)``  its options;
``run(args) -> int``       the work: parse, call the core, render, return the exit status.

Adding a command means adding a module here and its name to ``COMMAND_MODULES``.
"""

COMMAND_MODULES = (
    "values",
    "check",
    "solve",
    "bands",
    "night",
    "day",
    "dusk",
    "ldr",
    "calibrate",
    "retune",
)
