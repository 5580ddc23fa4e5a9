"""Explicit Runge-Kutta integration, Dormand-Prince 5(4), for the reference engine and
the night on a storage.

A small integrator with dense output and threshold events, so that simulating a
circuit or a night does not have to import scipy.integrate (about half a second of
start-up, which the solve's critical path paid). Formulas and coefficients:

- the 5(4) pair, ref:dormand-prince-1980, as tabulated with the 4th-order dense output,
  the step-size rule and the starting-step rule in ref:hairer-norsett-wanner-1993
  (sections II.4-II.6 and its DOPRI5 code; the dense-output weights are written from
  memory and checked);
- the stiffness test (h*|lambda| estimated from the last two stages; stiff after 15
  such steps above 3.25, with DOPRI5's bounds), ref:hairer-wanner-1996 section IV.2.
  DOPRI5 tests every 1000th step until a first hit; this module tests every step, as
  its phases take some hundred steps.

``tests/test_dormand_prince.py`` checks the tableau's order conditions, the dense output's
order against exact solutions, and the steps, dense output and events against scipy's
``solve_ivp`` (RK45, the same pair and step-size rule, and LSODA).

The circuits' equations are stiff only where a fast RC sits beside a slow one; the
stiffness test then raises :class:`Stiff`, and the caller integrates with an implicit
method instead (the reference engine uses scipy's LSODA).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

#: Nodes, coupling coefficients and 5th-order weights of the Dormand-Prince pair
#: (ref:dormand-prince-1980); the weights are the last row of ``A`` (the pair is "first
#: same as last").
C = np.array([0.0, 1 / 5, 3 / 10, 4 / 5, 8 / 9, 1.0, 1.0])
A = np.array([
    [0.0, 0.0, 0.0, 0.0, 0.0, 0.0],
    [1 / 5, 0.0, 0.0, 0.0, 0.0, 0.0],
    [3 / 40, 9 / 40, 0.0, 0.0, 0.0, 0.0],
    [44 / 45, -56 / 15, 32 / 9, 0.0, 0.0, 0.0],
    [19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729, 0.0, 0.0],
    [9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656, 0.0],
    [35 / 384, 0.0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84],
])
B = np.append(A[6], 0.0)
#: 5th-order minus 4th-order weights: the local error estimate (same source).
E = np.array([71 / 57600, 0.0, -71 / 16695, 71 / 1920, -17253 / 339200, 22 / 525,
              -1 / 40])
#: Weights of the 4th-order continuous extension (ref:hairer-norsett-wanner-1993, II.6;
#: from memory; the tests check its order and that it matches scipy's RK45 interpolant).
D = np.array([-12715105075 / 11282082432, 0.0, 87487479700 / 32700410799,
              -10690763975 / 1880347072, 701980252875 / 199316789632,
              -1453857185 / 822651844, 69997945 / 29380423])

#: Step-size control (ref:hairer-norsett-wanner-1993, II.4): safety factor, and the
#: smallest and largest change of the step in one go (common practice values).
SAFETY = 0.9
MIN_FACTOR = 0.2
MAX_FACTOR = 10.0
#: Stiffness test (ref:hairer-wanner-1996, IV.2): h*|lambda| above this bound on this
#: many accepted steps (with fewer than ``STIFF_RESET`` calm steps between) is stiff.
STIFF_BOUND = 3.25
STIFF_STEPS = 15
STIFF_RESET = 6
#: More accepted steps than this in one call count as stiff too, so that a run an
#: implicit method does in far fewer steps is handed on early (the reference engine's
#: phases take at most about 160 at rtol 1e-9, measured on 60 random circuits).
MAX_STEPS = 2_000


class Stiff(RuntimeError):
    """The problem is stiff for an explicit method: integrate it with an implicit one."""


def brentq(f, a: float, b: float, xtol: float = 1e-13, rtol: float = 1e-13,
           maxiter: int = 200) -> float:
    """Root of ``f`` in the bracket [a, b] (signs must differ): Illinois false position
    with a bisection step whenever it stalls. Small and local, so the reference engine
    does not need scipy.optimize at start-up."""
    fa, fb = f(a), f(b)
    if fa == 0.0:
        return a
    if fb == 0.0:
        return b
    if (fa > 0) == (fb > 0):
        raise ValueError("root not bracketed")
    side = 0
    for _ in range(maxiter):
        c = b - fb * (b - a) / (fb - fa)
        if not (min(a, b) < c < max(a, b)):
            c = 0.5 * (a + b)
        fc = f(c)
        if fc == 0.0 or abs(b - a) <= xtol + rtol * abs(c):
            return c
        if (fc > 0) == (fb > 0):
            b, fb = c, fc
            if side == -1:
                fa *= 0.5
            side = -1
        else:
            a, fa = c, fc
            if side == 1:
                fb *= 0.5
            side = 1
    return 0.5 * (a + b)


class DenseOutput:
    """The solution between the steps: the 4th-order continuous extension of each."""

    def __init__(self, t_steps: np.ndarray, coeffs: np.ndarray) -> None:
        self.t = t_steps  # the steps' boundaries (len n + 1)
        self.coeffs = coeffs  # per step: y0, y1 - y0, and three more (n, 5, n_y)

    def __call__(self, t: Any) -> np.ndarray:
        """The state at ``t``: shape (n_y,) for a scalar, (n_y, len(t)) for an array."""
        tt = np.asarray(t, dtype=float)
        ts = np.atleast_1d(tt)
        i = np.clip(np.searchsorted(self.t, ts, side="right") - 1, 0, len(self.t) - 2)
        h = self.t[i + 1] - self.t[i]
        th = (np.divide(ts - self.t[i], h, out=np.zeros_like(ts), where=h > 0))[:, None]
        r = self.coeffs[i]
        y = r[:, 0] + th * (r[:, 1] + (1 - th) * (r[:, 2] + th * (r[:, 3] + (1 - th) * r[:, 4])))
        return y[0] if tt.ndim == 0 else y.T


@dataclass(frozen=True)
class Solution:
    """What one call of :func:`integrate` returns (the fields the reference engine reads,
    named as scipy's ``solve_ivp`` names them)."""

    success: bool
    message: str
    t_events: list[np.ndarray]
    y_events: list[np.ndarray]
    sol: DenseOutput
    nfev: int


def _rms(x: np.ndarray) -> float:
    return math.sqrt(float(np.dot(x, x)) / x.size)


def _starting_step(fun: Callable, t: float, y: np.ndarray, f0: np.ndarray, span: float,
                   rtol: float, atol: np.ndarray) -> float:
    """The first step when none is given: the starting-step rule of
    ref:hairer-norsett-wanner-1993 (section II.4, for an error of order 5 in h), as
    scipy's ``solve_ivp`` applies it; never longer than the span. Where the rule gives
    no positive, finite step (a slope too large for a float, equations that raise or
    give no number at its trial point, a zero tolerance) the step is 1e-6 (or the span),
    and the step-size control takes it from there."""
    fallback = min(1e-6, span)
    with np.errstate(all="ignore"):
        scale = atol + np.abs(y) * rtol
        d0, d1 = _rms(y / scale), _rms(f0 / scale)
        h0 = 1e-6 if d0 < 1e-5 or d1 < 1e-5 else 0.01 * d0 / d1
        h0 = min(h0, span)
        if not (h0 > 0 and math.isfinite(h0)):
            return fallback
        try:
            f1 = np.asarray(fun(t + h0, y + h0 * f0), dtype=float)
        except (ValueError, ArithmeticError):
            return fallback
        d2 = _rms((f1 - f0) / scale) / h0
        largest = max(d1, d2)
        if d1 <= 1e-15 and d2 <= 1e-15:
            h1 = max(1e-6, h0 * 1e-3)
        elif largest > 0 and math.isfinite(largest):
            h1 = (0.01 / largest) ** (1.0 / 5.0)
        else:  # no number at the trial point
            return fallback
        h = min(100.0 * h0, h1, span)
    return h if h > 0 and math.isfinite(h) else fallback


def integrate(fun: Callable, t_span: tuple[float, float], y0, *, events=(),
              rtol: float = 1e-6, atol: Any = 1e-9,
              first_step: float | None = None) -> Solution:
    """Integrate ``y' = fun(t, y)`` over ``t_span`` from ``y0``.

    ``events``: a function ``g(t, y)`` or a sequence of them, each with the optional
    attributes ``terminal`` (stop at its first zero) and ``direction`` (+1: rising
    zeros only, -1: falling only, 0: both), as scipy's ``solve_ivp`` takes them.
    ``first_step``: the first trial step; by default the starting-step rule of
    :func:`_starting_step` picks it.
    Raises :class:`Stiff` where the problem is stiff for this method. A trial step
    on which ``fun`` raises ValueError or ArithmeticError, or returns a number that is
    not finite, is taken again shorter: it left the equations' domain.
    """
    t, t_end = float(t_span[0]), float(t_span[1])
    if not t_end > t:
        raise ValueError(f"the span must run forward, got {t_span!r}")
    y = np.array(y0, dtype=float)
    atol = np.broadcast_to(np.asarray(atol, dtype=float), y.shape)
    evs = [events] if callable(events) else list(events)
    dirs = [float(getattr(e, "direction", 0.0)) for e in evs]
    g = [float(e(t, y)) for e in evs]
    t_events: list[list[float]] = [[] for _ in evs]
    y_events: list[list[np.ndarray]] = [[] for _ in evs]
    k = np.empty((7, y.size))
    k[0] = fun(t, y)
    nfev = 1
    if first_step is None:
        h = _starting_step(fun, t, y, k[0], t_end - t, rtol, atol)
        nfev += 1
    else:
        h = float(first_step)
    bounds, coeffs = [t], []
    stiff_count = calm = accepted = 0
    rejected_last = False
    message, success = "reached the end of the span", True
    while t < t_end:
        if accepted > MAX_STEPS:
            raise Stiff(f"more than {MAX_STEPS} steps")
        if h <= 16 * np.spacing(t):
            message, success = "step size too small", False
            break
        last = h >= t_end - t
        h = t_end - t if last else h
        try:
            for s in range(1, 7):
                arg = y + h * (A[s, :s] @ k[:s])
                if s == 5:
                    y_sixth = arg
                k[s] = fun(t + C[s] * h, arg)
                nfev += 1
            y_new = arg  # the last stage is at the new point ("first same as last")
            scale = atol + rtol * np.maximum(np.abs(y), np.abs(y_new))
            err = _rms(h * (E @ k) / scale)
        except (ValueError, ArithmeticError):
            err = math.inf
        if not err <= 1.0:  # too large, or not a number: the step went too far
            h *= max(MIN_FACTOR, SAFETY * err ** -0.2) if math.isfinite(err) else MIN_FACTOR
            rejected_last = True
            continue
        # the stiffness test: the last two stages are both taken at t + h, so their
        # slopes' difference over their arguments' difference estimates |lambda|
        den = _rms(y_new - y_sixth)
        if den > 0.0 and h * _rms(k[6] - k[5]) / den > STIFF_BOUND:
            calm = 0
            stiff_count += 1
            if stiff_count >= STIFF_STEPS:
                raise Stiff(f"stiff at t = {t:.6g}")
        else:
            calm += 1
            if calm >= STIFF_RESET:
                stiff_count = 0
        dy = y_new - y
        bspl = h * k[0] - dy
        coeffs.append(np.stack([y, dy, bspl, dy - h * k[6] - bspl, h * (D @ k)]))
        t_new = t_end if last else t + h
        bounds.append(t_new)
        accepted += 1
        if evs and _events_in_step(evs, dirs, g, t, t_new, y_new,
                                   DenseOutput(np.array(bounds[-2:]), coeffs[-1][None]),
                                   t_events, y_events):
            message = "a terminal event occurred"
            break
        t, y = t_new, y_new
        k[0] = k[6]
        factor = MAX_FACTOR if err == 0.0 else min(MAX_FACTOR, SAFETY * err ** -0.2)
        h *= min(factor, 1.0) if rejected_last else factor
        rejected_last = False
    if not coeffs:  # nothing to integrate: the state stays where it started
        bounds.append(t)
        coeffs.append(np.stack([y, *np.zeros((4, y.size))]))
    return Solution(success, message, [np.array(te) for te in t_events],
                    [np.array(ye).reshape(-1, y.size) for ye in y_events],
                    DenseOutput(np.array(bounds), np.array(coeffs)), nfev)


def _events_in_step(evs: list, dirs: list[float], g: list[float], t: float, t_new: float,
                    y_new: np.ndarray, dense: DenseOutput, t_events: list, y_events: list
                    ) -> bool:
    """Record the events' zeros in the step from ``t`` to ``t_new`` (``g``: their values at
    ``t``, updated to ``t_new``), up to the first terminal one; True when one was met."""
    found = []
    for j, ev in enumerate(evs):
        g_new = float(ev(t_new, y_new))
        up, down = g[j] <= 0.0 <= g_new, g[j] >= 0.0 >= g_new
        if (up and dirs[j] >= 0) or (down and dirs[j] <= 0):
            root = brentq(lambda tt, ev=ev: float(ev(tt, dense(tt))), t, t_new,
                          xtol=4 * np.spacing(t_new), rtol=4 * np.finfo(float).eps)
            found.append((root, j))
        g[j] = g_new
    for root, j in sorted(found):
        t_events[j].append(root)
        y_events[j].append(dense(root))
        if getattr(evs[j], "terminal", False):
            return True
    return False
