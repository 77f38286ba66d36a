"""Imports point down the data's way (DEVELOPERS.md, "Data flow"): a module's top-level imports
reach only its own stage and the stages before it. Imports inside functions (a result handing
``plot()`` to rendering, a product writing the file it was asked for) are done on demand and are
not counted; neither are imports for type checking."""

from __future__ import annotations

import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[1] / "oneport"

#: The stages in the order the data pass through them; the ground floor comes first.
STAGES = ("ground", "reading", "circuit", "analysis", "products", "rendering", "commands", "cli")
GROUND = {"errors", "units", "cautions", "findings", "display", "__init__", "__main__"}


def _stage(parts: tuple[str, ...]) -> str:
    """The stage of a module given as its path parts below ``oneport``."""
    if len(parts) == 1:
        name = parts[0]
        return "cli" if name in ("cli", "__main__") else "ground" if name in GROUND else name
    return parts[0]


def _top_level_imports(path: Path) -> list[tuple[int, tuple[str, ...]]]:
    """(line, target module parts below oneport) of the module-level relative imports, outside
    ``if TYPE_CHECKING:`` blocks."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = path.relative_to(PACKAGE).with_suffix("").parts[:-1]  # relative imports' base
    found = []
    for node in tree.body:
        if isinstance(node, ast.ImportFrom) and node.level:
            base = package[: len(package) - (node.level - 1)] if node.level > 1 else package
            target = (*base, *(node.module.split(".") if node.module else ()))
            if not node.module:
                for alias in node.names:
                    found.append((node.lineno, (*target, alias.name)))
            else:
                found.append((node.lineno, target))
    return found


def test_module_level_imports_point_down() -> None:
    order = {stage: index for index, stage in enumerate(STAGES)}
    wrong = []
    for path in sorted(PACKAGE.rglob("*.py")):
        parts = path.relative_to(PACKAGE).with_suffix("").parts
        if parts[-1] == "__init__" and len(parts) == 1:
            continue  # the package's curated surface names every product (lazily)
        stage = _stage(parts if parts[-1] != "__init__" else parts[:-1] or parts)
        for line, target in _top_level_imports(path):
            if not target:
                continue
            target_stage = _stage(target)
            if target_stage not in order or stage not in order:
                continue
            if order[target_stage] > order[stage]:
                wrong.append(f"{path.relative_to(PACKAGE)}:{line} ({stage}) imports {target}")
    assert wrong == [], "imports that point up the data's way:\n" + "\n".join(wrong)
