"""Simple period ratios and the lock risk of two lights on one package (see
:mod:`pulsepick.analysis.multi`)."""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction

import numpy as np

from pulsepick.errors import RequestError

#: Margin around a simple ratio within which a pair is at lock risk, fraction. Estimate:
#: "within a few percent" (common practice).
DEFAULT_LOCK_MARGIN = 0.03
#: Largest denominator of a simple ratio p/q (shorter over longer period).
MAX_RATIO_Q = 4


def simple_ratios(max_q: int = MAX_RATIO_Q) -> tuple[Fraction, ...]:
    """Every p/q <= 1 in lowest terms with q <= ``max_q`` (1/4, 1/3, 1/2, 2/3, 3/4, 1)."""
    if not (isinstance(max_q, int) and max_q >= 1):
        raise RequestError(f"largest ratio denominator {max_q!r}: give a whole number >= 1")
    return tuple(sorted({Fraction(p, q) for q in range(1, max_q + 1) for p in range(1, q + 1)}))


def _zones(margin: float, max_q: int) -> tuple[np.ndarray, float]:
    """Centres (log of the ratio, both orders) and half-width of the forbidden zones."""
    logs = [math.log(float(f)) for f in simple_ratios(max_q)]
    centres = np.array(sorted(set(logs + [-x for x in logs])))
    return centres, math.log1p(margin)


def clearance(log_lo, log_hi, margin: float = DEFAULT_LOCK_MARGIN,
              max_q: int = MAX_RATIO_Q):
    """Distance (log units) from the ratio interval [lo, hi] to the nearest forbidden zone.

    ``log_lo``/``log_hi`` bound ln(Ta/Tb) (arrays broadcast). A zone is ln(p/q) +/-
    ln(1 + margin) for each simple ratio, in either order. Negative: the interval reaches
    into a zone by that much.
    """
    centres, h = _zones(margin, max_q)
    lo = np.asarray(log_lo, dtype=float)[..., None]
    hi = np.asarray(log_hi, dtype=float)[..., None]
    dist = np.maximum(lo - (centres + h), (centres - h) - hi)
    return np.min(dist, axis=-1)


def nearest_ratio(ratio: float, max_q: int = MAX_RATIO_Q) -> Fraction:
    """The simple ratio (shorter over longer) nearest in log to ``ratio`` (folded to <= 1)."""
    r = ratio if ratio <= 1 else 1.0 / ratio
    return min(simple_ratios(max_q), key=lambda f: abs(math.log(r / float(f))))


@dataclass(frozen=True)
class PairRisk:
    """The period ratio of two lights on one package against the simple ratios."""

    a: int  # light index (shorter period)
    b: int  # light index (longer period)
    ratio: float  # nominal period ratio, shorter over longer
    band: tuple[float, float]  # P5..P95 of that ratio over builds (nan: not known)
    nearest: str  # nearest simple ratio, "2:3"
    nominal_near: bool  # the nominal ratio is within the margin of a simple ratio
    band_near: bool  # some of the band is
    clearance: float  # log units from the band (or nominal) to the nearest zone; < 0: inside

    @property
    def at_risk(self) -> bool:
        return self.nominal_near or self.band_near


def pair_band(samples_a: np.ndarray, samples_b: np.ndarray) -> tuple[float, float]:
    """P5 and P95 of ln(Ta/Tb) over paired builds (independent draws), log units."""
    a = np.asarray(samples_a, dtype=float)
    b = np.asarray(samples_b, dtype=float)
    a, b = a[np.isfinite(a) & (a > 0)], b[np.isfinite(b) & (b > 0)]
    n = min(a.size, b.size)
    if n < 20:
        return math.nan, math.nan
    x = np.log(a[:n] / b[:n])
    lo, hi = np.percentile(x, (5.0, 95.0))
    return float(lo), float(hi)


def lock_risks(periods_s: Sequence[float], groups: Sequence[int],
               samples: Sequence[np.ndarray] | None = None, *,
               margin: float = DEFAULT_LOCK_MARGIN,
               max_q: int = MAX_RATIO_Q) -> tuple[PairRisk, ...]:
    """Every pair of lights in the same group (package), checked against simple ratios.

    Parameters
    ----------
    periods_s : nominal period of each light, s.
    groups : package number of each light (pairs in different packages are skipped).
    samples : per light, periods of Monte Carlo builds (s) for the ratio band, or None.
    margin : fraction around each simple ratio counted as near.
    """
    if not (0 < margin < 0.5):
        raise RequestError(f"lock margin {margin!r}: give a fraction between 0 and 0.5, "
                           "such as 3%")
    out = []
    for i, j in itertools.combinations(range(len(periods_s)), 2):
        if groups[i] != groups[j]:
            continue
        a, b = (i, j) if periods_s[i] <= periods_s[j] else (j, i)
        x = math.log(periods_s[a] / periods_s[b])
        nominal_c = float(clearance(x, x, margin, max_q))
        lo = hi = math.nan
        band_c = math.nan
        if samples is not None:
            lo, hi = pair_band(samples[a], samples[b])
            if math.isfinite(lo):
                band_c = float(clearance(lo, hi, margin, max_q))
        f = nearest_ratio(math.exp(x), max_q)
        out.append(PairRisk(
            a=a, b=b, ratio=math.exp(x),
            band=(math.exp(lo), math.exp(hi)) if math.isfinite(lo) else (math.nan, math.nan),
            nearest=f"{f.numerator}:{f.denominator}", nominal_near=nominal_c < 0,
            band_near=bool(math.isfinite(band_c) and band_c < 0),
            clearance=band_c if math.isfinite(band_c) else nominal_c))
    return tuple(out)
