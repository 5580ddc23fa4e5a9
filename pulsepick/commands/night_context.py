"""What ``pulsepick night`` knows beyond the simulation: a design file's storage and night,
the Schmitt inputs' crossing current, the dusk detector's bias and the over-voltage advice
of a panel."""

from __future__ import annotations

import argparse
import math

import numpy as np

from pulsepick.commands.solved_load import one_circuit
from pulsepick.errors import RequestError

# the common single-cell rating (Maxwell BCAP0005, CAP-XX HY: ref:maxwell-bcap0005/ref:capxx-hy-10f)
CROSS_CURRENT_EXAMPLE = "--cross-current 15uA"  # option syntax only, not a figure
NO_DUSK_DETECTOR = ("no dusk detector load included (describe it with --dusk-bleed and the "
                    "panel options, or add its bias from pulsepick dusk with --extra-load)")


_FILE_STORAGE = {"start": "start", "stop_at": "stop_at", "storage_leak": "storage_leak"}
_FILE_NIGHT = ("dusk", "dawn", "night", "latitude", "longitude", "date", "utc_offset")


def _apply_design(args: argparse.Namespace):
    """Fill the storage and night options from a design file (options given win)."""
    if getattr(args, "design", None) is None:
        return None
    from pulsepick.designfile import is_design_file, night_options, read_design

    if not is_design_file(args.design):
        raise RequestError(f"{args.design!r} is not a design file; give a .toml design such "
                           "as examples/firefly-lantern.toml (the circuit options describe a "
                           "circuit by hand)")
    one_circuit(args, "a design file")
    design = read_design(args.design)
    s = design.storage
    if s is None:
        raise RequestError(f"{args.design}: no [storage] table; the night needs one, such as "
                           "[storage] with part = \"1f-5v5\" and start = \"4.8V\"")
    if args.storage is None:
        args.storage = s.get("part", s.get("capacitance"))
        if "rated" in s and args.rated is None:
            args.rated = s["rated"]
    for key, attr in _FILE_STORAGE.items():
        if key in s and getattr(args, attr) is None:
            setattr(args, attr, s[key])
    for key, attr in (("leakage", "leakage"), ("charge_age", "charge_age"),
                      ("extra_load", "extra_load")):
        if key in s:
            setattr(args, attr, s[key])
    # a night given by clock or length replaces the file's; a single site option given
    # (such as --date) replaces only that key
    if not any(getattr(args, k) is not None for k in ("dusk", "dawn", "night")):
        for key, value in night_options(design).items():
            if value is not None and getattr(args, key, None) is None:
                setattr(args, key, value)
    return design


def _clamp_advice(args, design, storage):
    """The over-voltage advice when the design file or the options name a panel."""
    from pulsepick.commands.design_night import design_clamp

    if design is not None and design.panel is not None:
        return design_clamp(design)
    if args.panel is None and args.panel_voc is None:
        return None
    from pulsepick.analysis.overvoltage import clamp_advice
    from pulsepick.commands.panel_options import read_panel
    from pulsepick.parts.diode import get_diode

    return clamp_advice(storage, read_panel(args), get_diode(args.diode))


def crossing_current(designs, v_start_v: float, load) -> dict | None:
    """The crossing current of each Schmitt input at the start voltage, or None.

    ``designs`` is a list of (light name or None, Design). The circuit's average supply
    current includes the current the Schmitt input draws while its input crosses the
    thresholds: an estimate (no published figure; square-law model of the input stage,
    as :func:`pulsepick.analysis.checks.assumptions` says) unless ``--cross-current``
    gives a measured one. Returns the JSON entry, with the assumption line as ``note``.
    """
    from pulsepick.units import format_eng

    schmitt = [(name, d) for name, d in designs if not d.chip.is_timer]
    if not schmitt:
        return None
    lights = [{"light": name,
               "crossing_current_a": float(np.ravel(d.fast(v_start_v).extras["crossing_a"])[0]),
               "estimate": d.chip.cross_current_a is None}
              for name, d in schmitt]
    estimate = any(li["estimate"] for li in lights)
    total = sum(li["crossing_current_a"] for li in lights)
    circuit = float(load.current_a(v_start_v)) if load is not None else math.nan
    if len(lights) == 1 or not estimate:  # a measured figure is one per gate
        what = ("the Schmitt input's crossing current" if len(lights) == 1
                else "each Schmitt input's crossing current")
        value = format_eng(lights[0]["crossing_current_a"], "A")
    else:
        what = "each Schmitt input's crossing current"
        value = ", ".join(f"{li['light']} {format_eng(li['crossing_current_a'], 'A')}"
                          for li in lights)
    share = (f"{total / circuit:.0%} of the circuit's {format_eng(circuit, 'A')} there; "
             if circuit > 0 else "")
    if estimate:
        note = (f"the circuit's supply current includes {what}, an ESTIMATE of {value} average "
                f"at the start voltage {v_start_v:.2f} V ({share}no published figure; "
                "square-law model of the input stage); give a measured figure per gate with "
                f"{CROSS_CURRENT_EXAMPLE}")
    else:
        note = (f"the circuit's supply current includes {what}, measured: {value} per gate "
                "(given with --cross-current)")
    return {"estimate": estimate, "at_v": v_start_v, "total_a": total, "lights": lights,
            "override": "--cross-current", "note": note}


def _dusk_bias(args, designs, v_start_v: float) -> dict | None:
    """The dusk detector's night-time bias when ``--dusk-bleed`` describes one.

    The panel is dark, so the bleed resistor and the sense input sit near 0 V; what the
    detector draws from the storage at night is the charging diode's reverse leakage
    through the bleed (``pulsepick.analysis.dusk``), typical figure.
    """
    if args.dusk_bleed is None:
        return None
    from pulsepick.analysis.dusk import dusk_levels
    from pulsepick.commands.panel_options import read_panel
    from pulsepick.parts.diode import get_diode
    from pulsepick.parts.logic import get_family
    from pulsepick.units import parse_value

    bleed = parse_value(args.dusk_bleed, unit="ohm")
    schmitt = [d for _, d in designs if not d.chip.is_timer]
    family = get_family(schmitt[0].chip.family if schmitt else "hc")
    result = dusk_levels(read_panel(args), bleed, family, v_start_v, get_diode(args.diode))
    return {"bleed_ohm": bleed, "bias_a": float(result.night_bias_typ_a),
            "bias_max_a": float(result.night_bias_max_a), "family": family.key}


def dusk_detector(design_file, extra_load_a: float, bias: dict | None = None) -> dict:
    """What the run includes of a dusk detector (the JSON entry; the assumption as ``note``).

    With ``--dusk-bleed`` (and the panel options) the detector's night-time bias is in
    the run; otherwise the note says it is not, and that ``--dusk-bleed`` or
    ``pulsepick dusk`` gives it. A design file's ``dusk_detector`` counts a gate for it.
    """
    from pulsepick.units import format_eng

    if bias is not None:
        note = (f"dusk detector: bleed {format_eng(bias['bleed_ohm'], 'Ω')} across the panel; "
                f"its night-time bias {format_eng(bias['bias_a'], 'A')} (typical; up to "
                f"{format_eng(bias['bias_max_a'], 'A')} with the diode's maximum leakage) is "
                "drawn all night")
        return {"in_design_file": bool(design_file is not None), "bias_included": True,
                "bias_a": bias["bias_a"], "top": None, "note": note}
    in_file = bool(design_file is not None and design_file.build.get("dusk_detector", True))
    note = NO_DUSK_DETECTOR
    if extra_load_a > 0:
        note = note.replace("included", f"included beyond the extra load of "
                                        f"{format_eng(extra_load_a, 'A')}", 1)
    top = None
    if in_file:
        top = ("counted as a gate in the design file; its night-time bias is not in this run "
               "(pulsepick dusk computes it; add it with --extra-load)")
    return {"in_design_file": in_file, "bias_included": False, "bias_a": None, "top": top,
            "note": note}
