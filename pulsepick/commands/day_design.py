"""``pulsepick day DESIGN.toml``: the days and nights of a whole build from its design file.

The storage, the panel with its charge diode and the night come from the file (as
``pulsepick night`` reads them); the night load is every light's load curve added
(:func:`pulsepick.analysis.multi.combined_load_curve`) and the day load is what the build
draws with the dusk detector holding the lights still (:mod:`pulsepick.analysis.gating`)
plus each package's quiescent current.
"""

from __future__ import annotations

import argparse
from dataclasses import replace

from pulsepick.errors import RequestError

#: Options the design file gives; with a design file they are refused on the command line.
FILE_OPTIONS = ("storage", "rated", "panel", "panel_voc", "panel_isc", "panel_cells",
                "night", "latitude", "longitude", "date", "utc_offset", "night_load",
                "stop_at")


def design_inputs(args: argparse.Namespace) -> dict:
    """Storage, panel, diode, night window, night and day loads of ``args.design``."""
    from pulsepick.analysis.day import NightWindow
    from pulsepick.analysis.multi import combined_load_curve
    from pulsepick.commands import night as night_cmd
    from pulsepick.commands.night_options import read_storage
    from pulsepick.design import load_curve
    from pulsepick.designfile import build_request, is_design_file, panel_part, read_design
    from pulsepick.engine.environment import chip_model
    from pulsepick.parts.diode import DIODE_KEYS, get_diode
    from pulsepick.solve import default_jobs, solve_build
    from pulsepick.units import parse_quantity

    if not is_design_file(args.design):
        raise RequestError(f"{args.design!r} is not a design file; give a .toml design such "
                           "as examples/footbridge-fireflies.toml")
    given = [f"--{k.replace('_', '-')}" for k in FILE_OPTIONS
             if getattr(args, k, None) not in (None, "0A", "1.8V")]
    if given:
        raise RequestError(f"{', '.join(given)}: the design file gives these; leave them out "
                           "or run without the design file")
    design = read_design(args.design)
    if design.storage is None or design.panel is None:
        raise RequestError(f"{args.design}: the day needs a [storage] and a [panel] table")
    parser = argparse.ArgumentParser(add_help=False)
    night_cmd.add_arguments(parser)
    nargs = parser.parse_args([args.design])
    night_cmd._apply_design(nargs)
    night = night_cmd._read_night(nargs)
    if night is None or night.get("dusk") is None:
        raise RequestError(f"{args.design}: the day needs the night's clock times: [night] "
                           "with dusk and dawn, or [site]")
    window = NightWindow.from_times(night["dusk"], night["dusk"].__class__.fromtimestamp(
        night["dusk"].timestamp() + night["duration_s"]))
    storage = read_storage(nargs.storage, nargs.rated)
    diode = str(design.panel.get("diode", "schottky")).strip().lower()
    if diode not in DIODE_KEYS:
        raise RequestError(f"{args.design}: [panel] diode {diode!r} unknown; accepted: "
                           f"{', '.join(DIODE_KEYS)}")
    result = solve_build(build_request(design), jobs=default_jobs(), assess_picks=False)
    missing = [li.name for li in result.lights if li.pick is None]
    if missing:
        raise RequestError(f"{args.design}: the solver offers nothing for {', '.join(missing)}; "
                           f"run 'pulsepick solve {args.design}' for the reasons")
    panel = panel_part(design)
    grid = night_cmd.supply_grid(max(storage.v_rated_v, panel.voc_v))
    curves = [replace(load_curve(li.pick.design, grid), label=li.name) for li in result.lights]
    name = design.name or args.design
    night_load = combined_load_curve(curves, label=f"{name} ({len(curves)} lights)")
    top = result.lights[0].pick.design.supply_v
    iq = sum(float(chip_model(li.pick.design.chip).iq_typ_a) if not li.pick.design.chip.is_timer
             else 0.0 for li in result.lights[:1])
    held = result.gating.held_a if result.gating is not None else 0.0
    stop = parse_quantity(nargs.stop_at, "voltage", bare_ok=True) if nargs.stop_at else None
    return {"storage": storage, "panel": panel, "diode": get_diode(diode), "window": window,
            "night_load": night_load, "day_load": held + iq, "stop_at": stop,
            "night_info": {"given": "design file", "night_s": window.night_s,
                           "supply_v": top}}


__all__ = ["FILE_OPTIONS", "design_inputs"]
