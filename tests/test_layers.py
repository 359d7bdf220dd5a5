"""The package's layers: data flows one way, and no module imports one above it.

Every import of a cvfit module counts, at the top of a file or inside a function (a lazy
import is still a dependency), so an upward or circular import fails here by name.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "cvfit"

#: Rank of each part of the package: a module may import its own part and lower ranks.
#: Foundation records and units (0) → solution chemistry (1) → reading files and the
#: simulator (2) → the titration models (3) → the techniques, which turn one file into a
#: measurement of E½ (4; the whole-curve global fit ties curves by a titration model) →
#: the pipeline and its result records (5) → the outputs and the experiment plan (6;
#: beside each other, neither imports the other) → the command line (7).
RANKS = {
    "errors": 0,
    "units": 0,
    "quantity": 0,
    "likelihood": 0,
    "flags": 0,
    "flag_codes": 0,
    "reversibility_criteria": 0,
    "voltammogram": 0,
    "version": 0,
    "formatting": 0,
    "interrupts": 0,
    "record_json": 0,
    "data": 0,
    "chemistry": 1,
    "io": 2,
    "simulate": 2,
    "titration": 3,
    "techniques": 4,
    "pipeline": 5,
    "report": 6,
    "plan": 6,
    "cli": 7,
}
#: The public facade and the ``python -m`` entry point sit above everything.
ABOVE_ALL = {"cvfit", "cvfit.__main__"}


def _modules() -> dict[str, Path]:
    found = {}
    for path in PACKAGE.rglob("*.py"):
        parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        found[".".join(parts)] = path
    return found


MODULES = _modules()


def _imports(name: str, path: Path) -> set[str]:
    """cvfit modules that module *name* imports (a name imported from a package counts as
    the submodule when there is one)."""
    is_package = path.name == "__init__.py"
    out = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = name.split(".") if is_package else name.split(".")[:-1]
                base = base[: len(base) - (node.level - 1)]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target != "cvfit" and not target.startswith("cvfit."):
                continue
            for alias in node.names:
                sub = f"{target}.{alias.name}"
                out.add(sub if sub in MODULES else target)
        elif isinstance(node, ast.Import):
            out.update(a.name for a in node.names if a.name.split(".")[0] == "cvfit")
    out.discard(name)
    return out


GRAPH = {name: _imports(name, path) for name, path in MODULES.items()}


def _part(module: str) -> str:
    """The subpackage of *module*; the top-level modules of rank 0 form one part, the
    foundation (they import one another; the cycle check still covers them)."""
    part = module.split(".")[1] if "." in module else module
    return "foundation" if RANKS.get(part) == 0 and part != "data" else part


def _rank(module: str) -> int:
    if module in ABOVE_ALL:
        return len(set(RANKS.values())) + 1
    part = _part(module)
    return 0 if part == "foundation" else RANKS[part]


def test_every_part_of_the_package_has_a_rank():
    parts = {m.split(".")[1] for m in MODULES if m not in ABOVE_ALL}
    assert parts <= set(RANKS), f"give these a rank in RANKS: {sorted(parts - set(RANKS))}"


@pytest.mark.parametrize("module", sorted(MODULES))
def test_no_upward_import(module):
    upward = sorted(
        target
        for target in GRAPH[module]
        if target in ABOVE_ALL
        or (_part(target) != _part(module) and _rank(target) >= _rank(module))
    )
    assert not upward, f"{module} (rank {_rank(module)}) imports {upward} from above or beside"


def test_no_import_cycle():
    # Tarjan's strongly connected components over every cvfit import
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    cycles: list[list[str]] = []

    def visit(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in GRAPH.get(v, ()):
            if w not in GRAPH:
                continue
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                component.append(w)
                if w == v:
                    break
            if len(component) > 1:
                cycles.append(sorted(component))

    for v in sorted(GRAPH):
        if v not in index:
            visit(v)
    assert not cycles, f"import cycles: {cycles}"


def test_the_check_catches_an_upward_import(tmp_path):
    """The rule itself: a screen module importing the pipeline is refused."""
    fake = tmp_path / "x.py"
    fake.write_text("from cvfit.pipeline.results import FileResult\n")
    targets = _imports("cvfit.techniques.cv.screen.x", fake)
    assert targets == {"cvfit.pipeline.results"}
    assert _rank("cvfit.pipeline.results") > _rank("cvfit.techniques.cv.screen.x")


def test_command_line_imports_no_numerical_library():
    """``cvfit --help`` and ``--version`` build the parser only: no numpy, scipy,
    matplotlib or pandas (each costs 0.1-0.5 s of start-up)."""
    import subprocess
    import sys

    code = (
        "import sys, cvfit.cli as c\n"
        "c.build_parser()\n"
        "heavy = [m for m in ('numpy', 'scipy', 'matplotlib', 'pandas', 'numba', 'lmfit') "
        "if m in sys.modules]\n"
        "print(','.join(heavy))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_design_document_lists_every_module():
    """docs/design.md has one line per module: none missing, none that no longer exists."""
    import re

    design = (PACKAGE.parent / "docs" / "design.md").read_text(encoding="utf-8")
    listed = set(re.findall(r"^\| `(cvfit/[\w/]+\.py)` \|", design, flags=re.M))
    present = {p.relative_to(PACKAGE.parent).as_posix() for p in PACKAGE.rglob("*.py")}
    assert listed == present, (
        f"missing from docs/design.md: {sorted(present - listed)}; "
        f"listed but gone: {sorted(listed - present)}"
    )
