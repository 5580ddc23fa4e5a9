"""The footbridge example end to end: one clock night repeated over several days, the
storage start and the clamp, the lock table's ratios, one designator scheme per build and
the photoresistor light's period at the night's light level."""

from __future__ import annotations

from datetime import UTC, datetime

import numpy as np
import pytest

from pulsepick.analysis.day import NightWindow, simulate_days
from pulsepick.analysis.irradiance import Profile
from pulsepick.parts.diode import get_diode
from pulsepick.parts.panel import get_panel
from pulsepick.parts.storage import custom_storage

FOOT = "examples/footbridge-fireflies.toml"
STEADY = Profile(name="steady", hours=np.array([0.0, 24.0]),
                 irradiance_w_m2=np.array([50.0, 50.0]))


def test_a_dated_clock_night_repeated_gives_every_day_its_daylight():
    # one night 20:45 to 06:15 (a design file's clock times carry the first evening's date)
    w = NightWindow.from_times(datetime(2026, 6, 20, 20, 45, tzinfo=UTC),
                               datetime(2026, 6, 21, 6, 15, tzinfo=UTC))
    store = custom_storage(1000.0, v_rated_v=5.5, leak_a=0.0)
    r = simulate_days(store, get_panel("5v60ma"), get_diode("schottky"), [STEADY], 0.0, w,
                      0.0, days=3, autonomy=False, recovery=False)
    # each day runs 06:15 to 20:45 (14.5 h); before, days 2 and 3 ended at their own dawn
    assert [(row.dawn_s / 3600, row.dusk_s / 3600) for row in r.rows] == [(6.25, 20.75)] * 3
    charges = [row.charge_in_c for row in r.rows]
    assert min(charges) > 0.9 * max(charges) > 0
    # the timeline: first dawn to the last dawn, three days
    assert r.timeline_t_s[-1] - r.timeline_t_s[0] == pytest.approx(3 * 86400.0, abs=1.0)


# --------------------------------------------------------------------------- the example


@pytest.fixture(scope="module")
def built():
    """The example solved once, rendered as 'pulsepick solve' renders it: the console, the
    JSON document and the buy list."""
    import io
    import json

    from pulsepick.commands.solve import (
        _build_extras,
        build_buylist_text,
        build_json,
        build_lines,
        render_build,
    )
    from pulsepick.designfile import build_request, read_design
    from pulsepick.output.export import read_buylist
    from pulsepick.output.render import make_console
    from pulsepick.solve import solve_build
    from pulsepick.workers import on_workers

    design = read_design(FOOT)
    result = on_workers(solve_build, build_request(design), jobs=2)
    extras = _build_extras(design)
    doc = json.loads(json.dumps(build_json(result, **extras)))
    out = io.StringIO()
    render_build(make_console(out, width=200), result, storage=extras.get("storage"),
                 lines=build_lines(result, **extras))
    rows = read_buylist(build_buylist_text(result, **extras))
    return result, doc, out.getvalue(), rows


def _console_refs(text: str, names) -> dict[str, list[str]]:
    """Each light's designators as its parts table shows them (first column)."""
    import re

    out, light = {}, None
    for line in text.splitlines():
        head = next((n for n in names if line.startswith(f"{n}: ")), None)
        if head is not None:
            light, out[head] = head, []
            continue
        if light is None:
            continue
        m = re.match(r"^ ([A-Z]+[0-9]+) {2,}", line)
        if m:
            out[light].append(m.group(1))
        elif line.startswith(("Cautions", "Buy list")):
            light = None
    return out


def test_one_designator_scheme_for_the_whole_build(built):
    import re

    result, doc, console, rows = built
    names = [li.name for li in result.lights]
    shown = _console_refs(console, names)
    in_json = {li["name"]: [p["ref"] for p in li["circuit"]["parts"] if p["kind"] != "chip"]
               for li in doc["lights"]}
    # each light's screen adds its dusk hold diode, a part of the build (doc["parts"])
    holds = {p["ref"]: p["role"].split(":")[0] for p in doc["parts"]
             if "dusk hold diode" in p["role"]}
    assert len(holds) == len(names)
    assert {n: [r for r in refs if r not in holds] for n, refs in shown.items()} == in_json
    assert all(holds[r] == n for n, refs in shown.items() for r in refs if r in holds)
    every = [r for refs in shown.values() for r in refs]
    assert len(every) == len(set(every)) >= 20  # unique across the build
    # the buy list names the same designators for the lights' parts, each once
    bought = [r for row in rows for r in re.split(r"[ ,]+", row["refs"].strip()) if r]
    assert len(bought) == len(set(bought))
    assert set(every) <= set(bought)
    by_ref = {p["ref"]: p for p in doc["parts"]}
    for li in doc["lights"]:
        for p in li["circuit"]["parts"]:
            if p["kind"] != "chip":
                assert by_ref[p["ref"]]["role"] == f"{li['name']}: {p['role']}"
                assert by_ref[p["ref"]]["display"] == p["display"]
    # the photoresistor light: one LDR and its two clamp resistors, no second R1
    mid = result.lights[1].pick.parts
    assert [p.kind for p in mid].count("photoresistor") == 1
    # every designator a light's notes and warnings name is one of its own parts
    for li in result.lights:
        own = {p.ref for p in li.pick.parts}
        for text in (*li.pick.notes, *li.pick.warnings):
            for ref in re.findall(r"\b(?:R|C|D|LED|LDR|U)[0-9]+\b", text):
                assert ref in own, (li.name, ref, text)


def test_photoresistor_light_period_is_the_nights(built):
    from pulsepick.packing import NIGHT_LUX

    result, doc, console, _rows = built
    mid = result.lights[1]
    assert mid.name == "midspan"
    period = float(mid.pick.figures["period_s"])
    (rate,) = doc["light_rates"]
    # one computation: the light's figures are its period at the night's light level, and
    # the rate's curve gives the same at that level
    assert rate["night_lux"] == NIGHT_LUX == rate["lux"][0]
    assert rate["night_period_s"] == period
    assert rate["period_typ_s"][0] == pytest.approx(period, rel=1e-9)
    # the period asked, 4.3 s (examples/footbridge-fireflies.toml): the spread-out search
    # keeps the median build over the night's supplies within the build's period
    # tolerance (12 %); the figure here is the typical chip at the full 2.4 V, a few %
    # off that median (the supply range's share of the aim)
    assert abs(period / 4.3 - 1) <= 0.15
    shown = f"{period:.3g} s"
    assert f"typical period {shown} at 0.01 lx" in console
    # the table of lights gives the median of the light's builds, as a ranking does
    median = float(mid.pick.spread.quantiles["period_s"][1])
    assert abs(median / period - 1) < 0.03
    row = next(ln for ln in console.splitlines() if ln.startswith(" midspan "))
    assert f"{median:.3g} s" in row


def test_lock_table_names_the_ratio_of_the_builds(built):
    result, _doc, console, _rows = built
    names = [li.name for li in result.lights]
    lines = console.splitlines()
    for p in result.lock_share.pairs:
        row = next(ln for ln in lines if ln.startswith(f" {names[p.a]} / {names[p.b]} "))
        cells = row.split()
        assert cells[-2] == p.nearest and cells[-1] == f"{p.share:.1%}"
        if p.share > 0:
            # the nominal ratio lies nearer the named ratio than the next simple one
            from fractions import Fraction

            from pulsepick.analysis.multi import nearest_ratio

            ratio = float(cells[3])
            assert nearest_ratio(ratio) == Fraction(p.nearest.replace(":", "/"))


def test_a_start_above_the_clamp_is_refused_and_the_clamp_is_the_default_start(tmp_path,
                                                                             capsys):
    from pulsepick.cli import main
    from pulsepick.designfile import parse_design, storage_start
    from pulsepick.errors import RequestError

    import pathlib

    text = pathlib.Path(FOOT).read_text(encoding="utf-8")
    assert 'clamp = "2.4V"' in text  # the example's clamp is the one the tool proposes
    bad = text.replace('clamp = "2.4V"', 'clamp = "2.3V"')
    with pytest.raises(RequestError, match="start 2.4V is above the \\[panel\\] clamp 2.3V"):
        parse_design(bad, "b.toml")
    path = tmp_path / "b.toml"
    path.write_text(bad, encoding="utf-8")
    assert main(["night", str(path)]) == 2
    assert "above the [panel] clamp" in capsys.readouterr().err
    # without a start the night starts at the clamp (the storage is held there by day)
    free = text.replace('start = "2.4V"\n', "")
    assert storage_start(parse_design(free, "f.toml")) == "2.4V"


def _readme_commands(word: str) -> list[list[str]]:
    import pathlib
    import shlex

    text = (pathlib.Path(__file__).resolve().parents[1] / "README.md").read_text("utf-8")
    return [shlex.split(line.strip())[1:] for line in text.splitlines()
            if line.strip().startswith(f"pulsepick {word} {FOOT}")]


def test_the_readme_night_and_day_of_the_example_last(capsys):
    """The README's commands for the example, read as a designer would: the night starts
    at the clamp the tool proposes and lasts; the days shown all end in lasting nights."""
    import json

    from pulsepick.analysis.overvoltage import clamp_advice
    from pulsepick.cli import main
    from pulsepick.designfile import panel_part, read_design, storage_part, storage_start
    from pulsepick.parts.diode import get_diode

    design = read_design(FOOT)
    # the proposed clamp for this cell and panel (no clamp given) is the file's clamp and
    # the night's start
    advice = clamp_advice(storage_part(design), panel_part(design), get_diode("schottky"))
    assert advice.proposed_clamp_v == 2.4
    assert storage_start(design) == "2.4V" and design.panel["clamp"] == "2.4V"
    (night,) = _readme_commands("night")
    assert main([*night, "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["v_start_v"] == 2.4 and doc["lasts_the_night"]
    assert doc["v_end_v"] > doc["v_stop_v"] + 0.1  # some to spare at dawn
    (day,) = _readme_commands("day")
    main([*day, "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert doc["full_v"] == 2.4
    assert len(doc["days"]) == 4 and doc["nights_lasted"] == 4
    # the season the example states: the night of 20 June at 52.1° N
    assert doc["night"]["given"] != "clock" and doc["days"][0]["night_s"] < 6 * 3600


def test_the_energy_budget_sets_the_night_against_the_storage(built):
    # 25 F from 2.4 V down to 1.9 V is 12.5 C (Q = C dV), against the 16.5 C a 12 h night
    # (the fixture gives no night) needs at the lights' draw
    _, _, text, _ = built
    flat = " ".join(text.split())
    assert "storage gives 12.5 C from 2.40 V to 1.90 V, 76% of that" in flat


def test_a_storage_short_of_the_night_is_said_in_the_solve():
    from types import SimpleNamespace

    from pulsepick.commands.solve_build_report import storage_budget_text
    from pulsepick.parts.storage import get_storage

    req = SimpleNamespace(supply_v=2.6, supply_end_v=1.8)
    result = SimpleNamespace(request=SimpleNamespace(lights=(SimpleNamespace(request=req),)))
    text = storage_budget_text(result, get_storage("5f-2v7"), 40.0)
    # 5 F x 0.8 V = 4 C against 40 C: a tenth
    assert "the 5 F storage gives 4 C from 2.60 V to 1.80 V, 10% of that" in text
    assert "--size sizes it" in text


def test_each_light_screen_lists_its_dusk_hold_diode(built):
    # the hold diodes are numbered with the build's parts (as the buy list numbers them)
    # and shown on the screen of the light each one holds
    result, _, text, rows = built
    lines = text.splitlines()
    for li in result.lights:
        start = next(k for k, line in enumerate(lines) if line.startswith(f"{li.name}: "))
        end = next(k for k in range(start + 1, len(lines)) if not lines[k].strip()
                   and k > start + 3)
        screen = " ".join(" ".join(lines[start:end + 12]).split())
        assert "dusk hold diode" in screen
    assert any("D4" in row["refs"].split() for row in rows)
