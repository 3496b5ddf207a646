"""The result objects: one frequency's equivalent, a sweep, the power a load can take, the series
parts that realise an impedance, and the report of an equivalence check."""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass

import numpy as np

from ...errors import CircuitError
from ..units import UNDEFINED, denoised, format_complex, format_eng, format_phasor

__all__ = ["EquivalenceReport", "Equivalent", "Forms", "PowerTransfer", "Realisation", "Sweep"]


@dataclass(frozen=True, slots=True)
class Forms:
    """Formatted text of the three port quantities."""

    voc: str
    isc: str
    z: str


@dataclass(frozen=True, slots=True)
class Realisation:
    """The series circuit with impedance z at ``freq``: ``resistance`` (Ω, may be negative) plus
    an ``"inductor"`` of ``value`` henries, a ``"capacitor"`` of ``value`` farads, or nothing
    (``kind`` None, ``value`` None)."""

    resistance: float
    kind: str | None
    value: float | None
    freq: float

    def parts_text(self) -> str:
        """The series parts as every output writes them: ``"100 Ω in series with 4.7 µF"``,
        ``"4.7 µF"`` (no resistance), ``"100 Ω"`` (no reactance)."""
        parts = [format_eng(self.resistance, "Ω", 4)] if self.resistance != 0 or \
            self.kind is None else []
        if self.kind is not None:
            parts.append(format_eng(self.value, "H" if self.kind == "inductor" else "F", 4))
        return " in series with ".join(parts)


@dataclass(frozen=True, slots=True)
class PowerTransfer:
    """Maximum power transfer into a load across the port.

    ``load``: the conjugate-matched load (Ω) and ``power`` the average power it takes (W);
    ``resistive_load`` = |z| is the best purely resistive load and ``resistive_power`` its power.
    All four are None where no finite maximum exists (Re z <= 0 or no Thevenin form), and
    ``reason`` says why. ``basis``: "peak" (source phasors are amplitudes) or "rms" above DC;
    "dc" at DC, where values are steady and peak and rms do not apply.
    """

    basis: str
    load: complex | None
    power: float | None
    resistive_load: float | None
    resistive_power: float | None
    reason: str | None

    def described(self) -> str:
        """The basis as reports name it: "DC", "peak phasors" or "rms phasors"."""
        return "DC" if self.basis == "dc" else f"{self.basis} phasors"


@dataclass(frozen=True, slots=True)
class Equivalent:
    """Thevenin and Norton equivalents of a region at one frequency.

    ``port`` (plus, minus); ``freq`` in Hz (0 = DC); ``voc`` V, ``isc`` A, ``z`` Ω (complex).
    ``z == 0`` without a Norton form, ``z`` infinite without a Thevenin form; ``voc``/``isc``
    are infinite or nan where their form does not exist. Phasors are peak values.
    ``voc_error`` (V) and ``z_error`` (Ω) bound the floating-point error of ``voc`` and ``z``
    (the residual of the solve carried to the port, plus a rounding of every matrix entry; see
    docs/method.md); nan where the quantity does not exist.
    """

    port: tuple[str, str]
    freq: float
    voc: complex
    isc: complex
    z: complex
    has_thevenin: bool
    has_norton: bool
    voc_error: float = math.nan
    z_error: float = math.nan

    def rectangular(self, digits: int = 4) -> Forms:
        """``voc``, ``isc``, ``z`` as ``a + j b`` with SI prefixes (``"1 kΩ + j 2 kΩ"``)."""
        return self._forms(format_complex, digits)

    def polar(self, digits: int = 4) -> Forms:
        """``voc``, ``isc``, ``z`` as magnitude ∠ degrees (``"3.33 V ∠ 0°"``)."""
        return self._forms(format_phasor, digits)

    def _forms(self, fmt, digits: int) -> Forms:
        def text(value: complex, unit: str, exists: bool = True) -> str:
            if not exists or cmath.isnan(value):
                return UNDEFINED
            return fmt(denoised(value), unit, digits)
        return Forms(text(self.voc, "V", self.has_thevenin), text(self.isc, "A", self.has_norton),
                     text(self.z, "Ω"))

    def realisation(self) -> Realisation:
        """The series R + L or R + C (or pure R) whose impedance is ``z`` at ``freq``.

        Raises CircuitError where z is infinite, or reactive at DC (a fixed complex impedance
        part), which no R, L or C realises.
        """
        if not self.has_thevenin:
            raise CircuitError("the region has no Thevenin form (infinite impedance), so no "
                               "series R + L or R + C realises it")
        z = denoised(self.z)  # a noise-level R or X is no part
        r, x = z.real, z.imag
        if x == 0:
            return Realisation(r, None, None, self.freq)
        if self.freq == 0:
            raise CircuitError(f"Z = {format_complex(self.z, 'Ω')} is reactive at DC (a fixed "
                               "impedance part), which no inductor or capacitor realises")
        w = 2 * math.pi * self.freq
        kind, value = ("inductor", x / w) if x > 0 else ("capacitor", -(1 / w) / x)
        if not (math.isfinite(value) and value > 0):
            raise CircuitError(
                f"z = {self.z.real:.4g} {self.z.imag:+.4g}j Ω at {self.freq:.4g} Hz needs a series "
                f"{kind} outside the range of double precision; analyse at a frequency nearer "
                "the parts' own scale")
        return Realisation(r, kind, value, self.freq)

    def max_power(self, basis: str = "peak") -> PowerTransfer:
        """Power into a conjugate-matched load: |voc|^2 / (8 Re z) for peak phasors, / (4 Re z)
        for rms ones and at DC (whatever ``basis``); and into the best resistive load |z|."""
        if basis not in ("peak", "rms"):
            raise CircuitError(f"basis must be 'peak' or 'rms', not {basis!r}")
        if self.freq == 0:
            basis = "dc"
        reason = _no_maximum(self)
        if reason:
            return PowerTransfer(basis, None, None, None, None, reason)
        share = 0.5 if basis == "peak" else 1.0  # a peak phasor's average power is half
        v, r_best = abs(self.voc), abs(self.z)
        # as products of ratios, so that no intermediate square overflows or underflows
        matched = share * (v / 2) * (v / (2 * self.z.real))
        into_r = v / abs(self.z + r_best)
        resistive = share * into_r * (into_r * r_best)
        if not (math.isfinite(matched) and math.isfinite(resistive)):
            return PowerTransfer(basis, None, None, None, None,
                                 f"the available power with |voc| = {v:.4g} V and "
                                 f"Re z = {self.z.real:.4g} Ω exceeds the range of "
                                 "double precision")
        return PowerTransfer(basis, self.z.conjugate(), matched, r_best, resistive, None)


def _no_maximum(eq: Equivalent) -> str | None:
    if not eq.has_thevenin:
        return ("no finite maximum: the region has no Thevenin form (infinite impedance), so a "
                "larger load always takes more power")
    if eq.z == 0:
        return ("no finite maximum: the impedance is zero (an ideal voltage source), so a "
                "smaller load always takes more power")
    if eq.z.real < 0:
        return (f"no finite maximum: Re Z = {format_eng(eq.z.real, 'Ω')} is negative, the region "
                "is active and can deliver unbounded power")
    if eq.z.real == 0:
        return ("no finite maximum: Z is purely reactive, so the conjugate load cancels it and "
                "the current is unbounded")
    return None


@dataclass(frozen=True, slots=True, eq=False)
class Sweep:
    """Equivalents over frequency: read-only arrays, one entry per point of ``freqs`` (Hz);
    ``voc_error`` and ``z_error`` as in :class:`Equivalent`."""

    port: tuple[str, str]
    freqs: np.ndarray
    voc: np.ndarray
    isc: np.ndarray
    z: np.ndarray
    has_thevenin: np.ndarray
    has_norton: np.ndarray
    voc_error: np.ndarray
    z_error: np.ndarray

    def __len__(self) -> int:
        return len(self.freqs)

    def __getitem__(self, i: int) -> Equivalent:
        return Equivalent(self.port, float(self.freqs[i]), complex(self.voc[i]),
                          complex(self.isc[i]), complex(self.z[i]), bool(self.has_thevenin[i]),
                          bool(self.has_norton[i]), float(self.voc_error[i]),
                          float(self.z_error[i]))


@dataclass(frozen=True, slots=True)
class EquivalenceReport:
    """Largest deviation between an original and a reduced circuit, over the loads tried.

    ``voltage_abs`` (V): the largest |ΔV| of a net outside the region, ``worst_net`` that net;
    ``current_abs`` (A): the largest |ΔI| of the port current (into the region at plus).
    The relative figures divide by the largest magnitude of any net voltage (for
    ``voltage_rel``) or branch current (for ``current_rel``) in either whole solution over all
    cases (0 when everything is exactly 0). Voltages are measured from ground where the outside
    reaches it, else from the port's minus net. ``cases`` describes the loads tried,
    ``worst_case`` the one with the largest relative deviation.
    """

    port: tuple[str, str]
    freq: float
    cases: tuple[str, ...]
    voltage_abs: float
    voltage_rel: float
    current_abs: float
    current_rel: float
    worst_net: str | None
    worst_case: str

    def within(self, rtol: float) -> bool:
        """True when both relative deviations are at most ``rtol``."""
        return self.voltage_rel <= rtol and self.current_rel <= rtol
