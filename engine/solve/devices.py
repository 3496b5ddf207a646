"""Small-signal device parts: a bipolar transistor (hybrid-π), a MOSFET and a finite-gain op-amp.

Each device is one part to the user (one symbol, one entry in the document and the file) and
expands here, deterministically, into primitive parts the solver already knows. Member parts are
named ``<device>:<role>`` (``Q1:rpi``, ``Q1:gm``) and internal nets ``<device>:<node>``
(``Q1:b'``), so the expansion of a device is the same every time and never clashes with parts a
user names (a designator holds no colon in the editor).

Models (small-signal, linear; NPN and PNP, n- and p-channel give the same model, since the
small-signal currents and voltages are increments about the bias point):

* bipolar transistor: rπ from the inner base ``b'`` to e, a VCCS gm·v(b', e) from c to e, ro
  from c to e, optional rx from b to b' (else b' is b), Cπ across b'-e and Cμ across b'-c.
  From the bias point: gm = I_C / V_T with V_T = k T / q, rπ = β / gm, ro = V_A / I_C.
* MOSFET: a VCCS gm·v(g, s) from d to s, ro from d to s, optional Cgs and Cgd.
  From the bias point: gm = 2 I_D / V_ov, ro = 1 / (λ I_D).
* op-amp of finite gain: Rin across the inputs, a VCVS of gain A0 on the difference, one pole at
  f_p = GBW / A0 (an RC low-pass of 1 Ω and 1/(2π f_p) F buffered by a unity VCVS), and Rout in
  series with the output. Its output is referred to ground, as the ideal op-amp's.

A parameter left out is absent from the model: no ro (V_A, λ or ro not given) is an ideal
current source; no rx, Cπ, Cμ, Cgs, Cgd leaves that part out; no GBW gives a gain flat with
frequency; no Rin is an open input; no Rout (or 0) a stiff output.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass

from ..errors import CircuitError
from . import measured
from .kinds import DEVICE_KINDS
from .units import parse_value

__all__ = ["BOLTZMANN", "DEVICE_KINDS", "ELEMENTARY_CHARGE", "FORMS", "PARAMETERS", "SYMBOLS",
           "Device", "Member", "derived", "expand", "make", "thermal_voltage"]

#: SI exact values (2019 redefinition): J/K and C.
BOLTZMANN = 1.380649e-23
ELEMENTARY_CHARGE = 1.602176634e-19


#: Parameters each kind accepts: (name, what it is, unit) — for messages and entry forms.
PARAMETERS: dict[str, tuple[tuple[str, str, str], ...]] = {
    "bjt": (("ic", "collector current I_C", "A"), ("beta", "current gain β", ""),
            ("va", "Early voltage V_A", "V"), ("temp_k", "temperature T", "K"),
            ("gm", "transconductance gm", "S"), ("rpi", "input resistance rπ", "Ω"),
            ("ro", "output resistance ro", "Ω"), ("rx", "base resistance rx", "Ω"),
            ("cpi", "capacitance Cπ", "F"), ("cmu", "capacitance Cμ", "F")),
    "mosfet": (("id", "drain current I_D", "A"), ("vov", "overdrive V_ov", "V"),
               ("lam", "channel-length modulation λ", "1/V"),
               ("gm", "transconductance gm", "S"), ("ro", "output resistance ro", "Ω"),
               ("cgs", "capacitance Cgs", "F"), ("cgd", "capacitance Cgd", "F")),
    "opamp_finite": (("a0", "open-loop DC gain A0", ""), ("gbw", "gain-bandwidth product", "Hz"),
                     ("rin", "input resistance Rin", "Ω"), ("rout", "output resistance Rout",
                                                           "Ω")),
    "measured_source": (("voc", "open-circuit voltage Voc", "V"), ("rl", "known load R_L", "Ω"),
                        ("vl", "voltage under load V_L", "V"),
                        ("table", "readings (load, voltage)", "")),
}

#: How each parameter is written in a caption or an entry form's label.
SYMBOLS: dict[str, str] = {
    "ic": "I_C", "beta": "β", "va": "V_A", "temp_k": "T", "gm": "gm", "rpi": "rπ", "ro": "ro",
    "rx": "rx", "cpi": "Cπ", "cmu": "Cμ", "id": "I_D", "vov": "V_ov", "lam": "λ", "cgs": "Cgs",
    "cgd": "Cgd", "a0": "A0", "gbw": "GBW", "rin": "Rin", "rout": "Rout", "voc": "Voc",
    "rl": "R_L", "vl": "V_L", "table": "Readings",
}

#: Default temperature of a bias-point entry, kelvin.
DEFAULT_TEMP_K = 300.0


def thermal_voltage(temp_k: float) -> float:
    """V_T = k T / q in volts at ``temp_k`` kelvin."""
    return BOLTZMANN * temp_k / ELEMENTARY_CHARGE


@dataclass(frozen=True, slots=True)
class Member:
    """One primitive part of an expansion: the arguments of a Circuit builder call."""

    kind: str
    name: str
    nodes: tuple[str, ...]
    value: float


@dataclass(frozen=True, slots=True)
class Device:
    """A device part as the user entered it: ``params`` maps parameter names to numbers."""

    name: str
    kind: str
    nodes: tuple[str, ...]
    params: Mapping[str, object]

    @property
    def form(self) -> str:
        """``"bias"`` where the small-signal values come from a bias point, ``"table"`` for a
        measured source fitted to readings, else ``"direct"`` (an op-amp and a two-point
        measured source have that one)."""
        if "table" in self.params:
            return "table"
        return "bias" if {"ic", "id"} & set(self.params) else "direct"


def _read_params(name: str, kind: str, given: Mapping[str, object]) -> dict[str, object]:
    known = {p[0]: p for p in PARAMETERS[kind]}
    out: dict[str, object] = {}
    for key, raw in given.items():
        if raw is None:
            continue
        if key not in known:
            raise CircuitError(f"{name}: a {kind} has no parameter {key!r}; "
                               f"it takes {', '.join(known)}")
        if key == "table":
            out[key] = tuple(measured.parse_table(raw, name=f"{name} readings")
                             if isinstance(raw, str) else raw)
            continue
        value = parse_value(raw, what=f"{name} {known[key][1]}")
        if isinstance(value, complex) or not math.isfinite(value):
            raise CircuitError(f"{name}: {known[key][1]} must be a finite real number, "
                               f"not {raw!r}")
        out[key] = float(value)
    return out


def _positive(name: str, kind: str, params: Mapping[str, float], keys: tuple[str, ...], *,
              zero_ok: bool = False) -> None:
    labels = {p[0]: p[1] for p in PARAMETERS[kind]}
    for key in keys:
        if key in params and (params[key] < 0 or (params[key] == 0 and not zero_ok)):
            bound = "0 or more" if zero_ok else "more than 0"
            raise CircuitError(f"{name}: {labels[key]} must be {bound}, not {params[key]!r}")


#: The two entry forms of a transistor: (bias-point parameters, small-signal parameters).
FORMS: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {
    "bjt": (("ic", "beta", "va", "temp_k"), ("gm", "rpi", "ro")),
    "mosfet": (("id", "vov", "lam"), ("gm", "ro")),
    "measured_source": (("table",), ("voc", "rl", "vl")),
}
#: The parameters each form needs (the others of the form are optional).
_REQUIRED = {"bjt": (("ic", "beta"), ("gm", "rpi")), "mosfet": (("id", "vov"), ("gm",))}


def _one_form(name: str, kind: str, params: Mapping[str, float]) -> str:
    """Which entry form ``params`` use; refuses a mix or an incomplete form."""
    labels = {p[0]: p[1] for p in PARAMETERS[kind]}
    bias, direct = FORMS[kind]
    used_bias = [k for k in bias if k in params]
    used_direct = [k for k in direct if k in params]
    if used_bias and used_direct:
        raise CircuitError(f"{name}: give either the bias point ({', '.join(bias)}) or the "
                           f"small-signal values ({', '.join(direct)}), not both: got "
                           f"{', '.join(used_bias + used_direct)}")
    required = _REQUIRED[kind]
    form, needs = ("bias", required[0]) if used_bias else ("direct", required[1])
    missing = [labels[k] for k in needs if k not in params]
    if missing:
        raise CircuitError(f"{name}: missing {', '.join(missing)} ({form} entry of a {kind}; "
                           f"the other form takes {', '.join(required[form == 'bias'])})")
    return form


def derived(device: Device) -> dict[str, float]:
    """The small-signal values the model uses (SI units), from either entry form.

    bjt: gm, rpi, beta, ro (inf where absent), vt (bias form only); mosfet: gm, ro;
    opamp_finite: a0, pole_hz (inf where no GBW), rin, rout (inf / 0 where absent).
    """
    p = device.params
    inf = math.inf
    if device.kind == "bjt":
        if device.form == "bias":
            vt = thermal_voltage(p.get("temp_k", DEFAULT_TEMP_K))
            gm = p["ic"] / vt
            return {"vt": vt, "gm": gm, "rpi": p["beta"] / gm, "beta": p["beta"],
                    "ro": p["va"] / p["ic"] if "va" in p else inf}
        return {"gm": p["gm"], "rpi": p["rpi"], "beta": p["gm"] * p["rpi"],
                "ro": p.get("ro", inf)}
    if device.kind == "mosfet":
        if device.form == "bias":
            return {"gm": 2 * p["id"] / p["vov"],
                    "ro": 1 / (p["lam"] * p["id"]) if p.get("lam") else inf}
        return {"gm": p["gm"], "ro": p.get("ro", inf)}
    if device.kind == "measured_source":
        fit = _fit(device)
        return {"voc": fit.voc, "r": fit.r, "points": fit.points, "residual": fit.residual,
                "u_voc": fit.u_voc, "u_r": fit.u_r}
    a0 = p["a0"]
    return {"a0": a0, "pole_hz": p["gbw"] / a0 if "gbw" in p else inf,
            "rin": p.get("rin", inf), "rout": p.get("rout", 0.0)}


def _fit(device: Device) -> measured.Fit:
    p = device.params
    if "table" in p:
        return measured.fit_table(p["table"], name=device.name)
    return measured.fit_two_point(p["voc"], p["rl"], p["vl"], name=device.name)


def make(name: str, kind: str, nodes: tuple[str, ...], given: Mapping[str, object]) -> Device:
    """A validated :class:`Device`; CircuitError names the part and the field at fault."""
    params = _read_params(name, kind, given)
    if kind == "bjt":
        _one_form(name, kind, params)
        _positive(name, kind, params, ("ic", "beta", "va", "temp_k", "gm", "rpi", "ro"))
        _positive(name, kind, params, ("rx", "cpi", "cmu"), zero_ok=True)
    elif kind == "mosfet":
        _one_form(name, kind, params)
        _positive(name, kind, params, ("id", "vov", "gm", "ro"))
        _positive(name, kind, params, ("lam", "cgs", "cgd"), zero_ok=True)
    elif kind == "measured_source":
        if "table" in params and set(params) != {"table"}:
            raise CircuitError(f"{name}: give either readings (a table) or Voc, R_L and V_L, "
                               "not both")
        missing = [k for k in ("voc", "rl", "vl") if k not in params]
        if "table" not in params and missing:
            raise CircuitError(f"{name}: missing {', '.join(missing)}: a measured source "
                               "takes the open-circuit voltage voc, a known load rl and the "
                               "voltage vl under it, or a table of (load, voltage) readings")
        _fit(Device(name, kind, tuple(nodes), params))  # refuses readings that do not fit
    else:
        if "a0" not in params:
            raise CircuitError(f"{name}: missing open-loop DC gain A0 (a0) of a finite op-amp")
        _positive(name, kind, params, ("a0", "gbw", "rin"))
        _positive(name, kind, params, ("rout",), zero_ok=True)
    return Device(name, kind, tuple(nodes), params)


def expand(device: Device, ground: str) -> list[Member]:
    """The primitive parts of ``device``, in a fixed order; ``ground`` is the ground net."""
    return _EXPANDERS[device.kind](device, derived(device), ground)


def _transconductor(d: Device, v: dict[str, float], out: str, common: str, control: str,
                    caps: tuple[tuple[str, str, str], ...]) -> list[Member]:
    """The VCCS gm·v(control, common) from ``out`` into ``common``, ro across it where finite,
    and each capacitance of ``caps`` (parameter, first net, second net) that is given."""
    n, p = d.name, d.params
    members = [Member("vccs", f"{n}:gm", (out, common, control, common), v["gm"])]
    if math.isfinite(v["ro"]):
        members.append(Member("resistor", f"{n}:ro", (out, common), v["ro"]))
    members += [Member("capacitor", f"{n}:{key}", (a, b), p[key])
                for key, a, b in caps if p.get(key)]
    return members


def _bjt(d: Device, v: dict[str, float], ground: str) -> list[Member]:
    n, p = d.name, d.params
    b, c, e = d.nodes
    inner = f"{n}:b'" if p.get("rx") else b
    out = [Member("resistor", f"{n}:rx", (b, inner), p["rx"])] if p.get("rx") else []
    out.append(Member("resistor", f"{n}:rpi", (inner, e), v["rpi"]))
    return out + _transconductor(d, v, c, e, inner, (("cpi", inner, e), ("cmu", inner, c)))


def _mosfet(d: Device, v: dict[str, float], ground: str) -> list[Member]:
    g, dr, s = d.nodes
    return _transconductor(d, v, dr, s, g, (("cgs", g, s), ("cgd", g, dr)))


def _opamp(d: Device, v: dict[str, float], ground: str) -> list[Member]:
    n = d.name
    inp, inn, out_net = d.nodes
    out: list[Member] = []
    if math.isfinite(v["rin"]):
        out.append(Member("resistor", f"{n}:rin", (inp, inn), v["rin"]))
    drive = f"{n}:drive" if v["rout"] else out_net
    if math.isfinite(v["pole_hz"]):
        # gain, then the pole (1 Ω into 1/(2π f_p) F), then a unity buffer to the output stage
        out += [Member("vcvs", f"{n}:a0", (f"{n}:gain", ground, inp, inn), v["a0"]),
                Member("resistor", f"{n}:rp", (f"{n}:gain", f"{n}:pole"), 1.0),
                Member("capacitor", f"{n}:cp", (f"{n}:pole", ground),
                       1 / (2 * math.pi * v["pole_hz"])),
                Member("vcvs", f"{n}:buf", (drive, ground, f"{n}:pole", ground), 1.0)]
    else:
        out.append(Member("vcvs", f"{n}:a0", (drive, ground, inp, inn), v["a0"]))
    if v["rout"]:
        out.append(Member("resistor", f"{n}:rout", (drive, out_net), v["rout"]))
    return out


def _measured(d: Device, v: dict[str, float], ground: str) -> list[Member]:
    # the Thevenin form of a collapsed block: Voc from p to an inner node, R from it to n
    n = d.name
    p_net, n_net = d.nodes
    if v["r"] == 0:
        return [Member("voltage_source", f"{n}:voc", (p_net, n_net), v["voc"])]
    return [Member("voltage_source", f"{n}:voc", (p_net, f"{n}:mid"), v["voc"]),
            Member("resistor", f"{n}:r", (f"{n}:mid", n_net), v["r"])]


_EXPANDERS: dict[str, Callable[[Device, dict[str, float], str], list[Member]]] = {
    "bjt": _bjt, "mosfet": _mosfet, "opamp_finite": _opamp, "measured_source": _measured}
