"""Fast engine: closed forms and fixed-node quadrature over numpy arrays of circuits.

One call evaluates a whole batch of circuits of one topology (millions of R/C
combinations at once). The timing core gives the phase times for a given view of
its driving node; the LED stage gives its figures for given phase times and the
load it puts on its driver. When the stage hangs on the timing gate's own output,
that load shifts the timing (through the gate's output resistance), so the two are
iterated to agreement (three passes suffice: the coupling is weak and contracting).
"""

from __future__ import annotations

import numpy as np

from pulsepick.circuits.base import (
    DARK,
    RUNS,
    STALLS,
    UNPOWERED,
    Drive,
    DriverView,
    Env,
    Figures,
    Load,
    Topology,
    effective_current,
    get_core,
    get_stage,
)

_PASSES = 3


def _drive(v_src, r_out, load: Load) -> Drive:
    """Thevenin view of a gate output carrying a stage's load during one phase."""
    v_op = v_src - load.i_ss * r_out  # operating point with the steady load
    with np.errstate(divide="ignore", invalid="ignore"):
        r_th = np.where(np.isinf(load.r_dyn), r_out, r_out * load.r_dyn / (r_out + load.r_dyn))
    return Drive(v_th=v_op, r_th=r_th, r_out=r_out, q_imp=load.q_imp, s_imp=load.s_imp,
                 t_imp=load.t_imp)


def _as_arrays(values: dict, env: Env):
    """Broadcast every value and numeric environment field to one common 1-D shape."""
    fields = ("vdd", "vt_plus", "vt_minus", "rout_high", "rout_low", "pin_leak_a", "iq_a",
              "cap_leak_g", "r_discharge", "stage_cap_leak_g")
    arrays = [np.asarray(values[k], dtype=float) for k in values]
    arrays += [np.asarray(getattr(env, f), dtype=float) for f in fields]
    if env.cross_override_a is not None:
        arrays.append(np.asarray(env.cross_override_a, dtype=float))
    shape = np.broadcast_shapes(*(a.shape for a in arrays))
    if shape == ():
        shape = (1,)
    vals = {k: np.broadcast_to(np.asarray(values[k], dtype=float), shape) for k in values}
    upd = {f: np.broadcast_to(np.asarray(getattr(env, f), dtype=float), shape) for f in fields}
    if env.cross_override_a is not None:
        upd["cross_override_a"] = np.broadcast_to(np.asarray(env.cross_override_a, float), shape)
    from dataclasses import replace

    return vals, replace(env, **upd), shape


def periods(topo: Topology, values: dict, env: Env):
    """Bare timing: ``(t_high, t_low, status)`` of the core with an unloaded output.

    The cheapest evaluation, used to sweep the timing network alone.
    """
    core = get_core(topo.core)
    vals, env, _ = _as_arrays(values, env)
    high = Drive(v_th=env.vdd, r_th=env.rout_high, r_out=env.rout_high)
    low = Drive(v_th=np.zeros_like(env.vdd), r_th=env.rout_low, r_out=env.rout_low)
    pt = core.phase_times(vals, env, topo, high, low, with_cross=False)
    return pt.t_high, pt.t_low, pt.status


def evaluate(topo: Topology, values: dict, env: Env, powered=True) -> Figures:
    """Every figure of a batch of circuits of one topology at one operating point.

    Parameters
    ----------
    topo : Topology
        Core, stage, buffering and polarity.
    values : dict
        Component values in ohm and farad (floats or arrays, broadcast together).
    env : Env
        The chip, LED and diodes at the supply (see ``pulsepick.engine.environment``).
    powered : bool or array
        False where the supply is outside the chip's range (status ``unpowered``).
    """
    core, stage = get_core(topo.core), get_stage(topo.stage)
    vals, env, shape = _as_arrays(values, env)
    zeros = np.zeros(shape)
    vdd = env.vdd
    gate_high = (vdd, env.rout_high)
    gate_low = (zeros, env.rout_low)
    driver = DriverView(v_high=vdd, r_high=env.rout_high, v_low=zeros, r_low=env.rout_low,
                        vdd=vdd)
    coupled = core.drives_stage_from_timing_output and not topo.buffered
    high = _drive(*gate_high, Load())
    low = _drive(*gate_low, Load())
    pt = core.phase_times(vals, env, topo, high, low, with_cross=not coupled)
    state = None
    passes = _PASSES if coupled else 1
    def driver_with_core(pt) -> DriverView:
        """The timing gate's output as the stage sees it, with the timing network's draw."""
        if not coupled:
            return driver
        c = vals["c1"]
        dv = env.vt_plus - env.vt_minus
        with np.errstate(divide="ignore", invalid="ignore"):
            mean_h = np.where(np.isfinite(pt.t_high), c * dv / pt.t_high, 0.0)
            mean_l = np.where(np.isfinite(pt.t_low), -c * dv / pt.t_low, 0.0)
        return DriverView(v_high=vdd, r_high=env.rout_high, v_low=zeros, r_low=env.rout_low,
                          vdd=vdd, i_core_high=(pt.i0_high, mean_h),
                          i_core_low=(pt.i0_low, mean_l))

    for k in range(passes):
        driver = driver_with_core(pt)
        if topo.buffered:  # the spare gate inverts: the stage's "on" is the timing low phase
            t_on, t_off = pt.t_low, pt.t_high
        else:
            t_on, t_off = pt.t_high, pt.t_low
        sf = stage.fast(vals, env, topo, driver, t_on, t_off, state)
        state = sf.state
        if coupled:
            high = _drive(*gate_high, sf.load_on)
            low = _drive(*gate_low, sf.load_off)
            pt = core.phase_times(vals, env, topo, high, low, with_cross=(k == passes - 1))
    if coupled:  # final stage figures at the final phase times
        sf = stage.fast(vals, env, topo, driver_with_core(pt), pt.t_high, pt.t_low, state)

    return _figures(pt, sf, env, shape, powered)


def _figures(pt, sf, env: Env, shape, powered) -> Figures:
    """The batch's figures from the final phase times ``pt`` and stage figures ``sf``."""
    period = pt.t_high + pt.t_low
    stalled = pt.status == STALLS
    with np.errstate(invalid="ignore", divide="ignore"):
        if env.cross_override_a is not None:
            i_cross = env.cross_override_a
        else:
            i_cross = np.where(stalled, 0.0, pt.q_cross / period)
        supply = env.iq_a + i_cross + np.where(stalled, 0.0,
                                               (pt.q_supply + sf.q_supply) / period)
    led_peak = np.where(stalled, 0.0, sf.led_peak_a)
    q_led = np.where(stalled, 0.0, sf.led_charge_c)
    eff = effective_current(led_peak, q_led, env.effective_a_s)
    mcd_per_a = env.led.mcd_per_a
    eff_mcd = eff * mcd_per_a if mcd_per_a is not None else np.full(shape, np.nan)
    status = np.where(stalled, STALLS, RUNS)
    status = np.where((status == RUNS) & (led_peak < env.led.visible_a), DARK, status)
    status = np.where(np.broadcast_to(np.asarray(powered), shape), status, UNPOWERED)
    nan = np.nan
    return Figures(
        period_s=np.where(stalled, np.inf, period),
        high_s=pt.t_high,
        low_s=pt.t_low,
        led_peak_a=led_peak,
        flash_s=np.where(stalled, nan, sf.flash_s),
        flash_10pct_s=np.where(stalled, nan, sf.flash_10pct_s),
        led_charge_c=q_led,
        effective_a=eff,
        effective_mcd=eff_mcd,
        supply_avg_a=supply,
        status=status,
        extras={"crossing_a": np.broadcast_to(i_cross, shape)},
    )
