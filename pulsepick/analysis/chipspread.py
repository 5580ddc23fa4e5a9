"""How the switching thresholds of real chips spread: one distribution for every analysis.

A datasheet gives each threshold as a guaranteed minimum, a typical value at 25 C and a
guaranteed maximum. No source publishes the distribution between them; we read the
table the way tolerance analyses commonly do (common practice, an engineering
judgement): the typical value is the MEDIAN of the chips one buys, and the published
limits are far tails, the 0.1 % and 99.9 % points (they include test margins and the
whole temperature range). Each threshold is therefore a split normal: a normal
distribution below the typical value whose 0.1 % point is the minimum, joined to one
above it whose 99.9 % point is the maximum, each side holding half of the chips,
truncated at the limits (a chip outside its guarantees is rejected at test). VT+ and
VT- are drawn independently and pairs outside the published hysteresis window VH
min..max are drawn again, as limits taken independently would overstate the spread.
For the CMOS 555 the threshold and trigger levels are drawn the same way (no
hysteresis window).

Where the typical value sits near one limit the distribution is lopsided, but its
median stays at the typical value, so a design computed from typical figures is the
median build of its threshold spread (up to the non-linearity of the period formula
and the hysteresis window, which :mod:`pulsepick.analysis.median` takes out).

For worst-case studies the same limits can be read two other ways (``--chip-spread``):
``uniform``, every value between the minimum and maximum equally likely (the median then
sits mid-way between the limits, not at the typical value), and ``triangle``, a
triangular density from the minimum up to the typical value and down to the maximum
(wider than the split normal; its median sits between the typical value and the
middle). The hysteresis window cuts every shape alike. ``normal`` (the split normal
above) is the default.

Public functions (other analyses call these; do not copy the distribution):

``draw_thresholds(chip, supply_v, n, rng)``
    VT+ and VT- in volts of ``n`` chips.
``threshold_percentile(family, supply_v, vt_plus_v, vt_minus_v)``
    Where a measured chip sits in the distribution (percent, each threshold alone).
``split_normal_fraction`` / ``split_normal_pdf`` / ``split_normal_var``
    The distribution itself on the unit interval between the limits, for the Monte
    Carlo, its quadrature check and the solver's variance estimate.
"""

from __future__ import annotations

import math
from statistics import NormalDist

import numpy as np

from pulsepick.engine.environment import CHIP_SPREADS
from pulsepick.errors import PartError

#: Share of chips below the published minimum (and above the maximum) before truncation
#: (common practice: limits read as the 0.1 % / 99.9 % points).
TAIL_SHARE = 1e-3
#: Standard normal quantile of 1 - TAIL_SHARE (scipy.special.ndtri(0.999)).
Z_TAIL = 3.090232306167813

# The standard normal's CDF and its inverse, element by element, from the standard
# library (statistics.NormalDist: math.erf, and Wichura's AS 241 for the inverse), so the
# solver's workers need not import scipy.special (tests hold them to scipy.special's
# ndtr and ndtri). The arrays here are tens to thousands of values.
_STD_NORMAL = NormalDist()
_ndtr = np.vectorize(_STD_NORMAL.cdf, otypes=[float])
_ndtri = np.vectorize(_STD_NORMAL.inv_cdf, otypes=[float])
_EPS_V = 1e-12  # V, slack on the hysteresis test (a measured chip pins VH exactly)
#: The reading of the limits unless a chip says otherwise (CHIP_SPREADS).
DEFAULT_CHIP_SPREAD = CHIP_SPREADS[0]
_MAX_REJECTION_ROUNDS = 200


def split_normal_fraction(u, typ_frac) -> np.ndarray:
    """Inverse CDF of the truncated split normal on [0, 1] (0 = minimum, 1 = maximum).

    ``u`` uniform on [0, 1] (arrays), ``typ_frac`` the typical value as a fraction of
    the limits. The median is ``typ_frac``; 0 and 1 are the 0.1 % and 99.9 % points
    of the untruncated halves, and the draw is truncated there.
    """
    u = np.asarray(u, dtype=float)
    z = _ndtri(TAIL_SHARE + u * (1.0 - 2.0 * TAIL_SHARE))
    return _from_z(z, typ_frac)


def _from_z(z, typ_frac) -> np.ndarray:
    """A standard normal value (truncated to +/-Z_TAIL) mapped onto the split normal."""
    t = np.asarray(typ_frac, dtype=float)
    z = np.asarray(z, dtype=float) / Z_TAIL  # in [-1, 1]
    x = np.where(z < 0, t + t * z, t + (1.0 - t) * z)
    return np.clip(x, 0.0, 1.0)


def _truncated_normal(rng, n: int) -> np.ndarray:
    """``n`` standard normal draws within +/-Z_TAIL (rejection: 0.2 % drawn again)."""
    z = rng.standard_normal(n)
    bad = np.abs(z) > Z_TAIL
    while np.any(bad):
        z[bad] = rng.standard_normal(int(bad.sum()))
        bad = np.abs(z) > Z_TAIL
    return z


def split_normal_cdf(x, typ_frac) -> np.ndarray:
    """CDF of the truncated split normal on [0, 1] (inverse of :func:`split_normal_fraction`)."""
    x = np.clip(np.asarray(x, dtype=float), 0.0, 1.0)
    t = np.asarray(typ_frac, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        z = np.where(x < t, np.where(t > 0, (x - t) / t, 0.0),
                     np.where(t < 1, (x - t) / (1.0 - t), 0.0))
    p = _ndtr(z * Z_TAIL)
    return np.clip((p - TAIL_SHARE) / (1.0 - 2.0 * TAIL_SHARE), 0.0, 1.0)


def split_normal_pdf(x, typ_frac: float) -> np.ndarray:
    """Density of the truncated split normal on [0, 1] at ``x`` (integrates to 1)."""
    x = np.asarray(x, dtype=float)
    t = float(typ_frac)
    norm = 1.0 - 2.0 * TAIL_SHARE
    with np.errstate(invalid="ignore", divide="ignore"):
        lo = np.where(t > 0, Z_TAIL / t * np.exp(-0.5 * (Z_TAIL * (x - t) / t) ** 2), 0.0)
        hi = np.where(t < 1, Z_TAIL / (1 - t) * np.exp(-0.5 * (Z_TAIL * (x - t) / (1 - t)) ** 2),
                      0.0)
    phi0 = 1.0 / math.sqrt(2.0 * math.pi)
    out = np.where(x < t, lo, hi) * phi0 / norm
    return np.where((x >= 0) & (x <= 1), out, 0.0)


def split_normal_var(low: float, typ: float, high: float) -> float:
    """Variance of one threshold (V²) under the truncated split normal, in closed form.

    With s = side width / Z_TAIL and z a standard normal truncated to 0..Z_TAIL, each
    half carries E[z] = (phi(0) - phi(Z)) / (Phi(Z) - 1/2) and
    E[z²] = 1 - Z phi(Z) / (Phi(Z) - 1/2) (truncated normal moments, handbook formula).
    """
    s_lo, s_hi = max(typ - low, 0.0) / Z_TAIL, max(high - typ, 0.0) / Z_TAIL
    mass = 0.5 - TAIL_SHARE
    phi0, phiz = 1.0 / math.sqrt(2.0 * math.pi), math.exp(-0.5 * Z_TAIL**2) / math.sqrt(
        2.0 * math.pi)
    m1 = (phi0 - phiz) / mass
    m2 = 1.0 - Z_TAIL * phiz / mass
    mean = 0.5 * (s_hi - s_lo) * m1
    second = 0.5 * (s_lo**2 + s_hi**2) * m2
    return max(second - mean**2, 0.0)


def check_shape(shape: str) -> str:
    """``shape`` when it is one of ``CHIP_SPREADS``; a PartError naming them otherwise."""
    if shape not in CHIP_SPREADS:
        raise PartError(f"chip spread {shape!r}: accepted {', '.join(CHIP_SPREADS)}")
    return shape


def spread_fraction(u, typ_frac, shape: str = DEFAULT_CHIP_SPREAD) -> np.ndarray:
    """Inverse CDF on [0, 1] of the limits read as ``shape`` (0 = minimum, 1 = maximum).

    ``normal``: :func:`split_normal_fraction`; ``uniform``: ``u`` itself; ``triangle``:
    the triangular density with its peak at ``typ_frac`` (inverse CDF sqrt(u t) below
    the peak, 1 - sqrt((1 - u)(1 - t)) above).
    """
    check_shape(shape)
    if shape == "normal":
        return split_normal_fraction(u, typ_frac)
    u = np.clip(np.asarray(u, dtype=float), 0.0, 1.0)
    if shape == "uniform":
        return np.broadcast_to(u, np.broadcast(u, np.asarray(typ_frac)).shape).copy()
    t = np.asarray(typ_frac, dtype=float)
    return np.where(u < t, np.sqrt(u * t), 1.0 - np.sqrt((1.0 - u) * (1.0 - t)))


def spread_pdf(x, typ_frac: float, shape: str = DEFAULT_CHIP_SPREAD) -> np.ndarray:
    """Density on [0, 1] of the limits read as ``shape`` at ``x`` (integrates to 1)."""
    check_shape(shape)
    if shape == "normal":
        return split_normal_pdf(x, typ_frac)
    x = np.asarray(x, dtype=float)
    inside = (x >= 0) & (x <= 1)
    if shape == "uniform":
        return np.where(inside, 1.0, 0.0)
    t = float(typ_frac)
    with np.errstate(invalid="ignore", divide="ignore"):
        up = np.where(t > 0, 2.0 * x / t, 0.0)
        down = np.where(t < 1, 2.0 * (1.0 - x) / (1.0 - t), 0.0)
    return np.where(inside, np.where(x < t, up, down), 0.0)


def threshold_var(low: float, typ: float, high: float,
                  shape: str = DEFAULT_CHIP_SPREAD) -> float:
    """Variance (V²) of one threshold with its limits read as ``shape``.

    ``uniform``: (high - low)²/12; ``triangle``: (a² + b² + c² - ab - ac - bc)/18 with
    a, b, c the minimum, peak and maximum (handbook formulas).
    """
    check_shape(shape)
    if shape == "normal":
        return split_normal_var(low, typ, high)
    if shape == "uniform":
        return (high - low) ** 2 / 12.0
    a, b, c = low, typ, high
    return max((a * a + b * b + c * c - a * b - a * c - b * c) / 18.0, 0.0)


def draw_fractions(p_lo, p_typ, p_hi, m_lo, m_typ, m_hi, h_lo, h_hi, rng,
                   shape: str = DEFAULT_CHIP_SPREAD) -> tuple[np.ndarray, np.ndarray]:
    """VT+ and VT- as fractions of their limits (arrays of one length), hysteresis kept.

    Each threshold is drawn from the split normal (or ``shape``); pairs whose VT+ - VT-
    falls outside ``h_lo..h_hi`` are drawn again (rejection), so the result is the
    product density restricted to the window.
    """
    check_shape(shape)
    p_lo, p_typ, p_hi, m_lo, m_typ, m_hi, h_lo, h_hi = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (p_lo, p_typ, p_hi, m_lo, m_typ, m_hi, h_lo,
                                              h_hi)))
    n = p_lo.size
    mode_a, mode_b = _fraction(p_typ, p_lo, p_hi), _fraction(m_typ, m_lo, m_hi)
    a, b = np.empty(n), np.empty(n)
    todo = np.arange(n)
    for _ in range(_MAX_REJECTION_ROUNDS):
        if todo.size == 0:
            return a, b
        if shape == "normal":
            ua = _from_z(_truncated_normal(rng, todo.size), mode_a[todo])
            ub = _from_z(_truncated_normal(rng, todo.size), mode_b[todo])
        else:
            ua = spread_fraction(rng.random(todo.size), mode_a[todo], shape)
            ub = spread_fraction(rng.random(todo.size), mode_b[todo], shape)
        p = p_lo[todo] + ua * (p_hi[todo] - p_lo[todo])
        m = m_lo[todo] + ub * (m_hi[todo] - m_lo[todo])
        h = p - m
        ok = (h >= h_lo[todo] - _EPS_V) & (h <= h_hi[todo] + _EPS_V)
        a[todo[ok]], b[todo[ok]] = ua[ok], ub[ok]
        todo = todo[~ok]
    raise PartError("the hysteresis limits leave almost no room inside the threshold "
                    "limits; check the threshold table or the measured values")


def _fraction(v, lo, hi):
    width = hi - lo
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(width > 0, (v - lo) / np.where(width > 0, width, 1.0), 0.0)


def chip_shape(chip) -> str:
    """How ``chip`` (a ChipSpec or a family key) reads its limits (``CHIP_SPREADS``)."""
    return getattr(chip, "spread", DEFAULT_CHIP_SPREAD)


def threshold_limits(chip, supply_v) -> tuple[np.ndarray, ...]:
    """(p_lo, p_typ, p_hi, m_lo, m_typ, m_hi, h_lo, h_hi) in V at ``supply_v``.

    ``chip`` is a :class:`~pulsepick.engine.environment.ChipSpec` or a family key. For
    the 555 the levels are its threshold and trigger ratios times the supply and the
    hysteresis is unconstrained.
    """
    from pulsepick.engine.environment import ChipSpec, chip_model

    spec = chip if isinstance(chip, ChipSpec) else ChipSpec(str(chip))
    v = np.asarray(supply_v, dtype=float)
    model = chip_model(spec)
    if spec.is_timer:
        inf = np.full(v.shape, np.inf)
        return (model.thr_ratio_min * v, model.thr_ratio_typ * v, model.thr_ratio_max * v,
                model.trig_ratio_min * v, model.trig_ratio_typ * v, model.trig_ratio_max * v,
                -inf, inf)
    th = model.thresholds(v)
    return (th.vt_plus_min, th.vt_plus_typ, th.vt_plus_max, th.vt_minus_min,
            th.vt_minus_typ, th.vt_minus_max, th.vh_min, th.vh_max)


def same_chip_levels(chip, supply_v: float, vt_plus_v: float, vt_minus_v: float,
                     supplies) -> tuple[np.ndarray, np.ndarray]:
    """VT+ and VT- (V) at each of ``supplies`` of the one chip whose levels at
    ``supply_v`` are ``vt_plus_v`` and ``vt_minus_v`` (the median chip a search aimed at,
    say).

    The chip keeps its place among bought chips: each level stays the same share of the
    way from the typical value towards the limit on its side (the same percentile of
    the split normal; common practice: a chip's thresholds track the supply as the
    datasheet's typical and limit columns do). At ``supply_v`` the levels are returned
    as given.
    """
    lim0 = [float(np.asarray(x).reshape(-1)[0]) for x in threshold_limits(chip, supply_v)]
    lim = threshold_limits(chip, np.asarray(supplies, dtype=float))

    def place(x: float, lo: float, typ: float, hi: float) -> float:
        share = _side_share(x, lo, typ, hi)
        return 0.0 if share is None else share

    def at(g: float, lo, typ, hi) -> np.ndarray:
        return typ + (g * (typ - lo) if g < 0 else g * (hi - typ))

    return (at(place(vt_plus_v, *lim0[0:3]), *lim[0:3]),
            at(place(vt_minus_v, *lim0[3:6]), *lim[3:6]))


def _side_share(x: float, lo: float, typ: float, hi: float) -> float | None:
    """How far ``x`` sits from the typical value towards the limit on its side, as a
    share of that side (negative below typical); None when that side is empty."""
    side = (typ - lo) if x < typ else (hi - typ)
    return None if side <= 0 else (x - typ) / side


def draw_thresholds(chip, supply_v: float, n: int, rng) -> tuple[np.ndarray, np.ndarray]:
    """VT+ and VT- (V) of ``n`` chips of ``chip`` (ChipSpec or family key) at ``supply_v``.

    ``rng`` is a seeded ``numpy.random.Generator``. For the 555 these are the
    threshold and trigger levels. The limits are read as the chip's ``spread`` shape.
    """
    lim = threshold_limits(chip, np.full(int(n), float(supply_v)))
    a, b = draw_fractions(*lim, rng, shape=chip_shape(chip))
    p_lo, _, p_hi, m_lo, _, m_hi, _, _ = lim
    return p_lo + a * (p_hi - p_lo), m_lo + b * (m_hi - m_lo)


def threshold_percentile(family: str, supply_v: float, vt_plus_v: float,
                         vt_minus_v: float) -> tuple[float, float]:
    """Where a chip's VT+ and VT- sit among bought chips (percent, each on its own).

    50 is the typical value; 0.1 and 99.9 the published limits (common practice
    reading of a datasheet); values beyond the limits go on along the same tails.
    """
    p_lo, p_typ, p_hi, m_lo, m_typ, m_hi, _, _ = (float(np.asarray(x).reshape(-1)[0])
                                                   for x in threshold_limits(family, supply_v))

    def pct(x, lo, typ, hi):
        # the untruncated split normal, so that the limits read 0.1 % and 99.9 %
        share = _side_share(x, lo, typ, hi)
        if share is None:
            return 50.0 if x == typ else (0.0 if x < typ else 100.0)
        return _STD_NORMAL.cdf(share * Z_TAIL) * 100.0

    return pct(vt_plus_v, p_lo, p_typ, p_hi), pct(vt_minus_v, m_lo, m_typ, m_hi)
