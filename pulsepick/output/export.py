"""Exports of the solver's answer: the JSON document and the CSV buy list.

The buy list is one CSV row per distinct part, made so that a spreadsheet and a
CSV reader open it as they are: UTF-8 with a byte-order mark (so Ω and µ show as
such), the header on the first line, no comment lines. Where it came from (the
pulsepick version, the request, the seed, the circuit, the date) sits in named
columns repeated on every row. Every cell passes through :func:`safe_cell`, the one
neutraliser of spreadsheet formulas (ref:owasp-csv-injection). Files are written
atomically: a temporary file in the same folder, then ``os.replace``, so a reader
never sees half a file and an interrupted run leaves the old file as it was. An
existing file is only replaced when asked to (``force``).

Buy-list columns: ``qty`` (pieces), ``refs`` (reference designators, space-separated),
``kind`` (resistor, capacitor, chip, diode, led), ``value`` (the value in engineering
notation such as ``4.7 kΩ``, or the part's name), ``value_si`` (ohm or farad as a plain
decimal number such as ``0.0000047``; empty for parts without a value), ``unit`` (ohm,
F), ``code`` (RKM code, or the part type), ``series`` (E-series), ``tolerance``
(``±5 %``; an uneven one as ``−10/+20 %`` with a minus sign, never read as a formula),
``dielectric`` (capacitor kind), ``rating`` (voltage or power rating), ``bands``
(resistor colour bands, IEC 60062), ``notes``; ``in_stock`` (only with a parts drawer:
``yes``, ``no``, ``short: N of M``, or empty for parts a drawer file does not list);
then ``made_by``, ``request``, ``seed``, ``builds``, ``circuit``, ``date``.
"""

from __future__ import annotations

import csv
import io
import math
import os
import tempfile
from typing import Any

from pulsepick.errors import ExportError
from pulsepick.output.render import word_hints

BUYLIST_COLUMNS = ("qty", "refs", "kind", "value", "value_si", "unit", "code", "series",
                   "tolerance", "dielectric", "rating", "bands", "notes")
#: Where a buy list came from, in named columns after the parts' own.
PROVENANCE_COLUMNS = ("made_by", "request", "seed", "builds", "circuit", "date")
#: The column added when the solve used a parts drawer (``--stock``).
STOCK_COLUMN = "in_stock"
#: Characters that make a spreadsheet read a cell as a formula when they start it
#: (ref:owasp-csv-injection): = + - @, and tab and carriage return, which some
#: spreadsheets skip before looking for the formula sign.
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def _num(x: Any) -> Any:
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


def figures_json(figs: dict[str, Any] | None) -> dict[str, Any] | None:
    """Figures as plain JSON: non-finite numbers become null, status a word."""
    from pulsepick.circuits.base import STATUS_WORDS

    if figs is None:
        return None
    out = {k: _num(float(v)) for k, v in figs.items() if k != "status"}
    out["status"] = STATUS_WORDS[int(figs["status"])]
    return out


def _opt(x):
    return None if x is None else _num(float(x))


def candidate_json(c) -> dict[str, Any]:
    """One candidate (``pulsepick.solve.Candidate``) as plain JSON data."""
    d = c.design
    ref = c.reference
    out: dict[str, Any] = {
        "rank": c.rank,
        "core": d.topo.core,
        "stage": d.topo.stage,
        "buffered": d.topo.buffered,
        "lit": d.topo.lit,
        "steer": d.topo.steer,
        "label": d.topo.label(),
        "family": d.chip.family,
        "supply_v": d.supply_v,
        "values": {f"{k}_{'ohm' if k[0] == 'r' else 'f'}": v for k, v in d.values.items()},
        "parts": [p.to_dict() for p in c.parts],
        "figures": figures_json(c.figures),
        "errors": {k: _num(v) for k, v in c.errors.items()},
        "score": _num(c.score),
        "score_parts": {k: _num(v) for k, v in c.score_parts.items()},
        "period_spread_estimate": c.period_spread,
        "end_of_night_figures": figures_json(c.end_figures),
        "reference_figures": None if ref is None else figures_json(ref.figures.row()),
        "reference_success": None if ref is None else ref.success,
        "reference_message": None if ref is None else ref.message,
        "spread": None if c.spread is None else c.spread.as_dict(),
        "drift": [] if c.drift is None else c.drift.rows(),
        "drift_summary": None if c.drift is None else {
            k: v for k, v in c.drift.as_dict().items() if k != "steps"},
        "warnings": list(c.warnings),
        "notes": list(c.notes),
        "crossing_current": c.crossing_current,
        "median_period_s": _opt(c.median_period_s),
        "p5_period_s": _opt(c.p5_period_s),
        "p95_period_s": _opt(c.p95_period_s),
        "yield": _opt(c.yield_fraction),
        "lasts_night": c.lasts_night,
        "night": None if c.night is None else c.night.as_dict(),
        "runs_at_end_supply": c.runs_at_end_supply,
        "misses": list(c.misses),
        "aim_levels_v": None if c.aim_levels_v is None else list(c.aim_levels_v),
        "median_note": c.median_note,
    }
    return out


def solve_cautions(request, *, storage: bool = False) -> tuple[str, ...]:
    """The cautions a solver answer prints, where they apply.

    Always: not a safety light, low voltage only. The supercapacitor short-circuit
    caution only when a storage part is involved: a supply range (the droop of a
    storage through the night) or a storage named in a design file.
    """
    from pulsepick.analysis.cautions import (
        LOW_VOLTAGE_ONLY,
        NOT_A_SAFETY_LIGHT,
        POLARITY_AND_SHORTS,
    )

    reqs = [li.request for li in request.lights] if hasattr(request, "lights") else [request]
    out = [NOT_A_SAFETY_LIGHT, LOW_VOLTAGE_ONLY]
    if storage or any(r.supply_end_v is not None for r in reqs):
        out.insert(0, POLARITY_AND_SHORTS)
    return tuple(out)


def result_json(result, cautions: tuple[str, ...] = ()) -> dict[str, Any]:
    """The whole answer (``pulsepick.solve.SolveResult``) as plain JSON data."""
    from pulsepick import __version__

    req = result.request
    assumptions = req.assumptions()
    crossing = next((c.crossing_current for c in result.candidates if c.crossing_current),
                    None)
    if crossing is not None:
        assumptions["crossing_current"] = crossing
    plan = getattr(result, "night_plan", None)
    assumptions["night"] = None if plan is None else plan.as_dict()
    return {
        "pulsepick": __version__,
        "request": req.to_dict(),
        "assumptions": assumptions,
        "success": result.success,
        "message": result.message,
        "explanations": list(result.explanations),
        "nearest_figures": figures_json(result.nearest),
        "search": {"evaluated": result.evaluated, "search_s": result.search_s},
        "candidates": [candidate_json(c) for c in result.candidates],
        "cautions": list(cautions),
    }


def safe_cell(value: Any) -> str:
    r"""One CSV cell as text a spreadsheet shows and never runs as a formula.

    Line breaks (CR, LF, CR LF) inside the cell become single spaces, so one record is
    one line. A cell that then starts (after any spaces) with ``=``, ``+``, ``-``, ``@``,
    a tab or a carriage return gets a leading apostrophe, the usual way to make a
    spreadsheet take it as text (ref:owasp-csv-injection). Numbers written by pulsepick
    are never negative, so plain numbers pass unchanged.

    Examples
    --------
    >>> safe_cell("=1+1")
    "'=1+1"
    >>> safe_cell("-10/+20 %")
    "'-10/+20 %"
    >>> safe_cell("garden\r\npath")
    'garden path'
    >>> safe_cell(4700.0)
    '4700.0'
    """
    text = "" if value is None else word_hints(str(value))
    text = text.replace("\r\n", " ").replace("\r", " ").replace("\n", " ")
    if text.lstrip(" ").startswith(FORMULA_STARTS):
        text = "'" + text
    return text


def si_text(value: float | None) -> str:
    """A plain decimal number (``0.0000047``, ``4700``), never in exponent form."""
    import numpy as np

    if value is None or not math.isfinite(value):
        return ""
    return np.format_float_positional(float(value), trim="-")


def _tolerance_cell(text: str) -> str:
    """``-10/+20 %`` written with a minus sign (U+2212): reads as text, not a formula."""
    return "\u2212" + text[1:] if text.startswith("-") else text


def buylist_rows(candidate, stock=None) -> list[dict[str, str]]:
    """The buy list of a candidate as CSV-ready rows (strings)."""
    return part_rows(candidate.parts, stock)


def _in_stock(row, stock) -> str:
    p = row.part
    kind = {"resistor": "R", "capacitor": "C"}.get(p.kind)
    if kind is None or p.value is None:
        return ""
    have = stock.count(kind, float(p.value))
    if have is None or have >= row.quantity:
        return "yes"
    return "no" if have == 0 else f"short: {have} of {row.quantity}"


def part_rows(lines, stock=None) -> list[dict[str, str]]:
    """Buy-list rows (strings) of a tuple of ``PartLine``: identical parts summed.

    With ``stock`` (a :class:`pulsepick.request.Stock`), an ``in_stock`` cell per row.
    """
    from pulsepick.partslist import buy_rows

    rows = []
    for row in buy_rows(lines):
        p = row.part
        out = {
            "qty": str(row.quantity),
            "refs": " ".join(row.refs),
            "kind": p.kind,
            "value": p.display,
            "value_si": "" if p.value is None else si_text(float(p.value)),
            "unit": p.unit,
            "code": p.code,
            "series": p.series,
            "tolerance": _tolerance_cell(p.tolerance),
            "dielectric": p.dielectric,
            "rating": p.rating,
            "bands": " ".join(row.bands),
            "notes": "; ".join(row.notes),
        }
        if stock is not None:
            out[STOCK_COLUMN] = _in_stock(row, stock)
        rows.append(out)
    return rows


def today() -> str:
    """Today's date (UTC, ISO 8601); ``SOURCE_DATE_EPOCH`` fixes it for reproducible files."""
    from datetime import UTC, datetime

    epoch = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    when = datetime.fromtimestamp(int(epoch), UTC) if epoch.isdigit() else datetime.now(UTC)
    return when.date().isoformat()


def write_buylist_csv(rows: list[dict[str, str]], provenance: dict[str, str],
                      stock: bool = False) -> str:
    """The CSV text: BOM, header, one line per row; every cell through :func:`safe_cell`."""
    columns = BUYLIST_COLUMNS + ((STOCK_COLUMN,) if stock else ()) + PROVENANCE_COLUMNS
    out = io.StringIO()
    out.write("\ufeff")
    writer = csv.writer(out, lineterminator="\r\n")
    writer.writerow(columns)
    for row in rows:
        full = {**row, **provenance}
        writer.writerow([safe_cell(full.get(c, "")) for c in columns])
    return out.getvalue()


def buylist_text(result, pick: int = 1) -> str:
    """The CSV text of the buy list for candidate ``pick`` (1 = the best)."""
    from pulsepick import __version__

    cands = result.candidates
    if not 1 <= pick <= len(cands):
        raise ExportError(f"--pick {pick}: there are {len(cands)} candidates; choose 1 to "
                          f"{len(cands)}")
    c = cands[pick - 1]
    req = result.request
    provenance = {
        "made_by": f"pulsepick {__version__}",
        "request": req.describe(),
        "seed": str(req.seed),
        "builds": str(req.builds),
        "circuit": f"candidate {c.rank}: {c.design.label()}, supply {c.design.supply_v:g} V",
        "date": today(),
    }
    return write_buylist_csv(buylist_rows(c, req.stock), provenance,
                             stock=req.stock is not None)


def build_buylist_text(result, lines) -> str:
    """The CSV text of one buy list for a whole build (``pulsepick.solve.BuildResult``).

    ``lines`` are every part of the build (``PartLine`` tuple, e.g. from
    :func:`pulsepick.analysis.multi.build_part_lines`); identical parts are summed
    into one row. The provenance columns name the build, the seeds and each light's
    circuit and period.
    """
    from pulsepick import __version__

    breq = result.request
    seeds = sorted({lr.request.seed for lr in breq.lights})
    builds = sorted({lr.request.builds for lr in breq.lights})
    stocks = [lr.request.stock for lr in breq.lights if lr.request.stock is not None]
    provenance = {
        "made_by": f"pulsepick {__version__}",
        "request": f"{breq.describe()}; {len(result.lights)} lights",
        "seed": ", ".join(map(str, seeds)),
        "builds": ", ".join(map(str, builds)),
        "circuit": "; ".join(
            f"{li.name} = {li.pick.design.label()}, period "
            f"{li.pick.figures['period_s']:.3g} s" for li in result.lights),
        "date": today(),
    }
    stock = stocks[0] if stocks else None
    return write_buylist_csv(part_rows(lines, stock), provenance, stock=stock is not None)


def check_target(path: str, force: bool = False, option: str | None = None) -> None:
    """Refuse an output path that names a folder, lies in a missing folder, is a link to
    a missing file, is not a regular file, or exists (without ``force``); ``option``
    (e.g. ``--plot``) starts the message when given."""
    from pulsepick.errors import echo

    target = os.path.abspath(path)
    folder = os.path.dirname(target) or "."
    what = f"{option} {echo(path)}" if option else echo(path)
    if not path:
        raise ExportError(f"{what}: give a file name such as buylist.csv")
    if os.path.isdir(target):
        raise ExportError(f"{what} is a folder; give a file name such as buylist.csv")
    if not os.path.isdir(folder):
        raise ExportError(f"{what}: the folder does not exist; create it or give another path")
    if os.path.islink(target) and not os.path.exists(target):
        raise ExportError(f"{what} is a link to a missing file; remove the link or give "
                          "another file name")
    if os.path.exists(target) and not os.path.isfile(target):
        raise ExportError(f"{what} is not a regular file; give a file name such as "
                          "buylist.csv")
    if os.path.lexists(target) and not force:
        raise ExportError(f"{what} exists; add --force to replace it, or give another file name")


def _same(a: str, b: str) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.realpath(a) == os.path.realpath(b)


def check_outputs(outputs, inputs=(), *, force: bool = False) -> None:
    """Check every output file of a run before any work (see :func:`check_target`).

    ``outputs`` are ``(option, path)`` pairs; ``inputs`` the paths the run reads
    (None entries are skipped). Two options naming one file, or an output that is an
    input, are refused even with ``force``: the run would destroy its own input or
    one output would silently replace the other.
    """
    from pulsepick.errors import echo

    seen: list[tuple[str, str]] = []
    for option, path in outputs:
        check_target(path, force, option)
        for other_option, other in seen:
            if _same(path, other):
                raise ExportError(f"{other_option} and {option} name the same file "
                                  f"{echo(path)}; give two file names")
        for src in inputs:
            if src and os.path.exists(src) and _same(path, src):
                raise ExportError(f"{option} {echo(path)} is an input of this run; writing "
                                  "it would destroy the input; give another file name")
        seen.append((option, path))


def write_atomic(path: str, text: str | bytes, *, force: bool = False) -> None:
    """Write ``text`` (or bytes) to ``path`` through a temporary file in the same folder.

    Without ``force`` the finished file is put in place by an exclusive create (a hard
    link, which fails when the name exists): of two runs racing for one name, the
    loser gets an error and the winner's file stays whole. With ``force`` it replaces
    the old file atomically (``os.replace``).

    The file gets the permissions a plain ``open()`` would give it (a replaced file
    keeps its own); ``mkstemp`` alone would leave it readable by its owner only.

    Raises
    ------
    ExportError
        when ``path`` exists and ``force`` is False, names a folder, or cannot be
        written; nothing is written then.
    """
    from pulsepick.errors import echo

    check_target(path, force)
    target = os.path.abspath(path)
    folder = os.path.dirname(target) or "."
    if os.path.exists(target):
        mode = os.stat(target).st_mode & 0o777
    else:
        umask = os.umask(0o022)
        os.umask(umask)
        mode = 0o666 & ~umask
    data = text.encode("utf-8") if isinstance(text, str) else text
    tmp = None
    try:
        fd, tmp = tempfile.mkstemp(prefix=".pulsepick-", suffix=".tmp", dir=folder)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, mode)
        if force:
            os.replace(tmp, target)
        else:
            _place_exclusive(tmp, target)
    except FileExistsError:
        raise ExportError(f"{echo(path)} was created by someone else meanwhile; add --force "
                          "to replace it, or give another file name") from None
    except OSError as err:
        raise ExportError(f"cannot write {echo(path)}: {err.strerror or err}; check the "
                          "folder's permissions and free space") from None
    finally:
        if tmp is not None and os.path.lexists(tmp):
            os.unlink(tmp)


def _place_exclusive(tmp: str, target: str) -> None:
    """Give the finished temporary file the name ``target`` unless that name exists."""
    try:
        os.link(tmp, target)  # atomic, and fails with FileExistsError on an existing name
    except FileExistsError:
        raise
    except OSError:
        # no hard links on this file system: create the name exclusively, then replace
        fd = os.open(target, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
        os.close(fd)
        os.replace(tmp, target)


def read_buylist(text: str) -> list[dict[str, str]]:
    """Read a buy list back: its rows, keyed by the header (for checks and tools)."""
    return list(csv.DictReader(io.StringIO(text.removeprefix("\ufeff"))))
