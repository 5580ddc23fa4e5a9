"""Wording shared by the compact and the detailed solve reports: figures in engineering
notation, wrapped bullets, the cautions, and what a request cannot meet."""

from __future__ import annotations

import re


def _eng(x, unit: str, digits: int = 3) -> str:
    """Engineering text of a figure; times as the solver words them; "-" when missing."""
    from pulsepick.solve import time_text
    from pulsepick.units import MISSING, format_figure

    text = format_figure(x, unit, digits)
    return time_text(x) if unit == "s" and text != MISSING else text


def _bullet(console, text: str, indent: str = "  - ", hang: str = "    ") -> None:
    from pulsepick.output.render import print_wrapped

    print_wrapped(console, text, indent=indent, hang=hang)


def _render_cautions(console, cautions) -> None:
    console.print("[bold]Cautions[/bold]")
    for text in cautions:
        _bullet(console, text)


def miss_caption(result) -> str | None:
    """What the "!" after a circuit in a ranking table means; None when no row has one."""
    from pulsepick.solve import MISS_FACTOR

    if not any(c.misses for c in result.candidates):
        return None
    return (f"! a figure more than {MISS_FACTOR:g}x off its aim: shown because no circuit "
            "comes closer to it")


def render_unmet(console, result, cautions) -> bool:
    """What the request cannot meet exactly; when nothing at all can be offered, the
    nearest circuit and the cautions too. True when the report ends there."""
    if result.explanations:
        console.print("[bold]What cannot be met exactly[/bold]")
        for text in result.explanations:
            _bullet(console, text)
        console.print()
    if result.success:
        return False
    console.print("[bold]Nothing can be offered for this request.[/bold]")
    if result.nearest:
        f = result.nearest
        _bullet(console, f"Nearest circuit found: period {_eng(f['period_s'], 's')}, flash "
                         f"{_eng(f['flash_s'], 's')}, LED peak "
                         f"{_eng(f['led_peak_a'], 'A')} (needs "
                         f"{_eng(result.request.led.visible_a, 'A')} to be seen).", indent="  ")
    console.print()
    _render_cautions(console, cautions)
    return True


def _nothing_line(what: str, explanations) -> None:
    """The one stderr line of a request that gets nothing (the reasons are on stdout)."""
    import sys

    from pulsepick.output.render import word_hints

    first = word_hints(next(iter(explanations), ""))
    reason = f": {first}" if first else ""
    print(f"pulsepick: error: nothing can be offered for \"{what}\"{reason}",
          file=sys.stderr)


def crossing_text(result) -> str | None:
    """The crossing-current assumption of the Schmitt candidates, once for the report."""
    texts = [(c.rank, c.crossing_current) for c in result.candidates if c.crossing_current]
    if not texts:
        return None
    ranks = " ".join(f"#{r}" for r, _ in texts)
    if len({t for _, t in texts}) == 1:
        return f"crossing current of the Schmitt gate ({ranks}): {texts[0][1]}"
    # one label and one explanation, the figure of each candidate beside its rank
    parts = [re.match(r"^(ESTIMATE|measured:) (\S+ \S+)(.*)$", t) for _, t in texts]
    if all(parts) and len({(m.group(1), m.group(3)) for m in parts}) == 1:
        figures = ", ".join(f"#{r} {m.group(2)}" for (r, _), m in zip(texts, parts,
                                                                         strict=True))
        return (f"crossing current of the Schmitt gate ({parts[0].group(1)}): {figures}"
                f"{parts[0].group(3)}")
    return (f"crossing current of the Schmitt gate ({ranks}): "
            + "; ".join(f"#{r} {t}" for r, t in texts))
