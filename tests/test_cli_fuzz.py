"""Fuzz the command-line grammar of every command (Hypothesis).

Each example is a random command line built from the command's own options: values
taken from the help examples, edge values (empty, huge, tiny, not-a-number, ranges the
wrong way round, control characters, formula text) and random text. Whatever comes,
the program answers with exit status 0, 2 or 130, never a traceback or an internal
error, and at most four lines of error.

300 examples per command by default (derandomised, so CI is reproducible); set
``PULSEPICK_FUZZ_EXAMPLES`` for a longer hunt. The expensive work behind a valid
command line (the solver's search, the Monte Carlo bands, the reference engine, runs
of many days) is replaced by a stand-in that refuses with exit status 2, so the
examples stay quick; those paths have tests of their own.
"""

from __future__ import annotations

import argparse
import importlib
import io
import os
import shlex
import tempfile
from contextlib import redirect_stderr, redirect_stdout

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pulsepick.cli import build_parser, main
from pulsepick.commands import COMMAND_MODULES
from pulsepick.errors import PulsepickError

EXAMPLES_PER_COMMAND = int(os.environ.get("PULSEPICK_FUZZ_EXAMPLES", "300"))

EDGE_VALUES = [
    "", " ", "0", "-1", "1", "2", "3", "1e308", "-1e308", "1e-324", "4.9e-324", "nan", "inf",
    "-inf", "99999999999999999999999", "4K7", "4k7", "100n", "2u2", "1F", "5A", "30uA", "3V",
    "2.7V..1.8V", "1..0", "-20..50", "..", "1s..6s", "0s", "3s", "12h", "18:30", "25:99",
    "2026-12-21", "2026-02-30", "52.1", "91", "E24", "E0", "hc", "lvc", "timer555", "red",
    "=1+2", "@SUM(1)", "\n", "a\r\nb", "\x00", "µ", "２", "x" * 400, "%", "10%", "200%",
    "--", "-", "-x", "3 s", "every 3 s", "one flash every 3 s", "13 lights: every 2 s",
    "nonexistent.csv", "nowhere/b.csv", "examples", "d.toml",
]


class _Skipped(PulsepickError):
    """The fuzz test's stand-in for expensive work."""


def _skip(*args, **kwargs):
    raise _Skipped("skipped in the fuzz test")


def _sub(name: str) -> argparse.ArgumentParser:
    parser = build_parser(name)
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return sub.choices[name]


def _example_values(name: str) -> dict[str, list[str]]:
    """Option -> the values the help examples give it; '' -> the positionals used."""
    module = importlib.import_module(f"pulsepick.commands.{name}")
    out: dict[str, list[str]] = {}
    for line in module.EXAMPLES:
        words = shlex.split(line)[2:]
        for i, w in enumerate(words):
            if w.startswith("--"):
                if i + 1 < len(words) and not words[i + 1].startswith("--"):
                    out.setdefault(w, []).append(words[i + 1])
            elif i == 0 or not words[i - 1].startswith("--"):
                out.setdefault("", []).append(w)
    return out


def _command_lines(name: str):
    parser = _sub(name)
    known = _example_values(name)
    value = st.one_of(st.sampled_from(EDGE_VALUES), st.text(max_size=30))
    options = []
    for action in parser._actions:
        if not action.option_strings or action.dest in ("help", "debug"):
            continue
        opt = max(action.option_strings, key=len)
        if action.nargs == 0:
            options.append(st.just([opt]))
            continue
        pool = list(known.get(opt, [])) + [str(c) for c in (action.choices or [])]
        good = st.sampled_from(pool) if pool else value
        options.append(st.tuples(st.just(opt), st.one_of(good, good, value)).map(list))
    positional = st.sampled_from(known.get("", []) or EDGE_VALUES)
    head = st.one_of(st.just([]), positional.map(lambda p: [p]),
                     st.sampled_from(EDGE_VALUES).map(lambda p: [p]))
    body = st.lists(st.one_of(*options), max_size=7).map(lambda xs: [w for x in xs for w in x])
    random_lines = st.tuples(head, body).map(lambda hb: [name, *hb[0], *hb[1]])
    return st.one_of(random_lines, _mutated_examples(name, value, options))


def _mutated_examples(name: str, value, options):
    """A help example with a few words replaced, dropped or options added."""
    module = importlib.import_module(f"pulsepick.commands.{name}")
    lines = [shlex.split(line)[1:] for line in module.EXAMPLES]

    @st.composite
    def mutate(draw):
        argv = list(draw(st.sampled_from(lines)))
        for _ in range(draw(st.integers(0, 3))):
            kind = draw(st.sampled_from(["replace", "drop", "add"]))
            if kind == "replace" and len(argv) > 1:
                argv[draw(st.integers(1, len(argv) - 1))] = draw(value)
            elif kind == "drop" and len(argv) > 1:
                del argv[draw(st.integers(1, len(argv) - 1))]
            elif options:
                argv += draw(st.one_of(*options))
        return argv

    return mutate()


@pytest.fixture(scope="module")
def stand_ins():
    """Replace the expensive work with :func:`_skip` (restored afterwards)."""
    bands = importlib.import_module("pulsepick.commands.bands")
    day = importlib.import_module("pulsepick.commands.day")
    design = importlib.import_module("pulsepick.design")
    solve = importlib.import_module("pulsepick.solve")  # the module, not pulsepick.solve()

    mp = pytest.MonkeyPatch()
    mp.setattr(solve, "solve", _skip)
    mp.setattr(solve, "solve_build", _skip)
    mp.setattr(bands, "tolerance_bands", _skip)
    mp.setattr(design.Design, "reference", _skip)
    real_days = day.simulate_days

    def few_days(*args, **kwargs):
        if (kwargs.get("days") or 1) > 2 or len(args[3]) > 2:
            raise _Skipped("skipped in the fuzz test")
        return real_days(*args, **kwargs)

    mp.setattr(day, "simulate_days", few_days)
    folder = tempfile.TemporaryDirectory()
    old = os.getcwd()
    os.chdir(folder.name)
    yield
    os.chdir(old)
    folder.cleanup()
    mp.undo()


def _check(argv: list[str]) -> None:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main(argv)
    text = err.getvalue()
    assert code in (0, 2, 130), f"{argv!r} -> {code}: {text}"
    assert "Traceback" not in text and "internal error" not in text, f"{argv!r}: {text}"
    assert len(text.strip().splitlines()) <= 4 or code == 0, f"{argv!r}: {text}"


@pytest.mark.slow
@pytest.mark.parametrize("name", COMMAND_MODULES)
def test_fuzz_command_line(name, stand_ins):
    @settings(max_examples=EXAMPLES_PER_COMMAND, deadline=None, derandomize=True,
              database=None, suppress_health_check=list(HealthCheck))
    @given(_command_lines(name))
    def fuzz(argv):
        _check(argv)

    fuzz()
