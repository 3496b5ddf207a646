"""Small-signal device parts: derived values, expansion and closed-form stage impedances.

Relations (common practice; Sedra & Smith, Microelectronic Circuits, hybrid-π and MOSFET
small-signal models, from memory): gm = I_C / V_T with V_T = k T / q, rπ = β / gm,
ro = V_A / I_C; MOSFET gm = 2 I_D / V_ov, ro = 1 / (λ I_D).
"""

from __future__ import annotations

import json
import math

import pytest

from portcut import assets
from portcut.engine import GROUND, Circuit, CircuitError, equivalent
from portcut.engine.schematic import build_circuit, load
from portcut.engine.schematic.fileformat import dumps, loads
from portcut.engine.solve.devices import derived, thermal_voltage


def test_thermal_voltage_at_300_k() -> None:
    # k and q are exact SI values (2019 redefinition); V_T(300 K) ≈ 25.85 mV (common practice)
    assert thermal_voltage(300) == pytest.approx(0.025852, rel=1e-4)


def test_bjt_bias_point_gives_textbook_values() -> None:
    c = Circuit()
    d = c.bjt("Q1", "b", "c", "e", ic="1m", beta=100, va=50, temp_k=300)
    v = derived(d)
    vt = 1.380649e-23 * 300 / 1.602176634e-19
    assert v["gm"] == pytest.approx(1e-3 / vt, rel=1e-12)
    assert v["rpi"] == pytest.approx(100 / (1e-3 / vt), rel=1e-12)
    assert v["ro"] == pytest.approx(50e3, rel=1e-12)
    assert d.form == "bias"
    assert c.members("Q1") == ("Q1:rpi", "Q1:gm", "Q1:ro")


def test_bjt_direct_form_and_base_resistance() -> None:
    c = Circuit()
    d = c.bjt("Q2", "b", "c", "e", gm="40m", rpi="2k5", ro="50k", rx=100, cpi="10p", cmu="1p")
    assert d.form == "direct"
    assert derived(d)["beta"] == pytest.approx(100)  # β = gm rπ
    assert c.members("Q2") == ("Q2:rx", "Q2:rpi", "Q2:gm", "Q2:ro", "Q2:cpi", "Q2:cmu")
    assert c["Q2:rpi"].nodes == ("Q2:b'", "e")
    assert c["Q2:gm"].nodes == ("c", "e", "Q2:b'", "e")


def test_mosfet_bias_point_gives_textbook_values() -> None:
    c = Circuit()
    v = derived(c.mosfet("M1", "g", "d", "s", id="1m", vov=0.2, lam=0.02))
    assert v["gm"] == pytest.approx(2 * 1e-3 / 0.2)
    assert v["ro"] == pytest.approx(1 / (0.02 * 1e-3))


@pytest.mark.parametrize(("kwargs", "words"), [
    ({"ic": "1m"}, "missing current gain β"),
    ({"gm": "40m"}, "missing input resistance rπ"),
    ({"ic": "1m", "beta": 100, "gm": "40m"}, "not both"),
    ({"ic": "-1m", "beta": 100}, "collector current I_C must be more than 0"),
    ({"ic": "1m", "beta": 100, "hfe": 3}, "no parameter 'hfe'"),
    ({"ic": "1m", "beta": "abc"}, "Q1 current gain β"),
])
def test_bad_bjt_parameters_are_named(kwargs: dict, words: str) -> None:
    with pytest.raises(CircuitError, match=words):
        Circuit().bjt("Q1", "b", "c", "e", **kwargs)


def test_finite_opamp_needs_a0() -> None:
    with pytest.raises(CircuitError, match="U1: missing open-loop DC gain A0"):
        Circuit().opamp("U1", "p", "n", "o", rout=75)


def _follower(rs: float, **bjt: object) -> Circuit:
    c = Circuit()
    c.voltage_source("VS", "s", GROUND, 1)
    c.resistor("RS", "s", "b", rs)
    c.bjt("Q1", "b", GROUND, "e", **bjt)
    c.resistor("RL", "e", GROUND, "10k")
    return c


def test_emitter_follower_output_impedance() -> None:
    c = _follower(100, ic="1m", beta=100, temp_k=300)
    v = derived(c.devices["Q1"])
    gm, rpi, beta = v["gm"], v["rpi"], v["beta"]
    z = equivalent(c, {"VS", "RS", "Q1"}, port=("e", GROUND)).z
    # exact for this model (no ro): (rπ + R_S) / (β + 1) (common practice)
    assert z.real == pytest.approx((rpi + 100) / (beta + 1), rel=1e-12)
    # the usual estimate 1/gm + (R_S ∥ rπ)/(β + 1), within 3 % at this small R_S
    assert z.real == pytest.approx(1 / gm + (100 * rpi / (100 + rpi)) / (beta + 1), rel=0.03)


def test_region_naming_a_device_takes_its_members() -> None:
    c = _follower(100, ic="1m", beta=100, va=80)
    a = equivalent(c, {"VS", "RS", "Q1"}, port=("e", GROUND))
    b = equivalent(c, {"VS", "RS", *c.members("Q1")}, port=("e", GROUND))
    assert a.z == b.z


def _noninverting(a0: float, rout: float, rf: float, rg: float, **extra: object) -> Circuit:
    c = Circuit()
    c.voltage_source("VIN", "in", GROUND, 1)
    c.opamp("U1", "in", "fb", "out", a0=a0, rout=rout, **extra)
    c.resistor("RF", "out", "fb", rf)
    c.resistor("RG", "fb", GROUND, rg)
    return c


def test_noninverting_amplifier_closed_loop_output_resistance() -> None:
    a0, rout, rf, rg = 1e5, 75.0, 9e3, 1e3
    c = _noninverting(a0, rout, rf, rg, gbw="1M", rin="1M")
    z = equivalent(c, {"VIN", "U1", "RF", "RG"}, port=("out", GROUND)).z
    beta_fb = rg / (rf + rg)
    # R_out / (1 + A0 β) with the feedback divider's loading of R_out (common practice);
    # the divider (10 kΩ) in parallel, and Rin seen through the divider, change it by < 1e-4
    assert z.real == pytest.approx(rout / (1 + a0 * beta_fb), rel=1e-3)


def test_opamp_pole_sits_at_gbw_over_a0() -> None:
    c = Circuit()
    c.voltage_source("VIN", "in", GROUND, 1)
    c.opamp("U1", "in", GROUND, "out", a0=1e5, gbw="1M")
    c.resistor("RL", "out", GROUND, "1k")
    f_pole = 1e6 / 1e5
    voc = equivalent(c, {"VIN", "U1"}, port=("out", GROUND), freq=f_pole).voc
    # one pole: A0 / (1 + j f / f_p), |.| = A0 / √2 at f_p
    assert abs(voc) == pytest.approx(1e5 / math.sqrt(2), rel=1e-9)


def test_device_part_round_trips_as_one_part_in_file_version_3() -> None:
    doc = load(assets.example_path("emitter_follower"))
    text = dumps(doc)
    data = json.loads(text)
    assert data["version"] == 3
    (q,) = [p for p in data["parts"] if p["kind"] == "bjt"]
    assert q["params"] == {"ic": "1m", "beta": "120", "va": "80", "temp_k": "300"}
    again = loads(text)
    assert [p for p in again.parts()] == [p for p in doc.parts()]
    assert "Q1" in build_circuit(again).devices
    data["version"] = 2
    with pytest.raises(CircuitError, match=r"parts\[2\]\.kind: a bjt part needs file version 3"):
        loads(json.dumps(data))
