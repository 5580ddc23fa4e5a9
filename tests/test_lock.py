"""Lock risk as a share of builds."""

import math

import numpy as np
import pytest
from scipy.stats import norm

from pulsepick.analysis.lock import lock_share, near_lock, package_builds, share_of
from pulsepick.request import make_request
from pulsepick.solve import solve


def test_near_lock_zones():
    # 2:3 is ln(2/3) = -0.405; a 3 % margin is ln(1.03) = 0.0296 either side
    x = np.log([2 / 3, 2 / 3 * 1.029, 2 / 3 * 1.031, 0.59, 1.0, 3 / 2])
    near, _ = near_lock(x, 0.03)
    assert near.tolist() == [True, True, False, False, True, True]


def test_share_matches_the_normal_closed_form():
    """Monte Carlo share against the normal probability of the zones (scipy.stats.norm):
    log ratio ~ N(mu, sigma), zones ln(p/q) +/- ln(1.03) for q <= 4."""
    rng = np.random.default_rng(3)
    n, sigma = 200_000, 0.08
    mu = math.log(0.62)
    dev_a = rng.normal(0.0, sigma / math.sqrt(2), n)
    dev_b = rng.normal(0.0, sigma / math.sqrt(2), n)
    res = share_of([0.62, 1.0], [dev_a, dev_b], [1, 1], margin=0.03)
    h = math.log(1.03)
    centres = [math.log(f) for f in (1 / 4, 1 / 3, 1 / 2, 2 / 3, 3 / 4, 1.0)]
    expect = sum(norm.cdf((c + h - mu) / sigma) - norm.cdf((c - h - mu) / sigma)
                 for c in centres)
    assert res.share == pytest.approx(expect, abs=4 * res.stderr)
    assert res.pairs[0].nearest == "2:3"
    assert res.packages == {1: res.share}
    # on separate packages no pair can lock
    assert share_of([0.62, 1.0], [dev_a, dev_b], [1, 2]).share == 0.0


@pytest.fixture(scope="module")
def design():
    req = make_request("one flash every 2 s, 50 ms long", family="lvc", supply="2.7V", top=1)
    return solve(req).candidates[0].design


def test_package_draws_are_shared(design):
    """With exact parts, two copies of one circuit on one package keep nearly the same
    period in every build (the package's thresholds, supply and temperature are shared;
    only each part's own tempco differs), while the period itself varies widely."""
    a, b = package_builds([design, design], builds=400, seed=5, supply_range_v=(1.8, 2.7),
                          resistor_tol_pct=[0.0, 0.0], cap_tol=0.0)
    spread = np.std(np.log(a))
    assert spread > 0.05
    assert np.std(np.log(a / b)) < 0.1 * spread
    # with part tolerances, the copies part ways and the ratio sits on 1:1 only sometimes
    res = lock_share([design, design], [1, 1], builds=400, seed=5)
    assert 0.0 < res.share < 1.0 and res.pairs[0].nearest == "1:1"
    assert res.share == pytest.approx(res.packages[1], rel=1e-12)


def test_spread_out_keeps_every_median_build_out_of_step():
    # two lights with wide bands (10 % per light): moving a median onto 1:1 barely changes
    # the share, so the search first keeps each pair's median ratio out of the lock zones
    from pulsepick.analysis.lock import minimise_share

    rng = np.random.default_rng(3)
    dev = (rng.normal(0.0, 0.1, 2000), rng.normal(0.0, 0.1, 2000))
    base = share_of([3.4, 3.6], dev, [0, 0])
    options = [np.array([3.1, 3.26, 3.4, 3.58, 3.74]), np.array([3.6])]
    chosen, res = minimise_share([3.4, 3.6], options, base, [3.4, 3.6], [0, 0])
    ratio = options[0][chosen[0]] / 3.6
    assert not near_lock(np.array([math.log(ratio)]))[0][0]
    assert 0.0 < res.share < 0.5
