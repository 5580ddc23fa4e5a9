"""Command-line options that describe a chip, its parts and a whole circuit.

Shared by ``check``, ``night``, ``bands`` and ``solve``: ``add_part_arguments`` adds
the chip and part options, ``add_circuit_arguments`` adds those plus the topology
and component values; ``parts_from_args`` / ``design_from_args`` turn the parsed
options into core objects, refusing bad input with one clear message.
"""

from __future__ import annotations

import argparse
import math

from pulsepick.circuits.base import (
    Topology,
    core_names,
    get_core,
    get_stage,
    stage_names,
    value_params,
)
from pulsepick.design import Design, load_curve
from pulsepick.engine.environment import CHIP_KEYS, ChipSpec, PartChoice
from pulsepick.errors import RequestError
from pulsepick.parts.capacitor import CAP_KIND_KEYS
from pulsepick.parts.diode import DIODE_KEYS
from pulsepick.parts.led import LED_KEYS, LedModel, custom_led, get_led
from pulsepick.units import check_component, parse_quantity, parse_value

#: Command-line option for each component value of the circuits (from the registry).
VALUE_OPTIONS = {name: p.flag for name, p in value_params().items()}

#: Accepted LED ideality factors: 1 < n < 2 for most diodes, up to about 5 in LED
#: models (photonica glossary, ref:ideality-factor-glossary; Light & Engineering 28-5, ref:light-eng-28-5), with margin.
LED_N_RANGE = (0.5, 10.0)

DEFAULT_TIMING_CAP = "film-pet"
DEFAULT_STAGE_CAP = "electrolytic"


def add_part_arguments(parser: argparse.ArgumentParser) -> None:
    """Chip and part options (no topology, no values)."""
    g = parser.add_argument_group("chip and parts")
    g.add_argument("--family", default=None, metavar="KEY",
                   help=f"chip: {', '.join(CHIP_KEYS)} (default hc; timer555 for the 555 core)")
    g.add_argument("--led", default="red", metavar="COLOUR",
                   help=f"LED colour: {', '.join(LED_KEYS)} (default red)")
    g.add_argument("--led-vf", metavar="V@I", help="custom LED forward voltage, e.g. 2.0V@20mA")
    g.add_argument("--led-n", type=float, metavar="N", help="custom LED ideality factor")
    g.add_argument("--led-rs", metavar="OHM", help="custom LED series resistance, e.g. 10")
    g.add_argument("--led-mcd", metavar="MCD@I", help="custom LED intensity, e.g. 120@20mA")
    g.add_argument("--chip", metavar="FILE.toml",
                   help="your measured chip (a profile from 'pulsepick calibrate --save')")
    g.add_argument("--vt-plus", metavar="V", help="measured VT+ of your chip at --supply")
    g.add_argument("--vt-minus", metavar="V", help="measured VT- of your chip at --supply")
    g.add_argument("--rout", metavar="OHM", help="measured gate output resistance")
    g.add_argument("--cross-current", metavar="A",
                   help="measured extra supply current of the oscillator gate (replaces the "
                        "estimate), e.g. 15uA")
    g.add_argument("--timing-cap", default=DEFAULT_TIMING_CAP, metavar="KIND",
                   help=f"timing capacitor kind: {', '.join(CAP_KIND_KEYS)} "
                        f"(default {DEFAULT_TIMING_CAP})")
    g.add_argument("--stage-cap", default=DEFAULT_STAGE_CAP, metavar="KIND",
                   help=f"flash/hold capacitor kind (default {DEFAULT_STAGE_CAP})")
    g.add_argument("--steer-diode", default="schottky", choices=DIODE_KEYS,
                   help="steering diode (default schottky)")
    g.add_argument("--reset-diode", default="si", choices=DIODE_KEYS,
                   help="pulse-stage reset diode (default si)")
    g.add_argument("--fade-diode", default="schottky", choices=DIODE_KEYS,
                   help="fade-stage charge diode (default schottky)")


def add_circuit_arguments(parser: argparse.ArgumentParser, supply_default: str = "3.0V") -> None:
    """Topology, values, supply, chip and parts."""
    g = parser.add_argument_group("circuit")
    core, stage = core_names()[0], stage_names()[0]
    g.add_argument("--core", default=core, metavar="NAME",
                   help=f"oscillator core: {', '.join(core_names())} (default {core})")
    g.add_argument("--stage", default=stage, metavar="NAME",
                   help=f"LED stage: {', '.join(stage_names())} (default {stage})")
    g.add_argument("--buffered", action="store_true",
                   help="drive the LED stage from a spare gate instead of the timing gate")
    g.add_argument("--steer", default="high", choices=("high", "low"),
                   help="schmitt-steered: the phase the diode branch speeds up (default high)")
    g.add_argument("--lit", default="high", choices=("high", "low"),
                   help="direct stage: LED lit while its driver is high (to ground) or low "
                        "(from the supply) (default high)")
    for name, opt in VALUE_OPTIONS.items():
        g.add_argument(opt, dest=f"value_{name}", metavar="VALUE",
                       help=_value_help(name))
    g.add_argument("--supply", default=supply_default, metavar="V",
                   help=f"supply voltage (default {supply_default})")
    add_part_arguments(parser)


def _value_help(name: str) -> str:
    p = value_params()[name]
    return p.help or p.role


def led_from_args(args: argparse.Namespace) -> LedModel:
    """The LED the circuit options describe: a colour (``--led``) or a custom LED.

    A custom LED needs ``--led-vf V@I``; ``--led-n``, ``--led-rs`` and ``--led-mcd`` refine
    it. Raises :class:`~pulsepick.errors.RequestError` for a refinement without ``--led-vf``
    or an unreadable value.
    """
    if args.led_vf is None:
        if any(getattr(args, k) is not None for k in ("led_n", "led_rs", "led_mcd")):
            raise RequestError("--led-n, --led-rs and --led-mcd describe a custom LED: "
                               "give its forward voltage too, e.g. --led-vf 2.0V@20mA")
        return get_led(args.led)
    vf, at = _parse_at(args.led_vf, "voltage", "--led-vf", "2.0V@20mA")
    kwargs = {}
    if args.led_n is not None:
        if not (math.isfinite(args.led_n) and LED_N_RANGE[0] <= args.led_n <= LED_N_RANGE[1]):
            raise RequestError(f"--led-n {args.led_n:g}: the ideality factor of an LED lies "
                               f"between {LED_N_RANGE[0]:g} and {LED_N_RANGE[1]:g}, e.g. 2")
        kwargs["n"] = args.led_n
    if args.led_rs is not None:
        kwargs["r_s"] = parse_value(args.led_rs, unit="ohm", allow_zero=True)
    if args.led_mcd is not None:
        text = args.led_mcd.strip()
        if "@" in text:
            mcd_text, at_text = text.split("@", 1)
            kwargs["mcd_at_a"] = parse_quantity(at_text, "current")
        else:
            mcd_text = text
        try:
            kwargs["mcd"] = float(mcd_text.lower().replace("mcd", "").strip())
        except ValueError as err:
            raise RequestError(f"--led-mcd {args.led_mcd!r}: expected millicandela at a "
                               "current, e.g. 120@20mA") from err
    return custom_led(vf, at, **kwargs)


def _parse_at(text: str, kind: str, option: str, example: str) -> tuple[float, float]:
    if "@" not in text:
        raise RequestError(f"{option} {text!r}: expected a value at a current, e.g. {example}")
    left, right = text.split("@", 1)
    return parse_quantity(left, kind), parse_quantity(right, "current")


def parts_from_args(args, supply_v: float, core: str | None = None
                    ) -> tuple[ChipSpec, PartChoice]:
    """The chip (with any measured values, taken at ``supply_v``) and the part choice.

    Without ``--family`` the chip is ``hc``, or ``timer555`` when ``core`` is the 555.
    """
    default = get_core(core).default_family if core in core_names() else \
        get_core(core_names()[0]).default_family
    family = (args.family or default).strip().lower()
    if getattr(args, "chip", None) and not args.family and not _timer_core(core):
        family = "hc"  # the profile names the family; this only passes the check below
    if family not in CHIP_KEYS:
        raise RequestError(f"unknown --family {args.family!r}; accepted: {', '.join(CHIP_KEYS)}")
    for opt, kind in (("timing_cap", args.timing_cap), ("stage_cap", args.stage_cap)):
        if kind not in CAP_KIND_KEYS:
            raise RequestError(f"unknown --{opt.replace('_', '-')} {kind!r}; accepted: "
                               f"{', '.join(CAP_KIND_KEYS)}")
    vt_plus = parse_quantity(args.vt_plus, "voltage", bare_ok=True) if args.vt_plus else None
    vt_minus = parse_quantity(args.vt_minus, "voltage", bare_ok=True) if args.vt_minus else None
    if vt_plus is not None and vt_minus is not None and vt_minus >= vt_plus:
        raise RequestError(f"--vt-minus {vt_minus:g} V must be below --vt-plus {vt_plus:g} V")
    for name, val in (("--vt-plus", vt_plus), ("--vt-minus", vt_minus)):
        if val is not None and val >= supply_v:
            raise RequestError(f"{name} {val:g} V must be below the supply {supply_v:g} V")
    rout = (check_component(parse_value(args.rout, unit="ohm"), "ohm", "--rout")
            if args.rout else None)
    cross = parse_quantity(args.cross_current, "current", allow_zero=True) \
        if args.cross_current else None
    if getattr(args, "chip", None):
        chip = chip_from_profile(args.chip, args.family, core, rout=rout, cross=cross,
                                 thresholds_given=bool(vt_plus or vt_minus))
    else:
        chip = ChipSpec(family=family, vt_plus_v=vt_plus, vt_minus_v=vt_minus, rout_ohm=rout,
                        cross_current_a=cross,
                        measured_at_v=supply_v if (vt_plus or vt_minus or rout) else None)
    shape = getattr(args, "chip_spread", None)
    if shape is not None:
        from dataclasses import replace

        from pulsepick.commands.spread_option import chip_spread_choice

        chip = replace(chip, spread=chip_spread_choice(shape))
    parts = PartChoice(led=led_from_args(args), timing_cap=args.timing_cap,
                       stage_cap=args.stage_cap, steer_diode=args.steer_diode,
                       reset_diode=args.reset_diode, fade_diode=args.fade_diode)
    return chip, parts


def _timer_core(core: str | None) -> bool:
    """True for a registered core that runs on a timer chip rather than a Schmitt gate."""
    return core in core_names() and get_core(core).chip_kind == "timer"


def chip_from_profile(path: str, family: str | None = None, core: str | None = None, *,
                      rout: float | None = None, cross: float | None = None,
                      thresholds_given: bool = False) -> ChipSpec:
    """The chip of a profile file (``--chip``); a measured ``cross`` replaces its current.

    The thresholds follow the family's published shape at other supplies. Refuses a
    profile beside ``--vt-plus``/``--vt-minus``, another ``--family`` or a 555 core.
    """
    from pulsepick.parts.chipprofile import read_profile

    if thresholds_given:
        raise RequestError("--chip already gives the thresholds; leave out --vt-plus and "
                           "--vt-minus, or leave out --chip")
    profile = read_profile(path)
    if family and family.strip().lower() != profile.family:
        raise RequestError(f"--chip {path} holds a {profile.family} chip but --family is "
                           f"{family!r}; leave out --family or give the matching profile")
    if _timer_core(core):
        raise RequestError(f"--chip {path} describes a Schmitt chip; the {core} core uses "
                           "its own timer chip (leave out --chip)")
    current = cross if cross is not None else profile.supply_current_a
    return ChipSpec(family=profile.family, vt_plus_v=profile.vt_plus_v,
                    vt_minus_v=profile.vt_minus_v, rout_ohm=rout, cross_current_a=current,
                    measured_at_v=profile.supply_v, follows_family=True)


def profile_overrides(path: str, family: str | None, overrides: dict) -> tuple[str, dict]:
    """The solver's family and measured-chip figures from a profile file (``--chip``)."""
    if "vt_plus_v" in overrides or "vt_minus_v" in overrides:
        chip_from_profile(path, thresholds_given=True)
    chip = chip_from_profile(path, family)
    out = dict(overrides)
    out.update(vt_plus_v=chip.vt_plus_v, vt_minus_v=chip.vt_minus_v,
               measured_at_v=chip.measured_at_v, follows_family=True)
    if chip.cross_current_a is not None and "cross_current_a" not in out:
        out["cross_current_a"] = chip.cross_current_a
    return chip.family, out


def solver_chip(args) -> tuple[str | None, dict]:
    """``(family, chip_overrides)`` for a solver request: ``--chip`` when given."""
    if getattr(args, "chip", None):
        return profile_overrides(args.chip, args.family, {})
    return args.family, {}


def family_from_profile(path: str, family: str | None = None):
    """The logic family of a profile file with the measured chip's thresholds."""
    from pulsepick.parts.chipprofile import measured_family
    from pulsepick.parts.logic import get_family

    chip = chip_from_profile(path, family)
    return measured_family(get_family(chip.family), chip.measured_at_v, chip.vt_plus_v,
                           chip.vt_minus_v)


def supply_from_args(args) -> float:
    return parse_quantity(args.supply, "voltage", bare_ok=True)


def design_from_args(args) -> Design:
    """The circuit described by the options; every problem is reported at once."""
    core_name, stage_name = args.core.strip().lower(), args.stage.strip().lower()
    problems = []
    if core_name not in core_names():
        problems.append(f"unknown --core {args.core!r}; accepted: {', '.join(core_names())}")
    if stage_name not in stage_names():
        problems.append(f"unknown --stage {args.stage!r}; accepted: {', '.join(stage_names())}")
    if problems:
        raise RequestError("; ".join(problems))
    topo = Topology(core=core_name, stage=stage_name, buffered=args.buffered, lit=args.lit,
                    steer=args.steer)
    wanted = {p.name: p for p in get_core(core_name).params + get_stage(stage_name).params}
    values = {}
    for name, opt in VALUE_OPTIONS.items():
        text = getattr(args, f"value_{name}")
        if text is None:
            if name in wanted and not wanted[name].optional:
                problems.append(f"{opt} ({wanted[name].role}) is needed by "
                                f"{core_name} + {stage_name}, e.g. {opt} "
                                f"{wanted[name].example}")
            continue
        if name not in wanted:
            problems.append(f"{opt} is not used by {core_name} + {stage_name} "
                            f"(it takes {', '.join(VALUE_OPTIONS[k] for k in wanted)})")
            continue
        unit = "ohm" if wanted[name].kind == "R" else "F"
        values[name] = check_component(
            parse_value(text, unit=unit, allow_zero=wanted[name].optional), unit, opt,
            allow_zero=wanted[name].optional)
    if problems:
        raise RequestError("; ".join(problems))
    supply = supply_from_args(args)
    chip, parts = parts_from_args(args, supply, core=core_name)
    return Design(topo=topo, values=values, chip=chip, parts=parts, supply_v=supply)


def load_curve_from_args(args, supplies):
    """The circuit's load curve over ``supplies`` (for the night simulation)."""
    return load_curve(design_from_args(args), supplies)
