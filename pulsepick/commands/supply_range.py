"""Refuse a supply over the chip's supply range before any figure is computed.

The thresholds of a family are tabled only inside its supply range
(data/parts/logic_families.csv, data/parts/timers.csv); over it a chip may be damaged
and any threshold would be an extrapolation, so the command stops with one line.
"""

from __future__ import annotations

from pulsepick.engine.environment import chip_model
from pulsepick.errors import RequestError


def refuse_over_range(design, option: str = "--supply") -> None:
    """RequestError when ``design.supply_v`` is over its chip's maximum supply."""
    model = chip_model(design.chip)
    v_max = float(model.vdd_max_v)
    if design.supply_v > v_max + 1e-9:
        raise RequestError(
            f"{option} {design.supply_v:g} V is over the supply range of {model.name}, "
            f"{model.vdd_min_v:g} V to {v_max:g} V (the family table); give a supply in "
            "that range")
