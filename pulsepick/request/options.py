"""From the command's options to a checked :class:`SolveRequest` (:func:`make_request`)."""

from __future__ import annotations

from typing import Any

from pulsepick.circuits.base import core_fits_chip, get_core
from pulsepick.errors import PulsepickError, RequestError
from pulsepick.parts.timer import TIMER_KEYS
from pulsepick.request.defaults import (
    CORE_CHOICES, DEFAULT_BUILDS, DEFAULT_C_SERIES, DEFAULT_CAP_RANGE, DEFAULT_FAMILY,
    DEFAULT_LED, DEFAULT_PREFER, DEFAULT_R_RANGE, DEFAULT_R_SERIES, DEFAULT_SEED, DEFAULT_SUPPLY,
    DEFAULT_TIMING_CAP, DEFAULT_TOP, FAMILY_CHOICES, PREFER_CHOICES, STAGE_CHOICES,
    TIMING_CAP_CHOICES,
)
from pulsepick.request.phrase import merge_targets
from pulsepick.request.stock import read_stock, Stock
from pulsepick.request.types import SolveRequest


def _split_list(text: str, allowed: tuple[str, ...], option: str) -> tuple[str, ...]:
    words = tuple(w.strip().lower() for w in text.split(",") if w.strip())
    bad = [w for w in words if w not in allowed]
    if bad or not words:
        raise RequestError(f"{option} {text!r}: unknown {', '.join(bad) or 'empty list'}; "
                           f"accepted: a comma list of {', '.join(allowed)}")
    return tuple(dict.fromkeys(words))


def make_request(
    phrase: str | None = None,
    *,
    every: str | None = None,
    flash: str | None = None,
    peak: str | None = None,
    effective: str | None = None,
    intensity: str | None = None,
    supply: str | None = None,
    family: str | None = None,
    led: Any = None,
    series: str | None = None,
    cap_series: str | None = None,
    timing_cap: str | None = None,
    max_r: str | None = None,
    min_r: str | None = None,
    cap_range: str | None = None,
    buffered: bool | None = None,
    stages: str | None = None,
    cores: str | None = None,
    stock: str | Stock | None = None,
    top: int | None = None,
    builds: int | None = None,
    seed: int | None = None,
    chip_overrides: dict[str, float] | None = None,
    prefer: str | None = None,
    chip_spread: str | None = None,
) -> SolveRequest:
    """Build a :class:`SolveRequest` from option text; None means the default.

    Every problem is collected and reported in one :class:`RequestError`.
    ``led`` is a colour key (``"red"``) or an ``LedModel`` (a user-described LED).
    """
    from pulsepick.parts.led import LED_KEYS, get_led
    from pulsepick.series import get_series
    from pulsepick.units import check_component, parse_quantity, parse_range, parse_value

    problems: list[str] = []
    defaults: list[str] = []
    choices: dict[str, str] = {}

    def opt(name: str, value: Any, default: Any) -> Any:
        if value is None:
            defaults.append(name)
            value = default
        choices[name] = str(value)
        return value

    targets = None
    try:
        targets = merge_targets(phrase, {"every": every, "flash": flash, "peak": peak,
                                         "effective": effective, "intensity": intensity})
    except RequestError as err:
        problems.append(str(err))

    supply_text = opt("supply", supply, DEFAULT_SUPPLY)
    supply_v = supply_end = None
    try:
        if ".." in supply_text or "\u2026" in supply_text:
            supply_v, supply_end = parse_range(supply_text, "voltage")
            if supply_end > supply_v:
                problems.append(f"--supply {supply_text}: write the range from full to the end "
                                "of the night, e.g. 2.7V..1.8V")
        else:
            supply_v = parse_quantity(supply_text, "voltage", bare_ok=True)
    except PulsepickError as err:
        problems.append(f"--supply {supply_text!r}: {err}")

    family_text = opt("family", family, DEFAULT_FAMILY).strip().lower()
    families: tuple[str, ...] = ()
    try:
        words = _split_list(family_text, FAMILY_CHOICES, "--family")
        families = tuple(f for f in FAMILY_CHOICES if f != "any" and
                         ("any" in words or f in words))
    except RequestError as err:
        problems.append(str(err))

    led_model = None
    led_value = opt("led", led, DEFAULT_LED)
    if isinstance(led_value, str):
        try:
            led_model = get_led(led_value.strip().lower())
        except PulsepickError:
            problems.append(f"--led {led_value!r} unknown; accepted: {', '.join(LED_KEYS)} "
                            "(or describe your own LED)")
    else:
        led_model = led_value
        choices["led"] = getattr(led_value, "key", "custom")

    names = {}
    for key, value, default in (("series", series, DEFAULT_R_SERIES),
                                ("cap_series", cap_series, DEFAULT_C_SERIES)):
        text = opt(key, value, default)
        try:
            names[key] = get_series(text).name
        except PulsepickError as err:
            problems.append(f"--{key.replace('_', '-')} {text!r}: {err}")

    tc_text = opt("timing_cap", timing_cap, DEFAULT_TIMING_CAP).strip().lower()
    timing_caps: tuple[str, ...] = ()
    if tc_text not in TIMING_CAP_CHOICES:
        problems.append(f"--timing-cap {tc_text!r} unknown; accepted: "
                        f"{', '.join(TIMING_CAP_CHOICES)}")
    else:
        timing_caps = TIMING_CAP_CHOICES[tc_text]

    r_vals = {}
    for key, value, default in (("min_r", min_r, DEFAULT_R_RANGE[0]),
                                ("max_r", max_r, DEFAULT_R_RANGE[1])):
        text = opt(key, value, default)
        try:
            r_vals[key] = check_component(parse_value(text, "ohm"), "ohm",
                                          f"--{key.replace('_', '-')}")
        except PulsepickError as err:
            problems.append(f"--{key.replace('_', '-')} {text!r}: {err}")

    cr_text = opt("cap_range", cap_range, DEFAULT_CAP_RANGE)
    c_lo = c_hi = None
    try:
        c_lo, c_hi = parse_range(cr_text, "capacitance")
        for c_end in (c_lo, c_hi):
            check_component(c_end, "F", "--cap-range")
        if c_lo >= c_hi:
            problems.append(f"--cap-range {cr_text}: write the range from small to large, "
                            "e.g. 1n..1m")
    except PulsepickError as err:
        problems.append(f"--cap-range {cr_text!r}: {err}")

    stage_list: tuple[str, ...] = ()
    core_list: tuple[str, ...] = ()
    try:
        stage_list = _split_list(opt("stages", stages, ",".join(STAGE_CHOICES)),
                                 STAGE_CHOICES, "--stages")
    except RequestError as err:
        problems.append(str(err))
    try:
        core_list = _split_list(opt("cores", cores, ",".join(CORE_CHOICES)),
                                CORE_CHOICES, "--cores")
    except RequestError as err:
        problems.append(str(err))
    if families and core_list:
        kept = tuple(c for c in core_list
                     if any(core_fits_chip(c, f in TIMER_KEYS) for f in families))
        if not kept:
            problems.append(f"--cores {','.join(core_list)} cannot run on --family "
                            f"{','.join(families)}: the timer555 core needs the timer555 "
                            "family and the Schmitt cores a logic family")
        core_list = kept
    if buffered and core_list:
        bufferable = tuple(c for c in core_list if get_core(c).bufferable)
        if not bufferable:
            problems.append("--buffered needs a Schmitt core (a 555 output drives the stage "
                            "itself)")
        core_list = bufferable

    stock_obj = None
    if isinstance(stock, Stock):
        stock_obj = stock
        choices["stock"] = stock.source
    elif stock is not None:
        choices["stock"] = stock
        try:
            stock_obj = read_stock(stock)
        except RequestError as err:
            problems.append(str(err))
    else:
        defaults.append("stock")

    ints = {}
    from pulsepick.limits import MAX_BUILDS, MAX_SEED, MAX_TOP, MIN_BUILDS, check_count

    for key, value, default, low, high in (("top", top, DEFAULT_TOP, 1, MAX_TOP),
                                           ("builds", builds, DEFAULT_BUILDS, MIN_BUILDS,
                                            MAX_BUILDS),
                                           ("seed", seed, DEFAULT_SEED, 0, MAX_SEED)):
        v = opt(key, value, default)
        try:
            ints[key] = check_count(f"--{key}", v, low, high)
        except RequestError as err:
            problems.append(str(err))
            ints[key] = default
    choices["buffered"] = {None: "either", True: "yes", False: "no"}[buffered]
    if buffered is None:
        defaults.append("buffered")

    if targets is not None and led_model is not None and targets.intensity_cd is not None \
            and led_model.mcd_per_a is None:
        problems.append(f"the {led_model.name} LED has no intensity figure in our tables, so "
                        "an intensity in mcd cannot be aimed at; give the brightness as a "
                        "current (\"5 mA peak\", \"as bright as a steady 1 mA\") or choose "
                        "an LED with intensity data (red, bright-red, green, white)")
    if prefer is not None and prefer not in PREFER_CHOICES:
        problems.append(f"--prefer {prefer!r}: accepted {', '.join(PREFER_CHOICES)}")
    from pulsepick.engine.environment import CHIP_SPREADS

    if chip_spread is not None and chip_spread not in CHIP_SPREADS:
        problems.append(f"--chip-spread {chip_spread!r}: accepted {', '.join(CHIP_SPREADS)}")
    if problems:
        raise RequestError("; ".join(problems))
    assert targets is not None and supply_v is not None and c_lo is not None
    return SolveRequest(
        targets=targets, supply_v=supply_v, supply_end_v=supply_end, families=families,
        led=led_model, r_series=names["series"], c_series=names["cap_series"],
        timing_caps=timing_caps, r_min_ohm=r_vals["min_r"], r_max_ohm=r_vals["max_r"],
        c_min_f=c_lo, c_max_f=c_hi, cores=core_list, stages=stage_list,
        buffered=buffered, stock=stock_obj, top=ints["top"], builds=ints["builds"],
        seed=ints["seed"], chip_overrides=dict(chip_overrides or {}),
        prefer=opt("prefer", prefer, DEFAULT_PREFER),
        chip_spread=opt("chip_spread", chip_spread, CHIP_SPREADS[0]), choices=choices,
        defaults=tuple(defaults),
    )


