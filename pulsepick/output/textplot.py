"""Plain-character drawings for the terminal (shell side; no colour needed).

``waveform_lines`` draws one period of a blinker: the timing-capacitor voltage as a
small line chart with its thresholds, the gate output as a logic strip and the LED
current as a strip of bars under it, on one time axis. ``spread_lines`` draws the
period over many builds as a compact histogram with the P5..P95 band and the target
marked. Everything is plain text: it reads the same with NO_COLOR and when pasted
into a mail, and it fits in 100 columns (16 label columns, a bar and 72 plot columns).
"""

from __future__ import annotations

import textwrap

import numpy as np

from pulsepick.units import format_eng

_BARS = " ▁▂▃▄▅▆▇█"
_GATE_HIGH, _GATE_LOW = "▔", "▁"
LABEL_WIDTH = 16  # columns of the row labels


def _columns(t, y, t_end, width, reduce):
    """Reduce samples ``(t, y)`` to ``width`` columns over [0, t_end]."""
    edges = np.linspace(0.0, t_end, width + 1)
    out = np.full(width, np.nan)
    idx = np.clip(np.searchsorted(edges, t, side="right") - 1, 0, width - 1)
    for k in range(width):
        sel = y[idx == k]
        if sel.size:
            out[k] = reduce(sel)
    # fill empty columns from their neighbours (sparse samples on long phases)
    good = np.flatnonzero(np.isfinite(out))
    if good.size:
        out = np.interp(np.arange(width), good, out[good])
    return out


def waveform_lines(t_s, vc_v, led_a, *, vt_plus, vt_minus, width: int = 72,
                   height: int = 7, high_s: float | None = None) -> list[str]:
    """Lines of text showing one period: capacitor voltage, gate output and LED current.

    ``t_s`` starts at the beginning of the output-high phase (as the reference engine's
    trace does); ``high_s`` (s), when given, adds a strip showing the gate output high
    (``▔``) for the first ``high_s`` seconds and low (``▁``) for the rest.
    """
    t = np.asarray(t_s, dtype=float)
    vc = np.asarray(vc_v, dtype=float)
    led = np.asarray(led_a, dtype=float)
    period = float(t.max()) if t.size else 0.0
    if period <= 0:
        return ["(no waveform: the circuit does not oscillate)"]
    v_cols = _columns(t, vc, period, width, np.mean)
    i_cols = _columns(t, led, period, width, np.max)
    lo, hi = float(vt_minus), float(vt_plus)
    pad = 0.08 * (hi - lo)
    lo, hi = lo - pad, hi + pad
    rows = np.clip(np.round((v_cols - lo) / (hi - lo) * (height - 1)), 0, height - 1)
    row_of = {name: round((val - lo) / (hi - lo) * (height - 1))
              for name, val in (("VT+", vt_plus), ("VT-", vt_minus))}
    lines = []
    label_w = LABEL_WIDTH
    for r in range(height - 1, -1, -1):
        tag = next((f"{n} {v:.2f} V" for n, v in (("VT+", vt_plus), ("VT-", vt_minus))
                    if row_of[n] == r), "")
        cells = []
        for k in range(width):
            if rows[k] == r:
                cells.append("*")
            elif tag:
                cells.append("-")
            else:
                cells.append(" ")
        lines.append(f"{tag:>{label_w}} |{''.join(cells)}")
    peak = float(np.nanmax(i_cols)) if np.isfinite(i_cols).any() else 0.0
    if peak > 0:
        levels = np.clip(np.round(i_cols / peak * (len(_BARS) - 1)), 0, len(_BARS) - 1)
        bars = "".join(_BARS[int(k)] for k in levels)
    else:
        bars = " " * width
    if high_s is not None:
        mids = (np.arange(width) + 0.5) * period / width
        gate = "".join(_GATE_HIGH if m < high_s else _GATE_LOW for m in mids)
        lines.append(f"{'gate output':>{label_w}} |{gate}")
    lines.append(f"{'LED ' + format_eng(peak, 'A') + ' pk':>{label_w}} |{bars}")
    axis = "0" + " " * (width - 1 - len(format_eng(period, "s"))) + format_eng(period, "s")
    lines.append(f"{'time':>{label_w}} |{axis}")
    legend = "* capacitor voltage   bars: LED current (column maximum)"
    if high_s is not None:
        legend = f"* capacitor voltage   {_GATE_HIGH}{_GATE_LOW} gate high/low   bars: LED current"
    lines.append(f"{'':>{label_w}}  {legend}")
    return lines


def spread_lines(period_s, *, p5_s: float, p95_s: float, target_s: float | None = None,
                 yield_band: float | None = None, not_drawn: int = 0, width: int = 72,
                 height: int = 5) -> list[str]:
    """Lines of text showing the period over many builds as a histogram.

    Parameters
    ----------
    period_s : array of float
        The period of every build that oscillates, s (non-finite entries are skipped).
    p5_s, p95_s : float
        The 5th and 95th percentiles, s, as the spread analysis reports them (marked,
        not recomputed, so the drawing agrees with the numbers beside it).
    target_s : float, optional
        The target period, s, marked ``^``.
    yield_band : float, optional
        Fraction: the builds within ``target * (1 +/- yield_band)`` count as good; the
        band is marked with ``-`` beside the ``^``.
    not_drawn : int
        Builds left out of ``period_s`` (they stall, stay unpowered): named in a note.

    The drawn range runs from the 1st to the 99th percentile of the builds, widened
    to take in the P5..P95 band and the target; builds outside it are counted in a
    note rather than squeezed into the end columns.
    """
    p = np.asarray(period_s, dtype=float).reshape(-1)
    p = p[np.isfinite(p)]
    if p.size == 0:
        return ["(no spread drawing: no build oscillates)"]
    q1, q99 = (float(x) for x in np.percentile(p, (1.0, 99.0)))
    marks = [x for x in (p5_s, p95_s, target_s) if x is not None and np.isfinite(x)]
    if target_s is not None and yield_band:
        marks += [target_s * (1 - yield_band), target_s * (1 + yield_band)]
    lo, hi = min([q1, *marks]), max([q99, *marks])
    if not hi > lo:
        lo, hi = lo * 0.99, hi * 1.01 if hi > 0 else 1.0
    pad = 0.02 * (hi - lo)
    lo, hi = lo - pad, hi + pad
    inside = (p >= lo) & (p <= hi)
    below, above = int(np.sum(p < lo)), int(np.sum(p > hi))
    # a few builds per column would draw noise: 2 to 4 columns per bin, by the count
    per_bin = 2 if p.size >= 1000 else (3 if p.size >= 300 else 4)
    bins = max(1, width // per_bin)
    counts, _ = np.histogram(p[inside], bins=bins, range=(lo, hi))
    counts = np.repeat(counts, per_bin)
    counts = np.concatenate([counts, np.full(width - counts.size, counts[-1])])
    top = int(counts.max())

    def col(x: float) -> int:
        return int(np.clip(np.floor((x - lo) / (hi - lo) * width), 0, width - 1))

    lines = []
    eighths = np.round(counts / top * height * 8).astype(int) if top else np.zeros(width, int)
    for r in range(height - 1, -1, -1):
        cells = "".join(_BARS[int(np.clip(e - 8 * r, 0, 8))] for e in eighths)
        label = f"{top:,} per bin" if r == height - 1 else ""
        lines.append(f"{label:>{LABEL_WIDTH}} |{cells}".rstrip())
    band = [" "] * width
    a, b = col(p5_s), col(p95_s)
    for k in range(a, b + 1):
        band[k] = "="
    band[a], band[b] = "[", "]"
    lines.append(f"{'P5..P95':>{LABEL_WIDTH}} |{''.join(band).rstrip()}")
    if target_s is not None and np.isfinite(target_s):
        row = [" "] * width
        label = "target"
        if yield_band:
            for k in range(col(target_s * (1 - yield_band)), col(target_s * (1 + yield_band)) + 1):
                row[k] = "-"
            label = f"target ±{yield_band * 100:g} %"
        row[col(target_s)] = "^"
        lines.append(f"{label:>{LABEL_WIDTH}} |{''.join(row).rstrip()}")
    left, mid, right = (format_eng(x, "s") for x in (lo, 0.5 * (lo + hi), hi))
    axis = [" "] * width
    axis[:len(left)] = left
    start = (width - len(mid)) // 2
    axis[start:start + len(mid)] = mid
    axis[width - len(right):] = right
    lines.append(f"{'period':>{LABEL_WIDTH}} |{''.join(axis)}")
    notes = [f"{p.size:,} builds oscillate; P5 {format_eng(p5_s, 's')}, "
             f"P95 {format_eng(p95_s, 's')}"]
    if below or above:
        notes.append(f"{below + above:,} outside the drawn range ({below:,} shorter, "
                     f"{above:,} longer)")
    if not_drawn:
        notes.append(f"{not_drawn:,} do not oscillate (not drawn)")
    pad = " " * (LABEL_WIDTH + 2)
    lines += textwrap.wrap("; ".join(notes), width=LABEL_WIDTH + 2 + width,
                           initial_indent=pad, subsequent_indent=pad)
    return lines
