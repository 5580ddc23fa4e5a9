"""The output layer: how result objects reach a person or a file.

``render`` (console tables and JSON to the terminal), ``textplot`` (drawings in text),
``plot`` (PNG/SVG pictures, optional matplotlib), ``schematic`` (circuit drawings in text
and SVG), ``htmlreport`` (self-contained HTML pages) and ``export`` (JSON figures, the buy
list CSV, and the one safe way to write an output file). Numbers are worded by
:mod:`pulsepick.units` (engineering notation and RKM codes) and nowhere else.

Nothing here computes a circuit figure: the modules take result objects from the core and
render them. The commands in :mod:`pulsepick.commands` choose what to render.
"""
