"""Tolerance bands (:func:`tolerance_bands`): the period's spread per resistor series and
capacitor class.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

from pulsepick.design import Design
from pulsepick.errors import RequestError
from pulsepick.parts.capacitor import get_cap_kind
from pulsepick.series import get_series
from pulsepick.analysis.spread.montecarlo import spread, SpreadResult
from pulsepick.analysis.spread.tolerances import (
    DEFAULT_BUILDS, DEFAULT_TEMP_RANGE_C, DEFAULT_YIELD_BAND, SOURCES,
)


#: Resistor series compared by :func:`tolerance_bands` (tolerances from the series table:
#: E12 10 %, E24 5 %, E96 1 %, ref:e-series-tolerances).
BAND_SERIES = ("E12", "E24", "E96")
#: Timing-capacitor classes compared: (kind key, tolerance %). 20 % electrolytic
#: (common practice), 10 % X7R (K), 5 % film (J) and 2 % C0G (G): tolerance letters of
#: IEC 60062 (ref:cap-tolerance-letters); the pairing of kind and tolerance is common practice.
#: "film" takes the design's own film kind, or polyester when C1 is not film.
BAND_CAP_CLASSES = (("electrolytic", 20.0), ("x7r", 10.0), ("film", 5.0), ("c0g", 2.0))


@dataclass(frozen=True)
class BandCell:
    """The period spread with one resistor series and one timing-capacitor class."""

    resistor_series: str  # E-series name
    resistor_tol_pct: float  # %, its tolerance
    cap_class: str  # "electrolytic", "x7r", "film" or "c0g"
    cap_kind: str  # capacitor kind key used for C1
    cap_tol_pct: float  # %, C1 tolerance
    period_p5_s: float  # s
    period_p50_s: float  # s
    period_p95_s: float  # s
    width_pct: float  # %, (P95 - P5) / P50
    yield_fraction: float  # builds lit within the yield band of the target
    stall_fraction: float  # builds that stall
    cap_value_usual: bool  # C1's value is inside the usual range of that kind

    def as_dict(self) -> dict[str, Any]:
        return dict(self.__dict__)


@dataclass(frozen=True, eq=False)
class BandsResult:
    """Period spread over resistor series x timing-capacitor classes, for one design.

    ``current`` is the full spread (shares and corners) of the design as specified;
    ``ideal_parts`` the spread with exact resistors and capacitors (what the chip,
    temperature and supply leave).
    """

    design: Design
    builds: int
    seed: int
    target_period_s: float  # s
    yield_band: float
    temp_range_c: tuple[float, float]  # C
    supply_range_v: tuple[float, float] | None  # V
    cells: tuple[BandCell, ...]
    current: SpreadResult
    ideal_parts: SpreadResult

    def cell(self, series: str, cap_class: str) -> BandCell:
        for c in self.cells:
            if c.resistor_series == series and c.cap_class == cap_class:
                return c
        raise RequestError(f"no band cell for {series} with {cap_class}; accepted: "
                           f"{', '.join(BAND_SERIES)} with "
                           f"{', '.join(k for k, _ in BAND_CAP_CLASSES)}")

    def dominant_source(self) -> str:
        """The source with the largest share of the current design's period variance."""
        return max(self.current.shares, key=lambda s: self.current.shares[s])

    def as_dict(self) -> dict[str, Any]:
        return {
            "builds": self.builds,
            "seed": self.seed,
            "target_period_s": self.target_period_s,
            "yield_band": self.yield_band,
            "temp_range_c": list(self.temp_range_c),
            "supply_range_v": None if self.supply_range_v is None else list(self.supply_range_v),
            "chip_spread": self.design.chip.spread,
            "cells": [c.as_dict() for c in self.cells],
            "current": self.current.as_dict(),
            "ideal_parts": {"period_width_pct": self.ideal_parts.width_pct(),
                            "yield": self.ideal_parts.yield_fraction,
                            "quantiles": self.ideal_parts.as_dict()["quantiles"]["period_s"]},
            "dominant_source": self.dominant_source(),
        }


def _film_kind(design: Design) -> str:
    own = design.parts.timing_cap
    return own if own.startswith("film") else "film-pet"


def tolerance_bands(design: Design, *, builds: int = DEFAULT_BUILDS, seed: int = 0,
                    target_period_s: float | None = None,
                    temp_range_c: tuple[float, float] = DEFAULT_TEMP_RANGE_C,
                    supply_range_v: tuple[float, float] | None = None,
                    yield_band: float = DEFAULT_YIELD_BAND) -> BandsResult:
    """The period spread of ``design`` for every resistor series x timing-capacitor class.

    Each cell keeps the design's nominal values and changes only the resistors'
    tolerance (all resistors) and the timing capacitor C1's kind and tolerance (other
    capacitors keep theirs). Every cell uses the same seed, so the cells differ by the
    parts, not by sampling noise.
    """
    common = {"builds": builds, "seed": seed, "temp_range_c": temp_range_c,
              "supply_range_v": supply_range_v, "yield_band": yield_band}
    current = spread(design, target_period_s=target_period_s, **common)
    target = current.target_period_s
    ideal = spread(design, target_period_s=target, shares=False, corners=False,
                   vary=[s for s in SOURCES if s not in ("resistors", "capacitors")], **common)
    c1 = float(design.values["c1"])
    cells = []
    for cls, cap_pct in BAND_CAP_CLASSES:
        kind_key = _film_kind(design) if cls == "film" else cls
        kind = get_cap_kind(kind_key)
        variant = replace(design, parts=replace(design.parts, timing_cap=kind_key))
        for series in BAND_SERIES:
            r_pct = get_series(series).tolerance_pct
            res = spread(variant, target_period_s=target, resistor_tol_pct=r_pct,
                         cap_tol={"c1": cap_pct}, shares=False, corners=False, **common)
            p5, p50, p95 = res.quantiles["period_s"]
            cells.append(BandCell(
                resistor_series=series, resistor_tol_pct=r_pct, cap_class=cls,
                cap_kind=kind_key, cap_tol_pct=cap_pct, period_p5_s=p5, period_p50_s=p50,
                period_p95_s=p95, width_pct=res.width_pct(), yield_fraction=res.yield_fraction,
                stall_fraction=res.stall_fraction,
                cap_value_usual=bool(kind.c_min_f <= c1 <= kind.c_max_f),
            ))
    return BandsResult(design=design, builds=builds, seed=seed, target_period_s=target,
                       yield_band=float(yield_band), temp_range_c=current.temp_range_c,
                       supply_range_v=current.supply_range_v, cells=tuple(cells),
                       current=current, ideal_parts=ideal)
