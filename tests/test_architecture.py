"""The shape of the code: one registry of circuits, imports that point one way.

No reference numbers here: these tests read the source tree with ``ast``.
"""

from __future__ import annotations

import ast
from pathlib import Path
from typing import get_args

from pulsepick.circuits.base import (
    ChipKind,
    PartKind,
    core_names,
    get_core,
    get_stage,
    stage_names,
)
from pulsepick.engine.environment import CHIP_KEYS

PACKAGE = Path(__file__).resolve().parent.parent / "pulsepick"

#: Import layers, top to bottom: a module may import its own layer and the ones below.
LAYERS = (
    ("api", "commands", "cli", "__main__"),
    ("output",),
    ("solve", "request", "designfile", "analysis", "packing"),
    ("design", "partslist"),
    ("engine",),
    ("circuits",),
    ("parts",),
    ("units", "series", "tables", "errors", "physconst", "colour", "data", "limits", "infile",
     "workers", "runner", "hints"),
)

#: Upward imports still tolerated (none: keep it that way).
KNOWN_UPWARD: set[tuple[str, str]] = set()


def _modules() -> dict[str, Path]:
    out = {}
    for path in PACKAGE.rglob("*.py"):
        parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
        name = ".".join(parts[:-1] if parts[-1] == "__init__" else parts)
        out[name] = path
    return out


MODULES = _modules()


def _imports(name: str, path: Path) -> set[str]:
    """Every pulsepick module ``name`` imports, at the top or inside a function."""
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    found = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module or ""
            for alias in node.names:
                full = f"{module}.{alias.name}"
                found.add(full if full in MODULES else module)
    return {m for m in found if m in MODULES and m != name}


GRAPH = {name: _imports(name, path) for name, path in MODULES.items()}


def _layer(name: str) -> int | None:
    parts = name.split(".")
    if len(parts) == 1:
        return None  # the package itself (its public API may gather from every layer)
    for i, members in enumerate(LAYERS):
        if parts[1] in members:
            return i
    raise AssertionError(f"{name} is in no layer: add it to LAYERS")


def test_the_graph_is_read():
    assert len(GRAPH) > 60
    assert "pulsepick.circuits.base" in GRAPH["pulsepick.design"]


def test_imports_point_down():
    upward = set()
    for name, targets in GRAPH.items():
        for target in targets:
            a, b = _layer(name), _layer(target)
            if a is not None and b is not None and b < a:
                upward.add((name, target))
    assert upward == KNOWN_UPWARD


def test_only_the_shell_starts_worker_processes():
    # the core takes a runner from its caller (pulsepick.runner); the pool is the shell's
    shell = set(LAYERS[0])
    starters = sorted(name for name, targets in GRAPH.items()
                      if "pulsepick.workers" in targets
                      and (len(name.split(".")) == 1 or name.split(".")[1] not in shell))
    assert starters == []
    assert any("pulsepick.workers" in GRAPH[n] for n in GRAPH if n.startswith(
        "pulsepick.commands."))


def test_no_import_cycles():
    # Tarjan's strongly connected components: any component of two or more is a cycle
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    cycles = []

    def visit(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in sorted(GRAPH[v]):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                cycles.append(sorted(comp))

    for v in sorted(GRAPH):
        if v not in index:
            visit(v)
    assert cycles == []


# ------------------------------------------------------------------ the circuit registry

#: Words that are also a core's or stage's name in another vocabulary: chip keys
#: ("timer555"), chip kinds ("schmitt") and part kinds ("transistor"). Such a string is
#: allowed outside pulsepick/circuits/ unless it is compared with or passed as a core or
#: stage.
OTHER_VOCABULARIES = set(CHIP_KEYS) | set(get_args(ChipKind)) | set(get_args(PartKind))


def _circuit_context(node: ast.AST, parents: dict) -> bool:
    """True when a string constant stands for a core or a stage where it is used."""
    parent = parents.get(node)
    if isinstance(parent, ast.Compare):
        # compared with something named core or stage (topo.core, stage, ...), not with
        # another vocabulary's field (core.chip_kind, chip.family)
        for operand in (parent.left, *parent.comparators):
            if operand is node:
                continue
            last = operand.attr if isinstance(operand, ast.Attribute) else getattr(
                operand, "id", "")
            if last.endswith(("core", "stage")):
                return True
        return False
    if isinstance(parent, ast.keyword):
        return parent.arg in ("core", "stage")
    if isinstance(parent, ast.Call):
        return "Topology" in ast.unparse(parent.func)
    if isinstance(parent, ast.Dict | ast.Tuple | ast.List | ast.Set):
        return _circuit_context(parent, parents)
    return False


def test_no_module_outside_circuits_names_a_core_or_stage():
    names = set(core_names()) | set(stage_names())
    assert {"schmitt", "timer555", "direct", "transistor"} <= names
    found = []
    for name, path in MODULES.items():
        if name.startswith("pulsepick.circuits"):
            continue
        tree = ast.parse(path.read_text(encoding="utf-8"))
        parents = {child: node for node in ast.walk(tree) for child in ast.iter_child_nodes(node)}
        docstrings = {id(n.body[0].value) for n in ast.walk(tree)
                      if isinstance(n, ast.Module | ast.ClassDef | ast.FunctionDef)
                      and n.body and isinstance(n.body[0], ast.Expr)}
        for node in ast.walk(tree):
            if not (isinstance(node, ast.Constant) and node.value in names):
                continue
            if id(node) in docstrings:
                continue
            if node.value in OTHER_VOCABULARIES and not _circuit_context(node, parents):
                continue
            found.append(f"{path.relative_to(PACKAGE.parent)}:{node.lineno} {node.value!r}")
    assert found == []


def test_every_core_and_stage_declares_what_the_program_asks():
    core_fields = ("params", "chip_kind", "default_family", "bufferable", "steers",
                   "search_rank", "ldr_param", "timing_search", "slow_phase_core")
    stage_fields = ("params", "n_states", "lits", "pulsed", "steady_load", "gate_carries_led",
                    "search", "search_rank", "search_from_peak_a")
    for name in core_names():
        core = get_core(name)
        assert all(hasattr(core, f) for f in core_fields), name
        for method in ("label", "extra_parts", "end_currents", "timing_resistances",
                       "held_resistance", "phase_times", "ref_currents", "spice"):
            assert callable(getattr(core, method)), (name, method)
        assert all(p.flag.startswith("--") and p.help for p in core.params), name
    for name in stage_names():
        stage = get_stage(name)
        assert all(hasattr(stage, f) for f in stage_fields), name
        for method in ("label", "extra_parts", "led_note", "search_grid", "refine", "fast",
                       "ref_init", "ref_currents", "spice"):
            assert callable(getattr(stage, method)), (name, method)
        assert all(p.flag.startswith("--") and p.help and p.example for p in stage.params)
