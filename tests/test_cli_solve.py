"""``pulsepick solve`` on the command line: report, JSON, buy list, errors, exit codes."""

from __future__ import annotations

import json

import pytest

from pulsepick.cli import main
from pulsepick.export import read_buylist

# Small searches keep these tests quick: one core, one stage, few builds.
QUICK = ["--cores", "timer555", "--stages", "direct", "--top", "1", "--builds", "200",
         "--jobs", "1"]


def test_report_at_100_columns_without_colour(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    code = main(["solve", "flash every 2.5 s for 40 ms, 5 mA peak", *QUICK])
    out, err = capsys.readouterr()
    assert code == 0 and err == ""
    assert "\x1b[" not in out
    assert max(len(line) for line in out.splitlines()) <= 100
    for text in ("Request and assumptions", "Ranked circuits", "#1", "U1", "R1", "C1", "LED1",
                 "fast engine", "reference", "spread over 200 builds", "Cautions",
                 "not a safety, navigation or warning light"):
        assert text in out, text
    assert "default" in out  # defaults are shown as such


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
    comments, rows = read_buylist(path.read_text(encoding="utf-8"))
    assert "one flash every 3 s" in comments[0] and rows
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
    out, _ = capsys.readouterr()
    assert code == 2
    assert "Nothing can be offered" in out and "needs about" in out
    assert "Nearest circuit found" in out


def test_infeasible_but_offered_exits_0(capsys):
    code = main(["solve", "every 3 s, 500 mA peak", *QUICK])
    out, _ = capsys.readouterr()
    assert code == 0 and "What cannot be met exactly" in out and "500 mA" in out


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
    with pytest.raises(SystemExit) as info:
        main(["solve", "--help"])
    assert info.value.code == 0
    out = capsys.readouterr().out
    assert 'pulsepick solve "one flash every 3 s"' in out
    assert "--every 3s --flash 40ms --peak 5mA" in out
    assert "20 flashes a minute" in out


def test_bad_options_are_one_line(capsys):
    code = main(["solve", "every 3 s", "--family", "ttl", "--supply", "1.8V..2.7V"])
    _, err = capsys.readouterr()
    assert code == 2 and err.count("\n") == 1
    assert "--family" in err and "full to the end" in err
