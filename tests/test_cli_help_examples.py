"""Every example printed by a command's ``--help`` runs as typed (exit 0), and leaves
no unworded hint (:mod:`pulsepick.hints`) in its output or its files.

The examples run in a scratch folder that holds the files they name (a parts drawer,
an irradiance profile, the shipped example design). To keep the suite quick the
solver offers two circuits with 300 builds each instead of its defaults; the options
and files of each example are used exactly as printed.
"""

from __future__ import annotations

import importlib
import re
import shlex
import shutil
from pathlib import Path

import pytest

from pulsepick.cli import build_parser, main
from pulsepick.commands import COMMAND_MODULES
from pulsepick.hints import has_marker

REPO = Path(__file__).resolve().parent.parent
EXAMPLES = [(name, line) for name in COMMAND_MODULES
            for line in importlib.import_module(f"pulsepick.commands.{name}").EXAMPLES]


def test_examples_are_listed_in_help(capsys):
    for name in COMMAND_MODULES:
        with pytest.raises(SystemExit) as stop:
            build_parser(name).parse_args([name, "--help"])
        assert stop.value.code == 0
        out = capsys.readouterr().out
        module = importlib.import_module(f"pulsepick.commands.{name}")
        # long examples are continued with " \\" lines (at most 100 columns each)
        joined = re.sub(r" \\\n +", " ", out)
        assert module.EXAMPLES and all(ex in joined for ex in module.EXAMPLES)
        tail = out.split("examples:\n", 1)[1]
        assert max(len(ln) for ln in tail.splitlines()) <= 100


@pytest.mark.slow
@pytest.mark.parametrize(("name", "line"), EXAMPLES, ids=[f"{n}-{i}" for i, (n, _) in
                                                          enumerate(EXAMPLES)])
def test_help_example_runs(name, line, tmp_path, monkeypatch, capsys):
    request = importlib.import_module("pulsepick.request.options")  # reads them per call
    monkeypatch.setattr(request, "DEFAULT_TOP", 2)
    monkeypatch.setattr(request, "DEFAULT_BUILDS", 300)
    (tmp_path / "drawer.csv").write_text(
        "kind,value,qty,dielectric\nR,2M2,10\nR,1M,10\nR,470k,10\nR,220k,10\nR,100k,10\n"
        "R,47k,10\nR,22k,10\nR,10k,10\nR,4k7,10\nR,1k,10\nR,470,10\nR,220,10\nR,100,10\n"
        "R,47,10\nR,22,10\nR,10,10\nC,1u,5,film\nC,2u2,5,x7r\nC,470n,5,film\nC,220n,5,film\n"
        "C,100n,5,film\nC,10u,5,electrolytic\nC,22u,5,electrolytic\nC,47u,5,electrolytic\n"
        "C,100u,5,electrolytic\nC,220u,5,electrolytic\nC,330u,5,electrolytic\n"
        "R,1M5,5\nR,3M3,5\nR,4M7,5\nC,1u5,5,film\nC,4u7,5,film\n")
    (tmp_path / "garden.csv").write_text(
        "hour,irradiance_w_m2\n5,0\n7,150\n10,600\n13,800\n16,500\n19,100\n21,0\n")
    shutil.copytree(REPO / "examples", tmp_path / "examples")
    monkeypatch.chdir(tmp_path)
    if "chip.toml" in line and "--save" not in line:
        # the chip profile the calibrate example saves
        assert main(["calibrate", "--r", "1M5", "--c", "4u7", "--supply", "3V", "--family",
                     "hc", "--high", "2.6s", "--low", "3.5s", "--save", "chip.toml"]) == 0
        capsys.readouterr()
    argv = shlex.split(line)
    assert argv[0] == "pulsepick" and argv[1] == name
    code = main(argv[1:])
    out, err = capsys.readouterr()
    assert code == 0, f"{line}\n{err}"
    assert out.strip() or "wrote" in err
    # the core's hints are worded as options on the screen and in every file written
    assert not has_marker(out + err)
    for path in tmp_path.rglob("*"):
        if path.is_file() and path.suffix in (".html", ".csv", ".json", ".toml", ".txt",
                                              ".svg"):
            assert not has_marker(path.read_text(encoding="utf-8", errors="replace")), path
