"""``pulsepick values``: the four forms, their JSON, their text, and bad input."""

from __future__ import annotations

import json

import pytest

from pulsepick.cli import main


def _json(capsys, argv):
    code = main(["values", *argv, "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    assert err == ""
    return json.loads(out)


def _text(capsys, monkeypatch, argv):
    monkeypatch.setenv("NO_COLOR", "1")
    code = main(["values", *argv])
    out, err = capsys.readouterr()
    assert code == 0, err
    assert err == ""
    assert "\x1b[" not in out
    assert max(len(line) for line in out.splitlines()) <= 100
    return out


# --- form 1: a series --------------------------------------------------------------------------


def test_series_json(capsys):
    data = _json(capsys, ["E24"])
    # IEC 60063 E24 (ref:iec-60063), usual tolerance 5 % (ref:e-series-tolerances)
    assert data["series"] == "E24" and data["count"] == 24
    assert data["tolerance_pct"] == 5.0
    assert data["mantissas"][16] == 4.7 and data["mantissas"][11] == 3.0
    assert "IEC 60063" in data["source"]


def test_series_json_lower_case_and_e192(capsys):
    data = _json(capsys, ["e192"])
    # E192[185] = 9.20 (ref:e192-discrepancy-note)
    assert data["count"] == 192 and data["mantissas"][185] == 9.2


def test_series_text(capsys, monkeypatch):
    out = _text(capsys, monkeypatch, ["E12"])
    assert "E12: 12 values per decade, usual tolerance ±10 %" in out
    # E12 list (ref:iec-60063)
    for m in ("1.0", "1.2", "2.7", "8.2"):
        assert m in out


# --- form 2: a range ---------------------------------------------------------------------------


def test_range_json(capsys):
    data = _json(capsys, ["E24", "--from", "1k", "--to", "10k"])
    # one E24 decade plus its closing value: 24 + 1 (IEC 60063 E24, ref:iec-60063)
    assert data["count"] == 25 and data["kind"] == "R"
    assert data["from_ohm"] == 1000.0 and data["to_ohm"] == 10000.0
    values = [v["value_ohm"] for v in data["values"]]
    assert values[0] == 1000.0 and values[-1] == 10000.0 and 4700.0 in values
    codes = [v["code"] for v in data["values"]]
    assert codes[:3] == ["1k", "1k1", "1k2"] and "4k7" in codes


def test_range_with_series_option_and_capacitors(capsys):
    data = _json(capsys, ["--series", "E6", "--from", "1nF", "--to", "10nF"])
    # E6 (ref:iec-60063): 1.0 1.5 2.2 3.3 4.7 6.8, then 10
    assert data["kind"] == "C"
    assert [v["code"] for v in data["values"]] == ["1n", "1n5", "2n2", "3n3", "4n7", "6n8", "10n"]
    assert data["values"][2]["value_f"] == 2.2e-9


def test_range_text(capsys, monkeypatch):
    out = _text(capsys, monkeypatch, ["E24", "--from", "1k", "--to", "10k"])
    assert "25 values" in out
    assert "4.7 kΩ" in out and "4k7" in out


# --- form 3: decode a value --------------------------------------------------------------------


def test_decode_json(capsys):
    data = _json(capsys, ["4k7"])
    assert data["value_ohm"] == 4700.0 and data["code"] == "4k7"
    assert data["value_eng"] == "4.7 kΩ"
    # 4.7 is in E3..E24 (ref:iec-60063) and E192 (ref:e192-discrepancy-note), not in E48/E96 (ref:g4usp-preferred-values)
    assert data["in_series"] == ["E3", "E6", "E12", "E24", "E192"]
    nearest = {n["series"]: n for n in data["nearest"]}
    assert nearest["E24"]["value_ohm"] == 4700.0 and nearest["E24"]["error_pct"] == 0.0
    # E96 neighbours of 4.7 are 4.64 and 4.75 (ref:g4usp-preferred-values); 4.75/4.7 < 4.7/4.64, error +1.0638 %
    assert nearest["E96"]["value_ohm"] == 4750.0
    assert nearest["E96"]["error_pct"] == pytest.approx(1.06383, abs=1e-5)
    assert nearest["E48"]["value_ohm"] == 4640.0
    # colour code, ref:iec-60062-colour: yellow-violet-red-gold = 4.7 kΩ ±5 %
    colours = {c["tolerance_pct"]: c for c in data["colour_bands"]}
    assert colours[5.0]["bands"] == ["yellow", "violet", "red", "gold"]
    assert colours[5.0]["series"] == ["E6", "E12", "E24"]
    assert colours[1.0]["bands"] == ["yellow", "violet", "black", "brown", "brown"]


def test_decode_capacitor_json(capsys):
    data = _json(capsys, ["2n2"])
    # p, n and µ written without a unit only make sense for a capacitor: 2.2 nF, code 2n2
    # (RKM, ref:iec-60062-rkm, ref:cap-tolerance-letters)
    assert data["kind"] == "C" and data["value_f"] == 2.2e-9 and data["code"] == "2n2"
    assert data["kind_note"] == "read as a capacitance; add --kind R to force a resistance"
    data = _json(capsys, ["4k7"])
    assert data["kind"] == "R" and data["kind_note"] is None  # no capacitor prefix
    data = _json(capsys, ["2.2uF"])
    assert data["kind"] == "C" and data["value_f"] == 2.2e-6 and data["code"] == "2u2"
    assert data["colour_bands"] == []
    data = _json(capsys, ["100n", "--kind", "c"])
    assert data["kind"] == "C" and data["code"] == "100n"


@pytest.mark.parametrize(
    ("text", "head", "code"),
    [
        # RKM: 100n = 100 nF, 4u7/4µ7 = 4.7 µF, p68 = 0.68 pF (ref:iec-60062-rkm, ref:cap-tolerance-letters)
        ("100n", "100n = 100 nF = 1e-07 F", "100n"),
        ("4µ7", "4µ7 = 4.7 µF = 4.7e-06 F", "4u7"),
        ("4u7", "4u7 = 4.7 µF = 4.7e-06 F", "4u7"),
        ("p68", "p68 = 6.8e-13 F", "p68"),
    ],
)
def test_decode_capacitor_prefix_without_unit(capsys, monkeypatch, text, head, code):
    out = _text(capsys, monkeypatch, [text])
    lines = out.splitlines()
    assert lines[0] == f"{head}   RKM code {code}"
    assert lines[1] == f"{text}: read as a capacitance; add --kind R to force a resistance"
    assert "Colour bands" not in out and "Ω" not in out


def test_decode_shows_each_form_once(capsys, monkeypatch):
    assert _text(capsys, monkeypatch, ["1.5 F"]).splitlines()[0] == "1.5 F   RKM code 1F5"
    assert _text(capsys, monkeypatch, ["1.5F"]).splitlines()[0] == "1.5F   RKM code 1F5"
    assert _text(capsys, monkeypatch, ["100"]).splitlines()[0] == "100 = 100 Ω   RKM code 100R"
    first = _text(capsys, monkeypatch, ["4k7"]).splitlines()[0]
    assert first == "4k7 = 4.7 kΩ = 4700 Ω   RKM code 4k7"


def test_capacitor_prefix_in_range_and_picks(capsys, monkeypatch):
    data = _json(capsys, ["E6", "--from", "1n", "--to", "10n"])
    # E6 (ref:iec-60063): 1.0 1.5 2.2 3.3 4.7 6.8, then 10
    assert data["kind"] == "C" and data["kind_note"].startswith("read as a capacitance")
    assert [v["code"] for v in data["values"]] == ["1n", "1n5", "2n2", "3n3", "4n7", "6n8", "10n"]
    data = _json(capsys, ["4.65n", "--series", "E24"])
    # E24 neighbours of 4.65 are 4.3 and 4.7 (ref:iec-60063)
    assert data["kind"] == "C" and data["below"]["value_f"] == pytest.approx(4.3e-9)
    out = _text(capsys, monkeypatch, ["4.65n", "--series", "E24"])
    assert "4.65n: read as a capacitance; add --kind R to force a resistance" in out


def test_resistance_at_the_floor_is_decoded(capsys):
    data = _json(capsys, ["R001"])
    assert data["kind"] == "R" and data["value_ohm"] == 0.001 and data["code"] == "R001"
    data = _json(capsys, ["1m"])  # m is milli, an ordinary prefix for either kind: R
    assert data["kind"] == "R" and data["value_ohm"] == 0.001


def test_below_the_floor_suggests_kind_c_only_without_a_unit(capsys):
    assert main(["values", "R0001"]) == 2
    assert "--kind C" not in capsys.readouterr().err  # R marks ohms: --kind C cannot help
    assert main(["values", "0.0005"]) == 2
    assert "or --kind C for a capacitance" in capsys.readouterr().err


def test_decode_text(capsys, monkeypatch):
    out = _text(capsys, monkeypatch, ["4k7"])
    assert "4k7 = 4.7 kΩ" in out
    assert "in series: E3, E6, E12, E24, E192" in out
    assert "yellow violet red gold" in out
    assert "+1.06 %" in out


# --- form 4: picks in one series ---------------------------------------------------------------


def test_picks_json(capsys):
    data = _json(capsys, ["4.65k", "--series", "E24"])
    # E24 neighbours of 4.65 are 4.3 and 4.7 (ref:iec-60063)
    assert data["value_ohm"] == 4650.0 and data["series"] == "E24" and not data["is_series_value"]
    assert data["below"]["value_ohm"] == 4300.0 and data["above"]["value_ohm"] == 4700.0
    assert data["nearest"]["value_ohm"] == 4700.0
    assert data["up"]["value_ohm"] == 4700.0 and data["down"]["value_ohm"] == 4300.0
    # errors by hand: (4700 - 4650)/4650 = +1.0753 %, (4300 - 4650)/4650 = -7.5269 %
    assert data["up"]["error_pct"] == pytest.approx(1.07527, abs=1e-5)
    assert data["down"]["error_pct"] == pytest.approx(-7.52688, abs=1e-5)


def test_picks_of_a_series_value(capsys):
    data = _json(capsys, ["4k7", "--series", "e12"])
    assert data["is_series_value"]
    assert data["below"]["value_ohm"] == data["above"]["value_ohm"] == 4700.0


def test_picks_text(capsys, monkeypatch):
    out = _text(capsys, monkeypatch, ["4.65k", "--series", "E24"])
    assert "between 4.3 kΩ and 4.7 kΩ in E24" in out
    assert "round down" in out and "round up" in out and "-7.53 %" in out


def test_help_shows_examples(capsys):
    assert main(["values", "--help"]) == 0
    out = capsys.readouterr().out
    for example in ("pulsepick values E24", "pulsepick values E24 --from 1k --to 10k",
                    "pulsepick values 4k7", "pulsepick values 4.65k --series E24"):
        assert example in out


# --- bad input ---------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("argv", "fragment"),
    [
        ([], "give a series name"),
        ([""], "empty value"),
        (["-4k7"], "negative value"),
        (["0"], "zero value"),
        (["E25"], "unknown series 'E25'; accepted: E3, E6, E12, E24, E48, E96, E192"),
        (["4k7", "--series", "E7"], "unknown series 'E7'"),
        (["4x7"], "unknown prefix 'x'"),
        (["4k7 ohm F"], "two units"),
        (["nan"], "not a finite number"),
        (["inf"], "not a finite number"),
        (["E24", "--from", "10M", "--to", "1k"], "--from 10 MΩ is above --to 1 kΩ"),
        (["E24", "--from", "1p", "--to", "1T"], "spans more than 12 decades"),
        (["E24", "--from", "1k"], "give both --from and --to"),
        (["4k7", "--from", "1k", "--to", "2k"], "need a series name"),
        (["--from", "1k", "--to", "2k"], "need a series name"),
        (["E24", "--series", "E12"], "two series given"),
        (["2.2uF", "--kind", "R"], "a resistance is expected"),
        (["E24", "--from", "1nF", "--to", "100R"], "a capacitance is expected"),
        (["4k7", "--kind", "X"], "invalid choice"),
        (["1e30"], "outside what a series covers"),
        (["100n", "--kind", "R"],
         "'100n' as a resistance is 100 nΩ, below 1 mΩ; accepted: resistances from 1 mΩ "
         "(R001), or --kind C for a capacitance"),
        (["0.0005"], "'0.0005' as a resistance is 500 µΩ, below 1 mΩ"),
        (["R0001"], "'R0001' as a resistance is 100 µΩ, below 1 mΩ; accepted: resistances "
                    "from 1 mΩ (R001)"),
        (["100nohm"], "'100nohm' as a resistance is 100 nΩ"),
        (["E24", "--from", "0.1m", "--to", "1"], "--from '0.1m' as a resistance is 100 µΩ"),
    ],
)
def test_bad_input(capsys, argv, fragment):
    code = main(["values", *argv])
    out, err = capsys.readouterr()
    assert code == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("pulsepick")
    assert fragment in lines[0]
