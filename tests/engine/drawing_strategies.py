"""Hypothesis strategies for drawn geometry, shared by the connectivity and file-format tests."""

from __future__ import annotations

from hypothesis import strategies as st


@st.composite
def orthogonal_polylines(draw, coordinate: st.SearchStrategy[int]) -> tuple[tuple[int, int], ...]:
    """Two to four grid points, each segment horizontal or vertical (zero length allowed)."""
    points = [(draw(coordinate), draw(coordinate))]
    for _ in range(draw(st.integers(1, 3))):
        x, y = points[-1]
        points.append((draw(coordinate), y) if draw(st.booleans()) else (x, draw(coordinate)))
    return tuple(points)
