"""The lock share left when every light on a package has a trimmer, set at the bench.

A trimmer in place of each light's period resistor (sized as in
:mod:`pulsepick.analysis.trim`: a fixed standard value plus a 1-2-5 trimmer that reaches
every P5..P95 build with the setting near mid-travel) lets each build be set to its
light's nominal period. What trimming cannot take out:

- the setting resolution: a single-turn trimmer is set to about
  ``TRIM_SETTING_RESOLUTION`` of its travel (estimate), so each light is left within
  half a step of its period, uniformly (estimate);
- what moves the period after it is set: the builds are trimmed at 25 C and the full
  supply, then run over the night's supply and the temperature range. The same builds
  (same seeds, :func:`pulsepick.analysis.lock.package_builds`) are evaluated at the
  trimming conditions, and each build keeps only its difference from them.

A build whose needed value lies beyond its trimmer's reach stays at the nearest end of
the travel and keeps the rest of its deviation (d ln T / d ln R at the nominal value,
an estimate).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

#: Share of a single-turn trimmer's travel it can be set to by hand (estimate).
TRIM_SETTING_RESOLUTION = 0.01


@dataclass(frozen=True)
class LightTrim:
    """The trimmer of one light for the lock remedy (SI units)."""

    light: int  # light index
    param: str  # circuit value replaced (r1, ra, rb)
    fixed_ohm: float  # ohm, fixed resistor in series with the trimmer
    trimmer_ohm: float  # ohm, trimmer full value
    step_log: float  # ln-period change of one resolution step at the nominal setting
    sensitivity: float  # d ln T / d ln R of the trimmed value at its nominal value


def size_light_trim(design, log_dev: np.ndarray, light: int, series: str = "E24"
                    ) -> LightTrim | None:
    """The trimmer that sets ``design``'s builds (ln(T_build / T_nominal) ``log_dev``)
    to its nominal period; None when no 1-2-5 trimmer covers them."""
    from pulsepick.analysis.trim import _needed, period_part, size_trimmer

    dev = np.asarray(log_dev, dtype=float)
    dev = dev[np.isfinite(dev)]
    if dev.size < 10:
        return None
    key = period_part(design)
    need = np.asarray(_needed(design, key, np.exp(-dev)), dtype=float)
    need = need[np.isfinite(need)]
    if need.size < 10:
        return None
    p5, p95 = np.percentile(need, [5.0, 95.0])
    sized = size_trimmer(float(np.median(need)), float(p5), float(p95), series)
    if sized is None:
        return None
    fixed, pot = sized
    step = TRIM_SETTING_RESOLUTION * pot
    # ln-period per ohm near the nominal value, from the same sweep the sizing uses
    lo, hi = _needed(design, key, np.array([math.exp(-0.01), math.exp(0.01)]))
    if not (np.isfinite(lo) and np.isfinite(hi) and hi != lo):
        return None
    step_log = abs(0.02 / (float(hi) - float(lo))) * step
    sensitivity = abs(0.02 / math.log(float(hi) / float(lo)))
    return LightTrim(light=light, param=key, fixed_ohm=fixed, trimmer_ohm=pot,
                     step_log=step_log, sensitivity=sensitivity)


def trimmed_share(designs: Sequence, groups: Sequence[int], base, trimmed: Sequence[bool],
                  series: Sequence[str], *, resistor_tol_pct: Sequence | None = None,
                  cap_tol=None):
    """The lock share of the builds of ``base`` (a
    :class:`pulsepick.analysis.lock.LockShare`) with each light where ``trimmed`` is true
    given a trimmer (values of ``series``) and set to its nominal period at 25 C and the
    full supply (module doc). Returns ``(LockShare, trims)``, ``trims`` per light a
    :class:`LightTrim` or None (not trimmed, or no trimmer covers its builds)."""
    from pulsepick.analysis.lock import package_builds, share_of
    from pulsepick.analysis.spread import T_REF_C
    from pulsepick.analysis.trim import _needed

    n = len(designs)
    nominal = [float(d.fast().period_s[0]) for d in designs]
    log_dev = [np.asarray(d, dtype=float) for d in base.log_dev]
    trims: list[LightTrim | None] = [None] * n
    rng = np.random.default_rng(base.seed + 313)
    for pkg in sorted(set(groups)):
        idx = [i for i in range(n) if groups[i] == pkg]
        if not any(trimmed[i] for i in idx):
            continue
        # the same builds as the base share (its seeds), held at the trimming conditions
        at_trim = package_builds([designs[i] for i in idx], builds=base.builds,
                                 seed=base.seed + 7 * pkg, supply_range_v=None,
                                 resistor_tol_pct=None if resistor_tol_pct is None else
                                 [resistor_tol_pct[i] for i in idx], cap_tol=cap_tol,
                                 temp_c=T_REF_C)
        for i, p in zip(idx, at_trim, strict=True):
            if not trimmed[i]:
                continue
            with np.errstate(divide="ignore", invalid="ignore"):
                set_dev = np.log(p / nominal[i])
            t = size_light_trim(designs[i], set_dev, i, series[i])
            if t is None:
                continue
            trims[i] = t
            error = rng.uniform(-0.5, 0.5, base.builds) * t.step_log
            need = np.asarray(_needed(designs[i], t.param, np.exp(-set_dev)), dtype=float)
            reach = np.clip(need, t.fixed_ohm, t.fixed_ohm + t.trimmer_ohm)
            with np.errstate(divide="ignore", invalid="ignore"):
                left = np.where(np.isfinite(need), t.sensitivity * np.log(need / reach), 0.0)
            log_dev[i] = log_dev[i] - set_dev + error - left
    return share_of(nominal, log_dev, groups, margin=base.margin, max_q=base.max_q,
                    seed=base.seed), tuple(trims)


__all__ = ["TRIM_SETTING_RESOLUTION", "LightTrim", "size_light_trim", "trimmed_share"]
