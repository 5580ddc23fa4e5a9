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

            args.night = f"{design_night(design).night_s:g}s"
    return design


def design_load(args: argparse.Namespace, design, storage, v_top_v: float):
    """The night load of every light of the design (the solver's picks), as a curve."""
    from pulsepick.commands.night import _solved_load

    shim = argparse.Namespace(supply=None, family=None, design=args.design,
                              cross_current=None)
    load, _ = _solved_load(shim, design, storage, v_top_v, None)
    return load
