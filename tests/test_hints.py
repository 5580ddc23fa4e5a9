"""Hints: the core points at options without spelling them; the shell words them.

The source checks read the tree with ``ast``; the output checks run commands and the
Python API on circuits whose messages carry hints (a latched LED, a 555 with a buffer,
a photoresistor clamp that cannot work) and look for markers left unworded.
"""

from __future__ import annotations

import argparse
import ast
import contextlib
import io
import json
import re
from pathlib import Path

import pytest

from pulsepick.cli import build_parser, main
from pulsepick.errors import PulsepickError
from pulsepick.hints import CLOSE, OPEN, Hint, has_marker, hint, hints_in, parse, pieces
from pulsepick.output.render import hint_style, word_hints

PACKAGE = Path(__file__).resolve().parent.parent / "pulsepick"
#: The core: it reports, and the shell words what it reports.
CORE = ("analysis", "solve", "packing.py", "engine", "parts", "design.py", "designfile.py",
        "circuits")
#: A command-line option spelt out: two dashes and a letter, not inside a longer word.
_SPELT = re.compile(r"(?<![\w-])--[a-z][a-z0-9-]*")


def _core_files() -> list[Path]:
    out = []
    for name in CORE:
        path = PACKAGE / name
        out.extend(sorted(path.rglob("*.py")) if path.is_dir() else [path])
    return out


def _docstrings(tree: ast.AST) -> set[int]:
    return {id(n.body[0].value) for n in ast.walk(tree)
            if isinstance(n, ast.Module | ast.ClassDef | ast.FunctionDef | ast.AsyncFunctionDef)
            and n.body and isinstance(n.body[0], ast.Expr)}


def _declared_options(tree: ast.AST) -> set[int]:
    """String constants a circuit declares as its own parameter's option (``option=``)."""
    return {id(kw.value) for n in ast.walk(tree) if isinstance(n, ast.Call | ast.Dict)
            for kw in (n.keywords if isinstance(n, ast.Call) else ())
            if kw.arg == "option" and isinstance(kw.value, ast.Constant)}


def test_the_core_never_spells_an_option():
    """No string of analysis, solve, packing, engine, parts, design, designfile or circuits
    names a command-line option (docstrings, which document the commands, and a circuit's
    declaration of its own parameters' options aside): it writes a hint instead."""
    files = _core_files()
    assert len(files) > 50
    found = []
    for path in files:
        tree = ast.parse(path.read_text(encoding="utf-8"))
        skip = _docstrings(tree) | _declared_options(tree)
        for node in ast.walk(tree):
            if (isinstance(node, ast.Constant) and isinstance(node.value, str)
                    and id(node) not in skip and _SPELT.search(node.value)):
                found.append(f"{path.relative_to(PACKAGE.parent)}:{node.lineno} "
                             f"{_SPELT.search(node.value).group(0)}")
    assert found == []


def _core_hints() -> list[tuple[str, str, str]]:
    """(option, command, where) of every ``hint(...)`` and ``Hint(...)`` in the core."""
    out = []
    for path in _core_files():
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if not (isinstance(node, ast.Call) and getattr(node.func, "id", "") in
                    ("hint", "Hint")):
                continue
            args = [*node.args, *(kw.value for kw in node.keywords)]
            assert args and isinstance(args[0], ast.Constant), ast.unparse(node)
            command = node.args[2].value if len(node.args) > 2 else ""
            out.append((args[0].value, command, f"{path.name}:{node.lineno}"))
    return out


def _options_by_command() -> dict[str, set[str]]:
    parser = build_parser()
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return {name: {opt for action in cmd._actions for opt in action.option_strings}
            for name, cmd in sub.choices.items()}


def test_every_hint_names_a_real_option():
    """The core's hints, worded for the command line, are options a command takes (the
    named command's, when a hint names one)."""
    hints = _core_hints()
    assert len(hints) >= 40
    options = _options_by_command()
    every = set().union(*options.values())
    missing = []
    for option, command, where in hints:
        flag = "--" + option.replace("_", "-")
        if flag not in (options[command] if command else every):
            missing.append(f"{where} {flag}")
    assert missing == []


# ---------------------------------------------------------------------------- the markers

@pytest.mark.parametrize("h", [
    Hint("buffered", True), Hint("buffered", False), Hint("period_tolerance", "20%"),
    Hint("max_packages", 3), Hint("min_r"), Hint("save", True, "calibrate"),
    Hint("clamp", "both"), Hint("family", "lvc"),
])
def test_a_marker_stands_for_its_hint(h):
    text = f"widen it ({h}) or not"
    assert has_marker(text) and parse(str(h)) == h and hints_in(text) == (h,)
    assert [p for p in pieces(text) if isinstance(p, str)] == ["widen it (", ") or not"]


def test_bad_hints_are_refused():
    for bad in (dict(option="Buffered"), dict(option="--buffered"), dict(option="a b"),
                dict(option="x", command="two words"), dict(option="x", value=[1])):
        with pytest.raises(ValueError):
            Hint(**bad)
    with pytest.raises(ValueError):
        parse("buffered")


@pytest.mark.parametrize("h, cli, api", [
    (Hint("buffered", True), "--buffered", "buffered=True"),
    (Hint("buffered", False), "--no-buffered", "buffered=False"),
    (Hint("dusk_detector", False), "--no-dusk-detector", "dusk_detector=False"),
    (Hint("period_tolerance"), "--period-tolerance", "period_tolerance"),
    (Hint("period_tolerance", "20%"), "--period-tolerance 20%", "period_tolerance='20%'"),
    (Hint("max_packages", 3), "--max-packages 3", "max_packages=3"),
    (Hint("clamp", "both"), "--clamp both", "clamp='both'"),
    (Hint("save", True, "calibrate"), "pulsepick calibrate --save",
     "pulsepick calibrate --save"),
])
def test_one_wording_for_the_command_line_and_one_for_the_api(h, cli, api):
    text = f"a buffer gate ({hint(h.option, h.value, h.command)}) frees it"
    assert word_hints(text) == f"a buffer gate ({cli}) frees it"  # the default: the CLI
    assert word_hints(text, "api") == f"a buffer gate ({api}) frees it"
    assert word_hints(h) == cli
    with hint_style("api"):
        assert word_hints(text) == f"a buffer gate ({api}) frees it"
    assert word_hints(text) == f"a buffer gate ({cli}) frees it"
    assert word_hints(None) is None and word_hints(3) == 3 and word_hints("plain") == "plain"


# ---------------------------------------------------------------------------- no leaks

def _run(argv: list[str]) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def _no_marker(text: str) -> None:
    assert OPEN not in text and CLOSE not in text, text


LATCHED = ["check", "--r", "1M", "--c", "1u", "--rs", "10", "--supply", "5V"]
TIMER = ["--core", "timer555", "--ra", "1M", "--rb", "22k", "--c", "2u2", "--stage", "direct",
         "--rs", "470"]
CLAMP = ["ldr", "--photoresistor", "gl5528", "--period-range", "1s..6s", "--core", "schmitt",
         "--stage", "pulse", "--c", "2u2", "--cp", "330u", "--rs", "100", "--points", "5",
         "--clamp", "parallel"]


@pytest.mark.parametrize("argv, code, words", [
    # the verdict and the pin rating both name the buffer gate
    (LATCHED, 0, "a buffer gate (--buffered) frees it"),
    ([*LATCHED, "--json"], 0, "a buffer gate (--buffered) frees it"),
    (["check", "--r", "1M", "--c", "1u", "--rs", "47", "--json"], 0,
     "a measured figure via --cross-current"),
    (["check", *TIMER, "--buffered"], 2, "already drives the stage (drop --buffered)"),
    (["check", *TIMER, "--vt-plus", "2V"], 2, "--vt-plus, --vt-minus and --rout describe"),
    (["calibrate", "--family", "hc", "--r", "1M", "--c", "1u", "--high", "0.1s", "--low",
      "0.1s"], 2, "use a larger R or C (see --recipe)"),
    (["solve", "four lights: every 2 s, every 3 s, every 5 s, every 7 s", "--family", "hc",
      "--buffered", "--max-packages", "1"], 2,
     "(--max-packages 1); allow more packages, drive LEDs without a buffer (--no-buffered), "
     "leave out the dusk detector (--no-dusk-detector)"),
    (CLAMP, 2, "; try --clamp both"),
    ([*CLAMP, "--json"], 2, "; try --clamp both"),
])
def test_commands_word_every_hint(argv, code, words):
    got, out, err = _run(argv)
    assert got == code, err
    _no_marker(out)
    _no_marker(err)
    text = " ".join((out + err).split())  # a report wraps its lines
    if argv[-1] == "--json":
        text = json.dumps(json.loads(out), ensure_ascii=False)
    assert words in text


def test_a_chip_profile_that_is_not_toml_names_the_command_that_writes_one(tmp_path):
    bad = tmp_path / "chip.toml"
    bad.write_text("not = toml = [\n", encoding="utf-8")
    code, _, err = _run(["check", "--r", "1M", "--c", "1u", "--rs", "470", "--chip", str(bad)])
    assert code == 2 and "write it with 'pulsepick calibrate --save'" in err
    _no_marker(err)


def _strings(obj):
    if isinstance(obj, str):
        yield obj
    elif isinstance(obj, dict):
        for v in obj.values():
            yield from _strings(v)
    elif isinstance(obj, list | tuple):
        for v in obj:
            yield from _strings(v)


def test_the_api_words_hints_as_keywords():
    import pulsepick as pp

    r = pp.check(r="1M", c="1u", rs=10, supply="5V")
    texts = list(_strings(r.to_dict()))
    assert texts and not any(has_marker(t) for t in texts)
    assert "a buffer gate (buffered=True) frees it" in r.to_dict()["status"]["reason"]
    assert not has_marker(repr(r))
    with pytest.raises(PulsepickError) as err:
        pp.check(core="timer555", ra="1M", rb="22k", c="2u2", stage="direct", rs=470,
                 buffered=True)
    assert "(drop buffered=True)" in str(err.value) and not has_marker(str(err.value))
    with pytest.raises(PulsepickError) as err:
        pp.calibrate(family="hc", r="1M", c="1u", high="0.1s", low="0.1s")
    assert str(err.value).endswith("(see recipe=True)")
    # and the command line, afterwards, still says --buffered
    code, out, _ = _run(LATCHED)
    assert code == 0 and "(--buffered)" in " ".join(out.split())
