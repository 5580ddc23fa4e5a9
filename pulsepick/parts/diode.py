"""Small diodes (steering, blocking, charge pump) as junction models with leakage.

The rows live in ``data/parts/diodes.csv``: a small-signal silicon diode
(1N4148 class) and a small Schottky (BAT54 class). Forward behaviour is the
``Junction`` model; reverse leakage is given at the datasheet's test voltage and
scaled to other voltages with a square-root law (estimate: the generation
current grows with the depletion width, which goes as sqrt(V) in an abrupt
junction; textbook, from memory), never below the junction's own saturation
current. Leakage rises steeply with temperature; that is not modelled here.

References
----------
.. [1] BAT54 datasheets (Diotech, Formosa, Rectron), ref:bat54.
.. [2] Wikipedia "1N4148 signal diode"; PanJit 1N4148W datasheet, ref:1n4148.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from typing import Literal, get_args

import numpy as np

from pulsepick.errors import PartError
from pulsepick.parts.junction import Junction
from pulsepick.tables import keyed_row

DiodeKey = Literal["si", "schottky"]
DIODE_KEYS: tuple[str, ...] = get_args(DiodeKey)

_TABLE = "parts/diodes.csv"


@dataclass(frozen=True)
class DiodeModel:
    """A diode: forward junction model plus reverse leakage figures.

    Parameters
    ----------
    key : table key ("si", "schottky").
    name : readable description.
    junction : forward model (i_s in A, n, r_s in ohm).
    leak_typ_a, leak_max_a : reverse leakage at ``leak_at_v``, 25 C, A.
    leak_at_v : reverse voltage of the leakage figures, V.
    source : where the numbers come from.
    """

    key: str  # table key
    name: str  # readable description
    junction: Junction  # forward model
    leak_typ_a: float  # A, typical reverse leakage at leak_at_v, 25 C
    leak_max_a: float  # A, datasheet maximum at leak_at_v, 25 C
    leak_at_v: float  # V, reverse voltage of the leakage figures
    source: str  # provenance of every number

    def __post_init__(self) -> None:
        if not (0 < self.leak_typ_a <= self.leak_max_a and self.leak_at_v > 0):
            raise PartError(
                f"diode {self.key}: leakage needs 0 < typ <= max and a test voltage > 0 V"
            )

    def voltage(self, i):
        """Forward voltage at forward current ``i`` (A), volts; see ``Junction.voltage``."""
        return self.junction.voltage(i)

    def current(self, v, r_ext=0.0):
        """Forward current at voltage ``v`` (V) with ``r_ext`` (ohm) in series, A."""
        return self.junction.current(v, r_ext)

    def reverse_current(self, v_r, which: Literal["typ", "max"] = "typ"):
        """Reverse leakage (a positive number, A) at reverse voltage ``v_r`` (V, >= 0).

        The datasheet figure at ``leak_at_v`` scaled by sqrt(v_r / leak_at_v)
        (estimate), but not below the junction's saturation-current floor
        i_s*(1 - exp(-v_r/(n*VT))).
        """
        if which not in ("typ", "max"):
            raise PartError(f"leakage level {which!r} unknown; accepted: typ, max")
        v = np.maximum(np.asarray(v_r, dtype=float), 0.0)
        at = self.leak_typ_a if which == "typ" else self.leak_max_a
        scaled = at * np.sqrt(v / self.leak_at_v)
        floor = -self.junction.i_s * np.expm1(-v / self.junction.n_vt)
        out = np.maximum(scaled, floor)
        return float(out) if out.ndim == 0 else out


@cache
def get_diode(key: str) -> DiodeModel:
    """The diode model for ``key`` ("si" or "schottky").

    Raises
    ------
    PartError
        for an unknown key; the message lists the accepted keys.
    """
    row = keyed_row(_TABLE, key, DIODE_KEYS, "diode")
    return DiodeModel(
        key=key,
        name=str(row["name"]),
        junction=Junction(i_s=row["i_s_a"], n=row["n"], r_s=row["r_s_ohm"]),
        leak_typ_a=row["leak_typ_a"],
        leak_max_a=row["leak_max_a"],
        leak_at_v=row["leak_at_v"],
        source=str(row["source"]),
    )
