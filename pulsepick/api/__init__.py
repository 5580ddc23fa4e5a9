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
import functools
import io
import json
import math
from collections import OrderedDict
from typing import Any

from pulsepick.api.result import CheckOutcome, Result
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
    done = cmd.compute(args, in_full=True)  # the result object holds every figure
    return done.result, _json(cmd.solve_json(done))

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
