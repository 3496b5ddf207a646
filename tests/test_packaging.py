"""The distribution's layout: one import name of its own, every package listed, no promised
file missing. (The wheel itself is built and installed into a fresh environment by .ci/run.)"""

from __future__ import annotations

import tomllib
from pathlib import Path

import portcut

ROOT = Path(__file__).resolve().parents[1]
CONFIG = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
SETUPTOOLS = CONFIG["tool"]["setuptools"]


def _folder(package: str) -> Path:
    """Where the package mapping puts ``package`` in the repository."""
    mapping = SETUPTOOLS["package-dir"]
    parts = package.split(".")
    for n in range(len(parts), 0, -1):
        head = ".".join(parts[:n])
        if head in mapping:
            return ROOT / mapping[head] / Path(*parts[n:])
    raise AssertionError(f"{package} is outside every mapped package")


def test_every_installed_name_is_under_portcut() -> None:
    assert all(p == "portcut" or p.startswith("portcut.") for p in SETUPTOOLS["packages"])
    assert all(k == "portcut" or k.startswith("portcut.") for k in SETUPTOOLS["package-dir"])


def test_the_package_list_holds_every_folder_with_an_init() -> None:
    listed = {_folder(p) for p in SETUPTOOLS["packages"]}
    on_disk = {init.parent for top in {ROOT / d for d in SETUPTOOLS["package-dir"].values()}
               for init in top.rglob("__init__.py")}
    assert on_disk == listed


def test_every_package_data_pattern_matches_a_file() -> None:
    for package, patterns in SETUPTOOLS["package-data"].items():
        for pattern in patterns:
            assert list(_folder(package).glob(pattern)), f"{package}: nothing matches {pattern}"


def test_version_is_the_distributions() -> None:
    assert SETUPTOOLS["dynamic"]["version"] == {"attr": "portcut.__version__"}
    assert portcut.__version__.count(".") == 2


def test_nothing_imports_the_repository_folders_by_their_own_names() -> None:
    """Only the package mapping joins engine/, app/ and assets/ under portcut; imported as
    top-level names they would be second copies of every module (and absent when installed)."""
    import ast

    found = []
    for folder in ("engine", "app", "assets", "portcut", "tests", "benchmarks", "docs"):
        for path in sorted((ROOT / folder).rglob("*.py")):
            for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
                names = ([a.name for a in node.names] if isinstance(node, ast.Import) else
                         [node.module or ""] if isinstance(node, ast.ImportFrom)
                         and node.level == 0 else [])
                found += [f"{path.relative_to(ROOT)}:{node.lineno} {n}" for n in names
                          if n.split(".")[0] in ("engine", "app", "assets")]
    assert found == []
