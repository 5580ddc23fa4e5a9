"""CdS photoresistors: resistance against light, with a dark leakage path.

Between about 1 and 1000 lux a CdS cell follows a power law. Its maker's *gamma* is
defined from the resistances at 10 and 100 lux (2854 K light, after pre-illumination),

    gamma = log10(R10 / R100)                       (Token technical notes, ref:token-ldr-notes, ref:globe-cds-cell)

and so, for any light level E (lux),

    R(E) = R10 · (E / 10 lux)^(-gamma)              (derived from the definition, ref:token-ldr-notes)

The power law runs off to infinity in the dark, but a real cell does not: its *dark
resistance* (measured 10 s after the light is removed, ref:globe-cds-cell) is finite and is published only
as a minimum. We model it as a leakage conductance in parallel with the power law,

    1/R(E) = 1/(R10 · (E/10)^(-gamma)) + 1/R_dark,

which leaves the power law unchanged (within 1 %) wherever it is below a hundredth of the
dark resistance and tends to R_dark in the dark. Below about 1 lux this is an extrapolation
(estimate); the tool says so wherever it shows such light levels.

Tolerance corners: R10 spans its published range, gamma its +/-0.1 tolerance (ref:token-ldr-notes, ref:globe-cds-cell), and
the dark path is either at its published minimum (the low corner) or absent (the high corner:
no maximum is published). The typical cell takes the geometric middle of the R10 range
(estimate) with the published minimum dark resistance.

Types GL5506..GL5539 are in ``data/parts/photoresistors.csv`` (R10 and dark resistance from
the compiled GL55xx table, ref:gl55xx-table; gamma per type from memory, labelled there).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cache
from typing import Literal

import numpy as np

from pulsepick.errors import PartError
from pulsepick.tables import load_table

_TABLE = "parts/photoresistors.csv"
#: The light level R10 is specified at, lux (ref:token-ldr-notes).
REFERENCE_LUX = 10.0
#: The range where the published power law is taken to hold, lux (ref:token-ldr-notes).
POWER_LAW_RANGE_LUX = (1.0, 1000.0)
Corner = Literal["low", "typ", "high"]
CORNERS: tuple[str, ...] = ("low", "typ", "high")


def power_law_resistance(lux, r10_ohm: float, gamma: float):
    """R(E) = R10·(E/10 lux)^(-gamma), ohm (the gamma definition, ref:token-ldr-notes).

    Examples
    --------
    >>> round(power_law_resistance(100.0, 15e3, 0.6))
    3768
    """
    e = np.asarray(lux, dtype=float)
    with np.errstate(divide="ignore"):
        return r10_ohm * (e / REFERENCE_LUX) ** (-gamma)


def gamma_from_points(r10_ohm: float, r100_ohm: float) -> float:
    """gamma = log10(R10/R100) from the resistances at 10 and 100 lux (ref:token-ldr-notes)."""
    if not (r10_ohm > 0 and r100_ohm > 0):
        raise PartError(f"R10 {r10_ohm!r} and R100 {r100_ohm!r} ohm must both be above 0")
    return math.log10(r10_ohm / r100_ohm)


@dataclass(frozen=True)
class Photoresistor:
    """One CdS photoresistor type (SI units)."""

    key: str  # table key, or "custom"
    name: str  # readable description
    r10_min_ohm: float  # ohm, published minimum resistance at 10 lux
    r10_max_ohm: float  # ohm, published maximum resistance at 10 lux
    dark_min_ohm: float  # ohm, published minimum dark resistance (inf: no dark path)
    gamma: float  # 1, log10(R10/R100)
    gamma_tol: float  # 1, +/- tolerance of gamma
    source: str = ""  # where the numbers come from
    r10_typ_override_ohm: float | None = None  # ohm, the user's measured R10

    def __post_init__(self) -> None:
        problems = []
        if not (0 < self.r10_min_ohm <= self.r10_max_ohm and math.isfinite(self.r10_max_ohm)):
            problems.append(f"R10 range {self.r10_min_ohm!r}..{self.r10_max_ohm!r} ohm must be "
                            "finite, above 0 and ascending")
        if not self.dark_min_ohm > 0:
            problems.append(f"dark resistance {self.dark_min_ohm!r} ohm must be above 0")
        if not (math.isfinite(self.gamma) and 0.1 <= self.gamma <= 2.0):
            problems.append(f"gamma {self.gamma!r} must lie between 0.1 and 2 (CdS cells: "
                            "about 0.5 to 1)")
        if not (math.isfinite(self.gamma_tol) and 0 <= self.gamma_tol < self.gamma):
            problems.append(f"gamma tolerance {self.gamma_tol!r} must be 0 or more and below "
                            "gamma")
        if self.r10_typ_override_ohm is not None and not self.r10_typ_override_ohm > 0:
            problems.append(f"R10 {self.r10_typ_override_ohm!r} ohm must be above 0")
        if problems:
            raise PartError(f"photoresistor {self.key}: " + "; ".join(problems))

    @property
    def r10_typ_ohm(self) -> float:
        """Typical R10, ohm: the user's value, or the geometric middle of the range (estimate)."""
        if self.r10_typ_override_ohm is not None:
            return self.r10_typ_override_ohm
        return math.sqrt(self.r10_min_ohm * self.r10_max_ohm)

    def resistance(self, lux, corner: str = "typ"):
        """Resistance at ``lux`` (lux, array or float), ohm, at a tolerance corner.

        ``corner``: ``"typ"`` (typical R10 and gamma, dark path at its minimum), ``"low"``
        (the lowest over R10, gamma and the dark path) or ``"high"`` (the highest; no dark
        path, since only a minimum dark resistance is published).
        """
        if corner not in CORNERS:
            raise PartError(f"corner {corner!r}; accepted: {', '.join(CORNERS)}")
        e = np.asarray(lux, dtype=float)
        if np.any(~np.isfinite(e)) or np.any(e < 0):
            raise PartError("light levels must be finite and 0 lux or more")
        if corner == "typ":
            r_pow = power_law_resistance(e, self.r10_typ_ohm, self.gamma)
            return _parallel(r_pow, self.dark_min_ohm)
        combos = [power_law_resistance(e, r10, g)
                  for r10 in (self.r10_min_ohm, self.r10_max_ohm)
                  for g in (self.gamma - self.gamma_tol, self.gamma + self.gamma_tol)]
        if corner == "low":
            return _parallel(np.minimum.reduce(combos), self.dark_min_ohm)
        return np.maximum.reduce(combos)

    def with_r10(self, r10_ohm: float) -> Photoresistor:
        """The same type with a measured typical R10 (ohm)."""
        from dataclasses import replace

        return replace(self, r10_typ_override_ohm=float(r10_ohm))


def _parallel(r_a, r_b):
    """Two resistances in parallel, ohm (inf stands for an open path)."""
    ga = np.where(np.isinf(r_a), 0.0, 1.0 / np.where(np.isinf(r_a), 1.0, r_a))
    gb = 0.0 if math.isinf(r_b) else 1.0 / r_b
    g = ga + gb
    with np.errstate(divide="ignore"):
        return np.where(g > 0, 1.0 / np.where(g > 0, g, 1.0), np.inf)


@cache
def _rows() -> dict[str, dict]:
    return {str(row["key"]): row for row in load_table(_TABLE).rows}


def photoresistor_keys() -> tuple[str, ...]:
    """Keys of the photoresistor table, in file order."""
    return tuple(_rows())


def get_photoresistor(key: str) -> Photoresistor:
    """The photoresistor type ``key`` (e.g. ``"gl5528"``).

    Raises
    ------
    PartError
        for an unknown key; the message lists the accepted keys.
    """
    rows = _rows()
    word = key.strip().lower()
    if word not in rows:
        raise PartError(f"unknown photoresistor {key!r}; accepted: {', '.join(rows)} "
                        "(or describe your own with R10, gamma and a dark resistance)")
    row = rows[word]
    return Photoresistor(
        key=word, name=str(row["name"]), r10_min_ohm=float(row["r10_min_ohm"]),
        r10_max_ohm=float(row["r10_max_ohm"]), dark_min_ohm=float(row["dark_min_ohm"]),
        gamma=float(row["gamma"]), gamma_tol=float(row["gamma_tol"]), source=str(row["source"]),
    )


def custom_photoresistor(r10_ohm: float, gamma: float, dark_ohm: float = math.inf, *,
                         r10_spread: float = 0.0, gamma_tol: float = 0.0) -> Photoresistor:
    """A photoresistor described by the user: R10 (ohm), gamma and a dark resistance (ohm).

    ``r10_spread`` is the +/- fraction of R10 taken for the corners (0: exact).
    """
    if not (0 <= r10_spread < 1):
        raise PartError(f"R10 spread {r10_spread!r}: give a fraction from 0 to below 1")
    if not r10_ohm > 0:
        raise PartError(f"R10 {r10_ohm!r} ohm must be above 0, such as 15k")
    return Photoresistor(
        key="custom", name=f"photoresistor R10 {r10_ohm:g} ohm, gamma {gamma:g}",
        r10_min_ohm=r10_ohm * (1 - r10_spread), r10_max_ohm=r10_ohm * (1 + r10_spread),
        dark_min_ohm=dark_ohm, gamma=gamma, gamma_tol=gamma_tol, source="given",
        r10_typ_override_ohm=r10_ohm,
    )
