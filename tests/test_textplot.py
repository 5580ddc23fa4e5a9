"""Terminal drawings: one period, the spread over builds; as plain text at 100 columns."""

from __future__ import annotations

import io

import numpy as np
import pytest
from rich.console import Console

from pulsepick import cli
from pulsepick.analysis.spread import spread, tolerance_bands
from pulsepick.circuits.base import Topology
from pulsepick.commands import bands as bands_cmd
from pulsepick.commands.pictures import oscillating_periods
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.parts.led import get_led
from pulsepick.output.textplot import LABEL_WIDTH, spread_lines, waveform_lines

# A community garden's path marker (demo values): HC Schmitt, 2M2 / 1u, pulse stage.
MARKER = Design(Topology("schmitt", "pulse"), {"r1": 2.2e6, "c1": 1e-6, "cp": 22e-6, "rs": 47.0},
                ChipSpec("hc"), PartChoice(get_led("red")), 3.0)
CHECK_ARGS = ["check", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
              "--cp", "22u", "--rs", "47", "--family", "hc", "--supply", "3.0V", "--led", "red"]
PLOT_COLUMNS = 72


def as_console_text(lines: list[str]) -> str:
    """The lines as rich prints them at 100 columns without colour."""
    buf = io.StringIO()
    console = Console(file=buf, width=100, color_system=None)
    for line in lines:
        console.print(line, markup=False, highlight=False)
    return buf.getvalue()


def vt(x) -> float:
    return float(np.ravel(x)[0])


def plot_part(line: str) -> str:
    """The plot columns of a drawing line (after the label and the bar)."""
    return line[LABEL_WIDTH + 2:]


@pytest.fixture(scope="module")
def marker_ref():
    return MARKER.reference()


def test_waveform_has_capacitor_gate_and_led_rows(marker_ref):
    env, _ = MARKER.env()
    row = marker_ref.figures.row()
    lines = waveform_lines(marker_ref.trace["t_s"], marker_ref.trace["vc_v"],
                           marker_ref.trace["led_a"], vt_plus=vt(env.vt_plus),
                           vt_minus=vt(env.vt_minus), high_s=row["high_s"])
    text = as_console_text(lines)
    assert text.splitlines() == lines  # nothing wrapped or cut at 100 columns
    assert all(len(line) <= 100 for line in lines)
    assert "\x1b[" not in text
    gate = next(line for line in lines if "gate output" in line)
    strip = plot_part(gate)
    assert len(strip) == PLOT_COLUMNS and set(strip) == {"▔", "▁"}
    # the gate is high first (the trace starts with the output-high phase), then low;
    # the share of high columns is the high time over the period, to one column
    assert strip == "▔" * strip.count("▔") + "▁" * strip.count("▁")
    assert strip.count("▔") == pytest.approx(PLOT_COLUMNS * row["high_s"] / row["period_s"],
                                             abs=1)
    assert any(line.lstrip().startswith("VT+") for line in lines)
    assert any("LED" in line and "pk" in line for line in lines)


def test_waveform_without_high_time_keeps_its_old_rows(marker_ref):
    env, _ = MARKER.env()
    args = (marker_ref.trace["t_s"], marker_ref.trace["vc_v"], marker_ref.trace["led_a"])
    old = waveform_lines(*args, vt_plus=vt(env.vt_plus), vt_minus=vt(env.vt_minus))
    new = waveform_lines(*args, vt_plus=vt(env.vt_plus), vt_minus=vt(env.vt_minus),
                         high_s=marker_ref.figures.row()["high_s"])
    assert not any("gate output" in line for line in old)
    assert len(new) == len(old) + 1
    assert old[:-1] == [line for line in new if "gate output" not in line][:-1]


def test_check_prints_the_gate_row(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    assert cli.main(CHECK_ARGS) == 0
    out = capsys.readouterr().out
    assert "gate output |▔" in out and "\x1b[" not in out
    assert all(len(line) <= 100 for line in out.splitlines())


@pytest.fixture(scope="module")
def marker_spread():
    return spread(MARKER, builds=1500, seed=3)


def test_spread_marks_band_and_target_where_the_numbers_are(marker_spread):
    s = marker_spread
    per, missing = oscillating_periods(s)
    p5, _, p95 = s.quantiles["period_s"]
    lines = spread_lines(per, p5_s=p5, p95_s=p95, target_s=s.target_period_s,
                         yield_band=s.yield_band, not_drawn=missing)
    text = as_console_text(lines)
    assert text.splitlines() == [line.rstrip() for line in lines]
    assert all(len(line) <= 100 for line in lines) and "\x1b[" not in text
    band = plot_part(next(line for line in lines if line.lstrip().startswith("P5..P95")))
    target = plot_part(next(line for line in lines if "target" in line[:LABEL_WIDTH]))
    # columns map periods linearly; the drawn range is recovered from the same rule the
    # drawing uses (1st..99th percentile widened to the marks, 2 % padding)
    q1, q99 = np.percentile(per, (1, 99))
    marks = [p5, p95, s.target_period_s, s.target_period_s * 0.9, s.target_period_s * 1.1]
    lo, hi = min(q1, *marks), max(q99, *marks)
    lo, hi = lo - 0.02 * (hi - lo), hi + 0.02 * (hi - lo)

    def col(x):
        return int(np.floor((x - lo) / (hi - lo) * PLOT_COLUMNS))

    assert band.index("[") == col(p5) and band.index("]") == col(p95)
    assert set(band[col(p5) + 1:col(p95)]) == {"="}
    assert target.index("^") == col(s.target_period_s)
    assert target.index("-") == col(0.9 * s.target_period_s)
    # the histogram's rows hold only bar characters
    bars = [plot_part(line) for line in lines[:5]]
    assert all(set(b) <= set(" ▁▂▃▄▅▆▇█") for b in bars)
    assert "█" in bars[-1]


def test_spread_counts_what_it_leaves_out():
    # drawing geometry only: a cluster and two far outliers
    per = np.concatenate([np.linspace(1.0, 1.2, 200), [10.0, 0.01]])
    lines = spread_lines(per, p5_s=1.01, p95_s=1.19, target_s=1.1, not_drawn=7)
    text = " ".join(" ".join(lines).split())  # undo the wrapping of the note
    assert "2 outside the drawn range (1 shorter, 1 longer)" in text
    assert "7 do not oscillate" in text
    assert spread_lines(np.array([np.nan]), p5_s=1, p95_s=2) == [
        "(no spread drawing: no build oscillates)"]


def test_bands_report_has_the_spread_drawing():
    result = tolerance_bands(MARKER, builds=300, seed=0)
    buf = io.StringIO()
    bands_cmd.render(Console(file=buf, width=100, color_system=None), result)
    text = buf.getvalue()
    assert "period over the builds, as specified" in text
    assert "P5..P95 |" in text and "^" in text
    assert all(len(line) <= 100 for line in text.splitlines())
    assert "\x1b[" not in text
