"""Starting the window.

``portcut`` opens the bundled demo; ``portcut FILE`` opens a sheet; ``portcut FILE --screenshot
OUT.png`` renders the main window offscreen into a PNG and exits (for the docs and for checks),
without reading or writing the user's settings.
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import traceback
from pathlib import Path

__all__ = ["run"]

_NO_DISPLAY = (
    "portcut: no display to open the window on (neither DISPLAY nor WAYLAND_DISPLAY is set), so "
    "here is the sheet's equivalent in the terminal.\n"
    "Run it in a graphical session for the workbench, use the headless commands (portcut reduce "
    "| sweep | export | fit --help), or render the window with: portcut FILE --screenshot OUT.png\n"
)


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="portcut", description="Portcut: sketch a linear circuit, "
                                "outline a region, read its Thevenin and Norton equivalents.")
    p.add_argument("file", nargs="?", type=Path,
                   help="sheet to open (default: the bundled demo)")
    p.add_argument("--screenshot", type=Path, metavar="OUT.png",
                   help="render the window offscreen to this PNG and exit")
    p.add_argument("--size", default="1400x860", metavar="WxH",
                   help="window size for --screenshot (default 1400x860)")
    p.add_argument("--theme", choices=("light", "dark"), help="canvas theme")
    p.add_argument("--symbols", choices=("iec", "ieee"), help="symbol style")
    p.add_argument("--select", metavar="NAMES", default="",
                   help="comma-separated designators to select (shown in the inspector)")
    return p


def _has_display() -> bool:
    if sys.platform in ("win32", "darwin") or os.environ.get("QT_QPA_PLATFORM"):
        return True
    return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))


def _size(text: str) -> tuple[int, int]:
    try:
        w, h = (int(v) for v in text.lower().split("x"))
    except ValueError:
        w = h = 0
    if w <= 0 or h <= 0:
        raise SystemExit(f"portcut: --size: expected WIDTHxHEIGHT in pixels such as 1400x860, "
                         f"got {text!r}")
    return w, h


def run(argv: list[str]) -> int:
    """Open the window (or render a screenshot); returns the process exit code."""
    parser = _parser()
    args, qt_args = parser.parse_known_args(argv)  # the rest is Qt's own (-style, -platform …)
    if args.screenshot is not None:
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
        _quiet_platform_notes()
    elif not _has_display():
        print(_NO_DISPLAY, file=sys.stderr)
        from portcut.engine.cli import commands as cli

        return cli.main(["reduce", *([str(args.file)] if args.file is not None else [])])

    from PySide6.QtCore import QSettings, QStandardPaths
    from PySide6.QtWidgets import QApplication

    from portcut import assets

    app = QApplication.instance()
    if app is None:
        app = QApplication([sys.argv[0] or "portcut", *qt_args])
        qt_args = app.arguments()[1:]  # what Qt did not take as its own
    if qt_args:
        parser.error(f"unrecognized arguments: {' '.join(qt_args)}")
    _identify(app)
    from .settings import Settings
    from .window import MainWindow

    if args.screenshot is not None:
        with tempfile.TemporaryDirectory() as scratch:
            store = QSettings(str(Path(scratch) / "settings.ini"), QSettings.Format.IniFormat)
            return _screenshot(args, MainWindow(Settings(store)))

    folder = Path(QStandardPaths.writableLocation(
        QStandardPaths.StandardLocation.AppDataLocation)) / "recovery"
    window = MainWindow(Settings(), recovery_folder=folder)
    _apply_looks(window, args)
    _install_error_hook(window)
    window.show()
    if not window.offer_recovery():
        if args.file is not None:
            window.files.open_path(args.file)
        elif assets.example_path().exists():
            window.files.open_path(assets.example_path(), as_copy=True)
    return app.exec()


def _identify(app) -> None:
    """Name, version, settings location and icon of the application (the domain is a reserved
    one: Portcut has none of its own, and settings only need a unique folder)."""
    from PySide6.QtGui import QIcon

    import portcut
    from portcut import assets

    app.setOrganizationName("Portcut")
    app.setOrganizationDomain("portcut.invalid")
    app.setApplicationName("Portcut")
    app.setApplicationVersion(portcut.__version__)
    app.setDesktopFileName("portcut")
    app.setWindowIcon(QIcon(str(assets.icon_path())))


def _apply_looks(window, args: argparse.Namespace) -> None:
    if args.theme:
        window.set_theme(args.theme)
    if args.symbols:
        window.set_style(args.symbols)


def _quiet_platform_notes() -> None:
    """Drop the windowing layer's notes on what an off-screen surface cannot do (size hints and
    the like): a screenshot run has no screen, and they would read as problems on stderr."""
    from PySide6.QtCore import qInstallMessageHandler

    def handler(kind, context, message: str) -> None:
        if not message.startswith("This plugin does not support"):
            sys.stderr.write(message + "\n")
    qInstallMessageHandler(handler)


def _screenshot(args: argparse.Namespace, window) -> int:
    from PySide6.QtWidgets import QApplication

    from portcut import assets

    _apply_looks(window, args)
    window.files.report = lambda *message: None  # nobody is watching: the reason goes to stderr
    path = args.file if args.file is not None else assets.example_path()
    size = _size(args.size)
    if not window.files.open_path(path, as_copy=args.file is None):
        print(f"portcut: {window.files.last_error}", file=sys.stderr)  # it names the file
        return 1
    doc = window.workbench.doc
    names = [n.strip() for n in args.select.split(",") if n.strip()]
    missing = [n for n in names if doc.by_designator(n) is None]
    if missing:
        known = ", ".join(sorted(e.designator for e in (*doc.parts(), *doc.blocks())))
        print(f"portcut: --select: no part {', '.join(missing)} on the sheet; its parts are "
              f"{known or 'none'}", file=sys.stderr)
        return 2
    window.resize(*size)
    window.show()
    for _ in range(3):  # let the docks settle their sizes before fitting the drawing
        QApplication.processEvents()
    got = (window.width(), window.height())
    if got != size:
        print(f"portcut: --size {size[0]}x{size[1]} is smaller than the window can be; "
              f"rendered at {got[0]}x{got[1]}", file=sys.stderr)
    window.canvas.view.fit()
    window.canvas.scene.select_ids([doc.by_designator(n).id for n in names])
    window.analysis.finish()  # a large sheet is analysed in the background
    QApplication.processEvents()
    ok = window.grab().save(str(args.screenshot))
    window.close()
    if not ok:
        print(f"portcut: could not write {args.screenshot}", file=sys.stderr)
        return 1
    return 0


def _install_error_hook(window) -> None:
    """Unexpected errors end up in a dialog (and the full report in a log file), not as a
    traceback on the terminal; autosave keeps the work."""
    from PySide6.QtCore import QStandardPaths

    from .dialogs import show_error

    log = Path(QStandardPaths.writableLocation(
        QStandardPaths.StandardLocation.AppDataLocation)) / "errors.log"

    def hook(kind, value, tb) -> None:
        log.parent.mkdir(parents=True, exist_ok=True)
        with log.open("a", encoding="utf-8") as f:
            f.write("".join(traceback.format_exception(kind, value, tb)) + "\n")
        show_error(window, "Something went wrong",
                   "Portcut hit an internal error; the sheet is as it was before the last "
                   "action, and autosave keeps your work.", f"{value}\n\nDetails: {log}")

    sys.excepthook = hook
