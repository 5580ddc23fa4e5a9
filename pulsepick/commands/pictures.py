"""``--plot`` and ``--report`` for the commands: options, file checks, views and reports.

Shell only. Each command calls :func:`add_picture_arguments` for its options,
:func:`check_picture_targets` before its work (so a bad suffix, a missing plot extra
or an existing file is refused before a long run), and then its own
``*_pictures(args, ...)`` function with the results it computed. Those functions turn
result objects into the views of :mod:`pulsepick.output.plot` and the document of
:mod:`pulsepick.output.htmlreport`, run the analyses a report needs and the command did not
(a spread, a drift) through the core, and write the files atomically: a temporary
file in the same folder, then ``os.replace``. An existing file is replaced only with
``--force``, as with the buy list.

The code lives in pictures_files (options, checks, writing), pictures_views (views),
pictures_blocks (report pieces), pictures_reports (check, bands, night) and pictures_solve;
every name stays importable from here.
"""

from __future__ import annotations

from pulsepick.commands.pictures_blocks import (  # noqa: F401
    SPREAD_ROWS,
    _cautions,
    _stamp,
    _today,
    _warnings,
    drift_blocks,
    eng,
    num,
    parts_blocks,
    picture_section,
    schematic_block,
    spread_blocks,
    values_rows,
)
from pulsepick.commands.pictures_files import (  # noqa: F401
    NO_IMAGES,
    REPORT_SUFFIXES,
    _write,
    add_picture_arguments,
    announce,
    check_picture_targets,
    wants_pictures,
    write_file_atomic,
)
from pulsepick.commands.pictures_reports import (  # noqa: F401
    bands_pictures,
    bands_report,
    check_pictures,
    check_report,
    night_pictures,
    night_report,
)
from pulsepick.commands.pictures_solve import (  # noqa: F401
    SOLVE_FIGURE_ROWS,
    solve_pictures,
    solve_report,
)
from pulsepick.commands.pictures_views import (  # noqa: F401
    circuit_title,
    drift_view,
    night_view,
    oscillating_periods,
    spread_view,
    wave_view,
)
from pulsepick.output.plot import PLOT_EXTRA_MESSAGE

__all__ = [
    "PLOT_EXTRA_MESSAGE", "add_picture_arguments", "announce", "bands_pictures",
    "check_picture_targets", "check_pictures", "night_pictures", "solve_pictures",
    "write_file_atomic",
]
