"""Exports of the solver's answer: the JSON document and the CSV buy list.

The buy list is one CSV row per distinct part. Its first line is a comment
stamped with the pulsepick version, the request and the seed; a second comment
line names the circuit. Then a header row and the parts. Files are written
atomically: a temporary file in the same folder, then ``os.replace``, so a reader
never sees half a file and an interrupted run leaves the old file as it was. An
existing file is only replaced when asked to (``force``).

Buy-list columns: ``qty`` (pieces), ``refs`` (reference designators, space-separated),
``kind`` (resistor, capacitor, chip, diode, led), ``value`` (ohm or farad, plain
number; empty for parts without a value), ``unit`` (ohm, F), ``display`` (the value
in engineering notation, or the part's name), ``code`` (RKM code, or the part type),
``series`` (E-series), ``tolerance``, ``dielectric`` (capacitor kind), ``rating``
(voltage or power rating), ``bands`` (resistor colour bands, IEC 60062), ``notes``.
"""

from __future__ import annotations

import csv
import io
import math
import os
import tempfile
from typing import Any

from pulsepick.errors import ExportError

BUYLIST_COLUMNS = ("qty", "refs", "kind", "value", "unit", "display", "code", "series",
                   "tolerance", "dielectric", "rating", "bands", "notes")


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


def buylist_rows(candidate) -> list[dict[str, str]]:
    """The buy list of a candidate as CSV-ready rows (strings)."""
    return part_rows(candidate.parts)


def part_rows(lines) -> list[dict[str, str]]:
    """Buy-list rows (strings) of a tuple of ``PartLine``: identical parts summed."""
    from pulsepick.partslist import buy_rows

    rows = []
    for row in buy_rows(lines):
        p = row.part
        rows.append({
            "qty": str(row.quantity),
            "refs": " ".join(row.refs),
            "kind": p.kind,
            "value": "" if p.value is None else repr(float(p.value)),
            "unit": p.unit,
            "display": p.display,
            "code": p.code,
            "series": p.series,
            "tolerance": p.tolerance,
            "dielectric": p.dielectric,
            "rating": p.rating,
            "bands": " ".join(row.bands),
            "notes": "; ".join(row.notes),
        })
    return rows


def buylist_text(result, pick: int = 1) -> str:
    """The CSV text of the buy list for candidate ``pick`` (1 = the best)."""
    from pulsepick import __version__

    cands = result.candidates
    if not 1 <= pick <= len(cands):
        raise ExportError(f"--pick {pick}: there are {len(cands)} candidates; choose 1 to "
                          f"{len(cands)}")
    c = cands[pick - 1]
    req = result.request
    out = io.StringIO()
    request_text = req.describe().replace("\n", " ")
    out.write(f"# pulsepick {__version__} buy list; request: {request_text}; "
              f"seed {req.seed}; builds {req.builds}\n")
    out.write(f"# candidate {c.rank}: {c.design.label()}, supply {c.design.supply_v:g} V\n")
    writer = csv.DictWriter(out, fieldnames=BUYLIST_COLUMNS, lineterminator="\n")
    writer.writeheader()
    writer.writerows(buylist_rows(c))
    return out.getvalue()


def build_buylist_text(result, lines) -> str:
    """The CSV text of one buy list for a whole build (``pulsepick.solve.BuildResult``).

    ``lines`` are every part of the build (``PartLine`` tuple, e.g. from
    :func:`pulsepick.analysis.multi.build_part_lines`); identical parts are summed
    into one row. The first comment line is stamped with the version, the build and
    the seeds; the second names each light's circuit and period.
    """
    from pulsepick import __version__

    breq = result.request
    out = io.StringIO()
    seeds = sorted({lr.request.seed for lr in breq.lights})
    out.write(f"# pulsepick {__version__} buy list; build: {breq.describe()}; "
              f"{len(result.lights)} lights; seed {', '.join(map(str, seeds))}\n")
    out.write("# lights: " + "; ".join(
        f"{li.name} = {li.pick.design.label()}, period {li.pick.figures['period_s']:.3g} s"
        for li in result.lights) + "\n")
    writer = csv.DictWriter(out, fieldnames=BUYLIST_COLUMNS, lineterminator="\n")
    writer.writeheader()
    writer.writerows(part_rows(lines))
    return out.getvalue()


def check_target(path: str, force: bool = False, option: str | None = None) -> None:
    """Refuse an output path that names a folder, lies in a missing folder, or exists
    (without ``force``); ``option`` (e.g. ``--plot``) starts the message when given."""
    target = os.path.abspath(path)
    folder = os.path.dirname(target) or "."
    what = f"{option} {path!r}" if option else repr(path)
    if os.path.isdir(target):
        raise ExportError(f"{what} is a folder; give a file name such as buylist.csv")
    if not os.path.isdir(folder):
        raise ExportError(f"{what}: the folder does not exist; create it or give another path")
    if os.path.exists(target) and not force:
        raise ExportError(f"{what} exists; add --force to replace it, or give another file name")


def write_atomic(path: str, text: str | bytes, *, force: bool = False) -> None:
    """Write ``text`` (or bytes) to ``path`` through a temporary file in the same folder.

    The file gets the permissions a plain ``open()`` would give it (a replaced file
    keeps its own); ``mkstemp`` alone would leave it readable by its owner only.

    Raises
    ------
    ExportError
        when ``path`` exists and ``force`` is False, names a folder, or cannot be
        written; nothing is written then.
    """
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
        os.replace(tmp, target)
        tmp = None
    except OSError as err:
        raise ExportError(f"cannot write {path!r}: {err.strerror or err}; check the folder's "
                          "permissions and free space") from err
    finally:
        if tmp is not None and os.path.exists(tmp):
            os.unlink(tmp)


def read_buylist(text: str) -> tuple[list[str], list[dict[str, str]]]:
    """Read a buy list back: ``(comment lines, rows)`` (for checks and tools)."""
    lines = text.splitlines()
    comments = [ln[1:].strip() for ln in lines if ln.startswith("#")]
    body = "\n".join(ln for ln in lines if not ln.startswith("#"))
    return comments, list(csv.DictReader(io.StringIO(body)))
