"""Values and quantities in, engineering notation and RKM codes out (the edge of the program).

Inside pulsepick every number is in SI units (ohm, farad, second, hertz, ampere,
volt, lux, candela, coulomb); temperatures are the exception and stay in degrees
Celsius. This module reads what people type and writes what people read:

* :func:`parse_value` reads component values: IEC 60062 RKM codes (``4k7``, ``R47``,
  ``2n2``, ``p68``, ``4u7``) and numbers with SI prefixes (``100n``, ``2.2uF``,
  ``47 kΩ``, ``10M``) (ref:iec-60062-rkm, ref:cap-tolerance-letters);
* :func:`parse_quantity` and :func:`parse_range` read request quantities with
  their unit (``250 ms``, ``20/min``, ``5 mA``, ``2.7V..1.8V``, ``-20..50 C``);
* :func:`format_eng` writes engineering notation (``4.7 kΩ``, ``100 nF``);
  :func:`format_figure` and :func:`format_pct` are the one way reports print a figure
  and a share (``"-"`` when missing);
* :func:`format_rkm` writes RKM codes (``4k7``, ``100n``);
* :func:`parse_tolerance` and :func:`tolerance_letter` handle tolerance letters
  (IEC 60062; ref:cap-tolerance-letters).

Numbers are converted through :class:`decimal.Decimal`, so ``4k7`` is exactly the
double ``4700.0`` and ``R47`` is the same double as ``float("0.47")``.

Prefix letters in values: ``p`` 1e-12, ``n`` 1e-9, ``u``/``µ``/``μ`` 1e-6, ``m`` 1e-3,
``k``/``K`` 1e3, ``M`` 1e6, ``G`` 1e9, ``T`` 1e12; ``R`` (or ``r``) marks the decimal
point of a resistance and ``F`` that of a capacitance in farads. ``m`` is always milli
and ``M`` always mega, whatever the unit (``10M`` is 10 MΩ, ``1m`` is 1 mF).

Examples
--------
>>> parse_value("4k7")
4700.0
>>> parse_value("2.2uF", unit="F")
2.2e-06
>>> parse_quantity("20/min", "rate")
0.3333333333333333
>>> format_eng(4700, "Ω")
'4.7 kΩ'
>>> format_rkm(4750, "R")
'4k75'
"""

from __future__ import annotations

from pulsepick.units.common import (
    ABSOLUTE_ZERO_C,
    PREFIX_EXP,
    QUANTITY_KINDS,
    TOLERANCE_LETTERS,
    TOLERANCE_Z,
    VALUE_FORMS,
    QuantityKind,
    RkmKind,
    ValueUnit,
)
from pulsepick.units.format import MISSING, format_eng, format_figure, format_pct
from pulsepick.units.quantities import parse_quantity, parse_range
from pulsepick.units.rkm import format_rkm
from pulsepick.units.tolerance import parse_tolerance, tolerance_letter
from pulsepick.units.values import (
    COMPONENT_RANGE,
    check_component,
    parse_value,
    parse_value_unit,
)

__all__ = [
    "ABSOLUTE_ZERO_C",
    "COMPONENT_RANGE",
    "MISSING",
    "PREFIX_EXP",
    "QUANTITY_KINDS",
    "TOLERANCE_LETTERS",
    "TOLERANCE_Z",
    "VALUE_FORMS",
    "QuantityKind",
    "RkmKind",
    "ValueUnit",
    "check_component",
    "format_eng",
    "format_figure",
    "format_pct",
    "format_rkm",
    "parse_quantity",
    "parse_range",
    "parse_tolerance",
    "parse_value",
    "parse_value_unit",
    "tolerance_letter",
]
