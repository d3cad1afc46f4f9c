"""The import graph of the package: no cycles hidden by late imports, and no upward arrows."""

from __future__ import annotations

import ast
import pathlib
import subprocess
import sys

from tests.architecture.layers import FLOORS, STAGES, floor_of

ROOT = pathlib.Path(__file__).resolve().parents[2] / "thresholdc"
#: Optional extras: only these may be imported inside a function (they may be absent).
OPTIONAL = ("onnx", "onnxruntime", "torch", "matplotlib", "tqdm", "pysat")


def _module_name(path: pathlib.Path) -> str:
    parts = list(path.relative_to(ROOT.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


MODULES = sorted(_module_name(p) for p in ROOT.rglob("*.py"))
#: ``python -m thresholdc`` runs the command line when imported, so it is left out.
IMPORTABLE = [m for m in MODULES if m != "thresholdc.__main__"]


def _imports(path: pathlib.Path) -> list[tuple[str, ast.stmt, bool]]:
    """``(imported module, node, at top level)`` for every import of ``path``."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    name = _module_name(path)
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    top = {id(node) for node in tree.body}
    for node in tree.body:  # ``if TYPE_CHECKING:`` imports are module-level (never run)
        if isinstance(node, ast.If) and getattr(node.test, "id", "") == "TYPE_CHECKING":
            top |= {id(child) for child in node.body}
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found += [(alias.name, node, id(node) in top) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            for alias in node.names:  # ``from pkg import submodule`` imports the submodule
                sub = f"{target}.{alias.name}"
                found.append((sub if sub in MODULES else target, node, id(node) in top))
    return found


def test_every_module_imports_alone_in_sorted_order():
    # A fresh interpreter, so no earlier import hides a cycle that breaks one module alone.
    script = f"import importlib\nfor m in {IMPORTABLE!r}:\n    importlib.import_module(m)\n"
    done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr


def test_no_function_level_imports_except_optional_extras():
    late = []
    for path in sorted(ROOT.rglob("*.py")):
        for target, node, at_top in _imports(path):
            if not at_top and target.split(".")[0] not in OPTIONAL:
                late.append(f"{path.relative_to(ROOT.parent)}:{node.lineno} imports {target}")
    assert late == []


def upward_imports(paths: list[pathlib.Path]) -> list[str]:
    """Every import in ``paths`` of a module on a higher floor than the importer's."""
    upward = []
    for path in paths:
        here = _module_name(path)
        for target, node, _ in _imports(path):
            if target.split(".")[0] == "thresholdc" and floor_of(target) > floor_of(here):
                upward.append(f"{here}:{node.lineno} ({FLOORS[floor_of(here)][0]}) imports "
                              f"{target} ({FLOORS[floor_of(target)][0]})")
    return upward


def test_no_module_imports_a_higher_floor():
    assert upward_imports(sorted(ROOT.rglob("*.py"))) == []


def test_ir_imports_only_base_modules():
    for path in sorted((ROOT / "ir").rglob("*.py")):
        for target, _, _ in _imports(path):
            if target.startswith("thresholdc"):
                assert floor_of(target) <= floor_of("thresholdc.ir"), (path.name, target)


def test_the_layering_check_sees_an_upward_import(monkeypatch, tmp_path):
    # The check must be able to fail: a fake ir module that imports a stage is flagged.
    fake = tmp_path / "thresholdc" / "ir" / "fake.py"
    fake.parent.mkdir(parents=True)
    fake.write_text("from ..synth.cuts import Cut\nfrom .gates import Gate\n")
    monkeypatch.setattr(sys.modules[__name__], "ROOT", tmp_path / "thresholdc")
    assert upward_imports([fake]) == [
        "thresholdc.ir.fake:1 (ir) imports thresholdc.synth.cuts (synth)"
    ]


def test_other_floors_reach_a_stage_through_its_init():
    # ``from ..network import insert_relays``, not ``from ..network.layering import ...``; the
    # one exception is a name equal to its module (``synth.identify.identify``), which a stage
    # ``__init__`` must not re-export (it would hide the module).
    around = []
    for path in sorted(ROOT.rglob("*.py")):
        here = _module_name(path)
        for target, node, _ in _imports(path):
            parts = target.split(".")
            if (parts[0] != "thresholdc" or len(parts) < 3 or parts[1] not in STAGES
                    or floor_of(target) == floor_of(here)):
                continue
            names = [alias.name for alias in getattr(node, "names", [])]
            if isinstance(node, ast.ImportFrom) and names == [parts[-1]]:
                continue
            around.append(f"{here}:{node.lineno} imports {target}")
    assert around == []


def test_no_stage_init_hides_a_submodule():
    for stage in STAGES:
        init = ROOT / stage / "__init__.py"
        if not init.exists():
            continue
        public = set()
        for node in ast.parse(init.read_text(encoding="utf-8")).body:
            if isinstance(node, ast.Assign) and getattr(node.targets[0], "id", "") == "__all__":
                public = set(ast.literal_eval(node.value))
        submodules = {p.stem for p in (ROOT / stage).glob("*.py")} | {
            p.name for p in (ROOT / stage).iterdir() if (p / "__init__.py").exists()}
        assert public & submodules == set(), stage
