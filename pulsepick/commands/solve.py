"""``pulsepick solve``: from a wanted blink to ranked parts lists and a buy list.

Reads the blink (a phrase or flags) and the build's context, runs the solver
(:func:`pulsepick.solve.solve`), verifies and analyses the candidates
(:func:`pulsepick.solve.assess`), and prints the report, the JSON, or writes a buy
list. Imports of the core happen inside ``run`` so ``pulsepick --help`` stays quick.
"""

from __future__ import annotations

from typing import Any, NamedTuple

# the options, the reports and the several-lights run live in their own modules; their
# names stay importable from here
from pulsepick.commands.solve_build import (  # noqa: F401
    _build_extras,
    _is_build,
    build_buylist_text,
    build_doc,
    build_json,
    build_lines,
    build_request_from_args,
    compute_build,
    run_build,
)
from pulsepick.commands.solve_build_report import render_build  # noqa: F401
from pulsepick.commands.solve_options import (  # noqa: F401
    add_arguments,
    night_plan,
    request_from_args,
)
from pulsepick.commands.solve_report import (  # noqa: F401
    crossing_text,
    render_detail,
    render_report,
)
from pulsepick.commands.solve_text import _nothing_line

NAME = "solve"
SUMMARY = "find standard parts for a wanted blink: ranked circuits, spread, drift, buy list"
EXAMPLES = [
    'pulsepick solve "one flash every 3 s"',
    'pulsepick solve "flash every 2.5 s for 40 ms, 5 mA peak" --supply 2.7V..1.8V '
    "--family lvc,timer555",
    'pulsepick solve "one flash every 3 s, 40 ms long" --supply 2.7V..1.8V '
    "--family lvc,timer555 --storage 5f-2v7 --night 13h",
    'pulsepick solve "20 flashes a minute, 0.1 s long, as bright as a steady 1 mA"',
    'pulsepick solve "every 4 s, 200 mcd" --led white --supply 3.3V',
    "pulsepick solve --every 3s --flash 40ms --peak 5mA --led red --supply 2.7V..1.8V",
    'pulsepick solve "one flash every 3 s" --stock drawer.csv --buylist parts.csv --pick 1',
    'pulsepick solve "one flash every 3 s" --trim --buylist parts.csv',
    'pulsepick solve "one flash every 3 s" --chip chip.toml',
    'pulsepick solve "one flash every 3 s" --cores schmitt-steered --stages direct --json',
    'pulsepick solve "one flash every 3 s" --plot garden.png --report garden.html',
    'pulsepick solve "three lights: every 2.7 s, every 4.1 s, every 6.3 s, 60 ms each" '
    "--spread-out --period-tolerance 10%",
    "pulsepick solve examples/firefly-lantern.toml --buylist lantern-parts.csv",
]


class SolveRun(NamedTuple):
    """What a single-light solve computed (before any output)."""

    result: Any  # SolveResult, assessed
    request: Any  # SolveRequest
    plans: Any = None  # trimmer plans with --trim
    picked: bool = False  # --pick was given


def compute(args, *, in_full: bool = False) -> SolveRun:
    """Check the options, solve and assess one light (several lights: :func:`compute_build`).

    ``in_full``: every candidate's spread with its shares and corners, whatever the
    options show (the Python API returns the whole result); otherwise as
    :func:`_shown_in_full` says.
    """
    from pulsepick.commands.pictures_files import check_picture_targets
    from pulsepick.errors import RequestError
    from pulsepick.solve import assess, solve
    from pulsepick.workers import pool_runner

    for flag in ("max_packages", "period_tolerance", "lock_margin", "max_lock_share"):
        if getattr(args, flag) is not None:
            raise RequestError(f"--{flag.replace('_', '-')} applies to several lights (a "
                               "several-lights phrase or a design file)")
    if args.spread_out:
        raise RequestError("--spread-out applies to several lights (a several-lights phrase "
                           "or a design file)")
    check_picture_targets(args, [args.stock], with_buylist=True)
    req = request_from_args(args)
    picked = args.pick is not None
    args.pick = 1 if args.pick is None else args.pick
    night = night_plan(args, req)
    with pool_runner(args.jobs) as runner:  # one set of workers for the search and checks
        found = solve(req, runner=runner)
        detail = None if in_full else _shown_in_full(args, found)
        result = assess(found, runner=runner, detail=detail)
    if night is not None:
        from pulsepick.solve.nightcheck import night_check

        result = night_check(result, night)
    plans = None
    if getattr(args, "trim", False):
        from pulsepick.commands.trim_parts import trim_result

        result, plans = trim_result(result, req.r_series)
    return SolveRun(result, req, plans, picked)


def _shown_in_full(args, found) -> tuple[int, ...] | None:
    """The ranks whose spread the output shows in full (variance shares, corners): the
    one block of the text summary, or every candidate (None) for --detail, --json and
    the pictures."""
    from pulsepick.commands.pictures_files import wants_pictures

    if args.detail or args.json or wants_pictures(args) or not found.candidates:
        return None
    from pulsepick.commands.solve_summary import shown_rank

    return (shown_rank(args.pick, len(found.candidates)),)


def solve_json(run: SolveRun) -> dict:
    """The ``--json`` document of a single-light solve."""
    from pulsepick.output.export import result_json, solve_cautions

    out = result_json(run.result, solve_cautions(run.request))
    if run.plans is not None:
        from pulsepick.commands.trim_parts import add_trim_json

        add_trim_json(out, run.plans)
    return out


def run(args) -> int:
    """Parse, solve, assess, and print or export."""
    from pulsepick.commands.pictures_files import wants_pictures
    from pulsepick.output.render import dump_json, make_console

    if _is_build(args):
        return run_build(args)
    done = compute(args)
    result, req, plans = done.result, done.request, done.plans
    if args.buylist and result.success:
        from pulsepick.output.export import buylist_text, write_atomic

        write_atomic(args.buylist, buylist_text(result, args.pick), force=args.force)
    if args.json:
        dump_json(solve_json(done))
    else:
        from pulsepick.commands.solve_summary import render_summary

        console = make_console()
        buylist = args.buylist if result.success else None
        if args.detail:
            render_detail(console, result, buylist=buylist, pick=args.pick, only=done.picked)
        else:
            render_summary(console, result, buylist=buylist, pick=args.pick,
                           schematic=args.schematic)
        if plans is not None:
            from pulsepick.commands.trim_parts import render_trim

            render_trim(console, plans)
    if wants_pictures(args):
        from pulsepick.commands.pictures import solve_pictures

        solve_pictures(args, result)
    if not result.success:
        _nothing_line(req.describe(), result.explanations)
        return 2
    return 0
