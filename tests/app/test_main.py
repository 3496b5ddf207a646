"""The entry point: --screenshot renders the window to a PNG that is not blank, a bad file
fails with the loader's message, and with no display the command says what to do instead."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from PySide6.QtGui import QColor, QImage

import portcut
from portcut import assets
from portcut.app.main import run


def _distinct_colours(path: Path) -> int:
    image = QImage(str(path))
    assert not image.isNull()
    return len({QColor(image.pixel(x, y)).name() for y in range(0, image.height(), 7)
                for x in range(0, image.width(), 7)})


def test_screenshot_of_a_sheet(qapp, tmp_path: Path):
    out = tmp_path / "shot.png"
    assert run([str(assets.example_path("rc_antialias")), "--screenshot", str(out),
                "--size", "900x600", "--select", "R1"]) == 0
    image = QImage(str(out))
    assert (image.width(), image.height()) == (900, 600)
    assert _distinct_colours(out) > 20   # strokes, text, grid, panels: not a blank frame


def test_screenshot_of_the_demo_in_the_dark_theme(qapp, tmp_path: Path):
    out = tmp_path / "demo.png"
    assert run(["--screenshot", str(out), "--theme", "dark", "--symbols", "ieee"]) == 0
    assert _distinct_colours(out) > 20


def test_screenshot_of_a_bad_file_fails_with_the_reason(qapp, tmp_path: Path, capsys):
    bad = tmp_path / "bad.json"
    bad.write_text('{"format": "portcut-schematic", "version": 99}', encoding="utf-8")
    assert run([str(bad), "--screenshot", str(tmp_path / "x.png")]) == 1
    err = capsys.readouterr().err
    assert "bad.json" in err and "version" in err
    assert not (tmp_path / "x.png").exists()


def test_a_missing_file_is_named_once_and_no_platform_note_reaches_stderr(tmp_path: Path):
    # a run of its own: the process's stderr as a user sees it
    missing = tmp_path / "missing.json"
    env = {k: v for k, v in os.environ.items() if k != "QT_QPA_PLATFORM"}  # as a user runs it
    done = subprocess.run([sys.executable, "-m", "portcut", str(missing), "--screenshot",
                           str(tmp_path / "x.png")], capture_output=True, text=True, env=env,
                          cwd=Path(__file__).parents[2], timeout=120)
    assert done.returncode == 1
    assert done.stderr == f"portcut: cannot open {missing}: No such file or directory\n"


def test_an_unknown_designator_to_select_is_refused(qapp, tmp_path: Path, capsys):
    out = tmp_path / "x.png"
    assert run([str(assets.example_path("rc_antialias")), "--screenshot", str(out),
                "--select", "ZZ9,R1"]) == 2
    assert "--select: no part ZZ9 on the sheet; its parts are C1, C2, R1, R2, V1" in \
        capsys.readouterr().err
    assert not out.exists()


def test_a_size_below_the_windows_smallest_is_said(qapp, tmp_path: Path, capsys):
    out = tmp_path / "x.png"
    assert run([str(assets.example_path("rc_antialias")), "--screenshot", str(out),
                "--size", "10x10"]) == 0
    err = capsys.readouterr().err
    assert "--size 10x10 is smaller than the window can be; rendered at" in err
    for bad in ("0x10", "wide"):
        with pytest.raises(SystemExit, match="--size: expected WIDTHxHEIGHT"):
            run([str(assets.example_path("rc_antialias")), "--screenshot", str(out),
                 "--size", bad])


def test_no_display_says_what_to_do(monkeypatch, capsys):
    monkeypatch.setattr("sys.platform", "linux")
    for name in ("DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM"):
        monkeypatch.delenv(name, raising=False)
    assert run([]) == 0
    out, err = capsys.readouterr()
    assert "no display" in err and "--screenshot" in err
    # the bundled demo's equivalent is printed instead of the window
    assert "adc_p" in out and "Ω" in out


def test_the_application_says_who_it_is(qapp):
    from portcut.app.main import _identify

    _identify(qapp)
    assert qapp.applicationName() == "Portcut"
    assert qapp.applicationVersion() == portcut.__version__
    assert qapp.organizationDomain() == "portcut.invalid"
    assert not qapp.windowIcon().isNull()
    assert not qapp.windowIcon().pixmap(32, 32).toImage().isNull()
