"""Transient of one oscillator held off by the dusk detector (reference engine, gated).

The circuit of :mod:`pulsepick.engine.reference` (the same core and stage equations) with
the dusk detector's gate and the hold diode of :mod:`pulsepick.circuits.dusk_hold` added:
the detector is a Schmitt gate of the same package (the same VT+ and VT-) whose input
follows ``sense_v(t)``, the panel voltage at the sense input; its output (or the inverted
line for ``hold-high``) drives the hold diode through the gate's output resistance into
the timing node. ``solve_ivp`` (LSODA) integrates the timing node and the stage's states,
switching the oscillator on its threshold events and the detector on the sense voltage
crossing VT+ (day) or VT- (night).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy.integrate import solve_ivp

from pulsepick.circuits.base import Env, Topology
from pulsepick.circuits.dusk_hold import HoldKind, detector_line, hold_current
from pulsepick.engine.reference import ScalarShockley, _Circuit, _scalar_env
from pulsepick.errors import CircuitError


@dataclass(frozen=True)
class GatedRun:
    """What the gated transient did: oscillator edges, detector switchings, LED charge."""

    t_end_s: float  # s, length of the run
    edges_s: tuple[float, ...]  # s, times the oscillator's output switched
    day_s: tuple[float, ...]  # s, times the detector switched to day
    night_s: tuple[float, ...]  # s, times the detector switched to night
    led_charge: tuple[tuple[float, float, float], ...]  # (start s, end s, LED charge C)
    hold_kind: str
    success: bool
    message: str

    def edges_between(self, a: float, b: float) -> int:
        """Oscillator output switchings in a..b (s)."""
        return sum(1 for t in self.edges_s if a <= t < b)

    def led_charge_between(self, a: float, b: float) -> float:
        """LED charge (C) delivered in the segments that lie inside a..b (s)."""
        return sum(q for s, e, q in self.led_charge if s >= a and e <= b)


def simulate_gated(topo: Topology, values: dict, env: Env, sense_v: Callable[[float], float],
                   t_end_s: float, *, kind: HoldKind, diode, day_at_start: bool = True,
                   max_step_s: float | None = None, rtol: float = 1e-8) -> GatedRun:
    """Integrate the held oscillator over 0..``t_end_s`` (s) as the sense voltage moves.

    ``diode`` is the hold diode's model (``pulsepick.parts.diode.DiodeModel``); ``kind``
    the arrangement (``hold-low`` or ``hold-high``). The run starts in the day state
    (``day_at_start``) with the timing capacitor at VT-.
    """
    if kind not in ("hold-low", "hold-high"):
        raise CircuitError(f"gated transient of a {kind!r} hold: accepted hold-low, hold-high")
    senv = _scalar_env(env)
    vals = {k: float(np.asarray(x).reshape(-1)[0]) for k, x in values.items()}
    circ = _Circuit(topo, vals, senv)
    n_x = circ.n_x
    d = ScalarShockley(diode.junction)
    c = vals["c1"]
    y = np.array([senv.vt_minus, *circ.stage.ref_init(vals, senv, topo), 0.0, 0.0, 0.0])
    atol = np.array([1e-10] + [1e-10] * n_x + [1e-16, 1e-16, 1e-16])
    high = kind == "hold-low"  # start where the hold leaves the output
    day = day_at_start
    t = 0.0
    edges: list[float] = []
    days: list[float] = []
    nights: list[float] = []
    charge: list[tuple[float, float, float]] = []
    step = max_step_s if max_step_s is not None else 0.05 * circ.tau_scale()

    def rhs(_t, yy, high=True, day=True):
        vc, xs = yy[0], list(yy[1:1 + n_x])
        i_cap, dxs, i_led, i_sup, _ = circ.nodes(vc, xs, high)
        line_high = detector_line(day, kind)
        line_v, r_line = (senv.vdd, senv.rout_high) if line_high else (0.0, senv.rout_low)
        i_hold = hold_current(kind, vc, line_v, d, r_line)
        i_sup_hold = max(-i_hold, 0.0) if line_high else 0.0
        return [(i_cap - i_hold) / c, *dxs, i_led, i_sup + i_sup_hold, 0.0]

    for _ in range(100_000):
        if t >= t_end_s:
            break
        level = senv.vt_plus if high else senv.vt_minus

        def osc(_t, yy, level=level, high=high, day=day):
            return yy[0] - level

        osc.terminal = True
        osc.direction = 1.0 if high else -1.0

        def det(tt, _yy, day=day):
            return sense_v(tt) - (senv.vt_minus if day else senv.vt_plus)

        det.terminal = True
        det.direction = -1.0 if day else 1.0
        q0 = float(y[1 + n_x])
        sol = solve_ivp(lambda tt, yy, high=high, day=day: rhs(tt, yy, high, day),
                        (t, t_end_s), y, method="LSODA", events=(osc, det), rtol=rtol,
                        atol=atol, max_step=step)
        if not sol.success:
            return GatedRun(t_end_s, tuple(edges), tuple(days), tuple(nights), tuple(charge),
                            kind, False, sol.message)
        t_osc = sol.t_events[0][0] if sol.t_events[0].size else np.inf
        t_det = sol.t_events[1][0] if sol.t_events[1].size else np.inf
        if np.isinf(t_osc) and np.isinf(t_det):
            charge.append((t, t_end_s, float(sol.y[1 + n_x, -1]) - q0))
            t = t_end_s
            break
        if t_osc <= t_det:
            t_new, y = float(t_osc), np.array(sol.y_events[0][0], dtype=float)
            y[0] = level
            high = not high
            edges.append(t_new)
        else:
            t_new, y = float(t_det), np.array(sol.y_events[1][0], dtype=float)
            day = not day
            (days if day else nights).append(t_new)
        charge.append((t, t_new, float(y[1 + n_x]) - q0))
        t = t_new
    return GatedRun(t_end_s, tuple(edges), tuple(days), tuple(nights), tuple(charge), kind,
                    True, "integrated to the end")


__all__ = ["GatedRun", "simulate_gated"]
