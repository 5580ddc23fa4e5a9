"""The whole build as one answer: packing by default, the example end to end, the report
read back (about a minute: the example is solved, run through a night and two days)."""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import os
from html.parser import HTMLParser

import pytest

from pulsepick.analysis.pinout import HEX_GATE_PINS, package_map
from pulsepick.cli import main
from pulsepick.output.export import read_buylist

EXAMPLE = os.path.join(os.path.dirname(__file__), "..", "examples",
                       "footbridge-fireflies.toml")
THREE = "three lights: every 2.7 s, every 4.1 s, every 6.3 s, 60 ms each"


class Tables(HTMLParser):
    """The report's tables by id, each a list of rows of {text, value}."""

    def __init__(self, page: str) -> None:
        super().__init__()
        self.tables: dict[str, list[list[dict]]] = {}
        self.text: list[str] = []
        self._t = self._row = self._cell = None
        self.feed(page)

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "table":
            self._t = a.get("id")
            self.tables[self._t] = []
        elif tag == "tr" and self._t is not None:
            self._row = []
        elif tag == "td" and self._row is not None:
            self._cell = {"text": "", "value": a.get("data-value")}

    def handle_endtag(self, tag):
        if tag == "td" and self._cell is not None:
            self._row.append(self._cell)
            self._cell = None
        elif tag == "tr" and self._row is not None:
            if self._row:
                self.tables[self._t].append(self._row)
            self._row = None
        elif tag == "table":
            self._t = None

    def handle_data(self, data):
        if self._cell is not None:
            self._cell["text"] += data
        self.text.append(data)


def _run(argv) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def test_three_lights_pack_on_one_lvc_package_by_default():
    """The issue's phrase: one package of the family that runs down to 1.8 V (LVC: 1.65 V
    minimum, ref:nxp-74lvc3g17; HC stops at 2.0 V, ref:nxp-74hc1g14)."""
    code, out, err = _run(["solve", THREE, "--led", "amber", "--supply", "2.7V..1.8V",
                           "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert [p["family"] for p in doc["packages"]] == ["lvc"]
    assert doc["packages"][0]["gates_used"] <= 6
    assert any("hc runs 2-6 V" in w and "lvc" in w for w in doc["warnings"])
    share = doc["lock_share"]
    assert len(share["pairs"]) == 3 and share["packages"][0]["ref"] == "U1"
    assert 0.0 < share["lock_share"] <= 1.0
    assert share["lock_share"] >= max(p["lock_share"] for p in share["pairs"])
    # the remedies are ranked by the share they leave
    left = [r["lock_share"] for r in doc["lock_remedies"]]
    assert left == sorted(left) and left


def test_package_map_uses_the_standard_hex_pins():
    from pulsepick.analysis.multi import LightUse, plan_packages

    plan = plan_packages([LightUse("a", "lvc", False), LightUse("b", "lvc", False)],
                         dusk_gates=2)
    gates = package_map(plan, ["a", "b"])
    # standard 14-pin hex inverter: 1/2, 3/4, 5/6, 9/8, 11/10, 13/12 (common practice)
    assert [(g.in_pin, g.out_pin) for g in gates] == [(1, 2), (3, 4), (5, 6), (9, 8),
                                                      (11, 10), (13, 12)]
    assert HEX_GATE_PINS[3] == (9, 8)
    assert gates[0].role.startswith("dusk detector") and gates[1].role.startswith("dusk")
    assert [g.light for g in gates[2:4]] == [0, 1]
    assert all("tied to ground (pin 7)" in g.role for g in gates[4:])


@pytest.mark.slow
def test_example_solve_report_night_and_day(tmp_path):
    """The footbridge example: solved once (as 'pulsepick solve' does: JSON, console, report,
    buy list), then 'pulsepick night' and 'pulsepick day' on the file."""
    from pulsepick.commands.buildreport import build_pictures
    from pulsepick.commands.solve import (
        _build_extras,
        build_buylist_text,
        build_json,
        build_lines,
        render_build,
    )
    from pulsepick.designfile import build_request, read_design
    from pulsepick.output.render import make_console
    from pulsepick.solve import solve_build
    from pulsepick.workers import on_workers

    design = read_design(EXAMPLE)
    result = on_workers(solve_build, build_request(design), jobs=2)
    extras = _build_extras(design)
    doc = json.loads(json.dumps(build_json(result, **extras)))
    report, buy = tmp_path / "bridge.html", tmp_path / "bridge.csv"
    args = argparse.Namespace(report=str(report), plot=str(tmp_path / "bridge.png"),
                              force=False, json=True)
    written = build_pictures(args, result, build_lines(result, **extras), design)
    assert written == [f"picture written to {tmp_path / 'bridge.png'}",
                       f"report written to {report}"]
    buy.write_text(build_buylist_text(result, **extras), encoding="utf-8")

    names = [li["name"] for li in doc["lights"]]
    assert names == ["upstream", "midspan", "downstream"]
    assert len(doc["packages"]) == 1 and doc["packages"][0]["family"] == "lvc"
    assert doc["packages"][0]["dusk_detector"]
    assert result.lights[2].pick.design.topo.stage == "pulse"
    (rate,) = doc["light_rates"]
    assert rate["light"] == "midspan" and rate["photoresistor"] == "gl5528"
    # slower in the dark than in bright light (a CdS cell's resistance falls with light)
    assert rate["period_typ_s"][0] > rate["period_typ_s"][-1]
    gating = doc["dusk_gating"]
    assert gating["detector_gates"] in (1, 2)
    assert all(h["holds"] for h in gating["lights"])

    # the console: a summary screen, then one screen per light (100 columns; a screen is
    # taken as 50 lines)
    out = io.StringIO()
    render_build(make_console(out, width=100), result, storage=extras.get("storage"))
    lines = out.getvalue().splitlines()
    starts = [k for k, line in enumerate(lines) for n in names
              if line.startswith(f"{n}: ")]
    assert len(starts) == 3 and starts[0] <= 50
    ends = [*starts[1:], next(k for k, line in enumerate(lines) if line == "Cautions")]
    assert all(b - a <= 50 for a, b in zip(starts, ends, strict=True))
    assert "GL5528" in "\n".join(lines[starts[1]:ends[1]])

    # the report, read back
    t = Tables(report.read_text(encoding="utf-8"))
    assert [r[0]["text"] for r in t.tables["lights"]] == names
    pmap = t.tables["package-map"]
    assert [(r[2]["text"], r[3]["text"]) for r in pmap] == [
        ("1", "2"), ("3", "4"), ("5", "6"), ("9", "8"), ("11", "10"), ("13", "12")]
    roles = [r[4]["text"] for r in pmap]
    assert roles[0].startswith("dusk detector")
    assert sum(1 for r in roles if "oscillator" in r) == 3
    assert all("tied to ground" in r for r in roles if r.startswith("unused"))
    shares = {r[0]["text"]: float(r[3]["value"]) for r in t.tables["lock-share"]}
    for p in doc["lock_share"]["pairs"]:
        assert shares[" / ".join(p["lights"])] == pytest.approx(p["lock_share"], abs=1e-12)
    assert len(t.tables["night"]) == 4
    # the buy list in the report and the CSV: identical parts merged, one chip
    rows = read_buylist(buy.read_text(encoding="utf-8-sig"))
    chips = [r for r in rows if r["kind"] == "chip"]
    assert len(chips) == 1 and chips[0]["qty"] == "1"
    assert sum(int(r["qty"]) for r in rows if r["kind"] == "led") == 3
    assert any(r["kind"] == "photoresistor" for r in rows)
    holds = [h for h in gating["lights"] if h["hold"] != "reset"]
    diodes = [r for r in rows if r["kind"] == "diode"]
    assert sum(int(r["qty"]) for r in diodes) >= len(holds) + 1  # + the charge diode
    report_qty = sum(int(r[0]["text"]) for r in t.tables["buylist"])
    assert report_qty == sum(int(r["qty"]) for r in rows)

    code, out, err = _run(["night", EXAMPLE, "--json"])
    assert code == 0, err
    night = json.loads(out)
    assert "3 lights" in night["circuit"] and night["flashes"] > 0

    code, out, err = _run(["day", EXAMPLE, "--json", "--days", "2", "--clamp", "2.5V"])
    assert code == 0, err
    day = json.loads(out)
    # the day load is the held draw plus the chip's typical quiescent current (0.1 uA for
    # LVC, data/parts/logic_families.csv, an estimate), not the lights' running draw
    assert day["day_load_a"] == pytest.approx(gating["held_supply_a"] + 1e-7, rel=1e-6)


def test_single_light_names_the_family_that_covers_the_supply_range():
    """HC's recommended supply is 2.0-6.0 V (ref:nxp-74hc1g14), LVC's from 1.65 V
    (ref:nxp-74lvc3g17): for 2.7 V down to 1.8 V the note names lvc."""
    code, out, err = _run(["solve", "one flash every 2 s", "--family", "hc", "--supply",
                           "2.7V..1.8V", "--json", "--top", "1", "--jobs", "1"])
    assert code == 0, err
    doc = json.loads(out)
    assert ("Family hc runs 2-6 V, not the whole supply range (2.7 V down to 1.8 V); lvc "
            "does (--family lvc).") in doc["explanations"]
