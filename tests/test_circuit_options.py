"""The shared circuit options: the public LED reader other commands reuse."""

import argparse

import pytest

from pulsepick.commands import circuit_options
from pulsepick.errors import RequestError
from pulsepick.parts.led import get_led


def _args(*argv: str) -> argparse.Namespace:
    parser = argparse.ArgumentParser()
    circuit_options.add_circuit_arguments(parser)
    return parser.parse_args(list(argv))


def test_led_from_args_is_public_and_reads_a_colour():
    assert not hasattr(circuit_options, "_led_from_args")
    assert circuit_options.led_from_args(_args()) == get_led("red")  # the default colour
    assert circuit_options.led_from_args(_args("--led", "white")) == get_led("white")


def test_led_from_args_reads_a_custom_led():
    # user values (a demo LED), read back as given
    led = circuit_options.led_from_args(
        _args("--led-vf", "1.9V@20mA", "--led-n", "2", "--led-rs", "10", "--led-mcd", "120@20mA"))
    assert led.key == "custom"
    assert led.voltage(20e-3) == pytest.approx(1.9, abs=1e-9)
    assert led.junction.n == 2.0
    assert float(led.intensity_cd(20e-3)) == pytest.approx(0.120)
    assert led.i_max_a is None  # no option gives it: unknown


def test_led_from_args_refuses_a_refinement_without_vf():
    with pytest.raises(RequestError, match="give its forward voltage too"):
        circuit_options.led_from_args(_args("--led-n", "2"))
