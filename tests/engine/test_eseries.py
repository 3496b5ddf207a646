"""Standard values (engine/solve/eseries.py) against the IEC 60063 E-series tables.

The E12 and E24 decades are IEC 60063's as printed in the standard (from memory); E96 is checked
against the rule stated there, each value 10^(i/96) rounded to three figures, and against a few
values recalled from the table (from memory). Best pairs are checked against an exhaustive search
over every pair of values within the decades around the target.
"""

from __future__ import annotations

import itertools
import math

import pytest

from portcut.engine import CircuitError
from portcut.engine.solve.eseries import SERIES, best_pair, nearest, realise


def test_tables() -> None:
    # IEC 60063 (from memory): E12 and E24 as printed; E24 holds eight values that differ from
    # rounding 10^(i/24) to two figures (2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2).
    assert SERIES["E12"] == (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)
    assert SERIES["E24"][::2] == SERIES["E12"]
    rounded = [round(10 ** (i / 24), 1) for i in range(24)]
    assert sum(a != b for a, b in zip(SERIES["E24"], rounded, strict=True)) == 8
    assert [round(100 * v) for v in SERIES["E96"]] == [round(100 * 10 ** (i / 96))
                                                       for i in range(96)]
    for v in (1.0, 1.02, 4.99, 9.76):  # from memory: 100, 102, 499, 976 are E96 values
        assert v in SERIES["E96"]


@pytest.mark.parametrize(("wanted", "series", "want"), [
    (4900.0, "E12", 4700.0),   # 4.7 and 5.6 either side: 4.9/4.7 < 5.6/4.9
    (4900.0, "E24", 5100.0),   # 4.7 and 5.1: 5.1/4.9 = 1.041 < 4.9/4.7 = 1.043
    (350.2, "E96", 348.0),
    (0.047, "E12", 0.047),
    (9.6, "E24", 10.0),        # across the decade: 10/9.6 < 9.6/9.1
    (1e-9 * 2.3, "E24", 2.4e-9),
])
def test_nearest_in_ratio(wanted: float, series: str, want: float) -> None:
    got = nearest(wanted, series)
    assert got.value == pytest.approx(want, rel=1e-12)
    assert got.error_pct == pytest.approx((want - wanted) / wanted * 100, rel=1e-9)


def _exhaustive(wanted: float, series: str) -> float:
    decades = range(math.floor(math.log10(wanted)) - 3, math.floor(math.log10(wanted)) + 5)
    values = [v * 10.0 ** k for k in decades for v in SERIES[series]]
    best = math.inf
    for a, b in itertools.combinations_with_replacement(values, 2):
        for got in (a + b, a * b / (a + b)):
            best = min(best, abs(got - wanted))
    return best


@pytest.mark.parametrize(("wanted", "series"), [(2400.0, "E12"), (350.2, "E24"),
                                                (12345.0, "E12"), (1.0e-7 * 3.21, "E96")])
def test_best_pair_is_the_exhaustive_optimum(wanted: float, series: str) -> None:
    pair = best_pair(wanted, series)
    made = pair.a + pair.b if pair.connection == "series" else pair.a * pair.b / (pair.a + pair.b)
    assert made == pytest.approx(pair.value, rel=1e-12)
    assert abs(pair.value - wanted) == pytest.approx(_exhaustive(wanted, series), rel=1e-9,
                                                     abs=1e-30)
    assert abs(pair.error_pct) <= abs(nearest(wanted, series).error_pct)


def test_reactive_realisation() -> None:
    # Common practice: X = 2 pi f L for an inductor, -1 / (2 pi f C) for a capacitor.
    f = 1e3
    ind = realise(complex(98, 2 * math.pi * f * 4.6e-3), f, "E12")
    assert (ind.resistance.value, ind.kind) == (100.0, "inductor")
    assert ind.reactive.value == pytest.approx(4.7e-3)
    assert ind.realised == pytest.approx(complex(100, 2 * math.pi * f * 4.7e-3))
    cap = realise(complex(1e3, -1 / (2 * math.pi * f * 97e-9)), f, "E24")
    assert cap.kind == "capacitor" and cap.reactive.value == pytest.approx(100e-9)
    assert realise(470 + 0j, 0.0).kind is None


def test_bad_input_is_named() -> None:
    with pytest.raises(CircuitError, match="E series"):
        nearest(100, "E7")
    with pytest.raises(CircuitError, match="positive"):
        nearest(-5)
    with pytest.raises(CircuitError, match="above 0 Hz"):
        realise(10 + 5j, 0.0)
