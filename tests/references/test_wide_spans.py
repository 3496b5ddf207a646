"""Port equivalents of circuits whose values span 1 mΩ–1 GΩ and 1 pF–1 F, at DC, 1 Hz and
1 GHz, against the exact reference (tests/references/sympy_nodal.py: sympy tableau solve).

The circuits are well conditioned in their part values (a relative change of one unit in the
last place of any value moves the exact answer by about as much), so a formulation that keeps
its digits meets RTOL = 1e-9 however wide the span; the engine's reported error bound, where it
is larger, must itself stay below RTOL on these circuits. Each value is compared on the size of
the whole solution where it cancels to (near) zero, as in test_against_sympy.py.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import sympy
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from sympy_nodal import PortReference, port_reference
from test_properties import ALL_MOTIFS, PASSIVE_MOTIFS, Grown, Ranges, regions, with_load

from portcut.engine import GROUND, Circuit, Equivalent, SingularCircuitError, equivalent, sweep

RTOL = 1e-9
WIDE_SETTINGS = settings(max_examples=30, deadline=None,
                         suppress_health_check=[HealthCheck.too_slow])


def _decades(low: int, high: int, mantissas: tuple[float, ...]) -> st.SearchStrategy[float]:
    """m * 10**k for k in [low, high]: decimal values, so the exact reference stays rational."""
    return st.sampled_from([float(f"{m}e{k}") for k in range(low, high + 1) for m in mantissas])


WIDE = Ranges(
    ohms=_decades(-3, 9, (1, 2.2, 4.7)).filter(lambda r: r <= 1e9),
    farads=_decades(-12, 0, (1, 2.2, 4.7)).filter(lambda c: c <= 1),
    # squares of powers of ten keep sqrt(L1 L2) of a coupling rational
    henries=st.sampled_from([10.0 ** (2 * k) for k in range(-5, 2)]),
)
#: Angular frequencies (rad/s, rational) of DC, about 1 Hz and about 1 GHz.
OMEGAS = (0, 2 * math.pi, 2 * math.pi * 1e9)


def _exact_freq(w: float) -> sympy.Expr:
    """The exact frequency (Hz) of the float angular frequency ``w``."""
    return sympy.Rational(repr(w)) / (2 * sympy.pi) if w else sympy.Integer(0)


def _within(got: complex, want: complex, floor: float, bound: float) -> bool:
    return abs(got - want) <= max(RTOL * max(abs(want), floor), bound)


def assert_matches(eq: Equivalent, ref: PortReference, tight: bool = True) -> None:
    """Forms as the reference has them; every value within RTOL or the reported bound, and
    (``tight``: a circuit known to be well conditioned) those bounds themselves within RTOL of
    z and of voc (or of the solution's voltage scale where voc cancels)."""
    voc, isc, z = ref.numeric()
    assert (eq.has_thevenin, eq.has_norton) == (ref.has_thevenin, ref.has_norton), (eq, ref)
    if tight and cmath.isfinite(z) and z != 0:
        assert eq.z_error <= RTOL * abs(z), eq
    if tight and ref.has_thevenin:
        assert eq.voc_error <= RTOL * max(abs(voc), ref.voltage_scale), eq
    if ref.has_thevenin:
        assert _within(eq.voc, voc, ref.voltage_scale, eq.voc_error), (eq.voc, voc)
    if ref.has_norton:
        assert _within(eq.isc, isc, ref.current_scale, 0.0), (eq.isc, isc)
    if ref.has_thevenin and ref.has_norton:
        assert _within(eq.z, z, 0.0, eq.z_error), (eq.z, z)
    elif ref.has_thevenin:
        assert eq.z == 0
    else:
        assert cmath.isinf(eq.z)


def _reference(parts: Circuit, port: tuple[str, str], w: float) -> PortReference | None:
    try:
        return port_reference(parts, port, _exact_freq(w))
    except ValueError:  # exactly singular, e.g. a net floating behind a capacitor at DC
        return None


def _compare(circuit: Circuit, region: set[str], port: tuple[str, str], parts: Circuit,
             tight: bool = True) -> None:
    """Single-frequency results and one sweep over all three frequencies against the
    reference, and so the sweep's points against the single-frequency calls."""
    freqs = [w / (2 * math.pi) for w in OMEGAS]
    refs = [_reference(parts, port, w) for w in OMEGAS]
    try:
        swept = sweep(circuit, region, freqs, port=port)
    except SingularCircuitError:
        assert None in refs, "the engine refused a sweep of a region with unique solutions"
        swept = None
    for i, (f, ref) in enumerate(zip(freqs, refs, strict=True)):
        try:
            single = equivalent(circuit, region=region, port=port, freq=f)
        except SingularCircuitError:
            assert ref is None, f"the engine refused a region with a unique solution at {f} Hz"
            continue
        if ref is None:  # the engine may still decide a port that a floating net leaves alone
            continue
        assert_matches(single, ref, tight)
        if swept is not None:
            assert_matches(swept[i], ref, tight)


@st.composite
def ladders(draw: st.DrawFn) -> tuple[Circuit, tuple[str, str]]:
    """A source behind a ladder of random series and shunt R, L, C; the port at its end."""
    c = Circuit()
    c.voltage_source("V1", "n0", GROUND, 1)
    kinds = st.sampled_from(["resistor", "capacitor", "inductor"])
    value = {"resistor": WIDE.ohms, "capacitor": WIDE.farads, "inductor": WIDE.henries}
    stages = draw(st.integers(1, 5))
    for i in range(stages):
        here, there = f"n{i}", f"n{i + 1}"
        series, shunt = draw(kinds), draw(kinds)
        getattr(c, series)(f"S{i}", here, there, draw(value[series]))
        getattr(c, shunt)(f"P{i}", there, GROUND, draw(value[shunt]))
    return c, (f"n{stages}", GROUND)


@WIDE_SETTINGS
@given(case=ladders())
def test_wide_ladders_match_the_exact_reference(case: tuple[Circuit, tuple[str, str]]) -> None:
    # reference: exact sympy tableau solve of the same ladder (sympy_nodal.py)
    c, port = case
    _compare(c, set(c.names), port, c)


@WIDE_SETTINGS
@given(g=regions(motifs=PASSIVE_MOTIFS, ranges=WIDE))
def test_wide_passive_regions_match_the_exact_reference(g: Grown) -> None:
    # reference: exact sympy tableau solve of the region's parts (sympy_nodal.py): every value
    # within RTOL of it, and the bounds the engine reports within RTOL too (passive parts
    # whose values are exact decimals make a well-conditioned region, module docstring)
    _compare(with_load(g), g.region, g.port, g.circuit)


@WIDE_SETTINGS
@given(g=regions(motifs=ALL_MOTIFS, ranges=WIDE))
def test_wide_regions_of_every_kind_match_the_exact_reference(g: Grown) -> None:
    # reference: exact sympy tableau solve of the region's parts (sympy_nodal.py); gains and
    # op-amp stages can make a random draw ill conditioned, where the reported bound is the
    # honest measure: every value within RTOL or within it
    assume(len(g.circuit) < 20)
    _compare(with_load(g), g.region, g.port, g.circuit, tight=False)


def test_four_resistors_spanning_twelve_decades() -> None:
    # 1 GΩ from a 1 V source into a node with 1 GΩ to ground, 1 mΩ on to the port, 1 GΩ across
    # it. Exact by hand (common practice, series/parallel reduction): z = (1 GΩ || 1 GΩ) + 1 mΩ
    # in parallel with 1 GΩ, voc = 0.5 V * (1 GΩ / (1 GΩ + 0.5 GΩ + 1 mΩ)).
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 1)
    c.resistor("R1", "in", "a", 1e9)
    c.resistor("R2", "a", GROUND, 1e9)
    c.resistor("R3", "a", "out", 1e-3)
    c.resistor("R4", "out", GROUND, 1e9)
    eq = equivalent(c, set(c.names), ("out", GROUND))
    z = 1 / (1 / (0.5e9 + 1e-3) + 1 / 1e9)
    voc = 0.5 * 1e9 / (1e9 + 0.5e9 + 1e-3)
    assert abs(eq.z - z) <= RTOL * z
    assert abs(eq.voc - voc) <= RTOL * voc
    assert eq.z_error <= RTOL * z
    assert eq.voc_error <= RTOL * voc


def test_large_capacitor_and_small_inductor_in_both_orientations() -> None:
    # 1 F in series with 1 mH at 100 MHz: z = 1/(j w C) + j w L (common practice), whichever
    # way round the port is taken (the sign of z does not depend on the orientation).
    w = 2 * math.pi * 1e8
    want = 1 / (1j * w * 1.0) + 1j * w * 1e-3
    for port in (("a", "b"), ("b", "a")):
        c = Circuit()
        c.capacitor("C1", "a", "m", 1.0)
        c.inductor("L1", "m", "b", 1e-3)
        eq = equivalent(c, set(c.names), port, 1e8)
        assert eq.has_thevenin and eq.has_norton, port
        assert abs(eq.z - want) <= RTOL * abs(want), (port, eq.z)
        assert np.isfinite(eq.z_error)


def test_a_wide_system_whose_unscaled_pivots_lost_seven_digits() -> None:
    # A random passive region at 1 GHz (0.1 F beside 470 MΩ, a span of 3e17): unequilibrated,
    # SuperLU's pivots left z 1e-7 off even after refinement; reference: exact sympy tableau
    # solve (sympy_nodal.py), and the bound must hold it to RTOL.
    c = Circuit()
    for name, a, b, ohms in [("R1", "n1", GROUND, 0.01), ("R2", "n2", "n1", 0.1),
                             ("R3", "n3", GROUND, 1e7), ("R4", "n4", GROUND, 4.7e8),
                             ("R5", "n5", "n4", 0.0047), ("W6", "n5", "n2", 0.0),
                             ("R7", "n3", "n2", 1e7), ("R11", "x10", "n3", 0.1),
                             ("R12", "n3", "n5", 1e7), ("R15", "x14", GROUND, 22.0)]:
        c.resistor(name, a, b, ohms)
    c.capacitor("C8", "n5", GROUND, 0.1)
    c.inductor("L9", "n1", "x10", 1e-4)
    c.inductor("L13", "n3", "x14", 1e-6)
    port, w = ("n5", "n3"), 2 * math.pi * 1e9
    ref = port_reference(c, port, _exact_freq(w))
    loaded = c.copy()
    loaded.resistor("LOAD", *port, 1e3)
    assert_matches(equivalent(loaded, set(c.names), port, w / (2 * math.pi)), ref)


def test_a_high_gain_inverting_stage_in_the_wide_form_is_not_taken_as_singular() -> None:
    # 1 mΩ in and 100 kΩ back around an ideal op-amp (a gain of 1e8) beside a 1 mΩ port part:
    # well posed, but its equilibrated wide-form factor has a pivot of 6.6e-12 of the largest;
    # reference: exact sympy tableau solve (sympy_nodal.py), at DC, 1 Hz and 1 GHz.
    c = Circuit()
    c.resistor("W1", "n1", GROUND, 0.0)
    c.resistor("R2", "n2", GROUND, 1e-3)
    c.opamp("U5", GROUND, "x3", "x4")
    c.resistor("R6", "x3", GROUND, 1e-3)
    c.resistor("R7", "x3", "x4", 1e5)
    c.resistor("R8", "x4", "n1", 1e-3)
    _compare(with_load_across(c, ("n2", "n1")), set(c.names), ("n2", "n1"), c)


def with_load_across(c: Circuit, port: tuple[str, str]) -> Circuit:
    loaded = c.copy()
    loaded.resistor("LOAD", *port, 1e3)
    return loaded
