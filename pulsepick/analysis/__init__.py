"""Analyses built on the circuit engines: spread, drift, the night, the day, dusk, sun times.

Every analysis is pure: it takes models and numbers and returns a frozen result.
"""
