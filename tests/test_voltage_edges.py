"""Voltages at the edges: the stop voltage over the chip's range, the design file's night
in ``day``, the over-range start in ``night`` and bare voltages everywhere."""

import json
from pathlib import Path

import numpy as np

from pulsepick.cli import main
from pulsepick.engine.loadcurve import LoadCurve
from pulsepick.units import format_eng, parse_quantity

FOOT = "examples/footbridge-fireflies.toml"
# the LVC family's recommended supply maximum, data/parts/logic_families.csv (vdd_max_v 3.6)
LVC_MAX_V = 3.6


def _json(capsys, argv):
    code = main([*argv, "--json"])
    out, _err = capsys.readouterr()
    return code, json.loads(out)


def test_lit_band_is_the_highest_lit_stretch():
    # a hand-made curve: dark at 1 V, lit 2..3 V, dark at 4 V (over the chip's range)
    v = np.array([1.0, 2.0, 3.0, 4.0])
    z = np.zeros(4)
    curve = LoadCurve(label="t", supply_v=v, supply_avg_a=z + 1e-6, period_s=z + 1.0,
                      flash_s=z + 0.01, led_peak_a=z, effective_a=z, effective_cd=z,
                      lit=np.array([False, True, True, False]))
    assert curve.lit_band_v() == (2.0, 3.0)
    assert curve.light_stops_below_v() == float("inf")


def test_day_clamp_over_the_chip_range_has_a_finite_stop(capsys):
    code, doc = _json(capsys, ["day", FOOT, "--clamp", "9V"])
    assert code in (0, 3)
    # the file's stop_at = "1.9V" (examples/footbridge-fireflies.toml), was inf before
    assert doc["v_stop_v"] == 1.9
    main(["day", FOOT, "--clamp", "9V"])
    out = capsys.readouterr().out
    assert "inf V" not in out and "the light stops at 1.90 V" in out


def _clock_night_file(tmp_path) -> str:
    """The example with the night as clock times, [night] dusk = "20:45", dawn = "06:15",
    in place of its [site]."""
    text = Path(FOOT).read_text(encoding="utf-8")
    head, rest = text.split("[site]\n", 1)
    path = tmp_path / "clock.toml"
    path.write_text(head + '[night]\ndusk = "20:45"\ndawn = "06:15"\n\n'
                    + rest[rest.index("[[light]]"):], encoding="utf-8")
    return str(path)


def test_day_uses_the_design_files_clock_night(capsys, tmp_path):
    clock = _clock_night_file(tmp_path)
    _code, doc = _json(capsys, ["day", clock])
    assert doc["night"]["dusk"] == "20:45" and doc["night"]["dawn"] == "06:15"
    assert doc["night"]["night_s"] == 9.5 * 3600
    # a --night given on the command line replaces the file's (centred on midnight)
    _code, doc = _json(capsys, ["day", clock, "--night", "10h"])
    assert doc["night"]["dusk"] == "19:00" and doc["night"]["night_s"] == 10 * 3600


def test_night_start_over_the_chip_range_says_so_first(capsys):
    main(["night", FOOT, "--start", "4V"])
    out = capsys.readouterr().out
    head = out.splitlines()[0]
    assert "4.00 V is over the circuit's supply range" in head
    top = float(head.split(" to ")[-1].split(" V")[0])
    assert LVC_MAX_V - 0.05 <= top <= LVC_MAX_V  # the grid point under the LVC maximum
    assert "above the storage rating 2.70 V" in out  # the over-voltage caution stays


def test_bare_voltage_is_volts_everywhere(capsys):
    assert parse_quantity("4", "voltage") == 4.0
    # night --start 4 now reads as 4 V (it was refused as "no unit")
    main(["night", FOOT, "--start", "2.6"])
    out = capsys.readouterr().out
    assert "start 2.60 V" in out


def test_calibrate_recipe_prints_its_command_on_one_line(capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["calibrate", "--recipe", "--family", "hc", "--supply", "3V"]) == 0
    lines = capsys.readouterr().out.splitlines()
    cmd = [ln.strip() for ln in lines if ln.strip().startswith("pulsepick calibrate --r")]
    assert len(cmd) == 1
    # the typical chip's period 6.1 s and lit 2.6 s printed above it (the recipe's own figures)
    assert cmd[0].endswith('--period "10 periods in 61 s" --high 2.6s')


def test_night_over_a_long_night_keeps_its_light_and_drops_the_empty_intensity_column(
        capsys, tmp_path):
    # the example over a long 11.5 h night down to 1.8 V: the light lasts, at about a fifth
    # of its dusk peak by dawn, which is no steep dimming (under a tenth)
    argv = ["night", _clock_night_file(tmp_path), "--night", "11.5h", "--stop-at", "1.8V"]
    code, doc = _json(capsys, argv)
    assert code == 0 and doc["lasts_the_night"]
    by = {f["label"]: f for f in doc["figures"]}
    share = by["dawn"]["led_peak_a"] / by["dusk"]["led_peak_a"]
    assert 0.1 < share < 0.3 and by["dusk"]["led_peak_a"] > 0.9e-3
    assert not [w for w in doc["warnings"] if w.startswith("the light dims steeply")]
    main(argv)
    out = capsys.readouterr().out
    assert "dim by dawn" not in out.splitlines()[0]
    table = out.split("Over the night", 1)[1].split("Storage voltage", 1)[0]
    assert "effective" in table and "intensity" not in table  # no LED intensity data


def test_a_dawn_peak_under_a_tenth_of_the_dusk_one_is_named():
    from types import SimpleNamespace

    from pulsepick.analysis.night_notes import dimming_note

    def run(dawn_a):
        return [SimpleNamespace(label="dusk", lit=True, led_peak_a=1e-3),
                SimpleNamespace(label="dawn", lit=True, led_peak_a=dawn_a)]

    note = dimming_note(run(80e-6))
    assert note.startswith("the light dims steeply: LED peak 1 mA at dusk, 80 µA at dawn "
                           "(8% of it)")
    assert dimming_note(run(200e-6)) is None  # a fifth: no warning


def test_check_refuses_a_supply_over_the_family_range(capsys):
    argv = ["check", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
            "--cp", "22u", "--rs", "47", "--family", "hc", "--led", "red", "--supply"]
    assert main([*argv, "50V"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    # hc: vdd 2.0 V to 6.0 V in data/parts/logic_families.csv
    assert len(err) == 1 and "over the supply range" in err[0] and "2 V to 6 V" in err[0]
    assert main([*argv, "6V"]) == 0  # the top of the range still runs
    capsys.readouterr()


def test_retune_says_when_the_inferred_chip_is_outside_the_limits(capsys):
    # README's retune example: 10 flashes in 39 s against a wanted 3 s
    argv = ["retune", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
            "--cp", "22u", "--rs", "47", "--supply", "3V", "--want", "one flash every 3 s",
            "--measured-period", "10 flashes in 39 s"]
    assert main(argv) == 0
    out = " ".join(capsys.readouterr().out.split())
    # hc VT- minimum 0.5 V at 3 V (data/parts/logic_thresholds.csv); inferred 0.396 V
    assert "VT- 0.396 V under its 0.5 V minimum" in out
    assert "OUTSIDE the datasheet limits" in out and "before swapping parts" in out
