"""Reference engine: transient simulation of one circuit to periodic steady state.

Independent of the fast engine: it integrates the circuit's differential equations
with an explicit Runge-Kutta method (:mod:`.dormand_prince`; scipy's LSODA where the
circuit turns out stiff for it), switches the gate on threshold events,
and at every step solves the driving output node from Kirchhoff's current law
(so the LED stage's load on the timing gate is included as it happens). Junction
currents use this module's own scalar Shockley solver. It runs cycles until the
period and the stage state repeat, then measures the last cycle.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import partial
from types import SimpleNamespace
from typing import Any

import numpy as np

from pulsepick.circuits.base import (
    DARK,
    RUNS,
    STALLS,
    UNPOWERED,
    Env,
    Figures,
    Topology,
    check_values,
    effective_current,
    get_core,
    get_stage,
)
from pulsepick.circuits.decay import K_OVER_Q
from pulsepick.engine.dormand_prince import Stiff, brentq, integrate


def load_integrator():
    """``scipy.integrate.solve_ivp`` with LSODA, for the circuits that are stiff for the
    explicit method, imported on first use: scipy.integrate brings scipy.optimize,
    scipy.linalg and scipy.special with it (about half a second of start-up)."""
    from scipy.integrate import solve_ivp

    return partial(solve_ivp, method="LSODA", dense_output=True)


#: A Newton step of :class:`ScalarShockley` below this (in ln current) ends it: the
#: convergence is quadratic with a constant under 1/2 (f''/2f' of its convex function),
#: so the step leaves an error under 1e-14 of the current (handbook Newton analysis).
NEWTON_STEP_DONE = 1e-7


class ScalarShockley:
    """Forward current of a junction plus series resistance, solved by Newton in ln(I + I_s).

    V = n·V_T·ln(1 + I/I_s) + I·R is convex and increasing in u = ln(I + I_s); Newton
    started above the root (the smaller of the two single-term solutions) converges
    monotonically; started below it (from the previous call's answer, usually within a
    hair of the new root) one step lands above it, and steps are kept under the bound.
    """

    def __init__(self, junction) -> None:
        self.i_s = float(junction.i_s)
        self.nvt = float(junction.n) * K_OVER_Q * float(junction.temperature_k)
        self.r_s = float(junction.r_s)
        self._ln_is = math.log(self.i_s)
        self._last_u: float | None = None

    def current(self, v: float, r_ext: float) -> float:
        if v <= 0.0:
            return 0.0
        i_s, nvt, r, ln_is = self.i_s, self.nvt, self.r_s + r_ext, self._ln_is
        u_hi = ln_is + min(v / nvt, 700.0)
        if r > 0:
            u_hi = min(u_hi, math.log(i_s + v / r))
        u = u_hi if self._last_u is None else min(self._last_u, u_hi)
        for _ in range(100):
            e = math.exp(u)
            f = nvt * (u - ln_is) + (e - i_s) * r - v
            step = f / (nvt + e * r)
            if u - step >= u_hi:
                u = u_hi
            else:
                u -= step
                if abs(step) < NEWTON_STEP_DONE:
                    break
        self._last_u = u
        return max(math.exp(u) - i_s, 0.0)


@dataclass(frozen=True)
class ReferenceResult:
    """Figures of one circuit from the transient simulation, with the last cycle's trace."""

    figures: Figures
    success: bool
    message: str
    cycles: int
    trace: dict[str, Any] = field(default_factory=dict)  # t_s, vc_v, vo_v, led_a


def _scalar_env(env: Env) -> SimpleNamespace:
    def f(x):
        return None if x is None else float(np.asarray(x).reshape(-1)[0])

    ns = SimpleNamespace(
        vdd=f(env.vdd), vt_plus=f(env.vt_plus), vt_minus=f(env.vt_minus),
        rout_high=f(env.rout_high), rout_low=f(env.rout_low), pin_leak_a=f(env.pin_leak_a),
        iq_a=f(env.iq_a), cap_leak_g=f(env.cap_leak_g), r_discharge=f(env.r_discharge),
        cross_current=env.cross_current, cross_override_a=f(env.cross_override_a),
        effective_a_s=env.effective_a_s, led=env.led,
    )
    ns.led_scalar = ScalarShockley(env.led.junction)
    for name in ("steer_diode", "reset_diode", "fade_diode"):
        model = getattr(env, name)
        short = name.split("_")[0]
        setattr(ns, f"{short}_scalar" if short != "steer" else "steer_diode_scalar",
                ScalarShockley(model.junction) if model is not None else None)
    return ns


class _Circuit:
    """The equations of one circuit, assembled from its core and stage modules."""

    def __init__(self, topo: Topology, values: dict, env: SimpleNamespace) -> None:
        self.topo, self.v, self.env = topo, values, env
        self.core, self.stage = get_core(topo.core), get_stage(topo.stage)
        self.timer = self.core.chip_kind == "timer"
        self.n_x = self.stage.n_states
        self._last_node: dict = {}
        self._last_slope: dict = {}
        # the last evaluation of each side's currents: the node solve ends on the root,
        # where :meth:`nodes` asks for them once more
        self._core_last: tuple = (None, None)
        self._stage_last: tuple = (None, None)

    def _core(self, vo: float, vc: float, high: bool) -> tuple:
        """``core.ref_currents`` at ``vo``, the timing capacitor at ``vc``."""
        key, val = self._core_last
        if key != (vo, vc, high):
            key = (vo, vc, high)
            val = self.core.ref_currents(self.v, self.env, self.topo, vo, vc, high)
            self._core_last = (key, val)
        return val

    def _stage(self, vo: float, xs: list[float], high: bool) -> tuple:
        """``stage.ref_currents`` at ``vo``, the stage's states at ``xs``."""
        key, val = self._stage_last
        if key != (vo, tuple(xs), high):
            key = (vo, tuple(xs), high)
            val = self.stage.ref_currents(self.v, self.env, self.topo, vo, xs, high)
            self._stage_last = (key, val)
        return val

    def _solve_node(self, v_src: float, r_out: float, load, key) -> float:
        """Node voltage where the gate's output current equals the load's draw.

        Secant steps from the node's previous voltage (it moves little between calls),
        falling back to a bracketed root find when they do not settle.
        """
        def kcl(vo):
            return (v_src - vo) / r_out - load(vo)

        x0 = self._last_node.get(key)
        if x0 is not None:
            f0 = kcl(x0)
            if f0 == 0.0:
                return x0
            # the first step with the slope the previous call ended on (the node's load
            # changes little between calls): one evaluation fewer than a fresh secant
            slope = self._last_slope.get(key)
            x1 = x0 - f0 / slope if slope else math.nan
            if not math.isfinite(x1):
                x1 = x0 + 1e-4
            elif abs(x1 - x0) < 1e-12:  # the same test as the secant steps' below
                self._last_node[key] = x1
                return x1
            f1 = kcl(x1)
            for _ in range(12):
                if f1 == f0:
                    break
                slope = (f1 - f0) / (x1 - x0)
                x2 = x1 - f1 / slope
                x0, f0 = x1, f1
                x1, f1 = x2, kcl(x2)
                if abs(x1 - x0) < 1e-12:
                    self._last_node[key] = x1
                    self._last_slope[key] = slope
                    return x1
        lo, hi = -2.0 - self.env.vdd, 2.0 * self.env.vdd + 2.0
        root = brentq(kcl, lo, hi, xtol=1e-13, rtol=1e-13, maxiter=200)
        self._last_node[key] = root
        return root

    def nodes(self, vc: float, xs: list[float], high: bool):
        """Solve the output nodes; return (i_cap, dxs, i_led, i_supply, vo)."""
        env, topo = self.env, self.topo
        core_out = lambda vo: self._core(vo, vc, high)[1]  # noqa: E731
        stage_out = lambda vo, dh: self._stage(vo, xs, dh)[0]  # noqa: E731
        v_src, r_out = (env.vdd, env.rout_high) if high else (0.0, env.rout_low)
        if self.timer:
            vo_t = v_src
            vo_s = self._solve_node(v_src, r_out, lambda vo: stage_out(vo, high), ("s", high))
            drv_high = high
            supply_gate = (env.vdd - vo_s) / env.rout_high if high else 0.0
        elif topo.buffered:
            vo_t = self._solve_node(v_src, r_out, core_out, ("t", high))
            drv_high = not high
            b_src, b_r = (env.vdd, env.rout_high) if drv_high else (0.0, env.rout_low)
            vo_s = self._solve_node(b_src, b_r, lambda vo: stage_out(vo, drv_high),
                                    ("s", drv_high))
            supply_gate = ((env.vdd - vo_t) / env.rout_high if high else 0.0) + \
                          ((env.vdd - vo_s) / env.rout_high if drv_high else 0.0)
        else:
            vo_t = self._solve_node(v_src, r_out, lambda vo: core_out(vo) + stage_out(vo, high),
                                    ("t", high))
            vo_s = vo_t
            drv_high = high
            supply_gate = (env.vdd - vo_t) / env.rout_high if high else 0.0
        i_cap, _, i_core_supply = self._core(vo_t, vc, high)
        _, dxs, i_led, i_stage_supply = self._stage(vo_s, xs, drv_high)
        return i_cap, dxs, i_led, supply_gate + i_core_supply + i_stage_supply, vo_t

    def rhs(self, high: bool):
        env, c = self.env, self.v["c1"]
        n_x = self.n_x

        def f(_t, y):
            vc, xs = y[0], list(y[1:1 + n_x])
            i_cap, dxs, i_led, i_sup, _ = self.nodes(vc, xs, high)
            i_x = 0.0
            if env.cross_current is not None and env.cross_override_a is None and not self.timer:
                i_x = float(env.cross_current(vc, env.vdd))
            return [i_cap / c, *dxs, i_led, i_sup, i_x]

        return f

    def tau_scale(self) -> float:
        v = self.v
        r = v.get("r1", 0.0) + v.get("ra", 0.0) + v.get("rb", 0.0)
        return r * v["c1"]


#: Two cycles whose periods differ by less than this share are the periodic steady state
#: (with the stage's state within 1 µV), or by this many times the integrator's relative
#: tolerance where that is larger: a looser integration repeats its cycles only so well.
SETTLED_PERIOD = 1e-8
SETTLED_PER_RTOL = 10.0


def simulate(topo: Topology, values: dict, env: Env, *, max_cycles: int = 400,
             rtol: float = 1e-9, powered: bool = True) -> ReferenceResult:
    """Simulate one circuit (scalar values) to periodic steady state and measure it.

    Each phase is integrated with the explicit Runge-Kutta method of
    :mod:`.dormand_prince`; from the first phase that is stiff for it on, with LSODA.
    """
    vals = {k: float(np.asarray(x).reshape(-1)[0]) for k, x in check_values(topo, values).items()}
    integrator = integrate  # LSODA once a phase is stiff for it
    senv = _scalar_env(env)
    circ = _Circuit(topo, vals, senv)
    n_x = circ.n_x
    y = np.array([senv.vt_minus, *circ.stage.ref_init(vals, senv, topo), 0.0, 0.0, 0.0])
    atol = np.array([1e-10] + [1e-10] * n_x + [1e-16, 1e-16, 1e-16])
    t_max = 60.0 * circ.tau_scale()
    periods: list[float] = []
    edge_states: list[np.ndarray] = []
    last: list[Any] = []
    message = "converged"
    success = True
    stalled = False
    stalled_high = False
    cycles = 0
    for cycles in range(1, max_cycles + 1):  # noqa: B007 - the count is reported
        sols = []
        t0 = 0.0
        for high in (True, False):
            level = senv.vt_plus if high else senv.vt_minus

            def event(_t, yy, level=level):
                return yy[0] - level

            event.terminal = True
            event.direction = 1.0 if high else -1.0
            args = (circ.rhs(high), (t0, t0 + t_max), y)
            kw = {"events": event, "rtol": rtol, "atol": atol,
                  "first_step": min(1e-6 * circ.tau_scale(), 1e-4)}
            try:
                sol = integrator(*args, **kw)
            except Stiff:
                integrator = load_integrator()
                sol = integrator(*args, **kw)
            if not sol.success or sol.t_events[0].size == 0:
                stalled = True
                stalled_high = high
                message = (f"no switching within {t_max:.3g} s in the "
                           f"{'high' if high else 'low'} phase: the oscillator stalls")
                break
            t_end = float(sol.t_events[0][0])
            y = np.array(sol.y_events[0][0], dtype=float)
            y[0] = level
            sols.append((high, t0, t_end, sol))
            t0 = t_end
        if stalled:
            break
        periods.append(t0)
        edge_states.append(y[1:1 + n_x].copy())
        last = sols
        # the first cycle starts on VT- as every later one does, so two cycles that
        # agree (period and stage state) are the periodic steady state already
        if len(periods) >= 2:
            p_prev, p_now = periods[-2], periods[-1]
            settled = np.all(np.abs(edge_states[-1] - edge_states[-2]) <= 1e-6)
            if abs(p_now - p_prev) <= max(SETTLED_PERIOD, SETTLED_PER_RTOL * rtol) * p_now \
                    and settled:
                break
        y[1 + n_x:] = 0.0  # restart the charge counters each cycle
    else:
        success = False
        message = f"period still changing after {max_cycles} cycles"

    if stalled:
        nan = float("nan")
        figs = Figures(math.inf, math.inf if stalled_high else nan,
                       math.inf if not stalled_high else nan, 0.0, nan, nan, 0.0, 0.0,
                       nan, senv.iq_a, STALLS if powered else UNPOWERED)
        return ReferenceResult(figs, False, message, cycles)

    return _measure(circ, senv, last, success, message, cycles, powered)


def _measure(circ: _Circuit, env, sols, success, message, cycles, powered) -> ReferenceResult:
    n_x = circ.n_x
    (_, t0h, t1h, sol_h), (_, t0l, t1l, sol_l) = sols
    period = t1l - t0h
    y_end = sol_l.sol(t1l)
    q_led = float(y_end[1 + n_x]) - float(sol_h.sol(t0h)[1 + n_x])
    q_sup = float(y_end[2 + n_x]) - float(sol_h.sol(t0h)[2 + n_x])
    q_x = float(y_end[3 + n_x]) - float(sol_h.sol(t0h)[3 + n_x])

    def led_at(sol, high, t):
        yy = sol.sol(t)
        return circ.nodes(float(yy[0]), list(yy[1:1 + n_x]), high)[2]

    samples = []
    for high, a, b, sol in ((True, t0h, t1h, sol_h), (False, t0l, t1l, sol_l)):
        span = b - a
        offs = np.unique(np.concatenate([[0.0], np.geomspace(1e-9 * span, span, 200),
                                         np.linspace(0.0, span, 100)]))
        ts = np.clip(a + offs, a, b)
        nodes = [circ.nodes(float(yy[0]), list(yy[1:1 + n_x]), high)
                 for yy in sol.sol(ts).T]
        i = np.array([nd[2] for nd in nodes])
        vo = np.array([nd[4] for nd in nodes])
        samples.append((high, sol, ts, i, vo))
    peak = max(float(np.max(s[3])) for s in samples)

    def time_above(level: float) -> float:
        total = 0.0
        for high, sol, ts, i, _ in samples:
            above = i >= level
            if not np.any(above):
                continue
            edges = np.flatnonzero(np.diff(above.astype(int)))
            crossings = []
            for k in edges:
                fa = i[k] - level
                try:
                    tc = brentq(lambda t, sol=sol, high=high: led_at(sol, high, t) - level,
                                ts[k], ts[k + 1], xtol=1e-15, rtol=1e-12)
                except ValueError:
                    tc = ts[k] + (ts[k + 1] - ts[k]) * fa / (fa - (i[k + 1] - level))
                crossings.append(tc)
            bounds = [ts[0]] if above[0] else []
            bounds += crossings
            if above[-1]:
                bounds.append(ts[-1])
            for start, stop in zip(bounds[::2], bounds[1::2], strict=False):
                total += stop - start
        return total

    flash50 = time_above(0.5 * peak) if peak > 0 else 0.0
    flash10 = time_above(0.1 * peak) if peak > 0 else 0.0
    if env.cross_override_a is not None:
        i_cross = env.cross_override_a
    else:
        i_cross = q_x / period
    supply = env.iq_a + i_cross + q_sup / period
    eff = float(effective_current(peak, q_led, env.effective_a_s))
    mcd = env.led.mcd_per_a
    status = RUNS if peak >= env.led.visible_a else DARK
    if not powered:
        status = UNPOWERED
    figs = Figures(period, t1h - t0h, t1l - t0l, peak, flash50, flash10, q_led, eff,
                   eff * mcd if mcd is not None else float("nan"), supply, status,
                   extras={"crossing_a": i_cross})
    tt = np.concatenate([samples[0][2], samples[1][2]])
    trace = {
        "t_s": tt - t0h,
        "vc_v": np.concatenate([sol_h.sol(samples[0][2])[0], sol_l.sol(samples[1][2])[0]]),
        "led_a": np.concatenate([samples[0][3], samples[1][3]]),
        "vo_v": np.concatenate([samples[0][4], samples[1][4]]),  # the timing gate's output
    }
    return ReferenceResult(figs, success, message, cycles, trace)
