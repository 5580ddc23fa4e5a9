"""Batches of builds: the seeded draws of every source and ONE vectorised fast-engine call
per batch.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from pulsepick.circuits.base import Figures
from pulsepick.design import Design
from pulsepick.engine import fast
from pulsepick.engine.environment import chip_model, make_env
from pulsepick.parts.capacitor import get_cap_kind
from pulsepick.analysis.spread.chipdraws import _chip_limits, _draw_chip, _scalar_limits
from pulsepick.analysis.spread.tolerances import (
    FIGURE_KEYS, RESISTOR_TEMPCO_PPM_PER_K, SOURCES, T_REF_C,
)


@dataclass
class _Batch:
    """Inputs of many builds (arrays of one length), for one engine call."""

    factors: dict[str, np.ndarray]  # multiplicative factor on each part value
    vdd: np.ndarray  # V
    chip_a: np.ndarray  # VT+ as a fraction of its limits at vdd; nan = typical
    chip_b: np.ndarray  # VT- likewise
    rout_u: np.ndarray  # output resistance, 0 = typical .. 1 = maximum

    @property
    def size(self) -> int:
        return int(self.vdd.size)

    @staticmethod
    def nominal(design: Design, n: int, names) -> _Batch:
        return _Batch({k: np.ones(n) for k in names}, np.full(n, design.supply_v),
                      np.full(n, np.nan), np.full(n, np.nan), np.zeros(n))

    @staticmethod
    def concat(batches: list[_Batch]) -> _Batch:
        names = batches[0].factors.keys()
        return _Batch({k: np.concatenate([b.factors[k] for b in batches]) for k in names},
                      np.concatenate([b.vdd for b in batches]),
                      np.concatenate([b.chip_a for b in batches]),
                      np.concatenate([b.chip_b for b in batches]),
                      np.concatenate([b.rout_u for b in batches]))


def _rout_range(design: Design, vdd) -> tuple[Any, Any, Any, Any]:
    """(high typ, high max, low typ, low max), ohm, at ``vdd``; None for a timer."""
    if design.chip.is_timer:
        return None  # type: ignore[return-value]
    model = chip_model(design.chip)
    return (model.rout_high(vdd, "typ"), model.rout_high(vdd, "max"),
            model.rout_low(vdd, "typ"), model.rout_low(vdd, "max"))


def _has_rout_spread(design: Design) -> bool:
    r = _rout_range(design, design.supply_v)
    return r is not None and bool(np.any(r[1] > r[0]) or np.any(r[3] > r[2]))


def _evaluate(design: Design, batch: _Batch) -> Figures:
    """The fast engine over every build of ``batch`` in one call."""
    vals = {k: (np.asarray(v, dtype=float) * batch.factors[k] if k in batch.factors else v)
            for k, v in design.values.items()}
    vdd = batch.vdd
    lim = _chip_limits(design, vdd)
    vtp = np.where(np.isnan(batch.chip_a), lim.p_typ,
                   lim.p_lo + np.nan_to_num(batch.chip_a) * (lim.p_hi - lim.p_lo))
    vtm = np.where(np.isnan(batch.chip_b), lim.m_typ,
                   lim.m_lo + np.nan_to_num(batch.chip_b) * (lim.m_hi - lim.m_lo))
    env, powered = make_env(design.chip, design.parts, vdd, c_timing=vals["c1"],
                            vt_plus=vtp, vt_minus=vtm)
    r = _rout_range(design, vdd)
    if r is not None:
        u = batch.rout_u
        env = replace(env, rout_high=r[0] + u * (r[1] - r[0]), rout_low=r[2] + u * (r[3] - r[2]))
    vals["c1"] = vals["c1"] * design.timing_cap_factor(env)
    return fast.evaluate(design.topo, vals, env, powered=powered)


#: Builds per fast-engine call: the engine's temporaries (quadrature nodes by builds)
#: stay some tens of MB whatever the number of builds (estimate; bench/bench_spread.py
#: measures the peak memory of 1,000,000 builds).
CHUNK_BUILDS = 50_000
#: Up to this many builds a spread keeps every figure of every build in ``samples``.
SAMPLES_ALL_UP_TO = 100_000


class _Joined:
    """Figures of several engine calls joined end to end (what :func:`_slice` reads)."""

    def __init__(self, parts: list[Figures], sizes: list[int]) -> None:
        for k in (*FIGURE_KEYS, "status"):
            setattr(self, k, np.concatenate([
                np.broadcast_to(np.asarray(getattr(f, k)).reshape(-1) if np.ndim(getattr(f, k))
                                else getattr(f, k), (n,))
                for f, n in zip(parts, sizes, strict=True)]))


def _evaluate_chunked(design: Design, pieces: list[_Batch]):
    """:func:`_evaluate` over the builds of ``pieces`` one after the other, in calls of
    at most ``CHUNK_BUILDS`` builds (no joined copy of the inputs is made)."""
    if sum(b.size for b in pieces) <= CHUNK_BUILDS:
        return _evaluate(design, _Batch.concat(pieces))
    parts, sizes = [], []
    for batch in pieces:
        n = batch.size
        for start in range(0, n, CHUNK_BUILDS):
            sl = slice(start, min(start + CHUNK_BUILDS, n))
            piece = _Batch({k: v[sl] for k, v in batch.factors.items()}, batch.vdd[sl],
                           batch.chip_a[sl], batch.chip_b[sl], batch.rout_u[sl])
            parts.append(_evaluate(design, piece))
            sizes.append(piece.size)
    return _Joined(parts, sizes)


# ----------------------------------------------------------------------- Monte Carlo draws

def _temperature_factors(design: Design, tols, temp_c, rng) -> dict[str, np.ndarray]:
    """Per-part factors at the builds' temperatures, with per-part tempco draws."""
    dt = temp_c - T_REF_C
    out = {}
    for t in tols:
        if t.kind == "R":
            a = rng.uniform(-RESISTOR_TEMPCO_PPM_PER_K, RESISTOR_TEMPCO_PPM_PER_K, dt.size)
            out[t.name] = 1.0 + a * 1e-6 * dt
        else:
            kind = get_cap_kind(t.cap_kind)
            if kind.temp_model == "linear":
                spread = kind.tempco_tol_ppm_per_k
                a = kind.tempco_ppm_per_k + rng.uniform(-spread, spread, dt.size)
                out[t.name] = 1.0 + a * 1e-6 * dt
            else:
                out[t.name] = kind.temperature_factor(temp_c, "typ")
    return out


@dataclass
class _Draws:
    r_tol: dict[str, np.ndarray]
    c_tol: dict[str, np.ndarray]
    temp: dict[str, np.ndarray]
    vdd: np.ndarray
    rout_u: np.ndarray
    chip_seed: Any  # SeedSequence for the chip draws (depend on the run's supplies)
    varies: dict[str, bool]


def _draw(design: Design, tols, n: int, seed: int, temp_range, supply_range,
          vary: frozenset[str]) -> _Draws:
    seqs = dict(zip(SOURCES, np.random.SeedSequence(seed).spawn(len(SOURCES)), strict=True))
    gens = {k: np.random.default_rng(s) for k, s in seqs.items()}
    r_tol, c_tol = {}, {}
    for t in tols:
        g = gens["resistors" if t.kind == "R" else "capacitors"]
        d = g.uniform(-t.tol_minus_pct, t.tol_plus_pct, n) * 0.01
        (r_tol if t.kind == "R" else c_tol)[t.name] = 1.0 + d
    temp_c = gens["temperature"].uniform(temp_range[0], temp_range[1], n)
    temp = _temperature_factors(design, tols, temp_c, gens["temperature"])
    if supply_range is None:
        vdd = np.full(n, design.supply_v)
    else:
        vdd = gens["supply"].uniform(supply_range[0], supply_range[1], n)
    rout_spread = _has_rout_spread(design)
    rout_u = gens["output_resistance"].random(n) if rout_spread else np.zeros(n)
    lim = _chip_limits(design, design.supply_v)
    p_lo, p_hi, m_lo, m_hi, _, _ = _scalar_limits(lim)
    varies = {
        "resistors": any(t.tol_minus_pct + t.tol_plus_pct > 0 for t in tols if t.kind == "R"),
        "capacitors": any(t.tol_minus_pct + t.tol_plus_pct > 0 for t in tols if t.kind == "C"),
        "temperature": any(np.ptp(f) > 0 for f in temp.values()),
        "chip_thresholds": bool(p_hi > p_lo or m_hi > m_lo),
        "output_resistance": rout_spread,
        "supply": supply_range is not None and supply_range[1] > supply_range[0],
    }
    varies = {k: v and k in vary for k, v in varies.items()}
    return _Draws(r_tol, c_tol, temp, vdd, rout_u, seqs["chip_thresholds"], varies)


def _run_batch(design: Design, draws: _Draws, names, n: int, only: str | None) -> _Batch:
    """The builds with every source varying (``only`` None) or just one."""
    b = _Batch.nominal(design, n, names)

    def use(source: str) -> bool:
        return draws.varies[source] and (only is None or source == only)

    for name in names:
        f = np.ones(n)
        if use("resistors") and name in draws.r_tol:
            f = f * draws.r_tol[name][:n]
        if use("capacitors") and name in draws.c_tol:
            f = f * draws.c_tol[name][:n]
        if use("temperature") and name in draws.temp:
            f = f * draws.temp[name][:n]
        b.factors[name] = f
    if use("supply"):
        b.vdd = draws.vdd[:n].copy()
    if use("output_resistance"):
        b.rout_u = draws.rout_u[:n].copy()
    if use("chip_thresholds"):
        b.chip_a, b.chip_b = _draw_chip(design, b.vdd, np.random.default_rng(draws.chip_seed))
    return b


# ----------------------------------------------------------------------- corners
