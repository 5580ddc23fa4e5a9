"""Parts lists: every part of a design with its reference designator, value and rating.

Reference designators follow the usual schematic habit (common practice): U1 for
the chip, R1.. for resistors and C1.. for capacitors in the order the circuit
names its values (the core's first, then the stage's), D1.. for diodes and LED1
for the LED. A buy list groups identical parts into one row with a quantity.

Pure: a design in, frozen dataclasses out.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from pulsepick.circuits.base import get_core, get_stage
from pulsepick.parts.logic import GATES_PER_PACKAGE

#: Usual power rating of a through-hole resistor, W (common practice).
RESISTOR_RATING_W = 0.25
#: Next rating up when a resistor would run above half of the usual one, W (common
#: practice: run resistors at no more than half their rating).
RESISTOR_RATING_HIGH_W = 0.5
#: Tolerance assumed for a resistor taken from a parts drawer, percent (common practice:
#: the everyday through-hole resistor is a 5 % part).
DRAWER_RESISTOR_TOL_PCT = 5.0


@dataclass(frozen=True)
class PartLine:
    """One part of a design."""

    ref: str  # reference designator: U1, R1, C1, D1, LED1
    kind: str  # "chip", "resistor", "capacitor", "diode", "transistor" or "led"
    value: float | None  # ohm or farad; None for chips, diodes and LEDs
    unit: str  # "ohm", "F" or "" (no value)
    display: str  # value in engineering notation ("4.7 kΩ"), or the part's name
    code: str  # RKM code ("4k7", "100n"), or a short part type
    series: str  # E-series holding the value, "" when none applies
    tolerance: str  # "±5 %", "-20/+20 %", or ""
    tolerance_pct: float | None  # %, the larger side of the tolerance
    dielectric: str  # capacitor kind name, or ""
    rating: str  # "63 V", "0.25 W", or ""
    role: str  # what it does in the circuit
    param: str = ""  # circuit value name (r1, c1, ...), "" for parts without one
    note: str = ""  # anything the builder should know

    def to_dict(self) -> dict[str, object]:
        """Plain data (the JSON and buy-list fields)."""
        return {
            "ref": self.ref, "kind": self.kind, "value": self.value, "unit": self.unit,
            "display": self.display, "code": self.code, "series": self.series,
            "tolerance": self.tolerance, "tolerance_pct": self.tolerance_pct,
            "dielectric": self.dielectric, "rating": self.rating, "role": self.role,
            "param": self.param, "note": self.note,
        }


@dataclass(frozen=True)
class BuyRow:
    """One distinct part to buy: identical parts share a row."""

    quantity: int
    refs: tuple[str, ...]  # reference designators
    part: PartLine  # the first of the identical parts
    bands: tuple[str, ...]  # colour bands for resistors (IEC 60062), else ()
    notes: tuple[str, ...]  # roles and notes of every part in the row


def _tol_text(minus: float, plus: float) -> str:
    if math.isclose(minus, plus):
        return f"±{minus:g} %"
    return f"-{minus:g}/+{plus:g} %"


def _series_of(value: float, preferred: str) -> str:
    from pulsepick.series import get_series, which_series

    if get_series(preferred).contains(value):
        return preferred
    held = which_series(value)
    return held[0] if held else ""


def parts_list(design, *, r_series: str = "E24", c_series: str = "E12",
               r_tolerance_pct: float | None = None,
               led_peak_a: float | None = None) -> tuple[PartLine, ...]:
    """Every part of ``design`` (a :class:`pulsepick.design.Design`), U1 first.

    Parameters
    ----------
    design : Design
        The circuit with its values, chip, parts and supply.
    r_series, c_series : str
        The series the resistor and capacitor values were picked from (shown, and
        used for the resistor tolerance).
    r_tolerance_pct : float, optional
        Resistor tolerance in percent; default: the usual tolerance of ``r_series``
        (IEC 60063 via ref:e-series-tolerances).
    led_peak_a : float, optional
        Peak LED current (A) for the series resistor's power rating; default: the
        fast engine's figure.
    """
    from pulsepick.series import get_series

    topo, values, parts = design.topo, design.values, design.parts
    core, stage = get_core(topo.core), get_stage(topo.stage)
    v_max = float(design.supply_v)
    r_tol = get_series(r_series).tolerance_pct if r_tolerance_pct is None else r_tolerance_pct
    lines: list[PartLine] = [_chip_line(design)]
    n_r = n_c = 0
    for p in core.params + stage.params:
        value = float(values[p.name])
        if p.optional and value == 0:
            continue
        if p.kind == "R":
            n_r += 1
            lines.append(_resistor_line(design, p, value, f"R{n_r}", r_series, r_tol,
                                        led_peak_a))
        else:
            n_c += 1
            lines.append(_capacitor_line(parts, p, value, f"C{n_c}", c_series, v_max))
    lines.extend(_extra_lines(topo, parts))
    lines.append(_led_line(topo, parts))
    return tuple(lines)


def _resistor_line(design, p, value: float, ref: str, r_series: str, r_tol: float,
                   led_peak_a: float | None) -> PartLine:
    """The line of the resistor ``ref`` standing for circuit value ``p`` of ``value`` ohm,
    with tolerance ``r_tol`` (%) and the power rating the LED current asks for."""
    from pulsepick.units import format_eng, format_rkm

    rating = _resistor_rating(design, p.name, value, led_peak_a)
    return PartLine(
        ref=ref, kind="resistor", value=value, unit="ohm",
        display=format_eng(value, "Ω"), code=format_rkm(value, "R"),
        series=_series_of(value, r_series), tolerance=_tol_text(r_tol, r_tol),
        tolerance_pct=r_tol, dielectric="", rating=f"{rating:g} W", role=p.role,
        param=p.name,
        note="metal film" if r_tol <= 1 else "",
    )


def _capacitor_line(parts, p, value: float, ref: str, c_series: str,
                    v_max: float) -> PartLine:
    """The line of the capacitor ``ref`` standing for circuit value ``p`` of ``value``
    farad: its kind from ``parts``, the usual voltage rating for a supply of ``v_max`` (V),
    and notes on polarity, class-2 drift and size."""
    from pulsepick.parts.capacitor import get_cap_kind, pick_voltage_rating
    from pulsepick.parts.capsize import size_class
    from pulsepick.units import format_eng, format_rkm

    kind_key = parts.timing_cap if p.name == "c1" else parts.stage_cap
    kind = get_cap_kind(kind_key)
    rating_v = pick_voltage_rating(kind, v_max)
    note = ""
    if kind.key == "electrolytic":
        note = "polarised: + to the side that sits higher"
    elif kind.class2 and p.name == "c1":
        note = "class-2 ceramic: value moves with voltage, temperature and age"
    size = size_class(kind.key, value)
    if size.rank > 0:
        note = "; ".join(x for x in (note, f"{size.name} part: {size.why}") if x)
    return PartLine(
        ref=ref, kind="capacitor", value=value, unit="F",
        display=format_eng(value, "F"), code=format_rkm(value, "C"),
        series=_series_of(value, c_series),
        tolerance=_tol_text(kind.tol_minus_pct, kind.tol_plus_pct),
        tolerance_pct=max(kind.tol_minus_pct, kind.tol_plus_pct),
        dielectric=kind.name, rating=f"{rating_v:g} V", role=p.role, param=p.name,
        note=note,
    )


def _extra_lines(topo, parts) -> list[PartLine]:
    """The diodes (D1..) and transistors (Q1..) the core and the stage add."""
    from pulsepick.parts.diode import get_diode

    lines: list[PartLine] = []
    extras = get_core(topo.core).extra_parts(topo) + get_stage(topo.stage).extra_parts(topo)
    counts: dict[str, int] = {}
    for extra in extras:
        key = extra.part_key(parts)
        rating = ""
        if extra.kind == "diode":
            prefix, display = "D", get_diode(key).name
        else:
            from pulsepick.parts.transistor import get_transistor

            model = get_transistor(key)
            prefix, display = "Q", model.name
            rating = f"{model.vceo_max_v:g} V, {model.ic_max_a * 1e3:g} mA"
        counts[prefix] = counts.get(prefix, 0) + 1
        lines.append(PartLine(
            ref=f"{prefix}{counts[prefix]}", kind=extra.kind, value=None, unit="",
            display=display, code=key, series="", tolerance="", tolerance_pct=None,
            dielectric="", rating=rating, role=extra.role, note=extra.note,
        ))
    return lines


def _led_line(topo, parts) -> PartLine:
    """The LED's line, LED1."""
    led = parts.led
    return PartLine(
        ref="LED1", kind="led", value=None, unit="", display=led.name, code=led.key,
        series="", tolerance="", tolerance_pct=None, dielectric="", rating="",
        role="the light", note=get_stage(topo.stage).led_note(topo),
    )


def _chip_line(design) -> PartLine:
    from pulsepick.engine.environment import chip_model

    topo, chip = design.topo, design.chip
    model = chip_model(chip)
    if chip.is_timer:
        return PartLine(
            ref="U1", kind="chip", value=None, unit="", display=model.name, code=chip.family,
            series="", tolerance="", tolerance_pct=None, dielectric="",
            rating=f"{model.vdd_min_v:g}-{model.vdd_max_v:g} V", role="astable timer",
            note="CMOS part only (a bipolar 555 draws milliamperes); reset pin to the supply",
        )
    used = 2 if topo.buffered else 1
    unused = GATES_PER_PACKAGE - used
    note = (f"uses {used} of {GATES_PER_PACKAGE} gates; tie the {unused} unused {'input' if unused == 1 else 'inputs'} to "
            "ground or the supply (never leave CMOS inputs open)")
    if chip.measured:
        note += "; thresholds as measured on your part"
    role = "Schmitt oscillator" + (" and buffer" if topo.buffered else "")
    return PartLine(
        ref="U1", kind="chip", value=None, unit="", display=model.name, code=chip.family,
        series="", tolerance="", tolerance_pct=None, dielectric="",
        rating=f"{model.vdd_min_v:g}-{model.vdd_max_v:g} V", role=role, note=note,
    )


def _resistor_rating(design, name: str, value: float, peak: float | None) -> float:
    """Power rating for a resistor: the usual one unless the LED current heats it."""
    if name != "rs":
        return RESISTOR_RATING_W
    if peak is None:
        peak = float(design.fast().row(0)["led_peak_a"])
    if not math.isfinite(peak):
        return RESISTOR_RATING_W
    watts = peak * peak * value
    return RESISTOR_RATING_W if watts <= 0.5 * RESISTOR_RATING_W else RESISTOR_RATING_HIGH_W


def buy_rows(lines: tuple[PartLine, ...]) -> tuple[BuyRow, ...]:
    """Group identical parts (same kind, value, tolerance, dielectric, rating, type)."""
    from pulsepick.colour import bands_for

    groups: dict[tuple, list[PartLine]] = {}
    for line in lines:
        key = (line.kind, line.value, line.code, line.tolerance, line.dielectric, line.rating)
        groups.setdefault(key, []).append(line)
    rows = []
    for members in groups.values():
        first = members[0]
        bands: tuple[str, ...] = ()
        if first.kind == "resistor" and first.value and first.tolerance_pct is not None:
            try:
                bands = bands_for(first.value, first.tolerance_pct)
            except ValueError:
                bands = ()
        notes = tuple(dict.fromkeys(
            f"{m.ref}: {m.role}" + (f" ({m.note})" if m.note else "") for m in members))
        rows.append(BuyRow(len(members), tuple(m.ref for m in members), first, bands, notes))
    return tuple(rows)


# A 100 nF ceramic across each package's supply pins, as close as it goes (common practice).
DECOUPLING_F = 100e-9


def _next_ref(lines, prefix: str) -> int:
    """The next free number of a designator prefix (C, D) among ``lines``."""
    used = [int(p.ref[len(prefix):]) for p in lines
            if p.ref.startswith(prefix) and p.ref[len(prefix):].isdigit()]
    return max(used, default=0) + 1


def charge_path_lines(lines, plan, *, clamp_v: float | None = None,
                      clamp_w: float | None = None) -> tuple[PartLine, ...]:
    """Parts a build adds around its chips and storage: one decoupling capacitor per
    package, and the shunt clamp across the storage when the panel can exceed its rating.

    ``lines`` are the build's parts so far (for the next free designators); ``plan`` the
    package plan (its ``packages``); ``clamp_v`` (V) and ``clamp_w`` (W, at the panel's
    full-sun short-circuit current) the proposed clamp, or None.
    """
    out: list[PartLine] = []
    c_next = _next_ref(lines, "C")
    for pkg in getattr(plan, "packages", ()):
        out.append(PartLine(
            ref=f"C{c_next}", kind="capacitor", value=DECOUPLING_F, unit="F",
            display="100 nF", code="100n", series="E12", tolerance="±10 %", tolerance_pct=10.0,
            dielectric="X7R ceramic", rating="16 V",
            role=f"decoupling for U{pkg.number} (supply pin to ground, close to the chip)",
            note="common practice"))
        c_next += 1
    if clamp_v is not None:
        watts = "" if clamp_w is None else f"{max(clamp_w * 1.5, 0.25):.2g} W"
        out.append(PartLine(
            ref=f"D{_next_ref(lines, 'D')}", kind="diode", value=None, unit="",
            display=f"{clamp_v:.1f} V zener (or a TL431-style shunt set to {clamp_v:.1f} V)",
            code=f"clamp-{clamp_v:.1f}V", series="", tolerance="", tolerance_pct=None,
            dielectric="", rating=watts,
            role="shunt clamp across the storage: keeps it under its rating",
            note="the panel can charge the storage past its rating without it; rated for the "
                 "panel's full-sun short-circuit current with 50 % margin (common practice)"))
    return tuple(out)


#: Designator prefix of each kind of part a light has (its chip aside).
REF_PREFIX = {"resistor": "R", "capacitor": "C", "diode": "D", "transistor": "Q",
              "led": "LED", "photoresistor": "LDR"}


def number_light_parts(part_lines, counters: dict[str, int] | None = None) -> tuple:
    """Each light's parts (its chip left out) with designators numbered across the build,
    in the order of the lights: one scheme for the whole build, each designator once.

    ``part_lines`` holds one tuple of ``PartLine`` per light; ``counters`` (prefix -> last
    number) is carried on, so the build's other parts can continue the numbering.
    """
    from dataclasses import replace

    counters = {} if counters is None else counters
    out = []
    for own in part_lines:
        lines = []
        for line in own:
            if line.kind == "chip":
                continue
            prefix = REF_PREFIX.get(line.kind, "X")
            counters[prefix] = counters.get(prefix, 0) + 1
            lines.append(replace(line, ref=f"{prefix}{counters[prefix]}"))
        out.append(tuple(lines))
    return tuple(out)


def ref_map(own, numbered, chip_ref: str) -> dict[str, str]:
    """A light's own designators (its single-light parts list) to the build's: by the
    circuit value each part stands for, else by position within its kind. A timing
    resistor that a photoresistor network replaces maps to that network."""
    out = {}
    by_param = {ln.param: ln for ln in numbered if ln.param}
    for line in own:
        if line.kind == "chip":
            out[line.ref] = chip_ref
            continue
        new = by_param.get(line.param) if line.param else None
        if new is not None and new.kind == "photoresistor":
            out[line.ref] = f"the {new.ref} network"
        elif new is not None:
            out[line.ref] = new.ref
    for kind in REF_PREFIX:  # parts without a value: diodes, transistors, the LED
        old = [ln for ln in own if ln.kind == kind and not ln.param]
        new = [ln for ln in numbered if ln.kind == kind and not ln.param]
        for a, b in zip(old, new, strict=False):
            out[a.ref] = b.ref
    return out


def renumber_text(text: str, refs: dict[str, str]) -> str:
    """``text`` with every designator of ``refs`` replaced at once (whole words only)."""
    import re

    if not refs:
        return text
    pattern = re.compile(r"\b(" + "|".join(re.escape(k) for k in sorted(
        refs, key=len, reverse=True)) + r")\b")
    return pattern.sub(lambda m: refs[m.group(1)], text)
