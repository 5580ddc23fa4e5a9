"""Command-line entry point: ``pulsepick <command> ...``.

Errors that pulsepick raises on purpose (``PulsepickError``) become one line on
stderr and exit status 2. Anything else is a bug: exit status 1 with a short
message and a hint to report it; ``--debug`` shows the traceback.
"""

from __future__ import annotations

import argparse
import gc
import importlib
import os
import re
import signal
import sys
import threading
import traceback
import warnings
from types import ModuleType
from typing import NoReturn

from pulsepick import __version__
from pulsepick.commands import COMMAND_MODULES
from pulsepick.errors import PulsepickError

EXIT_OK = 0
EXIT_BUG = 1
EXIT_BAD_INPUT = 2
EXIT_INTERRUPTED = 130  # 128 + SIGINT, as shells report Ctrl-C

DESCRIPTION = (
    "pulsepick turns a wanted LED blink (how often, how long, how bright) into standard "
    "parts that keep blinking right with the chip you get, through the night."
)


class _Parser(argparse.ArgumentParser):
    """An argument parser whose usage errors are one line and exit status 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        where = "" if self.prog == "pulsepick" else f"{self.prog}: "
        raise _UsageError(f"{where}{message} (see '{self.prog} --help')")


class _UsageError(PulsepickError):
    pass


#: An argument that starts with a minus and a digit (``-20..50``, ``-5``, ``-0.5``) is a
#: value: no option name starts with a digit.
_NEGATIVE_VALUE = re.compile(r"^-\.?\d")


#: The widest help line an example may take (columns); longer ones are continued.
EXAMPLE_WIDTH = 100
_WORD = re.compile(r"""(?:"[^"]*"|'[^']*'|\S)+""")


def example_lines(line: str, width: int = EXAMPLE_WIDTH) -> str:
    """One help example, indented, continued with `` \\`` lines to fit ``width`` columns.

    An option stays on one line with its value, so every printed line pastes into a
    shell as the same command.
    """
    chunks: list[str] = []
    for word in _WORD.findall(line):
        if chunks and not word.startswith("-"):
            chunks[-1] += f" {word}"
        else:
            chunks.append(word)
    out, current = [], "  "
    for chunk in chunks:
        if current.strip() and len(current) + 1 + len(chunk) + 2 > width:
            out.append(current + " \\")
            current = "      " + chunk
        else:
            current = current + (" " if current.strip() else "") + chunk
    out.append(current)
    return "\n".join(out)


def _load_command(name: str) -> ModuleType | None:
    try:
        return importlib.import_module(f"pulsepick.commands.{name}")
    except ModuleNotFoundError as err:
        if err.name != f"pulsepick.commands.{name}":
            raise
    return None


def _selected_command(argv: list[str]) -> str | None:
    """The command word of ``argv`` when it names a registered command."""
    for word in argv:
        if word.startswith("-"):
            continue
        return word if word in COMMAND_MODULES else None
    return None


def build_parser(selected: str | None = None) -> argparse.ArgumentParser:
    """The parser with every registered command.

    With ``selected``, only that command's module is imported (the others get a bare
    entry), which keeps start-up short; without it every command is loaded for the
    full command list.
    """
    parser = _Parser(
        prog="pulsepick",
        description=DESCRIPTION,
        formatter_class=argparse.RawDescriptionHelpFormatter,
        epilog="Run 'pulsepick <command> --help' for the options and examples of a command.",
    )
    parser.add_argument("--version", action="version", version=f"pulsepick {__version__}")
    parser.add_argument("--debug", action="store_true", help="show a traceback on internal errors")
    sub = parser.add_subparsers(dest="command", metavar="<command>", parser_class=_Parser)
    for name in COMMAND_MODULES:
        if selected is not None and name != selected:
            sub.add_parser(name, add_help=False)
            continue
        module = _load_command(name)
        if module is None:
            continue
        examples = "\n".join(example_lines(line) for line in module.EXAMPLES)
        cmd = sub.add_parser(
            module.NAME,
            help=module.SUMMARY,
            description=module.SUMMARY,
            epilog=f"examples:\n{examples}" if examples else None,
            formatter_class=argparse.RawDescriptionHelpFormatter,
        )
        # values such as -20..50 (a range) or -5 are values, not options
        cmd._negative_number_matcher = _NEGATIVE_VALUE
        cmd.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                         help="show a traceback on internal errors")
        module.add_arguments(cmd)
        cmd.set_defaults(_run=module.run)
    return parser


def _warnings_are_errors() -> bool:
    """Whether the caller (a test run) turned warnings into errors."""
    return any(f[0] == "error" for f in warnings.filters)


class _Stopped(BaseException):
    """A termination signal (SIGTERM, SIGHUP) arrived: leave as Ctrl-C does."""

    def __init__(self, signum: int) -> None:
        super().__init__(signum)
        self.signum = signum


def _raise_stopped(signum, frame) -> None:
    raise _Stopped(signum)


def _install_signals() -> dict:
    """SIGTERM and SIGHUP raise :class:`_Stopped` in the main thread, so the worker
    pools are killed on the way out; the previous handlers are returned."""
    old: dict = {}
    if threading.current_thread() is not threading.main_thread():
        return old
    for name in ("SIGTERM", "SIGHUP"):
        sig = getattr(signal, name, None)
        if sig is not None:
            old[sig] = signal.signal(sig, _raise_stopped)
    if signal.getsignal(signal.SIGINT) is signal.SIG_IGN:
        pass  # started in the background with Ctrl-C ignored: keep it so
    else:
        old[signal.SIGINT] = signal.signal(signal.SIGINT, signal.default_int_handler)
    return old


#: An error message shows at most this many lines and characters (longer ones are cut
#: with a note); the input echoed inside it is cut to ``pulsepick.errors.ECHO_CHARS``.
MESSAGE_LINES = 4
MESSAGE_CHARS = 600


def error_text(message: str) -> str:
    """An error message fit for a terminal: no control characters, at most
    ``MESSAGE_LINES`` lines and ``MESSAGE_CHARS`` characters."""
    lines = [" ".join("".join(ch if ch.isprintable() else " " for ch in line).split())
             for line in str(message).splitlines()] or [""]
    lines = [ln for ln in lines if ln] or [""]
    cut = len(lines) > MESSAGE_LINES
    lines = lines[:MESSAGE_LINES]
    text = "\n".join(lines)
    if len(text) > MESSAGE_CHARS:
        text, cut = text[:MESSAGE_CHARS - 1].rstrip(), True
    return text + (" ... (cut short)" if cut else "")


def _worded(err: BaseException) -> str:
    """An error's message with the core's hints worded as options (``--buffered``)."""
    from pulsepick.output.render import word_hints

    return word_hints(str(err), "cli")


def main(argv: list[str] | None = None) -> int:
    """Run the program; returns the exit status.

    0 ok (``--help`` and ``--version`` included), 1 internal error (a bug), 2 bad input,
    130 interrupted by Ctrl-C, 128 + the signal number when stopped by SIGTERM or SIGHUP.
    It returns rather than raising ``SystemExit``. Worker processes never outlive it.
    """
    args_list = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in args_list
    old_handlers = _install_signals()
    try:
        with warnings.catch_warnings():
            if not _warnings_are_errors():
                # numerical warnings are never shown to the user (tests make them errors)
                warnings.simplefilter("ignore")
            return _dispatch(args_list, debug)
    except KeyboardInterrupt:
        _say("pulsepick: interrupted")
        return EXIT_INTERRUPTED
    except _Stopped as stop:
        _say(f"pulsepick: stopped by signal {stop.signum}")
        return 128 + stop.signum
    finally:
        for sig, handler in old_handlers.items():
            try:
                signal.signal(sig, handler)
            except (TypeError, ValueError):
                pass


#: Thread-count variables of the BLAS libraries that numpy and scipy load (OpenBLAS in
#: their wheels; MKL and OpenMP builds elsewhere).
BLAS_THREAD_VARIABLES = ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "OMP_NUM_THREADS")


def single_threaded_blas() -> None:
    """One BLAS thread per process unless the user set otherwise (before numpy loads).

    pulsepick parallelises by worker processes, one per core, over many small arrays;
    a BLAS thread pool in each process only adds threads that wait spinning for work
    and take CPU time from the workers (common practice for process-parallel
    programs). A variable the user has set is left as it is.
    """
    for name in BLAS_THREAD_VARIABLES:
        os.environ.setdefault(name, "1")


#: Allocations between two collections of the garbage collector's youngest generation
#: in the program (Python's default is 700). A solve makes millions of short-lived
#: objects and few reference cycles: in the README's demo solve on one process the
#: collector took 0.075 s in 165 collections at the default and 0.04 s in 2 at this
#: threshold (measured), and cycles are still freed.
GC_YOUNG_THRESHOLD = 50_000


def run() -> NoReturn:
    """The ``pulsepick`` program: :func:`main` on the command line, then the process ends.

    Once the output is flushed the process ends at once (``os._exit``), without the
    interpreter's tear-down of every module and object it made, which takes a tenth to
    a fifth of a second after a solve (numpy and scipy) and changes nothing the user
    sees: every file is closed and every worker process has ended by then.
    """
    single_threaded_blas()
    gc.set_threshold(GC_YOUNG_THRESHOLD, *gc.get_threshold()[1:])
    status = main()
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):
            if stream is sys.stdout:
                _quiet_stdout()
    os._exit(status)


def _quiet_stdout() -> None:
    """The reader of our output left (``| head``): send the rest of stdout nowhere, so
    the flush at exit does not fail a second time."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError, AttributeError):
        pass


def _say(text: str) -> None:
    try:
        print(text, file=sys.stderr)
    except (OSError, ValueError):
        pass


def _exit_status(code: object) -> int:
    """The status of a ``SystemExit`` code: None is 0, a number is itself, a message
    (printed here) is 2."""
    if code is None:
        return EXIT_OK
    if isinstance(code, int) and not isinstance(code, bool):
        return code
    _say(f"pulsepick: error: {error_text(str(code))}")
    return EXIT_BAD_INPUT


def _dispatch(args_list: list[str], debug: bool) -> int:
    try:
        parser = build_parser(_selected_command(args_list))
        args = parser.parse_args(args_list)
        if not getattr(args, "command", None):
            parser.print_help()
            return EXIT_BAD_INPUT
        code = int(args._run(args) or EXIT_OK)
        sys.stdout.flush()  # a closed pipe shows here, not at exit
        return code
    except SystemExit as stop:
        # --help and --version print and "exit" from inside the parser: a status here too
        return _exit_status(stop.code)
    except PulsepickError as err:
        if debug:
            traceback.print_exc()
        _say(f"pulsepick: error: {error_text(_worded(err))}")
        return EXIT_BAD_INPUT
    except BrokenPipeError:
        _quiet_stdout()
        return EXIT_OK
    except RecursionError as err:
        if debug:
            traceback.print_exc()
        _say("pulsepick: error: the input is nested too deeply; give a flatter file")
        del err
        return EXIT_BAD_INPUT
    except (ArithmeticError, ValueError, Warning) as err:
        # numbers beyond what the engines were built for: an overflow, a root that
        # cannot be bracketed, an integrator that gives up (tests make warnings errors)
        if debug:
            traceback.print_exc()
        _say(f"pulsepick: error: this is outside what the engines handle "
             f"({error_text(_worded(err))[:150]}); try values nearer the usual ranges")
        return EXIT_BAD_INPUT
    except MemoryError:
        _say("pulsepick: error: out of memory; ask for less work (fewer --builds, lights or "
             "days)")
        return EXIT_BAD_INPUT
    except Exception as err:
        if debug:
            traceback.print_exc()
        _say(f"pulsepick: internal error: {type(err).__name__}: {error_text(_worded(err))}. "
             "This is a bug; please report it with the command you ran (add --debug for "
             "details).")
        return EXIT_BUG


if __name__ == "__main__":
    sys.exit(main())
