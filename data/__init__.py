"""Data tables shipped with pulsepick (installed as the package ``pulsepick.data``).

Every table is a CSV file whose leading ``#`` lines describe it: what it holds,
the units of each column and the source it was taken from.
"""
