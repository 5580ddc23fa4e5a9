"""Shared rendering helpers for the shell: consoles, JSON output, small tables.

Only shell modules (``cli``, ``commands``) import this; the core never prints.
"""

from __future__ import annotations

import json
import math
import os
import sys
from typing import Any, TextIO

from rich import box
from rich.console import Console
from rich.table import Table

REPORT_WIDTH = 100
#: Narrowest report we lay out; a smaller COLUMNS is raised to this.
MIN_WIDTH = 40


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
    return Console(
        file=_TrimmedLines(target),
        width=width or report_width(interactive),
        no_color=no_color,
        color_system=None if (no_color or not interactive) else "auto",
        highlight=False,
        soft_wrap=False,
    )


def _plain(obj: Any) -> Any:
    """Convert numpy scalars/arrays, tuples and non-finite floats to plain JSON."""
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


def simple_table(title: str | None, columns: list[str], rows: list[list[str]],
                 justify: list[str] | None = None) -> Table:
    """A plain-bordered table that survives NO_COLOR and copy-paste."""
    table = Table(title=title, box=box.SIMPLE_HEAD, title_justify="left", pad_edge=False)
    for i, name in enumerate(columns):
        table.add_column(name, justify=(justify[i] if justify else "left"))  # type: ignore[arg-type]
    for row in rows:
        table.add_row(*row)
    return table


def print_wrapped(console: Console, text: str, indent: str = "  ", hang: str = "    ") -> None:
    """Print a paragraph wrapped to the console width with a hanging indent."""
    import textwrap

    width = max(40, (console.width or REPORT_WIDTH) - 1)
    lines = textwrap.wrap(text, width=width, initial_indent=indent, subsequent_indent=hang,
                          break_long_words=False, break_on_hyphens=False)
    for line in lines or [indent]:
        console.print(line, markup=False, highlight=False)
