"""Limits and yield (engine/solve/limits.py) against a direct count with numpy, and against the
yield monte_carlo reports for the same limits."""

from __future__ import annotations

import numpy as np
import pytest
from circuits import divider

from portcut.engine import CircuitError
from portcut.engine.solve.limits import board_yield, within
from portcut.engine.solve.tolerance import monte_carlo

RNG = np.random.default_rng(7)
SAMPLES = {"voc": RNG.normal(5.0, 0.1, 1000), "z": RNG.uniform(90.0, 110.0, 1000)}


def test_yield_is_the_share_counted_directly() -> None:
    got = board_yield(SAMPLES, {"voc": (4.9, None), "z": (None, 105.0)})
    voc, z = SAMPLES["voc"], SAMPLES["z"]
    assert got.per_figure["voc"] == 100 * np.count_nonzero(voc >= 4.9) / 1000
    assert got.per_figure["z"] == 100 * np.count_nonzero(z <= 105.0) / 1000
    assert got.overall == 100 * np.count_nonzero((voc >= 4.9) & (z <= 105.0)) / 1000
    assert got.boards == 1000


def test_open_limits_pass_every_board() -> None:
    got = board_yield(SAMPLES, {"voc": (None, None)})
    assert got.overall == 100.0 and got.per_figure == {}


def test_nan_never_meets_a_limit() -> None:
    assert within(np.array([1.0, np.nan, 3.0]), (0.0, None)).tolist() == [True, False, True]


def test_limits_back_to_front_are_named() -> None:
    with pytest.raises(CircuitError, match=r"z limits .* lower limit no more than the upper"):
        board_yield(SAMPLES, {"z": (110.0, 90.0)})


def test_an_unknown_figure_is_named() -> None:
    with pytest.raises(CircuitError, match="'isc'"):
        board_yield(SAMPLES, {"isc": (0.0, 1.0)})


def test_equals_the_yield_of_the_draw_itself() -> None:
    # the divider: Voc = 10 V · 4k/10k = 4 V, Z = 6k ∥ 4k = 2.4 kΩ (common practice)
    limits = {"voc": (3.95, 4.05), "z": (None, 2.43e3)}
    m = monte_carlo(divider(), {"V1", "R1", "R2"}, {"R1": "J", "R2": "J"}, n=5000,
                    limits=limits)
    got = board_yield(m.samples, limits)
    assert 0 < got.overall < got.per_figure["voc"] < 100
    assert got.overall == pytest.approx(m.yield_pct, abs=1e-12)
