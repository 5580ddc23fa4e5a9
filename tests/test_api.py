"""The Python API (``import pulsepick as pp``): same content as --json, options as keywords."""

from __future__ import annotations

import doctest
import json

import pytest

import pulsepick as pp
from pulsepick.cli import main
from pulsepick.errors import RequestError
from pulsepick.output.render import hint_style

SOLVE = dict(cores="timer555", stages="direct", top=1, builds=200, jobs=1)
SOLVE_ARGV = ["--cores", "timer555", "--stages", "direct", "--top", "1", "--builds", "200",
              "--jobs", "1"]
CHECK = dict(core="schmitt", r="2M2", c="1u", stage="pulse", cp="22u", rs=47, supply="3V")
CHECK_ARGV = ["--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse", "--cp",
              "22u", "--rs", "47", "--supply", "3V"]


def _cli_json(capsys, argv: list[str]) -> dict:
    """The command's --json document, its hints worded as the API words them
    (``buffered=True`` for ``--buffered``)."""
    with hint_style("api"):
        assert main([*argv, "--json"]) == 0
    out, _ = capsys.readouterr()
    return json.loads(out)


def _without_timing(doc: dict) -> dict:
    doc = dict(doc)
    doc["search"] = {k: v for k, v in doc["search"].items() if k != "search_s"}
    return doc


def test_doctests_run():
    import pulsepick.api
    import pulsepick.output.export

    for module in (pulsepick.api, pulsepick.output.export):
        outcome = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
        assert outcome.attempted >= 4 and outcome.failed == 0, module.__name__


def test_solve_matches_the_json_and_reads_si_floats(capsys):
    r = pp.solve("one flash every 3 s", **SOLVE)
    cli = _cli_json(capsys, ["solve", "one flash every 3 s", *SOLVE_ARGV])
    assert _without_timing(r.to_dict()) == _without_timing(cli)
    # the same blink as SI floats: 3 s, 50 ms, 5 mA (the phrase's defaults, see --help)
    floats = pp.solve(every=3.0, flash=0.05, peak=0.005, **SOLVE)
    assert floats.to_dict()["request"]["period_s"] == 3.0
    assert floats.to_dict()["request"]["peak_a"] == 0.005
    assert floats.to_dict()["request"]["flash_s"] == 0.05
    assert repr(r).startswith("<pulsepick solve one flash every 3 s: 1 circuit; #1 timer555")
    assert r.result.candidates[0].design.topo.core == "timer555"


def test_solve_gives_every_candidate_in_full_as_the_json_does(capsys):
    # the API's result is the whole --json document: every candidate's spread with its
    # variance shares and corners, not only the one a text summary would show
    kw = {**SOLVE, "top": 3, "stages": "direct,pulse"}
    argv = ["--cores", "timer555", "--stages", "direct,pulse", "--top", "3", "--builds",
            "200", "--jobs", "1"]
    r = pp.solve("one flash every 3 s", **kw)
    cli = _cli_json(capsys, ["solve", "one flash every 3 s", *argv])
    assert _without_timing(r.to_dict()) == _without_timing(cli)
    assert len(r.result.candidates) >= 2
    for c in r.result.candidates:
        assert c.spread.shares and c.spread.corners and c.spread.corner_count > 0


def test_solve_range_as_pair():
    r = pp.solve("one flash every 3 s", supply=(2.7, 1.8), **SOLVE)
    doc = r.to_dict()["assumptions"]
    assert doc["supply_v"] == 2.7 and doc["supply_end_v"] == 1.8


def test_repeated_solve_reuses_the_answer():
    a = pp.solve("one flash every 3 s", **SOLVE)
    b = pp.solve("one flash every 3 s", **SOLVE)
    assert b.result is a.result
    c = pp.solve("one flash every 3 s", cache=False, **SOLVE)
    assert c.result is not a.result
    assert _without_timing(c.to_dict()) == _without_timing(a.to_dict())


def test_check_night_bands_values_match_the_json(capsys):
    cases = [
        (pp.check(**CHECK), ["check", *CHECK_ARGV]),
        (pp.night(**CHECK, storage="5f-2v7", night="12h"),
         ["night", *CHECK_ARGV, "--storage", "5f-2v7", "--night", "12h"]),
        (pp.bands(core="schmitt", r="2M2", c="1u", rs=470, builds=200),
         ["bands", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--rs", "470", "--builds",
          "200"]),
        (pp.values("4k7"), ["values", "4k7"]),
        (pp.day(storage="5f-2v7", panel="3v20ma", weather="clear,overcast"),
         ["day", "--storage", "5f-2v7", "--panel", "3v20ma", "--weather", "clear,overcast"]),
    ]
    for r, argv in cases:
        assert r.to_dict() == _cli_json(capsys, argv), argv[0]
        assert repr(r).startswith(f"<pulsepick {argv[0]}") and repr(r).endswith(">")


def test_check_known_figure():
    # 555 astable: period = ln 2 (RA + 2 RB) C (ref:maplin-555-notes)
    r = pp.check(core="timer555", ra="1M", rb="22k", c="2u2", stage="direct", lit="low",
                 rs=220, supply=3.0)
    assert r.to_dict()["period_s"] == pytest.approx(0.6931 * (1e6 + 2 * 22e3) * 2.2e-6,
                                                     rel=0.05)
    assert r.result.engine in ("fast", "reference")


def test_unknown_keyword_is_refused():
    with pytest.raises(RequestError, match=r"unknown keyword colour; accepted: .*every"):
        pp.solve("every 3 s", colour="red")
    with pytest.raises(RequestError, match="unknown keyword"):
        pp.check(core="schmitt", wires=3)
    # files are written from the returned result, never as a side effect of a keyword
    for word in ("buylist", "plot", "report", "json"):
        with pytest.raises(RequestError, match=f"unknown keyword {word}"):
            pp.solve("every 3 s", **{word: "x"})


def test_to_frame():
    pd = pytest.importorskip("pandas")
    frame = pp.solve("one flash every 3 s", **SOLVE).to_frame()
    assert isinstance(frame, pd.DataFrame) and len(frame) == 1
    assert frame.loc[0, "period_s"] == pytest.approx(3.0, rel=0.05)
    assert {"rank", "circuit", "parts", "median_period_s", "yield"} <= set(frame.columns)
    night = pp.night(**CHECK, storage="5f-2v7", night="12h").to_frame()
    assert len(night) >= 10 and night["t_s"].iloc[0] == 0.0
    assert night["t_s"].iloc[-1] == pytest.approx(12 * 3600.0)


def test_sizing_forms_match_the_json(capsys):
    # night --size: 30 µA over 12 h + 20 % from 2.6 V to 1.8 V needs
    # 30e-6 × 51840 / 0.8 = 1.944 F (hand)
    r = pp.night(no_circuit=True, storage="5f-2v7", start="2.6V", stop_at="1.8V",
                 storage_leak=0.0, extra_load=30e-6, night="12h", size=True)
    cli = _cli_json(capsys, ["night", "--no-circuit", "--storage", "5f-2v7", "--start", "2.6V",
                             "--stop-at", "1.8V", "--storage-leak", "0A", "--extra-load",
                             "30uA", "--night", "12h", "--size"])
    assert r.to_dict() == cli
    assert r.to_dict()["min_capacitance_f"] == pytest.approx(1.944, rel=0.005)
    assert repr(r).startswith("<pulsepick night: ")


def test_an_edited_drawer_is_solved_again(tmp_path):
    drawer = tmp_path / "drawer.csv"
    # E6 values (IEC 60063, ref:iec-60063) of our own drawer
    drawer.write_text("kind,value,qty\n" + "".join(
        f"R,{m * d:g},5\n" for d in (1e3, 1e4, 1e5, 1e6) for m in (1.0, 2.2, 4.7))
        + "".join(f"C,{m * d:g},5\n" for d in (1e-7, 1e-6) for m in (1.0, 2.2, 4.7)),
        encoding="utf-8")
    a = pp.solve("one flash every 3 s", stock=str(drawer), **SOLVE)
    assert pp.solve("one flash every 3 s", stock=str(drawer), **SOLVE).result is a.result
    import os

    os.utime(drawer, ns=(1, 1))  # the file changed (its time stamp)
    b = pp.solve("one flash every 3 s", stock=str(drawer), **SOLVE)
    assert b.result is not a.result


def test_bench_loop_functions_match_the_json(capsys):
    r = pp.retune(core="schmitt", r="2M2", c="1u", stage="pulse", cp="22u", rs=47,
                  supply="3V", want="one flash every 3 s",
                  measured_period="10 flashes in 39 s")
    cli = _cli_json(capsys, ["retune", "--core", "schmitt", "--r", "2M2", "--c", "1u",
                             "--stage", "pulse", "--cp", "22u", "--rs", "47", "--supply", "3V",
                             "--want", "one flash every 3 s", "--measured-period",
                             "10 flashes in 39 s"])
    assert r.to_dict() == cli
    # R1 alone sets the period of a plain Schmitt core: 2.2 MΩ x 3/3.9 (t ∝ R1·C1,
    # ref:onsemi-mc14106b), within the 2 % a standard value allows
    assert r.to_dict()["changes"][0]["values"]["r1_ohm"] == pytest.approx(2.2e6 * 3 / 3.9,
                                                                          rel=0.02)
    c = pp.calibrate(family="hc", supply="3V", recipe=True)
    assert c.to_dict() == _cli_json(capsys, ["calibrate", "--family", "hc", "--supply", "3V",
                                             "--recipe"])
