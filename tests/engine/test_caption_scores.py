"""The two ways caption placement scores a spot (engine.schematic.obstacles) against the
definition: the weighted sum of the areas the spot shares with each box, summed pair by pair."""

from __future__ import annotations

import numpy as np
import pytest

from portcut.engine.schematic.obstacles import CellIndex, fixed_scores


def _boxes(rng: np.random.Generator, n: int, size: float) -> np.ndarray:
    corner = rng.uniform(-30.0, 30.0, (n, 2))
    extent = rng.uniform(0.05, size, (n, 2))
    return np.hstack([corner, corner + extent])


def _by_definition(rooms: np.ndarray, boxes: np.ndarray, weights: np.ndarray) -> np.ndarray:
    out = np.zeros(len(rooms))
    for r, room in enumerate(rooms):
        for box, weight in zip(boxes, weights, strict=True):
            w = min(room[2], box[2]) - max(room[0], box[0])
            h = min(room[3], box[3]) - max(room[1], box[1])
            if w > 1e-9 and h > 1e-9:
                out[r] += weight * w * h
    return out


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_the_sheet_pass_and_the_cell_index_score_by_definition(seed: int) -> None:
    rng = np.random.default_rng(seed)
    # small boxes like captions and bodies, and long thin ones like wires across many cells
    boxes = np.vstack([_boxes(rng, 150, 3.0), _boxes(rng, 20, 40.0)])
    boxes[-20:, 3] = boxes[-20:, 1] + 0.05
    kinds = rng.choice(["body", "wire"], len(boxes))
    weights = np.where(kinds == "body", 100.0, 20.0)
    rooms = _boxes(rng, 200, 4.0)
    expected = _by_definition(rooms, boxes, weights)
    assert np.count_nonzero(expected) > 20  # the check sees overlaps, not only empty spots
    assert np.allclose(fixed_scores(rooms, boxes, weights), expected, rtol=1e-12, atol=1e-9)
    index = CellIndex()
    for i, (box, kind) in enumerate(zip(boxes.tolist(), kinds, strict=True)):
        index.add(str(kind), tuple(box), f"e{i}", (-1, 0))
    bulk = CellIndex.of([(str(k), tuple(b), f"e{i}", (-1, 0))
                         for i, (b, k) in enumerate(zip(boxes.tolist(), kinds, strict=True))])
    for room, want in zip(rooms.tolist(), expected, strict=True):
        assert index.score(tuple(room)) == pytest.approx(want, rel=1e-12, abs=1e-9)
        assert bulk.score(tuple(room)) == pytest.approx(want, rel=1e-12, abs=1e-9)


def test_a_shared_edge_is_no_overlap() -> None:
    boxes = np.array([[0.0, 0.0, 2.0, 2.0]])
    rooms = np.array([[2.0, 0.0, 4.0, 2.0], [1.0, 1.0, 3.0, 3.0]])
    assert fixed_scores(rooms, boxes, np.array([100.0])).tolist() == [0.0, 100.0]
