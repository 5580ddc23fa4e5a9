"""Whether each offered circuit lasts the night on a given storage.

The end-of-night check of the search (:attr:`Candidate.runs_at_end_supply`) only says
the circuit still runs at the lowest supply; whether the storage's charge carries it
there by dawn is a night run: :func:`pulsepick.analysis.night.simulate_night` with the
circuit's load curve, from the full supply at dusk down to the end-of-night supply (the
stop voltage), over the night's length, with the storage's leakage model as the
``night`` command uses it (settled level, charged six hours before dusk).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from pulsepick.solve.types import SolveResult

#: Night length when none is given, s: twelve hours, the equinox night (the same as the
#: solve report's energy line for a build).
DEFAULT_NIGHT_S = 12 * 3600.0
#: Supply step of the circuit's load curve, V (as the night command's grid).
LOAD_GRID_STEP_V = 0.01


@dataclass(frozen=True)
class NightPlan:
    """The night every candidate is run through."""

    storage: Any  # pulsepick.parts.storage.Storage
    v_start_v: float  # V, the storage at dusk (the full supply)
    v_stop_v: float  # V, the lowest the storage may reach (the end-of-night supply)
    night_s: float  # s, dusk to dawn
    night_given: bool  # False: DEFAULT_NIGHT_S was assumed

    def as_dict(self) -> dict[str, Any]:
        s = self.storage
        return {"storage": s.key, "storage_name": s.name, "capacitance_f": s.capacitance_f,
                "v_rated_v": s.v_rated_v, "v_start_v": self.v_start_v,
                "v_stop_v": self.v_stop_v, "night_s": self.night_s,
                "night_given": self.night_given}


@dataclass(frozen=True)
class NightVerdict:
    """One candidate's night on the plan's storage."""

    lasts: bool  # lit from dusk to dawn
    lit_s: float  # s, from dusk until the light stops (the night's length when it lasts)
    v_end_v: float  # V, the storage at dawn or when the light stops
    stop_reason: str  # why it stopped, or "lasts the night"

    @property
    def dark_after_s(self) -> float | None:
        """s after dusk the light stops; None when it lasts the night."""
        return None if self.lasts else self.lit_s

    def as_dict(self) -> dict[str, Any]:
        return {"lasts": self.lasts, "lit_s": self.lit_s, "dark_after_s": self.dark_after_s,
                "v_end_v": self.v_end_v, "stop_reason": self.stop_reason}


def night_verdict(design, plan: NightPlan) -> NightVerdict:
    """Run ``design`` (its average supply current at each voltage) through ``plan``."""
    from pulsepick.analysis.night import simulate_night
    from pulsepick.design import load_curve

    top = max(plan.v_start_v, plan.storage.v_rated_v)
    low = min(plan.v_stop_v, plan.v_start_v) - LOAD_GRID_STEP_V
    count = max(2, math.ceil((top - low) / LOAD_GRID_STEP_V) + 1)
    load = load_curve(design, np.linspace(max(low, LOAD_GRID_STEP_V), top, count))
    run = simulate_night(plan.storage, plan.v_start_v, plan.night_s, load,
                         stop_at_v=plan.v_stop_v)
    return NightVerdict(lasts=bool(run.lasts_the_night), lit_s=float(run.runtime_s),
                        v_end_v=float(run.v_end_v), stop_reason=run.stop_reason)


def night_check(result: SolveResult, plan: NightPlan) -> SolveResult:
    """``result`` with every candidate's :class:`NightVerdict` on ``plan``."""
    cands = tuple(replace(c, night=night_verdict(c.design, plan)) for c in result.candidates)
    return replace(result.with_candidates(cands), night_plan=plan)
