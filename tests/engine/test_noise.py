"""Thermal noise at the port (engine/solve/noise.py).

References: Nyquist, "Thermal agitation of electric charge in conductors", Phys. Rev. 32, 1928:
a passive network (R, L, C, couplings) in equilibrium at T shows at its terminals the open-
circuit noise density e_n² = 4 k T Re Z at every frequency (held on a sweep too, and on a region
whose values span 1 mΩ to 1 GΩ). k = 1.380649e-23 J/K is exact in the
2019 SI (BIPM SI Brochure, 9th edition). The brute-force check drives each noisy part's own
noise through the engine's equivalent one part at a time, independent of the adjoint: as the
series source 4 k T Re(Z) inside the part, which outside the part equals the parallel current
4 k T Re(Y) (Thevenin and Norton, common practice) and keeps the noise in the part's current
where that current controls a source.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from portcut.engine import GROUND, Circuit, CircuitError, equivalent, sweep
from portcut.engine.solve.noise import (
    BOLTZMANN,
    noise,
    noise_band,
    noise_sweep,
    thermal_conductance,
)

T = 290.0


def passive() -> Circuit:
    """R, L, C, a coupled pair and a lossy impedance part; the load RL stays outside."""
    c = Circuit()
    c.resistor("R1", "a", GROUND, "1k")
    c.inductor("L1", "a", "b", "10m")
    c.resistor("R2", "b", "out", "220")
    c.capacitor("C1", "out", GROUND, "100n")
    c.inductor("L2", "s", GROUND, "4m")
    c.coupling("CP21", "L1", "L2", 0.7)
    c.resistor("R3", "s", GROUND, "47")
    c.impedance("Z1", "out", GROUND, 300 + 150j)
    c.resistor("RL", "out", GROUND, "10k")
    return c


PASSIVE = {"R1", "L1", "R2", "C1", "L2", "CP21", "R3", "Z1"}


def test_a_lone_resistor_shows_4ktr() -> None:
    # Common practice: 1 kΩ at 290 K gives sqrt(4 k T R) = 4.00 nV/√Hz.
    c = Circuit()
    c.resistor("R1", "out", GROUND, "1k")
    c.resistor("RL", "out", GROUND, "1k")
    n = noise(c, {"R1"}, freq=1e3, temp_k=T)
    assert n.en == pytest.approx(math.sqrt(4 * BOLTZMANN * T * 1e3), rel=1e-12, abs=0)
    assert n.en == pytest.approx(4.0e-9, rel=1e-3, abs=0)
    assert n.in_ == pytest.approx(n.en / 1e3, rel=1e-12, abs=0)


@pytest.mark.parametrize("freq", [0.0, 50.0, 1e3, 20e3, 1e6])
def test_passive_region_obeys_nyquist(freq: float) -> None:
    c = passive()
    eq = equivalent(c, PASSIVE, ("out", GROUND), freq=freq)
    n = noise(c, PASSIVE, ("out", GROUND), freq=freq, temp_k=T)
    assert n.en ** 2 == pytest.approx(4 * BOLTZMANN * T * eq.z.real, rel=1e-9, abs=0)


def active() -> Circuit:
    """A stage with gain and feedback: Nyquist does not hold, the brute-force sum does."""
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 1)
    c.resistor("R1", "in", "a", "10k")
    c.resistor("R2", "a", GROUND, "4k7")
    c.vcvs("DS21", "b", GROUND, "a", GROUND, 20)
    c.resistor("R3", "b", "out", "1k")
    c.resistor("R4", "out", "a", "100k")
    c.cccs("DS24", GROUND, "out", "R2", 3)
    c.impedance("Z1", "out", GROUND, 2e3 - 500j)
    c.resistor("RL", "out", GROUND, "10k")
    return c


ACTIVE = {"V1", "R1", "R2", "DS21", "R3", "R4", "DS24", "Z1"}


@pytest.mark.parametrize("freq", [0.0, 1e3])
def test_adjoint_sum_equals_brute_force_over_the_parts(freq: float) -> None:
    c = active()
    n = noise(c, ACTIVE, ("out", GROUND), freq=freq, temp_k=T)
    brute = _brute_force_shares(c, freq)
    assert set(n.shares) == set(brute)
    for name, share in brute.items():
        assert n.shares[name] == pytest.approx(share, rel=1e-9, abs=0)
    assert n.en ** 2 == pytest.approx(sum(brute.values()), rel=1e-9, abs=0)
    assert list(n.shares) == sorted(n.shares, key=lambda k: -n.shares[k])


def _brute_force_shares(c: Circuit, freq: float) -> dict[str, float]:
    """Each noisy part of ACTIVE's share of en², the part's noise driven alone (sources quiet)
    through the engine's equivalent: a 1 V source in series inside the part (its current,
    which DS24 reads for R2, carries the noise), weighed by the series density 4kT Re(Z)."""
    quiet = c.replaced(replace(p, value=0.0) for p in c if p.is_independent_source)
    shares = {}
    for part in (c[name] for name in sorted(ACTIVE)):
        if thermal_conductance(part) == 0:
            continue
        a, b = part.nodes
        driven = quiet.replaced([replace(part, nodes=(a, "inside"))])
        driven.voltage_source("VNOISE", "inside", b, 1)
        voc = equivalent(driven, ACTIVE | {"VNOISE"}, ("out", GROUND), freq=freq).voc
        shares[part.name] = 4 * BOLTZMANN * T * complex(part.value).real * abs(voc) ** 2
    return shares


def _rc() -> Circuit:
    c = Circuit()
    c.resistor("R1", "out", GROUND, "10k")
    c.capacitor("C1", "out", GROUND, "10n")
    c.resistor("RL", "out", GROUND, "1M")
    return c


@pytest.mark.parametrize("band", [(20.0, 20e3), (0.0, 10.0), (0.0, 1e6)])
def test_band_of_an_rc_matches_the_closed_form(band: tuple[float, float]) -> None:
    # Common practice: e_n² = 4kTR / (1 + (w R C)²), whose integral from f1 to f2 is
    # (4kTR / (2 pi R C)) (atan(2 pi f2 R C) - atan(2 pi f1 R C)); to infinity, kT/C.
    r, cap = 1e4, 1e-8
    lo, hi = band
    got = noise_band(_rc(), {"R1", "C1"}, lo, hi, temp_k=T)
    tau = 2 * math.pi * r * cap
    want = 4 * BOLTZMANN * T * r / tau * (math.atan(tau * hi) - math.atan(tau * lo))
    assert got.vrms ** 2 == pytest.approx(want, rel=1e-5, abs=0)
    assert got.freqs[0] == lo and got.freqs[-1] == hi


def test_bad_input_is_named() -> None:
    with pytest.raises(CircuitError, match="temperature"):
        noise(_rc(), {"R1", "C1"}, temp_k=-3)
    with pytest.raises(CircuitError, match="lower to a higher"):
        noise_band(_rc(), {"R1", "C1"}, "20k", "20")
    c = Circuit()
    c.current_source("I1", GROUND, "out", "1m")
    c.resistor("RL", "out", GROUND, "1k")
    with pytest.raises(CircuitError, match="no Thevenin form"):
        noise(c, {"I1"}, ("out", GROUND))


SWEEP = [0.0, 10.0, 1e3, 20e3, 1e6]


def test_noise_sweep_obeys_nyquist_at_every_frequency() -> None:
    c = passive()
    z = sweep(c, PASSIVE, SWEEP, ("out", GROUND)).z
    en, in_ = noise_sweep(c, PASSIVE, SWEEP, ("out", GROUND), temp_k=T)
    np.testing.assert_allclose(en ** 2, 4 * BOLTZMANN * T * z.real, rtol=1e-9)
    np.testing.assert_allclose(in_, en / np.abs(z), rtol=1e-12)


def wide_span() -> Circuit:
    """A passive region whose values span 1 mΩ to 1 GΩ: the equivalent takes the wide form."""
    c = Circuit()
    c.resistor("R1", "a", GROUND, "1m")
    c.resistor("R2", "a", "b", "1G")
    c.capacitor("C1", "b", GROUND, "10n")
    c.resistor("R3", "b", "out", "2m")
    c.inductor("L1", "out", "c", "1u")
    c.resistor("R4", "c", GROUND, "1M")
    c.impedance("Z1", "out", GROUND, 0.5 + 0.2j)
    c.resistor("RL", "out", GROUND, "10k")
    return c


def test_wide_span_noise_obeys_nyquist() -> None:
    c = wide_span()
    region = {p.name for p in c} - {"RL"}
    z = sweep(c, region, SWEEP, ("out", GROUND)).z
    en, _ = noise_sweep(c, region, SWEEP, ("out", GROUND), temp_k=T)
    np.testing.assert_allclose(en ** 2, 4 * BOLTZMANN * T * z.real, rtol=1e-9)


@pytest.mark.parametrize("freq", [0.0, 1e3, 1e5])
def test_noise_sweep_equals_the_brute_force_sum_over_the_parts(freq: float) -> None:
    c = active()
    en, in_ = noise_sweep(c, ACTIVE, [1.0, freq], ("out", GROUND), temp_k=T)
    total = sum(_brute_force_shares(c, freq).values())
    assert en[1] ** 2 == pytest.approx(total, rel=1e-9, abs=0)
    z = equivalent(c, ACTIVE, ("out", GROUND), freq=freq).z
    assert in_[1] == pytest.approx(math.sqrt(total) / abs(z), rel=1e-9, abs=0)
    single = noise(c, ACTIVE, ("out", GROUND), freq=freq, temp_k=T)
    assert single.en == pytest.approx(en[1], rel=1e-12, abs=0)
