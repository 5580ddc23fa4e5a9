"""Dusk gating of a build: which hold each light takes, the gates, the parts, the day draw.

Each Schmitt light is held still by day through one hold diode from the dusk detector
(arrangements and equations in :mod:`pulsepick.circuits.dusk_hold`); a CMOS 555 takes the
detector on its RESET pin. The build needs the detector's sense gate, plus one inverter
when any light takes ``hold-high``.

By day a held light draws a steady current through its timing resistance (the capacitor
is held at one end, the output sits at the other rail), in series with the hold diode and
the two gate outputs:

    I_hold = I_D(V_supply, R_timing + R_out,high + R_out,low)

where I_D(V, R) is the diode's forward current with R in series and V across both
(Shockley law, ``pulsepick.parts.junction``). The timing resistance is R1, or R1 in
parallel with R2 for a steered core whose diode branch conducts in the held phase (its
diode drop left out: an upper bound of the current). The hold holds when the node stays
beyond the threshold at its guaranteed limit: below VT- (min) for ``hold-low``, above
VT+ (max) for ``hold-high``, at both ends of the supply range. A held 555 draws its
quiescent current only.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pulsepick.circuits.dusk_hold import HOLD_DIODE, hold_kind


@dataclass(frozen=True)
class LightHold:
    """How one light is held off by day."""

    light: int  # light index
    kind: str  # "hold-low", "hold-high" or "reset"
    held_a: float  # A, steady draw while held, at the full supply
    held_end_a: float  # A, the same at the end of the night's supply
    node_v: float  # V, the held timing node at the end of the night's supply (nan: reset)
    limit_v: float  # V, the threshold limit it must stay beyond (nan: reset)
    holds: bool  # the node stays beyond the limit at both ends of the supply range

    @property
    def diode(self) -> bool:
        return self.kind != "reset"


@dataclass(frozen=True)
class BuildGating:
    """The dusk gating of a whole build."""

    holds: tuple[LightHold, ...]
    detector_gates: int  # the sense gate, plus one inverter when a light takes hold-high
    diode: str  # hold diode key (data/parts/diodes.csv)
    held_a: float  # A, every light's held draw together at the full supply
    held_end_a: float  # A, the same at the end of the night's supply

    @property
    def arrangement(self) -> str:
        """The arrangements used, in words."""
        words = []
        kinds = {h.kind for h in self.holds}
        if "hold-low" in kinds:
            words.append("a diode from each timing capacitor to the detector's output "
                         "(held low by day)")
        if "hold-high" in kinds:
            words.append("a spare gate inverts the detector and a diode from it holds each "
                         "timing capacitor high by day")
        if "reset" in kinds:
            words.append("the detector's output on each 555's RESET pin")
        return "; ".join(words)


def _timing_r(design, kind: str) -> float:
    from pulsepick.circuits.base import get_core

    output = "high" if kind == "hold-low" else "low"  # the oscillator's output while held
    return get_core(design.topo.core).held_resistance(design.values, design.topo, output)


def light_hold(design, index: int, supply_lo_v: float, supply_hi_v: float) -> LightHold:
    """The hold of one light and its held draw (see the module doc)."""
    from pulsepick.engine.environment import chip_model
    from pulsepick.engine.reference import ScalarShockley
    from pulsepick.parts.diode import get_diode

    kind = hold_kind(design.topo)
    if kind == "reset":
        model = chip_model(design.chip)
        hi = float(model.supply_current(supply_hi_v))
        lo = float(model.supply_current(supply_lo_v))
        return LightHold(index, kind, hi, lo, np.nan, np.nan, True)
    model = chip_model(design.chip)
    diode = ScalarShockley(get_diode(HOLD_DIODE).junction)
    r = _timing_r(design, kind)
    out = {}
    ok = True
    for vdd in (supply_hi_v, supply_lo_v):
        rh = float(model.rout_high(vdd, "typ"))
        rl = float(model.rout_low(vdd, "typ"))
        i = diode.current(vdd, r + rh + rl)
        th = model.thresholds(vdd)
        if kind == "hold-low":
            node = vdd - i * (r + rh)
            limit = float(th.vt_minus_min)
            ok &= node < limit
        else:
            node = i * (r + rl)
            limit = float(th.vt_plus_max)
            ok &= node > limit
        out[vdd] = (i, node, limit)
    i_hi = out[supply_hi_v][0]
    i_lo, node_lo, limit_lo = out[supply_lo_v]
    return LightHold(index, kind, float(i_hi), float(i_lo), float(node_lo), limit_lo,
                     bool(ok))


def build_gating(designs, supply_lo_v: float, supply_hi_v: float) -> BuildGating:
    """The gating of every light of a build (``designs`` in light order)."""
    holds = tuple(light_hold(d, i, supply_lo_v, supply_hi_v) for i, d in enumerate(designs))
    return BuildGating(
        holds=holds, detector_gates=1 + int(any(h.kind == "hold-high" for h in holds)),
        diode=HOLD_DIODE, held_a=float(sum(h.held_a for h in holds)),
        held_end_a=float(sum(h.held_end_a for h in holds)))


def detector_gates(topos) -> int:
    """Gates the dusk detector takes for lights of these topologies (before sizing)."""
    return 1 + int(any(hold_kind(t) == "hold-high" for t in topos))


def hold_part_lines(gating: BuildGating, names) -> tuple:
    """One hold diode per held Schmitt light (``PartLine``; designators set by the build)."""
    from pulsepick.parts.diode import get_diode
    from pulsepick.partslist import PartLine

    d = get_diode(gating.diode)
    out = []
    for h in gating.holds:
        if not h.diode:
            continue
        way = ("anode at the timing capacitor, cathode at the dusk detector's output"
               if h.kind == "hold-low" else
               "anode at the detector's inverter output, cathode at the timing capacitor")
        out.append(PartLine(
            ref="D", kind="diode", value=None, unit="", display=d.name, code=gating.diode,
            series="", tolerance="", tolerance_pct=None, dielectric="", rating="",
            role=f"{names[h.light]}: dusk hold diode ({h.kind})", note=way))
    return tuple(out)


__all__ = ["BuildGating", "LightHold", "build_gating", "detector_gates", "hold_part_lines",
           "light_hold"]


def night_leak_a(topos, supply_v: float) -> float:
    """The hold diodes' reverse leakage at night (A), the detector's line sitting a supply
    away from each held node: the diode's typical leakage scaled down in proportion to the
    reverse voltage from its test voltage (estimate; a Schottky's leakage falls with
    voltage, data/parts/diodes.csv)."""
    from pulsepick.parts.diode import get_diode

    d = get_diode(HOLD_DIODE)
    n = sum(1 for t in topos if hold_kind(t) != "reset")
    return n * d.leak_typ_a * min(1.0, supply_v / d.leak_at_v)
