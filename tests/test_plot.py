"""Images: produced, non-empty, of the stated size; refusals are one line and exit 2."""

from __future__ import annotations

import os
import struct
import subprocess
import sys
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from pulsepick import cli
from pulsepick.errors import RequestError
from pulsepick.output.plot import (
    FIGURE_DPI,
    FIGURE_PIXELS,
    FIGURE_SIZE_IN,
    PLOT_EXTRA_MESSAGE,
    NightView,
    SpreadView,
    image_bytes,
    image_format,
)

# A community garden's path marker (demo values).
CHECK = ["check", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
         "--cp", "22u", "--rs", "47", "--family", "hc", "--supply", "3.0V", "--led", "red"]
BANDS = ["bands", "--core", "schmitt", "--r", "1M", "--c", "1u", "--stage", "direct",
         "--rs", "1k", "--supply", "3V..2.2V", "--builds", "300"]
NIGHT = ["night", "--storage", "5f-2v7", "--start", "2.6V", "--dusk", "18:30", "--dawn", "07:10",
         "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse", "--cp", "22u",
         "--rs", "47"]
BARE_NIGHT = ["night", "--no-circuit", "--storage", "0.2F", "--start", "2.5V", "--stop-at",
              "1.8V", "--storage-leak", "0.2uA", "--extra-load", "10uA"]
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), section 5.2


def png_size(data: bytes) -> tuple[int, int]:
    """Width and height from the IHDR chunk, the first after the signature (ISO/IEC 15948)."""
    assert data[:8] == PNG_SIGNATURE
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def svg_size_in(data: bytes) -> tuple[float, float]:
    """Width and height of an SVG in inches from its width/height attributes (pt = 1/72 in)."""
    root = ET.fromstring(data)
    out = []
    for name in ("width", "height"):
        text = root.attrib[name]
        assert text.endswith("pt")
        out.append(float(text[:-2]) / 72.0)
    return out[0], out[1]


def run(capsys, argv):
    status = cli.main(argv)
    return status, capsys.readouterr()


def test_stated_size_is_consistent():
    assert FIGURE_PIXELS == (1000, 600)
    assert FIGURE_PIXELS == (FIGURE_SIZE_IN[0] * FIGURE_DPI, FIGURE_SIZE_IN[1] * FIGURE_DPI)


def test_views_render_to_png_and_svg_of_the_fixed_size():
    # drawing only: a made-up histogram and night (no physics is checked here)
    rng = np.random.default_rng(0)
    per = rng.normal(3.0, 0.2, 500)
    view = SpreadView(per, *np.percentile(per, (5, 50, 95)), 3.0, 0.1, 500, 0)
    t = np.linspace(0.0, 8 * 3600.0, 200)
    night = NightView(t, 2.6 - 0.3 * t / t[-1], np.full(200, 0.02), "cd", 2.6, 2.0, t[-1],
                      t[-1], True)
    png = image_bytes([view], "a demo histogram", "png")
    assert png_size(png) == FIGURE_PIXELS and len(png) > 10_000
    svg = image_bytes([night, view], "a demo night", "svg")
    assert svg_size_in(svg) == pytest.approx(FIGURE_SIZE_IN)
    assert b"<svg" in svg and len(svg) > 10_000
    with pytest.raises(RequestError):
        image_bytes([], "nothing")


def test_image_format_from_suffix():
    assert image_format("marker.PNG") == "png"
    assert image_format("out/marker.svg") == "svg"
    with pytest.raises(RequestError, match=r"\.png, \.svg"):
        image_format("marker.jpg")


@pytest.mark.parametrize("argv, name", [
    (CHECK, "check.png"),
    (BANDS, "bands.svg"),
    (NIGHT, "night.png"),
    (BARE_NIGHT, "bare.png"),
])
def test_commands_write_images(capsys, tmp_path, argv, name):
    path = tmp_path / name
    status, out = run(capsys, [*argv, "--plot", str(path)])
    assert status == 0, out.err
    assert f"picture written to {path}" in out.out
    data = path.read_bytes()
    if name.endswith(".png"):
        assert png_size(data) == FIGURE_PIXELS
    else:
        assert svg_size_in(data) == pytest.approx(FIGURE_SIZE_IN)
    assert len(data) > 10_000
    assert sorted(os.listdir(tmp_path)) == [name]  # no temporary file left behind


def test_json_stays_clean_with_plot(capsys, tmp_path):
    import json

    path = tmp_path / "check.svg"
    status, out = run(capsys, [*CHECK, "--json", "--plot", str(path)])
    assert status == 0
    json.loads(out.out)  # nothing but JSON on stdout
    assert "picture written" in out.err
    assert svg_size_in(path.read_bytes()) == pytest.approx(FIGURE_SIZE_IN)


def one_line_error(out) -> str:
    assert out.out == ""
    lines = out.err.strip().splitlines()
    assert len(lines) == 1
    return lines[0]


@pytest.mark.parametrize("argv", [CHECK, BANDS, BARE_NIGHT])
def test_unknown_suffix_names_the_accepted_ones(capsys, tmp_path, argv):
    status, out = run(capsys, [*argv, "--plot", str(tmp_path / "x.jpg")])
    assert status == 2
    line = one_line_error(out)
    assert ".png, .svg" in line and "'.jpg'" in line
    assert not os.listdir(tmp_path)


@pytest.mark.parametrize("argv", [CHECK, BARE_NIGHT])
def test_missing_plot_extra_is_one_line_exit_2(capsys, tmp_path, monkeypatch, argv):
    monkeypatch.setitem(sys.modules, "matplotlib", None)  # import matplotlib now fails
    status, out = run(capsys, [*argv, "--plot", str(tmp_path / "x.png")])
    assert status == 2
    assert one_line_error(out) == f"pulsepick: error: {PLOT_EXTRA_MESSAGE}"
    assert PLOT_EXTRA_MESSAGE == "--plot needs the plot extra: pip install 'pulsepick[plot]'"
    assert not os.listdir(tmp_path)


def test_existing_file_needs_force(capsys, tmp_path):
    path = tmp_path / "marker.png"
    path.write_bytes(b"keep me")
    status, out = run(capsys, [*BARE_NIGHT, "--plot", str(path)])
    assert status == 2 and "--force" in one_line_error(out)
    assert path.read_bytes() == b"keep me"
    status, out = run(capsys, [*BARE_NIGHT, "--plot", str(path), "--force"])
    assert status == 0
    assert png_size(path.read_bytes()) == FIGURE_PIXELS
    assert sorted(os.listdir(tmp_path)) == ["marker.png"]


def test_missing_folder_is_refused(capsys, tmp_path):
    status, out = run(capsys, [*BARE_NIGHT, "--plot", str(tmp_path / "no" / "x.png")])
    assert status == 2 and "folder" in one_line_error(out)


def test_plain_commands_never_import_matplotlib():
    code = ("import sys, io, contextlib\n"
            "from pulsepick import cli\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            f"    status = cli.main({BARE_NIGHT!r})\n"
            "print(status, 'matplotlib' in sys.modules)\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True, timeout=120)
    assert out.stdout.split() == ["0", "False"]
