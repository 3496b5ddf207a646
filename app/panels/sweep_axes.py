"""The sweep view's axes: a log axis ticked and labelled in engineering notation, and the values
a curve may plot (gaps where a quantity does not exist or a log axis cannot show it)."""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg

from portcut.engine.solve.units import format_eng

__all__ = ["LogAxis", "shown"]


class LogAxis(pg.AxisItem):
    """A log axis ticked at each decade and, where there is room, at 2 and 5 times it (every
    integer multiple inside a single decade), labelled in engineering notation (1 k, 200 m)."""

    def logTickValues(self, minVal, maxVal, size, stdTicks):
        lo, hi = math.floor(minVal), math.ceil(maxVal)

        def ticks(multiples) -> list[float]:
            return [d + math.log10(m) for d in range(lo, hi + 1) for m in multiples
                    if minVal <= d + math.log10(m) <= maxVal]

        decades = ticks((1,))
        room = size / max(maxVal - minVal, 1e-12)  # pixels per decade
        between = ticks((2, 5)) if room >= 90 else []
        if len(decades) + len(between) < 2:
            between = ticks(range(2, 10))
        return [(None, decades), (None, between)]

    def logTickStrings(self, values, scale, spacing):
        return [format_eng(10 ** v * scale, "", 3) for v in values]


def shown(values: np.ndarray, exists: np.ndarray, log: bool) -> np.ndarray:
    """Values to plot: nan where undefined (a gap in the curve), and where a log axis cannot
    show them."""
    out = np.where(exists & np.isfinite(values), values, np.nan)
    return np.where(out > 0, out, np.nan) if log else out
