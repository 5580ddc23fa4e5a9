"""``pulsepick solve`` on the command line: report, JSON, buy list, errors, exit codes."""

from __future__ import annotations

import json

import pytest

from pulsepick.cli import main
from pulsepick.output.export import read_buylist

# Small searches keep these tests quick: one core, one stage, few builds.
QUICK = ["--cores", "timer555", "--stages", "direct", "--top", "1", "--builds", "200",
         "--jobs", "1"]


def test_report_at_100_columns_without_colour(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    code = main(["solve", "flash every 2.5 s for 40 ms, 5 mA peak", *QUICK, "--detail"])
    out, err = capsys.readouterr()
    assert code == 0 and err == ""
    assert "\x1b[" not in out
    assert max(len(line) for line in out.splitlines()) <= 100
    for text in ("Request and assumptions", "Ranked circuits", "#1", "U1", "R1", "C1", "LED1",
                 "fast engine", "reference", "spread over 200 builds", "Cautions",
                 "not a safety, navigation or warning light"):
        assert text in out, text
    assert "default" in out  # defaults are shown as such


def test_default_report_is_short_and_detail_shows_one(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    monkeypatch.delenv("COLUMNS", raising=False)
    args = ["solve", "flash every 2.5 s for 40 ms, 5 mA peak", "--cores", "timer555",
            "--top", "3", "--builds", "200", "--jobs", "1"]
    assert main(args) == 0
    short = capsys.readouterr().out
    assert main([*args, "--detail"]) == 0
    full = capsys.readouterr().out
    assert main([*args, "--detail", "--pick", "2"]) == 0
    one = capsys.readouterr().out
    assert len(short.splitlines()) <= 60 < len(full.splitlines())
    assert "--detail lists every assumption" in short and "Request and assumptions" in full
    assert full.count("figures of") + full.count("figures at") == 3
    assert one.count("figures of") + one.count("figures at") == 1 and "#2  " in one
    assert "schematic: timer555" in one


def test_the_summary_assesses_in_full_only_the_circuit_it_shows(capsys, monkeypatch):
    # the text summary shows one circuit's spread sources: only that one gets them (and
    # its corners); --detail, --json and the pictures get every circuit in full
    import importlib
    from argparse import Namespace

    from pulsepick.commands import solve as solve_cmd
    from pulsepick.solve import assessment

    asked = []
    real = assessment.assess

    def spy(result, *, runner=None, detail=None):
        asked.append(detail)
        return real(result, runner=runner, detail=detail)

    monkeypatch.setattr(importlib.import_module("pulsepick.solve"), "assess", spy)
    monkeypatch.setenv("NO_COLOR", "1")
    args = ["solve", "flash every 2.5 s for 40 ms, 5 mA peak", "--cores", "timer555",
            "--top", "3", "--builds", "200", "--jobs", "1"]
    for extra in ([], ["--pick", "2"], ["--pick", "9"], ["--detail"], ["--json"]):
        assert main([*args, *extra]) == 0
        out = capsys.readouterr().out
        if not extra or extra[0] == "--pick":
            assert "spread mostly from" in " ".join(out.split())
    assert asked == [(1,), (2,), (3,), None, None]
    found = Namespace(candidates=(1, 2))
    base = dict(detail=False, json=False, plot=None, report=None, pick=1)
    assert solve_cmd._shown_in_full(Namespace(**base), found) == (1,)
    assert solve_cmd._shown_in_full(Namespace(**{**base, "report": "r.html"}), found) is None
    assert solve_cmd._shown_in_full(Namespace(**{**base, "plot": "p.png"}), found) is None
    assert solve_cmd._shown_in_full(Namespace(**base), Namespace(candidates=())) is None


def test_json_is_plain_and_complete(capsys):
    code = main(["solve", "--every", "3s", "--flash", "40ms", "--peak", "5mA", "--json",
                 "--supply", "2.7V..1.8V", "--family", "lvc", "--cores", "schmitt-steered",
                 "--stages", "direct", "--top", "1", "--builds", "200", "--jobs", "1"])
    out, _ = capsys.readouterr()
    assert code == 0
    doc = json.loads(out)
    c = doc["candidates"][0]
    assert c["rank"] == 1 and c["core"] == "schmitt-steered" and c["stage"] == "direct"
    assert c["figures"]["period_s"] == pytest.approx(3.0, rel=0.1)
    assert c["reference_figures"]["period_s"] == pytest.approx(c["figures"]["period_s"],
                                                               rel=0.01)
    assert len(c["drift"]) >= 2 and c["drift"][0]["supply_v"] == pytest.approx(2.7)
    assert doc["assumptions"]["supply_end_v"] == 1.8
    assert any("safety" in t for t in doc["cautions"])


def test_buylist_written_and_refused_when_it_exists(capsys, tmp_path):
    path = tmp_path / "garden.csv"
    code = main(["solve", "one flash every 3 s", *QUICK, "--buylist", str(path)])
    out, _ = capsys.readouterr()
    assert code == 0 and "written to" in out
    rows = read_buylist(path.read_text(encoding="utf-8-sig"))
    assert rows and all("one flash every 3 s" in r["request"] for r in rows)
    before = path.read_text(encoding="utf-8")
    code = main(["solve", "one flash every 3 s", *QUICK, "--buylist", str(path)])
    out, err = capsys.readouterr()
    assert code == 2
    assert err.count("\n") == 1 and "--force" in err and out == ""
    assert path.read_text(encoding="utf-8") == before
    code = main(["solve", "one flash every 3 s", *QUICK, "--buylist", str(path), "--force"])
    capsys.readouterr()
    assert code == 0


def test_bad_phrase_is_one_line_quoting_it(capsys):
    code = main(["solve", "one flash every 3 s, purple please"])
    out, err = capsys.readouterr()
    assert code == 2 and out == ""
    assert err.count("\n") == 1
    assert '"purple please"' in err and "phrases that work" in err


def test_nothing_to_offer_exits_2_with_explanation(capsys):
    code = main(["solve", "one flash every 3 s", "--led", "white", "--supply", "1.8V",
                 "--family", "lvc", "--stages", "direct", "--jobs", "1"])
    out, err = capsys.readouterr()
    assert code == 2
    assert "Nothing can be offered" in out and "needs about" in out
    assert "Nearest circuit found" in out
    assert err.count("\n") == 1
    assert err.startswith('pulsepick: error: nothing can be offered for "one flash every 3 s"')


@pytest.mark.parametrize("extra, reason", [
    # white InGaN needs about 2.5 V to show (data/parts/leds.csv estimate)
    (["--supply", "1.2V", "--led", "white"], "white (InGaN, 5 mm) LED needs about"),
    # no chip of ours runs at 20 V: CD40106B to 18 V (ref:onsemi-mc14106b), CMOS 555 to 15 V
    (["--supply", "20V", "--family", "any"], "outside their supply range"),
])
def test_nothing_offered_has_one_stderr_line(capsys, extra, reason):
    code = main(["solve", "every 3 s", *extra, "--jobs", "1"])
    out, err = capsys.readouterr()
    assert code == 2
    assert "What cannot be met exactly" in out and reason in out
    assert err.count("\n") == 1 and err.startswith("pulsepick: error: nothing can be offered")
    assert reason in err


def test_infeasible_but_offered_exits_0(capsys):
    code = main(["solve", "every 3 s, 500 mA peak", *QUICK])
    out, err = capsys.readouterr()
    assert code == 0 and err == ""
    assert "What cannot be met exactly" in out and "500 mA" in out
    assert "the LED's rating is the limit" in out


def _report(capsys, args) -> str:
    code = main(["solve", *args])
    out, err = capsys.readouterr()
    assert code == 0 and err == "", err
    return out


def test_report_wraps_with_hanging_indents_and_plain_words(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    out = _report(capsys, ["flash every 2.5 s for 40 ms", "--supply", "2.7V..1.8V",
                           "--family", "lvc", "--cores", "schmitt-steered", "--stages",
                           "direct", "--no-buffered", "--top", "1", "--builds", "200",
                           "--jobs", "1", "--detail"])
    lines = out.splitlines()
    assert max(len(line) for line in lines) <= 100
    assert "chip_thresholds" not in out and "chip thresholds" in out
    # the supply range is in the spread, and the header says so
    assert "spread over 200 builds (seed 0, -20..50 °C, supply 1.8..2.7 V)" in out
    assert "P50 of the LED peak" in out
    # a warning that wraps carries on under a hanging indent, never at the margin
    start = lines.index("  warnings and notes:")
    block = []
    for line in lines[start + 1:]:
        if not line.strip():
            break
        block.append(line)
    assert block and all(ln.startswith("  - ") or ln.startswith("    ") for ln in block)
    assert any(ln.startswith("    ") for ln in block)  # at least one wrapped warning
    # a supply range is a storage that droops: the supercapacitor caution applies
    assert "supercapacitor can deliver amps" in out
    assert "not a safety, navigation or warning light" in out


def test_steady_supply_has_no_supercap_caution_and_marks_given_ranges(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    out = _report(capsys, ["one flash every 3 s", *QUICK, "--cap-range", "10n..100u", "--detail"])
    assert "supercapacitor" not in out
    assert "not a safety, navigation or warning light" in out
    assert "Outdoor wiring stays at low voltage" in out
    row = next(line for line in out.splitlines() if line.lstrip().startswith("capacitors"))
    assert "10 nF .. 100 µF" in row and row.rstrip().endswith("given")
    row = next(line for line in out.splitlines() if line.lstrip().startswith("resistors"))
    assert row.rstrip().endswith("default")


def test_reversed_cap_range_is_one_line(capsys):
    code = main(["solve", "every 3 s", "--cap-range", "1u..1n"])
    out, err = capsys.readouterr()
    assert code == 2 and out == "" and err.count("\n") == 1
    assert "--cap-range 1u..1n: write the range from small to large, e.g. 1n..1m" in err


def test_long_periods_in_minutes(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    out = _report(capsys, ["one flash every 30 min", "--cores", "schmitt", "--stages", "pulse",
                           "--top", "1", "--builds", "100", "--jobs", "1"])
    assert "Period beyond what leakage allows: the period wanted is 30 min" in out
    ranked = out[out.index("Ranked circuits"):out.index("#1 ")]
    assert " min " in ranked and "ks" not in ranked


def test_crossing_current_is_labelled_and_can_be_given(capsys):
    args = ["solve", "one flash every 3 s", "--family", "hc", "--cores", "schmitt",
            "--stages", "direct", "--top", "1", "--builds", "100", "--jobs", "1"]
    out = _report(capsys, args[1:])
    assert "crossing current of the Schmitt gate (#1): ESTIMATE" in out
    assert out.count("ESTIMATE") == 1  # once, in the assumptions block
    assert main([*args, "--cross-current", "15uA", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["assumptions"]["crossing_current"].startswith("measured: 15 µA")
    assert doc["candidates"][0]["crossing_current"].startswith("measured: 15 µA")
    assert doc["assumptions"]["chip_measured"]["cross_current_a"] == pytest.approx(15e-6)


def test_crossing_current_estimate_is_said_once_for_every_candidate(capsys):
    out = _report(capsys, ["one flash every 3 s", "--family", "hc", "--cores", "schmitt",
                           "--stages", "direct,pulse", "--top", "3", "--builds", "100",
                           "--jobs", "1"])
    line = " ".join(out[out.index("crossing current"):].split("Cautions")[0].split())
    # one label and one explanation, each candidate's own figure beside its rank
    assert line.startswith("crossing current of the Schmitt gate (ESTIMATE): #1 ")
    flat = " ".join(out.split())
    assert flat.count("ESTIMATE") == 1 and flat.count("no published figure") == 1
    assert all(f"#{rank} " in line for rank in (1, 2, 3))


def test_plot_and_report_are_written(capsys, tmp_path):
    pytest.importorskip("matplotlib")
    png, html = tmp_path / "garden.png", tmp_path / "garden.html"
    code = main(["solve", "one flash every 3 s", *QUICK, "--plot", str(png), "--report",
                 str(html)])
    out, _ = capsys.readouterr()
    assert code == 0 and str(png) in out and str(html) in out
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    text = html.read_text(encoding="utf-8")
    assert text.lstrip().lower().startswith("<!doctype html") and "one flash every 3 s" in text
    # an existing file is refused before the search, and --force replaces it
    code = main(["solve", "one flash every 3 s", *QUICK, "--report", str(html)])
    _, err = capsys.readouterr()
    assert code == 2 and "--force" in err and err.count("\n") == 1
    assert main(["solve", "one flash every 3 s", *QUICK, "--report", str(html),
                 "--force"]) == 0


def test_two_worker_processes_give_the_same_answer(capsys):
    args = ["solve", "flash every 2 s for 30 ms", "--cores", "timer555,schmitt-steered",
            "--stages", "direct", "--top", "2", "--builds", "100", "--json"]
    assert main([*args, "--jobs", "1"]) == 0
    one = json.loads(capsys.readouterr().out)
    assert main([*args, "--jobs", "2"]) == 0
    two = json.loads(capsys.readouterr().out)
    strip = [{k: c[k] for k in ("core", "stage", "parts", "figures", "reference_figures")}
             for c in one["candidates"]]
    assert strip == [{k: c[k] for k in ("core", "stage", "parts", "figures",
                                        "reference_figures")} for c in two["candidates"]]


def test_help_shows_phrase_and_flag_examples(capsys):
    assert main(["solve", "--help"]) == 0
    out = capsys.readouterr().out
    assert 'pulsepick solve "one flash every 3 s"' in out
    assert "--every 3s --flash 40ms --peak 5mA" in out
    assert "20 flashes a minute" in out


def test_bad_options_are_one_line(capsys):
    code = main(["solve", "every 3 s", "--family", "ttl", "--supply", "1.8V..2.7V"])
    _, err = capsys.readouterr()
    assert code == 2 and err.count("\n") == 1
    assert "--family" in err and "full to the end" in err
