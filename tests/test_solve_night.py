"""The ranking's night column: each circuit run through the night on the given storage."""

from __future__ import annotations

import json

import pytest

from pulsepick.cli import main

DEMO = ["solve", "one flash every 3 s, 40 ms long", "--led", "red", "--supply", "2.7V..1.8V",
        "--family", "timer555", "--stages", "direct", "--top", "1"]


def _doc(capsys, *extra):
    assert main([*DEMO, *extra, "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_a_large_storage_lasts_and_a_small_one_goes_dark(capsys):
    big = _doc(capsys, "--storage", "5f-2v7")
    c = big["candidates"][0]
    assert c["lasts_night"] is True and c["night"]["dark_after_s"] is None
    assert c["night"]["lit_s"] == pytest.approx(12 * 3600.0)
    assert 1.8 < c["night"]["v_end_v"] < 2.7
    plan = big["assumptions"]["night"]
    assert plan["storage"] == "5f-2v7" and plan["night_s"] == 12 * 3600.0
    assert plan["night_given"] is False and plan["v_stop_v"] == pytest.approx(1.8)
    small = _doc(capsys, "--storage", "0.2F", "--night", "10h")
    c = small["candidates"][0]
    assert c["lasts_night"] is False
    assert 0 < c["night"]["dark_after_s"] < 10 * 3600.0
    assert c["night"]["v_end_v"] == pytest.approx(1.8, abs=0.01)
    assert c["runs_at_end_supply"] is True  # runs at 1.8 V, but the charge runs out first


def test_the_verdict_is_the_night_commands(capsys):
    doc = _doc(capsys, "--storage", "0.2F", "--night", "10h")
    verdict = doc["candidates"][0]["night"]
    assert main(["night", "--from-solve", "one flash every 3 s, 40 ms long", "--led", "red",
                 "--family", "timer555", "--storage", "0.2F", "--start", "2.7V", "--stop-at",
                 "1.8V", "--night", "10h", "--json"]) == 0
    night = json.loads(capsys.readouterr().out)
    # the night's solve offers the same first circuit (the 555 lighting its LED directly)
    assert night["circuit"].startswith("timer555 + direct (from supply)")
    assert verdict["lit_s"] == pytest.approx(night["runtime_s"], rel=0.005)
    assert verdict["stop_reason"] == night["stop_reason"]


def test_without_a_storage_the_column_says_so(capsys, monkeypatch):
    doc = _doc(capsys)
    c = doc["candidates"][0]
    assert c["lasts_night"] is None and c["night"] is None
    assert c["runs_at_end_supply"] is True
    assert doc["assumptions"]["night"] is None
    monkeypatch.setenv("NO_COLOR", "1")
    assert main(DEMO) == 0
    text = capsys.readouterr().out
    row = next(line for line in text.splitlines() if line.lstrip().startswith("1 "))
    assert row.rstrip().endswith("n/a")
    assert "night: n/a without a storage; --storage" in " ".join(text.split())
    assert main([*DEMO, "--storage", "0.2F", "--night", "10h"]) == 0
    text = capsys.readouterr().out
    row = next(line for line in text.splitlines() if line.lstrip().startswith("1 "))
    assert row.split()[-1].count("h") == 1 and row.split()[-2] == "dark"
    flat = " ".join(text.split())
    assert "over a 10 h night, with the storage's settled leakage" in flat
    assert "on the storage: dark " in flat


@pytest.mark.parametrize("extra, words", [
    (["--supply", "3V", "--storage", "1F"], "--storage needs a supply range"),
    (["--night", "10h"], "--night applies with --storage"),
    (["--supply", "5V..3V", "--storage", "1F"], "above its rating 2.7 V"),
    (["--storage", "1F", "--night", "30h"], "at most 24 h"),
])
def test_bad_night_options(extra, words, capsys):
    argv = [a for a in DEMO if a not in ("--supply", "2.7V..1.8V")] if "--supply" in extra \
        else DEMO
    assert main([*argv, *extra]) == 2
    assert words in capsys.readouterr().err


def test_chip_spread_option(capsys):
    assert main(["solve", "one flash every 3 s", "--family", "hc", "--cores",
                 "schmitt-steered", "--stages", "direct", "--buffered", "--top", "1",
                 "--chip-spread", "uniform", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    c = doc["candidates"][0]
    assert doc["assumptions"]["chip_spread"] == "uniform"
    assert c["spread"]["chip_spread"] == "uniform"
    # the solver aims at the uniform reading's median build too
    assert abs(c["median_period_s"] / 3.0 - 1.0) < 0.05
    assert main(["bands", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--rs", "470",
                 "--builds", "200", "--chip-spread", "triangle", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["chip_spread"] == "triangle"
    for cmd in (["solve", "every 3 s"], ["check", "--core", "schmitt", "--r", "2M2", "--c",
                                        "1u", "--stage", "direct", "--rs", "470"]):
        assert main([*cmd, "--chip-spread", "flat"]) == 2
        assert "--chip-spread 'flat': accepted normal, uniform, triangle" in \
            capsys.readouterr().err
