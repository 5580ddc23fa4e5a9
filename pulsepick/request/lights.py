"""Several lights in one phrase or file: :func:`split_lights`, :class:`BuildRequest`,
:func:`make_build_request`.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

from pulsepick.errors import RequestError
from pulsepick.request.defaults import _quote
from pulsepick.request.options import make_request
from pulsepick.request.phrase import _NUM, parse_phrase
from pulsepick.request.stock import read_stock
from pulsepick.request.types import SolveRequest


#: Number words accepted before "lights" in a several-lights phrase.
_COUNT_WORDS = {"one": 1, "two": 2, "three": 3, "four": 4, "five": 5, "six": 6, "seven": 7,
                "eight": 8, "nine": 9, "ten": 10, "eleven": 11, "twelve": 12}
_LIGHTS_HEAD = re.compile(
    rf"^\s*(?P<n>\d+|{'|'.join(_COUNT_WORDS)})\s+(?:lights?|leds?|blinkers?|markers?|"
    r"fireflies|firefly)\b\s*[:,;-]?\s*", re.IGNORECASE)
_EACH = re.compile(r"\b(?:each|apiece|for\s+all|all)\b", re.IGNORECASE)
_BARE_TIME = re.compile(rf"^\s*{_NUM}\s*(?:ms|s|us|µs|sec|seconds?|min)\s*$", re.IGNORECASE)
#: Several-lights phrases that work, quoted in errors.
LIGHTS_EXAMPLE = "three lights: every 2.7 s, every 4.1 s, every 6.3 s, 60 ms each"


def split_lights(phrase: str) -> tuple[str, ...] | None:
    """The per-light phrases of a several-lights phrase; None for a single light.

    A several-lights phrase starts with a count (``three lights:``) or gives more than one
    period. Pieces are separated by commas or semicolons: a piece with a period starts a
    new light, a piece with ``each`` applies to every light (``60 ms each`` is the flash
    length), any other piece belongs to the light before it.

    Examples
    --------
    >>> split_lights("three lights: every 2.7 s, every 4.1 s, every 6.3 s, 60 ms each")
    ('every 2.7 s, for 60 ms', 'every 4.1 s, for 60 ms', 'every 6.3 s, for 60 ms')
    >>> split_lights("one flash every 3 s") is None
    True
    """
    if not isinstance(phrase, str) or not phrase.strip():
        return None
    head = _LIGHTS_HEAD.match(phrase)
    rest = phrase[head.end():] if head else phrase
    count = None
    if head:
        word = head["n"].lower()
        count = _COUNT_WORDS.get(word) or int(word)
    segments = [s.strip() for s in re.split(r"[,;]", rest) if s.strip()]
    lights: list[list[str]] = []
    shared: list[str] = []
    for seg in segments:
        if _EACH.search(seg):
            piece = _EACH.sub("", seg).strip()
            if _BARE_TIME.match(piece):
                piece = f"for {piece}"
            if piece:
                shared.append(piece)
            continue
        if _has_period(seg):
            lights.append([seg])
        elif lights:
            lights[-1].append(seg)
        else:
            shared.append(seg)
    if count is None and len(lights) < 2:
        return None
    if count is not None and count != len(lights):
        raise RequestError(
            f"{_quote(phrase)} says {count} light{'s' if count != 1 else ''} but gives "
            f"{len(lights)} period{'s' if len(lights) != 1 else ''}; give one period per "
            f"light, e.g. {_quote(LIGHTS_EXAMPLE)}")
    return tuple(", ".join(parts + shared) for parts in lights)


def _has_period(segment: str) -> bool:
    """Whether a phrase piece states a period (it parses with a period of its own)."""
    try:
        parse_phrase(segment)
    except RequestError as err:
        if "does not say how often" in str(err):
            return False
        return bool(re.search(r"\bevery\b|/\s*(?:s|min|h)\b|\bhz\b", segment, re.IGNORECASE))
    return True


def parse_fraction(text: str | float, option: str, example: str = "10%") -> float:
    """A fraction from ``10%`` or ``0.1`` (a number above 1 is taken as percent)."""
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        value = float(text)
    else:
        s = str(text).strip()
        pct = s.endswith("%")
        try:
            value = float(s.rstrip("%").strip())
        except ValueError:
            value = math.nan
        if pct:
            value /= 100.0
    if value > 1:
        value /= 100.0
    if not (math.isfinite(value) and 0 < value < 1):
        raise RequestError(f"{option} {text!r}: give a percentage above 0 and below 100, "
                           f"such as {example}")
    return value


@dataclass(frozen=True)
class LightRequest:
    """One light of a build: its name and its own solver request."""

    name: str
    request: SolveRequest


@dataclass(frozen=True)
class BuildRequest:
    """Several lights solved together on shared packages and one supply."""

    lights: tuple[LightRequest, ...]
    max_packages: int | None = None  # None: as many as needed
    dusk_detector: bool = True  # count a gate for the dusk detector
    lock_margin: float = 0.03  # fraction around a simple period ratio (see analysis.multi)
    spread_out: bool = False  # move the periods to keep pairs clear of simple ratios
    period_tolerance: float = 0.10  # fraction the spread-out search may move a period
    name: str = ""  # the build's name
    source: str = ""  # the phrase or the design file
    photoresistors: tuple[str | None, ...] = ()  # per light: photoresistor key, or None
    max_lock_share: float | None = None  # fraction; None: a lock share is a warning only
    night_lux: float | None = None  # lux at night for photoresistor lights; None: default

    def __post_init__(self) -> None:
        problems = []
        if self.night_lux is not None and not (math.isfinite(self.night_lux)
                                               and self.night_lux > 0):
            problems.append(f"night light level {self.night_lux!r} lux: give a level above "
                            "0 lux, such as 0.1")
        if self.max_lock_share is not None and not 0 <= self.max_lock_share < 1:
            problems.append(f"--max-lock-share {self.max_lock_share!r}: give a percentage "
                            "from 0 to below 100, such as 5%")
        if not self.lights:
            problems.append("a build needs at least one light")
        if self.max_packages is not None and (not isinstance(self.max_packages, int)
                                              or self.max_packages < 1):
            problems.append(f"--max-packages {self.max_packages!r}: give a whole number of at "
                            "least 1")
        if not 0 < self.lock_margin < 0.5:
            problems.append(f"lock margin {self.lock_margin!r}: give a fraction between 0 and "
                            "0.5")
        if not 0 < self.period_tolerance < 1:
            problems.append(f"period tolerance {self.period_tolerance!r}: give a fraction "
                            "between 0 and 1")
        names = [li.name for li in self.lights]
        if len(set(names)) != len(names):
            problems.append("two lights share a name; give each light its own")
        if problems:
            raise RequestError("; ".join(problems))

    def describe(self) -> str:
        return self.name or self.source or f"{len(self.lights)} lights"


def make_build_request(phrases: tuple[str, ...] | list[str], *, names=None,
                       per_light: list[dict[str, Any]] | None = None,
                       max_packages: int | None = None, dusk_detector: bool = True,
                       lock_margin: str | float | None = None, spread_out: bool = False,
                       period_tolerance: str | float | None = None, name: str = "",
                       source: str = "", photoresistors: tuple = (),
                       max_lock_share: str | float | None = None,
                       night_lux: float | None = None,
                       **context: Any) -> BuildRequest:
    """A :class:`BuildRequest`: one :func:`make_request` per light phrase, same context.

    ``per_light`` holds per-light overrides of the context (e.g. another ``led``). Every
    light's problems are collected and reported together, each naming its light.
    """
    from pulsepick.analysis.multi import DEFAULT_LOCK_MARGIN, DEFAULT_PERIOD_TOLERANCE
    from pulsepick.limits import MAX_LIGHTS

    if len(phrases) > MAX_LIGHTS:
        raise RequestError(f"{len(phrases)} lights: a build takes 1 to {MAX_LIGHTS} lights; "
                           "split it into several builds")
    problems = []
    lights = []
    names = list(names) if names is not None else [f"light {i}" for i in
                                                   range(1, len(phrases) + 1)]
    stock = context.get("stock")
    if isinstance(stock, str):
        try:
            context = {**context, "stock": read_stock(stock)}
        except RequestError as err:
            problems.append(str(err))
            context = {**context, "stock": None}
    for i, text in enumerate(phrases):
        extra = per_light[i] if per_light else {}
        try:
            req = make_request(text, **{**context, **extra})
        except RequestError as err:
            problems.append(f"{names[i]}: {err}")
            continue
        lights.append(LightRequest(names[i], req))
    margin = DEFAULT_LOCK_MARGIN
    tol = DEFAULT_PERIOD_TOLERANCE
    try:
        if lock_margin is not None:
            margin = parse_fraction(lock_margin, "--lock-margin", "3%")
    except RequestError as err:
        problems.append(str(err))
    try:
        if period_tolerance is not None:
            tol = parse_fraction(period_tolerance, "--period-tolerance", "10%")
    except RequestError as err:
        problems.append(str(err))
    limit = None
    try:
        if max_lock_share is not None:
            limit = (0.0 if str(max_lock_share).strip().rstrip("%").strip() in ("0", "0.0")
                     else parse_fraction(max_lock_share, "--max-lock-share", "5%"))
    except RequestError as err:
        problems.append(str(err))
    if problems:
        raise RequestError("; ".join(problems))
    return BuildRequest(lights=tuple(lights), max_packages=max_packages,
                        dusk_detector=dusk_detector, lock_margin=margin, spread_out=spread_out,
                        period_tolerance=tol, name=name, source=source,
                        photoresistors=tuple(photoresistors), max_lock_share=limit,
                        night_lux=night_lux)
