"""Standard part values of the IEC 60063 E series: the nearest value, the best series or parallel
pair of two, and a complex impedance realised as a standard R plus a standard L or C.

"Nearest" is nearest in ratio (on a log scale), as the series themselves are spaced; errors are
``(realised - wanted) / wanted`` in per cent.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass

import numpy as np

from ..errors import CircuitError

__all__ = ["SERIES", "Pair", "Standard", "StandardRealisation", "best_pair", "nearest",
           "realise"]

_E96 = (100, 102, 105, 107, 110, 113, 115, 118, 121, 124, 127, 130, 133, 137, 140, 143, 147,
        150, 154, 158, 162, 165, 169, 174, 178, 182, 187, 191, 196, 200, 205, 210, 215, 221, 226,
        232, 237, 243, 249, 255, 261, 267, 274, 280, 287, 294, 301, 309, 316, 324, 332, 340, 348,
        357, 365, 374, 383, 392, 402, 412, 422, 432, 442, 453, 464, 475, 487, 499, 511, 523, 536,
        549, 562, 576, 590, 604, 619, 634, 649, 665, 681, 698, 715, 732, 750, 768, 787, 806, 825,
        845, 866, 887, 909, 931, 953, 976)
#: The values of one decade, 1 <= v < 10, per series.
SERIES: dict[str, tuple[float, ...]] = {
    "E12": (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2),
    "E24": (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7,
            5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1),
    "E96": tuple(v / 100 for v in _E96),
}
#: Decades searched on either side of the wanted value for the second part of a pair.
_PAIR_DECADES = 3


@dataclass(frozen=True, slots=True)
class Standard:
    """A standard value ``value`` standing for ``wanted``; ``error_pct`` its error in per cent."""

    wanted: float
    value: float
    error_pct: float


@dataclass(frozen=True, slots=True)
class Pair:
    """Two standard values ``a`` and ``b`` joined in ``connection`` ("series" or "parallel")
    giving ``value`` for ``wanted``; ``error_pct`` in per cent."""

    wanted: float
    connection: str
    a: float
    b: float
    value: float
    error_pct: float


@dataclass(frozen=True, slots=True)
class StandardRealisation:
    """A complex impedance as a standard resistance in series with a standard inductor
    (``kind`` "inductor", henries) or capacitor ("capacitor", farads), or none (``kind``
    None where z is real). ``resistance`` is None where Re z <= 0 (no resistor realises it)."""

    z: complex
    freq: float
    resistance: Standard | None
    kind: str | None
    reactive: Standard | None
    realised: complex


def _decade(series: str) -> np.ndarray:
    try:
        return np.array(SERIES[series])
    except KeyError:
        raise CircuitError(f"unknown E series {series!r}; choose one of "
                           f"{', '.join(SERIES)}") from None


def _check(wanted: float, what: str) -> float:
    w = float(wanted)
    if not (math.isfinite(w) and w > 0):
        raise CircuitError(f"a standard value needs a positive finite {what}, not {wanted!r}")
    return w


def _values_around(series: str, lo: float, hi: float) -> np.ndarray:
    """Every value of ``series`` from the decade holding ``lo`` to the one above ``hi``."""
    decade = _decade(series)
    first, last = math.floor(math.log10(lo)), math.floor(math.log10(hi)) + 1
    return np.concatenate([decade * 10.0 ** k for k in range(first, last + 1)])


def _nearest_of(values: np.ndarray, wanted: np.ndarray) -> np.ndarray:
    """Per entry of ``wanted``, the entry of the ascending ``values`` nearest in ratio."""
    i = np.clip(np.searchsorted(values, wanted), 1, values.size - 1)
    lower, upper = values[i - 1], values[i]
    return np.where(wanted * wanted <= lower * upper, lower, upper)  # geometric midpoint


def _standard(wanted: float, value: float) -> Standard:
    return Standard(wanted, value, (value - wanted) / wanted * 100)


def nearest(wanted: float, series: str = "E24") -> Standard:
    """The value of ``series`` ("E12", "E24", "E96") nearest ``wanted`` (> 0) in ratio."""
    w = _check(wanted, "value")
    values = _values_around(series, w, w)
    return _standard(w, float(_nearest_of(values, np.array([w]))[0]))


def best_pair(wanted: float, series: str = "E24") -> Pair:
    """The two standard values whose series or parallel combination comes nearest ``wanted``.

    For each standard value a below ``wanted`` the partner is the value nearest ``wanted - a``;
    for each above, the one nearest ``1 / (1/wanted - 1/a)``; a down to ``wanted`` / 10³ and
    up to ``wanted`` * 10³. ``a`` is the larger of the two; a tie goes to series.
    """
    w = _check(wanted, "value")
    scale = 10.0 ** _PAIR_DECADES
    values = _values_around(series, w / scale, w * scale)
    best: Pair | None = None
    for connection in ("series", "parallel"):
        a = values[(values < w) if connection == "series" else (values > w)]
        if not a.size:
            continue
        rest = w - a if connection == "series" else 1 / (1 / w - 1 / a)
        b = _nearest_of(values, rest)
        got = a + b if connection == "series" else a * b / (a + b)
        error = np.abs(got - w)
        i = int(np.argmin(error))
        if best is None or error[i] < abs(best.value - w):
            lo, hi = sorted((float(a[i]), float(b[i])))
            best = Pair(w, connection, hi, lo, float(got[i]), (float(got[i]) - w) / w * 100)
    assert best is not None  # every series has values on both sides of any positive value
    return best


def realise(z: complex, freq: float, series: str = "E24") -> StandardRealisation:
    """``z`` (Ω) at ``freq`` Hz as the nearest standard R in series with the nearest standard L
    (Im z > 0) or C (Im z < 0)."""
    z = complex(z)
    if not cmath.isfinite(z):
        raise CircuitError("an infinite impedance has no realisation in standard parts")
    if z.imag and not (math.isfinite(freq) and freq > 0):
        raise CircuitError("a reactive impedance is realised with an L or a C at a frequency "
                           "above 0 Hz")
    resistance = nearest(z.real, series) if z.real > 0 else None
    r = resistance.value if resistance else 0.0
    if z.imag == 0:
        return StandardRealisation(z, freq, resistance, None, None, complex(r))
    w = 2 * math.pi * freq
    if z.imag > 0:
        part = nearest(z.imag / w, series)
        return StandardRealisation(z, freq, resistance, "inductor", part,
                                   complex(r, w * part.value))
    part = nearest(-1 / (w * z.imag), series)
    return StandardRealisation(z, freq, resistance, "capacitor", part,
                               complex(r, -1 / (w * part.value)))
