"""Gates and packages of a build, and its numbered parts list (see
:mod:`pulsepick.analysis.multi`)."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

from pulsepick.analysis.multi.ratios import clearance
from pulsepick.errors import RequestError
from pulsepick.hints import hint
from pulsepick.parts.logic import GATES_PER_PACKAGE


@dataclass(frozen=True)
class LightUse:
    """What one light takes from the chips."""

    name: str
    family: str  # logic family key, or "timer555"
    buffered: bool  # a spare gate drives its LED stage

    @property
    def is_timer(self) -> bool:
        return self.family == "timer555"

    @property
    def gates(self) -> int:
        return 0 if self.is_timer else 1 + int(self.buffered)


@dataclass(frozen=True)
class Package:
    """One chip package of the build."""

    number: int  # 1-based, U1, U2, ...
    family: str  # logic family key or "timer555"
    gates_used: int  # gates taken (a 555 counts 1)
    lights: tuple[int, ...]  # indices of the lights on it
    dusk: bool  # holds the dusk detector's sense gate

    @property
    def is_timer(self) -> bool:
        return self.family == "timer555"


@dataclass(frozen=True)
class PackagePlan:
    """The packages a build needs, with the count that decides it."""

    packages: tuple[Package, ...]
    n_lights: int
    oscillators: int  # Schmitt oscillator gates
    buffers: int  # buffer gates
    dusk: int  # gates of the dusk detector (its sense gate and any hold inverter), else 0
    timers: int  # 555 packages

    @property
    def gates_needed(self) -> int:
        """Schmitt gates, the dusk detector's included."""
        return self.oscillators + self.buffers + self.dusk

    @property
    def hex_packages(self) -> int:
        return sum(1 for p in self.packages if not p.is_timer)

    def package_of(self, light: int) -> int:
        """The package number holding light ``light`` (index)."""
        for p in self.packages:
            if light in p.lights:
                return p.number
        raise KeyError(light)

    def describe(self) -> str:
        """The count in words, e.g. ``4 lights need 8 gates (4 oscillators, 4 buffers)
        plus 1 for the dusk detector``."""
        words = []
        schmitt = self.n_lights - self.timers
        if schmitt:
            words.append(f"{_n(schmitt, 'light')} need{'s' if schmitt == 1 else ''} "
                         f"{_n(self.oscillators + self.buffers, 'gate')} "
                         f"({_n(self.oscillators, 'oscillator')}, "
                         f"{_n(self.buffers, 'buffer')})")
        if self.timers:
            words.append(f"{_n(self.timers, 'light')} on 555 timers take "
                         f"{_n(self.timers, 'package')}")
        text = "; ".join(words)
        if self.dusk:
            gates = _n(self.dusk, "gate") if not schmitt or self.timers else str(self.dusk)
            text += f" plus {gates} for the dusk detector"
        return text


def _n(k: int, word: str) -> str:
    return f"{k} {word}{'' if k == 1 else 's'}"


def plan_packages(uses: Sequence[LightUse], *, dusk_detector: bool = True,
                  dusk_family: str | None = None,
                  periods_s: Sequence[float] | None = None,
                  dusk_gates: int = 1) -> PackagePlan:
    """Place the lights on packages per logic family, as few packages as the gates need.

    The dusk detector's gate goes with ``dusk_family`` (default: the first Schmitt
    light's family, or ``hc`` when every light is on a 555). With ``periods_s`` (s), each
    light goes to the package with room where its period keeps furthest from a simple
    ratio with the lights already there (nominal ratios widened by ``PLAN_BAND``);
    without, first fit, largest first. ``dusk_gates``: the detector's sense gate plus its
    hold inverter when one is needed (``pulsepick.analysis.gating``).
    """
    if not uses:
        raise RequestError("a build needs at least one light")
    schmitt_families = [u.family for u in uses if not u.is_timer]
    dfam = dusk_family or (schmitt_families[0] if schmitt_families else "hc")
    packages: list[dict[str, Any]] = []
    for family in dict.fromkeys([*schmitt_families, *([dfam] if dusk_detector else [])]):
        items = [(u.gates, i) for i, u in enumerate(uses) if u.family == family]
        items.sort(key=lambda t: -t[0])
        mine: list[dict[str, Any]] = []
        if dusk_detector and family == dfam:
            items.insert(0, (dusk_gates, -1))
        if periods_s is not None:
            total = sum(size for size, _ in items)
            mine = [{"family": family, "used": 0, "lights": [], "dusk": False}
                    for _ in range(max(1, math.ceil(total / GATES_PER_PACKAGE)))]
        for size, idx in items:
            room = [p for p in mine if p["used"] + size <= GATES_PER_PACKAGE]
            if periods_s is not None and idx >= 0 and room:
                room.sort(key=lambda p: (-_plan_clearance(periods_s, idx, p["lights"]),
                                         p["used"]))
            home = room[0] if room else None
            if home is None:
                home = {"family": family, "used": 0, "lights": [], "dusk": False}
                mine.append(home)
            home["used"] += size
            if idx < 0:
                home["dusk"] = True
            else:
                home["lights"].append(idx)
        packages.extend(mine)
    for i, u in enumerate(uses):
        if u.is_timer:
            packages.append({"family": "timer555", "used": 1, "lights": [i], "dusk": False})
    packages = [p for p in packages if p["used"] > 0]
    out = tuple(Package(number=k, family=p["family"], gates_used=p["used"],
                        lights=tuple(sorted(p["lights"])), dusk=p["dusk"])
                for k, p in enumerate(packages, start=1))
    return PackagePlan(
        packages=out, n_lights=len(uses),
        oscillators=sum(1 for u in uses if not u.is_timer),
        buffers=sum(1 for u in uses if not u.is_timer and u.buffered),
        dusk=dusk_gates if dusk_detector else 0, timers=sum(1 for u in uses if u.is_timer))


#: Half-width (log units) added to nominal ratios when placing lights on packages: about
#: the P5..P95 half-width of a ratio with 5 % resistors and 10 % capacitors (estimate from
#: the spread analysis of such pairs).
PLAN_BAND = 0.15


def _plan_clearance(periods_s: Sequence[float], idx: int, others: Sequence[int]) -> float:
    """Smallest clearance of light ``idx``'s period against the lights already placed."""
    worst = math.inf
    for j in others:
        x = math.log(periods_s[idx] / periods_s[j])
        worst = min(worst, float(clearance(x - PLAN_BAND, x + PLAN_BAND)))
    return worst


def package_limit_error(plan: PackagePlan, max_packages: int) -> str | None:
    """One line explaining why ``plan`` needs more than ``max_packages``, or None."""
    if len(plan.packages) <= max_packages:
        return None
    holds = (f"one {GATES_PER_PACKAGE}-gate package holds {GATES_PER_PACKAGE}"
             if max_packages == 1 else
             f"{max_packages} {GATES_PER_PACKAGE}-gate packages hold "
             f"{max_packages * GATES_PER_PACKAGE}")
    return (f"{plan.describe()}; {holds}, and the build needs {len(plan.packages)} packages "
            f"({hint('max_packages', max_packages)}); allow more packages, drive LEDs without "
            f"a buffer ({hint('buffered', False)}), leave out the dusk detector "
            f"({hint('dusk_detector', False)}) or "
            "use fewer lights")


def build_part_lines(names: Sequence[str], part_lines: Sequence[tuple], plan: PackagePlan, *,
                     storage=None, panel=None, charge_diode: str | None = None,
                     hold_lines: Sequence = ()) -> tuple:
    """Every part of the build, numbered across the lights (``PartLine`` tuple).

    Chips come first, one line per package (U1, U2, ...); then each light's resistors,
    capacitors, diodes and LED, renumbered so designators run across the build, with the
    light's name in front of the role; then the storage, the panel and its charge diode.
    Identical parts are summed by :func:`pulsepick.partslist.buy_rows`.
    """
    from pulsepick.engine.environment import ChipSpec, chip_model
    from pulsepick.partslist import PartLine, number_light_parts

    lines = []
    for pkg in plan.packages:
        model = chip_model(ChipSpec(family=pkg.family))
        who = ", ".join(names[i] for i in pkg.lights)
        if pkg.is_timer:
            role = f"astable timer ({who})"
            note = "CMOS part only (a bipolar 555 draws milliamperes); reset pin to the supply"
        else:
            parts = [f"Schmitt gates for {who}"] if who else []
            if pkg.dusk:
                parts.append("the dusk detector" + (" and its hold inverter"
                                                    if plan.dusk > 1 else ""))
            role = " and ".join(parts)
            unused = GATES_PER_PACKAGE - pkg.gates_used
            note = (f"uses {pkg.gates_used} of {GATES_PER_PACKAGE} gates"
                    + (f"; tie the {unused} unused {'input' if unused == 1 else 'inputs'} to ground or the supply (never "
                       "leave CMOS inputs open)" if unused else ""))
        lines.append(PartLine(
            ref=f"U{pkg.number}", kind="chip", value=None, unit="", display=model.name,
            code=pkg.family, series="", tolerance="", tolerance_pct=None, dielectric="",
            rating=f"{model.vdd_min_v:g}-{model.vdd_max_v:g} V", role=role, note=note))
    counters: dict[str, int] = {}

    def ref(prefix: str) -> str:
        counters[prefix] = counters.get(prefix, 0) + 1
        return f"{prefix}{counters[prefix]}"

    for name, own in zip(names, number_light_parts(part_lines, counters), strict=True):
        lines.extend(replace(line, role=f"{name}: {line.role}") for line in own)
    for line in hold_lines:  # the dusk detector's hold diodes (pulsepick.analysis.gating)
        lines.append(replace(line, ref=ref("D")))
    if storage is not None:
        lines.append(PartLine(
            ref=ref("C"), kind="storage", value=storage.capacitance_f, unit="F",
            display=storage.name, code=storage.key, series="",
            tolerance=f"-{storage.tol_minus_pct:g}/+{storage.tol_plus_pct:g} %",
            tolerance_pct=max(storage.tol_minus_pct, storage.tol_plus_pct), dielectric="",
            rating=f"{storage.v_rated_v:g} V", role="energy storage for every light",
            note="polarised; a charged supercapacitor can deliver amperes into a short"))
    if panel is not None:
        lines.append(PartLine(
            ref="PV1", kind="panel", value=None, unit="", display=panel.name, code=panel.key,
            series="", tolerance="", tolerance_pct=None, dielectric="",
            rating=f"Voc {panel.voc_v:g} V, Isc {panel.isc_a * 1e3:g} mA",
            role="solar cell (also the dusk sensor)", note=""))
        if charge_diode is not None:
            from pulsepick.parts.diode import get_diode

            d = get_diode(charge_diode)
            lines.append(PartLine(
                ref=ref("D"), kind="diode", value=None, unit="", display=d.name,
                code=charge_diode, series="", tolerance="", tolerance_pct=None, dielectric="",
                rating="", role="charge diode from the panel to the storage",
                note="cathode to the storage"))
    return tuple(lines)
