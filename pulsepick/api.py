"""The Python API: the commands as functions for notebooks and scripts.

Each function takes what its command takes: the positional argument (a phrase, a
value) and the command's options as keyword arguments, named as the options are
without the leading dashes (``--cap-range`` is ``cap_range``, ``--r`` is ``r``).
A value is a unit string as on the command line (``"3 s"``, ``"5mA"``, ``"2M2"``)
or a plain number in SI units (seconds, amperes, volts, ohms, farads); a range
such as ``--supply 2.7V..1.8V`` is a pair ``(2.7, 1.8)``; a list option
(``--family hc,lvc``) takes a list. A flag is ``True``. An unknown keyword is
refused with the list of accepted ones.

Each returns a :class:`Result`: ``.result`` is the core's result object,
``.to_dict()`` the same document the command prints with ``--json``, and
``.to_frame()`` a pandas table when pandas is installed. Where a message names an
option, the document and the errors name it as a keyword (``buffered=True``, where the
command line says ``--buffered``); texts read straight from ``.result`` carry the
core's hint markers (:mod:`pulsepick.hints`), which
``pulsepick.output.render.word_hints(text, "api")`` words.

Examples
--------
>>> import pulsepick as pp
>>> v = pp.values("4k7")
>>> v.to_dict()["value_ohm"]
4700.0
>>> v
<pulsepick values 4k7: 4.7 kΩ (4k7), in E3, E6, E12, E24, E192>
>>> pp.values("E6").to_dict()["mantissas"]
[1.0, 1.5, 2.2, 3.3, 4.7, 6.8]
"""

from __future__ import annotations

import argparse
import contextlib
import copy
import functools
import io
import json
import math
from collections import OrderedDict
from dataclasses import dataclass, field
from typing import Any

from pulsepick.errors import PulsepickError, RequestError

__all__ = ["Result", "bands", "calibrate", "check", "day", "night", "retune", "solve",
           "values"]

#: The SI unit written after a plain number, by the option's placeholder word.
_UNIT_OF_METAVAR = {"T": "s", "I": "A", "A": "A", "V": "V", "V|FULL..END": "V", "CD": "cd",
                    "KEY|C": "F"}
#: Options the API leaves to itself: the output is the returned object, and files are
#: written from it (e.g. ``pulsepick.output.export.buylist_text(r.result)``), never as a side
#: effect of a keyword.
_NOT_OPTIONS = {"help", "json", "debug", "plot", "report", "buylist", "force", "detail",
                "schematic", "no_drawing", "save"}
_NOT_OPTIONS_OF = {"solve": {"pick"}}  # solve's --pick chooses what to print or write
#: Solved requests kept for a repeated call (results are seeded and reproducible).
_SOLVE_CACHE: OrderedDict[str, Any] = OrderedDict()
_SOLVE_CACHE_SIZE = 8


@dataclass(frozen=True)
class Result:
    """What a command computed: the core result and its ``--json`` document.

    Attributes
    ----------
    command : str
        ``"solve"``, ``"check"``, ``"night"``, ``"day"``, ``"bands"`` or ``"values"``.
    options : dict
        The arguments as given (for the record).
    result : object
        The core result: ``SolveResult`` (or ``BuildResult`` for several lights),
        a ``CheckOutcome``, ``NightResult``, ``DaysResult``, ``BandsResult``; for
        ``values`` the document itself.
    data : dict
        The ``--json`` document (use :meth:`to_dict`, which returns a copy).
    """

    command: str
    options: dict[str, Any]
    result: Any = field(repr=False)
    data: dict[str, Any] = field(repr=False)

    def to_dict(self) -> dict[str, Any]:
        """The same content as the command's ``--json`` output (a fresh copy)."""
        return copy.deepcopy(self.data)

    def summary(self) -> str:
        """One line saying what was computed."""
        try:
            return _SUMMARIES[self.command](self.data)
        except (KeyError, TypeError, IndexError):  # another form (e.g. --size): its keys
            return "keys " + ", ".join(list(self.data)[:8])

    def __repr__(self) -> str:
        first = self.options.get("_arg")
        what = "" if first is None else f" {first}"
        return f"<pulsepick {self.command}{what}: {self.summary()}>"

    def to_frame(self):
        """The candidates, the night, the days, the bands or the values as a table.

        Needs pandas (an optional dependency: ``pip install pandas``).
        """
        try:
            import pandas as pd
        except ImportError as err:
            raise RequestError("to_frame() needs pandas, which pulsepick does not install; "
                               "install it with 'pip install pandas'") from err
        return pd.DataFrame(_ROWS[self.command](self.data))


# ---------------------------------------------------------------------------- arguments

def _parser(command: str) -> argparse.ArgumentParser:
    from pulsepick.cli import build_parser

    parser = build_parser(command)
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return sub.choices[command]


def _text(value: Any, unit: str) -> str:
    """A keyword value as the option's text: numbers get their SI unit."""
    if isinstance(value, bool):
        return str(value).lower()
    if isinstance(value, int):
        return f"{value}{unit}"
    if isinstance(value, float):
        if not math.isfinite(value):
            raise RequestError(f"{value!r} is not a finite number")
        return f"{float(value)!r}{unit}"
    if isinstance(value, (list, tuple)):
        return ",".join(_text(v, unit) for v in value)
    return str(value)


def _argv(command: str, arg: Any, options: dict[str, Any]) -> list[str]:
    """The command line the arguments stand for (refusing unknown keywords)."""
    parser = _parser(command)
    by_name = {}
    for action in parser._actions:
        for opt in action.option_strings:
            negative = isinstance(action, argparse.BooleanOptionalAction) and \
                opt.startswith("--no-")
            if opt.startswith("--") and not negative:
                name = opt[2:].replace("-", "_")
                if name not in _NOT_OPTIONS | _NOT_OPTIONS_OF.get(command, set()):
                    by_name[name] = (opt, action)
    unknown = sorted(set(options) - set(by_name))
    if unknown:
        raise RequestError(f"pulsepick.{command}: unknown keyword{'s' if len(unknown) > 1 else ''}"
                           f" {', '.join(unknown)}; accepted: {', '.join(sorted(by_name))}")
    argv = [command]
    if arg is not None:
        argv.append(_text(arg, ""))
    for name, value in options.items():
        if value is None:
            continue
        opt, action = by_name[name]
        if action.nargs == 0:  # a flag, or a --x/--no-x pair
            if isinstance(action, argparse.BooleanOptionalAction):
                argv.append(opt if value else f"--no-{opt[2:]}")
            elif value:
                argv.append(opt)
            continue
        unit = _UNIT_OF_METAVAR.get(str(action.metavar), "")
        if name == "supply" and isinstance(value, (list, tuple)):
            argv.append(f"{opt}=" + "..".join(_text(v, "V") for v in value))
        elif name == "cap_range" and isinstance(value, (list, tuple)):
            argv.append(f"{opt}=" + "..".join(_text(v, "") for v in value))
        else:
            argv.append(f"{opt}={_text(value, unit)}")
    return argv


def _parse(command: str, arg: Any, options: dict[str, Any]) -> argparse.Namespace:
    from pulsepick.cli import build_parser

    return build_parser(command).parse_args(_argv(command, arg, options))


def _record(arg: Any, options: dict[str, Any]) -> dict[str, Any]:
    return {"_arg": arg, **options}


# ---------------------------------------------------------------------------- functions

def _keywords(fn):
    """``fn`` with the hints of its document and its errors worded as keywords."""

    @functools.wraps(fn)
    def call(*args: Any, **kwargs: Any):
        from pulsepick.output.render import hint_style, word_hints

        with hint_style("api"):
            try:
                return fn(*args, **kwargs)
            except PulsepickError as err:
                text = str(err)
                worded = word_hints(text)
                if worded != text:
                    err.args = (worded,)
                raise

    return call



@_keywords
def solve(phrase: str | None = None, *, cache: bool = True, **options: Any) -> Result:
    """Find standard parts for a wanted blink: ranked circuits with spread and drift.

    Parameters
    ----------
    phrase : str, optional
        The blink, e.g. ``"one flash every 3 s"``; a several-lights phrase or a
        design file (``.toml``) solves a whole build.
    cache : bool
        Reuse the answer of an identical earlier request in this process (the
        answer is seeded, so it is the same); ``False`` solves again.
    **options
        The options of ``pulsepick solve``: ``every``, ``flash``, ``peak``,
        ``supply`` (``"2.7V..1.8V"`` or ``(2.7, 1.8)``), ``family``, ``led``,
        ``cores``, ``stages``, ``top``, ``builds``, ``seed``, ``stock``, ...

    Returns
    -------
    Result
        ``.result`` is a :class:`pulsepick.solve.SolveResult` (a ``BuildResult``
        for several lights); ``.to_dict()`` equals ``pulsepick solve --json``.

    Examples
    --------
    >>> import pulsepick as pp
    >>> r = pp.solve("one flash every 3 s", cores="timer555", stages="direct", top=1,
    ...              builds=200, jobs=1)
    >>> r.to_dict()["candidates"][0]["core"]
    'timer555'
    >>> period = r.result.candidates[0].figures["period_s"]
    >>> abs(period / 3.0 - 1) < 0.05  # within 5 % of the 3 s asked
    True
    """
    from pulsepick.commands import solve as cmd

    args = _parse("solve", phrase, options)
    key = _cache_key(_argv("solve", phrase, options), (phrase, options.get("stock")))
    if cache and key in _SOLVE_CACHE:
        result, data = _SOLVE_CACHE[key]
        _SOLVE_CACHE.move_to_end(key)
        return Result("solve", _record(phrase, options), result, data)
    result, data = _solve(args, cmd)
    if cache:
        _SOLVE_CACHE[key] = (result, data)
        while len(_SOLVE_CACHE) > _SOLVE_CACHE_SIZE:
            _SOLVE_CACHE.popitem(last=False)
    return Result("solve", _record(phrase, options), result, data)


def _cache_key(argv: list[str], paths) -> str:
    """The request's words and the state of the files it reads (a design file, a parts
    drawer): an edited file is solved again."""
    import os

    stamps = []
    for path in paths:
        if isinstance(path, str) and os.path.isfile(path):
            st = os.stat(path)
            stamps.append([os.path.abspath(path), st.st_mtime_ns, st.st_size])
    return json.dumps([argv, stamps])


def _solve(args, cmd):
    if cmd._is_build(args):
        done = cmd.compute_build(args)
        return done.result, _json(cmd.build_doc(done))
    done = cmd.compute(args)
    return done.result, _json(cmd.solve_json(done))


@dataclass(frozen=True)
class CheckOutcome:
    """A checked circuit: its design, figures, reference run and findings."""

    design: Any  # pulsepick.design.Design
    figures: dict[str, Any]  # SI figures and the status word
    reference: Any  # the reference simulation, or None
    findings: tuple  # what the checks found
    engine: str  # "fast" or "reference"


@_keywords
def check(**options: Any) -> Result:
    """Analyse a circuit someone built or plans (the options of ``pulsepick check``).

    Examples
    --------
    >>> import pulsepick as pp
    >>> r = pp.check(core="timer555", ra="1M", rb="22k", c="2u2", stage="direct",
    ...              lit="low", rs=220, supply=3.0)
    >>> r.to_dict()["status"]["state"]
    'runs'
    >>> round(r.to_dict()["period_s"], 2)  # ln 2 (RA + 2 RB) C (ref:maplin-555-notes)
    1.59
    """
    from pulsepick.commands import check as cmd
    from pulsepick.commands.circuit_options import design_from_args

    args = _parse("check", None, options)
    design = design_from_args(args)
    fig, ref, findings, assumed, engine = cmd.analyse(design, args.reference)
    figures = cmd.figures_dict(fig)
    state = cmd._verdict(design, fig)
    figures["status"] = state.state
    doc = cmd.check_json(design, figures, state.reason, findings, assumed, engine)
    doc["status"] = state.as_dict()
    data = _json(doc)
    outcome = CheckOutcome(design, figures, ref, tuple(findings), engine)
    return Result("check", _record(None, options), outcome, data)


@_keywords
def night(design: str | None = None, **options: Any) -> Result:
    """Run a night on a storage part (the options of ``pulsepick night``).

    Examples
    --------
    >>> import pulsepick as pp
    >>> r = pp.night(core="schmitt", r="2M2", c="1u", stage="pulse", cp="22u", rs=47,
    ...              storage="5f-2v7", night="12h")
    >>> r.to_dict()["lasts_the_night"]
    True
    """
    from pulsepick.commands import night as cmd

    args = _parse("night", design, options)
    out = cmd.compute(args)
    if out.sized:
        data = cmd.night_size.size_json(out.result, out.night, out.dates)
    else:
        data = cmd.result_json(out.result, out.night, out.context)
    return Result("night", _record(design, options), out.result, _json(data))


@_keywords
def day(**options: Any) -> Result:
    """Run days and nights with a panel (the options of ``pulsepick day``).

    Examples
    --------
    >>> import pulsepick as pp
    >>> r = pp.day(storage="5f-2v7", panel="3v20ma", weather="clear,overcast")
    >>> [d["weather"] for d in r.to_dict()["days"]]
    ['clear', 'overcast']
    """
    from pulsepick.commands import day as cmd

    args = _parse("day", None, options)
    out = cmd.compute(args)
    if out.size is not None:
        return Result("day", _record(None, options), out.size, _json(out.size))
    return Result("day", _record(None, options), out.result, _json(cmd.day_json(out)))


@_keywords
def bands(**options: Any) -> Result:
    """Tolerance bands of a circuit over its parts and chip (``pulsepick bands``).

    Examples
    --------
    >>> import pulsepick as pp
    >>> r = pp.bands(core="schmitt", r="2M2", c="1u", rs=470, builds=200)
    >>> r.to_dict()["builds"]
    200
    """
    from pulsepick.commands import bands as cmd

    args = _parse("bands", None, options)
    result = cmd._analyse(args)
    return Result("bands", _record(None, options), result, _json(cmd.bands_json(result)))


@_keywords
def calibrate(**options: Any) -> Result:
    """Chip thresholds from a timed test oscillator (``pulsepick calibrate``).

    ``.result`` is the ``--json`` document (as for :func:`values`).

    Examples
    --------
    >>> import pulsepick as pp
    >>> r = pp.calibrate(family="hc", supply="3V", recipe=True)  # a test oscillator to build
    >>> r.to_dict()["family"], r.to_dict()["supply_v"]
    ('hc', 3.0)
    """
    return _captured("calibrate", None, options)


@_keywords
def retune(**options: Any) -> Result:
    """Part changes that bring a built circuit back to its blink (``pulsepick retune``).

    ``.result`` is the ``--json`` document (as for :func:`values`).
    """
    return _captured("retune", None, options)


def _captured(command: str, arg: Any, options: dict[str, Any]) -> Result:
    """Run a command with ``--json`` and keep its document."""
    import importlib

    cmd = importlib.import_module(f"pulsepick.commands.{command}")
    args = _parse(command, arg, options)
    args.json = True
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        cmd.run(args)
    data = json.loads(buf.getvalue())
    return Result(command, _record(arg, options), data, data)


@_keywords
def values(what: str | float | None = None, **options: Any) -> Result:
    """E-series values: a series, a decoded value, or picks (``pulsepick values``).

    Examples
    --------
    >>> import pulsepick as pp
    >>> pp.values("100n").to_dict()["value_f"]
    1e-07
    """
    return _captured("values", what, options)


def _json(obj: Any) -> dict[str, Any]:
    """``obj`` exactly as ``--json`` prints it (through the same converter)."""
    from pulsepick.output.render import dump_json

    buf = io.StringIO()
    dump_json(obj, buf)
    return json.loads(buf.getvalue())


# ---------------------------------------------------------------------------- summaries

def _eng(x: Any, unit: str) -> str:
    from pulsepick.units import format_figure

    return format_figure(x, unit)


def _solve_summary(d: dict) -> str:
    if "lights" in d:
        return f"{len(d['lights'])} lights; {d['message']}"
    cands = d["candidates"]
    if not cands:
        return f"nothing offered; {d['message']}"
    best = cands[0]
    f = best["figures"]
    return (f"{len(cands)} circuit{'s' if len(cands) != 1 else ''}; #1 {best['label']} on "
            f"{best['family']}: period {_eng(f['period_s'], 's')}, flash "
            f"{_eng(f['flash_s'], 's')}, peak {_eng(f['led_peak_a'], 'A')}")


def _check_summary(d: dict) -> str:
    return (f"{d['assumptions']['circuit']} {d['status']['state']}: period "
            f"{_eng(d['period_s'], 's')}, peak {_eng(d['led_peak_a'], 'A')}, supply "
            f"{_eng(d['supply_avg_a'], 'A')}")


def _night_summary(d: dict) -> str:
    return (f"{d['stop_reason']}; {_eng(d['v_start_v'], 'V')} -> {_eng(d['v_end_v'], 'V')}, "
            f"{d['flashes']:.0f} flashes")


def _day_summary(d: dict) -> str:
    return (f"{len(d['days'])} days, {d['nights_lasted']} nights lasted, autonomy "
            f"{d['autonomy_nights']} nights")


def _bands_summary(d: dict) -> str:
    q = d["current"]["quantiles"]["period_s"]
    return (f"{d['design']['circuit']}: period P5 {_eng(q['p5'], 's')} .. P95 "
            f"{_eng(q['p95'], 's')} over {d['builds']} builds, mostly from "
            f"{d['dominant_source_label']}")


def _values_summary(d: dict) -> str:
    if "mantissas" in d:
        return f"{d['series']}, {d['count']} values per decade"
    if "in_series" in d:
        return f"{d['value_eng']} ({d['code']}), in {', '.join(d['in_series']) or 'no series'}"
    if isinstance(d.get("nearest"), dict):
        n, b, a = d["nearest"], d["below"], d["above"]
        return (f"nearest in {d['series']}: {n['value_eng']} ({n['code']}, "
                f"{n['error_pct']:+.2f} %); below {b['code']}, above {a['code']}")
    return ", ".join(f"{k}" for k in d)


def _doc_summary(d: dict) -> str:
    return "keys " + ", ".join(list(d)[:8])


_SUMMARIES = {"calibrate": _doc_summary, "retune": _doc_summary, "solve": _solve_summary,
              "check": _check_summary, "night": _night_summary,
              "day": _day_summary, "bands": _bands_summary, "values": _values_summary}


# ---------------------------------------------------------------------------- tables

def _solve_rows(d: dict) -> list[dict]:
    if "lights" in d:
        return [{"light": li["name"], "asked_period_s": li["asked_period_s"],
                 **_cand_row(li["circuit"])} for li in d["lights"] if li["circuit"]]
    return [_cand_row(c) for c in d["candidates"]]


def _cand_row(c: dict) -> dict:
    f = c["figures"] or {}
    spread = c.get("spread") or {}
    return {"rank": c["rank"], "circuit": c["label"], "chip": c["family"],
            "parts": " ".join(p["code"] for p in c["parts"] if p["kind"] in ("resistor",
                                                                            "capacitor")),
            "period_s": f.get("period_s"), "median_period_s": c.get("median_period_s"),
            "flash_s": f.get("flash_s"), "led_peak_a": f.get("led_peak_a"),
            "effective_a": f.get("effective_a"), "supply_avg_a": f.get("supply_avg_a"),
            "period_p5_s": spread.get("quantiles", {}).get("period_s", {}).get("p5"),
            "period_p95_s": spread.get("quantiles", {}).get("period_s", {}).get("p95"),
            "yield": spread.get("yield"), "score": c["score"]}


def _check_rows(d: dict) -> list[dict]:
    return [{k: v for k, v in d.items() if k not in ("assumptions", "warnings", "status")}
            | {"status": d["status"]["state"]}]


def _night_rows(d: dict) -> list[dict]:
    if "timeline" not in d:
        return [{k: v for k, v in d.items() if not isinstance(v, (dict, list))}]
    t = d["timeline"]
    n = len(t["t_s"])
    return [{k: t[k][i] for k in t} for i in range(n)]


def _day_rows(d: dict) -> list[dict]:
    if "days" not in d:
        return [{k: v for k, v in d.items() if not isinstance(v, (dict, list))}]
    return [{k: v for k, v in day.items() if not isinstance(v, (list, dict))}
            for day in d["days"]]


def _bands_rows(d: dict) -> list[dict]:
    return [dict(cell) for cell in d["cells"]]


def _values_rows(d: dict) -> list[dict]:
    if "mantissas" in d:
        return [{"series": d["series"], "mantissa": m} for m in d["mantissas"]]
    if isinstance(d.get("nearest"), list):
        return list(d["nearest"])
    return [{k: v for k, v in d.items() if not isinstance(v, (dict, list))}]


def _doc_rows(d: dict) -> list[dict]:
    return [{k: v for k, v in d.items() if not isinstance(v, (dict, list))}]


_ROWS = {"calibrate": _doc_rows, "retune": _doc_rows, "solve": _solve_rows,
         "check": _check_rows, "night": _night_rows, "day": _day_rows,
         "bands": _bands_rows, "values": _values_rows}
