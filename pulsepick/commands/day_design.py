"""``pulsepick day DESIGN.toml``: the storage, panel, charge path, place and lights of a
design file fill the day's options (options given on the command line win)."""

from __future__ import annotations

import argparse

from pulsepick.errors import RequestError

# [site] keys read as the day's options of the same name.
_SITE = ("latitude", "date", "longitude", "utc_offset", "turn_on", "turbidity", "tilt",
         "azimuth", "altitude")


def apply_design(args: argparse.Namespace):
    """Fill ``args`` from the design file ``args.design``; return the design (or None)."""
    if getattr(args, "design", None) is None:
        return None
    from pulsepick.designfile import is_design_file, read_design

    if not is_design_file(args.design):
        raise RequestError(f"{args.design!r} is not a design file; give a .toml design such "
                           "as examples/firefly-lantern.toml")
    if any(v is not None for k, v in vars(args).items() if k.startswith("value_")) or \
            args.night_load is not None:
        raise RequestError("give the night load one way: the design file's lights, "
                           "--night-load, or the circuit's values")
    design = read_design(args.design)
    s = design.storage
    if s is None and args.storage is None:
        raise RequestError(f"{args.design}: no [storage] table; the day needs one, such as "
                           "[storage] with part = \"5f-2v7\"")
    if s is not None:
        if args.storage is None:
            args.storage = s.get("part", s.get("capacitance"))
            if "rated" in s and args.rated is None:
                args.rated = s["rated"]
        if "stop_at" in s and args.stop_at is None:
            args.stop_at = s["stop_at"]
        if "leakage" in s:
            args.leakage = s["leakage"]
    p = design.panel
    given_panel = any(getattr(args, k) is not None for k in ("panel", "panel_voc", "panel_isc"))
    if p is not None and not given_panel:
        if "part" in p:
            args.panel = p["part"]
        else:
            args.panel_voc, args.panel_isc = p["voc"], p["isc"]
            if "cells" in p:
                args.panel_cells = str(p["cells"])
        if "diode" in p:
            args.diode = str(p["diode"]).strip().lower()
        if "clamp" in p and args.clamp is None:
            args.clamp = p["clamp"]
    if args.night is None and args.latitude is None:
        if design.site is not None:
            for key in _SITE:
                if key in design.site and getattr(args, key, None) is None:
                    setattr(args, key, str(design.site[key]))
        elif design.night is not None:
            from pulsepick.commands.design_night import design_night

            dn = design_night(design)
            args.night = f"{dn.night_s:g}s"
            if dn.dusk is not None:
                # the file's clock times: dusk and dawn as given, not a night centred on midnight
                args.design_clock = (dn.dusk, dn.night_s)
    return design


def design_load(args: argparse.Namespace, design, storage, v_top_v: float):
    """The night load of every light of the design (the solver's picks), as a curve."""
    from pulsepick.commands.solved_load import solved_load

    shim = argparse.Namespace(supply=None, family=None, design=args.design,
                              cross_current=None)
    load, _ = solved_load(shim, design, storage, v_top_v, None)
    return load


def design_loads(args: argparse.Namespace, design, storage, v_top_v: float):
    """The night load curve of every light, and the day load (A): with a dusk detector,
    what the lights draw held still by it (a photoresistor light at its daytime
    resistance) plus the chip's typical quiescent current (:mod:`pulsepick.analysis.gating`);
    without one, 0."""
    from dataclasses import replace

    from pulsepick.analysis.multi import combined_load_curve
    from pulsepick.commands.night_options import supply_grid
    from pulsepick.design import load_curve
    from pulsepick.designfile import build_request
    from pulsepick.engine.environment import chip_model
    from pulsepick.solve import solve_build
    from pulsepick.workers import on_workers

    result = on_workers(solve_build, build_request(design), assess_picks=False)
    missing = [li.name for li in result.lights if li.pick is None]
    if missing:
        raise RequestError(f"{args.design}: the solver offers nothing for "
                           f"{', '.join(missing)}; run 'pulsepick solve {args.design}' for "
                           "the reasons")
    grid = supply_grid(max(v_top_v, storage.v_rated_v))
    # a photoresistor light draws at the night's light level (pulsepick.packing)
    night = result.night_designs or [li.pick.design for li in result.lights]
    curves = [replace(load_curve(d, grid), label=f"{li.name}: {d.label()}")
              for li, d in zip(result.lights, night, strict=True)]
    name = design.name or args.design
    load = combined_load_curve(curves, label=f"{name} ({len(curves)} lights)")
    if result.gating is None:
        return load, 0.0
    schmitt = [li.pick.design for li in result.lights if not li.pick.design.chip.is_timer]
    iq = float(chip_model(schmitt[0].chip).iq_typ_a) if schmitt else 0.0
    return load, result.gating.held_a + iq
