"""The blink grammar: a phrase or the command's flags to :class:`BlinkTargets`."""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

from pulsepick.errors import PulsepickError, RequestError
from pulsepick.request.defaults import _examples, _quote


@dataclass(frozen=True)
class BlinkTargets:
    """The wanted blink, SI units; None where the request does not say."""

    period_s: float  # s, time from one flash to the next
    flash_s: float | None = None  # s, flash length at or above half the peak
    peak_a: float | None = None  # A, peak LED current
    effective_a: float | None = None  # A, steady current that looks as bright
    intensity_cd: float | None = None  # cd, effective intensity
    text: str = ""  # the phrase or flags as given

    def __post_init__(self) -> None:
        problems = []
        for name in ("period_s", "flash_s", "peak_a", "effective_a", "intensity_cd"):
            value = getattr(self, name)
            if value is None and name != "period_s":
                continue
            if value is None or not (math.isfinite(value) and value > 0):
                problems.append(f"{name} must be a positive finite number (got {value!r})")
        bright = [n for n in ("peak_a", "effective_a", "intensity_cd")
                  if getattr(self, n) is not None]
        if len(bright) > 1:
            problems.append("give one brightness (a peak current, an effective current or an "
                            f"intensity), not {len(bright)}")
        if problems:
            raise RequestError("; ".join(problems))

    @property
    def brightness(self) -> tuple[str, float] | None:
        """The stated brightness as ``(field name, value)``, or None."""
        for name in ("peak_a", "effective_a", "intensity_cd"):
            value = getattr(self, name)
            if value is not None:
                return name, value
        return None


# Quantities: a number and a unit word (the unit keeps its case for parse_quantity).
_NUM = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_QTY = rf"{_NUM}\s*(?:[A-Za-zµμ]+(?:\s*/\s*[A-Za-z]+)?|/\s*[A-Za-z]+)"
_UNIT_WORDS = {
    "s": 1.0, "sec": 1.0, "second": 1.0, "seconds": 1.0,
    "min": 60.0, "minute": 60.0, "minutes": 60.0,
    "h": 3600.0, "hr": 3600.0, "hour": 3600.0, "hours": 3600.0,
}
_UNIT_ALT = "|".join(sorted(_UNIT_WORDS, key=len, reverse=True))
_FLASH_WORD = r"(?:flashes|flash|blinks|blink|pulses|pulse|times)"
_I = re.IGNORECASE

# (pattern, action). Tried in order at each position; the first match wins.
_PIECES: tuple[tuple[re.Pattern[str], str], ...] = (
    (re.compile(rf"(?P<n>{_NUM})\s+(?:{_FLASH_WORD}\s+)?(?:a|an|per|each|every)\s+"
                rf"(?P<unit>{_UNIT_ALT})\b", _I), "count"),
    (re.compile(rf"every\s+(?P<q>{_QTY})", _I), "period"),
    (re.compile(r"every\s+(?P<unit>second|minute|hour)\b", _I), "period_unit"),
    (re.compile(rf"(?:for|lasting)\s+(?P<q>{_QTY})", _I), "flash"),
    (re.compile(rf"(?P<q>{_QTY})\s+(?:long|flash|flashes|pulse|pulses)\b", _I), "flash"),
    (re.compile(rf"as\s+bright\s+as\s+(?:an?\s+)?(?:steady\s+)?(?P<q>{_QTY})(?:\s+steady)?",
                _I), "steady"),
    (re.compile(rf"(?P<q>{_QTY})\s+(?:at\s+)?peak\b", _I), "peak"),
    (re.compile(rf"peak\s+(?:of\s+|current\s+)?(?P<q>{_QTY})", _I), "peak"),
    (re.compile(rf"(?P<q>{_QTY})\s+(?:effective|steady)\b", _I), "steady"),
    (re.compile(rf"effective\s+(?P<q>{_QTY})", _I), "steady"),
    (re.compile(rf"(?P<q>{_QTY})", _I), "bare"),
    (re.compile(r"(?:one|a|an|single|flash(?:es|ing)?|blink(?:s|ing)?|pulses?|with|and|of|"
                r"led|light)\b", _I), "skip"),
    (re.compile(r"[,;.]|\s+"), "skip"),
)


def _read_quantity(text: str, kinds: tuple[str, ...]) -> tuple[str, float]:
    """Read ``text`` as the first of ``kinds`` it fits; ``(kind, SI value)``."""
    from pulsepick.units import parse_quantity

    first: Exception | None = None
    for kind in kinds:
        try:
            return kind, parse_quantity(text, kind)  # type: ignore[arg-type]
        except PulsepickError as err:
            first = first or err
    raise RequestError(f"cannot read {_quote(text)}: {first}") from first


def parse_phrase(phrase: str) -> BlinkTargets:
    """Read a blink phrase (see the module docstring) into :class:`BlinkTargets`.

    Raises
    ------
    RequestError
        quoting the part that could not be read, with phrases that work.

    Examples
    --------
    >>> parse_phrase("one flash every 3 s").period_s
    3.0
    >>> t = parse_phrase("flash every 2.5 s for 40 ms, 5 mA peak")
    >>> (t.period_s, t.flash_s, t.peak_a)
    (2.5, 0.04, 0.005)
    """
    if not isinstance(phrase, str) or not phrase.strip():
        raise RequestError("empty blink phrase" + _examples())
    found: dict[str, tuple[float, str]] = {}

    def put(name: str, value: float, piece: str) -> None:
        if name in found:
            raise RequestError(
                f"{_quote(piece)} gives the {_TARGET_WORDS[name]} a second time (first "
                f"{_quote(found[name][1])}); say it once" + _examples())
        found[name] = (value, piece)

    pos, text = 0, phrase
    while pos < len(text):
        found_piece = _match_piece(text, pos)
        if found_piece is None:
            rest = text[pos:].split(",")[0].split(";")[0].strip()
            where = "" if rest == phrase.strip() else f" in {_quote(phrase)}"
            raise RequestError(f"cannot read {_quote(rest)}{where}" + _examples())
        m, action = found_piece
        piece = m.group(0).strip()
        try:
            _apply(action, m, piece, put)
        except RequestError as err:
            if "phrases that work" in str(err):
                raise
            raise RequestError(f"{err} (in {_quote(phrase)})" + _examples()) from err
        pos = m.end()
    if "period_s" not in found:
        raise RequestError(f"{_quote(phrase)} does not say how often to flash; add e.g. "
                           f"\"every 3 s\" or \"20 flashes a minute\"" + _examples())
    return BlinkTargets(text=phrase.strip(), **{k: v for k, (v, _) in found.items()})


def _match_piece(text: str, pos: int) -> tuple[re.Match[str], str] | None:
    """The first piece pattern that reads something at ``pos``."""
    for pattern, action in _PIECES:
        m = pattern.match(text, pos)
        if m and m.end() > pos:
            return m, action
    return None


_TARGET_WORDS = {"period_s": "period", "flash_s": "flash length", "peak_a": "peak current",
                 "effective_a": "effective current", "intensity_cd": "intensity"}


def _apply(action: str, m: re.Match[str], piece: str, put: Any) -> None:
    if action == "skip":
        return
    if action == "count":
        n = float(m["n"])
        if not n > 0:
            raise RequestError(f"{_quote(piece)}: the count must be above 0")
        put("period_s", _UNIT_WORDS[m["unit"].lower()] / n, piece)
    elif action == "period_unit":
        put("period_s", _UNIT_WORDS[m["unit"].lower()], piece)
    elif action == "period":
        kind, value = _read_quantity(m["q"], ("time", "rate"))
        put("period_s", value if kind == "time" else 1.0 / value, piece)
    elif action == "flash":
        put("flash_s", _read_quantity(m["q"], ("time",))[1], piece)
    elif action == "peak":
        put("peak_a", _read_quantity(m["q"], ("current",))[1], piece)
    elif action == "steady":
        kind, value = _read_quantity(m["q"], ("current", "intensity"))
        put("effective_a" if kind == "current" else "intensity_cd", value, piece)
    elif action == "bare":
        kind, value = _read_quantity(m["q"], ("rate", "current", "intensity", "time"))
        if kind == "time":
            raise RequestError(
                f"{_quote(piece)} is a time on its own; write \"every {piece}\" for the "
                f"period or \"for {piece}\" for the flash length")
        if kind == "rate":
            put("period_s", 1.0 / value, piece)
        elif kind == "current":
            put("peak_a", value, piece)
        else:
            put("intensity_cd", value, piece)


def targets_from_flags(every: str | None = None, flash: str | None = None,
                       peak: str | None = None, effective: str | None = None,
                       intensity: str | None = None) -> BlinkTargets:
    """The blink from flag values (``--every 3s --flash 40ms --peak 5mA``).

    ``every`` accepts a time (``3s``) or a rate (``20/min``).
    """
    problems: list[str] = []
    values: dict[str, float] = {}
    spec = (("period_s", "--every", every, ("time", "rate")),
            ("flash_s", "--flash", flash, ("time",)),
            ("peak_a", "--peak", peak, ("current",)),
            ("effective_a", "--effective", effective, ("current",)),
            ("intensity_cd", "--intensity", intensity, ("intensity",)))
    words = []
    for name, flag, text, kinds in spec:
        if text is None:
            continue
        words.append(f"{flag} {text}")
        try:
            kind, value = _read_quantity(text, kinds)
        except RequestError as err:
            problems.append(f"{flag} {err}")
            continue
        values[name] = 1.0 / value if kind == "rate" else value
    if every is None:
        problems.append("--every is missing: say how often to flash, e.g. --every 3s")
    if problems:
        raise RequestError("; ".join(problems))
    return BlinkTargets(text=" ".join(words), **values)


def merge_targets(phrase: str | None, flags: dict[str, str | None]) -> BlinkTargets:
    """The blink from a phrase, flags, or both (a target may be given only once)."""
    given = {k: v for k, v in flags.items() if v is not None}
    if phrase is None:
        if not given:
            raise RequestError("no blink given; write a phrase or use --every" + _examples())
        return targets_from_flags(**given)
    base = parse_phrase(phrase)
    if not given:
        return base
    extra = targets_from_flags(every=given.get("every", "1s"),
                               **{k: v for k, v in given.items() if k != "every"})
    merged: dict[str, Any] = {}
    problems = []
    for name, flag in (("period_s", "every"), ("flash_s", "flash"), ("peak_a", "peak"),
                       ("effective_a", "effective"), ("intensity_cd", "intensity")):
        a = getattr(base, name)
        b = getattr(extra, name) if flag in given else None
        if a is not None and b is not None:
            problems.append(f"the {_TARGET_WORDS[name]} is in the phrase and in --{flag}; "
                            "give it once")
        merged[name] = a if a is not None else b
    if problems:
        raise RequestError("; ".join(problems))
    text = base.text + " " + " ".join(f"--{k} {v}" for k, v in given.items())
    return BlinkTargets(text=text, **merged)


