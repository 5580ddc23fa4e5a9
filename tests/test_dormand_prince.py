"""The reference engine's own integrator (Dormand-Prince 5(4)) against the order
conditions of Runge-Kutta methods (ref:hairer-norsett-wanner-1993, section II.2), exact
solutions, and scipy's ``solve_ivp`` (scipy.integrate, RK45 and LSODA)."""

from __future__ import annotations

import math
from functools import partial

import numpy as np
import pytest
from engine_cases import FIRST_STAGES, LATER_STAGES, random_design
from scipy.integrate import solve_ivp

from pulsepick.engine import reference
from pulsepick.engine.dormand_prince import A, B, C, D, E, Stiff, integrate


def _event(level: float, direction: float = 0.0, terminal: bool = False):
    def g(_t, y):
        return y[0] - level

    g.direction, g.terminal = direction, terminal
    return g


def test_the_tableau_meets_the_order_conditions():
    # the consistency of the nodes, the 5th-order weights up to order 5 (the quadrature
    # and the low trees) and the embedded 4th-order weights up to order 4
    assert A.sum(axis=1) == pytest.approx(C, abs=1e-15)
    b4 = B - E
    ac = A @ C[:6]
    for w, order in ((B[:7], 5), (b4, 4)):
        for q in range(order):
            assert w @ C ** q == pytest.approx(1 / (q + 1), abs=1e-14), (order, q)
        assert w @ ac == pytest.approx(1 / 6, abs=1e-14)
        assert w @ (C * ac) == pytest.approx(1 / 8, abs=1e-14)
        assert w @ (A @ C[:6] ** 2) == pytest.approx(1 / 12, abs=1e-14)
        assert w @ (A @ ac[:6]) == pytest.approx(1 / 24, abs=1e-14)
    assert B[:7] @ (C ** 2 * ac) == pytest.approx(1 / 10, abs=1e-14)
    assert B[:7] @ (A @ C[:6] ** 3) == pytest.approx(1 / 20, abs=1e-14)


def test_the_dense_output_is_of_fourth_order_within_a_step():
    # one step of y' = -y from 1, evaluated half way: the interpolant's error shrinks as
    # h^5 (its local order), so halving the step divides it by about 32
    def mid_error(h: float) -> float:
        sol = integrate(lambda _t, y: -y, (0.0, h), [1.0], rtol=1e9, atol=1e9,
                        first_step=h)
        assert sol.sol.t.size == 2  # a single step
        return abs(float(sol.sol(h / 2)[0]) - math.exp(-h / 2))

    e1, e2 = mid_error(0.4), mid_error(0.2)
    assert 0 < e2 < e1 and 20 < e1 / e2 < 45
    assert D.sum() == pytest.approx(0.0, abs=1e-12)  # the extension vanishes at both ends


def test_a_terminal_event_stops_at_the_exact_crossing():
    sol = integrate(lambda _t, y: [-y[0]], (0.0, 10.0), [1.0], rtol=1e-9, atol=1e-12,
                    first_step=1e-3, events=_event(0.5, -1.0, terminal=True))
    assert sol.success and sol.t_events[0].size == 1
    assert sol.t_events[0][0] == pytest.approx(math.log(2), rel=1e-9)
    assert sol.y_events[0][0][0] == pytest.approx(0.5, rel=1e-12)
    ts = np.linspace(0.0, math.log(2), 50)
    assert np.max(np.abs(sol.sol(ts)[0] - np.exp(-ts))) < 1e-8


def test_events_keep_their_direction_and_only_terminal_ones_stop():
    # y'' = -y from (1, 0): y = cos t crosses zero falling at pi/2 + 2k*pi and rising at
    # 3*pi/2 + 2k*pi
    def osc(_t, y):
        return [y[1], -y[0]]

    rising, falling = _event(0.0, 1.0), _event(0.0, -1.0)
    sol = integrate(osc, (0.0, 12.0), [1.0, 0.0], rtol=1e-10, atol=1e-12, first_step=1e-3,
                    events=(rising, falling))
    assert sol.success and sol.message == "reached the end of the span"
    assert sol.t_events[0] == pytest.approx([1.5 * math.pi, 3.5 * math.pi], rel=1e-8)
    assert sol.t_events[1] == pytest.approx([0.5 * math.pi, 2.5 * math.pi], rel=1e-8)
    stop = _event(0.0, 1.0, terminal=True)
    sol = integrate(osc, (0.0, 12.0), [1.0, 0.0], rtol=1e-10, atol=1e-12, first_step=1e-3,
                    events=(falling, stop))
    assert sol.message == "a terminal event occurred"
    assert sol.t_events[1] == pytest.approx([1.5 * math.pi], rel=1e-8)
    assert sol.t_events[0] == pytest.approx([0.5 * math.pi], rel=1e-8)


@pytest.mark.parametrize("method", ["RK45", "LSODA"])
def test_it_agrees_with_scipy_on_a_nonlinear_oscillator(method):
    # van der Pol, mu = 1, two periods: the same trajectory to the tolerance asked
    def vdp(_t, y):
        return [y[1], (1 - y[0] ** 2) * y[1] - y[0]]

    ts = np.linspace(0.0, 13.0, 27)
    ours = integrate(vdp, (0.0, 13.0), [2.0, 0.0], rtol=1e-10, atol=1e-12, first_step=1e-4)
    theirs = solve_ivp(vdp, (0.0, 13.0), [2.0, 0.0], method=method, rtol=1e-10, atol=1e-12,
                       dense_output=True)
    assert np.max(np.abs(ours.sol(ts) - theirs.sol(ts))) < 1e-6


def test_its_steps_and_dense_output_are_scipys_rk45():
    # the same pair and step-size rule as scipy's RK45 (scipy.integrate): the same steps,
    # and the same interpolant between them
    def vdp(_t, y):
        return [y[1], (1 - y[0] ** 2) * y[1] - y[0]]

    kw = {"rtol": 1e-6, "atol": 1e-9, "first_step": 1e-3}
    ours = integrate(vdp, (0.0, 7.0), [2.0, 0.0], **kw)
    theirs = solve_ivp(vdp, (0.0, 7.0), [2.0, 0.0], method="RK45", dense_output=True, **kw)
    assert ours.sol.t == pytest.approx(theirs.t, rel=1e-12)
    ts = np.linspace(0.0, 7.0, 141)
    assert np.max(np.abs(ours.sol(ts) - theirs.sol(ts))) < 1e-12


@pytest.mark.parametrize("y0, span", [([2.0, 0.0], 7.0), ([0.0, 0.0], 3.0),
                                      ([1e-3, 2.0], 20.0)])
def test_without_a_first_step_it_starts_as_scipys_rk45(y0, span):
    # no first step given: the starting-step rule (Hairer, Norsett & Wanner 1993, II.4)
    # picks the one scipy's solve_ivp picks (RK45), so every step is the same again
    def vdp(_t, y):
        return [y[1], (1 - y[0] ** 2) * y[1] - y[0] + 0.1]

    kw = {"rtol": 1e-8, "atol": 1e-10}
    ours = integrate(vdp, (0.0, span), y0, **kw)
    theirs = solve_ivp(vdp, (0.0, span), y0, method="RK45", dense_output=True, **kw)
    assert ours.sol.t[1] == pytest.approx(theirs.t[1], rel=1e-14)  # the first step
    assert ours.sol.t.size == theirs.t.size > 10
    assert ours.sol.t == pytest.approx(theirs.t, rel=1e-9)  # rounding over the steps
    assert ours.nfev == theirs.nfev


def test_the_starting_step_is_positive_and_finite_where_the_rule_gives_none():
    # a slope too large for a float, no number or an error at the rule's trial point,
    # a zero tolerance: the first step falls back to 1e-6 s (or the span), never 0 or NaN
    from pulsepick.engine.dormand_prince import _starting_step

    def raises(t, _y):
        if t > 0:
            raise ValueError("outside")
        return np.array([1.0])

    one, atol = np.array([1.0]), np.array([1e-9])
    cases = [(lambda _t, _y: np.array([1e300]), one, np.array([1e300]), 10.0, atol),
             (lambda _t, _y: np.array([np.nan]), one, np.array([0.0]), 10.0, atol),
             (raises, one, np.array([1.0]), 10.0, atol),
             (lambda _t, y: -y, np.array([0.0]), np.array([0.0]), 10.0, np.array([0.0])),
             (lambda _t, _y: np.array([np.nan]), one, np.array([0.0]), 1e-9, atol)]
    for fun, y, f0, span, tol in cases:
        with np.errstate(all="ignore"):
            h = _starting_step(fun, 0.0, y, f0, span, 1e-6, tol)
        assert h == min(1e-6, span)


def test_a_span_must_run_forward():
    for span in ((1.0, 0.0), (1.0, 1.0)):
        with pytest.raises(ValueError, match="forward"):
            integrate(lambda _t, y: -y, span, [1.0], first_step=0.1)


def test_a_stiff_problem_is_handed_on():
    # a state pulled to cos(t) with a time constant of 1 us over 1 s: an explicit method
    # would need a million steps
    with pytest.raises(Stiff):
        integrate(lambda t, y: [-1e6 * (y[0] - math.cos(t))], (0.0, 1.0), [0.0],
                  rtol=1e-6, atol=1e-9, first_step=1e-9)


def _rows_close(a, b, rel: float) -> None:
    ra, rb = a.figures.row(), b.figures.row()
    assert ra["status"] == rb["status"]
    for key, value in rb.items():
        if key != "status" and math.isfinite(value) and abs(value) > 1e-15:
            assert ra[key] == pytest.approx(value, rel=rel), key


def _with_lsoda(d, rtol: float, monkeypatch):
    """``d.reference(rtol=rtol)``, integrated with LSODA (the engine's fall-back for a
    phase that is stiff for its own integrator)."""
    with monkeypatch.context() as m:
        m.setattr(reference, "integrate", reference.load_integrator())
        return d.reference(rtol=rtol)


def test_the_reference_engine_gives_what_lsoda_gives(monkeypatch):
    # the seeded random circuits of the engine agreement tests, simulated with this
    # integrator and with scipy's LSODA (the engine's fall-back): the same figures
    rng = np.random.default_rng(20261203)
    compared = 0
    for _ in range(12):
        d = random_design(rng)
        ours = d.reference(rtol=1e-8)
        if not ours.success:
            continue
        theirs = _with_lsoda(d, 1e-8, monkeypatch)
        _rows_close(ours, theirs, 1e-5)
        compared += 1
    assert compared >= 8


def test_a_stiff_circuit_falls_back_to_lsoda(monkeypatch):
    # a fade stage whose hold capacitor charges through the diode in a few milliseconds
    # while the timing capacitor takes a tenth of a second: stiff for the explicit method
    rng = np.random.default_rng(1)
    designs = [random_design(rng, FIRST_STAGES + LATER_STAGES) for _ in range(19)]
    d = designs[18]
    assert d.topo.stage == "fade"
    handed_on = []

    def recording(*args, **kw):
        try:
            return integrate(*args, **kw)
        except Stiff:
            handed_on.append(args[1])
            raise

    monkeypatch.setattr(reference, "integrate", recording)
    got = d.reference(rtol=1e-6)  # the solver's checking tolerance
    assert handed_on and got.success
    _rows_close(got, _with_lsoda(d, 1e-6, monkeypatch), 1e-4)
    lsoda = reference.load_integrator()
    assert isinstance(lsoda, partial) and lsoda.keywords["method"] == "LSODA"


@pytest.mark.parametrize("outside", ["nan", "raises"])
def test_a_step_into_nonsense_is_taken_again_shorter(outside):
    # sqrt(y) is not a number below zero (a NaN, or an error such as a root finder's
    # "not bracketed"): the steps that overshoot are rejected, and the solution ends on
    # the span's end, finite throughout
    def fall(_t, y):
        if y[0] >= 0:
            return [-math.sqrt(y[0])]
        if outside == "nan":
            return [math.nan]
        raise ValueError("math domain error")

    sol = integrate(fall, (0.0, 1.9), [1.0], rtol=1e-8, atol=1e-12, first_step=0.5)
    assert sol.success and sol.sol.t[-1] == 1.9
    ts = np.linspace(0.0, 1.9, 39)
    assert np.all(np.isfinite(sol.sol(ts)))
    assert sol.sol(1.9)[0] == pytest.approx((1 - 1.9 / 2) ** 2, rel=1e-5)
