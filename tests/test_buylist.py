"""The buy list opens cleanly: csv (utf-8-sig), pandas, formula-safe cells, in_stock."""

from __future__ import annotations

import csv
import io
import math

import pytest

from pulsepick.cli import main
from pulsepick.output.export import (
    BUYLIST_COLUMNS,
    PROVENANCE_COLUMNS,
    STOCK_COLUMN,
    safe_cell,
    write_buylist_csv,
)
from pulsepick.request import DEFAULT_SEED

QUICK = ["--cores", "timer555", "--stages", "direct", "--top", "1", "--builds", "200",
         "--jobs", "1"]
# E6 values (IEC 60063, ref:iec-60063) for a drawer of our own
E6 = (1.0, 1.5, 2.2, 3.3, 4.7, 6.8)


def _drawer() -> str:
    lines = ["kind,value,qty,dielectric"]
    for decade in (100, 1e3, 10e3, 100e3, 1e6):
        lines += [f"R,{m * decade:g},1," for m in E6]
    for decade in (1e-9, 10e-9, 100e-9):
        lines += [f"C,{m * decade:g},1,film" for m in E6]
    for decade in (1e-6, 10e-6, 100e-6):
        lines += [f"C,{m * decade:g},1,electrolytic" for m in E6]
    return "\n".join(lines) + "\n"


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    folder = tmp_path_factory.mktemp("buy")
    drawer = folder / "drawer.csv"
    drawer.write_text(_drawer(), encoding="utf-8")
    path = folder / "garden-path.csv"
    code = main(["solve", "one flash every 3 s", *QUICK, "--stock", str(drawer),
                 "--buylist", str(path)])
    assert code == 0
    return path


def test_header_first_bom_and_csv_reader(written):
    raw = written.read_bytes()
    assert raw.startswith(b"\xef\xbb\xbf")  # UTF-8 byte-order mark (Unicode 15, section 23.8)
    text = raw.decode("utf-8-sig")
    first = text.splitlines()[0]
    columns = (*BUYLIST_COLUMNS, STOCK_COLUMN, *PROVENANCE_COLUMNS)
    assert first == ",".join(columns)
    with written.open(encoding="utf-8-sig", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert rows and list(rows[0]) == list(columns)
    kinds = [r["kind"] for r in rows]
    assert kinds[0] == "chip" and "led" in kinds and "resistor" in kinds
    for r in rows:
        if r["kind"] in ("resistor", "capacitor"):
            assert ("Ω" in r["value"]) == (r["kind"] == "resistor")
            assert "e-" not in r["value_si"] and float(r["value_si"]) > 0
            # the drawer holds one of each value: enough for one, short for more
            want = "yes" if r["qty"] == "1" else f"short: 1 of {r['qty']}"
            assert r[STOCK_COLUMN] == want
        else:
            assert r[STOCK_COLUMN] == "" and r["value_si"] == ""
        assert r["made_by"].startswith("pulsepick ") and r["seed"] == str(DEFAULT_SEED)


def test_pandas_reads_it(written):
    pd = pytest.importorskip("pandas")
    frame = pd.read_csv(written, encoding="utf-8-sig")
    with written.open(encoding="utf-8-sig", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert list(frame.columns)[:4] == ["qty", "refs", "kind", "value"]
    assert len(frame) == len(rows) >= 4
    values = [float(r["value_si"]) if r["value_si"] else math.nan for r in rows]
    got = frame["value_si"].tolist()
    for a, b in zip(values, got, strict=True):
        assert (math.isnan(a) and math.isnan(b)) or a == b


def test_every_column_is_neutralised():
    # formula starts listed by ref:owasp-csv-injection: = + - @ tab CR
    nasty = ["=HYPERLINK(\"x\")", "+1+1", "-2+3", "@SUM(A1)", "\tlead", "\rlead",
             "two\r\nlines", "one\nline", " =spaced"]
    columns = (*BUYLIST_COLUMNS, STOCK_COLUMN, *PROVENANCE_COLUMNS)
    rows = [{c: nasty[i % len(nasty)] for i, c in enumerate((*BUYLIST_COLUMNS, STOCK_COLUMN))}]
    prov = {c: nasty[i % len(nasty)] for i, c in enumerate(PROVENANCE_COLUMNS)}
    text = write_buylist_csv(rows, prov, stock=True)
    body = text.removeprefix("\ufeff")
    assert body.count("\r\n") == 2 and "\n" not in body.replace("\r\n", "")
    (row,) = list(csv.DictReader(io.StringIO(body)))
    for c in columns:
        cell = row[c]
        assert "\r" not in cell and "\n" not in cell
        assert not cell.lstrip(" ").startswith(("=", "+", "-", "@", "\t", "\r")), (c, cell)


def test_safe_cell_rules():
    assert safe_cell("-10/+20 %") == "'-10/+20 %"
    assert safe_cell("\u221210/+20 %") == "\u221210/+20 %"  # minus sign: plain text
    assert safe_cell("4.7 kΩ") == "4.7 kΩ"
    assert safe_cell("0.0000047") == "0.0000047"
    assert safe_cell(None) == ""


def test_uneven_tolerance_is_text(tmp_path):
    # an electrolytic's tolerance is uneven (-20/+80 % class, ref:cap-tolerance-letters)
    from pulsepick.output.export import _tolerance_cell

    assert _tolerance_cell("-20/+80 %") == "\u221220/+80 %"
    assert _tolerance_cell("±5 %") == "±5 %"
