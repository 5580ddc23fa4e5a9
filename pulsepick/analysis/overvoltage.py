"""Can the panel push the storage past its rating? The caution and a sized shunt clamp.

The highest voltage the storage can reach is the panel's full-sun open-circuit voltage minus
the charge diode's drop at a small current (or the clamp's voltage, when there is one). Above
the storage's rating the advice is a shunt clamp (a zener or a TL431-style shunt) some 8 %
under the rating, rounded down to 0.1 V (common practice, like the usual 2.4 V zener across
a 2.7 V cell), sized for the panel's full-sun short-circuit current.

Used by ``solve``, ``night`` and the buy list wherever a design names a panel and a storage,
and by ``day`` (:func:`pulsepick.analysis.day.simulate_days`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from pulsepick.analysis.cautions import over_voltage_caution
from pulsepick.analysis.chargepath import FULL_SUN_W_M2, diode_drop_v
from pulsepick.parts.diode import DiodeModel
from pulsepick.parts.panel import PanelModel
from pulsepick.parts.storage import Storage

# A proposed clamp sits some 8 % under the rating, like the common 2.4 V zener across a 2.7 V
# cell (common practice); rounded down to 0.1 V.
CLAMP_DERATING = 0.92


@dataclass(frozen=True)
class ClampAdvice:
    """The storage's highest voltage from the panel, and a clamp when it is too high."""

    v_possible_v: float  # V, Voc at full sun minus the diode drop (or the given clamp)
    v_rated_v: float  # V, the storage's rating
    clamp_v: float | None  # V, the clamp given (None: none)
    proposed_clamp_v: float | None  # V, a clamp to fit (None: not needed)
    proposed_clamp_w: float | None  # W, its dissipation at the panel's full-sun Isc
    isc_a: float  # A, the panel's full-sun short-circuit current
    cautions: tuple[str, ...]  # the over-voltage caution and the proposal, as sentences
    v_unclamped_v: float = math.nan  # V, Voc at full sun minus the diode drop (no clamp)
    what: str = ""  # what v_possible_v is, as the subject of a caution sentence
    proposal: str | None = None  # the sentence proposing the clamp (None: none proposed)

    @property
    def over(self) -> bool:
        """The panel can push the storage past its rating."""
        return self.v_possible_v > self.v_rated_v

    @property
    def clamp_needed(self) -> bool:
        """Without any clamp the panel could push the storage past its rating."""
        return self.v_unclamped_v > self.v_rated_v


def clamp_advice(storage: Storage, panel: PanelModel, diode: DiodeModel,
                 clamp_v: float | None = None, start_v: float | None = None) -> ClampAdvice:
    """The over-voltage caution and a sized clamp for a panel charging a storage.

    ``start_v`` (V): the voltage the night is run from, when given; a proposed clamp
    below it says that the storage then starts the night at the clamp.
    """
    voc = float(panel.voc(FULL_SUN_W_M2))
    isc = float(panel.isc(FULL_SUN_W_M2))
    v_possible = clamp_v if clamp_v is not None else voc - diode_drop_v(diode)
    what = ("The storage voltage the clamp allows" if clamp_v is not None
            else "The panel's open-circuit voltage minus the diode drop")
    cautions = []
    over = over_voltage_caution(storage, v_possible, what)
    if over:
        cautions.append(over)
    proposed = proposed_w = proposal = None
    if clamp_v is None and v_possible > storage.v_rated_v:
        proposed = math.floor(CLAMP_DERATING * storage.v_rated_v * 10.0 + 1e-9) / 10.0
        proposed_w = proposed * isc
        proposal = (
            f"Proposed: a shunt clamp (zener or TL431-style shunt) across the storage at "
            f"{proposed:.1f} V; at the panel's full-sun short-circuit current {isc * 1e3:.0f} mA "
            f"it dissipates up to {proposed_w * 1e3:.0f} mW. Or choose a storage rated at "
            f"{v_possible:.1f} V or more.")
        if start_v is not None and start_v > proposed + 1e-9:
            proposal += (f" With the clamp the storage sits at about {proposed:.1f} V by "
                         f"day, under the {start_v:.2f} V the night is run from; with the "
                         "clamp in the design (and no higher start) the night starts at it.")
        cautions.append(proposal)
    return ClampAdvice(v_possible, storage.v_rated_v, clamp_v, proposed, proposed_w, isc,
                       tuple(cautions), voc - diode_drop_v(diode), what=what, proposal=proposal)
