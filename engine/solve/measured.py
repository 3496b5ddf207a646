"""A source measured on the bench: its Thevenin values (Voc, R) from terminal voltages under loads.

A linear source of open-circuit voltage Voc behind resistance R, loaded by R_L, shows
V = Voc R_L / (R_L + R); with the load current I = V / R_L that is the straight line
V = Voc - R I. So:

* two points (open circuit Voc, then V_L under one known load R_L): R = R_L (Voc / V_L - 1);
* a table of (R_L, V) pairs (R_L = inf for an open-circuit reading): the least-squares line
  V = Voc - R I over the points (I = V / R_L), with the residual and the standard
  uncertainties of Voc and R from the fit's covariance s² (AᵀA)⁻¹, s² = SSR / (n - 2). The
  covariance takes the load currents as exact; they carry the voltage noise too, so under
  loads heavier than R itself the uncertainty of R reads low (by about a fifth where a third
  of the loads are below R).

All in volts, ohms, amperes; DC (real values) only.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import CircuitError
from .units import parse_value

__all__ = ["Fit", "fit_table", "fit_two_point", "parse_table", "read_csv"]

#: How an open-circuit load is written in a table or CSV file.
OPEN_WORDS = frozenset({"inf", "open", "∞"})


@dataclass(frozen=True, slots=True)
class Fit:
    """Thevenin values from measurements. ``voc`` volts, ``r`` ohms; ``residual`` the rms
    deviation of the measured voltages from the fitted line, volts; ``u_voc`` and ``u_r`` the
    standard uncertainties (nan where the points leave no degree of freedom: two points)."""

    voc: float
    r: float
    points: int
    residual: float = 0.0
    u_voc: float = math.nan
    u_r: float = math.nan


def fit_two_point(voc: float, r_load: float, v_load: float, *, name: str = "source") -> Fit:
    """Voc and R from the open-circuit voltage and the voltage ``v_load`` under ``r_load``
    ohms: R = R_L (Voc / V_L - 1)."""
    for value, what in ((voc, "open-circuit voltage"), (r_load, "load resistance"),
                        (v_load, "voltage under load")):
        if not isinstance(value, int | float) or not math.isfinite(value):
            raise CircuitError(f"{name}: {what} must be a finite number, not {value!r}")
    if r_load <= 0:
        raise CircuitError(f"{name}: load resistance must be more than 0 Ω, not {r_load!r}")
    if v_load == 0:
        raise CircuitError(f"{name}: the voltage under load is 0, so the source has no "
                           "Thevenin resistance to find; measure under a larger load")
    r = r_load * (voc / v_load - 1)
    if r < 0:
        raise CircuitError(f"{name}: the voltage under load ({v_load:g} V) exceeds the open-"
                           f"circuit voltage ({voc:g} V) in size or sign, which gives a "
                           "negative resistance; check the readings")
    return Fit(float(voc), float(r), 2)


def fit_table(pairs: Iterable[tuple[float, float]], *, name: str = "source") -> Fit:
    """The least-squares Voc and R of (load ohms, volts) pairs; a load of inf is an
    open-circuit reading. Needs two different load currents; three or more points give the
    residual and uncertainties."""
    points = [(float(rl), float(v)) for rl, v in pairs]
    if len(points) < 2:
        raise CircuitError(f"{name}: a fit needs at least two (load, voltage) readings, "
                           f"got {len(points)}")
    for i, (rl, v) in enumerate(points, 1):
        if not (rl > 0) or not math.isfinite(v):
            raise CircuitError(f"{name}: reading {i}: the load must be more than 0 Ω (inf "
                               f"for open circuit) and the voltage finite, got ({rl}, {v})")
    loads = np.array([p[0] for p in points])
    volts = np.array([p[1] for p in points])
    current = np.where(np.isinf(loads), 0.0, volts / np.where(np.isinf(loads), 1.0, loads))
    a = np.column_stack([np.ones_like(current), -current])
    if np.ptp(current) == 0:
        raise CircuitError(f"{name}: every reading draws the same current, so R cannot be "
                           "told apart from Voc; measure under at least two different loads")
    (voc, r), *_ = np.linalg.lstsq(a, volts, rcond=None)
    deviations = volts - a @ np.array([voc, r])
    n = len(points)
    residual = float(np.sqrt(np.mean(deviations ** 2)))
    if n > 2:
        s2 = float(deviations @ deviations) / (n - 2)
        cov = s2 * np.linalg.inv(a.T @ a)
        u_voc, u_r = float(np.sqrt(cov[0, 0])), float(np.sqrt(cov[1, 1]))
    else:
        u_voc = u_r = math.nan
    return Fit(float(voc), float(r), n, residual, u_voc, u_r)


def parse_table(text: str, *, name: str = "source") -> list[tuple[float, float]]:
    """(load, voltage) pairs from text: one pair a line (or ``;``-separated), the two values
    parted by a comma, tab or spaces; SI prefixes and IEC 60062 codes read (``4k7``); ``inf``
    or ``open`` for an open-circuit load. A first line that does not read as numbers is a
    header and is skipped."""
    rows = [row for row in csv.reader(io.StringIO(text.replace(";", "\n").replace("\t", ",")))
            if any(cell.strip() for cell in row)]
    pairs = []
    for i, row in enumerate(rows, 1):
        cells = [c.strip() for c in row if c.strip()]
        if len(cells) == 1:
            cells = cells[0].split()
        try:
            if len(cells) != 2:
                raise CircuitError(f"expected two values (load, voltage), got {len(cells)}")
            load = math.inf if cells[0].lower() in OPEN_WORDS else \
                float(parse_value(cells[0], what="load").real)
            volts = float(parse_value(cells[1], what="voltage").real)
        except CircuitError as e:
            if i == 1 and not pairs:
                continue  # a header line
            raise CircuitError(f"{name}: line {i}: {e}") from None
        pairs.append((load, volts))
    return pairs


def read_csv(path: str | Path, *, name: str | None = None) -> list[tuple[float, float]]:
    """The (load, voltage) pairs of a CSV file (see :func:`parse_table`)."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except OSError as e:
        raise CircuitError(f"{path}: cannot read the file: {e.strerror or e}") from None
    except UnicodeDecodeError:
        raise CircuitError(f"{path}: not a text file (expected UTF-8 CSV)") from None
    return parse_table(text, name=name or str(path))
