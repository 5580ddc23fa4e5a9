"""Schematics of a candidate: plain characters for the terminal, SVG for the HTML report.

A drawing is composed from the topology: one drawing per oscillator core, an optional
buffer gate, and one drawing per LED stage, joined at the driving node. Every part
carries its reference designator and value (RKM code) from the parts list
(:func:`pulsepick.partslist.parts_list`), so the drawing and the buy list agree.
The terminal drawing needs nothing beyond the standard library; the SVG uses the
schemdraw package (the ``plot`` extra).

Pure: a design and its parts in, lines of text or SVG text out.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from pulsepick.errors import PulsepickError


class SchematicError(ValueError, PulsepickError):
    """A topology this module has no drawing for."""


# ---------------------------------------------------------------------------- labels

@dataclass(frozen=True)
class Labels:
    """Reference designator and value text of every part of one design."""

    by_param: dict[str, str]  # circuit value name (r1, c1, rs, ...) -> "R1 2M2"
    chip: str  # "U1 hc" / "U1 timer555"
    core_diode: str  # "D1 schottky" for a steered core, else ""
    stage_diode: str  # the pulse or fade stage's diode, else ""
    led: str  # "LED1 red"
    buffer: str  # "U1B" when buffered (the second gate of the package)
    extra: dict[str, str] = field(default_factory=dict)

    def get(self, param: str) -> str:
        return self.by_param.get(param, "")


def labels_of(design, parts) -> Labels:
    """The labels of ``design`` from its parts list (``PartLine`` tuple)."""
    by_param = {p.param: f"{p.ref} {p.code}" for p in parts if p.param}
    chip = next((p for p in parts if p.kind == "chip"), None)
    diodes = [p for p in parts if p.kind == "diode" and "dusk" not in p.role]
    steer = [p for p in diodes if "steering" in p.role]
    others = [p for p in diodes if p not in steer]
    led = next((p for p in parts if p.kind == "led"), None)
    switch = next((p for p in parts if p.kind == "transistor"), None)
    timer = _core_form(design.topo) == "timer-chip"
    return Labels(
        by_param=by_param,
        chip=(f"{'U1' if timer else 'U1A'} {chip.code}" if chip is not None else "U1"),
        core_diode=f"{steer[0].ref} {steer[0].code}" if steer else "",
        stage_diode=f"{others[0].ref} {others[0].code}" if others else "",
        led=f"{led.ref} {led.code}" if led is not None else "LED1",
        buffer="U1B",
        extra={"switch": f"{switch.ref} {switch.code}"} if switch is not None else {},
    )


def _core_form(topo) -> str:
    """How a core is drawn, from what the registry says about it: "timer" (an astable
    timer chip), "gate-steered" (Schmitt gate with a diode branch) or "gate"."""
    from pulsepick.circuits.base import get_core

    core = get_core(topo.core)
    if core.chip_kind == "timer":
        return "timer-chip"
    return "gate-steered" if core.timing_search == "steered" else "gate"


def _stage_form(topo) -> str:
    """How a stage is drawn, from its component values: "coupled" (a coupling capacitor),
    "held" (a hold capacitor), "switched" (a base resistor) or "series" (the LED and its
    series resistor alone)."""
    from pulsepick.circuits.base import get_stage

    names = {p.name for p in get_stage(topo.stage).params}
    for key, form in (("cp", "coupled"), ("ch", "held"), ("rbase", "switched")):
        if key in names:
            return form
    if names == {"rs"}:
        return "series"
    raise SchematicError(f"no drawing for the stage {topo.stage!r} (values "
                         f"{', '.join(sorted(names))})")


# ---------------------------------------------------------------------------- text canvas

class _Canvas:
    """A grid of characters; blocks draw onto it with ``put``."""

    def __init__(self) -> None:
        self.cells: dict[tuple[int, int], str] = {}

    def put(self, x: int, y: int, text: str) -> None:
        for i, ch in enumerate(text):
            self.cells[(x + i, y)] = ch

    def vline(self, x: int, y0: int, y1: int, ch: str = "|") -> None:
        for y in range(min(y0, y1), max(y0, y1) + 1):
            self.cells[(x, y)] = ch

    def hline(self, x0: int, x1: int, y: int, ch: str = "-") -> None:
        for x in range(min(x0, x1), max(x0, x1) + 1):
            self.cells[(x, y)] = ch

    def lines(self) -> list[str]:
        if not self.cells:
            return []
        xs = [x for x, _ in self.cells]
        ys = [y for _, y in self.cells]
        left, width = min(xs), max(xs) - min(xs) + 1
        rows = {y: [" "] * width for y in range(min(ys), max(ys) + 1)}
        for (x, y), ch in self.cells.items():
            rows[y][x - left] = ch
        return ["".join(rows[y]).rstrip() for y in sorted(rows)]


def _vres(cv: _Canvas, x: int, y: int, label: str) -> int:
    """A vertical resistor from row y down: returns the row below it."""
    cv.put(x - 1, y, "[ ]")
    cv.put(x + 3, y, label)
    return y + 1


def _vcap(cv: _Canvas, x: int, y: int, label: str) -> int:
    cv.put(x - 1, y, "===")
    cv.put(x + 3, y, label)
    return y + 1


def _ground(cv: _Canvas, x: int, y: int) -> None:
    cv.put(x - 1, y, "GND")


# Each block draws with its input (left) at column ``x0`` on row ``y`` (the
# connection row) and returns the column of its output at that row.

def _core_schmitt(cv: _Canvas, lab: Labels, x0: int, y: int, topo) -> int:
    gate = f"|>o {lab.chip}"
    span = max(len(gate) + 6, len(lab.get("r1")) + 8)
    steered = _core_form(topo) == "gate-steered"
    if steered:
        diode = ("-|<-" if topo.steer == "high" else "->|-") + f" {lab.core_diode}"
        span = max(span, len(lab.get("r2")) + len(diode) + 8)
    x1 = x0 + span
    cv.hline(x0, x1, y)
    cv.put(x0 + 3, y, gate)
    top = y - 2
    cv.put(x0 + 3, top - 1, lab.get("r1"))
    cv.hline(x0, x1, top)
    cv.put(x0 + 3, top, "[   ]")
    if steered:
        top -= 3
        cv.put(x0 + 3, top - 1, f"{lab.get('r2')}  {diode.split(' ', 1)[1]}")
        cv.hline(x0, x1, top)
        cv.put(x0 + 3, top, "[   ]")
        cv.put(x0 + 10, top, diode.split(" ")[0])
    cv.vline(x0, top, y + 1)
    cv.vline(x1, top, y)
    cv.put(x0, top, "+")
    cv.put(x1, top, "+")
    cv.put(x0, y, "+")
    cv.put(x1, y, "+")
    if steered:
        cv.put(x0, y - 2, "+")
        cv.put(x1, y - 2, "+")
    row = _vcap(cv, x0, y + 2, lab.get("c1"))
    cv.vline(x0, row, row)
    _ground(cv, x0, row + 1)
    return x1


def _core_timer555(cv: _Canvas, lab: Labels, x0: int, y: int, topo) -> int:
    # RA from VDD to DIS (pin 7), RB from DIS to THR/TRIG (6, 2), C1 to ground; OUT pin 3
    x = x0 + 1
    box_l, box_r = x + 14, x + 30
    cv.put(x - 1, y - 8, "VDD")
    cv.vline(x, y - 7, y + 3)
    _vres(cv, x, y - 6, lab.get("ra"))
    cv.put(x, y - 4, "+")
    cv.hline(x + 1, box_l - 1, y - 4)
    _vres(cv, x, y - 2, lab.get("rb"))
    cv.put(x, y, "+")
    cv.hline(x + 1, box_l - 1, y)
    row = _vcap(cv, x, y + 2, lab.get("c1"))
    cv.vline(x, row, row)
    _ground(cv, x, row + 1)
    cv.put(box_l, y - 6, "+" + "-" * (box_r - box_l - 1) + "+")
    for r in range(y - 5, y + 2):
        cv.put(box_l, r, "|")
        cv.put(box_r, r, "|")
    cv.put(box_l, y + 2, "+" + "-" * (box_r - box_l - 1) + "+")
    cv.put(box_l + 2, y - 5, "8 VDD  4 RST")
    cv.put(box_l + 2, y - 4, "7 DIS")
    cv.put(box_l + 2, y - 2, lab.chip)
    cv.put(box_l + 2, y, "6 THR 2 TRG")
    cv.put(box_l + 2, y + 1, "1 GND   3 OUT")
    cv.put(box_r, y + 1, "+")
    x1 = box_r + 3
    cv.hline(box_r + 1, x1, y + 1)
    cv.vline(x1, y, y + 1)
    cv.put(x1, y + 1, "+")
    cv.put(x1, y, "+")
    return x1


def _buffer(cv: _Canvas, lab: Labels, x0: int, y: int) -> int:
    text = f"|>o {lab.buffer}"
    x1 = x0 + len(text) + 4
    cv.hline(x0, x1, y)
    cv.put(x0 + 2, y, text)
    return x1


def _stage_direct(cv: _Canvas, lab: Labels, x0: int, y: int, topo) -> int:
    res = f"[{lab.get('rs')}]"
    x1 = x0 + len(res) + 4
    cv.hline(x0, x1, y)
    cv.put(x0 + 2, y, res)
    cv.put(x1, y, "+")
    if topo.lit == "high":  # LED from the driver to ground, lit while it is high
        cv.vline(x1, y + 1, y + 3)
        cv.put(x1 - 1, y + 2, "_V_")
        cv.put(x1 + 3, y + 2, f"{lab.led} (anode up)")
        _ground(cv, x1, y + 4)
    else:  # LED from the supply, lit while the driver is low
        cv.vline(x1, y - 3, y - 1)
        cv.put(x1 - 1, y - 2, "_V_")
        cv.put(x1 + 3, y - 2, f"{lab.led} (anode up)")
        cv.put(x1 - 1, y - 4, "VDD")
    return x1


def _stage_pulse(cv: _Canvas, lab: Labels, x0: int, y: int, topo) -> int:
    cap = f"||{lab.get('cp')}||"
    xn = x0 + len(cap) + 4
    cv.hline(x0, xn, y)
    cv.put(x0 + 2, y, cap)
    cv.put(xn, y, "+")
    cv.vline(xn, y + 1, y + 3)
    cv.put(xn - 1, y + 2, "-^-")
    cv.put(xn + 3, y + 2, lab.stage_diode)
    _ground(cv, xn, y + 4)
    rs = lab.get("rs")
    x1 = xn + len(lab.stage_diode) + 7
    if rs:
        x1 = max(x1, xn + len(rs) + 6)
        cv.put(xn + 2, y, f"[{rs}]")
    cv.hline(xn + 1, x1, y)
    if rs:
        cv.put(xn + 2, y, f"[{rs}]")
    cv.put(x1, y, "+")
    cv.vline(x1, y + 1, y + 3)
    cv.put(x1 - 1, y + 2, "_V_")
    cv.put(x1 + 3, y + 2, lab.led)
    _ground(cv, x1, y + 4)
    return x1


def _stage_fade(cv: _Canvas, lab: Labels, x0: int, y: int, topo) -> int:
    text = f"[{lab.get('rs')}]->|-"
    xn = x0 + len(text) + 4
    cv.hline(x0, xn, y)
    cv.put(x0 + 2, y, text)
    cv.put(x0 + 2, y - 1, " " * (len(lab.get("rs")) + 2) + lab.stage_diode)
    cv.put(xn, y, "+")
    row = _vcap(cv, xn, y + 2, lab.get("ch"))
    cv.vline(xn, y + 1, y + 1)
    cv.vline(xn, row, row)
    _ground(cv, xn, row + 1)
    x1 = xn + len(lab.get("ch")) + 6
    cv.hline(xn + 1, x1, y)
    cv.put(x1, y, "+")
    cv.vline(x1, y + 1, y + 3)
    cv.put(x1 - 1, y + 2, "_V_")
    cv.put(x1 + 3, y + 2, lab.led)
    _ground(cv, x1, y + 4)
    return x1


def _stage_switch(cv: _Canvas, lab: Labels, x0: int, y: int, topo) -> int:
    """An NPN low-side switch: base resistor from the driver, LED and series resistor
    from the supply to the collector, emitter to ground."""
    res = f"[{lab.get('rbase')}]"
    xq = x0 + len(res) + 5
    cv.hline(x0, xq - 2, y)
    cv.put(x0 + 2, y, res)
    cv.put(xq - 1, y, "|<")
    cv.put(xq + 2, y, f"{lab.extra.get('switch', 'Q1')} (C up, E down)")
    cv.put(xq - 1, y - 7, "VDD")
    cv.vline(xq, y - 6, y - 1)
    _vres(cv, xq, y - 5, lab.get("rs"))
    cv.put(xq - 1, y - 3, "_V_")
    cv.put(xq + 3, y - 3, f"{lab.led} (anode up)")
    cv.vline(xq, y + 1, y + 1)
    _ground(cv, xq, y + 2)
    return xq


#: Text drawing of each form of core and stage (see _core_form and _stage_form).
TEXT_CORES = {"gate": _core_schmitt, "gate-steered": _core_schmitt,
              "timer-chip": _core_timer555}
TEXT_STAGES = {"series": _stage_direct, "coupled": _stage_pulse, "held": _stage_fade,
               "switched": _stage_switch}


def schematic_lines(design, parts=None) -> list[str]:
    """The plain-character schematic of ``design`` (lines without trailing spaces).

    ``parts``: its parts list (default: :func:`pulsepick.partslist.parts_list`).
    """
    if parts is None:
        from pulsepick.partslist import parts_list

        parts = parts_list(design)
    topo = design.topo
    lab = labels_of(design, parts)
    cv = _Canvas()
    y = 10
    x = TEXT_CORES[_core_form(topo)](cv, lab, 0, y, topo)
    if topo.buffered:
        x = _buffer(cv, lab, x + 1, y)
    TEXT_STAGES[_stage_form(topo)](cv, lab, x + 1, y, topo)
    header = f"schematic: {topo.label()} ({design.chip.family}, {design.supply_v:g} V)"
    return [header, *cv.lines()]


# ---------------------------------------------------------------------------- SVG

def schematic_svg(design, parts=None) -> str:
    """The schematic of ``design`` as SVG text (needs schemdraw, the ``plot`` extra)."""
    try:
        import schemdraw
        import schemdraw.elements as elm
        from schemdraw import logic
    except ImportError as err:
        raise SchematicError("the SVG schematic needs schemdraw (pip install "
                             "'pulsepick[plot]')") from err
    if parts is None:
        from pulsepick.partslist import parts_list

        parts = parts_list(design)
    topo = design.topo
    lab = labels_of(design, parts)
    core_form, stage_form = _core_form(topo), _stage_form(topo)

    def two(text: str) -> str:
        return text.replace(" ", "\n", 1)

    with schemdraw.Drawing(show=False, canvas="svg") as d:
        d.config(fontsize=11, unit=2.5)
        if core_form == "timer-chip":
            # left pins are listed bottom to top
            ic = elm.Ic(pins=[elm.IcPin(name="TRG", pin="2", side="left"),
                              elm.IcPin(name="THR", pin="6", side="left"),
                              elm.IcPin(name="DIS", pin="7", side="left"),
                              elm.IcPin(name="VDD", pin="8", side="top"),
                              elm.IcPin(name="RST", pin="4", side="top"),
                              elm.IcPin(name="GND", pin="1", side="bot"),
                              elm.IcPin(name="OUT", pin="3", side="right")],
                        size=(4, 6), pinspacing=2).label(two(lab.chip), "center")
            d += ic
            d += elm.Line().at(ic.DIS).left().length(2)
            dis = d.here
            d += elm.Dot()
            d += elm.Resistor().at(dis).up().label(two(lab.get("ra")))
            d += elm.Vdd()
            d += elm.Resistor().at(dis).down().toy(ic.THR).label(two(lab.get("rb")))
            thr = d.here
            d += elm.Dot()
            d += elm.Line().to(ic.THR)
            d += elm.Line().at(thr).toy(ic.TRG)
            trg = d.here
            d += elm.Dot()
            d += elm.Line().to(ic.TRG)
            d += elm.Capacitor().at(trg).down().label(two(lab.get("c1")))
            d += elm.Ground()
            d += elm.Line().at(ic.VDD).up().length(0.75)
            d += elm.Vdd()
            d += elm.Line().at(ic.RST).up().length(0.75)
            d += elm.Vdd()
            d += elm.Ground().at(ic.GND)
            d += elm.Line().at(ic.OUT).right().length(1)
        else:
            d += elm.Dot()
            node = d.here
            d += elm.Capacitor().down().label(two(lab.get("c1")))
            d += elm.Ground()
            d += elm.Line().at(node).up().length(1.5)
            top = d.here
            d += (r1 := elm.Resistor().right().length(4).label(two(lab.get("r1"))))
            if core_form == "gate-steered":
                d += elm.Line().at(top).up().length(1.5)
                d += elm.Resistor().right().length(2).label(two(lab.get("r2")))
                diode = elm.Diode().right().length(2).label(two(lab.core_diode))
                d += diode.reverse() if topo.steer == "high" else diode
                d += elm.Line().down().toy(r1.end)
            d += (gate := logic.SchmittNot().at(node).right().label(lab.chip, "bottom"))
            d += elm.Line().at(gate.out).tox(r1.end)
            d += elm.Dot()
            junction = d.here
            d += elm.Line().at(junction).toy(r1.end)
            d.here = junction
        if topo.buffered:
            d += logic.Not().right().label(lab.buffer, "bottom")
        drive = d.here
        if stage_form == "series":
            d += elm.Resistor().right().label(two(lab.get("rs")))
            if topo.lit == "high":
                d += elm.LED().down().label(lab.led)
                d += elm.Ground()
            else:
                d += elm.LED().up().reverse().label(lab.led)
                d += elm.Vdd()
        elif stage_form == "switched":
            d += elm.Resistor().right().label(two(lab.get("rbase")))
            d += (q := elm.BjtNpn(circle=True).right().anchor("base")
                  .label(lab.extra.get("switch", "Q1"), "right"))
            d += elm.Ground().at(q.emitter)
            d += elm.Line().at(q.collector).up().length(0.5)
            d += elm.LED().up().reverse().label(lab.led)
            d += elm.Resistor().up().label(two(lab.get("rs")))
            d += elm.Vdd()
        elif stage_form == "coupled":
            d += elm.Capacitor().right().label(two(lab.get("cp")))
            d += elm.Dot()
            node = d.here
            d += elm.Diode().down().reverse().label(lab.stage_diode)
            d += elm.Ground()
            d += elm.Line().at(node).right().length(1)
            if lab.get("rs"):
                d += elm.Resistor().right().label(two(lab.get("rs")))
            d += elm.LED().down().label(lab.led)
            d += elm.Ground()
        else:
            d += elm.Resistor().right().label(two(lab.get("rs")))
            d += elm.Diode().right().label(lab.stage_diode)
            d += elm.Dot()
            node = d.here
            d += elm.Capacitor().down().label(two(lab.get("ch")))
            d += elm.Ground()
            d += elm.Line().at(node).right().length(2)
            d += elm.LED().down().label(lab.led)
            d += elm.Ground()
        del drive
        svg = d.get_imagedata("svg")
    return svg.decode("utf-8") if isinstance(svg, bytes) else svg
