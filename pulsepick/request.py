"""What the designer asks for: the wanted blink and the context of the build.

A blink is given as a short phrase or as values (the command's flags); both end in
the same :class:`BlinkTargets`. The context (supply, chip family, LED, series,
capacitor kinds, value ranges, which circuits, a parts drawer) completes a
:class:`SolveRequest`. Everything here is pure: strings in, frozen dataclasses
out, :class:`~pulsepick.errors.RequestError` for anything that cannot be read.

The blink grammar
-----------------
A phrase is a list of pieces separated by commas, semicolons or "and". Words may
be in any letter case; quantities keep their units' case (``5 mA``, not ``5 MA``).

===============================  ==============================================
piece                            meaning
===============================  ==============================================
``every 3 s``                    period (also ``every second``, ``every minute``)
``20 flashes a minute``          period from a count per second/minute/hour
``20/min``, ``0.5 Hz``           period from a rate
``for 40 ms``, ``40 ms long``    flash length (at or above half the peak)
``lasting 40 ms``, ``40 ms flash``
``5 mA peak``, ``peak 5 mA``     peak LED current
``5 mA`` (a current alone)       peak LED current
``as bright as a steady 1 mA``   effective current (looks as bright as a steady
``1 mA effective``               current of that size: effective intensity)
``200 mcd``, ``as bright as      effective intensity (the steady intensity that
a steady 200 mcd``               looks as bright as the flash)
===============================  ==============================================

Filler words ``one``, ``a``, ``single``, ``flash``, ``blink``, ``pulse``, ``with``
are skipped. Examples: ``"one flash every 3 s"``, ``"flash every 2.5 s for 40 ms,
5 mA peak"``, ``"20 flashes a minute, 0.1 s long, as bright as a steady 1 mA"``,
``"every 4 s, 200 mcd"``.

Effective intensity follows the Schmidt-Clausen form with a = 0.2 s for night
observation (ref:ies-effective-intensity, ref:gigahertz-pulse), as in :func:`pulsepick.circuits.base.effective_current`.

The parts drawer (``--stock FILE.csv``)
---------------------------------------
A CSV file; lines starting with ``#`` are comments. The first other line is a header
naming the columns, in any order: ``kind`` and ``value`` are required, ``qty`` and
``dielectric`` optional. ``kind`` is ``R``/``resistor`` or ``C``/``capacitor``;
``value`` is a component value (``4k7``, ``1M``, ``100n``, ``10uF``); ``qty`` a whole
number (empty: plenty; 0: none in the drawer); ``dielectric`` a capacitor kind
(``film``, ``film-pet``, ``film-pp``, ``c0g``, ``x7r``, ``x5r``, ``y5v``,
``electrolytic``, ``tantalum``; empty: any kind ``--timing-cap`` allows)::

    # the community garden's parts drawer
    kind,value,qty,dielectric
    R,1M,4
    R,4k7,10
    C,2u2,2,film
    C,100u,3,electrolytic
"""

from __future__ import annotations

import csv
import io
import math
import re
from dataclasses import dataclass, field
from typing import Any

from pulsepick.circuits.base import core_fits_chip, core_names, get_core, stage_names
from pulsepick.errors import PulsepickError, RequestError
from pulsepick.parts.timer import TIMER_KEYS

#: Phrases that work, quoted in every error about an unreadable phrase.
PHRASE_EXAMPLES = (
    "one flash every 3 s",
    "flash every 2.5 s for 40 ms, 5 mA peak",
    "20 flashes a minute, 0.1 s long, as bright as a steady 1 mA",
    "every 4 s, 200 mcd",
)

# --- defaults (all shown in the output as assumptions) ---------------------------------------
DEFAULT_SUPPLY = "3.0V"  # common practice: two cells or a charged supercap near 3 V
#: Common practice: the 74HC14 is the usual Schmitt inverter and the CMOS 555 the usual
#: timer for a low-power flasher (common practice).
DEFAULT_FAMILY = "hc,timer555"
DEFAULT_LED = "red"  # lowest forward voltage in our table: lights to the end of a night
DEFAULT_R_SERIES = "E24"  # common practice: 5 % resistors are the everyday kind
DEFAULT_C_SERIES = "E12"  # common practice: film and ceramic capacitors come in E12
DEFAULT_TIMING_CAP = "any"
DEFAULT_R_RANGE = ("1k", "10M")  # common practice; above 10 Mohm leakage and dirt take over
DEFAULT_CAP_RANGE = "1n..1m"
DEFAULT_TOP = 5
#: How much the ranking weighs a part's size and cost class against its figures:
#: "figures" not at all, "balanced" a tie-breaker, "compact" strongly.
PREFER_CHOICES = ("figures", "balanced", "compact")
DEFAULT_PREFER = "balanced"
DEFAULT_BUILDS = 2000
DEFAULT_SEED = 0
#: Flash length assumed when the request states none, s. Design choice (estimate): a
#: short flash that still reads as a flash; short flashes save energy (common practice).
ASSUMED_FLASH_S = 0.05
#: When the request states no flash and the assumed one would take more than this share
#: of the period, the flash aimed at is this share of the period instead. Design choice
#: (estimate): a quarter of the period still reads as a flash rather than a light that
#: goes off now and then.
ASSUMED_FLASH_SHARE = 0.25
#: Peak LED current assumed when the request states no brightness, A. Estimate: a few
#: milliamperes are plainly visible at night from a standard LED, and the 20 mA habit
#: wastes stored energy (common practice).
ASSUMED_PEAK_A = 5e-3

#: What --family accepts (a comma list): the logic families, the CMOS 555, or any.
FAMILY_CHOICES = ("hc", "ahc", "lvc", "4000n", "4000w", "timer555", "any")
#: What --timing-cap accepts, and the capacitor kinds each word stands for.
TIMING_CAP_CHOICES: dict[str, tuple[str, ...]] = {
    "film": ("film-pet", "film-pp"),
    "c0g": ("c0g",),
    "x7r": ("x7r",),
    "electrolytic": ("electrolytic",),
    "any": ("film-pet", "film-pp", "c0g", "x7r", "electrolytic"),
}
#: Dielectric words accepted in a stock file (a capacitor kind or "film").
STOCK_DIELECTRICS = ("film", "film-pet", "film-pp", "c0g", "x7r", "x5r", "y5v",
                     "electrolytic", "tantalum")
CORE_CHOICES = core_names()
STAGE_CHOICES = stage_names()


def _quote(text: str) -> str:
    return '"' + text.strip() + '"'


def _examples() -> str:
    return "; phrases that work: " + ", ".join(_quote(p) for p in PHRASE_EXAMPLES[:3])


# ============================================================================ blink targets

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
            raise RequestError(f"cannot read {_quote(rest)} in {_quote(phrase)}" + _examples())
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


# ============================================================================ the drawer

@dataclass(frozen=True)
class StockItem:
    """One line of the parts drawer."""

    kind: str  # "R" or "C"
    value: float  # ohm or farad
    qty: int | None  # pieces in the drawer; None: plenty
    dielectric: str | None  # capacitor kind key(s) word, or None: any allowed kind
    line: int  # line number in the file


@dataclass(frozen=True)
class Stock:
    """The parts the user has; the solver picks only from these."""

    items: tuple[StockItem, ...]
    source: str  # file name, for messages

    def resistors(self) -> tuple[float, ...]:
        """Distinct resistor values in the drawer (ohm), increasing."""
        return tuple(sorted({i.value for i in self.items if i.kind == "R" and i.qty != 0}))

    def capacitors(self, kinds: tuple[str, ...]) -> tuple[tuple[float, str], ...]:
        """Distinct ``(value F, kind key)`` pairs usable as any of ``kinds``."""
        out = set()
        for item in self.items:
            if item.kind != "C" or item.qty == 0:
                continue
            allowed = kinds if item.dielectric is None else tuple(
                k for k in _dielectric_kinds(item.dielectric) if k in kinds)
            for k in allowed:
                out.add((item.value, k))
        return tuple(sorted(out))

    def count(self, kind: str, value: float) -> int | None:
        """Pieces of ``value`` in the drawer (None: plenty; 0: none)."""
        total = 0
        seen = False
        for item in self.items:
            if item.kind == kind and math.isclose(item.value, value, rel_tol=1e-9):
                seen = True
                if item.qty is None:
                    return None
                total += item.qty
        return total if seen else 0


def _dielectric_kinds(word: str) -> tuple[str, ...]:
    """Kind keys a drawer's dielectric word stands for; a plain "film" is taken as
    polyester, the commoner and looser of the two (common practice)."""
    return ("film-pet",) if word == "film" else (word,)


_STOCK_FORMAT = ("columns kind,value[,qty][,dielectric] with kind R or C, a value such as "
                 "4k7 or 100n, a whole qty, and a dielectric such as film, c0g, x7r or "
                 "electrolytic")


#: Bad rows of a stock file reported in one message at most.
_MAX_PROBLEMS = 3


def parse_stock(text: str, source: str = "stock file") -> Stock:
    """Read a parts drawer (see the module docstring); every bad row is reported.

    Raises
    ------
    RequestError
        naming each row that could not be read (line number and text).
    """
    from pulsepick.errors import echo
    from pulsepick.infile import BOM
    from pulsepick.limits import MAX_STOCK_ROWS
    from pulsepick.units import check_component, parse_value

    lines = text.removeprefix(BOM).splitlines()
    body = [(n, line) for n, line in enumerate(lines, start=1)
            if line.strip() and not line.lstrip().startswith("#")]
    if not body:
        raise RequestError(f"{source} holds no header row; expected {_STOCK_FORMAT}")
    if len(body) > MAX_STOCK_ROWS + 1:
        raise RequestError(f"{source} has {len(body) - 1:,} rows; a stock file takes at most "
                           f"{MAX_STOCK_ROWS:,}")
    header_no, header = body[0]
    try:
        columns = [c.strip().lower() for c in next(csv.reader([header]))]
    except csv.Error:
        columns = []
    unknown = [c for c in columns if c not in ("kind", "value", "qty", "dielectric")]
    missing = [c for c in ("kind", "value") if c not in columns]
    if unknown or missing or len(set(columns)) != len(columns):
        what = []
        if missing:
            what.append(f"missing {', '.join(missing)}")
        if unknown:
            what.append(f"unknown {', '.join(unknown)}")
        if len(set(columns)) != len(columns):
            what.append("a column twice")
        raise RequestError(f"{source} line {header_no}: header {echo(header.strip())} has "
                           f"{'; '.join(what)}; expected {_STOCK_FORMAT}")
    items: list[StockItem] = []
    problems: list[str] = []
    for n, line in body[1:]:
        if len(problems) >= _MAX_PROBLEMS:
            problems.append("and maybe more")
            break
        where = f"line {n} {echo(line.strip(), 40)}"
        try:
            fields = next(csv.reader(io.StringIO(line)))
        except csv.Error as err:
            problems.append(f"{where}: not a CSV row ({err})")
            continue
        fields = [f.strip() for f in fields]
        if len(fields) > len(columns):
            problems.append(f"{where}: {len(fields)} fields for {len(columns)} columns")
            continue
        row = dict(zip(columns, fields + [""] * (len(columns) - len(fields)), strict=True))
        kind_word = row["kind"].lower()
        kind = {"r": "R", "resistor": "R", "c": "C", "capacitor": "C"}.get(kind_word)
        if kind is None:
            problems.append(f"{where}: kind {echo(row['kind'], 20)} is not R, resistor, C or "
                            "capacitor")
            continue
        try:
            unit = "ohm" if kind == "R" else "F"
            value = check_component(parse_value(row["value"], unit), unit, "value")
        except PulsepickError as err:
            problems.append(f"{where}: {err}")
            continue
        qty: int | None = None
        if row.get("qty"):
            try:
                qty = int(row["qty"])
                if qty < 0:
                    raise ValueError
            except ValueError:
                problems.append(f"{where}: qty {echo(row['qty'], 20)} is not a whole number "
                                ">= 0")
                continue
        diel = (row.get("dielectric") or "").lower() or None
        if diel is not None and kind == "R":
            problems.append(f"{where}: a resistor has no dielectric")
            continue
        if diel is not None and diel not in STOCK_DIELECTRICS:
            problems.append(f"{where}: dielectric {echo(diel, 20)} unknown; accepted: "
                            f"{', '.join(STOCK_DIELECTRICS)}")
            continue
        items.append(StockItem(kind, value, qty, diel, n))
    if problems:
        raise RequestError(f"{source}: " + "; ".join(problems) + f" (expected {_STOCK_FORMAT})")
    if not items:
        raise RequestError(f"{source} lists no parts; expected {_STOCK_FORMAT}")
    return Stock(items=tuple(items), source=source)


def read_stock(path: str) -> Stock:
    """Read a parts drawer file (see :func:`parse_stock`): a regular UTF-8 file (byte-order
    mark and CRLF accepted) of at most 10 MB."""
    from pulsepick.infile import read_text

    text = read_text(path, "stock file", f"a CSV file with {_STOCK_FORMAT}")
    return parse_stock(text, path)


# ============================================================================ the request

@dataclass(frozen=True)
class SolveRequest:
    """Everything the solver needs: the blink, the build's context and the options.

    Units: volts, ohms, farads, seconds, amperes, candela.
    """

    targets: BlinkTargets
    supply_v: float  # V, nominal (full) supply the circuit is designed at
    supply_end_v: float | None  # V, end-of-night supply (None: a steady supply)
    families: tuple[str, ...]  # chip family keys searched (CHIP_KEYS)
    led: Any  # LedModel (pulsepick.parts.led)
    r_series: str  # E-series of resistors
    c_series: str  # E-series of capacitors
    timing_caps: tuple[str, ...]  # capacitor kind keys allowed for the timing capacitor
    r_min_ohm: float  # ohm, smallest timing resistor
    r_max_ohm: float  # ohm, largest resistor
    c_min_f: float  # F, smallest capacitor
    c_max_f: float  # F, largest capacitor
    cores: tuple[str, ...]  # oscillator cores searched
    stages: tuple[str, ...]  # LED stages searched
    buffered: bool | None = None  # True: only buffered; False: only unbuffered; None: both
    stock: Stock | None = None  # only parts from this drawer
    top: int = DEFAULT_TOP  # candidates returned
    builds: int = DEFAULT_BUILDS  # Monte Carlo builds of the spread analysis
    seed: int = DEFAULT_SEED  # seed of the spread analysis
    chip_overrides: dict[str, float] = field(default_factory=dict)  # measured chip figures
    prefer: str = "balanced"  # weight of part size/cost in the ranking (PREFER_CHOICES)
    choices: dict[str, str] = field(default_factory=dict)  # option text as given, for output
    defaults: tuple[str, ...] = ()  # names of the options left at their defaults

    def __post_init__(self) -> None:
        problems = []
        if not (math.isfinite(self.supply_v) and self.supply_v > 0):
            problems.append("the supply must be above 0 V")
        if self.supply_end_v is not None and not 0 < self.supply_end_v <= self.supply_v:
            problems.append("a supply range runs from full down to the end of the night "
                            "(e.g. 2.7V..1.8V)")
        if not self.r_min_ohm < self.r_max_ohm:
            problems.append("--min-r must be below --max-r")
        if not self.c_min_f < self.c_max_f:
            problems.append("the capacitor range must run from small to large (e.g. 1n..1m)")
        if not self.families:
            problems.append("no chip family to search")
        if not self.cores or not self.stages:
            problems.append("no circuit to search (check --cores and --stages)")
        if self.top < 1 or self.builds < 1:
            problems.append("--top and --builds must be at least 1")
        if self.prefer not in PREFER_CHOICES:
            problems.append(f"--prefer {self.prefer!r}: accepted {', '.join(PREFER_CHOICES)}")
        if problems:
            raise RequestError("; ".join(problems))

    @property
    def flash_s(self) -> float:
        """The flash length aimed at (s): stated, or the assumed default, shortened to
        ``ASSUMED_FLASH_SHARE`` of the period when the default would not fit in it."""
        if self.targets.flash_s is not None:
            return self.targets.flash_s
        return min(ASSUMED_FLASH_S, ASSUMED_FLASH_SHARE * self.targets.period_s)

    @property
    def flash_shortened(self) -> bool:
        """True when no flash was stated and the usual assumption was too long for the
        period (see :attr:`flash_s`)."""
        return self.targets.flash_s is None and self.flash_s < ASSUMED_FLASH_S

    def aims(self) -> dict[str, tuple[float, bool]]:
        """Each figure aimed at: ``{figure key: (value, stated)}``; assumed ones are soft.

        Keys are figure names: ``period_s``, ``flash_s``, ``led_peak_a``, ``effective_a``,
        ``effective_mcd`` (the intensity target in mcd).
        """
        t = self.targets
        out = {"period_s": (t.period_s, True),
               "flash_s": (self.flash_s, t.flash_s is not None)}
        b = t.brightness
        if b is None:
            out["led_peak_a"] = (ASSUMED_PEAK_A, False)
        elif b[0] == "peak_a":
            out["led_peak_a"] = (b[1], True)
        elif b[0] == "effective_a":
            out["effective_a"] = (b[1], True)
        else:
            out["effective_mcd"] = (b[1] * 1e3, True)
        return out

    def describe(self) -> str:
        """One line: the blink as asked."""
        return self.targets.text

    def to_dict(self) -> dict[str, Any]:
        """Plain data for JSON and stamps."""
        t = self.targets
        return {
            "text": t.text,
            "period_s": t.period_s,
            "flash_s": t.flash_s,
            "peak_a": t.peak_a,
            "effective_a": t.effective_a,
            "intensity_cd": t.intensity_cd,
        }

    def assumptions(self) -> dict[str, Any]:
        """The context as used, every default included (for output)."""
        aims = self.aims()
        out: dict[str, Any] = {
            "supply_v": self.supply_v,
            "supply_end_v": self.supply_end_v,
            "families": list(self.families),
            "led": self.led.key,
            "led_name": self.led.name,
            "r_series": self.r_series,
            "c_series": self.c_series,
            "timing_caps": list(self.timing_caps),
            "r_min_ohm": self.r_min_ohm,
            "r_max_ohm": self.r_max_ohm,
            "c_min_f": self.c_min_f,
            "c_max_f": self.c_max_f,
            "cores": list(self.cores),
            "stages": list(self.stages),
            "buffered": {None: "either", True: "only buffered", False: "never"}[self.buffered],
            "stock": None if self.stock is None else self.stock.source,
            "top": self.top,
            "builds": self.builds,
            "seed": self.seed,
            "prefer": self.prefer,
            "aims": {k: {"value": v, "stated": s} for k, (v, s) in aims.items()},
            "defaults": list(self.defaults),
        }
        if self.chip_overrides:
            out["chip_measured"] = dict(self.chip_overrides)
        return out


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


# ============================================================================ several lights

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
