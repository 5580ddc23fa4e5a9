"""What an engine returns for a batch of circuits: the status codes, the figures, and
the effective intensity of a flash.

Split out of :mod:`pulsepick.circuits.base`, which re-exports the names. Arrays hold one
element per candidate circuit; SI units throughout.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

#: Effective-intensity time constant a, in seconds, for night-time observation:
#: Schmidt-Clausen form-factor method, C = 0.2 s at night (Gigahertz-Optik pulse
#: measurement tutorial, ref:gigahertz-pulse); also the conventional Blondel-Rey constant (ref:ies-effective-intensity, ref:iala-blondel-rey).
EFFECTIVE_A_S = 0.2

# Status codes carried per candidate by the engines.
RUNS, STALLS, DARK, UNPOWERED = 0, 1, 2, 3
STATUS_WORDS = {RUNS: "runs", STALLS: "stalls", DARK: "dark", UNPOWERED: "out-of-range"}


@dataclass(frozen=True)
class Figures:
    """The figures every engine returns (arrays, one element per circuit)."""

    period_s: Any
    high_s: Any
    low_s: Any
    led_peak_a: Any
    flash_s: Any
    flash_10pct_s: Any
    led_charge_c: Any
    effective_a: Any
    effective_mcd: Any
    supply_avg_a: Any
    status: Any  # int codes, see STATUS_WORDS
    extras: dict[str, Any] = field(default_factory=dict)

    KEYS = ("period_s", "high_s", "low_s", "led_peak_a", "flash_s", "flash_10pct_s",
            "led_charge_c", "effective_a", "effective_mcd", "supply_avg_a")

    def row(self, i: int | None = None) -> dict[str, Any]:
        """The figures of one circuit as plain floats (``i`` None for scalars)."""
        out = {}
        for k in self.KEYS:
            a = np.asarray(getattr(self, k), dtype=float)
            out[k] = float(a if i is None or a.ndim == 0 else a.reshape(-1)[i])
        st = np.asarray(self.status)
        out["status"] = int(st if i is None or st.ndim == 0 else st.reshape(-1)[i])
        return out


def effective_current(peak_a: Any, charge_c: Any, a_s: float = EFFECTIVE_A_S) -> Any:
    """Steady current that looks as bright as a flash (Schmidt-Clausen form).

    ``Ie = Ip*Q / (a*Ip + Q)`` with the flash's charge Q = integral of I dt and peak
    Ip. For a rectangular flash of length t, Q = Ip*t and this is the Blondel-Rey
    law ``Ie = Ip*t/(a + t)`` (IES definition of effective intensity, ref:ies-effective-intensity).
    The form-factor method with a = 0.2 s for night-time observation follows the
    Schmidt-Clausen method (Gigahertz-Optik tutorial, ref:gigahertz-pulse; the closed form
    itself is from memory, ref:iala-blondel-rey).
    """
    peak = np.asarray(peak_a, dtype=float)
    q = np.asarray(charge_c, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        out = np.where((peak > 0) & (q > 0), peak * q / (a_s * peak + q), 0.0)
    return out
