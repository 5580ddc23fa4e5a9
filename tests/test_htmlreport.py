"""The HTML design report, read back: its tables hold the numbers of the JSON output."""

from __future__ import annotations

import argparse
import base64
import contextlib
import io
import json
import os
import struct
import sys
from html.parser import HTMLParser

import pytest

from pulsepick import cli
from pulsepick.analysis.cautions import GENERAL_CAUTIONS, NOT_A_SAFETY_LIGHT
from pulsepick.commands.pictures import NO_IMAGES, solve_pictures
from pulsepick.output.htmlreport import Cell, Items, Paragraph, Report, Section, Table, render_html
from pulsepick.output.plot import FIGURE_PIXELS
from pulsepick.units import format_eng

# A community garden's path marker (demo values).
CHECK = ["check", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
         "--cp", "22u", "--rs", "47", "--family", "hc", "--supply", "3.0V", "--led", "red"]
BANDS = ["bands", "--core", "timer555", "--ra", "10k", "--rb", "1M", "--c", "100n",
         "--stage", "direct", "--rs", "470", "--supply", "3V..2V", "--builds", "300"]
NIGHT = ["night", "--storage", "5f-2v7", "--start", "2.6V", "--dusk", "18:30", "--dawn", "07:10",
         "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse", "--cp", "22u",
         "--rs", "47"]


class ReadBack(HTMLParser):
    """Tables (by id) as rows of cells {text, value}, images, tags and all text."""

    def __init__(self, page: str) -> None:
        super().__init__()
        self.tables: dict[str, list[list[dict]]] = {}
        self.images: list[dict[str, str]] = []
        self.tags: set[str] = set()
        self.attrs: list[tuple[str, str, str]] = []
        self.text: list[str] = []
        self._table = self._row = self._cell = None
        self.feed(page)
        self.close()

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.add(tag)
        self.attrs += [(tag, k, v or "") for k, v in attrs]
        if tag == "table":
            self._table = a.get("id")
            self.tables[self._table] = []
        elif tag == "tr" and self._table is not None:
            self._row = []
        elif tag in ("td", "th") and self._row is not None:
            self._cell = {"text": "", "value": a.get("data-value"), "head": tag == "th"}
        elif tag == "img":
            self.images.append(a)

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._cell is not None:
            self._row.append(self._cell)
            self._cell = None
        elif tag == "tr" and self._row is not None:
            self.tables[self._table].append(self._row)
            self._row = None
        elif tag == "table":
            self._table = None

    def handle_data(self, data):
        if self._cell is not None:
            self._cell["text"] += data
        self.text.append(data)

    def body(self, table: str) -> list[list[dict]]:
        return [r for r in self.tables[table] if not all(c["head"] for c in r)]

    def row(self, table: str, first: str) -> list[dict]:
        return next(r for r in self.body(table) if r[0]["text"] == first)

    def all_text(self) -> str:
        return " ".join(" ".join(self.text).split())


def run_json_report(argv, path) -> tuple[dict, ReadBack, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = cli.main([*argv, "--json", "--report", str(path)])
    assert status == 0, err.getvalue()
    page = path.read_text(encoding="utf-8")
    return json.loads(out.getvalue()), ReadBack(page), page


def assert_self_contained(doc: ReadBack, page: str) -> None:
    assert page.startswith("<!DOCTYPE html>")
    assert not {"script", "link", "iframe", "object", "embed"} & doc.tags
    for tag, name, value in doc.attrs:
        if name in ("src", "href"):
            assert value.startswith("data:"), (tag, name, value[:40])
    assert "@import" not in page and "url(" not in page
    assert "@media print" in page
    assert NOT_A_SAFETY_LIGHT in doc.all_text()


def png_of(img: dict[str, str]) -> bytes:
    prefix = "data:image/png;base64,"
    assert img["src"].startswith(prefix)
    return base64.b64decode(img["src"][len(prefix):])


def assert_cell(cell: dict, value: float, unit: str) -> None:
    """The cell shows ``value`` as the terminal report does and carries it exactly."""
    assert float(cell["value"]) == value
    text = f"{value:.3g} mcd" if unit == "mcd" else format_eng(value, unit)
    assert cell["text"] == text


# ------------------------------------------------------------------------------ check

@pytest.fixture(scope="module")
def check_report(tmp_path_factory):
    return run_json_report(CHECK, tmp_path_factory.mktemp("check") / "marker.html")


def test_check_report_figures_are_the_json_figures(check_report):
    from pulsepick.commands.wording import FIGURE_ROWS

    out, doc, page = check_report
    assert_self_contained(doc, page)
    for key, label, unit in FIGURE_ROWS:
        assert_cell(doc.row("figures", label)[1], out[key], unit)
    assert doc.row("figures", "status")[1]["text"] == out["status"]["state"]
    # the key facts at the top carry the same period
    assert f'data-value="{out["period_s"]!r}"' in page


def test_check_report_parts_are_the_circuit_values(check_report):
    out, doc, _ = check_report
    names = {r[1]["text"]: r for r in doc.body("parts")}
    for name, value in out["assumptions"]["values"].items():
        row = names[name.upper()]
        assert float(row[2]["value"]) == value
        assert row[2]["text"] == format_eng(value, "Ω" if name.startswith("r") else "F")
    refs = [r[0]["text"] for r in doc.body("parts")]
    assert refs[0] == "U1" and refs[-1] == "LED1"
    buy_refs = " ".join(r[1]["text"] for r in doc.body("buylist")).split()
    assert sorted(buy_refs) == sorted(refs)  # every part is in the buy list once


def test_check_report_has_warnings_cautions_images_and_spread(check_report):
    out, doc, _ = check_report
    text = doc.all_text()
    for warning in out["warnings"]:
        assert warning in text
    for caution in GENERAL_CAUTIONS:
        assert caution in text
    assert len(doc.images) == 2  # one period, the spread over builds
    for img in doc.images:
        png = png_of(img)
        assert struct.unpack(">II", png[16:24]) == FIGURE_PIXELS
    assert {r[0]["text"] for r in doc.body("spread")} >= {"period", "flash", "LED peak"}
    assert "Not computed" in text  # drift needs a supply range


def test_report_without_matplotlib_says_so(tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    out, doc, page = run_json_report(CHECK, tmp_path / "plain.html")
    assert not doc.images
    assert NO_IMAGES in doc.all_text()
    assert_self_contained(doc, page)
    assert_cell(doc.row("figures", "period")[1], out["period_s"], "s")


def test_existing_report_needs_force(tmp_path, capsys):
    path = tmp_path / "r.html"
    path.write_text("keep")
    assert cli.main([*CHECK, "--no-drawing", "--report", str(path)]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "--force" in err
    assert path.read_text() == "keep"


def test_report_suffix_is_checked(tmp_path, capsys):
    assert cli.main([*CHECK, "--report", str(tmp_path / "r.pdf")]) == 2
    err = capsys.readouterr().err
    assert ".html, .htm" in err and len(err.strip().splitlines()) == 1
    assert not os.listdir(tmp_path)


# ------------------------------------------------------------------------------ bands, night

def test_bands_report_cells_are_the_json_cells(tmp_path):
    out, doc, page = run_json_report(BANDS, tmp_path / "bands.html")
    assert_self_contained(doc, page)
    head = [c["text"] for c in doc.tables["bands"][0]]
    classes = ["electrolytic", "X7R", "film", "C0G"]
    assert [h.split()[0] for h in head[1:]] == classes
    for cell in out["cells"]:
        row = next(r for r in doc.body("bands")
                   if r[0]["text"].split()[0] == cell["resistor_series"])
        col = ["electrolytic", "x7r", "film", "c0g"].index(cell["cap_class"]) + 1
        assert float(row[col]["value"]) == cell["width_pct"]
        assert row[col]["text"].startswith(f"{cell['width_pct']:.0f} % / ")
    q = out["current"]["quantiles"]["period_s"]
    period = doc.row("spread", "period")
    for i, k in enumerate(("p5", "p50", "p95"), start=1):
        assert_cell(period[i], q[k], "s")
    # the supply range gives a drift table from full to the end supply
    drift = doc.body("drift")
    assert float(drift[0][0]["value"]) == 3.0 and float(drift[-1][0]["value"]) == 2.0


def test_night_report_figures_are_the_json_figures(tmp_path):
    out, doc, page = run_json_report(NIGHT, tmp_path / "night.html")
    assert_self_contained(doc, page)
    for point in out["figures"]:
        row = doc.row("night", point["label"])
        assert row[1]["text"] == point["clock"]
        assert_cell(row[2], point["v_v"], "V")
        assert_cell(row[3], point["period_s"], "s")
        assert_cell(row[5], point["led_peak_a"], "A")
        assert_cell(row[7], point["effective_cd"], "cd")
    assert_cell(doc.row("night-summary", "end voltage")[1], out["v_end_v"], "V")
    for caution in out["cautions"]:
        assert caution in doc.all_text()
    assert len(doc.images) == 1
    assert "lasts the night" in doc.all_text()


# ------------------------------------------------------------------------------ solve

@pytest.fixture(scope="module")
def solved():
    from pulsepick.request import make_request
    from pulsepick.solve import assess, solve

    req = make_request("one flash every 3 s", supply="2.7V..1.8V", top=2, builds=300, seed=0)
    return assess(solve(req))


def test_solve_report_holds_the_parts_and_figures_of_the_json(solved, tmp_path, capsys):
    from pulsepick.output.export import result_json

    path, image = tmp_path / "solve.html", tmp_path / "solve.png"
    args = argparse.Namespace(plot=str(image), report=str(path), force=False, json=False, pick=1)
    lines = solve_pictures(args, solved)
    assert lines == [f"picture written to {image}", f"report written to {path}"]
    assert capsys.readouterr().out.splitlines() == lines
    assert struct.unpack(">II", image.read_bytes()[16:24]) == FIGURE_PIXELS
    page = path.read_text(encoding="utf-8")
    doc = ReadBack(page)
    assert_self_contained(doc, page)
    out = result_json(solved, GENERAL_CAUTIONS)
    best = out["candidates"][0]
    parts = {r[0]["text"]: r for r in doc.body("parts")}
    assert list(parts) == [p["ref"] for p in best["parts"]]
    for p in best["parts"]:
        if p["value"] is not None:
            assert float(parts[p["ref"]][2]["value"]) == p["value"]
            assert parts[p["ref"]][2]["text"] == p["display"]
    for key, label in (("period_s", "period"), ("flash_s", "flash (>= 50 % of peak)"),
                       ("led_peak_a", "LED peak current"),
                       ("supply_avg_a", "average supply current")):
        row = doc.row("figures", label)
        unit = "s" if key.endswith("_s") else "A"
        assert_cell(row[2], best["figures"][key], unit)
        assert_cell(row[4], best["reference_figures"][key], unit)
    ranks = doc.body("candidates")
    assert [r[0]["text"] for r in ranks] == [str(c["rank"]) for c in out["candidates"]]
    for r, c in zip(ranks, out["candidates"], strict=True):
        assert_cell(r[3], c["figures"]["period_s"], "s")
    q = best["spread"]["quantiles"]["period_s"]
    assert_cell(doc.row("spread", "period")[2], q["p50"], "s")
    drift = doc.body("drift")
    assert len(drift) == len(best["drift"])
    for r, step in zip(drift, best["drift"], strict=True):
        assert_cell(r[0], step["supply_v"], "V")
    assert len(doc.images) == 3  # one period, spread, drift


def test_solve_pictures_refuse_a_bad_pick(solved, tmp_path):
    from pulsepick.errors import ExportError

    args = argparse.Namespace(plot=None, report=str(tmp_path / "r.html"), force=False,
                              json=False, pick=9)
    with pytest.raises(ExportError, match="choose 1 to 2"):
        solve_pictures(args, solved)
    assert not os.listdir(tmp_path)


# ------------------------------------------------------------------------------ the renderer

def test_every_text_is_escaped():
    nasty = '<script>alert("x")</script> & \'quotes\''
    report = Report(
        title=nasty, subtitle=nasty, facts=((nasty, Cell(nasty, 1.5, "s")),),
        sections=(Section("s<1>", nasty, (Paragraph(nasty), Items((nasty,)),
                                          Table("t\"1", nasty, (nasty,), ((Cell(nasty),),)))),),
        stamp=nasty)
    page = render_html(report)
    assert "<script>" not in page
    assert page.count("&lt;script&gt;") >= 8
    doc = ReadBack(page)
    assert "script" not in doc.tags
    assert doc.tables['t"1'][1][0]["text"] == nasty  # read back unchanged


def test_the_safety_light_caution_is_always_there():
    bare = Report(title="t", subtitle="s", facts=(), sections=(), stamp="x")
    assert NOT_A_SAFETY_LIGHT in ReadBack(render_html(bare)).all_text()
    other = Report(title="t", subtitle="s", facts=(), stamp="x", sections=(
        Section("cautions", "Cautions", (Items(("Keep it dry.",), "caution"),)),))
    text = ReadBack(render_html(other)).all_text()
    assert "Keep it dry." in text and NOT_A_SAFETY_LIGHT in text
    assert text.count(NOT_A_SAFETY_LIGHT) == 1
