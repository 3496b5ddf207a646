"""Imports run one way, app -> engine: engine never imports Qt, the plotting library or the app.

Three independent checks: import-linter's contract from pyproject.toml, a scan of every import
statement under engine/, and a fresh interpreter that imports every engine module. Each is also
run against a deliberately bad tree, so a contract that could never fail is caught too.
"""

from __future__ import annotations

import ast
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
FORBIDDEN = frozenset({"PySide6", "shiboken6", "pyqtgraph"})
APP = "portcut.app"


def _forbidden(module: str) -> bool:
    return module.split(".")[0] in FORBIDDEN or module == APP or module.startswith(f"{APP}.")

_LINT = (
    "import sys\n"
    "from importlinter.cli import lint_imports\n"
    "sys.exit(lint_imports(config_filename='pyproject.toml', no_cache=True, no_logo=True))\n"
)
_IMPORT_ALL = (
    "import importlib, pkgutil, sys\n"
    "import portcut.engine as engine\n"
    "for info in pkgutil.walk_packages(engine.__path__, 'portcut.engine.'):\n"
    "    importlib.import_module(info.name)\n"
    f"print(sorted(m for m in sys.modules if m.split('.')[0] in {sorted(FORBIDDEN)!r}\n"
    f"             or m == {APP!r} or m.startswith({APP + '.'!r})))\n"
)


def _run(code: str, cwd: Path) -> subprocess.CompletedProcess[str]:
    # A fresh interpreter with cwd first on sys.path, so ``portcut`` is the tree under test (in
    # the repository the package mapping of the editable install supplies portcut.engine).
    return subprocess.run([sys.executable, "-c", code], cwd=cwd, capture_output=True, text=True,
                          timeout=120, check=False)


def forbidden_imports(package_dir: Path) -> list[str]:
    """``"file:line module"`` for every import under ``package_dir`` that names a forbidden root.

    Relative imports stay inside the package (Python refuses to climb above a top-level package),
    so only absolute ones can reach a forbidden module.
    """
    found = []
    base = package_dir.parent
    for path in sorted(package_dir.rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), str(path))):
            if isinstance(node, ast.Import):
                modules = [alias.name for alias in node.names]
            elif isinstance(node, ast.ImportFrom) and node.level == 0:
                # ``from portcut import app`` names the forbidden module among the names
                module = node.module or ""
                modules = [module] if _forbidden(module) else [f"{module}.{a.name}"
                                                                for a in node.names]
            else:
                continue
            found += [f"{path.relative_to(base)}:{node.lineno} {module}" for module in modules
                      if _forbidden(module)]
    return found


@pytest.fixture
def bad_tree(tmp_path: Path) -> Path:
    """A copy of the project's contract with a tiny engine that breaks it (engine -> app)."""
    shutil.copy(ROOT / "pyproject.toml", tmp_path / "pyproject.toml")
    top = tmp_path / "portcut"
    (top / "engine" / "sub").mkdir(parents=True)
    (top / "__init__.py").write_text("")
    (top / "engine" / "__init__.py").write_text("")
    (top / "engine" / "sub" / "__init__.py").write_text("")
    (top / "engine" / "sub" / "view.py").write_text("from portcut.app import window\n")
    for layer in ("cli", "drawing", "schematic", "solve"):  # the layers the contract names
        (top / "engine" / layer).mkdir()
        (top / "engine" / layer / "__init__.py").write_text("")
    (top / "app").mkdir()
    (top / "app" / "__init__.py").write_text("")
    (top / "app" / "window.py").write_text("")
    for package in ("canvas", "canvas/tools", "panels"):  # the app contracts name these
        (top / "app" / package).mkdir()
        (top / "app" / package / "__init__.py").write_text("")
    (top / "app" / "canvas" / "canvas.py").write_text("")
    (top / "app" / "canvas" / "view.py").write_text("")
    return tmp_path


def installed_layout(target: Path) -> Path:
    """The tree as installed (portcut/engine, portcut/app, portcut/assets), copied under
    ``target``: the import graph is read from files, and the repository keeps the sub-packages
    at its top level, which only the package mapping joins."""
    shutil.copy(ROOT / "pyproject.toml", target / "pyproject.toml")
    shutil.copytree(ROOT / "portcut", target / "portcut")
    for name in ("engine", "app", "assets"):
        shutil.copytree(ROOT / name, target / "portcut" / name,
                        ignore=shutil.ignore_patterns("__pycache__"))
    return target


def test_import_linter_contract_is_kept(tmp_path: Path) -> None:
    result = _run(_LINT, installed_layout(tmp_path))
    assert result.returncode == 0, result.stdout + result.stderr
    assert "engine is independent of Qt and of the app KEPT" in result.stdout
    assert "engine layers: cli over drawing over schematic over solve KEPT" in result.stdout
    for contract in APP_CONTRACTS:
        assert f"{contract} KEPT" in result.stdout


#: The app's contracts against its three former import circles: each is broken by the import that
#: closed its circle (a type-only import counts: import-linter reads those too).
APP_CONTRACTS = {
    "canvas tools see the canvas only through ToolHost":
        (("app", "canvas", "tools", "wire.py"),
         "\nfrom typing import TYPE_CHECKING\n"
         "if TYPE_CHECKING:\n    from ..canvas import Canvas\n"),
    "the view sees the canvas only through ViewHost":
        (("app", "canvas", "view.py"), "\nif TYPE_CHECKING:\n    from .canvas import Canvas\n"),
    "panels are installed by the window and never import it":
        (("app", "panels", "sweep.py"), "\nfrom ..window import MainWindow\n"),
}


@pytest.mark.parametrize("contract", list(APP_CONTRACTS))
def test_the_app_contracts_catch_the_import_that_closed_a_circle(tmp_path: Path,
                                                                 contract: str) -> None:
    parts, added = APP_CONTRACTS[contract]
    module = installed_layout(tmp_path) / "portcut" / Path(*parts)
    module.write_text(module.read_text(encoding="utf-8") + added, encoding="utf-8")
    result = _run(_LINT, tmp_path)
    assert result.returncode != 0
    assert f"{contract} BROKEN" in result.stdout
    others = [c for c in APP_CONTRACTS if c != contract]
    assert all(f"{c} KEPT" in result.stdout for c in others)


def test_the_layer_contract_catches_a_solver_that_reads_the_schematic(tmp_path: Path) -> None:
    layout = installed_layout(tmp_path)
    topology = layout / "portcut" / "engine" / "solve" / "topology.py"
    topology.write_text(topology.read_text(encoding="utf-8") + "\nfrom ..schematic import model\n",
                        encoding="utf-8")
    result = _run(_LINT, layout)
    assert result.returncode != 0
    assert "engine layers: cli over drawing over schematic over solve BROKEN" in result.stdout


def test_import_linter_contract_catches_an_engine_to_app_import(bad_tree: Path) -> None:
    result = _run(_LINT, bad_tree)
    assert result.returncode != 0
    assert "BROKEN" in result.stdout


def test_no_engine_file_imports_qt_plotting_or_app() -> None:
    assert forbidden_imports(ROOT / "engine") == []


def test_scan_finds_every_forbidden_import(bad_tree: Path) -> None:
    engine = bad_tree / "portcut" / "engine"
    (engine / "plot.py").write_text("import os\nfrom . import sub\n"
                                    "import numpy, pyqtgraph as pg\n"
                                    "from PySide6.QtCore import QObject\n"
                                    "from portcut import app\n")
    assert forbidden_imports(engine) == [
        "engine/plot.py:3 pyqtgraph",
        "engine/plot.py:4 PySide6.QtCore",
        "engine/plot.py:5 portcut.app",
        "engine/sub/view.py:1 portcut.app",
    ]


def test_importing_every_engine_module_loads_no_qt() -> None:
    result = _run(_IMPORT_ALL, ROOT)
    assert result.returncode == 0, result.stderr
    assert result.stdout.strip() == "[]"


def test_import_check_sees_a_module_that_pulls_in_the_app(bad_tree: Path) -> None:
    result = _run(_IMPORT_ALL, bad_tree)
    assert result.returncode == 0, result.stderr
    assert "'portcut.app'" in result.stdout
