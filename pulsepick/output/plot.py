"""Figures as images: one period, the spread over builds, drift and the night (shell side).

The command layer turns result objects into small *views* (frozen dataclasses below:
what a picture shows, in SI units) and this module draws them with matplotlib. No
physics happens here: every number drawn comes from a view.

matplotlib is optional (the ``pulsepick[plot]`` extra) and imported only inside
:func:`image_bytes`, never when this module is imported, so the command line starts
without it. Figures are drawn on an Agg canvas created explicitly (pyplot is never
imported), so no display is needed.

Every image has one fixed size: ``FIGURE_SIZE_IN`` = 10 x 6 in at ``FIGURE_DPI`` = 100,
so a PNG is 1000 x 600 pixels and an SVG declares ``width="720pt" height="432pt"``
(72 points to the inch).
"""

from __future__ import annotations

import importlib
import io
import math
import os
import textwrap
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime, timedelta
from typing import Any

import numpy as np

from pulsepick.errors import PulsepickError, RequestError

FIGURE_SIZE_IN = (10.0, 6.0)  # in, width x height of every image
FIGURE_DPI = 100  # dots per inch: PNG images are 1000 x 600 px
FIGURE_PIXELS = (round(FIGURE_SIZE_IN[0] * FIGURE_DPI), round(FIGURE_SIZE_IN[1] * FIGURE_DPI))
#: Image suffixes ``--plot`` accepts, and the format each one writes.
IMAGE_FORMATS = {".png": "png", ".svg": "svg"}
PLOT_EXTRA_MESSAGE = "--plot needs the plot extra: pip install 'pulsepick[plot]'"

# Our palette (colour-blind-safe pairs: blue/orange carry the two main curves).
_INK = "#1f2a33"
_VOLT = "#1f5f8b"  # capacitor / storage voltage
_GATE = "#8c96a0"  # gate output
_LED = "#d9731a"  # LED current, brightness
_THRESH = "#6b7b88"  # thresholds, stop voltage
_TARGET = "#7a2e8e"  # targets
_BAND = "#1f5f8b"  # P5..P95 band fill
_GRID = "#dde3e8"
_TITLE_CHARS = 110  # characters per title line at 11 pt across 10 in (measured)


class PlotExtraError(ImportError, PulsepickError):
    """matplotlib (the ``pulsepick[plot]`` extra) is not installed."""


# ============================================================================ views

@dataclass(frozen=True, eq=False)
class WaveView:
    """One period of a blinker, from the start of the gate's output-high phase."""

    t_s: np.ndarray  # s
    vc_v: np.ndarray  # V, timing-capacitor voltage
    led_a: np.ndarray  # A, LED current
    vt_plus_v: float  # V, upper switching threshold
    vt_minus_v: float  # V, lower switching threshold
    supply_v: float  # V, the gate output's high level
    high_s: float  # s, time the gate output is high
    target_period_s: float | None = None  # s, the period asked for
    source: str = "reference simulation"  # where the trace comes from
    light: str = ""  # the light of a build it belongs to ("" for a single light)


@dataclass(frozen=True, eq=False)
class SpreadView:
    """The period over many builds."""

    period_s: np.ndarray  # s, builds that oscillate
    p5_s: float  # s
    p50_s: float  # s
    p95_s: float  # s
    target_s: float | None  # s, the period the yield counts against
    yield_band: float | None  # fraction, +/- around the target
    builds: int  # builds run
    seed: int
    not_drawn: int = 0  # builds that do not oscillate


@dataclass(frozen=True, eq=False)
class DriftView:
    """Period and effective LED current as the supply falls."""

    supply_v: np.ndarray  # V
    period_s: np.ndarray  # s (non-finite where it stalls)
    effective_a: np.ndarray  # A
    target_period_s: float | None = None  # s
    yield_band: float | None = None  # fraction
    dark_below_v: float | None = None  # V


@dataclass(frozen=True, eq=False)
class NightView:
    """Storage voltage and brightness over one night."""

    t_s: np.ndarray  # s after dusk
    v_v: np.ndarray  # V (nan after the light stops)
    brightness: np.ndarray | None  # in ``brightness_unit``; None for a bare budget
    brightness_unit: str  # "cd" or "A"
    v_start_v: float  # V
    v_stop_v: float | None  # V, the stop voltage (None when there is none)
    runtime_s: float  # s, until the light stops, or the night
    duration_s: float  # s, dusk to dawn
    lasts: bool  # lasts the night
    dusk: datetime | None = None  # clock time of dusk, when known
    open_ended: bool = False  # a run until the stop voltage, with no night given
    stop_label: str = "light stops"  # what the stop mark means


View = WaveView | SpreadView | DriftView | NightView


# ============================================================================ entry points

def image_format(path: str) -> str:
    """The image format for ``path`` from its suffix; refuses other suffixes."""
    suffix = os.path.splitext(path)[1].lower()
    if suffix not in IMAGE_FORMATS:
        raise RequestError(f"--plot {path!r}: unknown image type {suffix or '(none)'!r}; "
                           f"accepted: {', '.join(IMAGE_FORMATS)}")
    return IMAGE_FORMATS[suffix]


def require_matplotlib() -> Any:
    """The matplotlib module, or :class:`PlotExtraError` with the install hint."""
    try:
        return importlib.import_module("matplotlib")
    except ImportError as err:
        raise PlotExtraError(PLOT_EXTRA_MESSAGE) from err


def plot_available() -> bool:
    """True when matplotlib can be imported."""
    try:
        require_matplotlib()
    except PlotExtraError:
        return False
    return True


def image_bytes(views: Sequence[View], title: str, fmt: str = "png") -> bytes:
    """Draw ``views`` in one figure of the fixed size and return the image file's bytes.

    The first view fills the left column (the whole figure when it is alone); the
    others are stacked in the right column.
    """
    if fmt not in IMAGE_FORMATS.values():
        raise RequestError(f"image format {fmt!r}: accepted {', '.join(IMAGE_FORMATS.values())}")
    if not views:
        raise RequestError("nothing to draw: no waveform, spread, drift or night was computed")
    fig = _figure(views, title)
    buf = io.BytesIO()
    metadata = {"Date": None} if fmt == "svg" else {}
    fig.savefig(buf, format=fmt, dpi=FIGURE_DPI, metadata=metadata)
    return buf.getvalue()


# ============================================================================ drawing

def _figure(views: Sequence[View], title: str):
    require_matplotlib()
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=FIGURE_SIZE_IN, dpi=FIGURE_DPI, layout="constrained")
    FigureCanvasAgg(fig)  # Agg, explicitly: no display, whatever the default backend
    fig.suptitle("\n".join(textwrap.wrap(title, _TITLE_CHARS)), fontsize=11, color=_INK,
                 x=0.01, ha="left")
    if len(views) == 1:
        cells = [fig.add_gridspec(1, 1)[0, 0]]
    else:
        outer = fig.add_gridspec(1, 2, width_ratios=(1.15, 1.0))
        right = outer[0, 1].subgridspec(len(views) - 1, 1)
        cells = [outer[0, 0]] + [right[k, 0] for k in range(len(views) - 1)]
    for view, cell in zip(views, cells, strict=True):
        _DRAW[type(view)](fig, cell, view)
    return fig


def _style(ax) -> None:
    ax.grid(True, color=_GRID, linewidth=0.6)
    ax.set_axisbelow(True)
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    ax.tick_params(labelsize=8, colors=_INK)
    ax.title.set_fontsize(9)


def _eng(unit: str):
    from matplotlib.ticker import EngFormatter

    return EngFormatter(unit=unit, places=None)


def _legend(ax) -> None:
    ax.legend(loc="best", fontsize=7, frameon=False)


def _draw_wave(fig, cell, v: WaveView) -> None:
    sub = cell.subgridspec(2, 1, height_ratios=(2, 1), hspace=0.05)
    ax = fig.add_subplot(sub[0, 0])
    ax_i = fig.add_subplot(sub[1, 0], sharex=ax)
    t = np.asarray(v.t_s, dtype=float)
    gate = np.where(t < v.high_s, v.supply_v, 0.0)
    ax.plot(t, gate, color=_GATE, linewidth=1.0, drawstyle="steps-post", label="gate output")
    ax.plot(t, v.vc_v, color=_VOLT, linewidth=1.6, label="timing capacitor")
    for level, name in ((v.vt_plus_v, "VT+"), (v.vt_minus_v, "VT-")):
        ax.axhline(level, color=_THRESH, linewidth=0.8, linestyle="--")
        ax.text(1.005, level, name, transform=ax.get_yaxis_transform(), fontsize=7,
                color=_THRESH, ha="left", va="center", clip_on=False)
    ax.set_ylabel("voltage", fontsize=8)
    ax.yaxis.set_major_formatter(_eng("V"))
    ax.set_title(f"one period ({v.source})", loc="left")
    ax_i.plot(t, v.led_a, color=_LED, linewidth=1.4, label="LED current")
    ax_i.fill_between(t, 0.0, v.led_a, color=_LED, alpha=0.18, linewidth=0)
    ax_i.set_ylabel("LED current", fontsize=8)
    ax_i.yaxis.set_major_formatter(_eng("A"))
    ax_i.xaxis.set_major_formatter(_eng("s"))
    ax_i.set_xlabel("time", fontsize=8)
    if v.target_period_s is not None and math.isfinite(v.target_period_s):
        for a in (ax, ax_i):
            a.axvline(v.target_period_s, color=_TARGET, linewidth=1.0, linestyle=":")
        ax.plot([], [], color=_TARGET, linestyle=":", label="target period")
    for a in (ax, ax_i):
        _style(a)
    ax.tick_params(labelbottom=False)
    _legend(ax)


def _draw_spread(fig, cell, v: SpreadView) -> None:
    ax = fig.add_subplot(cell)
    p = np.asarray(v.period_s, dtype=float)
    p = p[np.isfinite(p)]
    if p.size:
        lo, hi = (float(x) for x in np.percentile(p, (0.5, 99.5)))
        marks = [x for x in (v.p5_s, v.p95_s, v.target_s) if x is not None and math.isfinite(x)]
        lo, hi = min([lo, *marks]), max([hi, *marks])
        if not hi > lo:
            lo, hi = 0.99 * lo, 1.01 * hi
        bins = int(np.clip(round(math.sqrt(p.size)), 10, 50))
        ax.hist(np.clip(p, lo, hi), bins=bins, range=(lo, hi), color=_VOLT, alpha=0.85,
                label=f"{p.size:,} builds")
    ax.axvspan(v.p5_s, v.p95_s, color=_BAND, alpha=0.12, label="P5..P95")
    for x in (v.p5_s, v.p95_s):
        ax.axvline(x, color=_BAND, linewidth=0.9)
    ax.axvline(v.p50_s, color=_INK, linewidth=0.9, linestyle="--", label="P50")
    if v.target_s is not None and math.isfinite(v.target_s):
        ax.axvline(v.target_s, color=_TARGET, linewidth=1.4, label="target")
        if v.yield_band:
            ax.axvspan(v.target_s * (1 - v.yield_band), v.target_s * (1 + v.yield_band),
                       ymax=0.04, color=_TARGET, alpha=0.6,
                       label=f"target ±{v.yield_band * 100:g} %")
    ax.xaxis.set_major_formatter(_eng("s"))
    ax.set_xlabel("period", fontsize=8)
    ax.set_ylabel("builds", fontsize=8)
    note = f", {v.not_drawn:,} do not oscillate" if v.not_drawn else ""
    ax.set_title(f"period over {v.builds:,} builds (seed {v.seed}{note})", loc="left")
    _style(ax)
    _legend(ax)


def _draw_drift(fig, cell, v: DriftView) -> None:
    ax = fig.add_subplot(cell)
    s = np.asarray(v.supply_v, dtype=float)
    per = np.asarray(v.period_s, dtype=float)
    per = np.where(np.isfinite(per), per, np.nan)
    ax.plot(s, per, color=_VOLT, linewidth=1.6, marker="o", markersize=3, label="period")
    if v.target_period_s is not None and math.isfinite(v.target_period_s):
        ax.axhline(v.target_period_s, color=_TARGET, linewidth=1.2, label="target")
        if v.yield_band:
            ax.axhspan(v.target_period_s * (1 - v.yield_band),
                       v.target_period_s * (1 + v.yield_band), color=_TARGET, alpha=0.08)
    ax.set_xlabel("supply", fontsize=8)
    ax.set_ylabel("period", fontsize=8)
    ax.xaxis.set_major_formatter(_eng("V"))
    ax.yaxis.set_major_formatter(_eng("s"))
    if s.size and s[0] > s[-1]:
        ax.set_xlim(s[0], s[-1])  # full supply at the left: the night runs left to right
    ax_i = ax.twinx()
    ax_i.plot(s, v.effective_a, color=_LED, linewidth=1.2, linestyle="--",
              label="effective current")
    ax_i.set_ylabel("effective current", fontsize=8)
    ax_i.yaxis.set_major_formatter(_eng("A"))
    ax_i.tick_params(labelsize=8, colors=_INK)
    ax_i.spines["top"].set_visible(False)
    if v.dark_below_v is not None:
        ax.axvline(v.dark_below_v, color=_THRESH, linestyle=":", linewidth=1.0,
                   label="LED dark below")
    ax.set_title("drift as the supply falls", loc="left")
    _style(ax)
    lines = ax.get_legend_handles_labels()
    more = ax_i.get_legend_handles_labels()
    ax.legend(lines[0] + more[0], lines[1] + more[1], loc="best", fontsize=7, frameon=False)


def _draw_night(fig, cell, v: NightView) -> None:
    rows = 2 if v.brightness is not None else 1
    sub = cell.subgridspec(rows, 1, height_ratios=(2, 1)[:rows], hspace=0.05)
    ax = fig.add_subplot(sub[0, 0])
    t = np.asarray(v.t_s, dtype=float)
    hours = t / 3600.0
    ax.plot(hours, v.v_v, color=_VOLT, linewidth=1.6, label="storage voltage")
    if v.v_stop_v is not None and math.isfinite(v.v_stop_v) and v.v_stop_v > 0:
        ax.axhline(v.v_stop_v, color=_THRESH, linestyle="--", linewidth=0.9,
                   label="stop voltage")
    if not v.lasts:
        ax.axvline(v.runtime_s / 3600.0, color=_TARGET, linewidth=1.2, label=v.stop_label)
    if not v.open_ended:
        ax.axvline(v.duration_s / 3600.0, color=_INK, linewidth=0.8, linestyle=":",
                   label="dawn")
    ax.set_ylabel("storage", fontsize=8)
    ax.yaxis.set_major_formatter(_eng("V"))
    ax.set_title("over the run" if v.open_ended else "through the night", loc="left")
    axes = [ax]
    if v.brightness is not None:
        ax_b = fig.add_subplot(sub[1, 0], sharex=ax)
        ax_b.plot(hours, v.brightness, color=_LED, linewidth=1.4)
        ax_b.fill_between(hours, 0.0, np.nan_to_num(v.brightness), color=_LED, alpha=0.18,
                          linewidth=0)
        ax_b.set_ylabel("effective " + ("intensity" if v.brightness_unit == "cd" else "current"),
                        fontsize=8)
        ax_b.yaxis.set_major_formatter(_eng(v.brightness_unit))
        ax_b.set_ylim(bottom=0.0)
        axes.append(ax_b)
        ax.tick_params(labelbottom=False)
    bottom = axes[-1]
    bottom.set_xlim(0.0, v.duration_s / 3600.0)
    if v.dusk is not None:
        from matplotlib.ticker import FuncFormatter

        dusk = v.dusk

        def clock(x, _pos):
            return (dusk + timedelta(hours=float(x))).strftime("%H:%M")

        bottom.xaxis.set_major_formatter(FuncFormatter(clock))
        bottom.set_xlabel("clock time", fontsize=8)
    else:
        bottom.set_xlabel("hours after dusk (h)", fontsize=8)
    for a in axes:
        _style(a)
    _legend(ax)


_DRAW = {WaveView: _draw_wave, SpreadView: _draw_spread, DriftView: _draw_drift,
         NightView: _draw_night}
