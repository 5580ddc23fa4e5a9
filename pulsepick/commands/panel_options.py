"""The panel and charging diode options shared by ``day``, ``dusk`` and ``night``."""

from __future__ import annotations

import argparse

from pulsepick.commands.night_options import quantity
from pulsepick.errors import RequestError
from pulsepick.parts.diode import DIODE_KEYS
from pulsepick.parts.panel import PanelModel, custom_panel, get_panel, panel_keys


def add_panel_arguments(parser: argparse.ArgumentParser) -> None:
    """The panel and diode options shared by ``day`` and ``dusk``."""
    group = parser.add_argument_group("panel (--panel KEY, or --panel-voc with --panel-isc)")
    group.add_argument("--panel", metavar="KEY",
                       help=f"a panel from the table: {', '.join(panel_keys())}")
    group.add_argument("--panel-voc", metavar="V", help="rated open-circuit voltage, such as 5V")
    group.add_argument("--panel-isc", metavar="I", help="rated short-circuit current, such as 60mA")
    group.add_argument("--panel-cells", metavar="N",
                       help="cells in series (default: guessed from about 0.6 V per cell)")
    group.add_argument("--panel-rsh", metavar="R",
                       help="the panel's measured shunt resistance, such as 400k (default: an "
                            "estimate, 5000 x Voc/Isc)")
    group.add_argument("--diode", choices=DIODE_KEYS, default="schottky",
                       help="series charging diode (default schottky)")


def read_panel(args: argparse.Namespace) -> PanelModel:
    """The panel from ``--panel`` or ``--panel-voc``/``--panel-isc``/``--panel-cells``, with
    a measured ``--panel-rsh`` in place of the estimated shunt resistance."""
    panel = _read_panel(args)
    text = getattr(args, "panel_rsh", None)
    if text is None:
        return panel
    from dataclasses import replace

    from pulsepick.errors import PulsepickError

    r_sh = quantity(text, "resistance", "--panel-rsh", "400k")
    try:
        return replace(panel, r_sh_ohm=r_sh,
                       source_notes=f"{panel.source_notes}; shunt resistance given")
    except PulsepickError as err:
        raise RequestError(f"--panel-rsh {text!r}: {err}") from err


def _read_panel(args: argparse.Namespace) -> PanelModel:
    rated = [args.panel_voc, args.panel_isc, args.panel_cells]
    accepted = (f"--panel KEY ({', '.join(panel_keys())}) or --panel-voc 5V --panel-isc 60mA "
                "[--panel-cells 8]")
    if args.panel is not None:
        if any(x is not None for x in rated):
            raise RequestError(f"give the panel one way: {accepted}")
        return get_panel(args.panel)
    if args.panel_voc is None and args.panel_isc is None:
        if args.panel_cells is not None:
            raise RequestError(f"--panel-cells needs --panel-voc and --panel-isc; use {accepted}")
        raise RequestError(f"no panel given; use {accepted}")
    if args.panel_voc is None or args.panel_isc is None:
        raise RequestError(f"--panel-voc and --panel-isc go together; use {accepted}")
    voc = quantity(args.panel_voc, "voltage", "--panel-voc", "5V")
    isc = quantity(args.panel_isc, "current", "--panel-isc", "60mA")
    cells = None
    if args.panel_cells is not None:
        try:
            cells = int(args.panel_cells)
        except ValueError:
            cells = 0
        if not 1 <= cells <= 100:
            raise RequestError(f"--panel-cells {args.panel_cells!r}: give a whole number "
                               "from 1 to 100, such as 8")
    return custom_panel(voc, isc, cells)
