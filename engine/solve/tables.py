"""Tabular exports of results: the sweep as CSV, shared by the command line and the window."""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Iterable

from .equivalent import Equivalent
from .units import UNDEFINED, denoised

__all__ = ["SWEEP_COLUMNS", "sweep_csv"]

# (name, unit, result field, the existence flag that makes it defined)
_QUANTITIES = (("Voc", "V", "voc", "has_thevenin"), ("Isc", "A", "isc", "has_norton"),
               ("Z", "ohm", "z", "has_thevenin"))

#: CSV columns: frequency, then real part, imaginary part, magnitude and angle (degrees) of
#: the open-circuit voltage, the short-circuit current and the impedance.
SWEEP_COLUMNS: list[str] = ["f (Hz)"] + [
    column for name, unit, _, _ in _QUANTITIES
    for column in (f"Re {name} ({unit})", f"Im {name} ({unit})", f"|{name}| ({unit})",
                   f"arg {name} (deg)")]


def sweep_csv(rows: Iterable[Equivalent]) -> str:
    """The equivalents at each frequency as CSV text (:data:`SWEEP_COLUMNS`, full float
    precision); a quantity whose form does not exist there, or is not finite, has its four
    cells read :data:`~engine.solve.units.UNDEFINED`."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(SWEEP_COLUMNS)
    for eq in rows:
        row = [repr(float(eq.freq))]
        for _, _, key, exists in _QUANTITIES:
            value = denoised(getattr(eq, key))
            if getattr(eq, exists) and math.isfinite(abs(value)):
                row += [repr(value.real), repr(value.imag), repr(abs(value)),
                        repr(math.degrees(math.atan2(value.imag, value.real)))]
            else:
                row += [UNDEFINED] * 4
        writer.writerow(row)
    return buffer.getvalue()
