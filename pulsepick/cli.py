"""Command-line entry point: ``pulsepick <command> ...``.

Errors that pulsepick raises on purpose (``PulsepickError``) become one line on
stderr and exit status 2. Anything else is a bug: exit status 1 with a short
message and a hint to report it; ``--debug`` shows the traceback.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
import traceback
from types import ModuleType

from pulsepick import __version__
from pulsepick.commands import COMMAND_MODULES
from pulsepick.errors import PulsepickError

EXIT_OK = 0
EXIT_BUG = 1
EXIT_BAD_INPUT = 2

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
        examples = "\n".join(f"  {line}" for line in module.EXAMPLES)
        cmd = sub.add_parser(
            module.NAME,
            help=module.SUMMARY,
            description=module.SUMMARY,
            epilog=f"examples:\n{examples}" if examples else None,
            formatter_class=argparse.RawDescriptionHelpFormatter,
        )
        cmd.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                         help="show a traceback on internal errors")
        module.add_arguments(cmd)
        cmd.set_defaults(_run=module.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the program; returns the exit status (0 ok, 1 internal error, 2 bad input)."""
    args_list = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in args_list
    try:
        parser = build_parser(_selected_command(args_list))
        args = parser.parse_args(args_list)
        if not getattr(args, "command", None):
            parser.print_help()
            return EXIT_BAD_INPUT
        return int(args._run(args) or EXIT_OK)
    except PulsepickError as err:
        if debug:
            traceback.print_exc()
        print(f"pulsepick: error: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("pulsepick: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return EXIT_OK
    except Exception as err:
        if debug:
            traceback.print_exc()
        print(
            f"pulsepick: internal error: {type(err).__name__}: {err}. This is a bug; "
            "please report it with the command you ran (add --debug for details).",
            file=sys.stderr,
        )
        return EXIT_BUG


def run() -> None:
    """Console-script entry: run ``main`` and leave without the interpreter's teardown.

    Tearing down numpy, scipy and rich at exit costs a noticeable part of a short
    command's wall time; the streams are flushed first and no worker process outlives
    its command (the pools are closed), so ending the process directly loses nothing.
    """
    code = main()
    try:
        sys.stdout.flush()
        sys.stderr.flush()
    except BrokenPipeError:
        pass
    os._exit(code)


if __name__ == "__main__":
    sys.exit(main())
