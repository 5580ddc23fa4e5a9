"""The load of the solver's pick (or of every light of a build) for ``night`` and ``day``.

Shared by the two commands, so that neither imports the other.
"""

from __future__ import annotations

import argparse
import os
from dataclasses import replace

from pulsepick.commands.night_options import quantity, supply_grid
from pulsepick.errors import RequestError


def one_circuit(args: argparse.Namespace, what: str) -> None:
    given = [k for k in vars(args) if k.startswith("value_") and getattr(args, k) is not None]
    if given or args.no_circuit or (what == "a design file" and args.from_solve is not None):
        raise RequestError(f"give the circuit one way: {what}, --from-solve, the circuit "
                           "values (--core, --r, --c ...) or --no-circuit")


def solved_load(args, design, storage, v_start: float, stop_at: float | None):
    """The load curve of the solver's pick, or of every light of a build, added."""
    from pulsepick.analysis.multi import combined_load_curve
    from pulsepick.design import load_curve
    from pulsepick.solve import solve, solve_build
    from pulsepick.workers import on_workers

    grid = supply_grid(max(v_start, storage.v_rated_v))
    if design is not None:
        from pulsepick.designfile import build_request

        overrides = {"supply": args.supply, "family": args.family}
        if getattr(args, "chip", None):
            overrides["chip"] = os.path.abspath(args.chip)
        result = on_workers(solve_build, build_request(design, **overrides),
                            assess_picks=False)
        missing = [li.name for li in result.lights if li.pick is None]
        if missing:
            raise RequestError(f"{args.design}: the solver offers nothing for "
                               f"{', '.join(missing)}; run 'pulsepick solve {args.design}' "
                               "for the reasons")
        # a photoresistor light draws at the night's light level (pulsepick.packing)
        designs = [(li.name, with_cross_current(d, args)) for li, d in zip(
            result.lights, result.night_designs or [li.pick.design for li in result.lights],
            strict=True)]
        curves = [replace(load_curve(d, grid), label=f"{name}: {d.label()}")
                  for name, d in designs]
        name = design.name or args.design
        return combined_load_curve(curves, label=f"{name} ({len(curves)} lights)"), designs
    one_circuit(args, "--from-solve")
    from pulsepick.commands.circuit_options import solver_chip
    from pulsepick.request import make_build_request, make_request, split_lights

    supply = args.supply
    if supply is None:
        supply = f"{v_start:g}V" + (f"..{stop_at:g}V" if stop_at else "")
    if args.pick < 1:
        raise RequestError(f"--pick {args.pick}: give a circuit number of at least 1")
    phrases = split_lights(args.from_solve)
    if phrases is not None:
        family, measured = solver_chip(args)
        breq = make_build_request(phrases, supply=supply, family=family, led=args.led,
                                  chip_overrides=measured,
                                  source=args.from_solve)
        result = on_workers(solve_build, breq, assess_picks=False)
        if any(li.pick is None for li in result.lights):
            raise RequestError(f"--from-solve {args.from_solve!r}: the solver offers nothing "
                               "for some lights; run 'pulsepick solve' for the reasons")
        designs = [(li.name, with_cross_current(li.pick.design, args))
                   for li in result.lights]
        return (combined_load_curve([load_curve(d, grid) for _, d in designs],
                                    label=f"{args.from_solve} ({len(phrases)} lights)"),
                designs)
    family, measured = solver_chip(args)
    req = make_request(args.from_solve, supply=supply, family=family, led=args.led,
                       chip_overrides=measured)
    result = on_workers(solve, req)
    if not result.success:
        raise RequestError(f"--from-solve {args.from_solve!r}: nothing can be offered; "
                           f"{' '.join(result.explanations) or result.message}")
    if args.pick > len(result.candidates):
        raise RequestError(f"--pick {args.pick}: the solver offers {len(result.candidates)} "
                           f"circuits; choose 1 to {len(result.candidates)}")
    pick = with_cross_current(result.candidates[args.pick - 1].design, args)
    return (replace(load_curve(pick, grid), label=f"{pick.label()} (solver pick {args.pick})"),
            [(None, pick)])


def with_cross_current(design, args):
    """The solver's design with a measured ``--cross-current`` in place of the estimate."""
    text = getattr(args, "cross_current", None)
    if text is None or design.chip.is_timer:
        return design
    measured = quantity(text, "current", "--cross-current", "15uA", allow_zero=True)
    return replace(design, chip=replace(design.chip, cross_current_a=measured))
