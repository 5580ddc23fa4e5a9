"""Supercapacitor (EDLC) storage for a night of blinking.

A storage part is a capacitance with tolerance, a rated (and sometimes surge)
voltage, an ESR and a leakage current. Leakage is the part that surprises
builders: datasheets give a maximum measured after their own settling time,
while a cell held at voltage for days settles far lower (about 1 uA against a
30 uA specification, practice notes item 12). Right after charging it is higher
and falls towards the settled level (Nippon Chemi-Con FAQ, ref:chemicon-leakage-faq); the
model below uses an initial multiple that decays exponentially (estimate).

The parts are rows of ``data/parts/supercaps.csv``; each row names its sources.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from typing import Literal

import numpy as np

from pulsepick.errors import PartError
from pulsepick.tables import load_table

LeakLevel = Literal["settled", "max"]
LEAK_LEVELS: tuple[str, ...] = ("settled", "max")

_TABLE = "parts/supercaps.csv"
# The row whose per-farad figures a custom capacitance borrows.
_GENERIC_KEY = "1f-2v7"


@dataclass(frozen=True)
class Storage:
    """A supercapacitor (single cell or a stack of two) with its leakage model.

    Parameters
    ----------
    capacitance_f : nominal capacitance, F.
    v_rated_v : rated voltage of the whole part or stack, V.
    leak_max_a, leak_settled_a : leakage at the rated voltage, A: the datasheet
        maximum, and the typical level after days at voltage.
    leak_initial_multiple : leakage right after charging as a multiple of the level
        it settles to (estimate).
    leak_decay_s : time constant of that decay, s (estimate).
    """

    key: str  # table key, or "custom"
    name: str  # readable description
    capacitance_f: float  # F, nominal
    tol_minus_pct: float  # %, lower tolerance as a positive number
    tol_plus_pct: float  # %, upper tolerance
    v_rated_v: float  # V, for the whole part or stack
    v_surge_v: float | None  # V, None when not published
    esr_ohm: float  # ohm
    leak_max_a: float  # A, datasheet maximum at the rated voltage
    leak_settled_a: float  # A, typical settled leakage at the rated voltage
    cells_in_series: int  # 1 or 2
    balanced: bool  # True: single cell, matched stack or balancing circuit
    source_notes: tuple[str, ...] = ()  # where the numbers come from
    leak_initial_multiple: float = 4.0  # dimensionless, estimate (see the table notes)
    leak_decay_s: float = 3 * 3600.0  # s, estimate (see the table notes)

    def __post_init__(self) -> None:
        problems = []
        if not (np.isfinite(self.capacitance_f) and self.capacitance_f > 0):
            problems.append(f"capacitance {self.capacitance_f!r} F (must be above 0)")
        if not (np.isfinite(self.v_rated_v) and self.v_rated_v > 0):
            problems.append(f"rated voltage {self.v_rated_v!r} V (must be above 0)")
        if self.v_surge_v is not None and not self.v_surge_v >= self.v_rated_v:
            problems.append(f"surge voltage {self.v_surge_v!r} V (must be at or above the rating)")
        if not (self.tol_minus_pct >= 0 and 0 <= self.tol_plus_pct and self.tol_minus_pct < 100):
            problems.append(
                f"tolerance -{self.tol_minus_pct}/+{self.tol_plus_pct} % "
                "(give both as positive percentages, the lower below 100)"
            )
        if not self.esr_ohm >= 0:
            problems.append(f"ESR {self.esr_ohm!r} ohm (must be 0 or more)")
        for label, value in (("maximum", self.leak_max_a), ("settled", self.leak_settled_a)):
            if not (np.isfinite(value) and value >= 0):
                problems.append(f"{label} leakage {value!r} A (must be 0 or more)")
        if self.cells_in_series not in (1, 2):
            problems.append(f"cells in series {self.cells_in_series!r} (accepted: 1 or 2)")
        if not (self.leak_initial_multiple >= 1 and self.leak_decay_s > 0):
            problems.append("leakage decay (initial multiple must be >= 1, time constant > 0)")
        if problems:
            raise PartError(f"storage {self.key!r} has an impossible " + "; ".join(problems))

    @property
    def capacitance_min_f(self) -> float:
        """Lowest capacitance within tolerance, F."""
        return self.capacitance_f * (1 - self.tol_minus_pct / 100)

    @property
    def capacitance_max_f(self) -> float:
        """Highest capacitance within tolerance, F."""
        return self.capacitance_f * (1 + self.tol_plus_pct / 100)

    def leakage_a(self, v, t_since_charge_s, which: LeakLevel = "settled"):
        """Leakage current, A, at voltage ``v`` (V) a time after charging (s).

        Scales linearly with ``v / v_rated`` (estimate: leakage is specified at
        the rated voltage) and falls from ``leak_initial_multiple`` times the
        level towards the level with time constant ``leak_decay_s`` (estimate of
        the decay described in ref:chemicon-leakage-faq). ``which`` picks the level:
        ``"settled"`` (typical after days) or ``"max"`` (datasheet maximum).
        Vectorised over ``v`` and ``t_since_charge_s``.
        """
        if which == "settled":
            level = self.leak_settled_a
        elif which == "max":
            level = self.leak_max_a
        else:
            raise PartError(f"unknown leakage level {which!r}; accepted: {', '.join(LEAK_LEVELS)}")
        v_arr = np.clip(np.asarray(v, dtype=float), 0.0, None)
        t_arr = np.clip(np.asarray(t_since_charge_s, dtype=float), 0.0, None)
        multiple = 1.0 + (self.leak_initial_multiple - 1.0) * np.exp(-t_arr / self.leak_decay_s)
        return level * (v_arr / self.v_rated_v) * multiple

    def energy_j(self, v, capacitance_f: float | None = None):
        """Stored energy 0.5*C*v**2, J (E = CV^2/2, the energy of a capacitor)."""
        c = self.capacitance_f if capacitance_f is None else capacitance_f
        v_arr = np.asarray(v, dtype=float)
        return 0.5 * c * v_arr**2


def _opt_float(value: object) -> float | None:
    if value in ("", None):
        return None
    return float(value)  # type: ignore[arg-type]


def _yes_no(value: object, key: str) -> bool:
    text = str(value).strip().lower()
    if text in ("yes", "no"):
        return text == "yes"
    raise PartError(f"storage table row {key!r}: balanced must be yes or no, not {value!r}")


@cache
def _storages() -> dict[str, Storage]:
    table = load_table(_TABLE)
    parts = {}
    for row in table.rows:
        key = str(row["key"])
        parts[key] = Storage(
            key=key,
            name=str(row["name"]),
            capacitance_f=float(row["capacitance_f"]),
            tol_minus_pct=float(row["tol_minus_pct"]),
            tol_plus_pct=float(row["tol_plus_pct"]),
            v_rated_v=float(row["v_rated_v"]),
            v_surge_v=_opt_float(row["v_surge_v"]),
            esr_ohm=float(row["esr_ohm"]),
            leak_max_a=float(row["leak_max_a"]),
            leak_settled_a=float(row["leak_settled_a"]),
            cells_in_series=int(float(row["cells_in_series"])),
            balanced=_yes_no(row["balanced"], key),
            source_notes=(str(row["source"]),),
            leak_initial_multiple=float(row["leak_initial_multiple"]),
            leak_decay_s=float(row["leak_decay_h"]) * 3600.0,
        )
    return parts


def storage_keys() -> tuple[str, ...]:
    """Keys of the storage table, in file order."""
    return tuple(_storages())


STORAGE_KEYS: tuple[str, ...] = storage_keys()


def get_storage(key: str) -> Storage:
    """The storage part with table key ``key`` (e.g. ``"5f-2v7"``)."""
    parts = _storages()
    try:
        return parts[key]
    except KeyError:
        raise PartError(
            f"unknown storage {key!r}; accepted: {', '.join(parts)} or a capacitance such as 0.47F"
        ) from None


def custom_storage(
    capacitance_f: float,
    v_rated_v: float = 2.7,
    leak_a: float | None = None,
    esr_ohm: float | None = None,
    cells: int = 1,
    balanced: bool | None = None,
) -> Storage:
    """A storage part from a bare capacitance (F) and rating (V; 2.7 V is the common
    single-cell rating, ref:maxwell-bcap0005/ref:capxx-hy-10f).

    Without ``leak_a`` (A at the rated voltage) the leakage levels of the table's
    generic 1 F 2.7 V cell are scaled in proportion to the capacitance (leakage
    specifications proportional to C, as in ref:nichicon-uk; estimate) and so is its
    ESR, inversely (estimate). With ``leak_a`` that value is both the settled
    and the maximum level. ``balanced`` defaults to True for one cell and False
    for two (a series pair needs balancing, ref:spscap-safety).
    """
    if not (np.isfinite(capacitance_f) and capacitance_f > 0):
        raise PartError(
            f"storage capacitance {capacitance_f!r} F is impossible; give a value above 0, "
            "such as 0.22F or 5F"
        )
    if cells not in (1, 2):
        raise PartError(f"cells in series {cells!r} is not supported; accepted: 1 or 2")
    generic = _storages()[_GENERIC_KEY]
    scale = capacitance_f / generic.capacitance_f
    if leak_a is None:
        leak_max, leak_settled = generic.leak_max_a * scale, generic.leak_settled_a * scale
        leak_note = f"leakage scaled by capacitance from the {generic.name} (estimate)"
    else:
        if not (np.isfinite(leak_a) and leak_a >= 0):
            raise PartError(
                f"storage leakage {leak_a!r} A is impossible; give 0 or more, such as 1uA"
            )
        leak_max = leak_settled = float(leak_a)
        leak_note = "leakage given by the user"
    if esr_ohm is None:
        esr_ohm = generic.esr_ohm / scale
        esr_note = f"ESR scaled by capacitance from the {generic.name} (estimate)"
    else:
        esr_note = "ESR given by the user"
    return Storage(
        key="custom",
        name=f"{capacitance_f:g} F {v_rated_v:g} V storage"
        + (f" ({cells} cells in series)" if cells > 1 else ""),
        capacitance_f=float(capacitance_f),
        tol_minus_pct=0.0,
        tol_plus_pct=0.0,
        v_rated_v=float(v_rated_v),
        v_surge_v=None,
        esr_ohm=float(esr_ohm),
        leak_max_a=float(leak_max),
        leak_settled_a=float(leak_settled),
        cells_in_series=cells,
        balanced=(cells == 1) if balanced is None else balanced,
        source_notes=(
            "capacitance and rating given by the user; tolerance taken as 0",
            leak_note,
            esr_note,
        ),
        leak_initial_multiple=generic.leak_initial_multiple,
        leak_decay_s=generic.leak_decay_s,
    )
