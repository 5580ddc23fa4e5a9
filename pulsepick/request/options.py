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
) -> SolveRequest:
    """Build a :class:`SolveRequest` from option text; None means the default.

    Every problem is collected and reported in one :class:`RequestError`.
    ``led`` is a colour key (``"red"``) or an ``LedModel`` (a user-described LED).
    """
    o = _Collected()
    targets = _read_targets(o, phrase, {"every": every, "flash": flash, "peak": peak,
                                        "effective": effective, "intensity": intensity})
    supply_v, supply_end = _read_supply(o, supply)
    families = _read_families(o, family)
    led_model = _read_led(o, led)
    names = _read_series(o, series, cap_series)
    timing_caps = _read_timing_caps(o, timing_cap)
    r_vals = _read_r_range(o, min_r, max_r)
    c_lo, c_hi = _read_cap_range(o, cap_range)
    stage_list, core_list = _read_circuits(o, stages, cores, families, buffered)
    stock_obj = _read_stock(o, stock)
    ints = _read_counts(o, top, builds, seed)
    o.choices["buffered"] = {None: "either", True: "yes", False: "no"}[buffered]
    if buffered is None:
        o.defaults.append("buffered")
    problems, defaults, choices, opt = o.problems, o.defaults, o.choices, o.opt

    if targets is not None and led_model is not None and targets.intensity_cd is not None \
            and led_model.mcd_per_a is None:
        problems.append(f"the {led_model.name} LED has no intensity figure in our tables, so "
                        "an intensity in mcd cannot be aimed at; give the brightness as a "
                        "current (\"5 mA peak\", \"as bright as a steady 1 mA\") or choose "
                        "an LED with intensity data (red, bright-red, green, white)")
    if prefer is not None and prefer not in PREFER_CHOICES:
        problems.append(f"--prefer {prefer!r}: accepted {', '.join(PREFER_CHOICES)}")
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
        prefer=opt("prefer", prefer, DEFAULT_PREFER), choices=choices,
        defaults=tuple(defaults),
    )


class _Collected:
    """What :func:`make_request` gathers while it reads the options: every problem, the
    options left to their default, and the text of each choice."""

    def __init__(self) -> None:
        self.problems: list[str] = []
        self.defaults: list[str] = []
        self.choices: dict[str, str] = {}

    def opt(self, name: str, value: Any, default: Any) -> Any:
        if value is None:
            self.defaults.append(name)
            value = default
        self.choices[name] = str(value)
        return value


def _read_targets(o: _Collected, phrase: str | None, flags: dict):
    try:
        return merge_targets(phrase, flags)
    except RequestError as err:
        o.problems.append(str(err))
    return None


def _read_supply(o: _Collected, supply: str | None) -> tuple[float | None, float | None]:
    from pulsepick.units import parse_quantity, parse_range

    problems = o.problems
    supply_text = o.opt("supply", supply, DEFAULT_SUPPLY)
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
    return supply_v, supply_end


def _read_families(o: _Collected, family: str | None) -> tuple[str, ...]:
    family_text = o.opt("family", family, DEFAULT_FAMILY).strip().lower()
    families: tuple[str, ...] = ()
    try:
        words = _split_list(family_text, FAMILY_CHOICES, "--family")
        families = tuple(f for f in FAMILY_CHOICES if f != "any" and
                         ("any" in words or f in words))
    except RequestError as err:
        o.problems.append(str(err))
    return families


def _read_led(o: _Collected, led: Any):
    from pulsepick.parts.led import LED_KEYS, get_led

    led_model = None
    led_value = o.opt("led", led, DEFAULT_LED)
    if isinstance(led_value, str):
        try:
            led_model = get_led(led_value.strip().lower())
        except PulsepickError:
            o.problems.append(f"--led {led_value!r} unknown; accepted: {', '.join(LED_KEYS)} "
                              "(or describe your own LED)")
    else:
        led_model = led_value
        o.choices["led"] = getattr(led_value, "key", "custom")
    return led_model


def _read_series(o: _Collected, series: str | None, cap_series: str | None) -> dict:
    from pulsepick.series import get_series

    names = {}
    for key, value, default in (("series", series, DEFAULT_R_SERIES),
                                ("cap_series", cap_series, DEFAULT_C_SERIES)):
        text = o.opt(key, value, default)
        try:
            names[key] = get_series(text).name
        except PulsepickError as err:
            o.problems.append(f"--{key.replace('_', '-')} {text!r}: {err}")
    return names


def _read_timing_caps(o: _Collected, timing_cap: str | None) -> tuple[str, ...]:
    tc_text = o.opt("timing_cap", timing_cap, DEFAULT_TIMING_CAP).strip().lower()
    timing_caps: tuple[str, ...] = ()
    if tc_text not in TIMING_CAP_CHOICES:
        o.problems.append(f"--timing-cap {tc_text!r} unknown; accepted: "
                          f"{', '.join(TIMING_CAP_CHOICES)}")
    else:
        timing_caps = TIMING_CAP_CHOICES[tc_text]
    return timing_caps


def _read_r_range(o: _Collected, min_r: str | None, max_r: str | None) -> dict:
    from pulsepick.units import check_component, parse_value

    r_vals = {}
    for key, value, default in (("min_r", min_r, DEFAULT_R_RANGE[0]),
                                ("max_r", max_r, DEFAULT_R_RANGE[1])):
        text = o.opt(key, value, default)
        try:
            r_vals[key] = check_component(parse_value(text, "ohm"), "ohm",
                                          f"--{key.replace('_', '-')}")
        except PulsepickError as err:
            o.problems.append(f"--{key.replace('_', '-')} {text!r}: {err}")
    return r_vals


def _read_cap_range(o: _Collected, cap_range: str | None) -> tuple[float | None, float | None]:
    from pulsepick.units import check_component, parse_range

    cr_text = o.opt("cap_range", cap_range, DEFAULT_CAP_RANGE)
    c_lo = c_hi = None
    try:
        c_lo, c_hi = parse_range(cr_text, "capacitance")
        for c_end in (c_lo, c_hi):
            check_component(c_end, "F", "--cap-range")
        if c_lo >= c_hi:
            o.problems.append(f"--cap-range {cr_text}: write the range from small to large, "
                              "e.g. 1n..1m")
    except PulsepickError as err:
        o.problems.append(f"--cap-range {cr_text!r}: {err}")
    return c_lo, c_hi


def _read_circuits(o: _Collected, stages: str | None, cores: str | None,
                   families: tuple[str, ...], buffered: bool | None
                   ) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """The stages and the cores searched, the cores kept to those the chips can run."""
    problems, opt = o.problems, o.opt
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
    return stage_list, core_list


def _read_stock(o: _Collected, stock: str | Stock | None) -> Stock | None:
    stock_obj = None
    if isinstance(stock, Stock):
        stock_obj = stock
        o.choices["stock"] = stock.source
    elif stock is not None:
        o.choices["stock"] = stock
        try:
            stock_obj = read_stock(stock)
        except RequestError as err:
            o.problems.append(str(err))
    else:
        o.defaults.append("stock")
    return stock_obj


def _read_counts(o: _Collected, top: int | None, builds: int | None,
                 seed: int | None) -> dict[str, int]:
    from pulsepick.limits import MAX_BUILDS, MAX_SEED, MAX_TOP, MIN_BUILDS, check_count

    ints = {}
    for key, value, default, low, high in (("top", top, DEFAULT_TOP, 1, MAX_TOP),
                                           ("builds", builds, DEFAULT_BUILDS, MIN_BUILDS,
                                            MAX_BUILDS),
                                           ("seed", seed, DEFAULT_SEED, 0, MAX_SEED)):
        v = o.opt(key, value, default)
        try:
            ints[key] = check_count(f"--{key}", v, low, high)
        except RequestError as err:
            o.problems.append(str(err))
            ints[key] = default
    return ints
