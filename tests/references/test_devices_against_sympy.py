"""Device-part stages against the exact sympy nodal reference over their expanded primitives.

Reference: tests/references/sympy_nodal.py solves the primitive parts a device expands into
(exact rationals), so a wrong sign or stamp in an expansion shows as an O(1) difference.
"""

from __future__ import annotations

import pytest
from sympy_nodal import port_reference

from portcut.engine import GROUND, Circuit, equivalent

RTOL = 1e-9


def _emitter_follower() -> tuple[Circuit, set[str], tuple[str, str]]:
    c = Circuit()
    c.voltage_source("VS", "s", GROUND, 1)
    c.resistor("RS", "s", "b", "600")
    c.bjt("Q1", "b", GROUND, "e", ic="2m", beta=150, va=60, rx=50)
    c.resistor("RL", "e", GROUND, "1k")
    return c, {"VS", "RS", "Q1"}, ("e", GROUND)


def _noninverting() -> tuple[Circuit, set[str], tuple[str, str]]:
    c = Circuit()
    c.voltage_source("VIN", "in", GROUND, 1)
    c.opamp("U1", "in", "fb", "out", a0=2e5, gbw="3M", rin="2M", rout=50)
    c.resistor("RF", "out", "fb", "22k")
    c.resistor("RG", "fb", GROUND, "2k2")
    c.resistor("RL", "out", GROUND, "2k")
    return c, {"VIN", "U1", "RF", "RG"}, ("out", GROUND)


def _source_follower() -> tuple[Circuit, set[str], tuple[str, str]]:
    c = Circuit()
    c.voltage_source("VG", "g", GROUND, 1)
    c.mosfet("M1", "g", GROUND, "s", id="0.5m", vov=0.25, lam=0.05, cgs="2p", cgd="0.5p")
    c.resistor("RS", "s", GROUND, "4k7")
    c.resistor("RL", "s", "x", "1k")
    c.resistor("RX", "x", GROUND, "1k")
    return c, {"VG", "M1", "RS"}, ("s", GROUND)


@pytest.mark.parametrize("build", [_emitter_follower, _noninverting, _source_follower])
@pytest.mark.parametrize("freq", [0, 1e5])
def test_device_stage_matches_exact_reference(build, freq: float) -> None:
    c, region, port = build()
    eq = equivalent(c, region, port=port, freq=freq)
    voc, _isc, z = port_reference(c.subcircuit(region), port, freq).numeric()
    assert eq.voc == pytest.approx(voc, rel=RTOL)
    assert eq.z == pytest.approx(z, rel=RTOL)
