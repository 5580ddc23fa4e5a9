"""Light-dependent rate: period against light and the clamp solve."""


import numpy as np
import pytest

from pulsepick.analysis.ldr import LdrNetwork, ldr_rate, solve_clamp, timing_param
from pulsepick.circuits.base import Topology
from pulsepick.cli import main
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.errors import RequestError
from pulsepick.parts.led import get_led
from pulsepick.parts.photoresistor import custom_photoresistor, get_photoresistor
from pulsepick.output.render import word_hints


def _design(core="schmitt"):
    # a demo circuit of our own (values picked by hand, not a reference)
    if core == "timer555":
        return Design(Topology("timer555", "direct"),
                      {"ra": 10e3, "rb": 1e6, "c1": 1e-6, "rs": 330.0},
                      ChipSpec("timer555"), PartChoice(led=get_led("red")), 3.0)
    return Design(Topology("schmitt", "pulse"),
                  {"r1": 1e6, "c1": 2.2e-6, "cp": 330e-6, "rs": 100.0},
                  ChipSpec("hc"), PartChoice(led=get_led("red")), 3.0)


def test_period_follows_the_network_resistance():
    d = _design()
    net = LdrNetwork(get_photoresistor("gl5528"))
    res = ldr_rate(d, net, points=9)
    # independent check: the design evaluated with R1 set to the network's typical value
    for i in (0, 4, 8):
        r = float(res.resistance_ohm["typ"][i])
        alone = d.__class__(d.topo, {**d.values, "r1": r}, d.chip, d.parts, d.supply_v)
        assert res.period_s["typ"][i] == pytest.approx(float(alone.fast().period_s[0]),
                                                       rel=1e-9)
    # more light, less resistance, a shorter period; corners bracket the typical curve
    assert np.all(np.diff(res.period_s["typ"]) < 0)
    assert np.all(res.period_s["low"] <= res.period_s["typ"])
    assert np.all(res.period_s["typ"] <= res.period_s["high"])
    assert any("races" in w for w in res.warnings)  # unclamped: 100 lux flickers


def test_clamp_keeps_every_corner_in_range():
    d = _design()
    clamp = solve_clamp(d, get_photoresistor("gl5528"), (1.0, 6.0))
    assert clamp.success
    res = ldr_rate(d, clamp.network, points=41, period_range_s=(1.0, 6.0))
    assert res.within_range is True
    for c in ("low", "typ", "high"):
        assert np.nanmin(res.period_s[c]) >= 1.0 * (1 - 1e-6)
        assert np.nanmax(res.period_s[c]) <= 6.0 * (1 + 1e-6)
    assert clamp.span > 1.2  # still follows the light
    from pulsepick.series import get_series

    for v in (clamp.network.series_ohm, clamp.network.parallel_ohm):
        assert v == 0 or np.isinf(v) or get_series("E24").contains(v)


def test_parallel_only_clamp_and_555_uses_rb():
    d = _design("timer555")
    assert timing_param(d) == "rb"
    ldr = custom_photoresistor(15e3, 0.6, dark_ohm=np.inf)
    # a parallel resistor alone cannot lift the bright end (3.8 kOhm at 100 lux)
    failed = solve_clamp(d, ldr, (0.3, 3.0), mode="parallel")
    assert not failed.success and "--clamp both" in word_hints(failed.message)
    clamp = solve_clamp(d, ldr, (0.3, 3.0), mode="series")
    assert clamp.success and np.isinf(clamp.network.parallel_ohm)
    res = ldr_rate(d, clamp.network, period_range_s=(0.3, 3.0))
    assert res.within_range


def test_stall_warning_in_the_dark():
    # a large timing capacitor and a photoresistor with no dark path: leakage stalls it
    d = Design(Topology("schmitt", "direct"), {"r1": 1e6, "c1": 1e-3, "rs": 330.0},
               ChipSpec("hc"), PartChoice(led=get_led("red"), timing_cap="electrolytic"), 3.0)
    res = ldr_rate(d, LdrNetwork(custom_photoresistor(50e3, 1.0)), lux_range=(1e-4, 100))
    assert any("stops" in w for w in res.warnings)


def test_bad_ranges():
    d = _design()
    with pytest.raises(RequestError, match="short to long"):
        solve_clamp(d, get_photoresistor("gl5528"), (6.0, 1.0))
    with pytest.raises(RequestError, match="light range"):
        ldr_rate(d, LdrNetwork(get_photoresistor("gl5528")), lux_range=(0, 100))


def test_cli_ldr_report_and_json(capsys):
    args = ["ldr", "--period-range", "1s..6s", "--core", "schmitt", "--stage", "pulse",
            "--c", "2u2", "--cp", "330u", "--rs", "100", "--points", "5"]
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "Period against light" in out and "series 510 kΩ" in out
    assert main([*args, "--json"]) == 0
    import json

    doc = json.loads(capsys.readouterr().out)
    assert doc["within_range"] is True and len(doc["levels"]) == 5
    assert main(["ldr", "--r", "1M", "--core", "schmitt", "--stage", "pulse", "--c", "2u2",
                 "--cp", "330u", "--rs", "100"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--series-r" in err
