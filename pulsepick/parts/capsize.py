"""Size and cost class of a capacitor by its kind and value (``data/parts/capacitor_sizes.csv``).

Classes, in order of preference: ``small`` (cheap, common), ``large`` (a larger body
or a dearer part), ``bulky`` (a large, costly body) and ``rare`` (seldom stocked,
costly). The ranking weighs the class by the request's preference; the parts list
names it. All value ranges are common practice.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from pulsepick.tables import load_table

_TABLE = "parts/capacitor_sizes.csv"
#: Preference rank of each class (0 = small).
CLASS_RANK = {"small": 0, "large": 1, "bulky": 2, "rare": 2}


@dataclass(frozen=True)
class SizeClass:
    """The class of one part."""

    name: str  # small, large, bulky or rare
    rank: int  # 0 = small .. 2
    why: str  # the builder's words ("" for small)


@functools.cache
def _rows(kind: str) -> tuple[tuple[float, float, str, str], ...]:
    return tuple((float(r["c_from_f"]), float(r["c_to_f"]), str(r["size_class"]),
                  str(r["why"])) for r in load_table(_TABLE).rows if r["kind"] == kind)


def size_class(kind: str, value_f: float) -> SizeClass:
    """The size/cost class of a ``kind`` capacitor of ``value_f`` farads."""
    for lo, hi, name, why in _rows(kind):
        if lo * (1 - 1e-9) <= value_f < hi * (1 - 1e-9):
            return SizeClass(name, CLASS_RANK[name], why)
    return SizeClass("small", 0, "")


def size_rank(kind: str, values_f) -> np.ndarray:
    """Preference rank (0 small .. 2) of ``kind`` capacitors of ``values_f`` (array), F."""
    v = np.asarray(values_f, dtype=float)
    out = np.zeros(v.shape)
    for lo, hi, name, _ in _rows(kind):
        sel = (v >= lo * (1 - 1e-9)) & (v < hi * (1 - 1e-9))
        out = np.where(sel, CLASS_RANK[name], out)
    return out
