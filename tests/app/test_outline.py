"""The engine's one rule of region membership (engine/schematic/outline.py) agrees with Qt's
even-odd fill, a general-purpose reference, on random outlines, self-crossing ones included."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QPolygonF

from portcut.engine.schematic.outline import contains, inside

corner = st.tuples(st.integers(-20, 20), st.integers(-20, 20))
# off the integer grid by amounts no edge between grid corners passes through at these sizes, so
# no point lies on an edge, where the two rules may differ by rounding alone
point = st.tuples(st.integers(-22, 22), st.integers(-22, 22)).map(
    lambda p: (p[0] + 0.3183, p[1] + 0.2718))


@settings(max_examples=200, deadline=None)
@given(st.lists(corner, min_size=3, max_size=12), st.lists(point, min_size=1, max_size=20))
def test_membership_matches_qt_even_odd_fill(outline, points) -> None:
    # reference: QPolygonF.containsPoint with Qt.FillRule.OddEvenFill (Qt 6 QtGui)
    polygon = QPolygonF([QPointF(x, y) for x, y in outline])
    expected = [polygon.containsPoint(QPointF(*p), Qt.FillRule.OddEvenFill) for p in points]
    assert contains(tuple(outline), np.array(points)).tolist() == expected
    assert [inside(tuple(outline), p) for p in points] == expected


def test_nothing_is_inside_an_outline_of_fewer_than_three_points() -> None:
    assert not inside(((0, 0), (4, 4)), (2, 2))
