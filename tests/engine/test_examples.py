"""The bundled examples: each is a clean drawing whose region reduces to the equivalent that an
independent hand calculation gives (closed forms, and one sympy solve of the mesh equations).

The numbers go through the whole path a user takes: the JSON file, connectivity, build_circuit
and engine.solve.equivalent over the region's designators at the document's analysis frequency. The
closed forms read the part values from the built circuit, so they check topology and solution.
"""

from __future__ import annotations

import cmath
import math

import pytest
import sympy

from portcut import assets
from portcut.engine import GROUND, Circuit
from portcut.engine.schematic import Document, Region, build_circuit, extract, load
from portcut.engine.solve.devices import derived
from portcut.engine.solve.equivalent import Equivalent, equivalent
from portcut.engine.solve.units import parse_frequency

EXAMPLES = ["audio_crossover", "ce_stage_output", "emitter_follower", "noninverting_driver",
            "opamp_stage_output", "rc_antialias", "strain_gauge_bridge", "transformer_coupling"]
RTOL = 1e-9  # well-conditioned small circuits: the solve is good to ~1e-13 here


def opened(name: str) -> tuple[Document, Region, Circuit, float]:
    doc = load(assets.example_path(name))
    (region,) = doc.regions()
    freq = parse_frequency(doc.analysis.freq)
    return doc, region, build_circuit(doc, freq=freq), freq


def reduce(name: str, port: tuple[str, str]) -> tuple[Equivalent, Circuit, float]:
    doc, region, circuit, freq = opened(name)
    names = {doc[m].designator for m in region.members}
    return equivalent(circuit, region=names, port=port, freq=freq), circuit, freq


def value(circuit: Circuit, name: str) -> complex:
    return complex(circuit[name].value)


def exact(x: complex | float) -> sympy.Rational:
    """A real part value as the exact rational of its shortest decimal text."""
    return sympy.Rational(repr(complex(x).real))


def par(a: complex, b: complex) -> complex:
    return a * b / (a + b)


def check(eq: Equivalent, voc: complex, z: complex) -> None:
    assert eq.has_thevenin and eq.has_norton
    assert eq.voc == pytest.approx(voc, rel=RTOL)
    assert eq.z == pytest.approx(z, rel=RTOL)
    assert eq.isc == pytest.approx(voc / z, rel=RTOL)  # Norton current of the same source


def test_the_examples_are_the_eight_scenarios_and_the_demo_is_one() -> None:
    assert assets.example_names() == EXAMPLES
    assert assets.DEMO in EXAMPLES


@pytest.mark.parametrize("name", EXAMPLES)
def test_each_example_is_a_clean_drawing_with_one_region_ready_to_reduce(name: str) -> None:
    doc, region, circuit, _ = opened(name)
    assert extract(doc).warnings == ()
    assert region.members <= {p.id for p in doc.parts()}
    assert len(region.outline) >= 3
    # the region meets the rest at exactly two nets: the port is found without being given
    eq = equivalent(circuit, region={doc[m].designator for m in region.members},
                    freq=parse_frequency(doc.analysis.freq))
    labelled = {n.name for n in doc.labels() if n.style == "label"} | {"gnd"}
    assert set(eq.port) <= labelled


def test_strain_gauge_bridge() -> None:
    eq, c, _ = reduce("strain_gauge_bridge", ("adc_p", "adc_n"))
    v, r1, r2, r3, r4 = (value(c, n) for n in ("V1", "R1", "R2", "R3", "R4"))
    # common practice: bridge Thevenin equivalent, the difference of the two dividers behind
    # the two half-bridge resistances in series
    check(eq, v * (r4 / (r3 + r4) - r2 / (r1 + r2)), par(r1, r2) + par(r3, r4))
    assert eq.voc.real == pytest.approx(2.4975e-3, rel=1e-4)  # about 0.5 mV/V per 0.2 % strain


def test_the_bridge_region_swaps_the_automatic_port_to_put_adc_p_first() -> None:
    # the cut check takes the name first in sort order as plus (engine.solve.topology); the demo's
    # region is drawn to read adc_p - adc_n
    doc, region, circuit, _ = opened("strain_gauge_bridge")
    eq = equivalent(circuit, region={doc[m].designator for m in region.members})
    assert eq.port == ("adc_n", "adc_p") and region.swap


def test_rc_antialias() -> None:
    eq, c, f = reduce("rc_antialias", ("adc_in", "gnd"))
    v, r, cap = value(c, "V1"), value(c, "R1"), value(c, "C1")
    jwrc = 2j * math.pi * f * r * cap
    # common practice: a first-order RC low-pass seen from its capacitor, V/(1 + jwRC) behind
    # R/(1 + jwRC)
    check(eq, v / (1 + jwrc), r / (1 + jwrc))
    assert abs(eq.voc) == pytest.approx(1 / math.sqrt(1 + (f / 15_915.494)**2), rel=1e-6)


def test_ce_stage_output() -> None:
    eq, c, _ = reduce("ce_stage_output", ("collector", "gnd"))
    v, rs, rc = value(c, "V1"), value(c, "R1"), value(c, "R4")
    q = derived(c.devices["Q1"])
    # the transistor's bias point gives gm = I_C / V_T, rπ = β / gm, ro = V_A / I_C
    # (common practice; Sedra & Smith, Microelectronic Circuits, from memory)
    vt = 1.380649e-23 * 300 / 1.602176634e-19
    gm, rpi, ro = 1e-3 / vt, 100 / (1e-3 / vt), 100 / 1e-3
    assert (q["gm"], q["rpi"], q["ro"]) == pytest.approx((gm, rpi, ro), rel=1e-12)
    # common practice: hybrid-pi small-signal model, v_be = v rpi/(rs + rpi); the collector
    # current gm v_be flows into the collector node's load ro || Rc, so voc = -gm v_be (ro || Rc)
    # and the output resistance is ro || Rc
    vbe = v * rpi / (rs + rpi)
    check(eq, -gm * vbe * par(ro, rc), par(ro, rc))


def test_emitter_follower() -> None:
    eq, c, _ = reduce("emitter_follower", ("emitter", GROUND))
    v, rs, re = value(c, "V1"), value(c, "R1"), value(c, "R2")
    q = derived(c.devices["Q1"])
    gm, rpi, ro, beta = q["gm"], q["rpi"], q["ro"], q["beta"]
    # common practice (hybrid-π, collector at signal ground): looking into the emitter,
    # (rπ + R_S) / (β + 1), in parallel with ro and the emitter resistor; the open-circuit
    # voltage is v (β + 1) R / (R_S + rπ + (β + 1) R) with R = ro ∥ R_E
    load = par(ro, re)
    check(eq, v * (beta + 1) * load / (rs + rpi + (beta + 1) * load),
          par((rpi + rs) / (beta + 1), load))
    # the usual estimate 1/gm + R_S / (β + 1) of the follower's own output resistance
    assert par(1 / gm + rs / (beta + 1), load) == pytest.approx(eq.z.real, rel=0.01)


def test_noninverting_driver() -> None:
    eq, c, _ = reduce("noninverting_driver", ("out", GROUND))
    v, rf, rg = value(c, "V1"), value(c, "R1"), value(c, "R2")
    u = derived(c.devices["U1"])
    a0, rin, rout = u["a0"], u["rin"], u["rout"]
    # DC nodal analysis of the finite op-amp (gain A0 on the input difference behind Rout, Rin
    # across the inputs; common practice): with the source zeroed the feedback divider returns
    # b = G_F / (G_F + G_G + G_in) of the output to the inverting input, so
    # 1/Z = (1 + A0 b) / Rout + (1 - b) / R_F
    gf, gg, gi = 1 / rf, 1 / rg, 1 / rin
    b = gf / (gf + gg + gi)
    z = 1 / ((1 + a0 * b) / rout + (1 - b) / rf)
    # open circuit: the inverting input settles at v_n with
    # v_n (G_F + G_G + G_in) = G_F v_o + G_in v and
    # v_o (1/Rout + G_F) = A0 (v - v_n) / Rout + G_F v_n (solved exactly by sympy)
    vn, vo = sympy.symbols("vn vo")
    gf_, gg_, gi_, vs, a, ro_ = map(exact, (gf, gg, gi, v, a0, rout))
    sol = sympy.solve([vn * (gf_ + gg_ + gi_) - gf_ * vo - gi_ * vs,
                       vo * (1 / ro_ + gf_) - a * (vs - vn) / ro_ - gf_ * vn], [vn, vo])
    check(eq, complex(sol[vo]), z)
    # the closed-loop output resistance R_out / (1 + A0 β_fb), β_fb = R_G / (R_F + R_G), is the
    # leading term (common practice)
    assert eq.z.real == pytest.approx(rout / (1 + a0 * rg / (rf + rg)), rel=1e-3)
    assert eq.voc.real == pytest.approx(v * (1 + rf / rg), rel=1e-3)


def test_audio_crossover() -> None:
    eq, c, f = reduce("audio_crossover", ("tweeter", "gnd"))
    w = 2 * math.pi * f
    v, zc, zl = value(c, "V1"), 1 / (1j * w * value(c, "C2")), 1j * w * value(c, "L2")
    # common practice: the tweeter's second-order high-pass (series C, shunt L) fed by an ideal
    # amplifier; the woofer branch across the amplifier does not change what the tweeter sees
    check(eq, v * zl / (zc + zl), par(zc, zl))


def test_opamp_stage_output() -> None:
    eq, c, f = reduce("opamp_stage_output", ("out", "gnd"))
    v, r1, r2, c1, r3 = (value(c, n) for n in ("V1", "R1", "R2", "C1", "R3"))
    zf = par(r2, 1 / (2j * math.pi * f * c1))
    # common practice: ideal inverting amplifier, gain -Zf/R1, zero output impedance, so the
    # stage is seen as -v Zf/R1 behind the isolation resistor
    check(eq, -v * zf / r1, r3)


def test_transformer_coupling() -> None:
    eq, c, f = reduce("transformer_coupling", ("secondary", "gnd"))
    v, r1, l1, l2, k = (value(c, n) for n in ("V1", "R1", "L1", "L2", "CP1"))
    # Independent sympy solve of the two mesh equations of coupled coils (dots at the top
    # ends, so M adds for currents entering both dots): primary v = (R1 + jwL1) i1 + jwM i2,
    # secondary v2 = jwL2 i2 + jwM i1. Open: i2 = 0. Driven: 1 A into the secondary with the
    # source shorted (v = 0), and v2 is the impedance.
    i1, i2, v2, vs = sympy.symbols("i1 i2 v2 vs")
    jw = sympy.I * 2 * sympy.pi * exact(f)
    m = exact(k) * sympy.sqrt(exact(l1) * exact(l2))
    mesh = [sympy.Eq(vs, (exact(r1) + jw * exact(l1)) * i1 + jw * m * i2),
            sympy.Eq(v2, jw * exact(l2) * i2 + jw * m * i1)]
    open_port = sympy.solve([e.subs({i2: 0, vs: exact(v)}) for e in mesh], [i1, v2])
    driven = sympy.solve([e.subs({i2: 1, vs: 0}) for e in mesh], [i1, v2])
    voc, z = complex(open_port[v2]), complex(driven[v2])
    check(eq, voc, z)
    # the same as common practice's reflected impedance, jwL2 + (wM)^2 / (R1 + jwL1)
    w, mm = 2 * math.pi * f, k * cmath.sqrt(l1 * l2)
    assert z == pytest.approx(1j * w * l2 + (w * mm)**2 / (r1 + 1j * w * l1), rel=1e-12)
