"""Sensitivities of a region whose part values span 1 mΩ to 1 GΩ, against exact central
differences.

Reference: tests/references/sympy_nodal.py solves the region exactly (Gaussian rationals) with
one part's value moved to p (1 + h) and to p (1 - h); (X(p (1 + h)) - X(p (1 - h))) / (2 h p) is
then exact but for the truncation of the central difference, of order h² (h = 1e-9: 1e-18,
common practice), far below what is checked. The normalised sensitivities (p / X) dX/dp are held
within 1e-9 of it, relative, plus 1e-15 absolute for the figures that are exactly 0 (a few units
of double rounding, eps = 2.2e-16). Stamped as admittances, the 5 mΩ part's current is the
difference of two node voltages that agree to eleven digits, and its sensitivities keep about
six of them (the assertion's first failure without the engine's wide form); the frequency is
given as an exact rational angular frequency so the reference stays in the rationals.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import replace

import numpy as np
import pytest
import sympy
import sympy_nodal
from sympy_nodal import exact, port_reference

from portcut.engine import GROUND, Circuit, sensitivity
from portcut.engine.solve import mna

H = sympy.Rational(1, 10 ** 9)
RTOL, ATOL = 1e-9, 1e-15
PORT = ("out", GROUND)


def wide_span() -> Circuit:
    """A source behind 1 mΩ, 1 GΩ and 1 MΩ shunts, a 5 mΩ impedance part, a transconductance
    of 1 nS; the load RL stays outside."""
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 1)
    c.resistor("R1", "in", "a", "1m")
    c.resistor("R2", "a", GROUND, "1G")
    c.resistor("R3", "a", "b", "10")
    c.capacitor("C1", "b", GROUND, "10n")
    c.inductor("L1", "b", "out", "1u")
    c.resistor("R4", "out", GROUND, "1M")
    c.impedance("Z1", "out", "c", 0.005)
    c.resistor("R5", "c", GROUND, "1k")
    c.vccs("DS1", GROUND, "out", "a", GROUND, "1n")
    c.resistor("RL", "out", GROUND, "10k")
    return c


@pytest.mark.parametrize("omega", [0, 6000])  # rad/s
def test_wide_span_sensitivities_equal_exact_central_differences(
        omega: int, monkeypatch: pytest.MonkeyPatch) -> None:
    # the solution scales are not read here, and cost a 40-digit evaluation each
    monkeypatch.setattr(sympy_nodal, "_largest", lambda values: 0.0)
    monkeypatch.setattr(sympy_nodal, "_smallest_impedance", lambda parts, s: 0.0)
    c = wide_span()
    region = {p.name for p in c} - {"RL"}
    freq = sympy.Integer(omega) / (2 * sympy.pi)
    got = sensitivity(c, region, PORT, float(freq))
    parts = list(c.subcircuit(region))
    nominal = port_reference(parts, PORT, freq)
    for i, part in enumerate(parts):
        value = exact(part.value)
        up, down = (port_reference([*parts[:i], replace(part, value=value * (1 + d)),
                                    *parts[i + 1:]], PORT, freq) for d in (H, -H))
        for figure in ("voc", "isc", "z"):
            slope = (getattr(up, figure) - getattr(down, figure)) / (2 * H)  # p dX/dp
            want = complex(sympy.N(slope / getattr(nominal, figure), 30))
            value_got = getattr(got[part.name], "s" + figure)
            assert cmath.isfinite(value_got)
            assert abs(value_got - want) <= RTOL * abs(want) + ATOL, \
                f"{part.name} s{figure}: got {value_got!r}, exact {want!r}"


def test_the_region_spans_past_the_nodal_form() -> None:
    # the premise of the test above: the equivalent solves this region in the wide form
    c = wide_span()
    netlist = mna.Netlist(list(c.subcircuit({p.name for p in c} - {"RL"})))
    assert netlist.wide(np.array([0.0, 6000 / (2 * math.pi)])).all()
