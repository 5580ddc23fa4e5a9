"""Design files: reading, refusing bad input in one line, and the same parts as single lights."""

import os
from pathlib import Path

import pytest

from pulsepick.designfile import (
    build_request,
    is_design_file,
    night_options,
    parse_design,
    read_design,
    storage_part,
    storage_supply,
)
from pulsepick.errors import RequestError

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"

GOOD = """
name = "test build"
[build]
family = "lvc"
[storage]
part = "5f-2v7"
start = "2.6V"
stop_at = "1.8V"
[night]
length = "12h"
[[light]]
name = "a"
blink = "one flash every 3 s, 40 ms long"
[[light]]
blink = "every 5 s for 40 ms"
led = "bright-red"
"""


def test_good_file_reads():
    d = parse_design(GOOD, "good.toml")
    assert d.name == "test build"
    assert [li.name for li in d.lights] == ["a", "light 2"]
    assert d.lights[1].context == {"led": "bright-red"}
    assert storage_supply(d) == "2.6V..1.8V"
    assert night_options(d)["night"] == "12h"
    b = build_request(d)
    assert b.lights[0].request.supply_v == 2.6 and b.lights[0].request.supply_end_v == 1.8
    assert b.lights[1].request.led.key == "bright-red"
    assert b.lights[0].request.families == ("lvc",)
    assert storage_part(d).key == "5f-2v7"


def test_examples_read():
    for name in ("garden-path-markers.toml", "firefly-lantern.toml"):
        d = read_design(str(EXAMPLES / name))
        assert len(d.lights) >= 3
        build_request(d)  # every light's request is valid
    assert is_design_file("x.TOML") and not is_design_file("one flash every 3 s")


def test_stock_path_is_relative_to_the_design_file(tmp_path):
    sub = tmp_path / "designs"
    sub.mkdir()
    (tmp_path / "drawer.csv").write_text("kind,value,qty\nR,1M,4\nC,2u2,2\n", encoding="utf-8")
    path = sub / "d.toml"
    path.write_text(GOOD.replace('family = "lvc"', 'family = "lvc"\nstock = "../drawer.csv"'),
                    encoding="utf-8")
    d = read_design(str(path))
    assert d.stock_path == os.path.normpath(str(tmp_path / "drawer.csv"))
    b = build_request(d)
    assert b.lights[0].request.stock.resistors() == (1e6,)


def _one_line(err: Exception) -> str:
    text = str(err)
    assert "\n" not in text
    return text


def test_syntax_error_points_to_the_line():
    text = 'name = "x"\n[[light]]\nblink = "every 3 s\n'  # unterminated string on line 3
    with pytest.raises(RequestError) as err:
        parse_design(text, "bad.toml")
    msg = _one_line(err.value)
    assert msg.startswith("bad.toml: not valid TOML") and "line 3" in msg


def test_unknown_key_names_it_and_the_allowed_ones():
    text = GOOD.replace('led = "bright-red"', 'colour = "green"')
    with pytest.raises(RequestError) as err:
        parse_design(text, "k.toml")
    msg = _one_line(err.value)
    assert "'colour'" in msg and "[[light]] 2" in msg and "allowed: name, blink, led" in msg
    with pytest.raises(RequestError, match=r"unknown key 'lamps' at the top; allowed: name"):
        parse_design(GOOD + "\n[lamps]\nx = 1\n", "k.toml")
    with pytest.raises(RequestError, match=r"unknown key 'voltage' in \[storage\]"):
        parse_design(GOOD.replace('start = "2.6V"', 'voltage = "2.6V"'), "k.toml")


def test_missing_required_key_is_named():
    with pytest.raises(RequestError) as err:
        parse_design(GOOD.replace('blink = "every 5 s for 40 ms"', 'name = "b"'), "m.toml")
    msg = _one_line(err.value)
    assert "[[light]] 2 has no 'blink' (required)" in msg
    with pytest.raises(RequestError, match="no \\[\\[light\\]\\] table"):
        parse_design('name = "empty"\n', "m.toml")
    with pytest.raises(RequestError, match="\\[site\\] has no 'date'"):
        parse_design(GOOD.replace('[night]\nlength = "12h"', "[site]\nlatitude = 52.1"),
                     "m.toml")
    with pytest.raises(RequestError, match="one of 'part'"):
        parse_design(GOOD.replace('part = "5f-2v7"', ""), "m.toml")


def test_wrong_types_and_bad_values():
    with pytest.raises(RequestError, match="max_packages = '2': give a whole number"):
        parse_design(GOOD.replace('family = "lvc"', 'family = "lvc"\nmax_packages = "2"'),
                     "t.toml")
    with pytest.raises(RequestError, match="light 2: --led 'purple' unknown"):
        build_request(parse_design(GOOD.replace('"bright-red"', '"purple"'), "t.toml"))
    with pytest.raises(RequestError, match="cannot read the design file"):
        read_design("/nonexistent/none.toml")


def test_design_file_solve_gives_the_same_parts_as_single_lights(tmp_path):
    """The issue's check: each light of a design-file solve has the parts the single-light
    solve of the same phrase and context gives (two solver runs per light, ~3 s)."""
    from pulsepick.request import make_request
    from pulsepick.solve import solve, solve_build

    path = tmp_path / "two.toml"
    path.write_text(GOOD, encoding="utf-8")
    d = read_design(str(path))
    result = solve_build(build_request(d), assess_picks=False)
    for li, spec in zip(result.lights, d.lights, strict=True):
        single = solve(make_request(spec.blink, family="lvc", supply="2.6V..1.8V",
                                    **spec.context))
        best = single.candidates[0]
        # the same parts; the build numbers them across its lights (R1.. go on)
        assert [{**p.to_dict(), "ref": None} for p in li.pick.parts] == [
            {**p.to_dict(), "ref": None} for p in best.parts]
