"""Joining: the graph of a sheet's nodes (pins, wires, junctions), its connected components,
and which nodes a few moved ones come to touch.

Grid points are exact integers, so every test is an equality; no pairwise comparison of
elements: joints are sorted by grid row and column and each wire segment finds the joints on it
by binary search.
"""

from __future__ import annotations

import numpy as np

from ...solve.branches import components as graph_components
from .sheet import _Sheet


def joint_arrays(sheet: _Sheet) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """x, y and graph node of everything that joins whatever passes through its point: pins,
    wire ends, junctions."""
    n_pins, n_wires = sheet.pin_count, len(sheet.wires)
    vertices, ends, junction_xy = sheet.vertices, sheet.ends, sheet.junction_xy
    return (np.concatenate([sheet.pin_x, vertices[ends, 0], junction_xy[:, 0]]),
            np.concatenate([sheet.pin_y, vertices[ends, 1], junction_xy[:, 1]]),
            np.concatenate([np.arange(n_pins), n_pins + sheet.vertex_wire[ends],
                            n_pins + n_wires + np.arange(len(sheet.junctions))]))


def components(sheet: _Sheet, label_pairs: np.ndarray,
               nodes: np.ndarray | None = None) -> tuple[int, np.ndarray]:
    """The connected components of the sheet's graph, or of the part of it on ``nodes``
    (ascending graph nodes that no edge of the graph leaves): their number and the component
    of each node (of ``nodes``), numbered in order of each one's lowest node.

    ``label_pairs`` (2, n) joins net markers by name.
    """
    xs, ys, joint_nodes = joint_arrays(sheet)
    vertices, vertex_wire, n_pins = sheet.vertices, sheet.vertex_wire, sheet.pin_count
    if nodes is None:
        size = n_pins + len(sheet.wires) + len(sheet.junctions)
        local = None
    else:
        size = len(nodes)
        local = np.full(n_pins + len(sheet.wires) + len(sheet.junctions), -1, dtype=np.int64)
        local[nodes] = np.arange(size)
        keep = local[joint_nodes] >= 0
        xs, ys, joint_nodes = xs[keep], ys[keep], joint_nodes[keep]
        keep = local[n_pins + vertex_wire] >= 0
        vertices, vertex_wire = vertices[keep], vertex_wire[keep]
        label_pairs = label_pairs[:, local[label_pairs[0]] >= 0]
    joints = _Joints(xs, ys, joint_nodes, vertices)
    pairs = np.concatenate([joints.edges, *joints.segment_edges(vertices, vertex_wire, n_pins),
                            label_pairs], axis=1)
    if local is not None:
        pairs = local[pairs]
    # the engine's component search: a union-find where the graph is small (a patch), SciPy's
    # where building its sparse graph pays
    labels = graph_components(size, pairs[0], pairs[1])
    return (int(labels.max()) + 1 if size else 0), labels


def touched(sheet: _Sheet, moved: np.ndarray, label_pairs: np.ndarray) -> np.ndarray:
    """Every graph node that a ``moved`` node (ascending) joins directly on ``sheet``, the
    moved ones included: at a moved joint point, on a segment through one, on a moved wire's
    segment, or sharing a marker name with a moved marker."""
    xs, ys, joint_nodes = joint_arrays(sheet)
    is_moved = np.zeros(sheet.pin_count + len(sheet.wires) + len(sheet.junctions), dtype=bool)
    is_moved[moved] = True
    mine = is_moved[joint_nodes]
    px, py = xs[mine], ys[mine]  # the moved joint points
    found = [moved, joint_nodes[((xs[:, None] == px) & (ys[:, None] == py)).any(axis=1)]]
    vertex_wire = sheet.vertex_wire
    same = vertex_wire[1:] == vertex_wire[:-1]
    a, b = sheet.vertices[:-1][same], sheet.vertices[1:][same]
    wire = sheet.pin_count + vertex_wire[:-1][same]
    straight = (a[:, 0] == b[:, 0]) | (a[:, 1] == b[:, 1])  # a slanted segment joins at its ends
    lo, hi = np.minimum(a, b)[straight], np.maximum(a, b)[straight]
    wire = wire[straight]
    found.append(wire[_covers(lo, hi, px, py).any(axis=1)])
    mine = is_moved[wire]
    found.append(joint_nodes[_covers(lo[mine], hi[mine], xs, ys).any(axis=0)])
    marked = label_pairs[:, is_moved[label_pairs[0]] | is_moved[label_pairs[1]]]
    found.append(marked.ravel())
    return np.unique(np.concatenate(found))


def _covers(lo: np.ndarray, hi: np.ndarray, xs: np.ndarray, ys: np.ndarray) -> np.ndarray:
    """Whether each straight segment (rows of ``lo``, ``hi``) covers each point (columns)."""
    return ((lo[:, :1] <= xs) & (xs <= hi[:, :1]) & (lo[:, 1:] <= ys) & (ys <= hi[:, 1:]))


class _Axis:
    """Maps coordinates on one axis to small indices that keep their order and equality."""

    def __init__(self, values: np.ndarray, rank: bool) -> None:
        self.table = np.unique(values) if rank else None
        self.low = int(values.min()) if values.size else 0
        if self.table is not None:
            self.size = len(self.table)
        else:
            self.size = int(values.max()) - self.low + 1 if values.size else 1

    def index(self, values: np.ndarray) -> np.ndarray:
        if self.table is None:
            return values - self.low
        return np.searchsorted(self.table, values)


class _Joints:
    """The points where things join, indexed for segment queries.

    Grid points are encoded as one int64 key, row by row and column by column, so that a
    horizontal or vertical segment covers one contiguous run of keys in the sorted tables.
    ``edges`` join every node to the first node at its point.
    """

    def __init__(self, xs: np.ndarray, ys: np.ndarray, nodes: np.ndarray,
                 vertices: np.ndarray) -> None:
        all_x, all_y = np.concatenate([xs, vertices[:, 0]]), np.concatenate([ys, vertices[:, 1]])
        span = [int(v.max()) - int(v.min()) + 1 if v.size else 1 for v in (all_x, all_y)]
        rank = span[0] * span[1] >= 2**62  # far-apart coordinates would overflow the key
        self.x, self.y = _Axis(all_x, rank), _Axis(all_y, rank)
        keys = self.row_key(xs, ys)
        order = np.argsort(keys, kind="stable")
        keys, nodes = keys[order], nodes[order]
        first = np.ones(keys.size, dtype=bool)
        first[1:] = keys[1:] != keys[:-1]
        self.row_keys, self.row_nodes = keys[first], nodes[first]
        self.edges = np.stack([nodes, self.row_nodes[np.cumsum(first) - 1]])
        col = self.col_key(xs[order][first], ys[order][first])
        by_col = np.argsort(col, kind="stable")
        self.col_keys, self.col_nodes = col[by_col], self.row_nodes[by_col]

    def row_key(self, xs: np.ndarray, ys: np.ndarray) -> np.ndarray:
        return self.y.index(ys) * self.x.size + self.x.index(xs)

    def col_key(self, xs: np.ndarray, ys: np.ndarray) -> np.ndarray:
        return self.x.index(xs) * self.y.size + self.y.index(ys)

    def segment_edges(self, vertices: np.ndarray, vertex_wire: np.ndarray,
                      base: int) -> list[np.ndarray]:
        """Edges joining each wire (node ``base + index``) to every joint point on its segments."""
        same = vertex_wire[1:] == vertex_wire[:-1]
        a, b = vertices[:-1][same], vertices[1:][same]
        wire = base + vertex_wire[:-1][same]
        horizontal = a[:, 1] == b[:, 1]
        vertical = (a[:, 0] == b[:, 0]) & ~horizontal
        out = []
        for mask, key, keys, nodes in ((horizontal, self.row_key, self.row_keys, self.row_nodes),
                                       (vertical, self.col_key, self.col_keys, self.col_nodes)):
            lo, hi = np.minimum(a[mask], b[mask]), np.maximum(a[mask], b[mask])
            start = np.searchsorted(keys, key(lo[:, 0], lo[:, 1]), side="left")
            stop = np.searchsorted(keys, key(hi[:, 0], hi[:, 1]), side="right")
            hits = stop - start
            offset = np.arange(int(hits.sum())) - np.repeat(np.cumsum(hits) - hits, hits)
            out.append(np.stack([np.repeat(wire[mask], hits),
                                 nodes[np.repeat(start, hits) + offset]]))
        return out


