"""IEC 60063 preferred-number series (E3 .. E192) as data, with vectorised look-ups.

The mantissas are read from the published tables in ``data/e_series/`` (never from
the formula ``10**(i/n)``: E12 and E24 depart from it on purpose, and E192 has
9.20 at index 185; ref:iec-60063, ref:e192-discrepancy-note). Every value this module returns is the
nearest double to the exact decimal part value (``4.7 kΩ`` is exactly ``4700.0``,
``0.47 Ω`` is the same double as ``float("0.47")``), so values compare equal to
what :func:`pulsepick.units.parse_value` reads.

Values within a relative distance of :data:`MATCH_RTOL` of a series value count as
that series value (so ``4700.000000000001`` is "in E24" and rounds to itself).

Examples
--------
>>> e24 = get_series("e24")
>>> e24.nearest(4650.0)
4700.0
>>> e24.bracket(4650.0)
(4300.0, 4700.0)
>>> [float(v) for v in e24.values(1000.0, 2000.0)]
[1000.0, 1100.0, 1200.0, 1300.0, 1500.0, 1600.0, 1800.0, 2000.0]

References
----------
IEC 60063, Preferred number series for resistors and capacitors (ref:iec-60063, ref:g4usp-preferred-values, ref:e192-discrepancy-note, ref:e-series-rounding-note, ref:e-series-tolerances).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cache
from typing import Literal, get_args

import numpy as np

from pulsepick.errors import DataFileError, SeriesError
from pulsepick.tables import load_table

SeriesName = Literal["E3", "E6", "E12", "E24", "E48", "E96", "E192"]
SERIES_NAMES: tuple[SeriesName, ...] = get_args(SeriesName)
Rounding = Literal["nearest", "up", "down"]
ROUNDINGS: tuple[Rounding, ...] = get_args(Rounding)

#: Relative distance under which a value counts as the series value (floating-point noise).
MATCH_RTOL = 1e-9
#: Values looked up in a series must lie in [VALUE_MIN, VALUE_MAX] (SI units). The bounds keep
#: every power of ten used in the exact decimal scaling exactly representable as a double.
VALUE_MIN = 1e-18
VALUE_MAX = 1e18
#: Mantissas are stored as integers of hundredths (4.7 -> 470, 4.75 -> 475).
_MANTISSA_SCALE_EXP = 2
_POW10 = np.array([float(10**k) for k in range(23)])  # 10**0 .. 10**22, all exact doubles

_ACCEPTED_NAMES = ", ".join(SERIES_NAMES)


def _scale(m_int: np.ndarray, exp: np.ndarray) -> np.ndarray:
    """``m_int * 10**exp`` as the nearest double (one correctly rounded operation)."""
    exp = np.asarray(exp)
    pos = _POW10[np.clip(exp, 0, 22)]
    neg = _POW10[np.clip(-exp, 0, 22)]
    return np.where(exp >= 0, m_int * pos, m_int / neg)


@dataclass(frozen=True)
class Series:
    """One IEC 60063 series: the mantissas of one decade and the usual part tolerance.

    Parameters
    ----------
    name : str
        Series name, one of :data:`SERIES_NAMES`.
    mantissas : tuple of float
        The published mantissas of one decade, increasing, 1.0 <= m < 10 (dimensionless).
    tolerance_pct : float
        Usual tolerance of parts sold in this series, percent (ref:iec-60063, ref:e-series-tolerances).
    source : str
        Where the table comes from.
    """

    name: str  # one of SERIES_NAMES
    mantissas: tuple[float, ...]  # dimensionless, one decade, 1.0 <= m < 10
    tolerance_pct: float  # percent, usual part tolerance
    source: str  # citation of the table
    _m_int: np.ndarray = field(init=False, repr=False, compare=False)
    _ext_int: np.ndarray = field(init=False, repr=False, compare=False)
    _ext_off: np.ndarray = field(init=False, repr=False, compare=False)
    _ext_log: np.ndarray = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        if self.name not in SERIES_NAMES:
            raise SeriesError(f"unknown series {self.name!r}; accepted: {_ACCEPTED_NAMES}")
        m = np.asarray(self.mantissas, dtype=float)
        if m.size == 0 or not np.all(np.diff(m) > 0) or m[0] < 1.0 or m[-1] >= 10.0:
            raise DataFileError(
                f"series {self.name}: mantissas must increase within 1.0 <= m < 10"
            )
        if not (np.isfinite(self.tolerance_pct) and self.tolerance_pct > 0):
            raise DataFileError(f"series {self.name}: tolerance_pct must be a positive number")
        m_int = np.rint(m * 10**_MANTISSA_SCALE_EXP).astype(np.int64)
        if not np.allclose(m_int / 10**_MANTISSA_SCALE_EXP, m, rtol=0, atol=1e-9):
            raise DataFileError(f"series {self.name}: mantissas have more than 2 decimals")
        # One neighbour on each side: the last value of the decade below, the first above.
        ext_int = np.concatenate(([m_int[-1]], m_int, [m_int[0]]))
        ext_off = np.concatenate(([-1], np.zeros(m_int.size, dtype=np.int64), [1]))
        ext_log = np.log10(ext_int / 10**_MANTISSA_SCALE_EXP) + ext_off
        object.__setattr__(self, "_m_int", m_int)
        object.__setattr__(self, "_ext_int", ext_int)
        object.__setattr__(self, "_ext_off", ext_off)
        object.__setattr__(self, "_ext_log", ext_log)

    def __len__(self) -> int:
        return len(self.mantissas)

    def values(self, lo: float, hi: float) -> np.ndarray:
        """Every series value in ``[lo, hi]`` (same unit as ``lo``/``hi``), increasing.

        Ends that are series values are included. Raises :class:`SeriesError` when
        ``lo`` or ``hi`` is not positive and finite or ``lo > hi``.
        """
        lo_a = _checked_positive(lo, "range start")
        hi_a = _checked_positive(hi, "range end")
        if lo_a.ndim or hi_a.ndim:
            raise SeriesError("a series range takes two single numbers (lo, hi)")
        lo_f, hi_f = float(lo_a), float(hi_a)
        if lo_f > hi_f:
            raise SeriesError(
                f"empty range {lo_f:g}..{hi_f:g}: the start must not exceed the end"
            )
        d0 = int(np.floor(np.log10(lo_f))) - 1
        d1 = int(np.floor(np.log10(hi_f))) + 1
        decades = np.arange(d0, d1 + 1)
        m = np.tile(self._m_int, decades.size)
        exp = np.repeat(decades - _MANTISSA_SCALE_EXP, self._m_int.size)
        vals = _scale(m, exp)
        keep = (vals >= lo_f * (1 - MATCH_RTOL)) & (vals <= hi_f * (1 + MATCH_RTOL))
        return vals[keep]

    def bracket(self, x: float | np.ndarray) -> tuple[float, float] | tuple[np.ndarray, np.ndarray]:
        """The series values just below and just above ``x`` (equal when ``x`` is one).

        Vectorised: an array ``x`` gives two arrays of its shape.
        """
        xa = _checked_positive(x, "value")
        below, above = self._bracket_array(np.atleast_1d(xa))
        if xa.ndim == 0:
            return float(below[0]), float(above[0])
        return below.reshape(xa.shape), above.reshape(xa.shape)

    def nearest(self, x: float | np.ndarray, rounding: str = "nearest") -> float | np.ndarray:
        """The series value picked for ``x``.

        Parameters
        ----------
        x : float or array
            Wanted value(s), positive, any unit (ohm, farad).
        rounding : {"nearest", "up", "down"}
            ``"nearest"`` picks the closer neighbour by ratio (log distance; an exact tie
            goes up), ``"up"`` the smallest series value >= x, ``"down"`` the largest <= x.
            A value already in the series maps to itself in all three.
        """
        if rounding not in ROUNDINGS:
            raise SeriesError(
                f"unknown rounding {rounding!r}; accepted: {', '.join(ROUNDINGS)}"
            )
        xa = _checked_positive(x, "value")
        x1 = np.atleast_1d(xa).astype(float)
        below, above = self._bracket_array(x1)
        if rounding == "up":
            picked = above
        elif rounding == "down":
            picked = below
        else:
            picked = np.where(above / x1 <= x1 / below, above, below)
        if xa.ndim == 0:
            return float(picked[0])
        return picked.reshape(xa.shape)

    def contains(self, x: float | np.ndarray) -> bool | np.ndarray:
        """Whether ``x`` is a series value (within :data:`MATCH_RTOL`)."""
        xa = _checked_positive(x, "value")
        below, above = self._bracket_array(np.atleast_1d(xa))
        hit = below == above
        return bool(hit[0]) if xa.ndim == 0 else hit.reshape(xa.shape)

    def _bracket_array(self, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        logx = np.log10(x)
        dec = np.floor(logx).astype(np.int64)
        frac = logx - dec
        j = np.clip(np.searchsorted(self._ext_log, frac, side="right") - 1, 0, len(self))
        below = self._ext_value(j, dec)
        above = self._ext_value(j + 1, dec)
        hit_below = np.abs(below - x) <= MATCH_RTOL * x
        hit_above = np.abs(above - x) <= MATCH_RTOL * x
        return np.where(hit_above, above, below), np.where(hit_below, below, above)

    def _ext_value(self, j: np.ndarray, dec: np.ndarray) -> np.ndarray:
        return _scale(self._ext_int[j], dec + self._ext_off[j] - _MANTISSA_SCALE_EXP)


def _checked_positive(x: float | np.ndarray, what: str) -> np.ndarray:
    try:
        xa = np.asarray(x, dtype=float)
    except (TypeError, ValueError) as err:
        raise SeriesError(f"{what} {x!r} is not a number; give a positive number") from err
    bad = ~np.isfinite(xa) | (xa < VALUE_MIN) | (xa > VALUE_MAX)
    if np.any(bad):
        first = float(xa[bad].flat[0]) if xa.ndim else float(xa)
        raise SeriesError(
            f"{what} {first:g} is outside what a series covers; accepted: positive finite "
            f"values from {VALUE_MIN:g} to {VALUE_MAX:g}"
        )
    return xa


def _note(notes: tuple[str, ...], key: str, table: str) -> str:
    prefix = f"{key}:"
    for line in notes:
        if line.startswith(prefix):
            return line[len(prefix):].strip()
    raise DataFileError(f"table {table} has no '# {key}: ...' line")


@cache
def _load_series(name: SeriesName) -> Series:
    path = f"e_series/{name}.csv"
    table = load_table(path)
    index = table.column("index")
    expected = int(name[1:])
    if len(index) != expected or index != [float(i) for i in range(expected)]:
        raise DataFileError(f"table {path} must hold indices 0..{expected - 1} in order")
    try:
        mantissas = tuple(float(v) for v in table.column("value"))  # type: ignore[arg-type]
        tolerance = float(_note(table.notes, "tolerance_pct", path))
    except (TypeError, ValueError) as err:
        raise DataFileError(f"table {path} holds a value that is not a number") from err
    return Series(
        name=name,
        mantissas=mantissas,
        tolerance_pct=tolerance,
        source=_note(table.notes, "source", path),
    )


def get_series(name: str) -> Series:
    """The series called ``name`` (case-insensitive: ``"e24"`` works), loaded once.

    Raises :class:`SeriesError` naming the accepted series for an unknown name.
    """
    key = name.strip().upper() if isinstance(name, str) else ""
    if key not in SERIES_NAMES:
        raise SeriesError(f"unknown series {name!r}; accepted: {_ACCEPTED_NAMES}")
    return _load_series(key)  # type: ignore[arg-type]


def pick_error_pct(picked: float | np.ndarray, wanted: float | np.ndarray) -> float | np.ndarray:
    """Error of a picked value against the wanted one, percent.

    ``(picked - wanted) / wanted * 100``; vectorised over arrays.
    """
    p = np.asarray(picked, dtype=float)
    w = np.asarray(wanted, dtype=float)
    err = (p - w) / w * 100.0
    return float(err) if err.ndim == 0 else err


def series_for_tolerance(tolerance_pct: float) -> SeriesName:
    """The coarsest series whose usual tolerance is within ``tolerance_pct`` (percent).

    Parts of tolerance t are made in the series whose neighbours lie about 2t apart,
    so a 5 % part belongs to E24, a 3 % part needs E48 and anything tighter than
    0.5 % is E192 (ref:iec-60063, ref:e-series-tolerances).
    """
    if not (isinstance(tolerance_pct, (int, float)) and np.isfinite(tolerance_pct)
            and tolerance_pct > 0):
        raise SeriesError(
            f"tolerance {tolerance_pct!r} is not usable; accepted: a positive percentage such as 5"
        )
    fitting = [n for n in SERIES_NAMES if get_series(n).tolerance_pct <= tolerance_pct]
    return fitting[0] if fitting else SERIES_NAMES[-1]


def which_series(value: float) -> list[SeriesName]:
    """Names of the series that hold ``value`` exactly (in :data:`SERIES_NAMES` order)."""
    return [n for n in SERIES_NAMES if get_series(n).contains(value)]
