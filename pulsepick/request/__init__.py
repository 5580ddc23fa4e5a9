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

The package, by job
-------------------
- :mod:`~pulsepick.request.defaults`: defaults, choices and the example phrases.
- :mod:`~pulsepick.request.phrase`: the blink grammar (:func:`parse_phrase`, :class:`BlinkTargets`).
- :mod:`~pulsepick.request.stock`: the parts drawer (:func:`parse_stock`, :class:`Stock`).
- :mod:`~pulsepick.request.types`: :class:`SolveRequest`.
- :mod:`~pulsepick.request.options`: :func:`make_request`, the options checked.
- :mod:`~pulsepick.request.lights`: several lights (:func:`split_lights`, :class:`BuildRequest`).

This module re-exports the names the rest of the program imports from ``pulsepick.request``.
"""

from __future__ import annotations

from pulsepick.request.defaults import (  # noqa: F401
    ASSUMED_FLASH_S,
    ASSUMED_FLASH_SHARE,
    ASSUMED_PEAK_A,
    CORE_CHOICES,
    DEFAULT_BUILDS,
    DEFAULT_CAP_RANGE,
    DEFAULT_C_SERIES,
    DEFAULT_FAMILY,
    DEFAULT_LED,
    DEFAULT_PREFER,
    DEFAULT_R_RANGE,
    DEFAULT_R_SERIES,
    DEFAULT_SEED,
    DEFAULT_SUPPLY,
    DEFAULT_TIMING_CAP,
    DEFAULT_TOP,
    FAMILY_CHOICES,
    PHRASE_EXAMPLES,
    PREFER_CHOICES,
    STAGE_CHOICES,
    STOCK_DIELECTRICS,
    TIMING_CAP_CHOICES,
)
from pulsepick.request.phrase import (  # noqa: F401
    BlinkTargets,
    merge_targets,
    parse_phrase,
    targets_from_flags,
)
from pulsepick.request.stock import (  # noqa: F401
    Stock,
    StockItem,
    parse_stock,
    read_stock,
)
from pulsepick.request.types import (  # noqa: F401
    SolveRequest,
)
from pulsepick.request.options import (  # noqa: F401
    make_request,
)
from pulsepick.request.lights import (  # noqa: F401
    LIGHTS_EXAMPLE,
    BuildRequest,
    LightRequest,
    make_build_request,
    parse_fraction,
    split_lights,
)
