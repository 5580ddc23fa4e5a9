"""Buy lists and JSON of the solver (pulsepick.output.export), read back."""

from __future__ import annotations

import json
import math

import pytest

from pulsepick import __version__
from pulsepick.errors import ExportError
from pulsepick.output.export import (
    BUYLIST_COLUMNS,
    PROVENANCE_COLUMNS,
    buylist_text,
    read_buylist,
    result_json,
    write_atomic,
)
from pulsepick.output.render import dump_json
from pulsepick.request import make_request
from pulsepick.solve import assess, solve


@pytest.fixture(scope="module")
def result():
    req = make_request("flash every 2.5 s for 40 ms, 5 mA peak", cores="schmitt-steered",
                       stages="direct,pulse", top=2, builds=200, seed=7)
    return assess(solve(req), jobs=1)


def test_buylist_reads_back_and_matches_the_json_parts(result, tmp_path):
    import io

    path = tmp_path / "buy.csv"
    write_atomic(str(path), buylist_text(result, 1))
    rows = read_buylist(path.read_text(encoding="utf-8-sig"))
    buf = io.StringIO()
    dump_json(result_json(result), buf)
    doc = json.loads(buf.getvalue())
    parts = {p["ref"]: p for p in doc["candidates"][0]["parts"]}
    assert list(rows[0]) == list(BUYLIST_COLUMNS + PROVENANCE_COLUMNS)
    seen = []
    for row in rows:
        refs = row["refs"].split()
        assert int(row["qty"]) == len(refs)
        for ref in refs:
            p = parts[ref]
            seen.append(ref)
            assert row["kind"] == p["kind"] and row["code"] == p["code"]
            assert row["series"] == p["series"]
            assert row["tolerance"] == p["tolerance"].replace("-", "\u2212", 1)
            assert row["value"] == p["display"]
            assert row["dielectric"] == p["dielectric"] and row["rating"] == p["rating"]
            if p["value"] is None:
                assert row["value_si"] == ""
            else:
                assert math.isclose(float(row["value_si"]), p["value"], rel_tol=1e-12)
                assert "e" not in row["value_si"].lower()  # plain decimal, no exponent
                assert row["unit"] == p["unit"]
        if row["kind"] == "resistor":
            assert len(row["bands"].split()) in (3, 4, 5)
    assert sorted(seen) == sorted(parts)


def test_buylist_is_stamped(result, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1780000000")  # 2026-05-28 20:26:40 UTC
    rows = read_buylist(buylist_text(result, 1))
    for row in rows:
        assert row["made_by"] == f"pulsepick {__version__}"
        assert "flash every 2.5 s for 40 ms, 5 mA peak" in row["request"]
        assert row["seed"] == "7" and row["builds"] == "200"
        assert row["circuit"].startswith("candidate 1:")
        assert row["date"] == "2026-05-28"


def test_pick_out_of_range(result):
    with pytest.raises(ExportError, match="choose 1 to 2"):
        buylist_text(result, 3)


def test_existing_file_is_kept_without_force(tmp_path):
    path = tmp_path / "buy.csv"
    path.write_text("mine\n", encoding="utf-8")
    with pytest.raises(ExportError, match="--force"):
        write_atomic(str(path), "new\n")
    assert path.read_text(encoding="utf-8") == "mine\n"
    write_atomic(str(path), "new\n", force=True)
    assert path.read_text(encoding="utf-8") == "new\n"
    assert [p.name for p in tmp_path.iterdir()] == ["buy.csv"]  # no temporary left


def test_missing_folder_and_folder_target(tmp_path):
    with pytest.raises(ExportError, match="does not exist"):
        write_atomic(str(tmp_path / "no" / "buy.csv"), "x")
    with pytest.raises(ExportError, match="is a folder"):
        write_atomic(str(tmp_path), "x", force=True)


def test_json_document_shape(result):
    import io

    buf = io.StringIO()
    dump_json(result_json(result, ("not a safety light",)), buf)
    doc = json.loads(buf.getvalue())
    assert set(doc) >= {"request", "assumptions", "candidates", "explanations", "cautions"}
    c = doc["candidates"][0]
    assert set(c) >= {"rank", "core", "stage", "parts", "figures", "reference_figures",
                      "spread", "drift", "warnings"}
    assert c["core"] == "schmitt-steered"
    assert c["figures"]["status"] == "runs"
    assert c["reference_figures"]["period_s"] == pytest.approx(c["figures"]["period_s"],
                                                               rel=0.01)
    assert c["spread"]["builds"] == 200 and c["spread"]["seed"] == 7
    assert c["drift"] == []  # a steady supply: no night drift
    assert doc["request"]["period_s"] == 2.5
    assert doc["assumptions"]["supply_v"] == 3.0
    for p in c["parts"]:
        assert {"ref", "kind", "value", "unit", "code", "series", "tolerance"} <= set(p)
    # the crossing current is labelled as an estimate; the median build is reported
    assert c["crossing_current"].startswith("ESTIMATE")
    assert doc["assumptions"]["crossing_current"] == c["crossing_current"]
    assert c["median_period_s"] == pytest.approx(c["spread"]["quantiles"]["period_s"]["p50"],
                                                 rel=1e-12)
    assert "median_note" in c


def test_cautions_where_they_apply():
    from pulsepick.analysis.cautions import (
        LOW_VOLTAGE_ONLY,
        NOT_A_SAFETY_LIGHT,
        POLARITY_AND_SHORTS,
    )
    from pulsepick.output.export import solve_cautions

    steady = make_request("every 3 s")
    assert solve_cautions(steady) == (NOT_A_SAFETY_LIGHT, LOW_VOLTAGE_ONLY)
    droop = make_request("every 3 s", supply="2.7V..1.8V")
    assert solve_cautions(droop) == (POLARITY_AND_SHORTS, NOT_A_SAFETY_LIGHT, LOW_VOLTAGE_ONLY)
    assert POLARITY_AND_SHORTS in solve_cautions(steady, storage=True)


def test_build_buylist_sums_identical_parts(result):
    from types import SimpleNamespace

    from pulsepick.output.export import build_buylist_text

    c = result.candidates[0]
    # two lights with the same circuit: every part twice, one row each, quantities summed
    lights = (SimpleNamespace(name="gate", pick=c), SimpleNamespace(name="shed", pick=c))
    breq = SimpleNamespace(lights=(SimpleNamespace(request=result.request),) * 2,
                           describe=lambda: "two garden markers")
    build = SimpleNamespace(request=breq, lights=lights)
    text = build_buylist_text(build, c.parts + c.parts)
    rows = read_buylist(text)
    assert rows[0]["made_by"] == f"pulsepick {__version__}"
    assert rows[0]["request"] == "two garden markers; 2 lights"
    assert rows[0]["seed"] == "7"
    assert rows[0]["circuit"].startswith("gate = ") and "; shed = " in rows[0]["circuit"]
    single = read_buylist(buylist_text(result, 1))
    assert len(rows) == len(single)
    assert [int(r["qty"]) for r in rows] == [2 * int(r["qty"]) for r in single]
