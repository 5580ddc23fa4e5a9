"""The solver's input: :class:`SolveRequest`."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from pulsepick.errors import RequestError
from pulsepick.request.defaults import (
    ASSUMED_FLASH_S, ASSUMED_FLASH_SHARE, ASSUMED_PEAK_A, DEFAULT_BUILDS, DEFAULT_SEED,
    DEFAULT_TOP, PREFER_CHOICES,
)
from pulsepick.request.phrase import BlinkTargets
from pulsepick.request.stock import Stock


@dataclass(frozen=True)
class SolveRequest:
    """Everything the solver needs: the blink, the build's context and the options.

    Units: volts, ohms, farads, seconds, amperes, candela.
    """

    targets: BlinkTargets
    supply_v: float  # V, nominal (full) supply the circuit is designed at
    supply_end_v: float | None  # V, end-of-night supply (None: a steady supply)
    families: tuple[str, ...]  # chip family keys searched (CHIP_KEYS)
    led: Any  # LedModel (pulsepick.parts.led)
    r_series: str  # E-series of resistors
    c_series: str  # E-series of capacitors
    timing_caps: tuple[str, ...]  # capacitor kind keys allowed for the timing capacitor
    r_min_ohm: float  # ohm, smallest timing resistor
    r_max_ohm: float  # ohm, largest resistor
    c_min_f: float  # F, smallest capacitor
    c_max_f: float  # F, largest capacitor
    cores: tuple[str, ...]  # oscillator cores searched
    stages: tuple[str, ...]  # LED stages searched
    buffered: bool | None = None  # True: only buffered; False: only unbuffered; None: both
    stock: Stock | None = None  # only parts from this drawer
    top: int = DEFAULT_TOP  # candidates returned
    builds: int = DEFAULT_BUILDS  # Monte Carlo builds of the spread analysis
    seed: int = DEFAULT_SEED  # seed of the spread analysis
    chip_overrides: dict[str, float] = field(default_factory=dict)  # measured chip figures
    prefer: str = "balanced"  # weight of part size/cost in the ranking (PREFER_CHOICES)
    chip_spread: str = "normal"  # how the chips' threshold limits are read (CHIP_SPREADS)
    choices: dict[str, str] = field(default_factory=dict)  # option text as given, for output
    defaults: tuple[str, ...] = ()  # names of the options left at their defaults

    def __post_init__(self) -> None:
        problems = []
        if not (math.isfinite(self.supply_v) and self.supply_v > 0):
            problems.append("the supply must be above 0 V")
        if self.supply_end_v is not None and not 0 < self.supply_end_v <= self.supply_v:
            problems.append("a supply range runs from full down to the end of the night "
                            "(e.g. 2.7V..1.8V)")
        if not self.r_min_ohm < self.r_max_ohm:
            problems.append("--min-r must be below --max-r")
        if not self.c_min_f < self.c_max_f:
            problems.append("the capacitor range must run from small to large (e.g. 1n..1m)")
        if not self.families:
            problems.append("no chip family to search")
        if not self.cores or not self.stages:
            problems.append("no circuit to search (check --cores and --stages)")
        if self.top < 1 or self.builds < 1:
            problems.append("--top and --builds must be at least 1")
        if self.prefer not in PREFER_CHOICES:
            problems.append(f"--prefer {self.prefer!r}: accepted {', '.join(PREFER_CHOICES)}")
        if problems:
            raise RequestError("; ".join(problems))

    @property
    def flash_s(self) -> float:
        """The flash length aimed at (s): stated, or the assumed default, shortened to
        ``ASSUMED_FLASH_SHARE`` of the period when the default would not fit in it."""
        if self.targets.flash_s is not None:
            return self.targets.flash_s
        return min(ASSUMED_FLASH_S, ASSUMED_FLASH_SHARE * self.targets.period_s)

    @property
    def flash_shortened(self) -> bool:
        """True when no flash was stated and the usual assumption was too long for the
        period (see :attr:`flash_s`)."""
        return self.targets.flash_s is None and self.flash_s < ASSUMED_FLASH_S

    def aims(self) -> dict[str, tuple[float, bool]]:
        """Each figure aimed at: ``{figure key: (value, stated)}``; assumed ones are soft.

        Keys are figure names: ``period_s``, ``flash_s``, ``led_peak_a``, ``effective_a``,
        ``effective_mcd`` (the intensity target in mcd).
        """
        t = self.targets
        out = {"period_s": (t.period_s, True),
               "flash_s": (self.flash_s, t.flash_s is not None)}
        b = t.brightness
        if b is None:
            out["led_peak_a"] = (ASSUMED_PEAK_A, False)
        elif b[0] == "peak_a":
            out["led_peak_a"] = (b[1], True)
        elif b[0] == "effective_a":
            out["effective_a"] = (b[1], True)
        else:
            out["effective_mcd"] = (b[1] * 1e3, True)
        return out

    def describe(self) -> str:
        """One line: the blink as asked."""
        return self.targets.text

    def to_dict(self) -> dict[str, Any]:
        """Plain data for JSON and stamps."""
        t = self.targets
        return {
            "text": t.text,
            "period_s": t.period_s,
            "flash_s": t.flash_s,
            "peak_a": t.peak_a,
            "effective_a": t.effective_a,
            "intensity_cd": t.intensity_cd,
        }

    def assumptions(self) -> dict[str, Any]:
        """The context as used, every default included (for output)."""
        aims = self.aims()
        out: dict[str, Any] = {
            "supply_v": self.supply_v,
            "supply_end_v": self.supply_end_v,
            "families": list(self.families),
            "led": self.led.key,
            "led_name": self.led.name,
            "r_series": self.r_series,
            "c_series": self.c_series,
            "timing_caps": list(self.timing_caps),
            "r_min_ohm": self.r_min_ohm,
            "r_max_ohm": self.r_max_ohm,
            "c_min_f": self.c_min_f,
            "c_max_f": self.c_max_f,
            "cores": list(self.cores),
            "stages": list(self.stages),
            "buffered": {None: "either", True: "only buffered", False: "never"}[self.buffered],
            "stock": None if self.stock is None else self.stock.source,
            "top": self.top,
            "builds": self.builds,
            "seed": self.seed,
            "prefer": self.prefer,
            "chip_spread": self.chip_spread,
            "aims": {k: {"value": v, "stated": s} for k, (v, s) in aims.items()},
            "defaults": list(self.defaults),
        }
        if self.chip_overrides:
            out["chip_measured"] = dict(self.chip_overrides)
        return out
