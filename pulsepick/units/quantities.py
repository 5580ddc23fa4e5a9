"""Request quantities in: a number and its unit (``250 ms``, ``20/min``, ``5 mA``), and ranges
(``2.7V..1.8V``, ``-20..50 C``)."""

from __future__ import annotations

import math
from decimal import Decimal, localcontext

from pulsepick.errors import UnitError, ValueCodeError
from pulsepick.units.common import (
    _KIND_EXAMPLES,
    _KIND_PHRASE,
    _PER_RE,
    _QUANTITY_RE,
    ABSOLUTE_ZERO_C,
    QUANTITY_KINDS,
    QuantityKind,
    _kinds,
    _lookup_unit,
    _nonfinite_word,
    _normalise,
    _raise_mismatch,
)
from pulsepick.units.values import parse_value


def _check_kind(kind: str) -> None:
    if kind not in QUANTITY_KINDS:
        raise UnitError(f"unknown quantity kind {kind!r}; accepted: {', '.join(QUANTITY_KINDS)}")


def parse_quantity(text: str, kind: QuantityKind, *, bare_ok: bool = False,
                   allow_zero: bool = False) -> float:
    """Read a request quantity with its unit and return it in SI units (°C for temperature).

    Parameters
    ----------
    text : str
        A number and a unit: times ``3 s``, ``250 ms``, ``0.5 min``, ``2 h``; rates
        ``20/min``, ``20 per minute``, ``0.33 Hz``, ``3 per hour``; currents ``5 mA``,
        ``10 µA``; voltages ``2.7 V``, ``1800 mV``; illuminance ``3 lux``, ``3 lx``;
        luminous intensity ``120 mcd``, ``1.2 cd``; charge ``2 mC``; temperature
        ``-20 C``, ``-20°C``, ``50 degC``; resistances and capacitances as in
        :func:`parse_value`.
    kind : QuantityKind
        What is expected here. A quantity of another kind raises
        :class:`~pulsepick.errors.UnitError` naming both.
    bare_ok : bool
        Kept for callers; a bare voltage is always read as volts (the one rule:
        a voltage has only one base unit). Resistances and capacitances are always
        accepted bare (``4k7``); other kinds always need a unit.
    allow_zero : bool
        Accept zero. Temperatures accept zero and negative values always; other
        kinds never accept negative values.

    Returns
    -------
    float
        Seconds, hertz, amperes, volts, lux, candela, ohms, farads, coulombs, or
        degrees Celsius (temperatures are kept in °C, not converted to kelvin).
    """
    _check_kind(kind)
    if not isinstance(text, str):
        raise ValueCodeError(
            f"{_KIND_PHRASE[kind]} must be text such as {_KIND_EXAMPLES[kind]}; got {text!r}"
        )
    if kind in ("resistance", "capacitance"):
        return parse_value(text, "ohm" if kind == "resistance" else "F", allow_zero=allow_zero)
    s = _normalise(text)
    examples = _KIND_EXAMPLES[kind]
    if not s:
        raise ValueCodeError(f"empty {kind}; give {_KIND_PHRASE[kind]} such as {examples}")
    if _nonfinite_word(s):
        raise ValueCodeError(f"{text!r} is not a finite number; give e.g. {examples}")
    m = _QUANTITY_RE.fullmatch(s)
    if not m:
        raise ValueCodeError(
            f"cannot read {text!r} as {_KIND_PHRASE[kind]}; give a number and a unit, "
            f"e.g. {examples}"
        )
    number, unit = m["num"], m["unit"].strip()
    if not unit:
        if kind == "voltage":
            # one rule everywhere: a bare number is unambiguous only for a voltage (volts)
            factor = Decimal(1)
        else:
            raise UnitError(
                f"{text!r} has no unit; {_KIND_PHRASE[kind]} needs one, e.g. {examples}"
            )
    else:
        factor = _unit_factor(text, unit, kind)
    with localcontext() as ctx:
        ctx.prec = 40
        value = float(Decimal(number) * factor)
    if not math.isfinite(value):
        raise ValueCodeError(f"{text!r} is too large; give e.g. {examples}")
    if kind == "temperature":
        if value < ABSOLUTE_ZERO_C:
            raise ValueCodeError(
                f"{text!r} is below absolute zero ({ABSOLUTE_ZERO_C} °C); give e.g. {examples}"
            )
        return value
    if value < 0:
        raise ValueCodeError(f"negative {kind} {text!r}; give a positive value, e.g. {examples}")
    if value == 0 and not allow_zero:
        raise ValueCodeError(f"zero {kind} {text!r}; give a value above zero, e.g. {examples}")
    return value


def _unit_factor(text: str, unit: str, kind: str) -> Decimal:
    """Factor from the written unit to SI for ``kind``; UnitError when it means another kind."""
    per = _PER_RE.fullmatch(unit)
    if per:
        seconds = [f for k, f in _lookup_unit(per["time"]) if k == "time"]
        if not seconds:
            raise UnitError(
                f"unknown time unit {per['time']!r} in {text!r}; accepted: s, min, h "
                f"(e.g. {_KIND_EXAMPLES['rate']})"
            )
        if kind != "rate":
            _raise_mismatch(text, ["rate"], kind)
        with localcontext() as ctx:
            ctx.prec = 40
            return Decimal(1) / seconds[0]
    entries = _lookup_unit(unit)
    if not entries:
        raise UnitError(
            f"unknown unit {unit!r} in {text!r}; {_KIND_PHRASE[kind]} is expected, "
            f"e.g. {_KIND_EXAMPLES[kind]}"
        )
    for k, factor in entries:
        if k == kind:
            return factor
    _raise_mismatch(text, _kinds(entries), kind)
    raise AssertionError("unreachable")  # pragma: no cover


def parse_range(text: str, kind: QuantityKind) -> tuple[float, float]:
    """Read ``FROM..TO`` (``2.7V..1.8V``, ``-20..50 C``, ``1s..6s``) as two quantities.

    The order is kept as written (``2.7V..1.8V`` gives ``(2.7, 1.8)``: a falling
    voltage stays falling). When only one end carries a unit, the other end
    borrows it (``-20..50 C``); resistances and capacitances never borrow, since
    a bare value is already complete for them (``1..10k`` is 1 Ω to 10 kΩ).
    """
    _check_kind(kind)
    if not isinstance(text, str):
        raise ValueCodeError(f"a range must be text such as 1s..6s; got {text!r}")
    parts = _normalise(text).replace("\u2026", "..").split("..")
    example = f"FROM..TO, e.g. {_range_example(kind)}"
    if len(parts) != 2 or not all(p.strip() for p in parts):
        raise ValueCodeError(f"cannot read {text!r} as a range; write {example}")
    a, b = (p.strip() for p in parts)
    if kind not in ("resistance", "capacitance"):
        ua, ub = _unit_text(a), _unit_text(b)
        if ua == "" and ub:
            a = f"{a} {ub}"
        elif ub == "" and ua:
            b = f"{b} {ua}"
    return parse_quantity(a, kind), parse_quantity(b, kind)


def _unit_text(part: str) -> str | None:
    m = _QUANTITY_RE.fullmatch(part)
    return m["unit"].strip() if m else None


def _range_example(kind: str) -> str:
    return {
        "time": "1s..6s", "voltage": "2.7V..1.8V", "temperature": "-20..50 C",
        "resistance": "1k..10k", "capacitance": "1n..100n", "current": "1mA..5mA",
        "rate": "10/min..30/min", "illuminance": "1..10 lux", "intensity": "50..200 mcd",
        "charge": "1..5 mC",
    }[kind]
