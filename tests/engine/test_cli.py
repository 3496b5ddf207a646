"""The command line: reduce, sweep and export through main(argv), exit codes, and a headless run.

Numbers are checked against closed forms of textbook circuits (e.g. Alexander & Sadiku,
Fundamentals of Electric Circuits, chapters on Thevenin's theorem and first-order filters):
a divider of a 10 V source through 1 kΩ into 1 kΩ has Voc = 5 V, Z = 500 Ω, Isc = 10 mA; a
1 V source through R into C has Voc = 1 / (1 + jωRC) and Z = R / (1 + jωRC).
"""

from __future__ import annotations

import csv
import io
import json
import math
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest
from drawn import divider as drawn_divider

from portcut.engine.cli import commands as cli
from portcut.engine.schematic import Document, NetLabel, PlacedPart, Region
from portcut.engine.schematic.fileformat import save
from portcut.engine.schematic.reduction import collapse_region

ROOT = Path(__file__).resolve().parents[2]


def _two_terminal(doc: Document, pid: str, kind: str, name: str, a, b, value: str) -> None:
    """Place a two-terminal part with its pins on grid points a and b (two apart, level or
    plumb), so the test reads as a netlist."""
    (ax, ay), (bx, by) = a, b
    at = ((ax + bx) // 2, (ay + by) // 2)
    rotation = {(4, 0): 0, (0, 4): 90, (-4, 0): 180, (0, -4): 270}[(bx - ax, by - ay)]
    doc.add(PlacedPart(pid, kind, name, at, rotation=rotation, value=value))


def _labelled(doc: Document, at, name: str) -> None:
    style = "ground" if name == "gnd" else "label"
    doc.add(NetLabel(doc.new_id(NetLabel), name, at, style=style))


def _source_load(source: tuple[str, str, str], series: tuple[str, str, str] | None,
                 shunt: tuple[str, str, str] | None) -> Document:
    """A source (kind, designator, value) from "in" (top pin) to ground, an optional series part
    from "in" to "out", an optional shunt part from "out" to ground, and the load RL (1 kΩ)
    from "out" to ground. The region "src" holds everything but RL; without a series part the
    source's top pin is "out" itself."""
    doc = Document("cli test")
    top = "in" if series else "out"
    parts = [(source, (0, 0), (0, 4), top, "gnd"), (series, (10, 0), (14, 0), "in", "out"),
             (shunt, (20, 0), (20, 4), "out", "gnd")]
    members = set()
    for i, (part, a, b, net_a, net_b) in enumerate(parts, start=1):
        if part is None:
            continue
        kind, name, value = part
        _two_terminal(doc, f"p{i}", kind, name, a, b, value)
        _labelled(doc, a, net_a)
        _labelled(doc, b, net_b)
        members.add(f"p{i}")
    _two_terminal(doc, "p4", "resistor", "RL", (30, 0), (30, 4), "1k")
    _labelled(doc, (30, 0), "out")
    _labelled(doc, (30, 4), "gnd")
    doc.add(Region("r1", "src", frozenset(members)))
    return doc


V10 = ("voltage_source", "V1", "10")
V1 = ("voltage_source", "V1", "1")
R1K = ("resistor", "R1", "1k")
R2K = ("resistor", "R2", "1k")
C100N = ("capacitor", "C1", "100n")


@pytest.fixture
def saved(tmp_path):
    def write(doc: Document, name: str = "doc.json") -> str:
        path = tmp_path / name
        save(doc, path)
        return str(path)
    return write


@pytest.fixture
def divider(saved):
    """The drawn divider: 10 V through 1 kΩ into 1 kΩ, loaded by 1 kΩ; region "src" holds
    V1, R1 and R2."""
    doc = drawn_divider(r1="1k", r2="1k", load="1k")
    doc.add(Region(doc.new_id(Region), "src", frozenset({"p1", "p2", "p3"})))
    return saved(doc)


def _run(capsys, *argv: str) -> tuple[int, str, str]:
    code = cli.main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def _json(capsys, *argv: str) -> dict:
    code, out, err = _run(capsys, "reduce", *argv, "--json")
    assert code == 0, err
    return json.loads(out)


def _c(d) -> complex:
    return complex(d["re"], d["im"])


# -- reduce --------------------------------------------------------------------------------------
def test_reduce_json_of_a_divider(capsys, divider):
    data = _json(capsys, divider)
    assert set(data) == {"port", "freq_hz", "voc", "isc", "z", "has_thevenin", "has_norton",
                         "region", "parts"}
    assert data["port"] == ["out", "gnd"]  # ground is minus
    assert data["freq_hz"] == 0
    assert _c(data["voc"]) == pytest.approx(5.0)
    assert _c(data["z"]) == pytest.approx(500.0)
    assert _c(data["isc"]) == pytest.approx(0.01)
    assert data["has_thevenin"] and data["has_norton"]
    assert data["region"] == "src" and data["parts"] == ["R1", "R2", "V1"]


def test_reduce_sensitivity_json_and_table(capsys, divider):
    # Common practice: voc = V R2 / (R1 + R2), so (R2 / voc) dvoc/dR2 = R1 / (R1 + R2) = 1/2
    # and dz/dR1 = (R2 / (R1 + R2))^2 = 1/4; isc = V / R1 does not depend on R2.
    data = _json(capsys, divider, "--sensitivity")
    table = data["sensitivity"]
    assert set(table) == {"V1", "R1", "R2"}
    assert _c(table["R2"]["svoc"]) == pytest.approx(0.5)
    assert _c(table["R1"]["svoc"]) == pytest.approx(-0.5)
    assert _c(table["R1"]["dz"]) == pytest.approx(0.25)
    assert _c(table["V1"]["dvoc"]) == pytest.approx(0.5)
    assert abs(_c(table["R2"]["disc"])) < 1e-15
    assert table["R1"]["kind"] == "resistor" and _c(table["R1"]["value"]) == 1000
    code, out, _ = _run(capsys, "reduce", divider, "--sensitivity")
    assert code == 0
    rows = out[out.index("Sensitivity"):].splitlines()[2:]
    assert [r.split()[0] for r in rows] == ["V1", "R1", "R2"]  # V1 moves voc by +1 % per %
    assert rows[1].split()[1:] == ["1", "kΩ", "-0.5000", "-1.0000", "+0.5000"]


def test_reduce_by_parts_and_swapped_port(capsys, divider):
    by_parts = _json(capsys, divider, "--parts", "V1,R1,R2")
    assert by_parts["region"] is None and _c(by_parts["voc"]) == pytest.approx(5.0)
    swapped = _json(capsys, divider, "--port", "gnd,out")
    assert swapped["port"] == ["gnd", "out"]
    assert _c(swapped["voc"]) == pytest.approx(-5.0)
    assert _c(swapped["z"]) == pytest.approx(500.0)


def test_reduce_at_the_corner_frequency_of_an_rc(capsys, saved):
    path = saved(_source_load(V1, R1K, C100N))
    r, c = 1e3, 100e-9
    f = 1 / (2 * math.pi * r * c)  # ωRC = 1
    data = _json(capsys, path, "--freq", f"{f!r}")
    assert data["freq_hz"] == pytest.approx(f)
    assert _c(data["voc"]) == pytest.approx(1 / (1 + 1j))
    assert _c(data["z"]) == pytest.approx(r / (1 + 1j))
    # the same frequency in SI-prefix syntax
    assert _json(capsys, path, "--freq", "1.5915494309k")["freq_hz"] == pytest.approx(f)


def test_reduce_table_lists_both_forms_and_the_series_parts(capsys, saved):
    path = saved(_source_load(V1, R1K, C100N))
    f = 1 / (2 * math.pi * 1e3 * 100e-9)
    code, out, err = _run(capsys, "reduce", path, "--freq", repr(f))
    assert code == 0, err
    assert "region 'src' seen from port (out, gnd)" in out
    assert "707.1 mV ∠ -45°" in out          # |Voc| = 1/√2 at ωRC = 1
    assert "500 Ω - j 500 Ω" in out           # Z = R/(1 + j)
    assert "Thevenin: Voc in series with Z" in out and "Norton: Isc in parallel with Z" in out
    # X = -500 Ω at f: the series capacitance is 1 / (ω·500 Ω) = 2 RC = 200 nF
    assert "500 Ω in series with 200 nF" in out
    norton_first = _run(capsys, "reduce", path, "--form", "norton")[1]
    assert norton_first.index("Norton:") < norton_first.index("Thevenin:")


@pytest.mark.parametrize(("freq", "basis", "power"), [
    ("DC", "DC", "12.5 mW"), ("1k", "peak phasors", "6.25 mW")])
def test_reduce_states_the_matched_load_power_for_dc_and_for_phasors(capsys, divider, freq,
                                                                     basis, power):
    # common practice (maximum power transfer): the divider is Voc = 5 V behind 500 Ω; at DC a
    # matched load takes Voc^2 / (4 R) = 12.5 mW, with peak phasors |Voc|^2 / (8 Re Z) = 6.25 mW.
    code, out, err = _run(capsys, "reduce", divider, "--freq", freq)
    assert code == 0, err
    assert f"Matched load 500 Ω takes {power}" in out and f"({basis})" in out


def test_reduce_without_a_thevenin_form(capsys, saved):
    # an ideal current source alone at the port: Z is infinite (docs/method.md)
    path = saved(_source_load(("current_source", "I1", "1m"), None, None))
    data = _json(capsys, path)
    assert data["has_thevenin"] is False and data["has_norton"] is True
    assert data["voc"] is None and data["z"] is None
    # I1 drives 1 mA from "out" through itself into ground, so the current leaving "out"
    # through an outside short into ground is -1 mA (sign conventions of docs/method.md)
    assert _c(data["isc"]) == pytest.approx(-1e-3)
    code, out, _ = _run(capsys, "reduce", path)
    assert code == 0 and "No Thevenin form: Z is infinite" in out


def test_reduce_without_a_norton_form(capsys, saved):
    path = saved(_source_load(("voltage_source", "V1", "3"), None, None))
    data = _json(capsys, path)
    assert data["has_norton"] is False and data["isc"] is None
    assert _c(data["voc"]) == pytest.approx(3.0) and _c(data["z"]) == 0
    assert "No Norton form: Z is zero" in _run(capsys, "reduce", path)[1]


# -- sweep ---------------------------------------------------------------------------------------
def test_sweep_csv_is_log_spaced_with_units_in_the_header(capsys, saved, tmp_path):
    path = saved(_source_load(V1, R1K, C100N))
    out_csv = tmp_path / "sweep.csv"
    code, out, err = _run(capsys, "sweep", path, "--from", "10", "--to", "100k", "--points", "9",
                          "--csv", str(out_csv))
    assert code == 0, err
    assert out == "" and str(out_csv) in err  # stdout stays clean for pipes
    with out_csv.open(newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    assert rows[0][:5] == ["f (Hz)", "Re Voc (V)", "Im Voc (V)", "|Voc| (V)", "arg Voc (deg)"]
    assert rows[0][-4:] == ["Re Z (ohm)", "Im Z (ohm)", "|Z| (ohm)", "arg Z (deg)"]
    freqs = np.array([float(r[0]) for r in rows[1:]])
    np.testing.assert_allclose(freqs, np.geomspace(10, 1e5, 9), rtol=1e-12)  # numpy reference
    for row, f in zip(rows[1:], freqs, strict=True):
        expected = 1 / (1 + 2j * math.pi * f * 1e3 * 100e-9)
        assert complex(float(row[1]), float(row[2])) == pytest.approx(expected)
        assert float(row[4]) == pytest.approx(math.degrees(np.angle(expected)))


def test_sweep_of_a_collapsed_block_follows_frequency(capsys, saved, tmp_path):
    # the block holds the RC: its values must be re-evaluated at every frequency
    doc = _source_load(V1, R1K, C100N)
    collapse_region(doc, "r1").apply(doc)
    path = saved(doc)
    out_csv = tmp_path / "block.csv"
    code, _, err = _run(capsys, "sweep", path, "--parts", "EQ1", "--from", "100", "--to", "10k",
                        "--points", "3", "--csv", str(out_csv))
    assert code == 0, err
    with out_csv.open(newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))[1:]
    for row in rows:
        f = float(row[0])
        jwrc = 2j * math.pi * f * 1e3 * 100e-9
        assert complex(float(row[1]), float(row[2])) == pytest.approx(1 / (1 + jwrc))
        assert complex(float(row[9]), float(row[10])) == pytest.approx(1e3 / (1 + jwrc))


def test_sweep_table(capsys, divider):
    code, out, err = _run(capsys, "sweep", divider, "--from", "1", "--to", "1k", "--points", "4")
    assert code == 0, err
    lines = out.strip().splitlines()
    assert lines[0] == "region 'src' seen from port (out, gnd), plus first"
    assert [line.split()[0] for line in lines[-4:]] == ["1", "10", "100", "1"]
    assert all("500 Ω" in line for line in lines[-4:])


@pytest.mark.parametrize(("freq", "unit"), [("1kF", "F"), ("4.7 kΩ", "Ω")])
def test_a_frequency_in_another_unit_is_refused(capsys, divider, freq, unit):
    # SI (BIPM SI Brochure): frequency is in Hz; F and Ω belong to other quantities.
    code, out, err = _run(capsys, "reduce", divider, "--freq", freq)
    assert code == 2 and out == ""
    assert f"frequency: '{freq}' is in {unit}, but this field takes a value in Hz" in err
    code, out, err = _run(capsys, "reduce", divider, "--freq", "fast")
    assert "give hertz" in err and "4k7" not in err and "IEC" not in err  # no resistor codes


@pytest.mark.parametrize("args", [
    ["--from", "0", "--to", "1k"],          # log spacing needs F1 > 0
    ["--from", "1k", "--to", "10"],
    ["--from", "1", "--to", "1k", "--points", "1"],
    ["--from", "1", "--to", "fast"],
    ["--to", "1k"],
])
def test_sweep_usage_mistakes_exit_2(capsys, divider, args):
    code, out, err = _run(capsys, "sweep", divider, *args)
    assert code == 2 and out == ""
    assert "usage:" in err or "portcut sweep" in err
    assert "Traceback" not in err


# -- export --------------------------------------------------------------------------------------
def test_export_writes_an_svg(capsys, divider, tmp_path):
    out_svg = tmp_path / "out.svg"
    code, _, err = _run(capsys, "export", divider, "-o", str(out_svg), "--style", "ieee")
    assert code == 0, err
    root = ET.parse(out_svg).getroot()
    groups = [g for g in root.iter("{http://www.w3.org/2000/svg}g") if g.get("class") == "part"]
    assert len(groups) == 4
    texts = ["".join(t.itertext()) for t in root.iter("{http://www.w3.org/2000/svg}text")]
    assert "1 kΩ" in texts and "10 V" in texts and "src" in texts
    code, _, _ = _run(capsys, "export", divider, "-o", str(out_svg), "--no-regions")
    assert code == 0 and "src" not in ET.parse(out_svg).getroot().itertext()


def test_export_reduced_draws_the_block_and_leaves_the_file_alone(capsys, divider, tmp_path):
    before = Path(divider).read_bytes()
    out_svg = tmp_path / "reduced.svg"
    code, _, err = _run(capsys, "export", divider, "-o", str(out_svg), "--reduced",
                        "--form", "norton")
    assert code == 0, err
    root = ET.parse(out_svg).getroot()
    classes = [g.get("class") for g in root.iter("{http://www.w3.org/2000/svg}g")]
    assert classes.count("block") == 1 and classes.count("part") == 1  # only RL is left
    texts = ["".join(t.itertext()) for t in root.iter("{http://www.w3.org/2000/svg}text")]
    assert "Isc = 10 mA" in texts and "Z = 500 Ω" in texts  # the divider's Norton form
    assert Path(divider).read_bytes() == before
    code, _, err = _run(capsys, "export", divider, "-o", str(out_svg), "--form", "norton")
    assert code == 2 and "--reduced" in err


def test_sources_above_extra_low_voltage_get_the_caution_once(capsys, saved):
    # 325 V peak is 230 V rms: above 50 V AC rms (common practice, IEC 61140)
    path = saved(_source_load(("voltage_source", "V1", "325"), R1K, R2K))
    code, out, err = _run(capsys, "reduce", path, "--freq", "50", "--json")
    assert code == 0 and json.loads(out)["has_thevenin"]
    assert err.count("extra-low voltage") == 1 and "local codes" in err
    assert _run(capsys, "reduce", path, "--freq", "50")[2].count("Caution") == 1
    code, _, err = _run(capsys, "sweep", path, "--from", "50", "--to", "60", "--points", "3")
    assert code == 0 and err.count("Caution") == 1
    quiet = saved(_source_load(V10, R1K, R2K), "quiet.json")
    assert _run(capsys, "reduce", quiet, "--freq", "50")[2] == ""


# -- errors and exit codes -----------------------------------------------------------------------
@pytest.mark.parametrize(("argv", "message"), [
    (["reduce", "{missing}"], "no such file"),
    (["reduce", "{divider}", "--region", "nope"], "no region named 'nope'"),
    (["reduce", "{divider}", "--parts", "R1,R9"], "R9"),
    (["reduce", "{divider}", "--port", "out,nowhere"], "nowhere"),
    (["reduce", "{garbage}"], "garbage"),
    (["export", "{divider}", "-o", "{nodir}/x.svg"], "x.svg"),
])
def test_circuit_and_file_problems_exit_1_with_one_line(capsys, divider, tmp_path, argv,
                                                        message):
    garbage = tmp_path / "garbage.json"
    garbage.write_text("{ this is not json", encoding="utf-8")
    names = {"missing": str(tmp_path / "missing.json"), "divider": divider,
             "garbage": str(garbage), "nodir": str(tmp_path / "no" / "such")}
    code, out, err = _run(capsys, *[a.format(**names) for a in argv])
    assert code == 1 and out == ""
    assert err.count("\n") == 1 and err.startswith(f"portcut {argv[0]}: ")
    assert message.lower() in err.lower()
    assert "Traceback" not in err


def test_several_regions_ask_for_a_name(capsys, saved):
    doc = _source_load(V10, R1K, R2K)
    doc.add(Region("r2", "other", frozenset({"p4"})))
    code, _, err = _run(capsys, "reduce", saved(doc))
    assert code == 1 and "several regions (other, src)" in err


def test_usage_and_help(capsys):
    code, _, err = _run(capsys, "reduce", "--bogus")
    assert code == 2 and "usage: portcut reduce" in err
    code, out, _ = _run(capsys, "reduce", "--help")
    assert code == 0 and "--region NAME" in out and "--json" in out
    assert _run(capsys)[0] == 2
    code, _, err = _run(capsys, "reduce", "--freq", "fast")
    assert code == 2 and "fast" in err


def test_bench_takes_its_own_options_through_the_entry_point():
    """The real console entry point hands ``bench`` its arguments (a fresh interpreter)."""
    run = subprocess.run([sys.executable, "-m", "portcut", "bench", "--no-such-option"],
                         cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert run.returncode == 2
    assert run.stderr.startswith("usage: portcut bench") and "--no-such-option" in run.stderr


# -- the bundled demo, headless ------------------------------------------------------------------
def test_demo_reduces_without_qt():
    """``python3 -m portcut.app.launcher reduce --json`` on the bundled demo, in a fresh interpreter
    that must end without PySide6 imported."""
    script = (
        "import runpy, sys\n"
        "sys.argv = ['portcut', 'reduce', '--json']\n"
        "try:\n"
        "    runpy.run_module('portcut.app.launcher', run_name='__main__')\n"
        "except SystemExit as e:\n"
        "    code = e.code\n"
        "print('qt-loaded' if 'PySide6' in sys.modules else 'qt-free', file=sys.stderr)\n"
        "sys.exit(code)\n"
    )
    run = subprocess.run([sys.executable, "-c", script], cwd=ROOT, capture_output=True,
                         text=True, timeout=120)
    assert run.returncode == 0, run.stderr
    assert run.stderr.strip().endswith("qt-free")
    data = json.loads(run.stdout)
    assert data["has_thevenin"] or data["has_norton"]
    assert len(data["port"]) == 2


def test_a_regions_chosen_port_is_used_unless_port_is_given(capsys, saved):
    # common practice (voltage divider): seen with plus on ground, Voc changes sign
    doc = _source_load(V10, R1K, R2K)
    doc.replace_fields("r1", port=("gnd", "out"))
    path = saved(doc)
    chosen = _json(capsys, path)
    assert chosen["port"] == ["gnd", "out"] and _c(chosen["voc"]) == pytest.approx(-5.0)
    given = _json(capsys, path, "--port", "out,gnd")
    assert given["port"] == ["out", "gnd"] and _c(given["voc"]) == pytest.approx(5.0)



@pytest.mark.skipif(sys.platform == "win32", reason="POSIX file names are bytes")
def test_a_file_name_that_is_not_utf8_is_printed_escaped(tmp_path: Path, monkeypatch):
    # a POSIX name is bytes; Python holds the byte 0xff of a non-UTF-8 name as U+DCFF
    # (PEP 383; from memory)
    out = tmp_path / "\udcff.svg"
    strict = io.TextIOWrapper(io.BytesIO(), encoding="utf-8", errors="strict")
    monkeypatch.setattr(sys, "stderr", strict)  # where status lines go
    assert cli.main(["export", str(ROOT / "assets" / "examples" / "rc_antialias.json"),
                     "-o", str(out)]) == 0
    strict.flush()
    assert strict.buffer.getvalue().decode("utf-8").endswith("\\udcff.svg\n")
    ET.parse(out)
