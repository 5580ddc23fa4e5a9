"""The Shockley junction with a series resistance, solved exactly and vectorised.

A forward-biased diode or LED is modelled as

    I = IS * (exp((V - I*R) / (n*VT)) - 1),      VT = k*T/q,

with saturation current IS, ideality factor n and a series resistance R (the
part's own ``r_s`` plus any external resistance). The voltage for a given
current is explicit; the current for a given voltage is solved exactly with the
Lambert W function. For large arguments the Lambert W argument overflows a
float, so the equation is solved in its logarithmic form w + ln(w) = y by Newton
steps instead; both branches are vectorised over numpy arrays and never warn.

No reverse breakdown is modelled: at negative voltage the current tends to
``-i_s``.

References
----------
.. [1] photonica.io glossary "Ideality factor" (diode law and slopes; ref:ideality-factor-glossary).
.. [2] R. M. Corless et al., "On the Lambert W function", Adv. Comput. Math. 5 (1996)
   (the closed form of the diode-plus-resistor equation; textbook result).
.. [3] SI 2019 exact values of k and e (pulsepick.physconst; checked against
       scipy.constants).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pulsepick.errors import PartError
from pulsepick.physconst import K_OVER_Q_V_PER_K

# Largest exponent used in exp(); exp(700) ~ 1e304 stays finite in float64.
_MAX_EXPONENT = 700.0
# Above this log-argument the Lambert W is solved in log form by Newton steps.
_LOG_FORM_ABOVE = 20.0
# Newton steps of each branch: both reach the float64 floor (relative error 4e-16 from
# the asymptotic start above 20 after two steps, 2e-15 from ln(1 + e^y) after four;
# measured over y = -30..1e6 against scipy.special.lambertw, tests/test_junction.py),
# and a spare step each
_NEWTON_STEPS_LOG = 3
_NEWTON_STEPS_MID = 5
_EXP_FORM_BELOW = -30.0  # below this W(e^y) equals e^y to double precision


def thermal_voltage(temperature_k: float = 300.0) -> float:
    """Thermal voltage k*T/q in volts.

    Parameters
    ----------
    temperature_k : junction temperature, K (> 0).

    References
    ----------
    the exact SI values of ``k`` and ``e`` (equal to scipy.constants, CODATA 2018).

    Examples
    --------
    >>> round(thermal_voltage(300.0) * 1e3, 2)
    25.85
    """
    if not temperature_k > 0:
        raise PartError(f"junction temperature must be above 0 K, got {temperature_k} K")
    return K_OVER_Q_V_PER_K * temperature_k


# k*T/q at 300 K from the exact SI constants (= scipy.constants, CODATA 2018):
# 25.85 mV (derived from ref:codata-2018).
THERMAL_VOLTAGE_300K = thermal_voltage(300.0)


def _solve_log_lambert(y: np.ndarray) -> np.ndarray:
    """Solve w + ln(w) = y for y > 1 (i.e. w = W(exp(y))) by Newton steps."""
    ln_y = np.log(y)
    w = y - ln_y + ln_y / y  # asymptotic start, relative error O((ln y / y)^2)
    for _ in range(_NEWTON_STEPS_LOG):
        w = w * (1.0 + y - np.log(w)) / (1.0 + w)
    return w


def lambert_w_of_exp(y) -> np.ndarray:
    """W(exp(y)), the principal branch of the Lambert W function at exp(y), for any real y.

    Real arithmetic only, without overflow: for y > 20 the asymptotic start of
    ``_solve_log_lambert``; otherwise Newton on w + ln(w) = y from w = ln(1 + e^y), which
    is within a factor of two of the root for every y and converges monotonically
    (relative error below 1e-14 after four steps; checked against scipy.special.lambertw
    in the tests). For y < -30, W(e^y) = e^y to better than 1e-13.
    """
    y = np.asarray(y, dtype=float)
    big = y > _LOG_FORM_ABOVE
    tiny = y < _EXP_FORM_BELOW
    n_big, n_tiny = np.count_nonzero(big), np.count_nonzero(tiny)
    # one branch for every element (the usual case): no masked copies
    if n_big == y.size:
        return _solve_log_lambert(y)
    if n_big == 0 and n_tiny == 0:
        return _mid_lambert(y)
    out = np.empty_like(y)
    if n_big:
        out[big] = _solve_log_lambert(y[big])
    if n_tiny:
        out[tiny] = np.exp(y[tiny])
    mid = ~(big | tiny)
    if np.any(mid):
        out[mid] = _mid_lambert(y[mid])
    return out


def _mid_lambert(y: np.ndarray) -> np.ndarray:
    """W(exp(y)) for -30 <= y <= 20: Newton on w + ln(w) = y from w = ln(1 + e^y)."""
    w = np.log1p(np.exp(y))
    for _ in range(_NEWTON_STEPS_MID):
        w = w * (1.0 + y - np.log(w)) / (1.0 + w)
    return w


_lambert_w_of_exp = lambert_w_of_exp


@dataclass(frozen=True)
class Junction:
    """A junction (diode, LED) with series resistance.

    Parameters
    ----------
    i_s : saturation current, A (> 0).
    n : ideality factor, 0.5 to 10.
    r_s : series resistance, ohm (>= 0).
    temperature_k : junction temperature, K.
    """

    i_s: float  # A, saturation current
    n: float  # ideality factor
    r_s: float  # ohm, series resistance
    temperature_k: float = 300.0  # K

    def __post_init__(self) -> None:
        problems = []
        if not (math.isfinite(self.i_s) and self.i_s > 0):
            problems.append(f"saturation current {self.i_s} A (needs a finite value > 0)")
        if not 0.5 <= self.n <= 10.0:
            problems.append(f"ideality factor {self.n} (accepted 0.5 to 10)")
        if not (math.isfinite(self.r_s) and self.r_s >= 0):
            problems.append(f"series resistance {self.r_s} ohm (needs >= 0)")
        if not (math.isfinite(self.temperature_k) and self.temperature_k > 0):
            problems.append(f"temperature {self.temperature_k} K (needs > 0)")
        if problems:
            raise PartError("impossible junction: " + "; ".join(problems))

    @property
    def n_vt(self) -> float:
        """n*k*T/q in volts: the slope of V against ln(I) of the bare junction."""
        return self.n * thermal_voltage(self.temperature_k)

    def voltage(self, i):
        """Voltage across junction and ``r_s`` at forward current ``i``.

        Parameters
        ----------
        i : current, A (scalar or array); meant for ``i >= 0``. Currents at or
            below ``-i_s`` (impossible without breakdown) are clipped just above it.

        Returns
        -------
        V = n*VT*ln(1 + i/i_s) + i*r_s, volts (float for scalar input).
        """
        i_arr = np.asarray(i, dtype=float)
        i_c = np.maximum(i_arr, -self.i_s * (1.0 - 1e-15))
        v = self.n_vt * np.log1p(i_c / self.i_s) + i_c * self.r_s
        return float(v) if np.ndim(v) == 0 else v

    def current(self, v, r_ext=0.0):
        """Exact current when ``v`` is applied across junction + ``r_s`` + ``r_ext``.

        Solves I = i_s*(exp((v - I*R)/(n*VT)) - 1) with R = r_s + r_ext:

            I = (n*VT/R) * W((i_s*R/(n*VT)) * exp((v + i_s*R)/(n*VT))) - i_s,

        using the log form of W for large arguments; with R == 0 it is the plain
        exponential (its exponent clipped at 700 so the result stays finite).
        One Newton step on the voltage equation polishes the result.

        Parameters
        ----------
        v : applied voltage, V (scalar or array).
        r_ext : extra series resistance, ohm (scalar or array, >= 0).

        Returns
        -------
        Current in A, broadcast over ``v`` and ``r_ext`` (float for scalar input).
        """
        v_arr = np.asarray(v, dtype=float)
        r_tot = self.r_s + np.asarray(r_ext, dtype=float)
        if np.any(r_tot < 0):
            raise PartError("series resistance r_s + r_ext must be >= 0 ohm")
        v_b, r_b = np.broadcast_arrays(v_arr, r_tot)
        a = self.n_vt
        i_s = self.i_s
        has_r = r_b > 0
        n_r = np.count_nonzero(has_r)
        if n_r == has_r.size:  # every element has a resistance (the usual case)
            out = self._current_r(v_b, r_b)
            return float(out) if out.ndim == 0 else out
        out = np.empty(v_b.shape, dtype=float)
        if n_r:
            out[has_r] = self._current_r(v_b[has_r], r_b[has_r])
        no_r = ~has_r
        if np.any(no_r):
            out[no_r] = i_s * np.expm1(np.minimum(v_b[no_r] / a, _MAX_EXPONENT))
        return float(out) if out.ndim == 0 else out

    def _current_r(self, vr, rr):
        """:meth:`current` where the total series resistance ``rr`` is above zero."""
        a, i_s = self.n_vt, self.i_s
        y = math.log(i_s) + np.log(rr) - math.log(a) + (vr + i_s * rr) / a
        w = _lambert_w_of_exp(y)
        i = w * a / rr - i_s
        # one Newton step on f(i) = a*log1p(i/i_s) + i*R - v (f' > 0)
        i = np.maximum(i, -i_s * (1.0 - 1e-15))
        f = a * np.log1p(i / i_s) + i * rr - vr
        i = i - f / (a / (i_s + i) + rr)
        return np.maximum(i, -i_s)

    def conductance(self, v, r_ext=0.0):
        """Small-signal conductance dI/dV of junction + ``r_s`` + ``r_ext``, siemens.

        From V = n*VT*ln(1 + I/i_s) + I*R: dV/dI = n*VT/(I + i_s) + R, so
        dI/dV = (I + i_s) / (n*VT + R*(I + i_s)).

        Parameters
        ----------
        v : applied voltage, V (scalar or array).
        r_ext : extra series resistance, ohm (scalar or array).
        """
        i = np.asarray(self.current(v, r_ext), dtype=float)
        r_tot = self.r_s + np.asarray(r_ext, dtype=float)
        x = i + self.i_s
        g = x / (self.n_vt + r_tot * x)
        return float(g) if np.ndim(g) == 0 else g

    @classmethod
    def from_point(
        cls, v_f: float, i_f: float, n: float, r_s: float, temperature_k: float = 300.0
    ) -> Junction:
        """Junction through one measured point (v_f at i_f) with given n and r_s.

        Parameters
        ----------
        v_f : forward voltage, V, measured at
        i_f : forward current, A (> 0).
        n : ideality factor.
        r_s : series resistance, ohm.
        temperature_k : K.
        """
        if not (i_f > 0 and v_f > 0):
            raise PartError(f"forward point needs V > 0 and I > 0, got {v_f} V at {i_f} A")
        v_j = v_f - i_f * r_s
        if v_j <= 0:
            raise PartError(
                f"series resistance {r_s} ohm drops more than {v_f} V at {i_f} A; "
                "accepted: r_s < v_f / i_f"
            )
        a = n * thermal_voltage(temperature_k)
        exponent = v_j / a
        if exponent > _MAX_EXPONENT:
            raise PartError(
                f"{v_f} V at {i_f} A needs an ideality factor above {n} "
                "(the saturation current would underflow)"
            )
        i_s = i_f / math.expm1(exponent)
        return cls(i_s=i_s, n=n, r_s=r_s, temperature_k=temperature_k)

    @classmethod
    def from_two_points(
        cls,
        point1: tuple[float, float],
        point2: tuple[float, float],
        r_s: float = 0.0,
        temperature_k: float = 300.0,
    ) -> Junction:
        """Junction whose n and i_s pass exactly through two (V, I) points.

        Parameters
        ----------
        point1, point2 : (forward voltage V, forward current A) pairs with
            different currents; the higher current must have the higher voltage.
        r_s : series resistance assumed, ohm.
        temperature_k : K.
        """
        (v1, i1), (v2, i2) = sorted([point1, point2], key=lambda p: p[1])
        if not (i1 > 0 and i2 > i1):
            raise PartError("two forward points need distinct currents above 0 A")
        vj1, vj2 = v1 - i1 * r_s, v2 - i2 * r_s
        if not (vj1 > 0 and vj2 > vj1):
            raise PartError(
                f"forward points ({v1} V, {i1} A) and ({v2} V, {i2} A) with r_s = {r_s} ohm "
                "do not rise with current; accepted: V2 - I2*r_s > V1 - I1*r_s > 0"
            )
        vt = thermal_voltage(temperature_k)
        n = (vj2 - vj1) / (vt * math.log(i2 / i1))
        for _ in range(20):  # refine with the exact (I + i_s) terms
            i_s = i1 / math.expm1(vj1 / (n * vt))
            n = (vj2 - vj1) / (vt * math.log((i2 + i_s) / (i1 + i_s)))
        return cls.from_point(v1, i1, n=n, r_s=r_s, temperature_k=temperature_k)
