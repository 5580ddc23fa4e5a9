"""The solver's result types: one ranked :class:`Candidate` and the whole :class:`SolveResult`."""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

from pulsepick.circuits.base import RUNS
from pulsepick.request import SolveRequest


@dataclass(frozen=True)
class Candidate:
    """One offered circuit with its figures and, after :func:`assess`, its checks."""

    rank: int  # 1 = best
    design: Any  # pulsepick.design.Design
    parts: tuple  # PartLine tuple (pulsepick.partslist)
    figures: dict[str, float]  # fast engine at the design supply (Figures keys + status)
    errors: dict[str, float]  # aimed figure key -> figure/aim - 1 (fraction)
    score: float  # total cost, lower is better
    score_parts: dict[str, float]  # fit, spread, energy, parts, night
    period_spread: float  # estimated relative standard deviation of the period (fraction)
    end_figures: dict[str, float] | None = None  # fast engine at the end-of-night supply
    notes: tuple[str, ...] = ()
    reference: Any = None  # ReferenceResult, after assess()
    spread: Any = None  # SpreadResult, after assess() (when the analysis exists)
    drift: Any = None  # DriftResult, after assess() (supply range only)
    warnings: tuple[str, ...] = ()
    timings_s: dict[str, float] = field(default_factory=dict)  # s, per assessment step
    crossing_current: str | None = None  # the crossing-current assumption (Schmitt chips)
    median_note: str | None = None  # why the median build is off the nominal, after assess()
    aim_levels_v: tuple[float, float] | None = None  # V, (VT+, VT-) of the median chip aimed at
    misses: tuple[str, ...] = ()  # aimed figures missed by more than MISS_FACTOR (flagged)
    night: Any = None  # NightVerdict on a given storage (pulsepick.solve.nightcheck), or None

    def _period_quantile(self, i: int) -> float | None:
        if self.spread is None or "period_s" not in self.spread.quantiles:
            return None
        return float(self.spread.quantiles["period_s"][i])

    @property
    def median_period_s(self) -> float | None:
        """s, the Monte Carlo median build's period (after assess())."""
        return self._period_quantile(1)

    @property
    def p5_period_s(self) -> float | None:
        """s, 5 % of the builds blink faster (after assess())."""
        return self._period_quantile(0)

    @property
    def p95_period_s(self) -> float | None:
        """s, 5 % of the builds blink slower (after assess())."""
        return self._period_quantile(2)

    @property
    def yield_fraction(self) -> float | None:
        """Share of the builds within the yield band of the asked period (after assess())."""
        return None if self.spread is None else float(self.spread.yield_fraction)

    @property
    def runs_at_end_supply(self) -> bool | None:
        """With a supply range: still running and lit at the end-of-night supply."""
        if self.end_figures is None:
            return None
        return int(self.end_figures["status"]) == RUNS

    @property
    def lasts_night(self) -> bool | None:
        """Lit from dusk to dawn on the storage's charge (None: no storage given)."""
        return None if self.night is None else bool(self.night.lasts)

    @property
    def reference_figures(self) -> dict[str, float] | None:
        if self.reference is None:
            return None
        return self.reference.figures.row()


@dataclass(frozen=True)
class SolveResult:
    """What the solver offers for a request."""

    request: SolveRequest
    candidates: tuple[Candidate, ...]
    explanations: tuple[str, ...]  # why a target cannot be met, and what comes nearest
    nearest: dict[str, float] | None  # figures of the nearest circuit when none runs
    evaluated: int  # circuits evaluated with the fast engine
    search_s: float  # s, wall time of the search
    success: bool  # False: nothing at all can be offered
    message: str
    night_plan: Any = None  # NightPlan the candidates' nights ran on (nightcheck), or None

    def with_candidates(self, candidates: tuple[Candidate, ...]) -> SolveResult:
        return replace(self, candidates=candidates)


