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
        raise SystemExit(f"portcut: --size: expected WIDTHxHEIGHT such as 1400x860, got "
                         f"{text!r}") from None
    return w, h


def run(argv: list[str]) -> int:
    """Open the window (or render a screenshot); returns the process exit code."""
    args = _parser().parse_args(argv)
    if args.screenshot is not None:
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    elif not _has_display():
        print(_NO_DISPLAY, file=sys.stderr)
        from engine import cli

        return cli.main(["reduce", *([str(args.file)] if args.file is not None else [])])

    from PySide6.QtCore import QSettings, QStandardPaths
    from PySide6.QtWidgets import QApplication

    import assets

    app = QApplication.instance() or QApplication(["portcut"])
    app.setOrganizationName("Portcut")
    app.setApplicationName("Portcut")
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


def _apply_looks(window, args: argparse.Namespace) -> None:
    if args.theme:
        window.set_theme(args.theme)
    if args.symbols:
        window.set_style(args.symbols)


def _screenshot(args: argparse.Namespace, window) -> int:
    from PySide6.QtWidgets import QApplication

    import assets

    _apply_looks(window, args)
    window.files.report = lambda *message: None  # nobody is watching: the reason goes to stderr
    path = args.file if args.file is not None else assets.example_path()
    if not window.files.open_path(path, as_copy=args.file is None):
        print(f"portcut: cannot open {path}: {window.files.last_error}", file=sys.stderr)
        return 1
    window.resize(*_size(args.size))
    window.show()
    for _ in range(3):  # let the docks settle their sizes before fitting the drawing
        QApplication.processEvents()
    window.canvas.view.fit()
    names = [n.strip() for n in args.select.split(",") if n.strip()]
    chosen = [e.id for n in names if (e := window.workbench.doc.by_designator(n)) is not None]
    window.canvas.scene.select_ids(chosen)
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
