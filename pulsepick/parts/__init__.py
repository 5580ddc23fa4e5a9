"""Component models: pure, SI units inside, vectorised over numpy arrays where it matters.

``junction``      the Shockley junction with series resistance (exact Lambert-W current)
``diode``         small-signal silicon and Schottky diodes built on ``junction``
``led``           LED colours: junction I-V, luminous intensity, visibility
``logic``         Schmitt-trigger logic families: thresholds, drive, supply current
``timer``         the CMOS 555-class timer
``capacitor``     capacitor kinds: tolerance, temperature, DC bias, leakage, ratings
``storage``, ``panel``, ``photoresistor``  supercaps, small solar panels, CdS cells

Every number taken from the outside world lives in a table under ``data/parts/``
with a ``source`` column; the modules here only read and combine them.
"""
