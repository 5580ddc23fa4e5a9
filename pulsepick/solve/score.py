"""The score of a candidate circuit: error units, weights, penalties and the limits a
circuit must keep (see :mod:`pulsepick.solve`).
"""

from __future__ import annotations

import math

import numpy as np

from pulsepick.analysis.spread import DEFAULT_TEMP_RANGE_C
from pulsepick.circuits.base import DARK, get_core, get_stage, STALLS, Topology, UNPOWERED
from pulsepick.request import SolveRequest
from pulsepick.solve.texts import figure_text


#: Width of one error unit: ln 1.1, a 10 % miss (about one E24 step, ref:iec-60063).
SIGMA = math.log(1.1)
#: An assumed (not stated) aim costs at most this much, and half of it at a miss of
#: about a factor 1.8 (width ln 2): it guides where nothing was asked but never pulls a
#: stated aim off (a circuit whose flash is tied to its period keeps the period asked).
#: Design choice.
ASSUMED_MAX_COST = 20.0
ASSUMED_WIDTH = math.log(2.0)
#: Cost per decade of energy per flash. Design choice (a solar build lives on it).
ENERGY_WEIGHT = 1.0
#: Reference energy per flash for the energy term, J (only shifts every score alike).
ENERGY_REF_J = 1e-6
#: Cost per part. Design choice: a tie-breaker.
PARTS_WEIGHT = 0.1
#: Extra cost of a circuit whose LED is dark or whose chip is unpowered: more than any
#: fit can cost (3 aims at BIG_LOG each), so a lit circuit always ranks first.
PENALTY_NOT_RUNNING = 1e6
#: Extra cost when the LED goes dark or the chip stops before the end of the night.
PENALTY_END = 20.0
#: Extra cost when the timing network stalls with the chip's guaranteed-maximum input
#: leakage over temperature (a hot summer night). Design choice.
PENALTY_HOT_LEAK = 3.0
#: Threshold step for the finite-difference threshold sensitivity, fraction of the supply.
THRESHOLD_STEP = 0.01
#: Largest log error counted (a factor e^20, about 5e8, off; a figure that cannot be
#: computed counts as this far off). Wide enough that a period far beyond reach still
#: ranks the longest reachable one first.
BIG_LOG = 20.0
#: Outdoor temperature range for the capacitor drift term, C (the spread's default range).
TEMP_RANGE_C = DEFAULT_TEMP_RANGE_C
#: Decades of hours of class-2 aging counted (10^4 h, about a year). Estimate.
AGING_DECADES = 4.0
#: Search sizes: slow-phase pairs kept, timing networks kept, coarse stage points
#: refined, picks kept per topology variant.
K_SLOW, K_TIMING, K_KEEP = 40, 32, 3
#: Per stage, the search sizes (coarse points refined, timing networks crossed with the
#: stage sets, coarse values per decade) are the stage module's ``search``; the stage
#: resistor bounds and first-estimate drop are in ``pulsepick.circuits.searchgrid``.
LN2 = math.log(2.0)
#: Flash and hold capacitors of at least this value are electrolytic, smaller ones X7R
#: ceramic (common practice for coupling and reservoir parts).
STAGE_ELECTROLYTIC_FROM_F = 1e-6

#: The current moving the timing capacitor at a threshold must be at least this many times
#: its typical leakage there (common practice). The same figure as
#: ``pulsepick.analysis.checks.LEAK_MARGIN``, kept here so the search does not import the
#: checks (and with them the reference engine) in its worker processes.
LEAK_MARGIN = 10.0
#: Blink rates: above about 10 flashes a second the eye no longer sees separate flashes,
#: and above a few tens of hertz (flicker fusion) it sees a steady light (common practice).
SEPARATE_FLASHES_MAX_HZ = 10.0
FLICKER_FUSION_HZ = 50.0

def _log_err(x, target) -> np.ndarray:
    with np.errstate(all="ignore"):
        e = np.log(np.asarray(x, dtype=float) / target)
    return np.clip(np.where(np.isfinite(e), e, BIG_LOG), -BIG_LOG, BIG_LOG)


def _weights(aims: dict[str, tuple[float, bool]]) -> dict[str, bool]:
    """Which aims were stated (True) or assumed (False)."""
    return {k: stated for k, (_, stated) in aims.items()}


def _aim_cost(stated: bool, e) -> np.ndarray:
    """Cost of a log error ``e`` to an aim: quadratic if stated, saturating if assumed."""
    e = np.asarray(e, dtype=float)
    if stated:
        return e**2 / SIGMA**2
    return ASSUMED_MAX_COST * (1.0 - np.exp(-(e / ASSUMED_WIDTH) ** 2))


def _cost(fig, aims, weights, var, n_parts: int, v: float, leak_penalty=0.0,
          i_limit_a: float = math.inf) -> tuple[np.ndarray, dict]:
    """Vectorised score of evaluated circuits; returns (cost, parts of the cost).

    A circuit that stalls, or whose LED peak is above ``i_limit_a`` (A, the LED's
    rating), costs infinity: it is never offered.
    """
    fit = 0.0
    for key, (target, _) in aims.items():
        fit = fit + _aim_cost(weights[key], _log_err(getattr(fig, key), target))
    spread = np.asarray(var) / SIGMA**2
    with np.errstate(all="ignore"):
        energy_j = np.asarray(fig.supply_avg_a) * np.asarray(fig.period_s) * v
        energy = ENERGY_WEIGHT * np.log10(np.maximum(energy_j, 1e-18) / ENERGY_REF_J)
    status = np.asarray(fig.status)
    energy = np.where(np.isfinite(energy), energy, 0.0)
    penalty = np.where((status == DARK) | (status == UNPOWERED), PENALTY_NOT_RUNNING, 0.0)
    cost = fit + spread + energy + PARTS_WEIGHT * n_parts + penalty + leak_penalty
    with np.errstate(invalid="ignore"):
        over = np.asarray(fig.led_peak_a) > i_limit_a * (1.0 + 1e-9)
    cost = np.where((status == STALLS) | over, np.inf, cost)
    return cost, {"fit": fit, "spread": spread + leak_penalty, "energy": energy}


def _best_per_group(cost: np.ndarray, group: np.ndarray, k: int, total: int) -> np.ndarray:
    """Indices of the ``k`` cheapest per group, then the ``total`` cheapest of those."""
    ok = np.flatnonzero(np.isfinite(cost))
    if ok.size == 0:
        return ok
    order = ok[np.lexsort((cost[ok], group[ok]))]
    g = group[order]
    start = np.r_[True, g[1:] != g[:-1]]
    first = np.maximum.accumulate(np.where(start, np.arange(g.size), 0))
    keep = order[(np.arange(g.size) - first) < k]
    return keep[np.argsort(cost[keep], kind="stable")[:total]]


#: Cost per step of the timing capacitor's size/cost class (small 0, large 1, bulky or
#: rare 2; pulsepick.parts.capsize) by ``--prefer`` (design choice: "balanced" breaks
#: ties between otherwise equal circuits like one more part, "compact" outweighs a few
#: per cent of fit and a wider spread).
PREFER_WEIGHTS = {"figures": 0.0, "balanced": 0.1, "compact": 2.0}
#: A shown figure further than this factor from its aim is a miss (flagged, and shown
#: only when nothing closer exists; design choice).
MISS_FACTOR = 2.0
#: Figures held to MISS_FACTOR: the flash and the brightness aim.
MISS_KEYS = ("flash_s", "led_peak_a", "effective_a", "effective_mcd")
_MISS_WORDS = {"flash_s": "flash", "led_peak_a": "peak", "effective_a": "effective",
               "effective_mcd": "intensity"}


def missed_keys(req: SolveRequest, figs: dict[str, float]) -> tuple[str, ...]:
    """The keys (``MISS_KEYS``) of the aimed flash/brightness figures of ``figs`` off
    their aim by more than ``MISS_FACTOR``.

    A brightness beyond the LED's rating is aimed at the rating instead (the report
    says so once, in what cannot be met), so a circuit is flagged only when it falls
    short of what the LED allows.
    """
    out = []
    need = peak_needed(req)
    limit = max(led_current_limit(req.led, stage)[0] for stage in req.stages) \
        if req.stages else math.inf
    reach = min(1.0, limit / need) if need > 0 else 1.0
    for key, (target, _) in req.aims().items():
        if key not in MISS_KEYS:
            continue
        if key != "flash_s":
            target *= reach
        got = float(figs.get(key, math.nan))
        if not (math.isfinite(got) and got > 0 and target > 0) or \
                abs(math.log(got / target)) > math.log(MISS_FACTOR):
            out.append(key)
    return tuple(out)


def misses(req: SolveRequest, figs: dict[str, float]) -> tuple[str, ...]:
    """The figures of :func:`missed_keys` as short texts ("flash 2.24 s")."""
    return tuple(f"{_MISS_WORDS[key]} {figure_text(key, float(figs.get(key, math.nan)))}"
                 for key in missed_keys(req, figs))


def led_current_limit(led, stage: str | None = None) -> tuple[float, str]:
    """The highest nominal LED peak the solver offers (A) and where it comes from.

    The LED's maximum continuous forward current (``i_max_a``). A pulse or fade stage
    gives short flashes: there a pulsed limit (``i_pulse_max_a``) replaces it when the
    LED model has one; without one the continuous rating is the limit. ``inf`` when
    the LED has no rating in our tables (a user-described LED).

    Returns ``(limit A, words naming it)``.
    """
    from pulsepick.units import format_eng

    cont = getattr(led, "i_max_a", None)
    pulsed = getattr(led, "i_pulse_max_a", None)
    short_flash = stage is not None and get_stage(stage).pulsed
    if short_flash and pulsed is not None and (cont is None or pulsed > cont):
        return float(pulsed), f"its pulsed rating of {format_eng(pulsed, 'A')}"
    if cont is None:
        return math.inf, "no rating (not in our tables)"
    if pulsed is None:
        return float(cont), (f"its continuous rating of {format_eng(cont, 'A')} (our tables "
                             "give no pulsed rating, so a short flash is held to it too)")
    return float(cont), f"its continuous rating of {format_eng(cont, 'A')}"


def n_parts(topo: Topology, values: dict[str, float]) -> int:
    """Parts count of a circuit: chip, resistors, capacitors, diodes, transistors, the LED."""
    core, stage = get_core(topo.core), get_stage(topo.stage)
    count = 2 + sum(1 for p in core.params + stage.params
                    if not (p.optional and values.get(p.name, 1.0) == 0))
    count += len(core.extra_parts(topo)) + len(stage.extra_parts(topo))
    return count



def peak_needed(req: SolveRequest) -> float:
    """The peak LED current the request's brightness implies (A).

    A stated peak as it is; an effective current or intensity through the rectangular
    flash form Ie = Ip*t/(a + t), a = 0.2 s (Blondel-Rey, ref:ies-effective-intensity), with the flash
    aimed at; the assumed peak when no brightness is stated.
    """
    from pulsepick.circuits.base import EFFECTIVE_A_S

    aims, flash = req.aims(), req.flash_s
    if "led_peak_a" in aims:
        return aims["led_peak_a"][0]
    if "effective_a" in aims:
        eff = aims["effective_a"][0]
    else:
        eff = aims["effective_mcd"][0] / req.led.mcd_per_a
    return eff * (EFFECTIVE_A_S + flash) / flash


def _threshold_var(low: float, mode: float, high: float, shape: str = "normal") -> float:
    """Variance (V²) of one threshold: the chip spread's split normal (or ``shape``)."""
    from pulsepick.analysis.chipspread import threshold_var

    return threshold_var(low, mode, high, shape)


def _slice_figures(f, sl: slice):
    """The rows ``sl`` of a batch of figures (plain arrays)."""
    from pulsepick.circuits.base import Figures

    def cut(x):
        return np.asarray(x).reshape(-1)[sl] if np.ndim(x) else x

    return Figures(**{k: cut(getattr(f, k)) for k in Figures.KEYS}, status=cut(f.status))
