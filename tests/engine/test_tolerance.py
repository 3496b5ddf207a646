"""Tolerances (engine/solve/tolerance.py): IEC 60062 letter codes, worst-case corners against brute
force, and Monte Carlo statistics against first-order propagation by the `uncertainties` library.

IEC 60062 tolerance letters (as listed in the standard, from memory): B ±0.1 %, C ±0.25 %,
D ±0.5 %, F ±1 %, G ±2 %, J ±5 %, K ±10 %, M ±20 %. Closed forms of the divider and the bridge
are common practice. A uniform deviation within ±t has standard deviation t / sqrt(3) (common
practice); a normal one with t = 3 sigma has t / 3.
"""

from __future__ import annotations

import importlib
import itertools
import math
from dataclasses import replace

import numpy as np
import pytest
from uncertainties import ufloat

from portcut.engine import GROUND, Circuit, CircuitError, ValueParseError, equivalent
from portcut.engine.solve.tolerance import monte_carlo, parse_tolerance, worst_case

TOLERANCE = importlib.import_module("portcut.engine.solve.tolerance")


@pytest.mark.parametrize(("text", "want"), [
    ("B", 0.001), ("C", 0.0025), ("D", 0.005), ("F", 0.01), ("G", 0.02), ("J", 0.05),
    ("K", 0.10), ("M", 0.20), ("f", 0.01), ("1 %", 0.01), ("±0.5%", 0.005), ("2", 0.02),
    (0.05, 0.05),
])
def test_tolerance_codes(text, want) -> None:
    assert parse_tolerance(text) == pytest.approx(want)


@pytest.mark.parametrize("bad", ["X", "five", "150 %", "-1"])
def test_bad_tolerance_is_named(bad) -> None:
    with pytest.raises(ValueParseError, match="tolerance"):
        parse_tolerance(bad)


def rc() -> Circuit:
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 10)
    c.resistor("R1", "in", "out", "6k")
    c.resistor("R2", "out", GROUND, "4k")
    c.capacitor("C1", "out", GROUND, "100n")
    c.resistor("RL", "out", GROUND, "1k")
    return c


RC = {"V1", "R1", "R2", "C1"}
RC_TOL = {"R1": "F", "R2": "J", "C1": "K", "V1": "D"}


def _brute_force(c: Circuit, region: set[str], tol: dict[str, float], freq: float) -> dict:
    """Every corner through the engine's own equivalent, one circuit at a time."""
    found: dict[str, list[float]] = {"voc": [], "isc": [], "z": [], "z_deg": []}
    for signs in itertools.product((-1, 1), repeat=len(tol)):
        changed = c.replaced(replace(c[n], value=c[n].value * (1 + s * t))
                             for (n, t), s in zip(tol.items(), signs, strict=True))
        eq = equivalent(changed, region, freq=freq)
        for k, v in (("voc", abs(eq.voc)), ("isc", abs(eq.isc)), ("z", abs(eq.z)),
                     ("z_deg", math.degrees(np.angle(eq.z)))):
            found[k].append(v)
    return {k: (min(v), max(v)) for k, v in found.items()}


@pytest.mark.parametrize("freq", [0.0, 1e3])
def test_all_corners_match_brute_force(freq: float) -> None:
    tol = {n: parse_tolerance(t) for n, t in RC_TOL.items()}
    wc = worst_case(rc(), RC, RC_TOL, freq=freq)
    assert wc.method == "all corners" and wc.corners == 16
    for k, (lo, hi) in _brute_force(rc(), RC, tol, freq).items():
        assert wc.extremes[k][0] == pytest.approx(min(lo, wc.nominal[k]), rel=1e-10, abs=1e-12)
        assert wc.extremes[k][1] == pytest.approx(max(hi, wc.nominal[k]), rel=1e-10, abs=1e-12)


def test_linear_bound_approaches_the_extremes_for_small_tolerances() -> None:
    # First order: the bound differs from the true extremes by O(t²) of the figure.
    wc = worst_case(rc(), RC, dict.fromkeys(RC, "B"), freq=1e3)
    for k in ("voc", "isc", "z"):
        for a, b in zip(wc.linear[k], wc.extremes[k], strict=True):
            assert a == pytest.approx(b, rel=1e-5)


def test_sign_corners_find_the_extremes_of_a_monotonic_network(monkeypatch) -> None:
    # A resistive divider is monotonic in every resistor: the corners the sensitivity signs
    # point to are the extremes, the same as trying all of them.
    every = worst_case(rc(), RC, RC_TOL, freq=0.0)
    monkeypatch.setattr(TOLERANCE, "ALL_CORNERS_LIMIT", 2)
    signs = worst_case(rc(), RC, RC_TOL, freq=0.0)
    assert signs.method == "sensitivity signs" and signs.corners == 8
    for k in ("voc", "isc", "z"):
        assert signs.extremes[k] == pytest.approx(every.extremes[k], rel=1e-12)


def bridge() -> Circuit:
    c = Circuit()
    c.voltage_source("V1", "top", GROUND, 5)
    c.resistor("R1", "top", "a", "1k")
    c.resistor("R2", "a", GROUND, "2k")
    c.resistor("R3", "top", "b", "3k")
    c.resistor("R4", "b", GROUND, "5k")
    c.resistor("RD", "a", "b", "10k")
    return c


@pytest.mark.parametrize("distribution", ["uniform", "normal"])
def test_monte_carlo_against_first_order_propagation(distribution: str) -> None:
    t = 0.01
    spread = t / math.sqrt(3) if distribution == "uniform" else t / 3

    def u(v: float):
        return ufloat(v, abs(v) * spread)

    n = 10_000
    # divider: voc = V R2 / (R1 + R2) (common practice)
    v, r1, r2 = u(10), u(6e3), u(4e3)
    want = v * r2 / (r1 + r2)
    mc = monte_carlo(rc(), RC, {"V1": t, "R1": t, "R2": t}, n=n, distribution=distribution)
    assert mc.mean["voc"] == pytest.approx(want.nominal_value, abs=4 * want.std_dev / n ** 0.5)
    assert mc.std["voc"] == pytest.approx(want.std_dev, rel=0.04)
    # bridge: voc = V (R2/(R1+R2) - R4/(R3+R4)), z = R1||R2 + R3||R4 (common practice)
    v, r1, r2, r3, r4 = u(5), u(1e3), u(2e3), u(3e3), u(5e3)
    voc = v * (r2 / (r1 + r2) - r4 / (r3 + r4))
    z = r1 * r2 / (r1 + r2) + r3 * r4 / (r3 + r4)
    region = {"V1", "R1", "R2", "R3", "R4"}
    mc = monte_carlo(bridge(), region, dict.fromkeys(region, t), n=n, port=("a", "b"),
                     distribution=distribution, seed=7)
    assert mc.mean["voc"] == pytest.approx(voc.nominal_value, abs=4 * voc.std_dev / n ** 0.5)
    assert mc.std["voc"] == pytest.approx(voc.std_dev, rel=0.04)
    assert mc.std["z"] == pytest.approx(z.std_dev, rel=0.04)


def test_monte_carlo_is_seeded_and_counts_yield() -> None:
    first = monte_carlo(rc(), RC, RC_TOL, n=500, seed=3, limits={"voc": (3.9, 4.1)})
    again = monte_carlo(rc(), RC, RC_TOL, n=500, seed=3, limits={"voc": (3.9, 4.1)})
    assert np.array_equal(first.samples["voc"], again.samples["voc"])
    inside = (first.samples["voc"] >= 3.9) & (first.samples["voc"] <= 4.1)
    assert first.yield_pct == pytest.approx(100 * inside.mean())
    assert 0 < first.yield_pct < 100


def test_bad_requests_are_named() -> None:
    with pytest.raises(CircuitError, match="RL carries a tolerance"):
        worst_case(rc(), RC, {"RL": "F"})
    with pytest.raises(CircuitError, match="distribution"):
        monte_carlo(rc(), RC, RC_TOL, distribution="triangle")
    with pytest.raises(CircuitError, match="no figure 'gain'"):
        monte_carlo(rc(), RC, RC_TOL, limits={"gain": (0, 1)})


def wide_span() -> Circuit:
    """Values from 1 mΩ to 1 GΩ: the region's equations are solved in the wide form."""
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 10)
    c.resistor("R1", "in", "a", "1m")
    c.resistor("R2", "a", GROUND, "1G")
    c.resistor("R3", "a", "out", "5m")
    c.capacitor("C1", "out", GROUND, "100n")
    c.resistor("RL", "out", GROUND, "1k")
    return c


@pytest.mark.parametrize("freq", [0.0, 1e3, 1e6])
def test_wide_span_corners_match_brute_force(freq: float) -> None:
    region, codes = {"V1", "R1", "R2", "R3", "C1"}, {"R1": "F", "R2": "J", "R3": "J", "C1": "K"}
    tol = {n: parse_tolerance(t) for n, t in codes.items()}
    wc = worst_case(wide_span(), region, codes, freq=freq)
    for k, (lo, hi) in _brute_force(wide_span(), region, tol, freq).items():
        assert wc.extremes[k][0] == pytest.approx(min(lo, wc.nominal[k]), rel=1e-10, abs=0), k
        assert wc.extremes[k][1] == pytest.approx(max(hi, wc.nominal[k]), rel=1e-10, abs=0), k
