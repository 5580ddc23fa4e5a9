"""A complete blinker design: topology, component values, chip, parts and supply.

``Design`` is what ``check`` analyses, what the solver returns for each candidate and
what ``night`` runs through the night. It evaluates itself with either engine and
turns itself into a ``LoadCurve`` over a range of supplies.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from pulsepick.circuits.base import (
    RUNS,
    STATUS_WORDS,
    Figures,
    Topology,
    check_values,
    core_fits_chip,
    get_core,
)
from pulsepick.engine import fast, reference
from pulsepick.engine.environment import ChipSpec, PartChoice, make_env
from pulsepick.engine.loadcurve import LoadCurve
from pulsepick.errors import CircuitError
from pulsepick.parts.capacitor import get_cap_kind, pick_voltage_rating


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
        if not core_fits_chip(self.topo.core, self.chip.is_timer):
            core = get_core(self.topo.core)
            want = core.default_family if core.chip_kind == "timer" else "a Schmitt family"
            raise CircuitError(f"core {self.topo.core} needs chip {want}, not {self.chip.family}")

    def env(self, vdd=None, **kwargs):
        """The engines' environment at ``vdd`` (default: the nominal supply)."""
        v = self.supply_v if vdd is None else vdd
        return make_env(self.chip, self.parts, v, c_timing=self.values["c1"], **kwargs)

    def timing_cap_factor(self, env) -> Any:
        """Share of C1 left under its working DC bias (1 except for class-2 ceramics).

        A class-2 ceramic keeps only part of its value under bias; the timing capacitor
        works at the middle of its swing between the switching levels.
        """
        kind = get_cap_kind(self.parts.timing_cap)
        if not kind.class2:
            return 1.0
        v_bias = 0.5 * (np.asarray(env.vt_plus) + np.asarray(env.vt_minus))
        rating = pick_voltage_rating(kind, float(np.max(env.vdd)))
        return kind.dc_bias_factor(v_bias, rating)

    def working_values(self, env) -> dict[str, Any]:
        """Component values as the circuit sees them (C1 under its DC bias)."""
        factor = self.timing_cap_factor(env)
        if np.all(np.asarray(factor) == 1.0):
            return self.values
        return {**self.values, "c1": self.values["c1"] * factor}

    def fast(self, vdd=None, **kwargs) -> Figures:
        """Figures from the fast engine (arrays when ``vdd`` is an array)."""
        env, powered = self.env(vdd, **kwargs)
        return fast.evaluate(self.topo, self.working_values(env), env, powered=powered)

    def reference(self, vdd=None, *, rtol: float | None = None,
                  **kwargs) -> reference.ReferenceResult:
        """Figures from the transient reference simulation (scalar supply only);
        ``rtol``: the integrator's relative tolerance (None: the engine's default)."""
        env, powered = self.env(vdd, **kwargs)
        extra = {} if rtol is None else {"rtol": rtol}
        return reference.simulate(self.topo, self.working_values(env), env,
                                  powered=bool(np.all(powered)), **extra)

    def label(self) -> str:
        return f"{self.topo.label()}, {self.chip.family}, {self.parts.led.name}"


def levels_kw(levels: tuple[float, float] | None) -> dict[str, float]:
    """Keyword arguments of :meth:`Design.env`, :meth:`Design.fast` and
    :meth:`Design.reference` for the switching levels ``levels`` (VT+, VT- in V, such as
    the median chip a search aimed at); None: the chip's typical levels."""
    return {} if levels is None else {"vt_plus": levels[0], "vt_minus": levels[1]}


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
