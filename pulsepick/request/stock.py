"""The parts drawer (``--stock FILE.csv``): :func:`parse_stock`, :class:`Stock`."""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass

from pulsepick.errors import PulsepickError, RequestError
from pulsepick.request.defaults import STOCK_DIELECTRICS


@dataclass(frozen=True)
class StockItem:
    """One line of the parts drawer."""

    kind: str  # "R" or "C"
    value: float  # ohm or farad
    qty: int | None  # pieces in the drawer; None: plenty
    dielectric: str | None  # capacitor kind key(s) word, or None: any allowed kind
    line: int  # line number in the file


@dataclass(frozen=True)
class Stock:
    """The parts the user has; the solver picks only from these."""

    items: tuple[StockItem, ...]
    source: str  # file name, for messages

    def resistors(self) -> tuple[float, ...]:
        """Distinct resistor values in the drawer (ohm), increasing."""
        return tuple(sorted({i.value for i in self.items if i.kind == "R" and i.qty != 0}))

    def capacitors(self, kinds: tuple[str, ...]) -> tuple[tuple[float, str], ...]:
        """Distinct ``(value F, kind key)`` pairs usable as any of ``kinds``."""
        out = set()
        for item in self.items:
            if item.kind != "C" or item.qty == 0:
                continue
            allowed = kinds if item.dielectric is None else tuple(
                k for k in _dielectric_kinds(item.dielectric) if k in kinds)
            for k in allowed:
                out.add((item.value, k))
        return tuple(sorted(out))

    def count(self, kind: str, value: float) -> int | None:
        """Pieces of ``value`` in the drawer (None: plenty; 0: none)."""
        total = 0
        seen = False
        for item in self.items:
            if item.kind == kind and math.isclose(item.value, value, rel_tol=1e-9):
                seen = True
                if item.qty is None:
                    return None
                total += item.qty
        return total if seen else 0


def _dielectric_kinds(word: str) -> tuple[str, ...]:
    """Kind keys a drawer's dielectric word stands for; a plain "film" is taken as
    polyester, the commoner and looser of the two (common practice)."""
    return ("film-pet",) if word == "film" else (word,)


_STOCK_FORMAT = ("columns kind,value[,qty][,dielectric] with kind R or C, a value such as "
                 "4k7 or 100n, a whole qty, and a dielectric such as film, c0g, x7r or "
                 "electrolytic")


#: Bad rows of a stock file reported in one message at most.
_MAX_PROBLEMS = 3


def parse_stock(text: str, source: str = "stock file") -> Stock:
    """Read a parts drawer (see the module docstring); every bad row is reported.

    Raises
    ------
    RequestError
        naming each row that could not be read (line number and text).
    """
    from pulsepick.infile import BOM
    from pulsepick.limits import MAX_STOCK_ROWS

    lines = text.removeprefix(BOM).splitlines()
    body = [(n, line) for n, line in enumerate(lines, start=1)
            if line.strip() and not line.lstrip().startswith("#")]
    if not body:
        raise RequestError(f"{source} holds no header row; expected {_STOCK_FORMAT}")
    if len(body) > MAX_STOCK_ROWS + 1:
        raise RequestError(f"{source} has {len(body) - 1:,} rows; a stock file takes at most "
                           f"{MAX_STOCK_ROWS:,}")
    header_no, header = body[0]
    columns = _stock_columns(header_no, header, source)
    items: list[StockItem] = []
    problems: list[str] = []
    for n, line in body[1:]:
        if len(problems) >= _MAX_PROBLEMS:
            problems.append("and maybe more")
            break
        item = _stock_row(n, line, columns)
        if isinstance(item, str):
            problems.append(item)
        else:
            items.append(item)
    if problems:
        raise RequestError(f"{source}: " + "; ".join(problems) + f" (expected {_STOCK_FORMAT})")
    if not items:
        raise RequestError(f"{source} lists no parts; expected {_STOCK_FORMAT}")
    return Stock(items=tuple(items), source=source)


def _stock_columns(header_no: int, header: str, source: str) -> list[str]:
    """The columns the header row names (kind and value at least, each once)."""
    from pulsepick.errors import echo

    try:
        columns = [c.strip().lower() for c in next(csv.reader([header]))]
    except csv.Error:
        columns = []
    unknown = [c for c in columns if c not in ("kind", "value", "qty", "dielectric")]
    missing = [c for c in ("kind", "value") if c not in columns]
    if unknown or missing or len(set(columns)) != len(columns):
        what = []
        if missing:
            what.append(f"missing {', '.join(missing)}")
        if unknown:
            what.append(f"unknown {', '.join(unknown)}")
        if len(set(columns)) != len(columns):
            what.append("a column twice")
        raise RequestError(f"{source} line {header_no}: header {echo(header.strip())} has "
                           f"{'; '.join(what)}; expected {_STOCK_FORMAT}")
    return columns


def _stock_row(n: int, line: str, columns: list[str]) -> StockItem | str:
    """One row of the drawer as a :class:`StockItem`, or what is wrong with it."""
    from pulsepick.errors import echo
    from pulsepick.units import check_component, parse_value

    where = f"line {n} {echo(line.strip(), 40)}"
    try:
        fields = next(csv.reader(io.StringIO(line)))
    except csv.Error as err:
        return f"{where}: not a CSV row ({err})"
    fields = [f.strip() for f in fields]
    if len(fields) > len(columns):
        return f"{where}: {len(fields)} fields for {len(columns)} columns"
    row = dict(zip(columns, fields + [""] * (len(columns) - len(fields)), strict=True))
    kind_word = row["kind"].lower()
    kind = {"r": "R", "resistor": "R", "c": "C", "capacitor": "C"}.get(kind_word)
    if kind is None:
        return f"{where}: kind {echo(row['kind'], 20)} is not R, resistor, C or capacitor"
    try:
        unit = "ohm" if kind == "R" else "F"
        value = check_component(parse_value(row["value"], unit), unit, "value")
    except PulsepickError as err:
        return f"{where}: {err}"
    qty: int | None = None
    if row.get("qty"):
        try:
            qty = int(row["qty"])
            if qty < 0:
                raise ValueError
        except ValueError:
            return f"{where}: qty {echo(row['qty'], 20)} is not a whole number >= 0"
    diel = (row.get("dielectric") or "").lower() or None
    if diel is not None and kind == "R":
        return f"{where}: a resistor has no dielectric"
    if diel is not None and diel not in STOCK_DIELECTRICS:
        return (f"{where}: dielectric {echo(diel, 20)} unknown; accepted: "
                f"{', '.join(STOCK_DIELECTRICS)}")
    return StockItem(kind, value, qty, diel, n)


def read_stock(path: str) -> Stock:
    """Read a parts drawer file (see :func:`parse_stock`): a regular UTF-8 file (byte-order
    mark and CRLF accepted) of at most 10 MB."""
    from pulsepick.infile import read_text

    text = read_text(path, "stock file", f"a CSV file with {_STOCK_FORMAT}")
    return parse_stock(text, path)


