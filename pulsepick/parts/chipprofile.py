"""A chip profile: the thresholds of one real Schmitt chip, measured on the bench.

``pulsepick calibrate --save chip.toml`` writes one; ``--chip chip.toml`` (and
``chip = "chip.toml"`` in a design file) reads it back. The file is a small TOML
table::

    # pulsepick chip profile
    family = "hc"
    supply_v = 3.0
    vt_plus_v = 1.712
    vt_minus_v = 0.934
    supply_current_a = 1.5e-05   # optional: the test oscillator's own draw
    source = "measured"
    date = "2026-06-21"

At another supply the thresholds follow the family's published typical shape: the
measured chip keeps the same ratio to the family's typical VT+ (and VT-) at every
supply (estimate: the datasheet rows move together with the supply; a chip that sits
high at one supply is taken to sit high by the same factor at the others).
"""

from __future__ import annotations

import dataclasses
import math
import tomllib
from dataclasses import dataclass

from pulsepick.errors import PartError
from pulsepick.hints import hint
from pulsepick.parts.logic import FAMILY_KEYS, LogicFamily, ThresholdPoint

PROFILE_KEYS = ("family", "supply_v", "vt_plus_v", "vt_minus_v", "supply_current_a",
                "source", "date")
_REQUIRED = ("family", "supply_v", "vt_plus_v", "vt_minus_v")
#: Highest threshold kept below the supply of a scaled row (a row needs VT+ < VDD).
_ROW_HEADROOM = 0.995


@dataclass(frozen=True)
class ChipProfile:
    """One measured chip (SI units)."""

    family: str  # logic family key (FAMILY_KEYS)
    supply_v: float  # V, supply the thresholds were measured at
    vt_plus_v: float  # V, measured VT+
    vt_minus_v: float  # V, measured VT-
    supply_current_a: float | None = None  # A, measured draw of the test oscillator
    source: str = "measured"  # where the numbers come from
    date: str = ""  # ISO date of the measurement

    def __post_init__(self) -> None:
        problems = []
        if self.family not in FAMILY_KEYS:
            problems.append(f"family {self.family!r} is not a Schmitt family; accepted: "
                            f"{', '.join(FAMILY_KEYS)}")
        numbers = (self.supply_v, self.vt_plus_v, self.vt_minus_v)
        if not all(isinstance(x, (int, float)) and math.isfinite(x) for x in numbers):
            problems.append("supply_v, vt_plus_v and vt_minus_v must be numbers in volts")
        elif not 0 < self.vt_minus_v < self.vt_plus_v < self.supply_v:
            problems.append(f"thresholds VT- {self.vt_minus_v:g} V, VT+ {self.vt_plus_v:g} V "
                            f"at {self.supply_v:g} V are impossible; accepted: "
                            "0 < VT- < VT+ < supply")
        i = self.supply_current_a
        if i is not None and not (isinstance(i, (int, float)) and math.isfinite(i) and i >= 0):
            problems.append("supply_current_a must be a current of 0 A or more")
        if problems:
            raise PartError("chip profile: " + "; ".join(problems))


def profile_text(profile: ChipProfile) -> str:
    """The TOML text of ``profile`` (read back by :func:`parse_profile`)."""
    lines = [
        "# pulsepick chip profile: thresholds of one measured Schmitt chip",
        f'family = "{profile.family}"',
        f"supply_v = {profile.supply_v!r}",
        f"vt_plus_v = {profile.vt_plus_v!r}",
        f"vt_minus_v = {profile.vt_minus_v!r}",
    ]
    if profile.supply_current_a is not None:
        lines.append(f"supply_current_a = {profile.supply_current_a!r}")
    lines.append(f'source = "{_plain(profile.source)}"')
    if profile.date:
        lines.append(f'date = "{_plain(profile.date)}"')
    return "\n".join(lines) + "\n"


def _plain(text: str) -> str:
    return str(text).replace("\\", "/").replace('"', "'")


def parse_profile(text: str, path: str = "chip.toml") -> ChipProfile:
    """A profile from TOML text; unknown or missing keys are refused in one message."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise PartError(f"{path}: not a TOML chip profile ({err}); write it with "
                        f"'{hint('save', True, 'calibrate')}'") from err
    problems = []
    unknown = sorted(set(data) - set(PROFILE_KEYS))
    if unknown:
        problems.append(f"unknown key(s) {', '.join(unknown)}; accepted: {', '.join(PROFILE_KEYS)}")
    missing = [k for k in _REQUIRED if k not in data]
    if missing:
        problems.append(f"missing {', '.join(missing)}")
    if problems:
        raise PartError(f"{path}: " + "; ".join(problems))
    for key in ("supply_v", "vt_plus_v", "vt_minus_v", "supply_current_a"):
        if key in data and (isinstance(data[key], bool)
                            or not isinstance(data[key], (int, float))):
            raise PartError(f"{path}: {key} must be a number in SI units, e.g. {key} = 1.5")
    try:
        return ChipProfile(
            family=str(data["family"]).strip().lower(),
            supply_v=float(data["supply_v"]),
            vt_plus_v=float(data["vt_plus_v"]),
            vt_minus_v=float(data["vt_minus_v"]),
            supply_current_a=(None if "supply_current_a" not in data
                              else float(data["supply_current_a"])),
            source=str(data.get("source", "measured")),
            date=str(data.get("date", "")),
        )
    except PartError as err:
        raise PartError(f"{path}: {err}") from err


def read_profile(path: str) -> ChipProfile:
    """Read a chip profile file; a missing or unreadable file is one clear error."""
    from pulsepick.errors import RequestError
    from pulsepick.infile import read_text

    try:
        text = read_text(path, "chip profile",
                         f"a file written by '{hint('save', True, 'calibrate')}'")
    except RequestError as err:
        raise PartError(str(err)) from None
    return parse_profile(text, path)


def measured_family(base: LogicFamily, vdd: float, vt_plus: float, vt_minus: float
                    ) -> LogicFamily:
    """``base`` with its thresholds replaced by one measured chip's, at every supply.

    Each threshold row of the family is scaled by the ratio of the measured value to
    the family's typical value at ``vdd`` (min = typ = max), so the chip follows the
    family's published shape between supplies and equals the measurement at ``vdd``.
    """
    typ = base.thresholds(vdd)
    k_plus = vt_plus / float(typ.vt_plus_typ)
    k_minus = vt_minus / float(typ.vt_minus_typ)
    rows = []
    for p in base.threshold_points:
        vp = min(p.vt_plus_typ * k_plus, _ROW_HEADROOM * p.vdd_v)
        vm = min(p.vt_minus_typ * k_minus, 0.99 * vp)
        rows.append(ThresholdPoint(
            vdd_v=p.vdd_v, vt_plus_min=vp, vt_plus_typ=vp, vt_plus_max=vp,
            vt_minus_min=vm, vt_minus_typ=vm, vt_minus_max=vm, vh_min=vp - vm, vh_max=vp - vm,
            source=f"measured chip ({vt_plus:g} V / {vt_minus:g} V at {vdd:g} V) on the "
                   f"family's shape: {p.source}",
        ))
    note = (f"measured chip: VT+ {vt_plus:g} V, VT- {vt_minus:g} V at {vdd:g} V, "
            "following the family's typical shape at other supplies (estimate)")
    return dataclasses.replace(base, name=f"{base.name}, measured chip",
                               source_notes=(*base.source_notes, note),
                               threshold_points=tuple(rows))
