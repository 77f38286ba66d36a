"""DEVELOPERS.md's room table names every module of the package, and nothing that is gone."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "oneport"


def _modules() -> set[str]:
    """Every module of the package, as a path below oneport/ (``__init__``s left out)."""
    return {
        path.relative_to(PACKAGE).as_posix()
        for path in PACKAGE.rglob("*.py")
        if path.name not in ("__init__.py", "__main__.py")
    }


def _table_entries() -> tuple[set[str], set[str]]:
    """The modules and folders the room table names (first column, in backticks)."""
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    section = text.split("## Rooms and what they must not touch", 1)[1].split("\n## ", 1)[0]
    modules: set[str] = set()
    folders: set[str] = set()
    for row in section.splitlines():
        if not row.startswith("| `"):
            continue
        first = row.split("|")[1]
        names = re.findall(r"`([^`]+)`", first)
        folder = ""
        for name in names:
            if name.endswith("/"):
                folders.add(name)
                continue
            if "/" in name:
                folder = name.rsplit("/", 1)[0] + "/"
            elif folder and not name.startswith("*"):
                name = folder + name
            modules.add(name)
    return modules, folders


def test_every_module_has_a_row_and_every_row_a_module():
    modules = _modules()
    listed, folders = _table_entries()
    wildcard = {name.split("/*")[0] + "/" for name in listed if "*" in name}
    covered = {
        module
        for module in modules
        if module in listed or any(module.startswith(f) for f in folders | wildcard)
    }
    assert modules - covered == set(), "modules missing from DEVELOPERS.md's room table"
    named = {name for name in listed if "*" not in name}
    assert named - modules == set(), "DEVELOPERS.md names modules that do not exist"
    assert {f for f in folders if not (PACKAGE / f).is_dir()} == set()
