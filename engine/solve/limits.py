"""Limits on the port figures and the share of boards that meet them (the yield).

A limit is a (low, high) pair on one figure of engine/solve/tolerance.py's FIGURES, either end
None for open; a board meets it where low <= value <= high. The yield is the per-cent share of
boards meeting every limit given; each figure's own share is kept beside it, so a panel can say
which limit costs the boards. Pure functions over sample arrays: a new limit needs no new draw.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from ..errors import CircuitError

__all__ = ["Limit", "Yield", "board_yield", "within"]

Limit = tuple[float | None, float | None]


@dataclass(frozen=True, slots=True)
class Yield:
    """``overall``: per cent of boards within every limit; ``per_figure``: per cent within
    that figure's limit alone (only figures with a limit); ``boards``: how many were judged."""

    overall: float
    per_figure: dict[str, float]
    boards: int


def within(values: np.ndarray, limit: Limit, figure: str = "figure") -> np.ndarray:
    """Where ``values`` meet ``limit`` (a boolean array; nan never does). Raises CircuitError
    naming ``figure`` where low lies above high."""
    low, high = limit
    if low is not None and high is not None and low > high:
        raise CircuitError(f"the {figure} limits run from {low:g} up to {high:g}: make the "
                           "lower limit no more than the upper one")
    values = np.asarray(values, dtype=float)
    inside = np.isfinite(values)
    if low is not None:
        inside &= values >= low
    if high is not None:
        inside &= values <= high
    return inside


def board_yield(samples: Mapping[str, np.ndarray], limits: Mapping[str, Limit]) -> Yield:
    """The yield of ``samples`` ({figure: values per board}, equal lengths) under ``limits``
    ({figure: (low, high)}); a figure whose limit is (None, None) is left out. With no limit
    every board passes."""
    lengths = {len(v) for v in samples.values()}
    if len(lengths) != 1 or 0 in lengths:
        raise CircuitError("a yield needs the same, non-zero number of samples of every figure")
    (boards,) = lengths
    unknown = sorted(set(limits) - set(samples))
    if unknown:
        raise CircuitError(f"no samples of {unknown[0]!r} to limit; the figures are "
                           f"{', '.join(samples)}")
    every = np.ones(boards, dtype=bool)
    shares = {}
    for name, limit in limits.items():
        if limit == (None, None):
            continue
        inside = within(samples[name], limit, name)
        shares[name] = 100.0 * float(inside.mean())
        every &= inside
    return Yield(100.0 * float(every.mean()), shares, boards)
