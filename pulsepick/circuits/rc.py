"""Small shared pieces of RC timing: exponential phases, impulse shifts, averages.

A capacitor charged through a conductance g from a level v_th, with a shunt
leakage conductance G and a constant pin current I drawn out of it, relaxes
exponentially towards ``v_inf = (g·v_th − I)/(g + G)`` with ``tau = C/(g + G)``
(first-order linear ODE, handbook circuit theory).
"""

from __future__ import annotations

import numpy as np

#: Gauss-Legendre nodes and weights on [0, 1] for time averages over a phase
#: (numpy.polynomial.legendre.leggauss).
_GL_X, _GL_W = np.polynomial.legendre.leggauss(12)
GL_NODES = 0.5 * (_GL_X + 1.0)
GL_WEIGHTS = 0.5 * _GL_W


def relax(c, g, v_th, leak_g, pin_a):
    """Return ``(v_inf, tau)`` of a linear RC phase (volts, seconds)."""
    total = g + leak_g
    return (g * v_th - pin_a) / total, c / total


def phase_time(v_start, v_end, v_inf, tau, rising: bool):
    """Time for an exponential relaxation to move from ``v_start`` to ``v_end``.

    Returns ``(t, ok)``: ``ok`` is False where ``v_end`` is never reached because
    the asymptote lies short of it (the oscillator stalls). A start already past
    the end (pushed there by an impulse) takes no time.
    """
    if rising:
        reached = v_start >= v_end
        ok = v_inf > v_end
    else:
        reached = v_start <= v_end
        ok = v_inf < v_end
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(ok & ~reached, (v_inf - v_start) / (v_inf - v_end), 1.0)
        t = np.where(reached, 0.0, np.where(ok, tau * np.log(ratio), np.inf))
    return t, ok | reached


def impulse_shift(r_out, q_imp, tau_f, t_span, g, c, tau):
    """Shift of the timing-capacitor start voltage caused by an impulse of load.

    A current i(s) drawn from the driving node through its output resistance
    ``r_out`` lowers the node by r_out·i(s) while it flows and so withholds
    g·r_out·i(s) from the timing capacitor. Referred to the phase start through the
    linear ODE's kernel exp(s/tau), the shift is −(g·r_out/C)·∫ i(s)·exp(s/tau) ds.
    The impulse is taken as an exponential of time constant ``tau_f`` carrying the
    charge ``q_imp`` within the phase length ``t_span``.
    """
    tau_f = np.maximum(np.asarray(tau_f, dtype=float), 1e-300)
    t_span = np.asarray(t_span, dtype=float)
    t_f = np.where(np.isfinite(t_span), t_span, 50.0 * tau_f)
    a = 1.0 / tau - 1.0 / tau_f
    x = np.clip(a * t_f, -700.0, 50.0)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        num = np.where(np.abs(x) < 1e-8, t_f, t_f * np.expm1(x) / x)
        den = tau_f * -np.expm1(-np.minimum(t_f / tau_f, 700.0))
        weight = np.where(den > 0, num / den, 1.0)
    return -r_out * q_imp * g * weight / c


def exp_trajectory_mean(v_start, v_inf, tau, t, fn):
    """Time integral of ``fn(v(t))`` over an exponential phase of length ``t``.

    ``v(t) = v_inf + (v_start − v_inf)·exp(−t/tau)``; 12-point Gauss-Legendre.
    """
    v_start, v_inf, tau, t = np.broadcast_arrays(*(np.asarray(a, dtype=float)
                                                   for a in (v_start, v_inf, tau, t)))
    tt = np.where(np.isfinite(t), t, 0.0)
    total = np.zeros(v_start.shape)
    for x, w in zip(GL_NODES, GL_WEIGHTS, strict=True):
        with np.errstate(over="ignore", invalid="ignore"):
            v = v_inf + (v_start - v_inf) * np.exp(-(x * tt) / tau)
        total = total + w * fn(v)
    return total * tt
