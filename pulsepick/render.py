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


def make_console(file: TextIO | None = None, width: int | None = None) -> Console:
    """A console that honours NO_COLOR and stays readable at 100 columns."""
    no_color = bool(os.environ.get("NO_COLOR"))
    target = file if file is not None else sys.stdout
    interactive = hasattr(target, "isatty") and target.isatty()
    return Console(
        file=target,
        width=width or (None if interactive else REPORT_WIDTH),
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
