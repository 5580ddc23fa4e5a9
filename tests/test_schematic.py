"""Schematics: every registered core x stage drawn in plain characters and in SVG."""

from __future__ import annotations

import itertools
import xml.etree.ElementTree as ET

import pytest

from pulsepick.circuits.base import Topology, core_names, get_core, get_stage, stage_names
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.parts.led import get_led
from pulsepick.partslist import parts_list
from pulsepick.output.schematic import schematic_lines, schematic_svg

# Demo values of our own (a garden path marker), standard E-series values (ref:iec-60063)
VALUES = {"r1": 2.2e6, "r2": 47e3, "ra": 1e6, "rb": 22e3, "c1": 1e-6, "rs": 220.0,
          "cp": 22e-6, "ch": 100e-6, "rbase": 2.2e3}


def _designs():
    for core, stage in itertools.product(core_names(), stage_names()):
        family = "timer555" if get_core(core).chip_kind == "timer" else "hc"
        buffers = (False,) if family == "timer555" else (False, True)
        lits = ("high", "low") if stage == "direct" else ("high",)
        steers = ("high", "low") if core == "schmitt-steered" else ("high",)
        for buffered, lit, steer in itertools.product(buffers, lits, steers):
            names = [p.name for p in get_core(core).params + get_stage(stage).params]
            topo = Topology(core=core, stage=stage, buffered=buffered, lit=lit, steer=steer)
            values = {n: VALUES[n] for n in names}
            # the pulse stage's series resistor is optional (0: left out)
            for rs in ((VALUES["rs"], 0.0) if "cp" in names else (values["rs"],)):
                yield Design(topo=topo, values={**values, "rs": rs}, chip=ChipSpec(family),
                             parts=PartChoice(led=get_led("red")), supply_v=3.0)


DESIGNS = list(_designs())


def test_every_core_and_stage_is_covered():
    seen = {(d.topo.core, d.topo.stage) for d in DESIGNS}
    assert seen == set(itertools.product(core_names(), stage_names()))
    assert len(seen) == len(core_names()) * len(stage_names()) >= 12  # 3 x 4 today


@pytest.mark.parametrize("design", DESIGNS, ids=lambda d: d.topo.label())
def test_text_drawing_names_every_part(design):
    parts = parts_list(design)
    lines = schematic_lines(design, parts)
    text = "\n".join(lines)
    assert lines[0].startswith("schematic: ") and len(lines) >= 6
    assert all(line == line.rstrip() for line in lines)
    assert max(len(line) for line in lines) <= 100
    for p in parts:
        if p.kind in ("resistor", "capacitor"):
            assert f"{p.ref} {p.code}" in text, p.ref
        elif p.kind in ("diode", "led", "transistor"):
            assert p.ref in text, p.ref
    assert "GND" in text
    assert ("U1B" in text) == design.topo.buffered


@pytest.mark.parametrize("design", DESIGNS, ids=lambda d: d.topo.label())
def test_svg_drawing_names_every_part(design):
    pytest.importorskip("schemdraw")
    parts = parts_list(design)
    svg = schematic_svg(design, parts)
    root = ET.fromstring(svg)
    assert root.tag.endswith("svg")
    texts = " ".join(t for t in root.itertext())
    for p in parts:
        if p.kind in ("resistor", "capacitor", "diode", "led", "transistor"):
            assert p.ref in texts, p.ref


def test_html_report_holds_the_schematic(tmp_path):
    pytest.importorskip("schemdraw")
    pytest.importorskip("matplotlib")
    from pulsepick.cli import main

    path = tmp_path / "marker.html"
    code = main(["check", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
                 "--cp", "22u", "--rs", "47", "--no-drawing", "--report", str(path)])
    assert code == 0
    page = path.read_text(encoding="utf-8")
    figure = page[page.index('<figure class="schematic">'):]
    svg = figure[:figure.index("</svg>") + len("</svg>")].removeprefix(
        '<figure class="schematic">')
    texts = " ".join(ET.fromstring(svg).itertext())
    for ref in ("U1A", "R1", "C1", "C2", "R2", "D1", "LED1"):
        assert ref in texts
