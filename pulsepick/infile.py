"""Reading the user's input files (design, stock, profile) safely.

A file is read only when it is a regular file (a FIFO, a device or a folder would
block or never end), at most :data:`pulsepick.limits.MAX_INPUT_BYTES` long, as UTF-8
with or without a byte-order mark (what spreadsheets write), with CRLF or CR line
ends turned into LF.
"""

from __future__ import annotations

import os
import stat

from pulsepick.errors import RequestError
from pulsepick.limits import MAX_INPUT_BYTES

BOM = "\ufeff"


def shown_path(path: str) -> str:
    """A path as echoed in a message: printable, at most 120 characters."""
    text = "".join(ch if ch.isprintable() else "?" for ch in str(path))
    return f"'{text}'" if len(text) <= 120 else f"'{text[:57]}...{text[-60:]}'"


def read_text(path: str, what: str, accepted: str) -> str:
    """The text of the input file ``path``; ``what`` (e.g. "stock file") and
    ``accepted`` (what a good file looks like) word the errors.

    Raises
    ------
    RequestError
        one line, when the file is missing, not a regular file, larger than the cap,
        or not UTF-8 text.
    """
    where = f"the {what} {shown_path(path)}"
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_CLOEXEC", 0)
    try:
        fd = os.open(path, flags)  # non-blocking: opening a FIFO must not wait for a writer
    except OSError as err:
        raise RequestError(f"cannot read {where}: {err.strerror or 'error'}; give {accepted}"
                           ) from None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode):
            kind = ("a folder" if stat.S_ISDIR(info.st_mode) else
                    "a pipe" if stat.S_ISFIFO(info.st_mode) else
                    "a device" if stat.S_ISCHR(info.st_mode) or stat.S_ISBLK(info.st_mode)
                    else "not a regular file")
            raise RequestError(f"{where} is {kind}; give {accepted}")
        if info.st_size > MAX_INPUT_BYTES:
            raise RequestError(f"{where} is {info.st_size / 1e6:.1f} MB; input files are "
                               f"limited to {MAX_INPUT_BYTES // (1024 * 1024)} MB")
        chunks = []
        size = 0
        while True:
            block = os.read(fd, 1 << 20)
            if not block:
                break
            size += len(block)
            if size > MAX_INPUT_BYTES:  # the file grew while being read
                raise RequestError(f"{where} is over {MAX_INPUT_BYTES // (1024 * 1024)} MB; "
                                   "input files are limited to that")
            chunks.append(block)
    except OSError as err:
        raise RequestError(f"cannot read {where}: {err.strerror or 'error'}; give {accepted}"
                           ) from None
    finally:
        os.close(fd)
    return decode(b"".join(chunks), where, accepted)


def decode(raw: bytes, where: str, accepted: str) -> str:
    """UTF-8 bytes as text without a byte-order mark and with LF line ends."""
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as err:
        raise RequestError(f"{where} is not UTF-8 text (byte {err.start + 1}); give "
                           f"{accepted}") from None
    if text.startswith(BOM):
        text = text[1:]
    if "\r" in text:
        text = text.replace("\r\n", "\n").replace("\r", "\n")
    if "\x00" in text:
        raise RequestError(f"{where} holds NUL characters, so it is not a text file; give "
                           f"{accepted}")
    return text
