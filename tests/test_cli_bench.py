"""`pulsepick calibrate`, `retune`, `--chip` and `solve --trim` from the command line."""

from __future__ import annotations

import csv
import io
import json
import math

import pytest

from pulsepick.cli import main
from pulsepick.designfile import build_request, parse_design
from pulsepick.parts.chipprofile import (
    ChipProfile,
    measured_family,
    parse_profile,
    profile_text,
    read_profile,
)
from pulsepick.parts.logic import get_family

OSC = ["calibrate", "--r", "1M5", "--c", "4u7", "--supply", "3V", "--family", "hc"]


def run_json(capsys, argv):
    assert main([*argv, "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def bad(capsys, argv, fragment):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "Traceback" not in err
    assert fragment in err
    return err


def test_calibrate_json_keys_and_values(capsys):
    out = run_json(capsys, [*OSC, "--period", "10 periods in 61 s", "--high", "2.6s"])
    for key in ("vt_plus_v", "vt_minus_v", "vt_plus_range_v", "vt_minus_range_v", "supply_v",
                "family", "assumptions", "warnings"):
        assert key in out
    assert out["family"] == "hc" and out["supply_v"] == 3.0
    # closed-form check of the figures (onsemi MC14106B astable, ref:onsemi-mc14106b):
    # RC = 1.5 MΩ·4.7 µF = 7.05 s; high 2.6 s, low 6.1 - 2.6 = 3.5 s
    a, b = math.exp(3.5 / 7.05), math.exp(2.6 / 7.05)
    vtm = 3.0 * (b - 1) / (a * b - 1)
    # the fast engine's output resistance and leakage move it by well under 1 %
    assert out["vt_minus_v"] == pytest.approx(vtm, rel=0.01)
    assert out["vt_plus_v"] == pytest.approx(a * vtm, rel=0.01)
    lo, hi = out["vt_plus_range_v"]
    assert lo < out["vt_plus_v"] < hi
    # the typical HC chip at 3 V (1.598 / 0.972 V, ref:onsemi-mc74hc14a) sits near P50
    assert 40 < out["vt_plus_percentile"] < 60


def test_calibrate_save_reads_back_and_feeds_check(capsys, tmp_path):
    path = tmp_path / "chip.toml"
    assert main([*OSC, "--high", "2.8s", "--low", "3.3s", "--save", str(path),
                 "--supply-current", "12uA", "--json"]) == 0
    cal = json.loads(capsys.readouterr().out)
    prof = read_profile(str(path))
    assert prof.family == "hc" and prof.supply_v == 3.0 and prof.source == "measured"
    assert prof.vt_plus_v == pytest.approx(cal["vt_plus_v"], abs=1e-4)
    assert prof.supply_current_a == pytest.approx(12e-6)
    assert prof.date
    # --chip gives the same figures as the thresholds typed in at the same supply
    circuit = ["check", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
               "--cp", "22u", "--rs", "47", "--supply", "3V", "--no-drawing"]
    a = run_json(capsys, [*circuit, "--chip", str(path), "--cross-current", "12uA"])
    b = run_json(capsys, [*circuit, "--vt-plus", str(prof.vt_plus_v), "--vt-minus",
                          str(prof.vt_minus_v), "--cross-current", "12uA"])
    assert a["period_s"] == pytest.approx(b["period_s"], rel=1e-9)
    # a second save to the same file needs --force
    bad(capsys, [*OSC, "--high", "2.8s", "--low", "3.3s", "--save", str(path)], "exists")


def test_profile_follows_the_family_shape_at_another_supply():
    # HC typical rows: VT+ 1.598 V at 3 V (derived typ, ref:onsemi-mc74hc14a) and 2.36 V at
    # 4.5 V (NXP 74HC1G14 Table 7, ref:nxp-74hc1g14); VT- 0.972 V and 1.53 V
    fam = measured_family(get_family("hc"), 3.0, 1.75, 0.90)
    t = fam.thresholds(4.5)
    assert float(t.vt_plus_typ) == pytest.approx(2.36 * 1.75 / 1.598, rel=1e-9)
    assert float(t.vt_minus_typ) == pytest.approx(1.53 * 0.90 / 0.972, rel=1e-9)
    t3 = fam.thresholds(3.0)
    assert float(t3.vt_plus_min) == pytest.approx(1.75)
    assert float(t3.vt_plus_max) == pytest.approx(1.75)


def test_profile_text_round_trip_and_refusals():
    p = ChipProfile("lvc", 3.3, 1.8, 1.1, None, "measured", "2026-06-21")
    assert parse_profile(profile_text(p)) == p
    from pulsepick.errors import PartError

    with pytest.raises(PartError, match="unknown key"):
        parse_profile(profile_text(p) + "colour = 'red'\n")
    with pytest.raises(PartError, match="impossible"):
        parse_profile(profile_text(ChipProfile("lvc", 3.3, 1.8, 1.1)).replace("1.1", "2.0"))
    with pytest.raises(PartError, match="missing"):
        parse_profile('family = "hc"\n')


def test_design_file_chip_key(tmp_path):
    (tmp_path / "chip.toml").write_text(profile_text(ChipProfile("hc", 3.0, 1.7, 0.9)))
    text = ('name = "bench"\n[build]\nchip = "chip.toml"\nsupply = "3V"\n'
            '[[light]]\nname = "gate"\nblink = "one flash every 3 s"\n')
    path = tmp_path / "d.toml"
    path.write_text(text)
    breq = build_request(parse_design(text, str(path)))
    req = breq.lights[0].request
    assert req.families == ("hc",)
    assert req.chip_overrides["vt_plus_v"] == 1.7 and req.chip_overrides["follows_family"]


def test_bad_measurements_one_line(capsys):
    bad(capsys, [*OSC, "--high", "0.1s", "--low", "3s"], "uncertainty")
    bad(capsys, [*OSC, "--period", "3s", "--high", "4s"], "shorter than the period")
    bad(capsys, [*OSC, "--period", "6s"], "give two timed figures")
    bad(capsys, [*OSC, "--period", "6s", "--duty", "140%"], "percentage")
    bad(capsys, [*OSC, "--period", "ten periods", "--high", "2s"], "--period")
    bad(capsys, ["calibrate", "--r", "1M5", "--c", "4u7", "--family", "timer555",
                 "--high", "2s", "--low", "3s"], "Schmitt")
    bad(capsys, ["check", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--rs", "47",
                 "--chip", "no-such-file.toml"], "cannot read chip profile")
    bad(capsys, ["retune", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--rs", "47",
                 "--every", "3s"], "--measured-period")


def test_recipe_json(capsys):
    out = run_json(capsys, ["calibrate", "--recipe", "--family", "hc", "--supply", "3V"])
    assert 4.0 <= out["expected"]["period_s"] <= 10.0
    assert min(out["expected"]["high_s"], out["expected"]["low_s"]) >= 1.0


RETUNE = ["retune", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
          "--cp", "22u", "--rs", "47", "--supply", "3V", "--want", "one flash every 3 s",
          "--measured-period", "10 flashes in 39 s"]


def test_retune_json_and_buylist(capsys, tmp_path):
    buy = tmp_path / "new.csv"
    out = run_json(capsys, [*RETUNE, "--buylist", str(buy)])
    assert set(out["inferred"]) >= {"vt_plus_v", "vt_minus_v", "which"}
    assert out["inferred"]["which"] == "scale"
    first = out["changes"][0]
    assert set(first) >= {"rank", "values", "parts", "predicted", "note"}
    assert set(first["predicted"]) == {"period_s", "flash_s", "led_peak_a"}
    assert set(first["values"]) == {"r1_ohm", "c1_f", "cp_f", "rs_ohm"}
    assert first["predicted"]["period_s"] == pytest.approx(3.0, rel=0.02)
    # R1 alone sets the period of a plain Schmitt core: 2.2 MΩ x 3/3.9 = 1.69 MΩ
    # (t ∝ R1·C1, ref:onsemi-mc14106b) within the 2 % a standard value allows
    assert first["values"]["r1_ohm"] == pytest.approx(2.2e6 * 3.0 / 3.9, rel=0.02)
    rows = list(csv.DictReader(io.StringIO("".join(
        line for line in buy.read_text().splitlines(True) if not line.startswith("#")))))
    assert rows and all(r["refs"] not in ("U1", "C1") for r in rows)
    assert "scales the period exactly" in " ".join(out["notes"])


def test_retune_text_report(capsys):
    assert main(RETUNE) == 0
    text = capsys.readouterr().out
    assert "inferred" in text and "Changes" in text and "R1" in text


def test_solve_trim_json(capsys):
    out = run_json(capsys, ["solve", "one flash every 3 s", "--trim", "--top", "1",
                            "--builds", "300", "--family", "hc"])
    cand = out["candidates"][0]
    trim = cand["trim"]
    assert trim is not None
    fixed, pot = trim["fixed_ohm"], trim["trimmer_ohm"]
    lo, hi = trim["needed_range_ohm"]
    # every P5..P95 build can be trimmed, with the typical build near mid-travel
    assert fixed <= lo + 1e-6 and fixed + pot >= hi - 1e-6
    assert 0.3 <= trim["setting_ohm"] / pot <= 0.7
    # 1-2-5 steps (common practice)
    mant = pot / 10 ** math.floor(math.log10(pot))
    assert round(mant, 6) in (1.0, 2.0, 5.0)
    assert trim["yield_trimmed"] >= 0.85
    refs = [p["ref"] for p in cand["parts"]]
    assert any(r.startswith("RV") for r in refs)


def test_chip_option_reaches_every_light_of_a_build(tmp_path):
    from pulsepick.cli import build_parser
    from pulsepick.commands.solve import build_request_from_args

    chip = tmp_path / "chip.toml"
    chip.write_text(profile_text(ChipProfile("hc", 3.0, 1.7, 0.9)))
    parser = build_parser("solve")
    for phrase in ("two lights: every 2 s, every 3 s", "examples/firefly-lantern.toml"):
        args = parser.parse_args(["solve", phrase, "--chip", str(chip)])
        breq, _ = build_request_from_args(args)
        assert len(breq.lights) >= 2
        for light in breq.lights:
            assert light.request.families == ("hc",)
            assert light.request.chip_overrides["vt_minus_v"] == 0.9


def test_trim_is_refused_for_several_lights(capsys):
    bad(capsys, ["solve", "two lights: every 2 s, every 3 s", "--trim"], "--trim")


def test_calibrate_text_report(capsys):
    assert main([*OSC, "--high", "2.6s", "--low", "3.5s"]) == 0
    text = capsys.readouterr().out
    assert "VT+" in text and "VT-" in text and "datasheet spread" in text
    assert "--c-tol" in text  # C's tolerance dominates the range: the report says how to narrow it
    assert main(["calibrate", "--recipe", "--family", "hc", "--supply", "3V"]) == 0
    text = capsys.readouterr().out
    assert "10 periods" in text and "lit" in text and "mains" in text
