"""Plain-character drawings for the terminal (shell side; no colour needed).

``waveform_lines`` draws one period of a blinker: the timing-capacitor voltage as a
small line chart with its thresholds, and the LED current as a strip of bars under
it, on one time axis. Everything is plain text: it reads the same with NO_COLOR and
when pasted into a mail.
"""

from __future__ import annotations

import numpy as np

from pulsepick.units import format_eng

_BARS = " ▁▂▃▄▅▆▇█"


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
                   height: int = 7) -> list[str]:
    """Lines of text showing one period: capacitor voltage and LED current."""
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
    row_of = {name: int(round((val - lo) / (hi - lo) * (height - 1)))
              for name, val in (("VT+", vt_plus), ("VT-", vt_minus))}
    lines = []
    label_w = 16
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
    lines.append(f"{'LED ' + format_eng(peak, 'A') + ' pk':>{label_w}} |{bars}")
    axis = "0" + " " * (width - 1 - len(format_eng(period, "s"))) + format_eng(period, "s")
    lines.append(f"{'time':>{label_w}} |{axis}")
    lines.append(f"{'':>{label_w}}  * capacitor voltage   bars: LED current (column maximum)")
    return lines
