"""Light-dependent rate: a photoresistor in the timing network.

The photoresistor (``pulsepick.parts.photoresistor``) takes the place of the oscillator's
timing resistor, with an optional fixed resistor in series (it sets the fastest rate, in
bright light) and one across it (it sets the slowest rate, in the dark):

    R_timing(E) = R_series + (R_ldr(E) || R_parallel)

The timing resistor is R1 for the Schmitt cores (for ``schmitt-steered`` it sets the slow
phase, the time between flashes) and RB for the CMOS 555 (it sets both phases).

:func:`ldr_rate` evaluates the period against light from 0.01 to 100 lux at the
photoresistor's three corners (typical, lowest and highest resistance) in ONE vectorised
fast-engine call. :func:`solve_clamp` picks the E-series series and/or parallel resistor
that keeps the period inside given bounds at every corner over the light range, keeping
as much of the light-following span as it can. Only the photoresistor's corners are
swept; the chip's threshold spread and the other parts' tolerances come on top (see
``pulsepick.analysis.spread``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Literal

import numpy as np

from pulsepick.circuits.base import DARK, RUNS, STALLS, get_core
from pulsepick.design import Design
from pulsepick.engine import fast
from pulsepick.errors import RequestError
from pulsepick.hints import hint
from pulsepick.parts.photoresistor import CORNERS, POWER_LAW_RANGE_LUX, Photoresistor
from pulsepick.units import format_eng

#: The light range shown by default, lux (the task's range: deep dusk to an overcast day).
DEFAULT_LUX_RANGE = (0.01, 100.0)
DEFAULT_POINTS = 41
#: Resistances swept to map the period against the timing resistance, ohm.
_R_MAP = np.logspace(2.0, 9.5, 301)
#: Warn when the brightest end draws more than this many times the darkest end's supply
#: current (estimate: a light-following blinker should not cost much more by day).
CURRENT_RATIO_WARNING = 2.0
#: A flash needs at least as long again dark after it to read as a flash (estimate).
RACE_FACTOR = 2.0
#: How close the typical timing resistance at the night's light level must come to the one
#: giving the period asked for a clamp pair to count as meeting it (design choice: the
#: E24 step with both clamps leaves about this much).
NIGHT_FIT = 0.02
#: Weight of a miss outside ``NIGHT_FIT`` against the span (log units): any miss counts
#: more than any span (design choice).
NIGHT_MISS_WEIGHT = 1e3
ClampMode = Literal["series", "parallel", "both"]
CLAMP_MODES = ("series", "parallel", "both")


def timing_param(design: Design) -> str:
    """The value the photoresistor replaces: ``r1`` (Schmitt cores) or ``rb`` (555)."""
    return get_core(design.topo.core).ldr_param


@dataclass(frozen=True)
class LdrNetwork:
    """The photoresistor with its fixed clamp resistors (ohm)."""

    ldr: Photoresistor
    series_ohm: float = 0.0  # ohm, in series (0: none)
    parallel_ohm: float = math.inf  # ohm, across the photoresistor (inf: none)

    def __post_init__(self) -> None:
        if not (math.isfinite(self.series_ohm) and self.series_ohm >= 0):
            raise RequestError(f"series resistor {self.series_ohm!r} ohm: give 0 or more")
        if not self.parallel_ohm > 0:
            raise RequestError(f"parallel resistor {self.parallel_ohm!r} ohm: give a value "
                               "above 0 (or none)")

    def resistance(self, lux, corner: str = "typ"):
        """The network's resistance at ``lux`` and a photoresistor corner, ohm."""
        r_ldr = np.asarray(self.ldr.resistance(lux, corner), dtype=float)
        return self.series_ohm + _par(r_ldr, self.parallel_ohm)


def _par(r_a, r_b):
    r_a = np.asarray(r_a, dtype=float)
    if math.isinf(r_b):
        return r_a
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(np.isinf(r_a), r_b, r_a * r_b / (r_a + r_b))


@dataclass(frozen=True, eq=False)
class LdrResult:
    """Period against light for one network (SI units; corner keys low, typ, high)."""

    design: Design  # the circuit; its timing resistor is replaced by the network
    network: LdrNetwork
    param: str  # the value replaced ("r1" or "rb")
    lux: np.ndarray  # lux, ascending
    resistance_ohm: dict[str, np.ndarray]  # per corner, ohm
    period_s: dict[str, np.ndarray]  # per corner, s; nan where it does not run
    flash_s: np.ndarray  # s, typical corner
    supply_avg_a: np.ndarray  # A, typical corner
    status: dict[str, np.ndarray]  # per corner, engine status codes
    period_range_s: tuple[float, float] | None  # s, bounds asked for (None: none)
    within_range: bool | None  # every corner inside the bounds (None: no bounds)
    notes: tuple[str, ...]
    warnings: tuple[str, ...]

    def rows(self) -> list[dict[str, float]]:
        """One plain row per light level (JSON)."""
        out = []
        for i, e in enumerate(self.lux):
            row = {"lux": float(e)}
            for c in CORNERS:
                row[f"r_{c}_ohm"] = float(self.resistance_ohm[c][i])
                row[f"period_{c}_s"] = float(self.period_s[c][i])
            row["flash_s"] = float(self.flash_s[i])
            row["supply_avg_a"] = float(self.supply_avg_a[i])
            out.append(row)
        return out


def _check_lux(lux_range: tuple[float, float], points: int) -> np.ndarray:
    lo, hi = (float(x) for x in lux_range)
    if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
        raise RequestError(f"light range {lo:g}..{hi:g} lux: give two levels above 0, low "
                           "to high, such as 0.01..100")
    if not (isinstance(points, int) and 2 <= points <= 10_000):
        raise RequestError(f"points {points!r}: give a whole number from 2 to 10,000")
    return np.logspace(math.log10(lo), math.log10(hi), points)


def ldr_rate(design: Design, network: LdrNetwork, *,
             lux_range: tuple[float, float] = DEFAULT_LUX_RANGE, points: int = DEFAULT_POINTS,
             period_range_s: tuple[float, float] | None = None,
             levels: dict | None = None) -> LdrResult:
    """Period, flash and supply current against light, at the photoresistor's corners.

    One fast-engine call evaluates every light level at every corner.

    Parameters
    ----------
    design : the circuit (its timing resistor's value is replaced).
    network : the photoresistor with its clamp resistors.
    lux_range : lowest and highest light level, lux.
    points : light levels, evenly spaced in log.
    period_range_s : optional bounds (s) to check every corner against.
    levels : switching levels to evaluate at (``vt_plus``/``vt_minus`` in V, such as the
        solver's median chip); default the chip's typical ones.
    """
    lux = _check_lux(lux_range, points)
    if period_range_s is not None:
        _check_bounds(period_range_s)
    param = timing_param(design)
    r = np.concatenate([network.resistance(lux, c) for c in CORNERS])
    n = lux.size
    figs = _evaluate(design, param, r, levels)
    status_all = np.asarray(figs.status)
    period_all = np.where((status_all == RUNS) | (status_all == DARK),
                          np.asarray(figs.period_s, dtype=float), np.nan)
    res, per, stat = {}, {}, {}
    for k, c in enumerate(CORNERS):
        sl = slice(k * n, (k + 1) * n)
        res[c], per[c], stat[c] = r[sl], period_all[sl], status_all[sl]
    typ = slice(n, 2 * n)
    flash = np.asarray(figs.flash_s, dtype=float)[typ]
    supply = np.asarray(figs.supply_avg_a, dtype=float)[typ]

    within = None
    if period_range_s is not None:
        lo, hi = period_range_s
        within = all(bool(np.all(np.isfinite(per[c]) & (per[c] >= lo * (1 - 1e-9))
                                 & (per[c] <= hi * (1 + 1e-9)))) for c in CORNERS)
    warnings = _warnings(lux, per, stat, flash, supply, period_range_s, within, network)
    notes = [
        f"{network.ldr.name}: R10 {format_eng(network.ldr.r10_min_ohm, 'Ω')}.."
        f"{format_eng(network.ldr.r10_max_ohm, 'Ω')} (typical "
        f"{format_eng(network.ldr.r10_typ_ohm, 'Ω')}), gamma {network.ldr.gamma:g} "
        f"±{network.ldr.gamma_tol:g}, dark resistance at least "
        f"{format_eng(network.ldr.dark_min_ohm, 'Ω')}; {network.ldr.source}",
        "R(E) = R10·(E/10 lux)^-gamma (the gamma definition, ref:token-ldr-notes) with the dark "
        "resistance as a parallel leakage path; corners: low = lowest R10, gamma and the "
        "dark path at its minimum, high = highest R10 and gamma with no dark path",
        f"the power law is published for about {POWER_LAW_RANGE_LUX[0]:g} to "
        f"{POWER_LAW_RANGE_LUX[1]:g} lux; below that it is extrapolated (estimate)",
        f"the photoresistor network takes the place of {param.upper()}; the chip's threshold "
        "spread and the other parts' tolerances come on top of these corners",
        "a CdS cell answers slowly: its dark resistance is specified 10 s after the light "
        "goes (ref:globe-cds-cell), so the rate follows the light with a lag",
    ]
    return LdrResult(
        design=design, network=network, param=param, lux=lux, resistance_ohm=res,
        period_s=per, flash_s=flash, supply_avg_a=supply, status=stat,
        period_range_s=None if period_range_s is None else tuple(period_range_s),
        within_range=within, notes=tuple(notes), warnings=tuple(warnings),
    )


def _evaluate(design: Design, param: str, r_values: np.ndarray, levels: dict | None = None):
    env, powered = design.env(**(levels or {}))
    values = dict(design.working_values(env))
    values[param] = np.asarray(r_values, dtype=float)
    return fast.evaluate(design.topo, values, env, powered=powered)


def _check_bounds(period_range_s) -> None:
    lo, hi = (float(x) for x in period_range_s)
    if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
        raise RequestError(f"period range {lo:g}..{hi:g} s: give two times above 0, short to "
                           "long, such as 1s..6s")


def _first_lux(lux, mask) -> float | None:
    idx = np.flatnonzero(mask)
    return float(lux[idx[0]]) if idx.size else None


def _warnings(lux, per, stat, flash, supply, period_range_s, within, network) -> list[str]:
    out = []
    for c, word in (("typ", "a typical cell"), ("high", "a cell at its highest resistance")):
        stalls = stat[c] == STALLS
        if np.any(stalls):
            dark_end = float(lux[np.flatnonzero(stalls)[-1]])
            out.append(
                f"the oscillator stops with {word} at {dark_end:.3g} lux and darker: the "
                "photoresistor is so large there that leakage holds the timing capacitor "
                "short of its threshold (too slow); put a resistor across the photoresistor "
                f"({hint('parallel_r')}) or solve one with {hint('period_range')}")
            break
    with np.errstate(invalid="ignore"):
        race = np.isfinite(per["low"]) & np.isfinite(flash) & (per["low"] < RACE_FACTOR * flash)
    at = _first_lux(lux[::-1], race[::-1])
    if at is not None:
        out.append(
            f"at {at:.3g} lux and brighter the period falls below twice the flash length "
            f"(the light races into a flicker); add a series resistor ({hint('series_r')})")
    ok = np.isfinite(supply)
    if ok.sum() >= 2:
        dark_i, bright_i = float(supply[ok][0]), float(supply[ok][-1])
        if dark_i > 0 and bright_i > CURRENT_RATIO_WARNING * dark_i:
            out.append(
                f"at {lux[ok][-1]:.3g} lux the circuit draws {format_eng(bright_i, 'A')} "
                f"against {format_eng(dark_i, 'A')} at {lux[ok][0]:.3g} lux: fast blinking in "
                "bright light costs energy; a series resistor caps it")
    if within is False:
        lo, hi = period_range_s
        out.append(
            f"some light levels or photoresistor corners leave the period range "
            f"{format_eng(lo, 's')}..{format_eng(hi, 's')}")
    if network.series_ohm == 0 and math.isinf(network.parallel_ohm):
        span = per["typ"][np.isfinite(per["typ"])]
        if span.size >= 2 and span.max() / span.min() > 100:
            out.append(
                f"unclamped, the period spans a factor {span.max() / span.min():.0f} over the "
                "light range (CdS cells span about three decades, common practice)")
    return out


# ------------------------------------------------------------------------------------ clamp

@dataclass(frozen=True, eq=False)
class ClampResult:
    """The clamp resistors chosen for a period range (ohm; SI units)."""

    network: LdrNetwork  # the photoresistor with the chosen clamps
    mode: str  # "series", "parallel" or "both"
    series: str  # E-series the values come from
    period_range_s: tuple[float, float]  # s, asked
    r_needed_ohm: tuple[float, float]  # ohm, timing resistance giving the two bounds
    span: float  # typical period at the darkest over the brightest level (1)
    success: bool
    message: str


def _period_map(design: Design, param: str, levels: dict | None = None
                ) -> tuple[np.ndarray, np.ndarray]:
    """Period (s) against the timing resistance (ohm) where the circuit runs, ascending."""
    figs = _evaluate(design, param, _R_MAP, levels)
    st = np.asarray(figs.status)
    p = np.asarray(figs.period_s, dtype=float)
    ok = ((st == RUNS) | (st == DARK)) & np.isfinite(p)
    r, p = _R_MAP[ok], p[ok]
    if r.size < 2:
        raise RequestError("the circuit does not oscillate for any timing resistance from "
                           "100 Ω to 3 GΩ; check the other values")
    mono = np.r_[True, np.diff(p) > 0]
    keep = np.cumprod(mono).astype(bool)  # the rising stretch from the smallest resistance
    return r[keep], p[keep]


def _check_reachable(r_map, p_map, lo_p: float, hi_p: float) -> None:
    """Refuse a period range (s) wholly below or above what the circuit's map gives."""
    if lo_p < p_map[0] * (1 - 1e-9) and hi_p < p_map[0]:
        raise RequestError(
            f"period range {format_eng(lo_p, 's')}..{format_eng(hi_p, 's')} is below anything "
            f"this circuit gives ({format_eng(p_map[0], 's')} at "
            f"{format_eng(r_map[0], 'Ω')}); use a smaller timing capacitor")
    if lo_p > p_map[-1]:
        raise RequestError(
            f"period range {format_eng(lo_p, 's')}..{format_eng(hi_p, 's')} is above anything "
            f"this circuit gives before it stalls ({format_eng(p_map[-1], 's')}); use a "
            "larger timing capacitor")


def _resistance_for(r_map, p_map, period: float) -> float:
    return float(np.exp(np.interp(math.log(period), np.log(p_map), np.log(r_map))))


def solve_clamp(design: Design, ldr: Photoresistor, period_range_s: tuple[float, float], *,
                mode: str = "both", series: str = "E24",
                lux_range: tuple[float, float] = DEFAULT_LUX_RANGE,
                night: tuple[float, float] | None = None, night_tol: float = NIGHT_FIT,
                levels: dict | None = None) -> ClampResult:
    """The E-series clamp resistor(s) that keep the period inside ``period_range_s``.

    Over ``lux_range`` and at every photoresistor corner the timing resistance must stay
    between the resistances giving the two bounds (read from the circuit's own period
    against resistance, one fast-engine call). Among the series values (and "none") that
    do, the pair keeping the widest typical period span wins; fewer parts break ties.

    ``night`` (lux, period in s) asks the typical period at that light level to be the
    given one within ``night_tol``: the pairs inside it come first, then the nearest.
    ``levels`` are the switching levels the periods are read at (default typical).

    Raises
    ------
    RequestError
        for a bad range or mode, or bounds the circuit cannot reach at all.
    """
    from pulsepick.series import get_series

    if mode not in CLAMP_MODES:
        raise RequestError(f"clamp {mode!r}; accepted: {', '.join(CLAMP_MODES)}")
    _check_bounds(period_range_s)
    _check_lux(lux_range, 2)
    lo_p, hi_p = (float(x) for x in period_range_s)
    param = timing_param(design)
    r_map, p_map = _period_map(design, param, levels)
    _check_reachable(r_map, p_map, lo_p, hi_p)
    r_lo = _resistance_for(r_map, p_map, max(lo_p, p_map[0]))
    r_hi = _resistance_for(r_map, p_map, min(hi_p, p_map[-1]))
    e_lo, e_hi = (float(x) for x in lux_range)
    bright_low = float(ldr.resistance(e_hi, "low"))
    dark_high = float(ldr.resistance(e_lo, "high"))
    typ_dark, typ_bright = float(ldr.resistance(e_lo, "typ")), float(ldr.resistance(e_hi, "typ"))

    values = get_series(series).values(1.0, max(10.0, 10 * r_hi))
    rs = np.r_[0.0, values] if mode in ("series", "both") else np.array([0.0])
    rp = np.r_[np.inf, values] if mode in ("parallel", "both") else np.array([np.inf])
    s, p = np.meshgrid(rs, rp, indexing="ij")

    def total(r_ldr):
        with np.errstate(divide="ignore", invalid="ignore"):
            par = np.where(np.isinf(p), r_ldr, r_ldr * p / (r_ldr + p))
        return s + par

    r_min, r_max = total(bright_low), total(dark_high)
    ok = (r_min >= r_lo * (1 - 1e-9)) & (r_max <= r_hi * (1 + 1e-9))
    span = np.log(total(typ_dark) / total(typ_bright))
    n_parts = (s > 0).astype(int) + np.isfinite(p).astype(int)
    miss = np.zeros_like(span)
    if night is not None:
        # how far the typical period at the night's light level is outside the tolerance
        r_night = _resistance_for(r_map, p_map, min(max(night[1], p_map[0]), p_map[-1]))
        dev = np.abs(np.log(total(float(ldr.resistance(night[0], "typ"))) / r_night))
        miss = np.maximum(dev - math.log1p(night_tol), 0.0)
    score = np.where(ok, span - 1e-6 * n_parts - NIGHT_MISS_WEIGHT * miss, -np.inf)
    best = np.unravel_index(int(np.argmax(score)), score.shape)
    if not np.isfinite(score[best]):
        return ClampResult(
            network=LdrNetwork(ldr), mode=mode, series=series,
            period_range_s=(lo_p, hi_p), r_needed_ohm=(r_lo, r_hi), span=math.nan,
            success=False,
            message=(f"no {series} clamp keeps every corner between "
                     f"{format_eng(r_lo, 'Ω')} and {format_eng(r_hi, 'Ω')}"
                     + ("" if mode == "both" else f"; try {hint('clamp', 'both')}")))
    net = LdrNetwork(ldr, series_ohm=float(s[best]), parallel_ohm=float(p[best]))
    sp = _period_ratio(r_map, p_map, float(total(typ_dark)[best]),
                       float(total(typ_bright)[best]))
    return ClampResult(network=net, mode=mode, series=series, period_range_s=(lo_p, hi_p),
                       r_needed_ohm=(r_lo, r_hi), span=sp, success=True,
                       message=f"clamp found: the typical period spans a factor {sp:.2f}")


def _period_ratio(r_map, p_map, r_dark: float, r_bright: float) -> float:
    lp = np.log(p_map)
    lr = np.log(r_map)
    return float(np.exp(np.interp(math.log(r_dark), lr, lp) - np.interp(math.log(r_bright),
                                                                          lr, lp)))


def with_network_value(design: Design, network: LdrNetwork, lux: float) -> Design:
    """The design with its timing resistor set to the network's typical value at ``lux``."""
    param = timing_param(design)
    value = float(network.resistance(lux, "typ"))
    return replace(design, values={**design.values, param: value})
