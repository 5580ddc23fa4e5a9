"""Stage ``fade``: series resistor RS and a diode into a hold capacitor CH across the LED.

While the driver is high, CH charges quickly through RS and the diode and the LED
comes up to its steady current; while the driver is low the diode blocks and CH
discharges through the LED alone: a slow fade.

The rise is integrated as dt = CH·dV / (I_in(V) − I_led(V)) on a fixed node set in
y = −ln(V* − V), V* being the steady hold voltage, which keeps the integrand finite
up to V*. The fade is the closed form of ``pulsepick.circuits.decay``. The state at
the rising edge comes from a short fixed-point iteration to periodic steady state.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from pulsepick.circuits.base import (
    DriverView,
    Env,
    ExtraPart,
    Load,
    Param,
    StageDefaults,
    StageFigures,
    Topology,
    register_stage,
)
from pulsepick.circuits.decay import decay_end_current, decay_time, n_vt
from pulsepick.circuits.direct import RS_PARAM, led_dynamic_resistance
from pulsepick.circuits.searchgrid import (
    STAGE_DROP_V,
    SearchContext,
    StageSearch,
    crossed,
    crossed_neighbours,
)

#: Node set in y for the rise: dense where the LED is coming on, sparse on the tail.
_Y_NODES = np.concatenate([np.linspace(0.0, 8.0, 49)[:-1], np.linspace(8.0, 40.0, 17)])
_ROOT_STEPS = 40


def _steady_hold(env: Env, v_src, r_in):
    """Hold voltage where the diode's feed equals the LED's draw.

    In steady state one current I flows through the diode, RS and the LED, so
    V_led(I) + V_diode(I) + I·R_in = V_src, a sum of explicit, increasing functions of
    I: Newton on x = ln I (no Lambert W needed), started from above the root.
    """
    led, dio = env.led.junction, env.fade_diode.junction
    shape = np.broadcast_shapes(np.shape(v_src), np.shape(r_in))
    v_src = np.broadcast_to(v_src, shape)
    r_in = np.broadcast_to(r_in, shape)
    r_all = r_in + led.r_s + dio.r_s
    # the current with the resistances alone bounds the root from above
    x = np.log(np.maximum(v_src / np.maximum(r_all, 1e-9), 1e-30))
    n_led, n_dio = n_vt(led), n_vt(dio)
    for _ in range(60):
        i = np.exp(x)
        g = led.voltage(i) + dio.voltage(i) + i * r_in - v_src
        dg_dx = i * (n_led / (led.i_s + i) + n_dio / (dio.i_s + i) + r_all)
        step = g / dg_dx
        x = x - np.maximum(step, -50.0)
        if np.all(np.abs(step) < 1e-10):
            break
    return led.voltage(np.exp(x))


def _rise_grid(env: Env, v_src, r_in, rs, ch):
    """Time, hold voltage and LED charge along the rise from an empty CH (per row).

    Nodes in y = −ln(V* − V) from V = 0 up to within e^-40 of V*; trapezoidal
    cumulative sums. Computed once per evaluation and reused by every pass.
    """
    led, dio = env.led, env.fade_diode
    v_star = _steady_hold(env, v_src, r_in)
    i_star = led.current(v_star)
    y = -np.log(np.maximum(v_star, 1e-12))[..., None] + _Y_NODES
    vh = v_star[..., None] - np.exp(-y)
    feed = dio.junction.current(np.maximum(v_src[..., None] - vh, 0.0), r_ext=r_in[..., None])
    draw = led.current(vh)
    with np.errstate(divide="ignore", invalid="ignore"):
        dt_dy = np.asarray(ch)[..., None] * np.exp(-y) / np.maximum(feed - draw, 1e-30)
    dy = np.diff(_Y_NODES)
    zero = np.zeros((*dt_dy.shape[:-1], 1))
    t_cum = np.concatenate([zero, np.cumsum(0.5 * (dt_dy[..., 1:] + dt_dy[..., :-1]) * dy,
                                            axis=-1)], axis=-1)
    q = draw * dt_dy
    q_cum = np.concatenate([zero, np.cumsum(0.5 * (q[..., 1:] + q[..., :-1]) * dy, axis=-1)],
                           axis=-1)
    r_led = led_dynamic_resistance(led, i_star)
    r_dyn = rs + n_vt(dio.junction) / (dio.junction.i_s + i_star) + dio.junction.r_s + r_led
    tau_rise = ch / (1.0 / r_dyn + 1.0 / r_led)
    return {"v_star": v_star, "i_star": i_star, "t": t_cum, "vh": vh, "q_led": q_cum,
            "i_led": draw, "r_dyn": r_dyn, "tau_rise": tau_rise}


@dataclass(frozen=True)
class FadeStage(StageDefaults):
    name: str = "fade"
    params: tuple[Param, ...] = (
        Param("rs", "R", "charge resistor", **RS_PARAM),
        Param("ch", "C", "hold capacitor across the LED", option="--ch",
              help="fade stage hold capacitor CH, e.g. 100u", example="100u"),
    )
    n_states: int = 1
    pulsed: bool = True
    steady_load: bool = False
    search: ClassVar[StageSearch] = StageSearch(coarse_keep=1, timing_keep=6, per_decade=2)
    search_rank: int = 0
    #: dark with its driver low (the hold capacitor charges while the driver is high)
    dark_driver: ClassVar[dict[str, str]] = {"high": "low"}

    extras: ClassVar[tuple[ExtraPart, ...]] = (ExtraPart(
        "diode", "charge diode into the hold capacitor",
        "anode to the series resistor, cathode to the hold capacitor", choice="fade_diode"),)

    def led_note(self, topo):
        return "across the hold capacitor, cathode to ground"

    def search_grid(self, ctx: SearchContext, topo):
        _, rs = ctx.series_grid(self.search.per_decade, STAGE_DROP_V)
        c_est = 0.5 * ctx.flash_s * ctx.peak_a / n_vt(ctx.led.junction)
        return crossed("ch", ctx.capacitor_grid(c_est, self.search.per_decade), "rs", rs)

    def refine(self, ctx: SearchContext, point):
        return crossed_neighbours(point, "ch", ctx.c_values, "rs", ctx.r_values)

    def fast(self, v, env: Env, topo: Topology, drv: DriverView, t_on, t_off, state):
        rs, ch = v["rs"], v["ch"]
        led = env.led
        t_on_f = np.where(np.isfinite(t_on), t_on, 1e9)
        t_off_f = np.where(np.isfinite(t_off), t_off, 1e9)
        if state is None:
            grid = _rise_grid(env, drv.high_level() - drv.v_low, drv.r_high + rs, rs, ch)
            v_start = np.zeros_like(grid["v_star"])
        else:
            v_start, grid = state
        v_star, i_star = grid["v_star"], grid["i_star"]
        t_cum, vh, i_rise = grid["t"], grid["vh"], grid["i_led"]
        def one_period(v0, rows=None):
            """Hold voltage after one period started at ``v0``, with the rise's figures.

            ``rows`` (indices into 1-D rows): evaluate only those rows, ``v0`` holding
            one value per selected row.
            """
            g, t_on_r, t_off_r, ch_r = grid, t_on_f, t_off_f, ch
            if rows is not None:
                n_rows = v_star.shape[0]

                def pick(a):
                    return a[rows] if np.ndim(a) >= 1 and np.shape(a)[0] == n_rows else a

                g = {k: pick(grid[k]) for k in _PERIOD_KEYS}
                t_on_r, t_off_r, ch_r = pick(t_on_f), pick(t_off_f), pick(ch)
            t_start = _interp_rows(v0, g["vh"], g["t"], None)
            t_stop = t_start + t_on_r
            # the hold voltage and the LED charge at the end of the rise share their
            # place on the time nodes
            v_end, q_stop = _interp_rows_many(t_stop, g["t"], (g["vh"], g["q_led"]),
                                              (g["v_star"], None))
            q_on = _q_past_grid(t_stop, q_stop, g) - _q_at(t_start, g)
            i_pk = np.maximum(led.current(v_end), 1e-30)
            # fade: CH feeds the LED alone
            i_off = decay_end_current(led.junction, led.junction.r_s, ch_r, i_pk, t_off_r)
            return np.minimum(led.voltage(i_off), v_end), t_start, v_end, q_on, i_pk

        # periodic steady state: the root of F(v) = one_period(v) - v in its bracket;
        # Illinois-style false position, vectorised
        lo, hi, f_lo, f_hi = _bracket(one_period, v_star, v_start, state is not None)
        side = np.zeros(lo.shape)
        if lo.ndim == 1:
            # one_period at each row's root, kept from the row's last iteration
            v_start, t_start, v_end, q_led_on, i_pk = _root_rows(one_period, lo, hi, f_lo,
                                                                 f_hi, side)
        else:
            v_start, t_start, v_end, q_led_on, i_pk = _root_batch(one_period, lo, hi, f_lo,
                                                                  f_hi, side)
        q_led_off = ch * (v_end - v_start)
        q_in = q_led_off + q_led_on
        q_led = q_led_off + q_led_on
        # time at or above a share of the peak: the end of the rise plus the fade
        t_above = []
        for share in (0.5, 0.1):
            level = share * i_pk
            t_cross = _interp_rows(level, i_rise, t_cum, None) - t_start
            rise_part = np.clip(t_on_f - np.maximum(t_cross, 0.0), 0.0, t_on_f)
            fade_part = np.minimum(decay_time(led.junction, led.junction.r_s, ch, i_pk, level),
                                   t_off_f)
            t_above.append(rise_part + fade_part)
        on = Load(i_ss=i_star, r_dyn=grid["r_dyn"], q_imp=q_in - i_star * t_on_f,
                  s_imp=grid["tau_rise"], t_imp=t_on_f)
        return StageFigures(i_pk, t_above[0], t_above[1], q_led, q_in, on, Load(),
                            state=(v_start, grid))

    def ref_init(self, v, env, topo):
        return [0.0]

    def ref_currents(self, v, env, topo, vo, xs, driver_high):
        """(current out of the driver, d(v_hold)/dt, LED current, supply current)."""
        vh = xs[0]
        across = vo - vh
        feed = env.fade_scalar.current(across, v["rs"]) if across > 0 else 0.0
        i_led = env.led_scalar.current(vh, 0.0) if vh > 0 else 0.0
        return feed, [(feed - i_led) / v["ch"]], i_led, 0.0

    def spice(self, v, env, topo):
        """Circuit-simulator lines of the stage (nodes: see ``base.SPICE_NODES``)."""
        return (f"RS drv fa {v['rs']:.9g}", "DF fa hold DFADE", f"CH hold 0 {v['ch']:.9g}",
                "VLED hold lk 0", "DLED lk 0 DLED")


def _bracket(one_period, v_star, v_start, warm):
    """Bracket ``lo``, ``hi`` of the periodic steady state of ``FadeStage.fast``, with
    F(v) = one_period(v) - v at each end: ``(lo, hi, f_lo, f_hi)``.

    The map v0 -> v1 is increasing and contracting, so the fixed point is the root of F,
    bracketed by [0, V*] (F(0) >= 0 >= F(V*)). When ``warm``, a previous pass's answer
    ``v_start`` narrows the bracket, widened back where it misses the root.
    """
    lo = np.zeros_like(v_star)
    hi = v_star.copy()
    if warm:  # a previous pass's answer narrows the bracket
        lo = np.clip(v_start - 0.02, 0.0, v_star)
        hi = np.clip(v_start + 0.02, 0.0, v_star)
    f_lo = one_period(lo)[0] - lo
    f_hi = one_period(hi)[0] - hi
    if warm:  # where the narrow bracket misses, the whole range
        bad_lo, bad_hi = ~(f_lo >= 0), ~(f_hi <= 0)
        lo, hi = np.where(bad_lo, 0.0, lo), np.where(bad_hi, v_star, hi)
        f_lo = _again(one_period, lo, f_lo, bad_lo)
        f_hi = _again(one_period, hi, f_hi, bad_hi)
    return lo, hi, f_lo, f_hi


def _again(one_period, v, f, rows):
    """``f`` with F(v) = one_period(v) - v evaluated anew where ``rows`` is true (only
    those rows when the batch is 1-D)."""
    if not np.any(rows):
        return f
    if np.ndim(v) != 1:
        return one_period(v)[0] - v
    idx = np.flatnonzero(rows)
    out = np.array(f, dtype=float)
    out[idx] = one_period(v[idx], idx)[0] - v[idx]
    return out


def _root_batch(one_period, lo, hi, f_lo, f_hi, side):
    """The Illinois false-position loop of ``FadeStage.fast`` on a batch of any shape,
    every element iterated until all have converged.

    Returns what ``one_period`` gives at the last iterate.
    """
    for _ in range(_ROOT_STEPS):
        with np.errstate(divide="ignore", invalid="ignore"):
            mid = np.where(f_lo - f_hi > 0, lo + f_lo * (hi - lo) / (f_lo - f_hi),
                           0.5 * (lo + hi))
        mid = np.clip(mid, lo, hi)
        f_mid = one_period(mid)[0] - mid
        up = f_mid > 0
        # Illinois: halve the value kept at the end that did not move twice running
        f_hi = np.where(up & (side > 0), 0.5 * f_hi, f_hi)
        f_lo = np.where(~up & (side < 0), 0.5 * f_lo, f_lo)
        lo, f_lo = np.where(up, mid, lo), np.where(up, f_mid, f_lo)
        hi, f_hi = np.where(up, hi, mid), np.where(up, f_hi, f_mid)
        side = np.where(up, 1.0, -1.0)
        if np.all((np.abs(f_mid) < 1e-9) | (hi - lo < 1e-9)):
            break
    return one_period(mid)


def _root_rows(one_period, lo, hi, f_lo, f_hi, side):
    """The Illinois false-position loop of ``FadeStage.fast`` on 1-D rows, each row
    iterated only until it has converged (the others no longer cost an evaluation).

    Returns what ``one_period`` gives at each row's root (its last iterate), kept from
    the row's last evaluation rather than computed again.
    """
    lo, hi, f_lo, f_hi, side = (np.array(a, dtype=float) for a in (lo, hi, f_lo, f_hi, side))
    mid = 0.5 * (lo + hi)
    act = np.arange(lo.size)
    if act.size == 0 or _ROOT_STEPS < 1:
        return one_period(mid)
    kept = [np.empty(lo.size) for _ in range(5)]
    for _ in range(_ROOT_STEPS):
        if act.size == 0:
            break
        a_lo, a_hi, a_flo, a_fhi, a_side = lo[act], hi[act], f_lo[act], f_hi[act], side[act]
        with np.errstate(divide="ignore", invalid="ignore"):
            m = np.where(a_flo - a_fhi > 0, a_lo + a_flo * (a_hi - a_lo) / (a_flo - a_fhi),
                         0.5 * (a_lo + a_hi))
        m = np.clip(m, a_lo, a_hi)
        period = one_period(m, act)
        for k, x in zip(kept, period, strict=True):
            k[act] = x
        f_m = period[0] - m
        up = f_m > 0
        a_fhi = np.where(up & (a_side > 0), 0.5 * a_fhi, a_fhi)
        a_flo = np.where(~up & (a_side < 0), 0.5 * a_flo, a_flo)
        lo[act], f_lo[act] = np.where(up, m, a_lo), np.where(up, f_m, a_flo)
        hi[act], f_hi[act] = np.where(up, a_hi, m), np.where(up, a_fhi, f_m)
        side[act] = np.where(up, 1.0, -1.0)
        mid[act] = m
        done = (np.abs(f_m) < 1e-9) | (hi[act] - lo[act] < 1e-9)
        act = act[~done]
    return tuple(kept)


#: What one period of the fade stage reads from the rise's grid.
_PERIOD_KEYS = ("vh", "t", "q_led", "v_star", "i_star")


def _q_at(t, grid):
    """LED charge since an empty CH at time ``t`` of the rise; steady current past the grid."""
    return _q_past_grid(t, _interp_rows(t, grid["t"], grid["q_led"], None), grid)


def _q_past_grid(t, inside, grid):
    """:func:`_q_at` from the charge interpolated on the grid (``inside``)."""
    t_last, q_last = grid["t"][..., -1], grid["q_led"][..., -1]
    return np.where(t > t_last, q_last + grid["i_star"] * (t - t_last), inside)


def _interp_rows(x, xp, fp, beyond):
    """Row-wise linear interpolation of ``fp`` at ``x`` over increasing ``xp``.

    Past the last node the value ``beyond`` (or the last node's value) is used.
    """
    return _interp_rows_many(x, xp, (fp,), (beyond,))[0]


def _interp_rows_many(x, xp, fps, beyonds):
    """:func:`_interp_rows` of several ``fps`` over the same ``xp`` and ``x`` (one
    search for the place of ``x`` serves them all), each with its ``beyonds`` value."""
    x = np.asarray(x, dtype=float)
    xp, *fps = np.broadcast_arrays(xp, *fps)
    shape = xp.shape[:-1]
    m = xp.shape[-1]
    x = np.broadcast_to(x, shape)
    # flat gathers (one index per row) in place of four take_along_axis calls
    xp2 = np.ascontiguousarray(xp).reshape(-1, m)
    xf = x.reshape(-1)
    idx = np.count_nonzero(xp2 <= xf[:, None], axis=-1)  # nodes at or before x
    k1 = np.clip(idx, 1, m - 1) + np.arange(xf.size) * m
    flat_x = xp2.reshape(-1)
    x0, x1 = flat_x[k1 - 1], flat_x[k1]
    with np.errstate(divide="ignore", invalid="ignore"):
        w = np.clip((xf - x0) / (x1 - x0), 0.0, 1.0)
    past = idx.reshape(shape) >= m
    out = []
    for fp, beyond in zip(fps, beyonds, strict=True):
        flat_f = np.ascontiguousarray(fp).reshape(-1)
        f0, f1 = flat_f[k1 - 1], flat_f[k1]
        inside = (f0 + w * (f1 - f0)).reshape(shape)
        last = fp[..., -1] if beyond is None else np.broadcast_to(beyond, shape)
        out.append(np.where(past, last, inside))
    return out


def _first_crossing(t_cum, values, level):
    """Time at which an increasing sampled curve first reaches ``level`` (0 if at start)."""
    above = values >= np.asarray(level)[..., None]
    first = np.argmax(above, axis=-1)
    any_above = np.any(above, axis=-1)
    k = np.clip(first, 1, values.shape[-1] - 1)
    t0 = np.take_along_axis(t_cum, (k - 1)[..., None], -1)[..., 0]
    t1 = np.take_along_axis(t_cum, k[..., None], -1)[..., 0]
    v0 = np.take_along_axis(values, (k - 1)[..., None], -1)[..., 0]
    v1 = np.take_along_axis(values, k[..., None], -1)[..., 0]
    with np.errstate(divide="ignore", invalid="ignore"):
        w = np.clip((level - v0) / (v1 - v0), 0.0, 1.0)
    t = np.where(first == 0, 0.0, t0 + w * (t1 - t0))
    return np.where(any_above, t, np.inf)


register_stage(FadeStage())
