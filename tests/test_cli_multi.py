"""Several lights and design files on the command line: solve, buy list, night, bad input."""

import json

import pytest

from pulsepick.cli import main
from pulsepick.output.export import read_buylist

DESIGN = """
name = "two markers"
[build]
family = "lvc"
top = 2
builds = 200
[storage]
part = "5f-2v7"
start = "2.6V"
stop_at = "1.8V"
[night]
dusk = "18:30"
dawn = "07:10"
[[light]]
name = "gate"
blink = "one flash every 3 s, 40 ms long"
[[light]]
name = "shed"
blink = "one flash every 4.6 s, 40 ms long"
"""


def _error_line(capsys) -> str:
    err = capsys.readouterr().err
    assert err.count("\n") == 1, err
    return err


def test_too_many_lights_for_one_package_explains_the_count(capsys):
    # refused before any solving: 4 oscillators + 4 buffers + the dusk detector = 9 > 6
    code = main(["solve", "four lights: every 2 s, every 3 s, every 5 s, every 7 s",
                 "--family", "hc", "--buffered", "--max-packages", "1"])
    assert code == 2
    err = _error_line(capsys)
    assert ("4 lights need 8 gates (4 oscillators, 4 buffers) plus 1 for the dusk detector; "
            "one 6-gate package holds 6") in err


def test_count_and_period_mismatch_and_single_light_options(capsys):
    assert main(["solve", "three lights: every 2 s, every 3 s"]) == 2
    assert "says 3 lights but gives 2 periods" in _error_line(capsys)
    assert main(["solve", "one flash every 3 s", "--spread-out"]) == 2
    assert "--spread-out applies to several lights" in _error_line(capsys)


@pytest.mark.parametrize("text, expect", [
    ('name = "x"\n[[light]]\nblink = "every 3 s\n', "line 3"),
    (DESIGN.replace('name = "shed"', 'nmae = "shed"'),
     "unknown key 'nmae' in [[light]] 2; allowed: name, blink"),
    (DESIGN.replace('blink = "one flash every 4.6 s, 40 ms long"', ""),
     "[[light]] 2 has no 'blink' (required)"),
])
def test_bad_design_files_are_one_line(tmp_path, capsys, text, expect):
    path = tmp_path / "bad.toml"
    path.write_text(text, encoding="utf-8")
    assert main(["solve", str(path)]) == 2
    assert expect in _error_line(capsys)
    assert main(["night", str(path)]) == 2
    assert expect in _error_line(capsys)


def test_two_lights_json_and_one_buylist(tmp_path, capsys):
    """About 2.5 s: two solver runs and the reference check of the two circuits."""
    out = tmp_path / "build.csv"
    code = main(["solve", "two lights: every 2 s, every 3.05 s, 50 ms each", "--family", "hc",
                 "--top", "2", "--builds", "200", "--jobs", "1", "--json",
                 "--buylist", str(out)])
    assert code == 0
    doc = json.loads(capsys.readouterr().out)
    # asked 2 s : 3.05 s = 0.656, 1.6 % off 2:3; the solved circuits' ratio band reaches it
    (risk,) = doc["lock_risks"]
    assert risk["at_risk"] and risk["nearest"] == "2:3"
    assert risk["band_p5"] < risk["ratio"] < risk["band_p95"]
    assert doc["gates"]["oscillators"] == 2
    assert len(doc["packages"]) == 1 and doc["packages"][0]["dusk_detector"]
    assert doc["total_supply_avg_a"] == pytest.approx(
        sum(li["circuit"]["figures"]["supply_avg_a"] for li in doc["lights"]), rel=1e-12)
    rows = read_buylist(out.read_text(encoding="utf-8-sig"))
    assert rows[0]["made_by"].startswith("pulsepick ")
    chips = [r for r in rows if r["kind"] == "chip"]
    assert len(chips) == 1 and chips[0]["qty"] == "1"
    leds = [r for r in rows if r["kind"] == "led"]
    assert sum(int(r["qty"]) for r in leds) == 2
    # every part of both lights is in the list once, quantities summed
    n_parts = sum(len([p for p in li["circuit"]["parts"] if p["kind"] != "chip"])
                  for li in doc["lights"])
    # ... plus one 100 nF decoupling capacitor per package (common practice)
    n_parts += len(doc["packages"])
    assert sum(1 for r in rows if "decoupling" in r["notes"]) == 1
    # ... plus one dusk hold diode per light (pulsepick.analysis.gating)
    holds = [h for h in doc["dusk_gating"]["lights"] if h["hold"] != "reset"]
    assert len(holds) == 2
    assert sum(int(r["qty"]) for r in rows if r["kind"] != "chip") == n_parts + len(holds)
    # a steady supply and no storage named: no supercapacitor caution
    assert not any("supercapacitor" in t for t in doc["cautions"])
    assert any("not a safety" in t for t in doc["cautions"])


def test_design_file_with_storage_gets_the_supercap_caution(tmp_path, capsys):
    from pulsepick.analysis.cautions import NOT_A_SAFETY_LIGHT, POLARITY_AND_SHORTS

    path = tmp_path / "markers.toml"
    path.write_text(DESIGN, encoding="utf-8")
    assert main(["solve", str(path), "--jobs", "1", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert POLARITY_AND_SHORTS in doc["cautions"] and NOT_A_SAFETY_LIGHT in doc["cautions"]


def test_build_checks_pictures_first_and_reports_nothing_on_stderr(capsys, tmp_path):
    # a build takes --report and --plot (pulsepick.commands.buildreport); a bad file is refused
    # before any solving
    assert main(["solve", "two lights: every 2 s, every 3 s", "--report",
                 str(tmp_path / "x.txt")]) == 2
    assert "--report" in _error_line(capsys)
    # a white LED never shows on 1.2 V (data/parts/leds.csv estimate): nothing to offer
    code = main(["solve", "two lights: every 2 s, every 3 s", "--led", "white", "--supply",
                 "1.2V", "--stages", "direct", "--jobs", "1"])
    assert code == 2
    out, err = capsys.readouterr()
    assert "nothing can be offered" in out
    assert err.count("\n") == 1 and err.startswith("pulsepick: error: nothing can be offered")


def test_night_with_a_design_file(tmp_path, capsys):
    path = tmp_path / "markers.toml"
    path.write_text(DESIGN, encoding="utf-8")
    assert main(["night", str(path), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert "2 lights" in doc["circuit"]
    assert doc["storage"]["key"] == "5f-2v7" and doc["v_start_v"] == 2.6
    assert doc["night"]["dusk"] == "18:30" and doc["night"]["dawn"] == "07:10"
    assert doc["flashes"] > 0 and doc["runtime_s"] > 0


def test_night_from_solve(capsys):
    code = main(["night", "--from-solve", "one flash every 3 s", "--family", "lvc",
                 "--storage", "5f-2v7", "--start", "2.6V", "--stop-at", "1.8V",
                 "--night", "12h", "--json"])
    assert code == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["circuit"].endswith("(solver pick 1)") and "lvc" in doc["circuit"]
    # the flash count follows the circuit's period over the runtime (3 s asked)
    assert doc["flashes"] == pytest.approx(doc["runtime_s"] / 3.0, rel=0.15)
    assert main(["night", "--from-solve", "one flash every 3 s", "--r", "1M",
                 "--storage", "5f-2v7", "--night", "12h"]) == 2
    assert "give the circuit one way" in _error_line(capsys)


def test_build_report_as_text():
    """The terminal report of a build, rendered at 100 columns (two solver runs, ~1.5 s)."""
    import io

    from rich.console import Console

    from pulsepick.commands.solve import render_build
    from pulsepick.request import make_build_request, split_lights
    from pulsepick.solve import solve_build

    breq = make_build_request(split_lights("two lights: every 2 s, every 3.05 s, 50 ms each"),
                              family="hc", top=2)
    result = solve_build(breq, jobs=1, assess_picks=False)
    buf = io.StringIO()
    render_build(Console(file=buf, width=100, color_system=None), result)
    text = buf.getvalue()
    assert all(len(line) <= 100 for line in text.splitlines())
    for words in ("Lights", "Packages", "2 lights need 4 gates", "Lock risk", "light 1 / light 2",
                  "Energy budget", "Cautions"):
        assert words in text
