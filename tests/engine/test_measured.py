"""Measured sources: Voc and R from bench readings.

Checks: the two-point form against R = R_L (Voc / V_L - 1) (common practice: the loaded divider
V_L = Voc R_L / (R_L + R)); the table fit against numpy.linalg.lstsq on synthetic readings of a
known source with known Gaussian noise, its uncertainty against the spread over many noise draws;
the part in a circuit against the Thevenin equivalent it stands for.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from portcut.engine import GROUND, Circuit, CircuitError, equivalent
from portcut.engine.cli.commands import main
from portcut.engine.solve.devices import derived
from portcut.engine.solve.measured import fit_table, fit_two_point, parse_table


def test_two_point_form() -> None:
    fit = fit_two_point(12.0, 100.0, 11.2)
    assert fit.voc == 12.0
    assert fit.r == pytest.approx(100 * (12.0 / 11.2 - 1), rel=1e-15)
    assert math.isnan(fit.u_r)


def test_two_point_refuses_a_loaded_voltage_above_voc() -> None:
    with pytest.raises(CircuitError, match="negative resistance"):
        fit_two_point(5.0, 1e3, 5.5, name="S1")


def _readings(rng: np.random.Generator, sigma: float) -> tuple[np.ndarray, np.ndarray]:
    voc, r = 9.0, 47.0
    loads = np.array([np.inf, 1e3, 470, 220, 100, 68, 47, 33])
    ideal = voc / (1 + r / loads)  # voc at the open-circuit reading (r / inf = 0)
    return loads, ideal + rng.normal(0, sigma, loads.size)


def test_table_fit_matches_numpy_lstsq_on_noisy_readings() -> None:
    rng = np.random.default_rng(15)
    loads, volts = _readings(rng, 0.01)
    fit = fit_table(zip(loads, volts, strict=True))
    current = np.where(np.isinf(loads), 0, volts / loads)
    a = np.column_stack([np.ones_like(current), -current])
    (voc, r), *_ = np.linalg.lstsq(a, volts, rcond=None)  # V = Voc - R I, reference solve
    assert (fit.voc, fit.r) == pytest.approx((voc, r), rel=1e-12)
    dev = volts - a @ [voc, r]
    assert fit.residual == pytest.approx(np.sqrt(np.mean(dev ** 2)), rel=1e-12)
    # the known source is recovered within a few standard uncertainties
    assert abs(fit.voc - 9.0) < 4 * fit.u_voc and abs(fit.r - 47.0) < 4 * fit.u_r


def test_uncertainty_matches_the_spread_over_noise_draws() -> None:
    rng = np.random.default_rng(7)
    fits = [fit_table(zip(*_readings(rng, 0.02), strict=True)) for _ in range(400)]
    # the covariance takes the load currents I = V / R_L as exact, while they carry the
    # voltage noise too: under the heaviest loads here (R_L < R) that hides about a fifth of
    # R's spread, so the two agree to 30 % (Voc's to 20 %)
    assert np.median([f.u_r for f in fits]) == pytest.approx(np.std([f.r for f in fits]),
                                                             rel=0.3)
    assert np.median([f.u_voc for f in fits]) == pytest.approx(np.std([f.voc for f in fits]),
                                                               rel=0.2)


def test_table_text_reads_a_header_prefixes_and_open() -> None:
    assert parse_table("load,volts\nopen,5\n4k7, 4.9\n1k\t4.5") == [
        (math.inf, 5.0), (4700.0, 4.9), (1000.0, 4.5)]
    with pytest.raises(CircuitError, match="S1: line 3"):
        parse_table("open,5\n1k,4\n2k", name="S1")


def test_equal_currents_are_refused() -> None:
    with pytest.raises(CircuitError, match="at least two different loads"):
        fit_table([(math.inf, 5.0), (math.inf, 5.01)])


def test_measured_source_part_is_its_thevenin_equivalent() -> None:
    c = Circuit()
    c.measured_source("S1", "a", GROUND, voc=12.0, rl=100, vl=11.2)
    c.resistor("RL", "a", GROUND, 50)
    eq = equivalent(c, {"S1"}, port=("a", GROUND))
    assert eq.voc == pytest.approx(12.0)
    assert eq.z.real == pytest.approx(100 * (12 / 11.2 - 1))
    assert derived(c.devices["S1"])["r"] == pytest.approx(eq.z.real)


def test_measured_source_needs_one_form() -> None:
    with pytest.raises(CircuitError, match="S1: missing vl"):
        Circuit().measured_source("S1", "a", GROUND, voc=12.0, rl=100)


def test_fit_command(tmp_path, capsys) -> None:
    path = tmp_path / "bench.csv"
    path.write_text("load,volts\nopen,5.02\n1k,4.17\n470,3.60\n100,1.66\n", encoding="utf-8")
    assert main(["fit", str(path)]) == 0
    out = capsys.readouterr().out
    assert out.startswith("Voc = ") and "± " in out and "from 4 readings" in out
    assert main(["fit", str(tmp_path / "missing.csv")]) == 1
    assert "cannot read the file" in capsys.readouterr().err
