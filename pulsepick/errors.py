"""One error root for everything pulsepick refuses.

Each specific error also subclasses the built-in it refines, so callers that
catch ``ValueError`` keep working. Messages say what was wrong and what is
accepted; the CLI prints them as one line and exits with status 2.
"""


class PulsepickError(Exception):
    """Root of every error pulsepick raises on purpose."""


class ValueCodeError(ValueError, PulsepickError):
    """A value or value code (``4k7``, ``100n``, ``2.2 uF``) could not be read."""


class UnitError(ValueError, PulsepickError):
    """A quantity carries the wrong unit for where it is used (``3 mA`` as a time)."""


class SeriesError(ValueError, PulsepickError):
    """Unknown E-series name or an impossible range over a series."""


class RequestError(ValueError, PulsepickError):
    """A request (command-line options, a blink phrase, a design file) is malformed."""


class PartError(ValueError, PulsepickError):
    """A part model is unknown or its parameters are impossible."""


class CircuitError(ValueError, PulsepickError):
    """A circuit is missing a value it needs or holds an impossible one."""


class DataFileError(PulsepickError):
    """A shipped or user-supplied data file is missing or malformed."""


class ExportError(OSError, PulsepickError):
    """An output file could not be written (exists without --force, bad folder)."""


#: Characters of the user's input echoed in one message at most (longer input is cut).
ECHO_CHARS = 80


def echo(value: object, limit: int = ECHO_CHARS) -> str:
    """A piece of the user's input as a message shows it: quoted text, plain numbers,
    ISO dates, never a Python repr; control characters become spaces; cut to ``limit``."""
    import datetime as _dt

    if isinstance(value, str):
        text = "".join(ch if ch.isprintable() else " " for ch in value)
        if len(text) > limit:
            text = text[:limit - 3] + "..."
        return f"'{text}'"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (_dt.date, _dt.time)):
        return value.isoformat()
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, (list, tuple)):
        return "a list"
    text = str(value)
    return text if len(text) <= limit else text[:limit - 3] + "..."
