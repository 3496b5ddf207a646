"""Adjoint sensitivities (engine/solve/sensitivity.py) against closed forms and central differences.

Closed forms of the divider are common practice (differentiate V R2 / (R1 + R2) and R1 R2 /
(R1 + R2)). Central differences (f(p (1 + h)) - f(p (1 - h))) / (2 h p) carry an error of order
h^2 plus rounding / h; with h = 1e-5 both stay below ~1e-7 relative here.
"""

from __future__ import annotations

import cmath

import numpy as np
import pytest
from circuits import divider

from portcut.engine import GROUND, Circuit, CircuitError, equivalent, influence, sensitivity, sweep
from portcut.engine.solve.sensitivity import sensitivity_sweep

H = 1e-5
FD_RTOL = 1e-6


def mixed() -> Circuit:
    """Every valued kind, two controlled sources in branch form (a CCVS reads R1's current)."""
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 2)
    c.resistor("R1", "in", "a", "1k")
    c.capacitor("C1", "a", GROUND, "47n")
    c.inductor("L1", "a", "b", "10m")
    c.inductor("L2", "c", GROUND, "22m")
    c.coupling("CP21", "L1", "L2", 0.6)
    c.resistor("R2", "c", GROUND, "330")
    c.impedance("Z1", "b", "out", 40 + 25j)
    c.vcvs("DS21", "d", GROUND, "c", GROUND, 3)
    c.resistor("R3", "d", "out", "2k2")
    c.ccvs("DS23", "e", GROUND, "R1", 50)
    c.resistor("R4", "e", "out", "4k7")
    c.vccs("DS22", GROUND, "out", "a", GROUND, "0.1m")
    c.cccs("DS24", GROUND, "out", "R1", 0.5)
    c.current_source("I1", GROUND, "out", "1m")
    c.resistor("R5", "out", GROUND, "10k")
    c.resistor("RL", "out", GROUND, "1k")
    return c


MIXED = {p.name for p in mixed()} - {"RL"}


def test_divider_closed_forms() -> None:
    # Common practice: voc = V R2/(R1+R2), z = R1 R2/(R1+R2), isc = V/R1.
    v, r1, r2 = 10.0, 6e3, 4e3
    s = sensitivity(divider(v, r1, r2), {"V1", "R1", "R2"})
    assert s["R2"].dvoc == pytest.approx(v * r1 / (r1 + r2) ** 2, rel=1e-12, abs=0)
    assert s["R1"].dvoc == pytest.approx(-v * r2 / (r1 + r2) ** 2, rel=1e-12, abs=0)
    assert s["R1"].dz == pytest.approx((r2 / (r1 + r2)) ** 2, rel=1e-12, abs=0)
    assert s["R1"].disc == pytest.approx(-v / r1 ** 2, rel=1e-12, abs=0)
    assert s["V1"].dvoc == pytest.approx(r2 / (r1 + r2), rel=1e-12, abs=0)
    assert s["V1"].svoc == pytest.approx(1.0, rel=1e-12, abs=0)  # voc is proportional to V
    assert abs(s["R2"].disc) < 1e-20  # isc = V/R1 does not depend on R2
    # normalised: (p / X) dX/dp; R1 and R2 move voc by equal and opposite shares
    assert s["R1"].svoc == pytest.approx(-s["R2"].svoc, rel=1e-12, abs=0)


def _central(c: Circuit, region: set[str], name: str, freq: float) -> tuple[complex, ...]:
    p = c[name].value
    up = equivalent(c.with_value(name, p * (1 + H)), region, freq=freq)
    down = equivalent(c.with_value(name, p * (1 - H)), region, freq=freq)
    step = 2 * H * p
    return ((up.voc - down.voc) / step, (up.isc - down.isc) / step, (up.z - down.z) / step)


@pytest.mark.parametrize("freq", [0.0, 1e3, 50e3])
def test_every_kind_against_central_differences(freq: float) -> None:
    c = mixed()
    s = sensitivity(c, MIXED, ("out", GROUND), freq=freq)
    assert set(s) == MIXED
    for name in sorted(MIXED):
        want = _central(c, MIXED, name, freq)
        got = (s[name].dvoc, s[name].disc, s[name].dz)
        for field, g, w in zip(("dvoc", "disc", "dz"), got, want, strict=True):
            scale = max(abs(getattr(t, field)) * abs(t.value) for t in s.values()) / abs(
                s[name].value)
            assert abs(g - w) <= FD_RTOL * max(abs(w), scale), f"{name} {field} at {freq} Hz"


def test_sweep_matches_single_frequencies() -> None:
    c, freqs = mixed(), [0.0, 100.0, 1e4]
    swept = sensitivity_sweep(c, MIXED, freqs, ("out", GROUND))
    eqs = sweep(c, MIXED, freqs, ("out", GROUND))
    for i, f in enumerate(freqs):
        one = sensitivity(c, MIXED, ("out", GROUND), freq=f)
        for name, s in one.items():
            assert swept[name].dz[i] == pytest.approx(s.dz, rel=1e-12, abs=1e-300)
            assert swept[name].svoc[i] == pytest.approx(s.svoc, rel=1e-12, abs=0, nan_ok=True)
    # the normalised figure is (p / X) dX/dp with X from the sweep itself
    r1 = swept["R1"]
    assert np.allclose(r1.sz, r1.value * r1.dz / eqs.z, rtol=1e-12)


def test_influence_ranks_the_dominant_part_first() -> None:
    # A 10 Ω resistor in series with 10 kΩ: the large one sets voc and z.
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 1)
    c.resistor("RA", "in", "m", "10")
    c.resistor("RB", "m", "out", "10k")
    c.resistor("RC", "out", GROUND, "10k")
    s = sensitivity(c, {"V1", "RA", "RB", "RC"}, ("out", GROUND))
    ranked = sorted(s.values(), key=influence, reverse=True)
    assert ranked[-1].name == "RA"


def test_no_thevenin_form_is_declined_with_a_reason() -> None:
    c = Circuit()
    c.current_source("I1", GROUND, "out", "1m")
    c.resistor("RL", "out", GROUND, "1k")
    with pytest.raises(CircuitError, match="no Thevenin form"):
        sensitivity(c, {"I1"}, ("out", GROUND))


def test_norton_figures_undefined_where_z_is_zero() -> None:
    c = Circuit()
    c.voltage_source("V1", "out", GROUND, 3)
    c.resistor("RL", "out", GROUND, "1k")
    s = sensitivity(c, {"V1"}, ("out", GROUND))
    assert s["V1"].dvoc == 1
    assert cmath.isnan(s["V1"].disc)


def test_sweep_of_a_wide_span_matches_single_frequencies() -> None:
    # values 1 mΩ to 1 GΩ: every point in the wide form, batched over the sweep. Compared as
    # normalised figures (% per %): 1e-12 absolute is far below any shown, and where a figure is
    # exactly 0 (isc does not depend on Z1 across the port) both carry rounding of that size
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 1)
    c.resistor("R1", "in", "a", "1m")
    c.resistor("R2", "a", GROUND, "1G")
    c.capacitor("C1", "a", "b", "10n")
    c.inductor("L1", "b", "out", "1u")
    c.impedance("Z1", "out", GROUND, 0.005 + 0.002j)
    c.resistor("RL", "out", GROUND, "10k")
    region, freqs = {"V1", "R1", "R2", "C1", "L1", "Z1"}, [0.0, 50.0, 1e4, 1e7]
    swept = sensitivity_sweep(c, region, freqs, ("out", GROUND))
    for i, f in enumerate(freqs):
        for name, s in sensitivity(c, region, ("out", GROUND), freq=f).items():
            for field in ("svoc", "sisc", "sz"):
                got, want = getattr(swept[name], field)[i], getattr(s, field)
                assert got == pytest.approx(want, rel=1e-9, abs=1e-12, nan_ok=True), \
                    f"{name} {field} at {f} Hz"
