"""Small-signal transistors as Ebers-Moll transport models (a low-side LED switch).

The rows live in ``data/parts/transistors.csv`` with their data sheet limits beside the
model parameters. The model is the transport form of the Ebers-Moll equations with no
series resistances, which is also what a circuit simulator's bipolar model reduces to
when its high-level and Early terms are left out:

    IC = IS·(e^(VBE/nVT) − e^(VBC/nVT)) − IS/BR·(e^(VBC/nVT) − 1)
    IB = IS/BF·(e^(VBE/nVT) − 1) + IS/BR·(e^(VBC/nVT) − 1)

(textbook form, e.g. the SPICE bipolar model with its defaults; common practice).

References
----------
.. [1] 2N3904 small-signal NPN data sheet, ref:onsemi-2n3904.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from typing import Literal, get_args

from pulsepick.errors import PartError
from pulsepick.physconst import K_OVER_Q_V_PER_K
from pulsepick.tables import keyed_row

TransistorKey = Literal["npn-small"]
TRANSISTOR_KEYS: tuple[str, ...] = get_args(TransistorKey)

_TABLE = "parts/transistors.csv"


@dataclass(frozen=True)
class TransistorModel:
    """A bipolar transistor: transport-model parameters and data sheet limits."""

    key: str  # table key
    name: str  # readable description
    i_s_a: float  # A, transport saturation current
    bf: float  # forward current gain of the model
    br: float  # reverse current gain of the model
    n: float  # emission coefficient
    ic_max_a: float  # A, maximum continuous collector current
    vceo_max_v: float  # V, collector-emitter breakdown
    hfe_min_10ma: float  # minimum DC gain at 10 mA
    vce_sat_max_50ma_v: float  # V, maximum VCE(sat) at 50 mA / 5 mA
    source: str  # provenance of every number
    temperature_k: float = 300.0  # K

    def __post_init__(self) -> None:
        if not (self.i_s_a > 0 and self.bf > 0 and self.br > 0 and 0.5 <= self.n <= 2):
            raise PartError(f"transistor {self.key}: needs IS, BF, BR > 0 and 0.5 <= n <= 2")

    @property
    def n_vt(self) -> float:
        """n·kT/q, V."""
        return self.n * K_OVER_Q_V_PER_K * self.temperature_k


@cache
def get_transistor(key: str) -> TransistorModel:
    """The transistor model for ``key``.

    Raises
    ------
    PartError
        for an unknown key; the message lists the accepted keys.
    """
    row = keyed_row(_TABLE, key, TRANSISTOR_KEYS, "transistor")
    return TransistorModel(
        key=key, name=str(row["name"]), i_s_a=row["i_s_a"], bf=row["bf"], br=row["br"],
        n=row["n"], ic_max_a=row["ic_max_a"], vceo_max_v=row["vceo_max_v"],
        hfe_min_10ma=row["hfe_min_10ma"], vce_sat_max_50ma_v=row["vce_sat_max_50ma_v"],
        source=str(row["source"]),
    )
