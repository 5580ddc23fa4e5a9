"""The design file: a whole build in one TOML file (read with Python's ``tomllib``).

A design holds the lights with their blinks, the context they share (chip family, supply,
LED, part preferences, a parts drawer), the storage, the panel, and the night (clock
times or a length) or the site (latitude and date). ``pulsepick solve design.toml`` solves
every light and writes one buy list; ``pulsepick night design.toml`` runs the night with
every light's load. Quantities are text with their units (``"2.7V"``, ``"470k"``,
``"12.5h"``); plain numbers are read in volts, ohms, farads, seconds as the key needs.

Example (a demo of our own)::

    name = "Three-firefly lantern"

    [build]                      # shared by every light; all keys optional
    family = "hc"                # chip families, as solve --family
    led = "green"
    spread_out = true            # keep the lights from pulling into step
    period_tolerance = "12%"

    [storage]                    # required by the night
    part = "1f-5v5"              # or capacitance = "0.47F" with rated = "2.7V"
    start = "4.8V"
    stop_at = "2.4V"

    [night]                      # or [site] with latitude and date
    dusk = "21:30"
    dawn = "05:15"

    [[light]]                    # one table per light
    name = "firefly 1"
    blink = "every 2.3 s for 150 ms"

Tables and their keys
---------------------
``name`` (text) at the top; ``[build]``: supply, family, led, series, cap_series,
timing_cap, min_r, max_r, cap_range, buffered, cores, stages, stock (a CSV path relative
to the design file), max_packages, dusk_detector, spread_out, period_tolerance,
lock_margin, max_lock_share, night_lux (lux at night for a photoresistor light;
default 0.01, a moonless night), top, builds, seed, chip (a chip profile from
``pulsepick calibrate --save``, relative to the design file); ``[[light]]``: name, blink
(required), led, family,
timing_cap, buffered, cores, stages, chip, photoresistor (a photoresistor key: it sets the
light's rate with the light, the blink's period being the one in the dark); ``[storage]``:
part or capacitance (one required),
rated, start, stop_at, storage_leak, leakage, charge_age, extra_load; ``[panel]``: part,
or voc with isc (and cells); diode; clamp; ``[night]``: dusk, dawn, length; ``[site]``:
latitude and date (required), longitude, utc_offset, turn_on, turbidity, tilt, azimuth,
altitude. Every key, its unit, default and an example: docs/design-file.md.

Without ``[build] supply`` the lights are solved for the storage's night: from its start
voltage down to ``stop_at`` (or steady at the start voltage without one).

Unknown tables and keys are refused with the allowed ones named; a TOML syntax error
gives tomllib's message with its line and column.
"""

from __future__ import annotations

import os
import tomllib
from dataclasses import dataclass, field
from typing import Any

from pulsepick.errors import RequestError, echo
from pulsepick.infile import BOM, read_text
from pulsepick.limits import MAX_LIGHTS, MAX_NESTING

#: Keys of each table and what they hold: "text" (a string, or a number read in the
#: key's unit), "int", "bool".
BUILD_KEYS: dict[str, str] = {
    "supply": "text", "family": "text", "led": "text", "series": "text",
    "cap_series": "text", "timing_cap": "text", "min_r": "text", "max_r": "text",
    "cap_range": "text", "buffered": "bool", "cores": "text", "stages": "text",
    "stock": "text", "max_packages": "int", "dusk_detector": "bool", "spread_out": "bool",
    "period_tolerance": "text", "lock_margin": "text", "max_lock_share": "text",
    "night_lux": "number", "top": "int", "builds": "int",
    "seed": "int", "chip": "text",
}
LIGHT_KEYS: dict[str, str] = {
    "name": "text", "blink": "text", "led": "text", "family": "text", "timing_cap": "text",
    "buffered": "bool", "cores": "text", "stages": "text", "chip": "text",
    "photoresistor": "text",
}
STORAGE_KEYS: dict[str, str] = {
    "part": "text", "capacitance": "text", "rated": "text", "start": "text",
    "stop_at": "text", "storage_leak": "text", "leakage": "text", "charge_age": "text",
    "extra_load": "text",
}
PANEL_KEYS: dict[str, str] = {"part": "text", "voc": "text", "isc": "text", "cells": "int",
                              "diode": "text"}
PANEL_KEYS["clamp"] = "text"  # a shunt clamp across the storage, such as "2.4V"
NIGHT_KEYS: dict[str, str] = {"dusk": "text", "dawn": "text", "length": "text"}
SITE_KEYS: dict[str, str] = {"latitude": "number", "date": "text", "longitude": "number",
                             "utc_offset": "number", "turn_on": "text"}
# The sky over the site and the way the panel faces (the day's light).
SITE_KEYS.update({"turbidity": "number", "tilt": "number", "azimuth": "number",
                  "altitude": "number"})
TOP_KEYS: dict[str, Any] = {"name": "text", "build": BUILD_KEYS, "light": LIGHT_KEYS,
                            "storage": STORAGE_KEYS, "panel": PANEL_KEYS, "night": NIGHT_KEYS,
                            "site": SITE_KEYS}
#: Light keys passed to the solver request under the same name.
_LIGHT_CONTEXT = ("led", "family", "timing_cap", "buffered", "cores", "stages")
_BUILD_CONTEXT = ("supply", "family", "led", "series", "cap_series", "timing_cap", "min_r",
                  "max_r", "cap_range", "buffered", "cores", "stages", "top", "builds", "seed")
BLINK_EXAMPLE = 'blink = "one flash every 3 s"'


@dataclass(frozen=True)
class LightSpec:
    """One ``[[light]]`` table."""

    name: str
    blink: str  # the blink phrase
    context: dict[str, Any] = field(default_factory=dict)  # per-light solver options
    photoresistor: str | None = None  # a photoresistor key: the light's rate follows light


@dataclass(frozen=True)
class DesignFile:
    """A design file as read (values as written; paths made absolute)."""

    path: str  # the file as given
    name: str  # the build's name ("" when the file gives none)
    build: dict[str, Any]  # [build]
    lights: tuple[LightSpec, ...]
    storage: dict[str, Any] | None  # [storage]
    panel: dict[str, Any] | None  # [panel]
    night: dict[str, Any] | None  # [night]
    site: dict[str, Any] | None  # [site]
    stock_path: str | None  # absolute path of the parts drawer, if any

    @property
    def folder(self) -> str:
        return os.path.dirname(os.path.abspath(self.path))


def is_design_file(text: str | None) -> bool:
    """Whether a command-line word names a design file (``*.toml``)."""
    return bool(text) and str(text).strip().lower().endswith(".toml")


def _where(table: str, index: int | None) -> str:
    return f"[[{table}]] {index}" if index is not None else f"[{table}]"


def _check_table(path: str, table: str, data: Any, allowed: dict[str, str],
                 index: int | None = None) -> dict[str, Any]:
    where = _where(table, index)
    if not isinstance(data, dict):
        raise RequestError(f"{path}: {where} must be a table of keys, such as [{table}]")
    unknown = [k for k in data if k not in allowed]
    if unknown:
        raise RequestError(
            f"{path}: unknown key{'s' if len(unknown) > 1 else ''} "
            f"{', '.join(echo(k) for k in unknown[:5])} in {where}; allowed: "
            f"{', '.join(allowed)}")
    for key, value in data.items():
        kind = allowed[key]
        ok = {
            "text": isinstance(value, (str, int, float)) and not isinstance(value, bool),
            "int": isinstance(value, int) and not isinstance(value, bool),
            "bool": isinstance(value, bool),
            "number": isinstance(value, (int, float)) and not isinstance(value, bool),
        }[kind]
        if not ok:
            want = {"text": "text such as \"2.7V\"", "int": "a whole number",
                    "bool": "true or false", "number": "a number"}[kind]
            raise RequestError(f"{path}: {where} {key} = {echo(value)}: give {want}")
    return {k: (str(v) if allowed[k] == "text" and not isinstance(v, str) else v)
            for k, v in data.items()}


def _top_word(key: str) -> str:
    """How a top-level key is written: ``name``, ``[build]``, ``[[light]]``."""
    if key == "name":
        return key
    return "[[light]]" if key == "light" else f"[{key}]"


def parse_design(text: str, path: str = "design.toml") -> DesignFile:
    """Read the text of a design file (see the module docstring).

    Raises
    ------
    RequestError
        one line: a TOML syntax error with its line and column, an unknown table or key
        with the allowed ones, a missing required key, or a value of the wrong type.
    """
    data = _read_toml(text, path)
    unknown = [k for k in data if k not in TOP_KEYS]
    if unknown:
        raise RequestError(
            f"{path}: unknown key{'s' if len(unknown) > 1 else ''} "
            f"{', '.join(echo(k) for k in unknown[:5])} at the top; allowed: "
            f"{', '.join(_top_word(k) for k in TOP_KEYS)}")
    name = data.get("name", "")
    if not isinstance(name, str):
        raise RequestError(f"{path}: name = {echo(name)}: give text, such as name = \"lantern\"")
    build = _check_table(path, "build", data.get("build", {}), BUILD_KEYS)
    lights = _parse_lights(path, data.get("light"))
    storage, panel, night, site = _parse_tables(path, data)
    stock_path = None
    if "stock" in build:
        folder = os.path.dirname(os.path.abspath(path))
        stock_path = os.path.normpath(os.path.join(folder, build["stock"]))
    return DesignFile(path=path, name=name, build=build, lights=tuple(lights),
                      storage=storage, panel=panel, night=night, site=site,
                      stock_path=stock_path)


def _read_toml(text: str, path: str) -> dict[str, Any]:
    """The parsed TOML, with a one-line error for bad syntax or too deep nesting."""
    text = text.removeprefix(BOM)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise RequestError(f"{path}: not valid TOML: {' '.join(str(err).split())}") from err
    except RecursionError:
        data = None
    if data is None or _depth(data) > MAX_NESTING:
        raise RequestError(f"{path}: tables or lists nested too deeply; a design file needs "
                           f"3 levels and {MAX_NESTING} are accepted")
    return data


def _parse_lights(path: str, raw_lights: Any) -> list[LightSpec]:
    """The [[light]] tables, checked, each with its solver context."""
    if raw_lights is None:
        raise RequestError(f"{path}: no [[light]] table; a design needs at least one, with "
                           f"a blink such as {BLINK_EXAMPLE}")
    if not isinstance(raw_lights, list):
        raise RequestError(f"{path}: 'light' must be written [[light]] (one table per light)")
    if len(raw_lights) > MAX_LIGHTS:
        raise RequestError(f"{path}: {len(raw_lights)} [[light]] tables; a build takes 1 to "
                           f"{MAX_LIGHTS} lights; split it into several design files")
    lights = []
    for i, raw in enumerate(raw_lights, start=1):
        spec = _check_table(path, "light", raw, LIGHT_KEYS, index=i)
        if "blink" not in spec:
            raise RequestError(f"{path}: [[light]] {i} has no 'blink' (required): the blink "
                               f"as a phrase, such as {BLINK_EXAMPLE}")
        context = {k: spec[k] for k in _LIGHT_CONTEXT if k in spec}
        if "chip" in spec:
            context.update(chip_context(path, spec["chip"], spec.get("family")))
        ldr = spec.get("photoresistor")
        if ldr is not None:
            from pulsepick.parts.photoresistor import photoresistor_keys

            ldr = str(ldr).strip().lower()
            if ldr not in photoresistor_keys():
                raise RequestError(f"{path}: [[light]] {i} photoresistor {ldr!r} unknown; "
                                   f"accepted: {', '.join(photoresistor_keys())}")
            # the photoresistor takes the place of a Schmitt core's timing resistor R1
            context.setdefault("cores", "schmitt,schmitt-steered")
        lights.append(LightSpec(name=spec.get("name") or f"light {i}", blink=spec["blink"],
                                context=context, photoresistor=ldr))
    return lights


def _parse_tables(path: str, data: dict[str, Any]):
    """The [storage], [panel], [night] and [site] tables (None when absent), checked."""
    storage = panel = night = site = None
    if "storage" in data:
        storage = _check_table(path, "storage", data["storage"], STORAGE_KEYS)
        if ("part" in storage) == ("capacitance" in storage):
            raise RequestError(f"{path}: [storage] needs one of 'part' (such as "
                               "part = \"1f-5v5\") or 'capacitance' (such as capacitance = "
                               "\"0.47F\"), not both or neither")
    if "panel" in data:
        panel = _check_table(path, "panel", data["panel"], PANEL_KEYS)
        if "part" not in panel and not ("voc" in panel and "isc" in panel):
            raise RequestError(f"{path}: [panel] needs 'part' (such as part = \"3v20ma\") or "
                               "'voc' with 'isc' (such as voc = \"3V\", isc = \"20mA\")")
    _check_start_under_clamp(path, storage, panel)
    if "night" in data:
        night = _check_table(path, "night", data["night"], NIGHT_KEYS)
    if "site" in data:
        site = _check_table(path, "site", data["site"], SITE_KEYS)
        for key in ("latitude", "date"):
            if key not in site:
                raise RequestError(f"{path}: [site] has no '{key}' (required): give latitude "
                                   "= 52.1 and date = \"2026-12-21\"")
    if night is not None and site is not None:
        raise RequestError(f"{path}: give the night one way: [night] (clock times or a "
                           "length) or [site] (latitude and date), not both")
    return storage, panel, night, site


def _depth(data: Any) -> int:
    """Nesting depth of parsed TOML (tables and lists), counted without recursion."""
    deepest = 0
    stack = [(data, 1)]
    while stack:
        item, depth = stack.pop()
        deepest = max(deepest, depth)
        if depth > MAX_NESTING:
            break
        children = item.values() if isinstance(item, dict) else item
        stack.extend((c, depth + 1) for c in children if isinstance(c, (dict, list)))
    return deepest


def chip_context(path: str, chip: str, family: str | None) -> dict[str, Any]:
    """Solver context of ``chip = "chip.toml"`` (a path relative to the design file):
    the profile's family and its measured thresholds."""
    from pulsepick.errors import PulsepickError
    from pulsepick.parts.chipprofile import read_profile

    where = os.path.normpath(os.path.join(os.path.dirname(os.path.abspath(path)), chip))
    try:
        profile = read_profile(where)
    except PulsepickError as err:
        raise RequestError(f"{path}: chip = {chip!r}: {err}") from err
    if family is not None and str(family).strip().lower() != profile.family:
        raise RequestError(f"{path}: chip = {chip!r} holds a {profile.family} chip but family "
                           f"is {family!r}; leave out family or give the matching profile")
    overrides: dict[str, Any] = {"vt_plus_v": profile.vt_plus_v,
                                 "vt_minus_v": profile.vt_minus_v,
                                 "measured_at_v": profile.supply_v, "follows_family": True}
    if profile.supply_current_a is not None:
        overrides["cross_current_a"] = profile.supply_current_a
    return {"family": profile.family, "chip_overrides": overrides}


def read_design(path: str) -> DesignFile:
    """Read a design file from disk (see :func:`parse_design`): a regular UTF-8 file
    (byte-order mark and CRLF accepted) of at most 10 MB."""
    text = read_text(path, "design file", "a TOML file such as examples/firefly-lantern.toml")
    return parse_design(text, path)


def _check_start_under_clamp(path: str, storage, panel) -> None:
    """A storage start above the panel's clamp cannot be: the clamp holds it there."""
    from pulsepick.units import parse_quantity

    if not storage or not panel or "start" not in storage or "clamp" not in panel:
        return
    start = parse_quantity(storage["start"], "voltage", bare_ok=True)
    clamp = parse_quantity(panel["clamp"], "voltage", bare_ok=True)
    if start > clamp + 1e-9:
        raise RequestError(
            f"{path}: [storage] start {storage['start']} is above the [panel] clamp "
            f"{panel['clamp']}, which holds the storage at {clamp:g} V; give a start at or "
            "below the clamp (or leave start out: the night then starts at the clamp)")


def storage_start(design: DesignFile) -> str | None:
    """The storage voltage at dusk as text: the file's ``start``, else the panel's clamp
    (the storage is held there by day), else the storage's rating."""
    s = design.storage
    if s is None:
        return None
    if s.get("start") is not None:
        return _volts(s["start"])
    if design.panel is not None and design.panel.get("clamp") is not None:
        return _volts(design.panel["clamp"])
    return f"{storage_part(design).v_rated_v:g}V"


def storage_supply(design: DesignFile) -> str | None:
    """The supply text for the solver from the storage: ``start..stop_at`` or ``start``."""
    s = design.storage
    if s is None:
        return None
    start = storage_start(design)
    stop = s.get("stop_at")
    return f"{_volts(start)}..{_volts(stop)}" if stop is not None else _volts(start)


def _volts(text: str) -> str:
    t = str(text).strip()
    return t if t[-1:].isalpha() else f"{t}V"


def build_request(design: DesignFile, **overrides: Any):
    """The :class:`~pulsepick.request.BuildRequest` of the design.

    ``overrides`` (command-line options given) replace the file's ``[build]`` values.
    """
    from pulsepick.request import make_build_request

    b = {**design.build, **{k: v for k, v in overrides.items() if v is not None}}
    context = {k: b[k] for k in _BUILD_CONTEXT if k in b}
    context.pop("chip", None)
    chip = overrides.get("chip") or design.build.get("chip")
    if chip:
        context.update(chip_context(design.path, chip, b.get("family")))
    if "supply" not in context:
        supply = storage_supply(design)
        if supply is not None:
            context["supply"] = supply
    if design.stock_path is not None and "stock" not in overrides:
        context["stock"] = design.stock_path
    elif "stock" in overrides and overrides["stock"] is not None:
        context["stock"] = overrides["stock"]
    return make_build_request(
        [li.blink for li in design.lights], names=[li.name for li in design.lights],
        per_light=[dict(li.context) for li in design.lights],
        max_packages=b.get("max_packages"), dusk_detector=b.get("dusk_detector", True),
        lock_margin=b.get("lock_margin"), spread_out=b.get("spread_out", False),
        period_tolerance=b.get("period_tolerance"), name=design.name, source=design.path,
        photoresistors=tuple(li.photoresistor for li in design.lights),
        max_lock_share=b.get("max_lock_share"), night_lux=b.get("night_lux"), **context)


def storage_part(design: DesignFile):
    """The storage part of ``[storage]`` (a table key or a capacitance)."""
    from pulsepick.errors import PulsepickError
    from pulsepick.parts.storage import STORAGE_KEYS as PARTS
    from pulsepick.parts.storage import custom_storage, get_storage
    from pulsepick.units import parse_quantity, parse_value

    s = design.storage
    if s is None:
        raise RequestError(f"{design.path}: no [storage] table; the night needs one, such as "
                           "[storage] with part = \"1f-5v5\" and start = \"4.8V\"")
    if "part" in s:
        key = s["part"].strip().lower()
        if key not in PARTS:
            raise RequestError(f"{design.path}: [storage] part {s['part']!r} unknown; "
                               f"accepted: {', '.join(PARTS)} (or capacitance = \"0.47F\")")
        if "rated" in s:
            raise RequestError(f"{design.path}: [storage] rated applies to a capacitance, "
                               "not to a part")
        return get_storage(key)
    try:
        c = parse_value(s["capacitance"], "F")
        rated = parse_quantity(s.get("rated", "2.7V"), "voltage", bare_ok=True)
    except PulsepickError as err:
        raise RequestError(f"{design.path}: [storage] {err}") from err
    return custom_storage(c, v_rated_v=rated)


def panel_part(design: DesignFile):
    """The panel of ``[panel]``, or None."""
    from pulsepick.errors import PulsepickError
    from pulsepick.parts.panel import custom_panel, get_panel, panel_keys
    from pulsepick.units import parse_quantity

    p = design.panel
    if p is None:
        return None
    if "part" in p:
        key = p["part"].strip().lower()
        if key not in panel_keys():
            raise RequestError(f"{design.path}: [panel] part {p['part']!r} unknown; accepted: "
                               f"{', '.join(panel_keys())} (or voc and isc)")
        return get_panel(key)
    try:
        return custom_panel(parse_quantity(p["voc"], "voltage", bare_ok=True),
                            parse_quantity(p["isc"], "current"), p.get("cells"))
    except PulsepickError as err:
        raise RequestError(f"{design.path}: [panel] {err}") from err


def night_options(design: DesignFile) -> dict[str, str | None]:
    """The night as the night command's option values (``dusk``, ``dawn``, ``night``,
    ``latitude``, ``longitude``, ``date``, ``utc_offset``, ``turn_on``)."""
    out: dict[str, str | None] = {}
    if design.night is not None:
        n = design.night
        out.update(dusk=n.get("dusk"), dawn=n.get("dawn"), night=n.get("length"))
    if design.site is not None:
        s = design.site
        out.update(latitude=str(s["latitude"]), date=s["date"],
                   longitude=None if "longitude" not in s else str(s["longitude"]),
                   utc_offset=None if "utc_offset" not in s else str(s["utc_offset"]),
                   turn_on=s.get("turn_on"))
    return out
