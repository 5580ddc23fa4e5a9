"""Hints: a message of the core points at an option without naming how it is spelt.

The core knows what would help ("a buffer gate frees it", "widen the period
tolerance") but not how the user asks for it: a command-line option (``--buffered``,
``--period-tolerance 20%``) or a keyword of the Python API (``buffered=True``). A
message carries a :class:`Hint` as a marker inside its text (``str(hint)`` or
:func:`hint`), and a result may carry one in a field of its own (a lock remedy's
``option``). The shell words every marker in one place
(:func:`pulsepick.output.render.word_hints`) before it lays the text out, so the core
never spells an option and no marker reaches the user.

A marker is ``⟦option⟧``, ``⟦option=value⟧`` (the value as JSON) or
``⟦command option=value⟧``; nothing else in pulsepick writes those brackets.
"""

from __future__ import annotations

import json
import re
from collections.abc import Iterator
from dataclasses import dataclass

#: The brackets around a marker (mathematical white square brackets, U+27E6 and U+27E7).
OPEN, CLOSE = "\u27e6", "\u27e7"
_NAME = r"[a-z][a-z0-9_]*"
#: One marker: an optional command, the option, an optional ``=`` and JSON value.
MARKER = re.compile(f"{OPEN}(?:(?P<command>{_NAME}) )?(?P<option>{_NAME})"
                    f"(?:=(?P<value>[^{OPEN}{CLOSE}]*))?{CLOSE}")

HintValue = bool | int | float | str | None


@dataclass(frozen=True)
class Hint:
    """An option that would help, as the core knows it.

    ``option`` is its name as a keyword (``"buffered"``, ``"period_tolerance"``);
    ``value`` is ``True`` for a flag that is on, ``False`` for its "no" form, ``None``
    for the option's name alone, else the value as the user would give it (``"20%"``,
    ``3``, ``"E96"``); ``command`` names another command when the option is that
    command's (``"calibrate"``), empty for the one that ran.
    """

    option: str
    value: HintValue = None
    command: str = ""

    def __post_init__(self) -> None:
        if not re.fullmatch(_NAME, self.option):
            raise ValueError(f"hint option {self.option!r}: lower-case words joined by '_'")
        if self.command and not re.fullmatch(_NAME, self.command):
            raise ValueError(f"hint command {self.command!r}: one lower-case word")
        if not isinstance(self.value, (bool, int, float, str, type(None))):
            raise ValueError(f"hint value {self.value!r}: a bool, number or text")

    @property
    def is_flag(self) -> bool:
        """A switch: on (``True``) or its "no" form (``False``)."""
        return isinstance(self.value, bool)

    def __str__(self) -> str:
        """The marker that stands for this hint inside a message."""
        head = f"{self.command} " if self.command else ""
        tail = "" if self.value is None else "=" + json.dumps(self.value)
        return f"{OPEN}{head}{self.option}{tail}{CLOSE}"


def hint(option: str, value: HintValue = None, command: str = "") -> str:
    """The marker of ``Hint(option, value, command)``, to write inside a message."""
    return str(Hint(option, value, command))


def parse(marker: str) -> Hint:
    """The hint a marker stands for (``ValueError`` when ``marker`` is not one)."""
    m = MARKER.fullmatch(marker)
    if m is None:
        raise ValueError(f"not a hint marker: {marker!r}")
    value = None if m["value"] is None else json.loads(m["value"])
    return Hint(m["option"], value, m["command"] or "")


def pieces(text: str) -> Iterator[str | Hint]:
    """``text`` as its plain pieces and its hints, in order (empty pieces left out)."""
    at = 0
    for m in MARKER.finditer(text):
        if m.start() > at:
            yield text[at:m.start()]
        yield parse(m.group(0))
        at = m.end()
    if at < len(text):
        yield text[at:]


def hints_in(text: str) -> tuple[Hint, ...]:
    """Every hint in ``text``, in order."""
    return tuple(p for p in pieces(text) if isinstance(p, Hint))


def has_marker(text: str) -> bool:
    """Whether ``text`` holds a marker, or a stray bracket of one."""
    return OPEN in text or CLOSE in text
