"""Cautions printed where they apply: storage over-voltage, shorts, what the light is not.

Pure texts and checks; the reports print them. Each text names the source of its
claim in the comment beside it.
"""

from __future__ import annotations

from pulsepick.parts.storage import Storage

# Cooper Bussmann PowerStor application guidelines (ref:bussmann-powerstor-guide): over-voltage
# reduces life; prolonged, it generates gas and may open the vent. SPSCAP safety
# specification (ref:spscap-safety): keep at or below the rated voltage.
_OVER_VOLTAGE = (
    "{what} {v:.2f} V is above the storage rating {rated:.2f} V{surge}: over-voltage shortens a "
    "supercapacitor's life, and held for long it generates gas and can open the safety vent; "
    "keep it at or below the rated voltage (a shunt clamp or a higher-rated part)."
)

# SPSCAP safety specification (ref:spscap-safety): series strings need balancing circuits.
SERIES_BALANCING = (
    "Two cells in series share voltage unevenly as their capacitance and leakage differ: "
    "a series string needs balancing (resistors or an active balancer) so that neither cell "
    "goes above its own rating."
)

# Common practice: a charged supercapacitor has a low ESR (tens of milliohms for a
# 5 F cell, ref:maxwell-bcap0005), so a short draws amps.
POLARITY_AND_SHORTS = (
    "A charged supercapacitor can deliver amps into a short circuit and heat thin wires: "
    "check the polarity before connecting and keep the terminals covered."
)

# Common practice.
NOT_A_SAFETY_LIGHT = (
    "This is not a safety, navigation or warning light: local codes and licensed practice "
    "govern any light used for safety or at sea."
)

# Common practice.
LOW_VOLTAGE_ONLY = (
    "Outdoor wiring stays at low voltage (the panel and the storage); never connect these "
    "circuits to mains."
)

GENERAL_CAUTIONS: tuple[str, ...] = (POLARITY_AND_SHORTS, NOT_A_SAFETY_LIGHT, LOW_VOLTAGE_ONLY)


def over_voltage_caution(storage: Storage, v_v: float, what: str = "The voltage") -> str | None:
    """The over-voltage caution when ``v_v`` (V) is above the storage rating, else None."""
    if not v_v > storage.v_rated_v:
        return None
    surge = ""
    if storage.v_surge_v is not None:
        above = "above" if v_v > storage.v_surge_v else "within"
        surge = f" ({above} its {storage.v_surge_v:.2f} V surge rating, meant for short spells)"
    return _OVER_VOLTAGE.format(what=what, v=v_v, rated=storage.v_rated_v, surge=surge)


def storage_cautions(storage: Storage, v_max_v: float, what: str = "The voltage") -> list[str]:
    """Cautions for a storage part that will see at most ``v_max_v`` (V).

    ``what`` names that voltage in the text ("The start voltage", "The panel
    voltage after the diode").
    """
    out = []
    over = over_voltage_caution(storage, v_max_v, what)
    if over:
        out.append(over)
    if storage.cells_in_series > 1 and not storage.balanced:
        out.append(SERIES_BALANCING)
    return out
