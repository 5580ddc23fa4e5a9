"""First-order propagation (:func:`linearised`): the Monte Carlo's independent check."""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

from pulsepick.design import Design
from pulsepick.parts.capacitor import get_cap_kind
from pulsepick.analysis.spread.builds import _Batch, _evaluate, _has_rout_spread
from pulsepick.analysis.spread.chipdraws import _chip_limits, _chip_moments, _scalar_limits
from pulsepick.analysis.spread.tolerances import (
    _check_range, _vary_set, DEFAULT_TEMP_RANGE_C, part_tolerances, PartTolerance,
    RESISTOR_TEMPCO_PPM_PER_K, SOURCES, T_REF_C, Z95,
)


@dataclass(frozen=True, eq=False)
class LinearisedResult:
    """First-order propagation of the same inputs as :func:`spread` (SI units).

    ``centre[key]`` is the figure at the mean of every input; ``sigma[key]`` its
    standard deviation from the sensitivities and the inputs' standard deviations,
    combined in quadrature; ``p5``/``p95`` are centre -/+ 1.645 sigma (a normal
    approximation). ``shares`` is each source's share of the period variance.
    """

    design: Design
    temp_range_c: tuple[float, float]  # C
    supply_range_v: tuple[float, float] | None  # V
    tolerances: tuple[PartTolerance, ...]
    centre: dict[str, float]
    sigma: dict[str, float]
    sigma_by_source: dict[str, dict[str, float]]  # figure -> source -> sigma
    shares: dict[str, float]  # source -> share of the period variance

    def p5(self, key: str = "period_s") -> float:
        return self.centre[key] - Z95 * self.sigma[key]

    def p95(self, key: str = "period_s") -> float:
        return self.centre[key] + Z95 * self.sigma[key]


def linearised(design: Design, *, temp_range_c: tuple[float, float] = DEFAULT_TEMP_RANGE_C,
               supply_range_v: tuple[float, float] | None = None, resistor_tol_pct=None,
               cap_tol=None, vary: Iterable[str] | None = None,
               rel_step: float = 0.01) -> LinearisedResult:
    """Linearised (first-order) propagation of the spread inputs.

    Sensitivities are central finite differences of the fast engine at the mean of
    every input, with a step of ``rel_step`` times each input's standard deviation;
    all of them come from one vectorised engine call. Input standard deviations: a
    uniform interval of width w has w/sqrt(12); a tempco drawn within +/-a (ppm/K)
    contributes a/sqrt(3) * sqrt(E[(T - 25 C)^2]); the chip's thresholds take the mean and
    covariance of their draw (split normal x split normal inside the hysteresis window) by
    quadrature, at the mean supply. ``vary`` restricts the sources as in :func:`spread`.
    """
    vary_set = _vary_set(vary)
    temp_range = _check_range(temp_range_c, "temperature range", "C", positive=False)
    supply_range = (None if supply_range_v is None
                    else _check_range(supply_range_v, "supply range", "V", positive=True))
    tols = part_tolerances(design, resistor_tol_pct, cap_tol)
    var, cov_ab, chip_on = _input_variables(design, tols, temp_range, supply_range, vary_set)
    active, fig = _evaluate_steps(design, tols, var, chip_on, rel_step)
    centre, sigma, by_source, shares = _combine(fig, var, active, cov_ab, chip_on, rel_step)
    return LinearisedResult(design=design, temp_range_c=temp_range, supply_range_v=supply_range,
                            tolerances=tols, centre=centre, sigma=sigma,
                            sigma_by_source=by_source, shares=shares)


def _input_variables(design: Design, tols, temp_range, supply_range, vary_set):
    """The inputs as (label, source, mean, sd), the chip pair's covariance, and whether
    the chip's thresholds vary; sources outside ``vary_set`` sit at nominal with no spread."""
    t_lo, t_hi = temp_range
    t_mean, t_sd = 0.5 * (t_lo + t_hi), (t_hi - t_lo) / math.sqrt(12)
    dt_rms = math.sqrt(t_sd**2 + (t_mean - T_REF_C) ** 2)

    # variables: (label, source, mean, sd); the chip pair is handled by its covariance
    var: list[tuple[str, str, float, float]] = []
    for t in tols:
        lo, hi = -0.01 * t.tol_minus_pct, 0.01 * t.tol_plus_pct
        src = "resistors" if t.kind == "R" else "capacitors"
        var.append((f"tol:{t.name}", src, 0.5 * (lo + hi), (hi - lo) / math.sqrt(12)))
        if t.kind == "R":
            var.append((f"tc:{t.name}", "temperature", 0.0,
                        RESISTOR_TEMPCO_PPM_PER_K * 1e-6 / math.sqrt(3) * dt_rms))
        else:
            kind = get_cap_kind(t.cap_kind)
            if kind.temp_model == "linear":
                var.append((f"tc:{t.name}", "temperature", 0.0,
                            kind.tempco_tol_ppm_per_k * 1e-6 / math.sqrt(3) * dt_rms))
    var.append(("T", "temperature", t_mean, t_sd))
    if supply_range is None:
        v_mean, v_sd = design.supply_v, 0.0
    else:
        v_mean = 0.5 * sum(supply_range)
        v_sd = (supply_range[1] - supply_range[0]) / math.sqrt(12)
    var.append(("vdd", "supply", v_mean, v_sd))
    rout_sd = 1 / math.sqrt(12) if _has_rout_spread(design) else 0.0
    var.append(("rout", "output_resistance", 0.5 if rout_sd else 0.0, rout_sd))
    lim = _chip_limits(design, v_mean)
    p_lo, p_hi, m_lo, m_hi, _, _ = _scalar_limits(lim)
    widths = np.array([p_hi - p_lo, m_hi - m_lo])
    mean_ab, cov_ab = _chip_moments(lim, design.chip.spread)
    sd_ab = np.sqrt(np.clip(np.diag(cov_ab), 0.0, None))
    var.append(("chip_a", "chip_thresholds", float(mean_ab[0]), float(sd_ab[0])))
    var.append(("chip_b", "chip_thresholds", float(mean_ab[1]), float(sd_ab[1])))
    chip_on = "chip_thresholds" in vary_set and bool(widths.max() > 0)
    at_nominal = {"T": T_REF_C, "vdd": design.supply_v}
    var = [v if v[1] in vary_set else (v[0], v[1], at_nominal.get(v[0], 0.0), 0.0)
           for v in var]
    return var, cov_ab, chip_on


def _evaluate_steps(design: Design, tols, var, chip_on: bool, rel_step: float):
    """One engine call on the mean and the +/- step of each input with spread; returns
    the indices of those inputs and the engine's figures (row 0 the mean, then pairs)."""
    labels = [v[0] for v in var]
    mean = np.array([v[2] for v in var])
    sd = np.array([v[3] for v in var])

    # design matrix: the mean, then +/- step on each variable with spread
    active = [j for j in range(len(var)) if sd[j] > 0]
    rows = [mean]
    for j in active:
        for sign in (1.0, -1.0):
            x = mean.copy()
            x[j] += sign * rel_step * sd[j]
            rows.append(x)
    X = np.array(rows)
    col = {lab: X[:, i] for i, lab in enumerate(labels)}
    temp_c = col["T"]
    factors = {}
    for t in tols:
        f = 1.0 + col[f"tol:{t.name}"]
        if t.kind == "R":
            f = f * (1.0 + col[f"tc:{t.name}"])
        else:
            kind = get_cap_kind(t.cap_kind)
            tf = kind.temperature_factor(temp_c, "typ")
            if f"tc:{t.name}" in col:
                tf = tf + col[f"tc:{t.name}"]
            f = f * tf
        factors[t.name] = f
    batch = _Batch(factors, col["vdd"],
                   col["chip_a"] if chip_on else np.full(len(X), np.nan),
                   col["chip_b"] if chip_on else np.full(len(X), np.nan),
                   col["rout"])
    return active, _evaluate(design, batch)


def _combine(fig, var, active, cov_ab, chip_on: bool, rel_step: float):
    """Central-difference gradients combined in quadrature with the inputs' standard
    deviations: (centre, sigma, sigma by source, period variance shares)."""
    labels = [v[0] for v in var]
    sd = np.array([v[3] for v in var])
    keys = ("period_s", "flash_s", "led_peak_a", "effective_a", "effective_mcd",
            "supply_avg_a")
    centre, sigma, by_source = {}, {}, {}
    shares: dict[str, float] = {}
    for key in keys:
        y = np.asarray(getattr(fig, key), dtype=float).reshape(-1)
        grad = np.zeros(len(var))
        for i, j in enumerate(active):
            grad[j] = (y[1 + 2 * i] - y[2 + 2 * i]) / (2 * rel_step * sd[j])
        contrib = {s: 0.0 for s in SOURCES}
        for j, (lab, src, _, s_j) in enumerate(var):
            if lab in ("chip_a", "chip_b"):
                continue
            contrib[src] += (grad[j] * s_j) ** 2
        g_ab = grad[[labels.index("chip_a"), labels.index("chip_b")]]
        contrib["chip_thresholds"] += float(g_ab @ cov_ab @ g_ab) if chip_on else 0.0
        total = sum(contrib.values())
        centre[key] = float(y[0])
        sigma[key] = math.sqrt(total) if math.isfinite(total) else math.nan
        by_source[key] = {s: math.sqrt(v) for s, v in contrib.items()}
        if key == "period_s":
            shares = {s: (v / total if total > 0 else 0.0) for s, v in contrib.items()}
    return centre, sigma, by_source, shares


# ----------------------------------------------------------------------- tolerance bands
