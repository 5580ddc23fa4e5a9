"""The entry point ``main(argv=None) -> int``: a status back, never ``SystemExit``."""

from __future__ import annotations

import inspect

from pulsepick import __version__
from pulsepick.cli import EXIT_BAD_INPUT, EXIT_OK, main


def test_the_signature_is_argv_none_to_int():
    sig = inspect.signature(main)
    assert list(sig.parameters) == ["argv"] and sig.parameters["argv"].default is None
    assert sig.return_annotation in (int, "int")


def test_a_good_command_returns_0(capsys):
    assert main(["values", "4k7", "--series", "E12"]) == EXIT_OK
    assert "4.7 kΩ" in capsys.readouterr().out


def test_help_and_version_return_0_instead_of_exiting(capsys):
    assert main(["--version"]) == EXIT_OK
    assert capsys.readouterr().out.strip() == f"pulsepick {__version__}"
    assert main(["values", "--help"]) == EXIT_OK
    assert "usage: pulsepick values" in capsys.readouterr().out


def test_bad_input_returns_2_with_one_line(capsys):
    assert main(["values", "4k7", "--series", "E7"]) == EXIT_BAD_INPUT
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("pulsepick: error:") and "E7" in err[0]
    assert main(["no-such-command"]) == EXIT_BAD_INPUT
    assert main([]) == EXIT_BAD_INPUT  # no command: the help, and status 2


def test_the_program_ends_with_mains_status_and_all_its_output():
    # run() ends the process at once after main(): the output must be whole and flushed
    import json
    import subprocess
    import sys

    done = subprocess.run([sys.executable, "-m", "pulsepick", "values", "4k7", "--series",
                           "E12", "--json"], capture_output=True, text=True, check=False)
    assert done.returncode == EXIT_OK
    assert json.loads(done.stdout)  # the whole document, parsed
    bad = subprocess.run([sys.executable, "-m", "pulsepick", "values", "4k7", "--series",
                          "E7"], capture_output=True, text=True, check=False)
    assert bad.returncode == EXIT_BAD_INPUT
    assert bad.stdout == "" and len(bad.stderr.strip().splitlines()) == 1


def test_the_program_runs_one_blas_thread_per_process_unless_the_user_says_otherwise(
        monkeypatch):
    from pulsepick.cli import BLAS_THREAD_VARIABLES, single_threaded_blas

    for name in BLAS_THREAD_VARIABLES:
        monkeypatch.delenv(name, raising=False)
    monkeypatch.setenv("OMP_NUM_THREADS", "3")
    single_threaded_blas()
    import os

    assert os.environ["OPENBLAS_NUM_THREADS"] == "1" and os.environ["MKL_NUM_THREADS"] == "1"
    assert os.environ["OMP_NUM_THREADS"] == "3"



def test_a_reader_that_leaves_early_ends_the_program_quietly():
    # `pulsepick ... | head -1`: the reader closes the pipe; the program ends with status
    # 0 and says nothing (the shell convention for a pipe cut short, as `head` expects)
    import subprocess
    import sys

    proc = subprocess.Popen([sys.executable, "-m", "pulsepick", "check", "--r", "1M",
                             "--c", "1u", "--rs", "470"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    proc.stdout.close()  # before the program writes anything
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == EXIT_OK and err == b""
