"""A complete blinker design: topology, component values, chip, parts and supply.

``Design`` is what ``check`` analyses, what the solver returns for each candidate and
what ``night`` runs through the night. It evaluates itself with either engine and
turns itself into a ``LoadCurve`` over a range of supplies.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from pulsepick.analysis.loadcurve import LoadCurve
from pulsepick.circuits.base import RUNS, STATUS_WORDS, Figures, Topology, check_values
from pulsepick.engine import fast, reference
from pulsepick.engine.environment import ChipSpec, PartChoice, make_env
from pulsepick.errors import CircuitError


@dataclass(frozen=True)
class Design:
    """One circuit with everything needed to evaluate it (SI units)."""

    topo: Topology
    values: dict[str, float]  # ohm / farad by parameter name (r1, c1, cp, rs, ...)
    chip: ChipSpec
    parts: PartChoice
    supply_v: float  # V, nominal (full) supply
    notes: tuple[str, ...] = field(default=())

    def __post_init__(self) -> None:
        object.__setattr__(self, "values", check_values(self.topo, dict(self.values)))
        if not (np.isfinite(self.supply_v) and self.supply_v > 0):
            raise CircuitError(f"supply {self.supply_v} V: needs a positive voltage")
        if self.chip.is_timer != (self.topo.core == "timer555"):
            want = "timer555" if self.topo.core == "timer555" else "a Schmitt family"
            raise CircuitError(f"core {self.topo.core} needs chip {want}, not {self.chip.family}")

    def env(self, vdd=None, **kwargs):
        """The engines' environment at ``vdd`` (default: the nominal supply)."""
        v = self.supply_v if vdd is None else vdd
        return make_env(self.chip, self.parts, v, c_timing=self.values["c1"], **kwargs)

    def fast(self, vdd=None, **kwargs) -> Figures:
        """Figures from the fast engine (arrays when ``vdd`` is an array)."""
        env, powered = self.env(vdd, **kwargs)
        return fast.evaluate(self.topo, self.values, env, powered=powered)

    def reference(self, vdd=None, **kwargs) -> reference.ReferenceResult:
        """Figures from the transient reference simulation (scalar supply only)."""
        env, powered = self.env(vdd, **kwargs)
        return reference.simulate(self.topo, self.values, env, powered=bool(np.all(powered)))

    def label(self) -> str:
        return f"{self.topo.label()}, {self.chip.family}, {self.parts.led.name}"


def status_word(code: Any) -> str:
    return STATUS_WORDS[int(code)]


def load_curve(design: Design, supplies) -> LoadCurve:
    """The design's figures over a grid of supplies, for night simulations."""
    v = np.sort(np.asarray(supplies, dtype=float))
    f = design.fast(v)
    lit = np.asarray(f.status) == RUNS
    period = np.where(lit, f.period_s, np.nan)
    n = v.size

    def arr(x):
        return np.broadcast_to(np.asarray(x, dtype=float), (n,)).copy()

    return LoadCurve(
        label=design.label(),
        supply_v=v,
        supply_avg_a=arr(f.supply_avg_a),
        period_s=arr(period),
        flash_s=arr(f.flash_s),
        led_peak_a=arr(f.led_peak_a),
        effective_a=arr(f.effective_a),
        effective_cd=arr(f.effective_mcd) * 1e-3,
        lit=lit,
    )
