"""``pulsepick values``: look at the IEC 60063 series and decode value codes.

Four forms:

* ``pulsepick values E24``                      the mantissas of one decade;
* ``pulsepick values E24 --from 1k --to 10k``   every series value in a range;
* ``pulsepick values 4k7``                      decode a value: series, nearest picks, colour;
* ``pulsepick values 4.65k --series E24``       the picks around a value in one series.
"""

from __future__ import annotations

import argparse
import re
from typing import Any

from pulsepick.colour import bands_for
from pulsepick.errors import PulsepickError, RequestError
from pulsepick.output.render import dump_json, make_console, simple_table
from pulsepick.series import (
    SERIES_NAMES,
    Series,
    get_series,
    pick_error_pct,
    which_series,
)
from pulsepick.units import format_eng, format_rkm, parse_value, parse_value_unit

NAME = "values"
SUMMARY = "E-series values (E3..E192): list them, decode codes like 4k7, pick standard values"
EXAMPLES = [
    "pulsepick values E24",
    "pulsepick values E24 --from 1k --to 10k",
    "pulsepick values 4k7",
    "pulsepick values 4.65k --series E24",
    "pulsepick values 100n --kind C --json",
]

_MAX_DECADES = 12  # widest --from/--to range listed (a list, not a sweep of all of physics)
# Smallest resistance decoded (estimate: no resistor in a blinker is below 1 mΩ; a smaller
# "resistance" is almost always a capacitance typed without its unit).
_MIN_RESISTANCE_OHM = 1e-3
# Prefix letters that, written without a unit, only make sense for a capacitor: p, n, µ/u
# (a resistor of 999 nΩ or 999 µΩ is below _MIN_RESISTANCE_OHM).
_CAP_PREFIX = re.compile("[pnu\u00b5\u03bc]")
_INFERRED_C_NOTE = "read as a capacitance; add --kind R to force a resistance"
_SERIES_WORD = re.compile(r"[Ee][0-9]+")
# Per kind: RKM kind, unit symbol, JSON key, unit passed to parse_value.
_KIND = {
    "R": {"unit": "Ω", "key": "value_ohm", "parse": "ohm", "noun": "resistor"},
    "C": {"unit": "F", "key": "value_f", "parse": "F", "noun": "capacitor"},
}
# Colour codes shown when decoding a resistor: (tolerance %, which parts carry it).
# 5 % parts come in E6..E24, 1 % parts in E48..E192 (ref:iec-60063, ref:e-series-tolerances, ref:iec-60062-colour).
_COLOUR_CODES = ((5.0, ("E6", "E12", "E24")), (1.0, ("E48", "E96", "E192")))


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Options of ``pulsepick values``."""
    # Let '-4k7' reach the value parser (which explains that values are positive) instead
    # of argparse reading it as an unknown option. argparse has no public switch for this.
    if hasattr(parser, "_negative_number_matcher"):
        parser._negative_number_matcher = re.compile(r"^-[0-9.]")
    parser.add_argument(
        "what", nargs="?", metavar="SERIES|VALUE",
        help="a series name (E3 E6 E12 E24 E48 E96 E192) or a value such as 4k7, 100n, 2.2uF",
    )
    parser.add_argument("--from", dest="lo", metavar="VALUE",
                        help="list the series values from this value (with --to)")
    parser.add_argument("--to", dest="hi", metavar="VALUE",
                        help="list the series values up to this value (with --from)")
    parser.add_argument("--series", metavar="NAME",
                        help="the series to pick from (E3 .. E192)")
    parser.add_argument("--kind", type=str.upper, choices=("R", "C"), default=None,
                        help="R for resistors (default), C for capacitors; a value written "
                             "in farads (2.2uF), or with p, n or µ and no unit (100n), means C")
    parser.add_argument("--json", action="store_true", help="print plain JSON instead of tables")


def run(args: argparse.Namespace) -> int:
    """Pick the form from the arguments, compute, render."""
    what = (args.what or "").strip()
    series_arg = args.series
    if args.what is not None and not what:
        raise RequestError(
            "empty value; give a series name (E3 .. E192) or a value such as 4k7, 100n"
        )
    is_series_word = bool(_SERIES_WORD.fullmatch(what))
    if is_series_word:
        if series_arg is not None and get_series(series_arg).name != get_series(what).name:
            raise RequestError(
                f"two series given ({what} and --series {series_arg}); give one, "
                "e.g. pulsepick values E24 --from 1k --to 10k"
            )
        series_arg = what
    if (args.lo is None) != (args.hi is None):
        raise RequestError(
            "give both --from and --to, e.g. pulsepick values E24 --from 1k --to 10k"
        )
    if args.lo is not None and (not series_arg or (what and not is_series_word)):
        raise RequestError(
            "--from and --to list the values of a series, so they need a series name "
            "(not a value), e.g. pulsepick values E24 --from 1k --to 10k"
        )
    if not what and not series_arg:
        raise RequestError(
            "give a series name (E3 .. E192) or a value such as 4k7, 100n, 2.2uF; "
            "see 'pulsepick values --help'"
        )
    if not what or is_series_word:
        series = get_series(series_arg)
        if args.lo is None:
            return _show_series(series, args.json)
        kind, note = _kind_of((args.lo, args.hi), args.kind)
        return _show_range(series, kind, args.lo, args.hi, args.json, note)
    kind, note = _kind_of((what,), args.kind)
    value = _read(what, kind, "")
    if series_arg is not None:
        return _show_picks(what, value, kind, get_series(series_arg), args.json, note)
    return _show_decode(what, value, kind, args.json, note)


def _kind_of(texts: tuple[str, ...], kind: str | None) -> tuple[str, str | None]:
    """The kind (R or C) and a note when it was inferred from a capacitor prefix.

    --kind wins; then a written unit (F: C, Ω or R: R); then a value written with p, n or µ
    and no unit is a capacitance (as a resistance it would be under 1 mΩ); else R.
    """
    if kind is not None:
        return kind, None
    units = [parse_value_unit(text)[1] for text in texts]
    if "F" in units:
        return "C", None
    if "ohm" in units:
        return "R", None
    if any(_CAP_PREFIX.search(text) for text in texts):
        return "C", _INFERRED_C_NOTE
    return "R", None


def _read(text: str, kind: str, option: str) -> float:
    """A value of the kind; resistances under 1 mΩ are refused (likely a missing unit)."""
    value = parse_value(text, _KIND[kind]["parse"])
    if kind == "R" and value < _MIN_RESISTANCE_OHM:
        # --kind C only helps a value written without a unit or an R marker
        other = ", or --kind C for a capacitance" if parse_value_unit(text)[1] is None else ""
        raise RequestError(
            f"{option}{text!r} as a resistance is {format_eng(value, 'Ω')}, below "
            f"{format_eng(_MIN_RESISTANCE_OHM, 'Ω')}; accepted: resistances from 1 mΩ "
            f"(R001){other}"
        )
    return value


def _pct(value: float) -> str:
    return f"{value:g} %"


def _error_text(err: float) -> str:
    return "0 %" if abs(err) < 5e-7 else f"{err:+.2f} %"


def _pick(value: float, kind: str, picked: float) -> dict[str, Any]:
    key = _KIND[kind]["key"]
    return {
        key: picked,
        "value_eng": format_eng(picked, _KIND[kind]["unit"]),
        "code": format_rkm(picked, kind),  # type: ignore[arg-type]
        "error_pct": float(pick_error_pct(picked, value)),
    }


# --- form 1: the mantissas of a series ---------------------------------------------------------


def _show_series(series: Series, as_json: bool) -> int:
    if as_json:
        dump_json({
            "series": series.name,
            "count": len(series),
            "tolerance_pct": series.tolerance_pct,
            "source": series.source,
            "mantissas": list(series.mantissas),
        })
        return 0
    console = make_console()
    console.print(
        f"{series.name}: {len(series)} values per decade, usual tolerance "
        f"±{_pct(series.tolerance_pct)}",
        markup=False,
    )
    console.print(f"source: {series.source}", markup=False)
    console.print("mantissas of one decade (a part value is mantissa x 10^k):", markup=False)
    per_row = min(12, len(series))
    # E3..E24 are published with one decimal, E48..E192 with two (ref:iec-60063, ref:g4usp-preferred-values)
    decimals = 1 if all(abs(m * 10 - round(m * 10)) < 1e-9 for m in series.mantissas) else 2
    rows = []
    for start in range(0, len(series), per_row):
        chunk = series.mantissas[start:start + per_row]
        rows.append([str(start)] + [f"{m:.{decimals}f}" for m in chunk]
                    + [""] * (per_row - len(chunk)))
    columns = ["#"] + [f"+{i}" for i in range(per_row)]
    console.print(simple_table(None, columns, rows, justify=["right"] * len(columns)))
    return 0


# --- form 2: the values of a series in a range -------------------------------------------------


def _show_range(series: Series, kind: str, lo_text: str, hi_text: str, as_json: bool,
                note: str | None = None) -> int:
    spec = _KIND[kind]
    lo = _read(lo_text, kind, "--from ")
    hi = _read(hi_text, kind, "--to ")
    if lo > hi:
        raise RequestError(
            f"--from {format_eng(lo, spec['unit'])} is above --to {format_eng(hi, spec['unit'])}; "
            "give --from <= --to, e.g. --from 1k --to 10k"
        )
    if hi > lo * 10.0**_MAX_DECADES:
        raise RequestError(
            f"--from {format_eng(lo, spec['unit'])} --to {format_eng(hi, spec['unit'])} spans more "
            f"than {_MAX_DECADES} decades; accepted: a range of at most {_MAX_DECADES} decades, "
            "e.g. --from 1k --to 10k"
        )
    values = [float(v) for v in series.values(lo, hi)]
    codes = [format_rkm(v, kind) for v in values]  # type: ignore[arg-type]
    if as_json:
        dump_json({
            "series": series.name,
            "kind": kind,
            "kind_note": note,
            "tolerance_pct": series.tolerance_pct,
            f"from_{spec['key'].removeprefix('value_')}": lo,
            f"to_{spec['key'].removeprefix('value_')}": hi,
            "count": len(values),
            "values": [{spec["key"]: v, "code": c} for v, c in zip(values, codes, strict=True)],
        })
        return 0
    console = make_console()
    console.print(
        f"{series.name} {spec['noun']} values from {format_eng(lo, spec['unit'])} to "
        f"{format_eng(hi, spec['unit'])}: {len(values)} value{'' if len(values) == 1 else 's'} "
        f"(usual tolerance ±{_pct(series.tolerance_pct)})",
        markup=False,
    )
    if note:
        console.print(f"--from and --to {note}", markup=False)
    if not values:
        console.print("no series value lies in this range", markup=False)
        return 0
    rows = [[str(i), format_eng(v, spec["unit"]), c]
            for i, (v, c) in enumerate(zip(values, codes, strict=True), start=1)]
    console.print(simple_table(None, ["#", "value", "code"], rows,
                               justify=["right", "right", "left"]))
    return 0


# --- form 3: decode a value --------------------------------------------------------------------


def _colour_rows(value: float) -> list[dict[str, Any]]:
    out = []
    for tol, series in _COLOUR_CODES:
        try:
            bands: tuple[str, ...] | None = bands_for(value, tol)
            note = ""
        except PulsepickError as err:
            bands, note = None, str(err)
        out.append({"tolerance_pct": tol, "series": list(series), "bands": bands, "note": note})
    return out


def _same_forms(text: str, value: float, unit: str) -> list[str]:
    """The input, its engineering form and its plain number, each written once."""
    forms: list[str] = []
    for form in (text.strip(), format_eng(value, unit, digits=6), f"{value:.6g} {unit}"):
        if all("".join(form.split()) != "".join(f.split()) for f in forms):
            forms.append(form)
    return forms


def _show_decode(text: str, value: float, kind: str, as_json: bool,
                 note: str | None = None) -> int:
    spec = _KIND[kind]
    in_series = which_series(value)
    nearest = []
    for name in SERIES_NAMES:
        series = get_series(name)
        pick = _pick(value, kind, float(series.nearest(value)))
        nearest.append({"series": name, "tolerance_pct": series.tolerance_pct, **pick})
    colours = _colour_rows(value) if kind == "R" else []
    if as_json:
        dump_json({
            "input": text,
            "kind": kind,
            "kind_note": note,
            spec["key"]: value,
            "value_eng": format_eng(value, spec["unit"]),
            "code": format_rkm(value, kind),  # type: ignore[arg-type]
            "in_series": in_series,
            "nearest": nearest,
            "colour_bands": [
                {"tolerance_pct": c["tolerance_pct"], "series": c["series"],
                 "bands": list(c["bands"]) if c["bands"] else None}
                for c in colours
            ],
        })
        return 0
    console = make_console()
    console.print(
        " = ".join(_same_forms(text, value, spec["unit"]))
        + f"   RKM code {format_rkm(value, kind)}",  # type: ignore[arg-type]
        markup=False,
    )
    if note:
        console.print(f"{text}: {note}", markup=False)
    console.print(
        "in series: " + (", ".join(in_series) if in_series else "none (not a standard value)"),
        markup=False,
    )
    rows = [[n["series"], f"±{_pct(n['tolerance_pct'])}", n["value_eng"], n["code"],
             _error_text(n["error_pct"])] for n in nearest]
    console.print(simple_table(
        "Nearest standard value in each series",
        ["series", "tolerance", "nearest", "code", "error"],
        rows, justify=["left", "right", "right", "left", "right"],
    ))
    if kind == "R":
        rows = []
        for c in colours:
            shown = " ".join(c["bands"]) if c["bands"] else "cannot be coded: " + c["note"]
            count = f"{len(c['bands'])} bands" if c["bands"] else ""
            parts = f"{c['series'][0]}..{c['series'][-1]} parts (±{_pct(c['tolerance_pct'])})"
            rows.append([parts, count, shown])
        console.print(simple_table("Colour bands (IEC 60062)", ["for", "bands", "colours"], rows))
    return 0


# --- form 4: the picks around a value in one series --------------------------------------------


def _show_picks(text: str, value: float, kind: str, series: Series, as_json: bool,
                note: str | None = None) -> int:
    spec = _KIND[kind]
    below, above = series.bracket(value)
    picks = {
        "below": _pick(value, kind, float(below)),
        "above": _pick(value, kind, float(above)),
        "nearest": _pick(value, kind, float(series.nearest(value, "nearest"))),
        "up": _pick(value, kind, float(series.nearest(value, "up"))),
        "down": _pick(value, kind, float(series.nearest(value, "down"))),
    }
    in_series = below == above
    if as_json:
        dump_json({
            "input": text,
            "kind": kind,
            "kind_note": note,
            spec["key"]: value,
            "series": series.name,
            "tolerance_pct": series.tolerance_pct,
            "is_series_value": in_series,
            **picks,
        })
        return 0
    console = make_console()
    head = f"{text} = {format_eng(value, spec['unit'], digits=6)}"
    if in_series:
        head += f", an {series.name} value"
    else:
        head += (f", between {picks['below']['value_eng']} and {picks['above']['value_eng']} "
                 f"in {series.name}")
    console.print(head + f" (usual tolerance ±{_pct(series.tolerance_pct)})", markup=False)
    if note:
        console.print(f"{text}: {note}", markup=False)
    labels = (
        ("nearest", "nearest (by ratio)"),
        ("down", "round down (below)"),
        ("up", "round up (above)"),
    )
    rows = [[label, picks[k]["value_eng"], picks[k]["code"], _error_text(picks[k]["error_pct"])]
            for k, label in labels]
    console.print(simple_table(f"Picks in {series.name}", ["pick", "value", "code", "error"], rows,
                               justify=["left", "right", "left", "right"]))
    return 0
