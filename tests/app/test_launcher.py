"""The ``portcut`` entry point as a user meets it: run in a fresh interpreter (``python -m
portcut``), so the real argument routing, exit codes and stream use are what is checked."""

from __future__ import annotations

import csv
import io
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

import portcut
from portcut.engine.cli import commands as cli

ROOT = Path(__file__).resolve().parents[2]


def portcut_run(*args: str, cwd: Path = ROOT) -> subprocess.CompletedProcess[bytes]:
    return subprocess.run([sys.executable, "-m", "portcut", *args], cwd=cwd,
                          capture_output=True, timeout=120, check=False)


def test_help_lists_every_command_with_its_summary() -> None:
    run = portcut_run("--help")
    assert run.returncode == 0, run.stderr
    text = run.stdout.decode()
    for name, summary in cli.COMMAND_SUMMARIES.items():
        assert f"  {name:<8} {summary}" in text
    assert sorted(cli.COMMAND_SUMMARIES) == sorted(cli.COMMANDS)


def test_version() -> None:
    run = portcut_run("--version")
    assert run.returncode == 0 and run.stdout.decode().strip() == f"portcut {portcut.__version__}"


@pytest.mark.parametrize(("typed", "hint"), [("redcue", 'did you mean "reduce"?'),
                                             ("swep", 'did you mean "sweep"?'),
                                             ("xyzzy", "the commands are bench, export")])
def test_an_unknown_command_is_named_with_the_closest_real_one(typed: str, hint: str,
                                                               tmp_path: Path) -> None:
    run = portcut_run(typed, cwd=tmp_path)
    assert run.returncode == 2
    assert run.stderr.decode().startswith(f'portcut: "{typed}" is not a command nor a sheet file')
    assert hint in run.stderr.decode()


def test_export_to_stdout_is_clean_svg_and_says_the_demo_was_used() -> None:
    run = portcut_run("export", "-o", "-")
    assert run.returncode == 0, run.stderr
    ET.fromstring(run.stdout)  # the whole of stdout is one SVG document
    assert "bundled demo" in run.stderr.decode()


def test_sweep_csv_to_stdout() -> None:
    run = portcut_run("sweep", "--from", "10", "--to", "1k", "--points", "3", "--csv", "-")
    assert run.returncode == 0, run.stderr
    rows = list(csv.reader(io.StringIO(run.stdout.decode())))
    assert len(rows) == 4  # the header and one row per frequency


def test_export_png_is_an_image(tmp_path: Path) -> None:
    out = tmp_path / "sheet.png"
    run = portcut_run("export", "-o", str(out))
    assert run.returncode == 0, run.stderr
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (ISO/IEC 15948)
    assert f"wrote {out}" in run.stderr.decode() and run.stdout == b""


def test_export_refuses_a_suffix_it_cannot_write(tmp_path: Path) -> None:
    run = portcut_run("export", "-o", str(tmp_path / "sheet.pdf"))
    assert run.returncode == 2
    assert "cannot write .pdf files; give a file name ending in .svg, .png" in run.stderr.decode()
    assert not (tmp_path / "sheet.pdf").exists()
