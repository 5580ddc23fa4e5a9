"""The ``--plot`` and ``--report`` options, the checks of their files before a long run,
and the atomic writing of the image and the report.

The drawing and page modules load only where an image or a report is made: a command
that parses these options and writes neither does not pay for their import.
"""

from __future__ import annotations

import argparse
import os
import sys

from pulsepick.errors import RequestError, echo
from pulsepick.output.export import write_atomic

REPORT_SUFFIXES = (".html", ".htm")
NO_IMAGES = ("No pictures in this report: the plot extra (matplotlib) is not installed. "
             "Install it with pip install 'pulsepick[plot]' and make the report again.")


def add_picture_arguments(parser: argparse.ArgumentParser) -> None:
    """Add ``--plot``, ``--report`` and (unless the command has it) ``--force``.

    Call it after the command's own options: a command with its own ``--force``
    (``solve``, for the buy list) keeps it, and it then covers these files too.
    """
    g = parser.add_argument_group("pictures")
    g.add_argument("--plot", metavar="FILE.png|FILE.svg",
                   help="draw the figures into an image (PNG or SVG, 1000 x 600 px); needs "
                        "the plot extra: pip install 'pulsepick[plot]'")
    g.add_argument("--report", metavar="FILE.html",
                   help="write a self-contained design report (one HTML file, to print or "
                        "to send to whoever builds it)")
    try:
        g.add_argument("--force", action="store_true",
                       help="let --plot and --report replace an existing file")
    except argparse.ArgumentError:
        pass  # the command's own --force covers these files as well


def wants_pictures(args) -> bool:
    return bool(getattr(args, "plot", None) or getattr(args, "report", None))


def check_picture_targets(args, inputs=(), *, with_buylist: bool = False) -> None:
    """Refuse bad output files before any work is done.

    A ``--plot`` suffix other than .png/.svg, a missing plot extra, a missing folder,
    a folder, a dangling link, an existing file without ``--force``, two options naming
    one file, or an output that is one of the run's ``inputs`` (design, stock or
    profile files): one :class:`PulsepickError`. ``with_buylist`` checks ``--buylist``
    too (before the search; it is written before the pictures).
    """
    from pulsepick.output.export import check_outputs

    plot, report = getattr(args, "plot", None), getattr(args, "report", None)
    force = bool(getattr(args, "force", False))
    outputs = []
    if with_buylist and getattr(args, "buylist", None):
        outputs.append(("--buylist", args.buylist))
    if plot:
        from pulsepick.output.plot import image_format, require_matplotlib

        image_format(plot)
        require_matplotlib()
        outputs.append(("--plot", plot))
    if report:
        suffix = os.path.splitext(report)[1].lower()
        if suffix not in REPORT_SUFFIXES:
            raise RequestError(f"--report {echo(report)}: unknown report type "
                               f"{echo(suffix or '(none)')}; accepted: "
                               f"{', '.join(REPORT_SUFFIXES)}")
        outputs.append(("--report", report))
    check_outputs(outputs, inputs, force=force)


def write_file_atomic(path: str, data: bytes, *, force: bool = False) -> None:
    """Write ``data`` to ``path`` atomically (see :func:`pulsepick.output.export.write_atomic`).

    Raises :class:`ExportError` (nothing written) when the file exists and ``force``
    is False, the folder is missing, or the write fails.
    """
    write_atomic(path, data, force=force)


def _write(args, views: list, title: str, report_fn) -> list[str]:
    """Write the image and the report the options ask for; the lines to announce."""
    from pulsepick.output.htmlreport import render_html
    from pulsepick.output.plot import image_bytes, image_format

    done = []
    force = bool(getattr(args, "force", False))
    if getattr(args, "plot", None):
        if not views:
            done.append(f"no picture written to {args.plot}: nothing to draw (the circuit "
                        "does not oscillate)")
        else:
            data = image_bytes(views, title, image_format(args.plot))
            write_file_atomic(args.plot, data, force=force)
            done.append(f"picture written to {args.plot}")
    if getattr(args, "report", None):
        images = _images(views, title)
        page = report_fn(images)
        write_file_atomic(args.report, render_html(page).encode("utf-8"), force=force)
        done.append(f"report written to {args.report}")
    return done


def announce(args, lines: list[str]) -> None:
    """Say which files were written (on stdout, not with --json; then on stderr)."""
    if not lines:
        return
    if getattr(args, "json", False):
        for line in lines:
            print(f"pulsepick: {line}", file=sys.stderr)
        return
    from pulsepick.output.render import make_console

    console = make_console()
    for line in lines:
        console.print(line, markup=False, highlight=False)


def _images(views: list, title: str) -> list | None:
    """PNG images of each view for the report (htmlreport ``Image``), or None when
    matplotlib is missing."""
    from pulsepick.commands.pictures_views import _CAPTIONS
    from pulsepick.output.htmlreport import Image
    from pulsepick.output.plot import FIGURE_PIXELS, image_bytes, plot_available

    if not plot_available():
        return None
    out = []
    for v in views:
        out.append(Image(_CAPTIONS[type(v)](v), image_bytes([v], title, "png"),
                         *FIGURE_PIXELS))
    return out
