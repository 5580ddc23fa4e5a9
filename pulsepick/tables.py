"""Load the self-describing CSV tables shipped in ``pulsepick.data``.

A table file starts with ``#`` lines that describe it (content, column units,
source); the first non-comment line is the header row. Tables are read once and
cached. Numbers are converted to float where a whole column parses as numbers.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from functools import cache
from importlib import resources
from pathlib import Path

from pulsepick.errors import DataFileError, PartError


@dataclass(frozen=True)
class Table:
    """A parsed data table: its description lines, column names and rows."""

    name: str  # path inside pulsepick.data, e.g. "parts/logic_families.csv"
    notes: tuple[str, ...]  # the leading comment lines, without '#'
    columns: tuple[str, ...]
    rows: tuple[dict[str, object], ...]

    def column(self, name: str) -> list[object]:
        """All values of one column, in file order."""
        if name not in self.columns:
            raise DataFileError(
                f"table {self.name} has no column {name!r}; columns: {', '.join(self.columns)}"
            )
        return [row[name] for row in self.rows]


def parse_table(text: str, name: str) -> Table:
    """Parse the text of a self-describing CSV table (see module docstring)."""
    notes: list[str] = []
    body: list[str] = []
    for line in text.splitlines():
        stripped = line.strip()
        if not body and (stripped.startswith("#") or not stripped):
            if stripped:
                notes.append(stripped.lstrip("#").strip())
            continue
        if stripped.startswith("#") or not stripped:
            continue
        body.append(line)
    if not body:
        raise DataFileError(f"table {name} has no header row")
    reader = csv.DictReader(io.StringIO("\n".join(body)), skipinitialspace=True)
    columns = tuple(c.strip() for c in (reader.fieldnames or ()))
    raw_rows = []
    for i, row in enumerate(reader, start=2):
        if None in row or any(v is None for v in row.values()):
            raise DataFileError(f"table {name}: data row {i} has the wrong number of fields")
        raw_rows.append({k.strip(): v.strip() for k, v in row.items()})
    numeric = {c for c in columns if raw_rows and all(_is_number(r[c]) for r in raw_rows)}
    rows = tuple(
        {c: (float(r[c]) if c in numeric else r[c]) for c in columns} for r in raw_rows
    )
    return Table(name=name, notes=tuple(notes), columns=columns, rows=rows)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def data_root():
    """The folder (a ``Traversable``) that holds the tables, however pulsepick runs.

    Installed (wheel, zip or editable), the tables are the package ``pulsepick.data``.
    Run from a source tree (e.g. ``python -m pulsepick`` in the clone root, where the
    local ``pulsepick/`` folder shadows an installed copy), that package does not exist:
    the tables are the top-level ``data/`` folder beside ``pulsepick/``.
    """
    try:
        return resources.files("pulsepick.data")
    except ModuleNotFoundError:
        tree = Path(__file__).resolve().parent.parent / "data"
        if tree.is_dir():
            return tree
        raise DataFileError("the data tables are missing: neither the package pulsepick.data "
                            f"nor the folder {tree} exists; reinstall pulsepick") from None


@cache
def load_table(name: str) -> Table:
    """Load ``pulsepick.data/<name>`` (e.g. ``"e_series/E24.csv"``), cached."""
    try:
        text = data_root().joinpath(name).read_text(encoding="utf-8")
    except (FileNotFoundError, OSError) as err:
        raise DataFileError(f"data table {name} is missing from the installation") from err
    return parse_table(text, name)


def keyed_row(name: str, key: str, keys: tuple[str, ...], what: str) -> dict[str, object]:
    """The row of table ``name`` whose ``key`` column is ``key``.

    The part tables are keyed: each holds exactly the keys its module accepts (``keys``).
    Raises ``PartError`` for a key outside ``keys`` (``what`` names the part in the
    message, which lists the accepted keys) and ``DataFileError`` for a table whose keys
    are not exactly ``keys``.

    >>> keyed_row("parts/diodes.csv", "si", ("si", "schottky"), "diode")["n"]
    1.752
    """
    if key not in keys:
        raise PartError(f"unknown {what} {key!r}; accepted: {', '.join(keys)}")
    rows = {row["key"]: row for row in load_table(name).rows}
    if set(rows) != set(keys):
        raise DataFileError(f"{name} must hold exactly the keys {', '.join(keys)}")
    return rows[key]
