"""The search over standard values for one topology (:class:`_Searcher`) and its helpers
(see :mod:`pulsepick.solve` for the steps; the timing networks' searches are in
:mod:`pulsepick.solve.timingsearch`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from pulsepick.circuits.base import get_core, get_stage, RUNS, Topology
from pulsepick.circuits.searchgrid import SearchContext
from pulsepick.request import SolveRequest
from pulsepick.solve.score import (
    _aim_cost, _cost, _log_err, _slice_figures, _threshold_var, _weights, K_KEEP, LEAK_MARGIN,
    led_current_limit, n_parts, peak_needed, PENALTY_END, PENALTY_HOT_LEAK, PREFER_WEIGHTS, SIGMA,
    THRESHOLD_STEP,
)
from pulsepick.solve.space import _cap_var, _space, aim_levels, range_aim_ratio
from pulsepick.solve.timingsearch import _Timing, search_timing


@dataclass
class _Pick:
    cost: float
    topo: Topology
    family: str
    values: dict[str, float]
    kind: str  # timing capacitor kind key
    var: float
    parts_cost: dict[str, float]
    figures: dict[str, float]
    end_figures: dict[str, float] | None


class _Searcher:
    def __init__(self, req: SolveRequest, chip=None) -> None:
        self.req = req
        self.chip = chip
        self.space = _space(req)
        self.aims = req.aims()
        self.weights = _weights(self.aims)
        self.v = req.supply_v
        self.evaluated = 0
        self.seen: dict[str, list[float]] = {}
        t = req.targets
        flash = min(req.flash_s, 0.99 * t.period_s)
        self.short_target = min(flash, t.period_s - flash)
        self.long_target = t.period_s - self.short_target
        self.cap_var = np.array([_cap_var(k) for k in self.space.kinds])
        self.leak_margin = LEAK_MARGIN
        self.aim: tuple[str, str] | None = None  # (core, steer) whose median chip is aimed at
        self._range_log = 0.0  # ln of the supply range's share of the aim (range_aim_ratio)

    def set_aim(self, core: str, steer: str) -> None:
        """Aim at the median chip of ``core`` (with ``steer``) in the rows of :meth:`stage`."""
        self.aim = (core, steer)
        self._range_log = math.log(range_aim_ratio(self.req, self.chip, core, steer))

    # -- bookkeeping ------------------------------------------------------------------------
    def _note_range(self, key: str, x) -> None:
        x = np.asarray(x, dtype=float)
        x = x[np.isfinite(x) & (x > 0)]
        if x.size:
            lo, hi = float(x.min()), float(x.max())
            old = self.seen.get(key)
            self.seen[key] = [min(lo, old[0]), max(hi, old[1])] if old else [lo, hi]

    def _periods(self, topo, values, env):
        from pulsepick.engine import fast

        size = max(np.size(v) for v in values.values())
        self.evaluated += size
        return fast.periods(topo, values, env)

    def _evaluate(self, topo, values, env):
        from pulsepick.engine import fast

        size = max(np.size(v) for v in values.values())
        self.evaluated += size
        return fast.evaluate(topo, values, env, powered=True)

    # -- timing -----------------------------------------------------------------------------
    def _cap_leak(self, c: np.ndarray, kind: np.ndarray, which: str) -> np.ndarray:
        from pulsepick.parts.capacitor import get_cap_kind, pick_voltage_rating

        g = np.zeros_like(c)
        for i, key in enumerate(self.space.kinds):
            sel = kind == i
            if np.any(sel):
                k = get_cap_kind(key)
                g[sel] = k.leak_conductance(c[sel], pick_voltage_rating(k, self.v), which=which)
        return g

    def _size_cost(self, c: np.ndarray, kind: np.ndarray) -> np.ndarray:
        """Cost of the timing capacitor's size/cost class, weighted by ``--prefer``."""
        from pulsepick.parts.capsize import size_rank

        weight = PREFER_WEIGHTS[self.req.prefer]
        out = np.zeros(np.shape(c))
        if weight == 0:
            return out
        for i, key in enumerate(self.space.kinds):
            sel = kind == i
            if np.any(sel):
                out[sel] = weight * size_rank(key, c[sel])
        return out

    def set_chip_envs(self, env, model) -> None:
        """The environments the timing sweep needs: typical, leaky, and shifted thresholds.

        The chip's threshold spread enters the period variance as split-normal spreads of
        VT+ and VT- (or the 555's threshold and trigger levels) between their datasheet
        minimum, typical and maximum at the design supply, propagated with finite
        differences; measured thresholds (the user's own chip) carry none.
        """
        v = self.v
        chip = self.chip
        shape = chip.spread
        if chip.is_timer:
            leak, hot = model.leak_a, model.leak_a
            plus = _threshold_var(model.thr_ratio_min * v, model.thr_ratio_typ * v,
                                   model.thr_ratio_max * v, shape)
            minus = _threshold_var(model.trig_ratio_min * v, model.trig_ratio_typ * v,
                                    model.trig_ratio_max * v, shape)
        else:
            leak, hot = model.leak_max_a, model.leak_max_hot_a
            th = model.thresholds(v)
            plus = _threshold_var(float(th.vt_plus_min), float(th.vt_plus_typ),
                                   float(th.vt_plus_max), shape)
            minus = _threshold_var(float(th.vt_minus_min), float(th.vt_minus_typ),
                                    float(th.vt_minus_max), shape)
        if chip.measured:
            plus = minus = 0.0
        step = THRESHOLD_STEP * v
        self.envs = {
            "typ": env,
            "leak": replace(env, pin_leak_a=leak),
            "hot": replace(env, pin_leak_a=hot),
            "plus": replace(env, vt_plus=env.vt_plus + step),
            "minus": replace(env, vt_minus=env.vt_minus + step),
        }
        self.chip_ranges = (plus, minus, step)

    def _working(self, values: dict, kind: np.ndarray, env) -> dict:
        """Values as the circuit sees them: a class-2 ceramic C1 under its DC bias.

        The bias is the middle of the switching levels, the part's rating the one picked
        for the full supply, as in :meth:`pulsepick.design.Design.working_values`.
        """
        from pulsepick.parts.capacitor import get_cap_kind, pick_voltage_rating

        factor = np.ones(np.shape(values["c1"]))
        bias = 0.5 * (np.asarray(env.vt_plus, dtype=float) + np.asarray(env.vt_minus,
                                                                         dtype=float))
        bias = np.broadcast_to(bias, factor.shape)
        for i, key in enumerate(self.space.kinds):
            k = get_cap_kind(key)
            sel = kind == i
            if k.class2 and np.any(sel):
                rating = pick_voltage_rating(k, self.v)
                factor[sel] = k.dc_bias_factor(bias[sel], rating)
        if np.all(factor == 1.0):
            return values
        return {**values, "c1": values["c1"] * factor}

    def _end_currents(self, topo: Topology, values: dict, env
                      ) -> tuple[np.ndarray, np.ndarray]:
        """Currents (A) that move the timing capacitor as it reaches each threshold:
        charging at VT+ and discharging at VT-, through every path that conducts then,
        with an unloaded output (vectorised twin of
        :func:`pulsepick.analysis.checks.charging_currents`)."""
        first = {k: float(np.ravel(getattr(env, k))[0])
                 for k in ("vdd", "vt_plus", "vt_minus", "r_discharge")}
        return get_core(topo.core).end_currents(values, replace(env, **first), topo)

    def _leak_ok(self, topo: Topology, values: dict, g_typ: np.ndarray,
                 check: tuple[str, ...] = ("up", "down"), scale_up=1.0,
                 scale_down=1.0) -> np.ndarray:
        """True where the current moving the timing capacitor at each threshold is at
        least ``LEAK_MARGIN`` times the capacitor's typical leakage there (common
        practice: common practice).

        Charging at VT+ is the rule practice states (leakage works against it). The
        discharge at VT- is held to the same margin: leakage helps it, but a leakage
        known only to an order of magnitude and comparable to the discharge current
        sets the period instead of the parts (design choice). ``scale_up`` and
        ``scale_down`` shrink the currents where the LED stage loads the timing gate's
        output (see :func:`_end_scale`). The leakage is linear in voltage
        (``CapacitorKind.leakage_a``): the typical leakage conductance times the level.
        """
        env = self.envs["typ"]
        vtp = float(np.ravel(env.vt_plus)[0])
        vtm = float(np.ravel(env.vt_minus)[0])
        up, down = self._end_currents(topo, values, env)
        ok = np.ones(np.shape(g_typ), dtype=bool)
        with np.errstate(all="ignore"):
            if "up" in check:
                ok &= up * scale_up >= self.leak_margin * g_typ * vtp
            if "down" in check:
                ok &= down * scale_down >= self.leak_margin * g_typ * vtm
        return ok

    def _timing_eval(self, core_topo, values, kind, short_of):
        """Periods, cost, variance and penalty of timing networks (arrays).

        Variance (fraction², ln-period): resistor and capacitor tolerance and drift,
        the shift from guaranteed-maximum leakage at 25 C, and the chip's threshold
        spread. Penalty: the network stalls with the guaranteed-maximum leakage over
        temperature (the hot end of an outdoor range). A network whose charging
        current at VT+ is within ``LEAK_MARGIN`` of the capacitor's typical leakage is
        left out (cost infinity): it works on paper and stalls with a leakier part.
        """
        c = values["c1"]
        envs = self.envs
        g_typ = self._cap_leak(c, kind, "typ")
        g_max = self._cap_leak(c, kind, "max")
        leak_ok = self._leak_ok(core_topo, values, g_typ)
        values = self._working(values, kind, envs["typ"])
        th, tl, st = self._periods(core_topo, values, replace(envs["typ"], cap_leak_g=g_typ))
        period = th + tl
        running = (st == RUNS) & leak_ok
        self._note_range("timing_period_s", np.where(running, period, np.nan))
        self._note_range("timing_period_leaky_s", np.where((st == RUNS) & ~leak_ok, period,
                                                           np.nan))
        th2, tl2, st2 = self._periods(core_topo, values, replace(envs["leak"], cap_leak_g=g_max))
        _, _, st3 = self._periods(core_topo, values, replace(envs["hot"], cap_leak_g=g_max))
        with np.errstate(all="ignore"):
            shift = np.log((th2 + tl2) / period)
        shift = np.where((st2 == RUNS) & np.isfinite(shift), shift, 1.0)
        var = (2 * self.space.r_tol**2) / 3.0 + self.cap_var[kind] + shift**2 / 3.0
        plus, minus, step = self.chip_ranges
        for name, chip_var in (("plus", plus), ("minus", minus)):
            if chip_var <= 0:
                continue
            a, b, st4 = self._periods(core_topo, values, replace(self.envs[name],
                                                                 cap_leak_g=g_typ))
            with np.errstate(all="ignore"):
                slope = np.log((a + b) / period) / step
            slope = np.where((st4 == RUNS) & np.isfinite(slope), slope, 0.0)
            var = var + slope**2 * chip_var
        penalty = np.where(st3 == RUNS, 0.0, PENALTY_HOT_LEAK) + self._size_cost(c, kind)
        t = self.req.targets
        cost = (_log_err(period, t.period_s) ** 2 + var) / SIGMA**2
        cost = cost + penalty
        if short_of is not None:
            short = short_of(th, tl)
            cost = cost + _aim_cost(self.weights["flash_s"], _log_err(short, self.short_target))
        cost = np.where(running, cost, np.inf)
        return cost, var, g_typ, penalty, th, tl

    def timing(self, core: str, steer: str) -> _Timing | None:
        """The kept timing networks of ``core`` (see :mod:`pulsepick.solve.timingsearch`)."""
        return search_timing(self, core, steer)

    # -- stage ------------------------------------------------------------------------------
    def _peak_aim(self) -> float:
        """The peak LED current the aims imply (A): stated, or from the effective aim."""
        return peak_needed(self.req)

    def _search_context(self, topo: Topology, env) -> SearchContext:
        """What the stage module needs to lay out its grid (see ``searchgrid``)."""
        led = self.req.led
        # centred at the LED's limit when the aim is above it (nothing above is offered)
        peak = min(self._peak_aim(), 0.95 * led_current_limit(led, topo.stage)[0])

        def first(x):
            return float(np.asarray(x, dtype=float).reshape(-1)[0])

        return SearchContext(
            led=led, supply_v=self.v, peak_a=peak, rout_high_ohm=first(env.rout_high),
            rout_low_ohm=first(env.rout_low), r_values=self.space.r_stage,
            c_values=self.space.c_stage, r_max_ohm=self.req.r_max_ohm,
            flash_s=min(self.req.flash_s, 0.5 * self.req.targets.period_s),
            period_s=self.req.targets.period_s)

    def _stage_grid(self, topo: Topology, env) -> dict[str, np.ndarray]:
        """Stage values around a first estimate from the aims (one pass, coarse for caps).

        The estimate is only a centre: resistors span a decade either side (and at
        least up to 100 ohm) and capacitors one and a half decades, so the
        evaluation, not the estimate, decides. The stage module lays the grid out.
        """
        self._ctx = self._search_context(topo, env)
        return get_stage(topo.stage).search_grid(self._ctx, topo)

    def _refine(self, stage: str, point: dict[str, float]) -> list[dict[str, float]]:
        """The point and its series neighbours (one step either side)."""
        return get_stage(stage).refine(self._ctx, point)

    def _rows_env(self, vdd: np.ndarray):
        from pulsepick.engine.environment import PartChoice, make_env

        env, powered = make_env(self.chip, PartChoice(led=self.req.led), vdd)
        if self.aim is None:
            return env, powered
        vtp, vtm = np.array(env.vt_plus, dtype=float), np.array(env.vt_minus, dtype=float)
        for v in np.unique(vdd):
            sel = vdd == v
            vtp[sel], vtm[sel] = aim_levels(self.req, self.chip, *self.aim, supply_v=float(v))
        return replace(env, vt_plus=vtp, vt_minus=vtm), powered

    def stage(self, topo: Topology, tim: _Timing, env) -> list[_Pick]:
        """Search one topology's stage values over the kept timing networks."""
        sname = topo.stage
        npart = n_parts(topo, {})
        grid = self._stage_grid(topo, env)
        size = next(iter(grid.values())).size
        if size == 0 or tim.cost.size == 0:
            return []
        i_limit = led_current_limit(self.req.led, sname)[0]
        stage_sets = self._stage_sets(topo, tim, grid, env, npart, i_limit)
        if stage_sets is None:
            return []
        t_idx, s_vals, cost, parts, night, f_nom, f_end = self._crossed(
            topo, tim, stage_sets, npart, i_limit)
        return self._picks(topo, tim, t_idx, s_vals, cost, parts, night, f_nom, f_end)

    def _stage_sets(self, topo: Topology, tim: _Timing, grid: dict[str, np.ndarray], env,
                    npart, i_limit: float) -> dict[str, np.ndarray] | None:
        """Step 1: the stage grid at the best timing network; the best coarse points and
        their series neighbours (None when no grid point works)."""
        sname = topo.stage
        size = next(iter(grid.values())).size
        _f, cost, _ = self._eval_cost(topo, tim, np.zeros(size, dtype=int), grid, env, npart,
                                      i_limit)
        search = get_stage(sname).search
        order = [i for i in np.argsort(cost, kind="stable")[:search.coarse_keep]
                 if np.isfinite(cost[i])]
        if not order:
            return None
        sets: dict[tuple, dict[str, float]] = {}
        for i in order:
            for point in self._refine(sname, {k: float(v[i]) for k, v in grid.items()}):
                sets.setdefault(tuple(point.items()), point)
        names = list(grid)
        return {k: np.array([p[k] for p in sets.values()]) for k in names}

    def _crossed(self, topo: Topology, tim: _Timing, stage_sets: dict[str, np.ndarray], npart,
                 i_limit: float):
        """Step 2: every kept timing network with every stage set, at the design supply
        and (for a supply range) at the end of the night, in one evaluation.

        Returns the timing index and stage values of each row, its cost, the cost's
        parts, the end-of-night cost, and the figures at the design supply and at the
        end of the night (None without a supply range).
        """
        search = get_stage(topo.stage).search
        names = list(stage_sets)
        n_t = min(tim.cost.size, search.timing_keep)
        n_s = stage_sets[names[0]].size
        t_idx = np.repeat(np.arange(n_t), n_s)
        s_vals = {k: np.tile(v, n_t) for k, v in stage_sets.items()}
        n = t_idx.size
        end_v = self.req.supply_end_v
        supplies = [self.v] if end_v is None else [self.v, end_v]
        vdd = np.repeat(np.array(supplies), n)
        env_rows, powered = self._rows_env(vdd)
        reps = len(supplies)
        vals = {k: np.tile(v[t_idx], reps) for k, v in tim.values.items()}
        vals.update({k: np.tile(v, reps) for k, v in s_vals.items()})
        vals = self._working(vals, np.tile(tim.kind[t_idx], reps), env_rows)
        self.evaluated += vdd.size
        from pulsepick.engine import fast

        f_all = fast.evaluate(topo, vals, replace(env_rows, cap_leak_g=np.tile(
            tim.g_typ[t_idx], reps)), powered=powered)
        f_nom = _slice_figures(f_all, slice(0, n))
        cost, parts = _cost(f_nom, self.aims, self.weights, tim.var[t_idx], npart, self.v,
                            tim.penalty[t_idx], i_limit)
        if get_core(topo.core).drives_stage_from_timing_output and not topo.buffered:
            # the stage loads the timing gate: the margin with the phases as loaded
            env_t = self.envs["typ"]
            scale_up = _end_scale(tim.t_high[t_idx], f_nom.high_s, *_phase_levels(env_t, True))
            scale_down = _end_scale(tim.t_low[t_idx], f_nom.low_s,
                                    *_phase_levels(env_t, False))
            ok = self._leak_ok(topo, {k: v[t_idx] for k, v in tim.values.items()},
                               tim.g_typ[t_idx], scale_up=scale_up, scale_down=scale_down)
            cost = np.where(ok, cost, np.inf)
        night = np.zeros(n)
        f_end = None
        if end_v is not None:
            f_end = _slice_figures(f_all, slice(n, 2 * n))
            # the nominal rows aim at the median over the supply range; the drift is
            # against the full supply's own median chip
            with np.errstate(all="ignore"):
                drift = np.log(f_end.period_s / f_nom.period_s) + self._range_log
            ok = (f_end.status == RUNS) & np.isfinite(drift)
            night = np.where(ok, drift**2 / 3.0 / SIGMA**2,
                             PENALTY_END)
            cost = cost + night
        running = (f_nom.status == RUNS) & np.isfinite(cost)
        for key in ("period_s", "flash_s", "led_peak_a", "effective_a", "effective_mcd"):
            self._note_range(key, np.where(running, getattr(f_nom, key), np.nan))
        return t_idx, s_vals, cost, parts, night, f_nom, f_end

    def _picks(self, topo: Topology, tim: _Timing, t_idx, s_vals, cost, parts, night, f_nom,
               f_end) -> list[_Pick]:
        """The best rows, lowest cost first, that the parts drawer can build (at most
        ``K_KEEP``)."""
        picks: list[_Pick] = []
        for i in np.argsort(cost, kind="stable"):
            if not np.isfinite(cost[i]) or len(picks) >= K_KEEP:
                break
            values = {k: float(v[t_idx[i]]) for k, v in tim.values.items()}
            values.update({k: float(v[i]) for k, v in s_vals.items()})
            if not self._stock_ok(topo, values):
                continue
            breakdown = {k: float(np.asarray(v).reshape(-1)[i]) for k, v in parts.items()}
            breakdown["night"] = float(night[i])
            kind_i = np.array([int(tim.kind[t_idx[i]])])
            size = float(self._size_cost(np.array([values["c1"]]), kind_i)[0])
            breakdown["size"] = size
            breakdown["spread"] -= size
            picks.append(_Pick(
                cost=float(cost[i]), topo=topo, family=self.chip.family, values=values,
                kind=self.space.kinds[int(tim.kind[t_idx[i]])], var=float(tim.var[t_idx[i]]),
                parts_cost=breakdown, figures=f_nom.row(int(i)),
                end_figures=None if f_end is None else f_end.row(int(i)),
            ))
        return picks

    def _eval_cost(self, topo, tim: _Timing, t_idx, stage_vals, env, npart,
                   i_limit: float = math.inf):
        vals = {k: v[t_idx] for k, v in tim.values.items()}
        vals.update(stage_vals)
        vals = self._working(vals, tim.kind[t_idx], env)
        f = self._evaluate(topo, vals, replace(env, cap_leak_g=tim.g_typ[t_idx]))
        cost, parts = _cost(f, self.aims, self.weights, tim.var[t_idx], npart, self.v,
                            tim.penalty[t_idx], i_limit)
        return f, cost, parts

    def _stock_ok(self, topo: Topology, values: dict[str, float]) -> bool:
        stock = self.req.stock
        if stock is None:
            return True
        from pulsepick.circuits.base import get_core, get_stage

        need: dict[tuple[str, float], int] = {}
        for p in get_core(topo.core).params + get_stage(topo.stage).params:
            v = values[p.name]
            if p.optional and v == 0:
                continue
            need[(p.kind, v)] = need.get((p.kind, v), 0) + 1
        for (kind, v), n in need.items():
            have = stock.count(kind, v)
            if have is not None and have < n:
                return False
        return True


def _phase_levels(env, charging: bool) -> tuple[float, float, float]:
    """(target level, start threshold, end threshold) of a timing phase, V."""
    vdd = float(np.ravel(env.vdd)[0])
    vtp = float(np.ravel(env.vt_plus)[0])
    vtm = float(np.ravel(env.vt_minus)[0])
    return (vdd, vtm, vtp) if charging else (0.0, vtp, vtm)


def _end_scale(t_bare, t_loaded, target: float, start: float, end: float) -> np.ndarray:
    """How much a load on the driving output shrinks the current at the end of a phase.

    An RC phase from ``start`` to ``end`` towards ``target`` lasts tau*L with
    L = ln((target - start)/(target - end)); the current at its end is proportional to
    (target - end) = (end - start)/(e^L - 1). A load that stretches the phase from
    ``t_bare`` to ``t_loaded`` moves the effective target so that the phase lasts
    tau*L*t_loaded/t_bare, and the end current scales by (e^L - 1)/(e^(L*t_loaded/
    t_bare) - 1) (an estimate: the steered and 555 branches are near-RC). 1 where the
    load shortens the phase.
    """
    with np.errstate(all="ignore"):
        big_l = math.log((target - start) / (target - end))
        stretch = np.asarray(t_loaded, dtype=float) / np.asarray(t_bare, dtype=float)
        scale = math.expm1(big_l) / np.expm1(np.minimum(big_l * stretch, 700.0))
    return np.where(np.isfinite(scale) & (stretch > 1.0), scale, 1.0)
