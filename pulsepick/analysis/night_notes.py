"""The words of a night run: why the light stopped, what was assumed, what to watch.

Split out of :mod:`pulsepick.analysis.night`, which re-exports the public names.
"""

from __future__ import annotations

import math

import numpy as np

from pulsepick.units import format_eng

# estimate: thresholds above which a warning is worth the reader's attention.
LEAK_SHARE_WARNING = 0.25  # storage leakage share of the drained charge
ESR_DROP_WARNING_V = 0.1  # V, ESR x LED peak current

#: Below this share of its dusk LED peak the light counts as dim by dawn (estimate: a
#: tenth of the current is a large step down in brightness for a small indicator LED).
DIM_BY_DAWN_SHARE = 0.1
DIM_PREFIX = "the light dims steeply"


def dimming_note(figures) -> str | None:
    """A warning when the LED peak at dawn is under DIM_BY_DAWN_SHARE of the one at dusk."""
    by = {p.label: p for p in figures}
    dusk, dawn = by.get("dusk"), by.get("dawn")
    if dusk is None or dawn is None or not (dusk.lit and dawn.lit):
        return None
    a, b = float(dusk.led_peak_a), float(dawn.led_peak_a)
    if not (math.isfinite(a) and math.isfinite(b) and a > 0) or b >= DIM_BY_DAWN_SHARE * a:
        return None
    return (f"{DIM_PREFIX}: LED peak {format_eng(a, 'A')} at dusk, {format_eng(b, 'A')} at "
            f"dawn ({b / a:.0%} of it); towards dawn the light is barely visible, so it lasts "
            "the night only as a dim glow (a larger storage or a higher start keeps it bright)")


def solver_message(success: bool, stopped: bool, v_stop_v: float, t_s: float,
                   duration_s: float) -> str:
    """The integrator's outcome in our words (scipy's own messages stay inside)."""
    if stopped:
        return f"stopped at the stop voltage {v_stop_v:.2f} V after {t_s:.0f} s"
    if success:
        return f"ran to the end of the night ({duration_s:.0f} s)"
    return (f"gave up after {t_s:.0f} s of {duration_s:.0f} s: the step size fell below what "
            "the voltage's precision allows; the figures after that are missing")


def stop_reason(load, v_start_v: float, v_stop: float, runtime: float, lasts: bool,
                light_is_limit: bool, stop_at_v: float | None) -> str:
    """Why the light stopped (or that it lasts the night), in one line."""
    if lasts:
        return "lasts the night"
    if runtime == 0.0 and math.isinf(v_stop) and load.lit_band_v() is not None:
        band_top = load.lit_band_v()[1]
        return (
            f"the start {v_start_v:.2f} V is over the highest supply the circuit runs at "
            f"({band_top:.2f} V, the top of the chip's supply range): it is dark there; start "
            f"at or under {band_top:.2f} V"
        )
    if runtime == 0.0 and math.isinf(v_stop):
        return (
            f"the light never starts: the circuit is not lit even at {load.supply_v[-1]:.2f} V, "
            "the top of its load curve"
        )
    if runtime == 0.0:
        return (
            f"the light never starts: {v_start_v:.2f} V is at or below the stop voltage "
            f"{v_stop:.2f} V"
        )
    if light_is_limit:
        return (
            f"below {v_stop:.2f} V the LED no longer reaches visible current or the chip "
            "leaves its supply range"
        )
    if stop_at_v is None:
        return "the storage is empty (0 V)"
    return f"the storage reaches the stop voltage {v_stop:.2f} V"


def night_assumptions(storage, load, c: float, capacitance_f: float | None,
                      storage_leak_a: float | None, leak_level: str, t_since_charge_s: float,
                      light_stop: float) -> list[str]:
    """What a night run took for granted, one line each."""
    assumptions = [
        f"capacitance {format_eng(c, 'F')}"
        + (" (nominal)" if capacitance_f is None else " (given)")
        + (
            f"; the part's tolerance spans {format_eng(storage.capacitance_min_f, 'F')} to "
            f"{format_eng(storage.capacitance_max_f, 'F')}"
            if storage.tol_minus_pct or storage.tol_plus_pct
            else ""
        ),
    ]
    if storage_leak_a is not None:
        assumptions.append(f"storage leakage fixed at {format_eng(storage_leak_a, 'A')} (given)")
    else:
        level = storage.leak_settled_a if leak_level == "settled" else storage.leak_max_a
        assumptions.append(
            f"storage leakage: {leak_level} level {format_eng(level, 'A')} at the rated "
            f"voltage, in proportion to the voltage, {storage.leak_initial_multiple:g} times "
            f"higher right after charging and falling with a "
            f"{storage.leak_decay_s / 3600:g} h time constant (estimate); "
            f"charged {t_since_charge_s / 3600:g} h before dusk"
        )
    if load is not None:
        assumptions.append(
            "the circuit is its average supply current at each voltage (each flash is spread "
            "over its period); the ESR drop during flashes is not in the budget"
        )
        if math.isfinite(light_stop):
            assumptions.append(
                f"the light's stop voltage {light_stop:.3g} V is resolved to the load curve's "
                "grid step"
            )
        assumptions.extend(load.notes)
    else:
        assumptions.append("bare storage budget: no circuit, only the extra load and leakage")
    return assumptions


def _load_warnings(storage, load, v_start_v: float) -> list[str]:
    """Warnings about the circuit's load curve: out of range start, ESR drop at the peak."""
    warnings = []
    if v_start_v > load.supply_v[-1] + 1e-9:
        warnings.append(
            f"start voltage {v_start_v:.2f} V is above the load curve's highest supply "
            f"{load.supply_v[-1]:.2f} V; the circuit's figures there are held at that value"
        )
    peak = load.led_peak_a[np.isfinite(load.led_peak_a)]
    if peak.size:
        drop = storage.esr_ohm * float(peak.max())
        if drop > ESR_DROP_WARNING_V:
            warnings.append(
                f"the storage ESR ({format_eng(storage.esr_ohm, 'Ω')}) drops {drop:.2f} V at "
                "the LED peak current: flashes will be dimmer than the figures and the "
                "light may stop earlier"
            )
    return warnings


def night_warnings(storage, load, v_start_v: float, charges: np.ndarray, runtime: float,
                   lasts: bool, reason: str, figures, success: bool, message: str) -> list[str]:
    """What the reader should watch in a night run, one line each."""
    warnings = []
    if v_start_v > storage.v_rated_v:
        warnings.append(
            f"start voltage {v_start_v:.2f} V is above the storage rating {storage.v_rated_v:.2f} V"
        )
    shares = (
        charges / charges.sum() if charges.sum() > 0 else np.zeros(3)
    )
    if shares[1] > LEAK_SHARE_WARNING:
        warnings.append(
            f"storage leakage takes {shares[1]:.0%} of the drained charge; a part that has "
            "settled at voltage for days leaks far less than its datasheet maximum"
        )
    if load is not None:
        warnings.extend(_load_warnings(storage, load, v_start_v))
    if runtime == 0.0 and not lasts:
        warnings.append(reason)
    dim = dimming_note(figures) if lasts else None
    if dim is not None:
        warnings.append(dim)
    if not success:
        warnings.append(f"the integrator did not finish: {message}")
    return warnings
