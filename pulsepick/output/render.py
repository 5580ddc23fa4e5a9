"""Shared rendering helpers for the shell: consoles, JSON output, small tables.

Only shell modules (``cli``, ``commands``) import this; the core never prints.
"""

from __future__ import annotations

import contextlib
import contextvars
import json
import math
import os
import re
import sys
from typing import Any, TextIO

from rich import box
from rich.console import Console
from rich.table import Table

from pulsepick.hints import MARKER, Hint, has_marker, parse

REPORT_WIDTH = 100
#: Narrowest report we lay out; a smaller COLUMNS is raised to this.
MIN_WIDTH = 40


# ---------------------------------------------------------------------------- hints

#: How hints are worded here: "cli" (``--buffered``) or "api" (``buffered=True``).
HINT_STYLES = ("cli", "api")
_HINT_STYLE: contextvars.ContextVar[str] = contextvars.ContextVar("hint_style", default="cli")


@contextlib.contextmanager
def hint_style(style: str):
    """Word hints in ``style`` ("cli" or "api") inside the ``with`` block."""
    if style not in HINT_STYLES:
        raise ValueError(f"hint style {style!r}: one of {', '.join(HINT_STYLES)}")
    token = _HINT_STYLE.set(style)
    try:
        yield
    finally:
        _HINT_STYLE.reset(token)


def _word(h: Hint, style: str) -> str:
    if h.command or style == "cli":
        name = "--" + ("no-" if h.value is False else "") + h.option.replace("_", "-")
        words = name if h.value is None or h.is_flag else f"{name} {h.value}"
        return f"pulsepick {h.command} {words}" if h.command else words
    return h.option if h.value is None else f"{h.option}={h.value!r}"


def word_hints(text: Any, style: str | None = None) -> Any:
    """``text`` with every hint (:mod:`pulsepick.hints`) worded for the user: as the
    command-line option (``--buffered``, ``--no-buffered``, ``--clamp both``) or, in the
    "api" style, as the keyword (``buffered=True``, ``clamp='both'``); a hint naming
    another command is worded as its command line in both. A :class:`Hint` becomes its
    words; anything but text passes unchanged."""
    style = style or _HINT_STYLE.get()
    if isinstance(text, Hint):
        return _word(text, style)
    if not isinstance(text, str) or not has_marker(text):
        return text
    return MARKER.sub(lambda m: _word(parse(m.group(0)), style), text)


class _WordingConsole(Console):
    """A console that words the hints of every text it lays out (printed text, table
    cells and titles all pass through ``render_str``)."""

    def render_str(self, text: str, *args, **kwargs):  # type: ignore[override]
        return super().render_str(word_hints(text), *args, **kwargs)

    def on_broken_pipe(self) -> None:
        """The reader of the output left (``| head``): the error goes to the program,
        which ends quietly, instead of the console's own exit with status 1."""
        self.quiet = True
        raise BrokenPipeError("the reader of the output has left")


class _TrimmedLines:
    """A text stream that drops the spaces at the end of every line written through it
    (tables pad their cells to the column width; the padding is noise in a file)."""

    def __init__(self, target: TextIO) -> None:
        self._target = target
        self._pending = ""

    def write(self, text: str) -> int:
        lines = (self._pending + text).split("\n")
        self._pending = lines.pop()
        if lines:
            self._target.write("\n".join(line.rstrip(" ") for line in lines) + "\n")
        return len(text)

    def flush(self) -> None:
        if self._pending:  # a line without its end yet: never hold text back
            self._target.write(self._pending)
            self._pending = ""
        self._target.flush()

    def isatty(self) -> bool:
        return hasattr(self._target, "isatty") and self._target.isatty()

    def fileno(self) -> int:
        return self._target.fileno()

    @property
    def encoding(self) -> str:
        return getattr(self._target, "encoding", "utf-8") or "utf-8"


def report_width(interactive: bool = False) -> int | None:
    """The width to lay a report out in: ``COLUMNS`` when set (also when the output
    is redirected), else 100 for a file or pipe and the terminal's own for a terminal."""
    text = os.environ.get("COLUMNS", "").strip()
    if text.isdigit() and int(text) > 0:
        return max(MIN_WIDTH, int(text))
    return None if interactive else REPORT_WIDTH


def make_console(file: TextIO | None = None, width: int | None = None) -> Console:
    """A console that honours NO_COLOR and COLUMNS, stays readable at 100 columns and
    writes no spaces at the ends of lines."""
    no_color = bool(os.environ.get("NO_COLOR"))
    target = file if file is not None else sys.stdout
    interactive = hasattr(target, "isatty") and target.isatty()
    return _WordingConsole(
        file=_TrimmedLines(target),
        width=width or report_width(interactive),
        no_color=no_color,
        color_system=None if (no_color or not interactive) else "auto",
        highlight=False,
        soft_wrap=False,
    )


def _plain(obj: Any) -> Any:
    """Convert numpy scalars/arrays, tuples and non-finite floats to plain JSON, with
    the hints in text worded."""
    if isinstance(obj, str | Hint):
        return word_hints(obj)
    if hasattr(obj, "tolist"):
        obj = obj.tolist()
    if isinstance(obj, dict):
        return {str(k): _plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_plain(v) for v in obj]
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def dump_json(obj: Any, file: TextIO | None = None) -> None:
    """Write ``obj`` as plain JSON (no colour, no markup) to stdout."""
    target = file if file is not None else sys.stdout
    json.dump(_plain(obj), target, indent=2, ensure_ascii=False, allow_nan=False)
    target.write("\n")


#: A cell that is one value with its unit ("4.7 kΩ", "+1.2 %", "2.7..3.3 s", "-"): such
#: a column is never wrapped, so a value and its unit stay on one line.
_VALUE_CELL = re.compile(r"^[-+±−~<>]?[\d.,]+((\.\.|-)[\d.,]+)?( ?\S{1,6})?$|^-$")


def _is_value(cell: str) -> bool:
    return bool(_VALUE_CELL.match(cell.strip())) and len(cell) <= 16


def simple_table(title: str | None, columns: list[str], rows: list[list[str]],
                 justify: list[str] | None = None) -> Table:
    """A plain-bordered table that survives NO_COLOR and copy-paste."""
    table = Table(title=title, box=box.SIMPLE_HEAD, title_justify="left", pad_edge=False)
    rows = [[word_hints(cell) for cell in row] for row in rows]
    for i, name in enumerate(columns):
        cells = [str(row[i]) for row in rows if i < len(row)]
        values = [len(c) for c in cells if _is_value(c)]
        side = justify[i] if justify else "left"
        table.add_column(name, justify=side,  # type: ignore[arg-type]
                         no_wrap=bool(cells) and len(values) == len(cells),
                         min_width=max(values, default=None))
    for row in rows:
        table.add_row(*row)
    return table


#: A number and the unit after it ("3 s", "4.7 kΩ", "55 %"): wrapped text never
#: breaks the line between them.
_VALUE_UNIT = re.compile(r"(?<=\d) (?=(?:[pnuµmkMG]?(?:Ω|F|A|V|s|Hz|W|C|J|lx|lux|cd|h)|mcd|min"
                         r"|%|°C|builds)(?!\w))")
_GLUE = "\u00a0"  # textwrap breaks only at ASCII whitespace, so this joins two words


def wrap_text(text: str, width: int, indent: str = "  ", hang: str = "    ") -> list[str]:
    """``text`` wrapped to ``width`` with a hanging indent, values kept with their units."""
    import textwrap

    glued = _VALUE_UNIT.sub(_GLUE, word_hints(text))
    lines = textwrap.wrap(glued, width=width, initial_indent=indent, subsequent_indent=hang,
                          break_long_words=False, break_on_hyphens=False)
    return [line.replace(_GLUE, " ") for line in lines] or [indent.rstrip()]


def plot_columns(console: Console, used: int = 20, most: int = 72) -> int:
    """Plot columns for a plain-character chart whose labels and margins take ``used``
    columns: ``most`` at 100 columns, fewer on a narrower console (never under 24)."""
    return max(24, min(most, (console.width or REPORT_WIDTH) - used))


def print_wrapped(console: Console, text: str, indent: str = "  ", hang: str = "    ") -> None:
    """Print a paragraph wrapped to the console width with a hanging indent."""
    width = max(MIN_WIDTH, (console.width or REPORT_WIDTH) - 1)
    for line in wrap_text(text, width, indent, hang):
        console.print(line, markup=False, highlight=False)
