"""Result objects as the views of :mod:`pulsepick.output.plot`: one period, the spread of
the builds, the drift over the supply, the night."""

from __future__ import annotations

import math

import numpy as np

from pulsepick.output.plot import (
    DriftView,
    NightView,
    SpreadView,
    WaveView,
)
from pulsepick.units import format_rkm


def circuit_title(design) -> str:
    """One line naming the circuit: topology, chip, LED, supply and values."""
    values = ", ".join(f"{k.upper()} {format_rkm(v, 'R' if k.startswith('r') else 'C')}"
                       for k, v in design.values.items() if v)
    return f"{design.label()} at {design.supply_v:g} V: {values}"


def wave_view(design, ref, target_period_s: float | None = None) -> WaveView | None:
    """One period from a reference run (None when it has no trace: it stalls)."""
    if ref is None or not ref.trace:
        return None
    env, _ = design.env()
    row = ref.figures.row()
    return WaveView(
        t_s=np.asarray(ref.trace["t_s"], dtype=float),
        vc_v=np.asarray(ref.trace["vc_v"], dtype=float),
        led_a=np.asarray(ref.trace["led_a"], dtype=float),
        vt_plus_v=float(np.ravel(env.vt_plus)[0]), vt_minus_v=float(np.ravel(env.vt_minus)[0]),
        supply_v=float(design.supply_v), high_s=float(row["high_s"]),
        target_period_s=target_period_s,
    )


def oscillating_periods(spread) -> tuple[np.ndarray, int]:
    """Periods (s) of the builds that oscillate, and how many builds do not."""
    from pulsepick.circuits.base import DARK, RUNS

    per = np.asarray(spread.samples.get("period_s", ()), dtype=float)
    st = np.asarray(spread.samples.get("status", np.zeros(per.size)))
    ok = ((st == RUNS) | (st == DARK)) & np.isfinite(per)
    return per[ok], int(spread.builds - ok.sum())


def spread_view(spread) -> SpreadView | None:
    """The period histogram of a :class:`~pulsepick.analysis.spread.SpreadResult`."""
    if spread is None or not spread.samples:
        return None
    per, missing = oscillating_periods(spread)
    p5, p50, p95 = spread.quantiles["period_s"]
    if per.size == 0 or not math.isfinite(p50):
        return None
    return SpreadView(period_s=per, p5_s=p5, p50_s=p50, p95_s=p95,
                      target_s=spread.target_period_s, yield_band=spread.yield_band,
                      builds=spread.builds, seed=spread.seed, not_drawn=missing)


def drift_view(drift, target_period_s=None, yield_band=None) -> DriftView | None:
    if drift is None or len(drift.supply_v) < 2:
        return None
    return DriftView(supply_v=drift.supply_v, period_s=drift.period_s,
                     effective_a=drift.effective_a, target_period_s=target_period_s,
                     yield_band=yield_band, dark_below_v=drift.dark_below_v)


def night_view(result, open_ended: bool = False) -> NightView:
    tl = result.timeline
    brightness, unit = None, "A"
    if result.load is not None:
        cd = np.asarray(tl.effective_cd, dtype=float)
        if np.any(np.isfinite(cd) & (cd > 0)):
            brightness, unit = cd, "cd"
        else:
            brightness = np.asarray(tl.effective_a, dtype=float)
    stop = result.v_stop_v if 0 < result.v_stop_v < math.inf else None
    stop_label = "light stops" if result.load is not None else "stop voltage reached"
    return NightView(t_s=np.asarray(tl.t_s, dtype=float), v_v=np.asarray(tl.v_v, dtype=float),
                     brightness=brightness, brightness_unit=unit, v_start_v=result.v_start_v,
                     v_stop_v=stop, runtime_s=result.runtime_s, duration_s=result.duration_s,
                     lasts=result.lasts_the_night, dusk=result.dusk, open_ended=open_ended,
                     stop_label=stop_label)


_CAPTIONS = {
    WaveView: lambda v: ("One period" + (f" of {v.light}" if v.light else "") +
                         ": timing-capacitor voltage with the switching thresholds, "
                         "the gate output and the LED current."),
    SpreadView: lambda v: (f"The period over {v.builds:,} builds (seed {v.seed}) with the "
                           "P5..P95 band" + (" and the target" if v.target_s else "") + "."),
    DriftView: lambda v: "Period and effective LED current as the supply falls.",
    NightView: lambda v: "Storage voltage and brightness through the night.",
}
