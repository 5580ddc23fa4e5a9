"""Closed forms for a capacitor discharging through a junction and resistance.

A capacitor C feeding a diode or LED (Shockley law with ideality n, saturation
current I_s) in series with a total resistance R_t: the current falls as the
capacitor voltage changes. With V_tot(I) = n·V_T·ln(1 + I/I_s) + I·R_t and
C·dV = I·dt, the time to fall from I_1 to I_2 is exact in closed form:

    t = C·[R_t·ln(I_1/I_2) + (n·V_T/I_s)·(ln(1 + I_s/I_2) − ln(1 + I_s/I_1))]

(integrating dt = C·V_tot'(I)·dI / I; handbook calculus on the Shockley diode law,
ref:ideality-factor-glossary). This serves the pulse stage (flash and reset) and the fade stage
(fade of the hold capacitor), so those need no time stepping.
"""

from __future__ import annotations

import math

import numpy as np

from pulsepick.physconst import K_OVER_Q_V_PER_K

#: Boltzmann constant over elementary charge, V/K (exact SI values, see physconst).
K_OVER_Q = K_OVER_Q_V_PER_K


def n_vt(junction) -> float:
    """n·kT/q of a junction model (volts)."""
    return junction.n * K_OVER_Q * junction.temperature_k


def decay_time(junction, r_t, cap, i1, i2):
    """Seconds for the current to fall from ``i1`` to ``i2`` (amperes).

    ``r_t`` is all series resistance (ohm) including the junction's own; ``cap`` in F.
    """
    nvt = n_vt(junction)
    i_s = junction.i_s
    i1 = np.asarray(i1, dtype=float)
    i2 = np.asarray(i2, dtype=float)
    return cap * (r_t * np.log(i1 / i2) + (nvt / i_s) * (np.log1p(i_s / i2) - np.log1p(i_s / i1)))


_LN_TINY = math.log(1e-300)  # ln of the smallest current (A) the iteration keeps


def decay_end_current(junction, r_t, cap, i1, t, iterations: int = 30):
    """The current after falling for ``t`` seconds from ``i1`` (inverse of ``decay_time``).

    Newton iteration on x = ln(I_2), vectorised. The decay time is a decreasing,
    convex function of x, so Newton started below the root converges monotonically;
    the start is the larger of two lower bounds, each from one term of the closed
    form taken alone (resistive: I_1·exp(−t/(C·R_t)); junction: 1/(t/(C·n·V_T) + 1/I_1)).
    """
    nvt = n_vt(junction)
    i_s = junction.i_s
    t = np.asarray(t, dtype=float)
    i1 = np.asarray(i1, dtype=float)
    with np.errstate(divide="ignore", over="ignore", invalid="ignore", under="ignore"):
        lb_r = i1 * np.exp(-t / np.maximum(cap * r_t, 1e-300))
        lb_j = 1.0 / (t / (cap * nvt) + 1.0 / i1)
    x = np.log(np.maximum(np.maximum(lb_r, lb_j), 1e-300))
    for _ in range(iterations):
        i2 = np.exp(x)
        f = decay_time(junction, r_t, cap, i1, i2) - t
        df = -cap * (r_t + nvt / (i_s + i2))
        step = f / df
        # a current that has all but vanished stays a tiny positive number (1e-300 A),
        # never an exact zero that the closed form would divide by
        x = np.maximum(x - step, _LN_TINY)
        if np.all(np.abs(step) < 1e-9):
            break
    return np.minimum(np.exp(x), i1)
