"""Golden text: the reports of solve, check, night and bands at 100 columns.

Each case runs the command as a user would (output redirected, so 100 columns, no
colour) and compares the text with ``tests/golden/<name>.txt``. Wall times in the
text are masked. To regenerate the files after an intended layout change:

    PULSEPICK_GOLDEN=update python -m pytest tests/test_golden.py
"""

from __future__ import annotations

import itertools
import os
import re
from pathlib import Path

import pytest

from pulsepick.cli import main

GOLDEN = Path(__file__).parent / "golden"
UPDATE = os.environ.get("PULSEPICK_GOLDEN") == "update"
CIRCUIT = ["--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse", "--cp", "22u",
           "--rs", "47", "--supply", "3V"]
CASES = {
    "solve": ["solve", "one flash every 3 s", "--jobs", "1"],
    "solve-schematic": ["solve", "flash every 2.5 s for 40 ms, 5 mA peak", "--cores",
                        "schmitt-steered", "--stages", "pulse", "--top", "2", "--builds", "300",
                        "--jobs", "1", "--schematic"],
    "check": ["check", *CIRCUIT],
    "night": ["night", *CIRCUIT, "--storage", "5f-2v7", "--night", "12h"],
    "bands": ["bands", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--rs", "470",
              "--builds", "400"],
}
#: Wall times vary from run to run: "in 2.27 s", "(1.9 s;"
_TIMES = re.compile(r"(?<=in )\d+(\.\d+)? s\b|(?<=\()\d+(\.\d+)? s(?=[;)])")


def normalise(text: str) -> str:
    return _TIMES.sub("<time>", text)


@pytest.mark.parametrize("name", sorted(CASES))
def test_golden_text(name, capsys, monkeypatch):
    monkeypatch.delenv("COLUMNS", raising=False)
    monkeypatch.delenv("NO_COLOR", raising=False)
    assert main(CASES[name]) == 0
    out = normalise(capsys.readouterr().out)
    lines = out.splitlines()
    assert lines and all(line == line.rstrip() for line in lines), "trailing spaces"
    assert max(len(line) for line in lines) <= 100
    path = GOLDEN / f"{name}.txt"
    if UPDATE or not path.exists():
        path.write_text(out, encoding="utf-8")
        if not UPDATE:
            pytest.fail(f"{path.name} was missing and has been written; run again")
    assert out == path.read_text(encoding="utf-8")


def test_solve_fits_a_screen():
    text = (GOLDEN / "solve.txt").read_text(encoding="utf-8")
    assert len(text.splitlines()) <= 70  # the limit for "one flash every 3 s"


def test_columns_are_honoured_when_redirected(capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "60")
    assert main(["values", "E24"]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines and max(len(line) for line in lines) <= 60
    assert all(line == line.rstrip() for line in lines)


def test_value_never_parts_from_its_unit(capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "60")
    assert main(CASES["solve-schematic"]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert max(len(line) for line in lines) <= 60
    unit = re.compile(r"^\s*(m?s|[mµ]?A|[kM]?Ω|[nµm]?F|V|%)(\s|$|[,;.)])")
    for before, line in itertools.pairwise(lines):
        if re.search(r"\d$", before.rstrip()):
            assert not unit.match(line), (before, line)


@pytest.mark.parametrize("name", ["check", "night", "bands"])
def test_reports_fit_sixty_columns(name, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "60")
    assert main(CASES[name]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert len(lines) > 20 and max(len(line) for line in lines) <= 60
    assert all(line == line.rstrip() for line in lines)
