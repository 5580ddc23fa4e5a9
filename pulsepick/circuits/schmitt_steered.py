"""Core ``schmitt-steered``: the Schmitt core with a diode-steered second resistor.

R1 runs from output to input as in ``schmitt``; R2 in series with a diode runs in
parallel with it, so one phase is speeded up: with ``steer="high"`` the diode
conducts while the output is high (short high, long low: a short flash on the
output), with ``steer="low"`` while it is low (short low, long high).

The fast engine integrates dt = C·dV / I(V) over the steered phase on a fixed set
of Gauss-Legendre nodes in y = −ln|V_th − V| (which keeps the integrand smooth up
to the threshold); the diode branch current is exact (Shockley law with series
resistance, from ``pulsepick.parts.junction``). The other phase is the linear
closed form of the plain core.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from pulsepick.circuits.base import (
    RUNS,
    STALLS,
    TIMING_CAP,
    CoreDefaults,
    CoreSearch,
    Drive,
    Env,
    ExtraPart,
    Param,
    PhaseTimes,
    Topology,
    register_core,
)
from pulsepick.circuits.rc import impulse_shift
from pulsepick.circuits.schmitt import crossing_charge, linear_phase, timing_supply_charge

_GL_X, _GL_W = np.polynomial.legendre.leggauss(16)


def _branch_current(env: Env, r_total, across):
    """Diode + resistor branch current for a voltage ``across`` it (forward only)."""
    across = np.asarray(across, dtype=float)
    i = env.steer_diode.junction.current(np.maximum(across, 0.0), r_ext=r_total)
    return np.where(across > 0, i, 0.0)


#: Up to this many circuits the quadrature evaluates all its nodes in one array call
#: (rows x nodes), which saves the per-call overhead of small batches; above it node
#: by node, which is faster for large batches (measured) and keeps temporaries small.
_NODES_AT_ONCE_UP_TO = 500


def _col(x):
    """``x`` with a trailing axis, to broadcast against the quadrature nodes."""
    return np.asarray(x, dtype=float)[..., None]


def _steered_sums_at_once(c, g1, r_branch, drive: Drive, env: Env, sgn, half, mid, cross):
    """The steered phase's time and crossing charge, every quadrature node in one call.

    The same arithmetic as the node-by-node loop of :func:`steered_phase`, element by
    element, and the nodes summed in the same order.
    """
    y = _col(mid) + _col(half) * _GL_X
    vc = _col(drive.v_th) - sgn * np.exp(-y)
    lin = _col(g1) * (_col(drive.v_th) - vc) - _col(env.cap_leak_g) * vc - _col(env.pin_leak_a)
    i = lin + sgn * _branch_current(env, _col(r_branch), sgn * (_col(drive.v_th) - vc))
    with np.errstate(divide="ignore", invalid="ignore"):
        dt_dy = _col(c) * sgn * np.exp(-y) / i
    q_node = None if cross is None else cross(vc, _col(env.vdd))
    t, q_cross = 0.0, 0.0
    for k, w in enumerate(_GL_W):
        term = w * half * dt_dy[..., k]
        t = t + term
        if q_node is not None:
            q_cross = q_cross + term * q_node[..., k]
    return t, q_cross


def steered_phase(c, r1, r2, drive: Drive, env: Env, v_from, v_to, rising: bool,
                  with_cross: bool):
    """The phase with the diode branch conducting: ``(t, ok, q_cross, i_start)``.

    ``i_start`` is the current drawn from the output node as the phase starts.
    """
    sgn = 1.0 if rising else -1.0
    g1 = 1.0 / (r1 + drive.r_th)
    r_branch = r2 + drive.r_th

    def current(vc):
        # charging current into C (positive while rising)
        lin = g1 * (drive.v_th - vc) - env.cap_leak_g * vc - env.pin_leak_a
        return lin + sgn * _branch_current(env, r_branch, sgn * (drive.v_th - vc))

    # impulse shift with the secant conductance at the phase start
    i0 = current(v_from)
    with np.errstate(divide="ignore", invalid="ignore"):
        g_eff = np.abs((i0 + env.cap_leak_g * v_from + env.pin_leak_a)
                       / (drive.v_th - v_from))
        tau_eff = c / np.maximum(g_eff, 1e-30)
    v_start = v_from + impulse_shift(drive.r_out, drive.q_imp, drive.s_imp, drive.t_imp,
                                     g_eff, c, tau_eff)
    reached = (v_start >= v_to) if rising else (v_start <= v_to)
    ok = sgn * current(v_to) > 0
    with np.errstate(divide="ignore", invalid="ignore"):
        y0 = -np.log(np.abs(drive.v_th - v_start))
        y1 = -np.log(np.abs(drive.v_th - v_to))
    half, mid = 0.5 * (y1 - y0), 0.5 * (y1 + y0)
    cross = env.cross_current if (with_cross and env.cross_override_a is None) else None
    if np.size(half) <= _NODES_AT_ONCE_UP_TO:
        t, q_cross = _steered_sums_at_once(c, g1, r_branch, drive, env, sgn, half, mid, cross)
    else:
        t, q_cross = 0.0, 0.0
        for x, w in zip(_GL_X, _GL_W, strict=True):
            y = mid + half * x
            vc = drive.v_th - sgn * np.exp(-y)
            with np.errstate(divide="ignore", invalid="ignore"):
                dt_dy = c * sgn * np.exp(-y) / current(vc)
            t = t + w * half * dt_dy
            if cross is not None:
                q_cross = q_cross + w * half * dt_dy * cross(vc, env.vdd)
    t = np.where(reached, 0.0, np.where(ok, t, np.inf))
    i_start = g1 * (drive.v_th - v_from) + sgn * _branch_current(
        env, r_branch, sgn * (drive.v_th - v_from))
    return t, ok | reached, q_cross, i_start


@dataclass(frozen=True)
class SteeredSchmittCore(CoreDefaults):
    name: str = "schmitt-steered"
    chip_kind: str = "schmitt"
    params: tuple[Param, ...] = (
        Param("r1", "R", "timing resistor (slow phase)", option="--r",
              help="timing resistor R1 (schmitt cores), e.g. 2M2",
              example="2M2"),
        Param("r2", "R", "steering resistor (fast phase)", option="--r2",
              help="steering resistor R2 (schmitt-steered), e.g. 47k",
              example="47k"),
        TIMING_CAP,
    )
    default_family: str = "hc"
    steers: tuple[str, ...] = ("high", "low")
    ldr_param: str = "r1"
    #: its slow phase is R1·C1 alone, as a plain Schmitt core's
    search: ClassVar[CoreSearch] = CoreSearch(0, "steered", slow_phase_core="schmitt")
    #: held, where the stage is dark at either level, at the level where its steering
    #: diode is off (at the other, the fast-phase resistor would carry current all day)
    hold_off_steer: bool = True

    def label(self, topo):
        return f"{self.name} (fast {topo.steer})"

    def extra_parts(self, topo):
        towards = "capacitor" if topo.steer == "high" else "output"
        return (ExtraPart("diode", "steering diode (fast phase)",
                          f"cathode towards the {towards}", choice="steer_diode"),)

    def end_currents(self, v, env, topo):
        """(charging at VT+, discharging at VT-), A: R1, and the diode branch in its phase."""
        vdd, vtp, vtm = env.vdd, env.vt_plus, env.vt_minus
        up, down = (vdd - vtp) / v["r1"], vtm / v["r1"]
        branch = env.steer_diode.junction
        if topo.steer == "high":
            up = up + branch.current(vdd - vtp, r_ext=v["r2"])
        else:
            down = down + branch.current(vtm, r_ext=v["r2"])
        return up, down

    def held_resistance(self, v, topo, output):
        """Resistance (ohm) from the output to a timing node held at the other rail: R1,
        and R2 in parallel where the steering diode conducts at that output level."""
        r1 = float(v["r1"])
        if topo.steer == output:
            r2 = float(v["r2"])
            return r1 * r2 / (r1 + r2)
        return r1

    def timing_resistances(self, v):
        return {"R1": v["r1"], "R2": v["r2"]}

    def phase_times(self, v, env: Env, topo: Topology, high: Drive, low: Drive,
                    with_cross: bool = True) -> PhaseTimes:
        r1, r2, c = v["r1"], v["r2"], v["c1"]
        if topo.steer == "high":
            th, ok_h, qx_h, i0_h = steered_phase(c, r1, r2, high, env, env.vt_minus,
                                                 env.vt_plus, True, with_cross)
            tl, ok_l, vi, tau, vs = linear_phase(c, r1, low, env, env.vt_plus, env.vt_minus,
                                                 False)
            i0_l = (low.v_th - env.vt_plus) / (r1 + low.r_th)
            qx_l = crossing_charge(env, vs, vi, tau, tl) if with_cross else 0.0
        else:
            th, ok_h, vi, tau, vs = linear_phase(c, r1, high, env, env.vt_minus, env.vt_plus,
                                                 True)
            qx_h = crossing_charge(env, vs, vi, tau, th) if with_cross else 0.0
            i0_h = (high.v_th - env.vt_minus) / (r1 + high.r_th)
            tl, ok_l, qx_l, i0_l = steered_phase(c, r1, r2, low, env, env.vt_plus, env.vt_minus,
                                                 False, with_cross)
        status = np.where(ok_h & ok_l, RUNS, STALLS)
        return PhaseTimes(th, tl, status, timing_supply_charge(c, env, th), qx_h + qx_l,
                          i0_h, i0_l)

    def ref_currents(self, v, env, topo, vo, vc, high):
        """Reference engine: (current into C1, current out of the output node, supply)."""
        i_r = (vo - vc) / v["r1"]
        i_b = 0.0
        if topo.steer == "high" and vo > vc:
            i_b = env.steer_diode_scalar.current(vo - vc, v["r2"])
        elif topo.steer == "low" and vc > vo:
            i_b = -env.steer_diode_scalar.current(vc - vo, v["r2"])
        i_out = i_r + i_b
        return i_out - env.cap_leak_g * vc - env.pin_leak_a, i_out, 0.0

    def spice(self, v, env, topo):
        """Circuit-simulator lines of the timing network (nodes: see ``base.SPICE_NODES``)."""
        diode = "D2 out br DSTEER" if topo.steer == "high" else "D2 br out DSTEER"
        return (f"R1 out tim {v['r1']:.9g}", diode, f"R2 br tim {v['r2']:.9g}")


register_core(SteeredSchmittCore())
