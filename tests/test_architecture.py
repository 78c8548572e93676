"""The layout is the architecture: each package imports only the layers below it, no module imports itself in a
circle, nothing below the UI imports streamlit, and modules and functions stay small enough to read.

The allowed imports below are the ones drawn in DEVELOPERS.md ("Layout"); a change of the architecture changes
both. Imports inside functions count as much as those at the top of a module: a deferred import is still a
dependency.
"""

from __future__ import annotations

import ast
import pathlib
from collections import defaultdict

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1] / "procplan"

BASE = {"errors", "validate", "units", "caution", "_version"}
PHYSICS = BASE | {"geometry", "properties", "conduction", "surface", "outcomes"}
#: Per unit of procplan (a top-level module or sub-package): the units it may import.
ALLOWED: dict[str, set[str]] = {
    "errors": set(),
    "units": set(),
    "caution": set(),
    "_version": set(),
    "validate": {"errors"},
    "geometry": {"errors", "validate", "units"},
    "properties": BASE,
    "conduction": BASE | {"geometry", "properties"},
    "surface": BASE | {"geometry", "properties"},
    "outcomes": BASE | {"properties", "geometry"},
    "model": PHYSICS,
    "files": PHYSICS | {"model"},
    "run": PHYSICS | {"model", "files"},
    "output": PHYSICS | {"model", "files", "run"},
    "studies": PHYSICS | {"model", "files", "run", "output"},
    "cli": PHYSICS | {"model", "files", "run", "output", "studies"},
    "bench": PHYSICS | {"model", "files", "run", "studies"},
    "ui": PHYSICS | {"model", "files", "run", "output", "studies"},
    "__init__": PHYSICS | {"model", "files", "run"},
}

#: Functions allowed over the length limit, with the reason.
LONG_FUNCTION_EXEMPT: dict[str, str] = {}
#: Modules allowed over the size limit, with the reason.
LARGE_MODULE_EXEMPT: dict[str, str] = {}
#: The UI pages lay out widgets top to bottom in the order a user reads them; splitting a page's layout into
#: fragments makes it harder to follow, so procplan/ui/ is held to the module limit but not the function limit.
UI_PREFIX = "ui/"
MAX_MODULE_LINES = 600
MAX_FUNCTION_CODE_LINES = 80


def _modules() -> dict[str, pathlib.Path]:
    out = {}
    for path in ROOT.rglob("*.py"):
        rel = path.relative_to(ROOT.parent).with_suffix("")
        name = ".".join(rel.parts)
        if name.endswith(".__init__"):
            name = name[: -len(".__init__")]
        out[name] = path
    return out


MODULES = _modules()


def _unit(module: str) -> str:
    parts = module.split(".")
    return "__init__" if len(parts) == 1 else parts[1]


def _is_type_checking(node: ast.AST) -> bool:
    test = getattr(node, "test", None)
    return isinstance(node, ast.If) and (
        (isinstance(test, ast.Name) and test.id == "TYPE_CHECKING")
        or (isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING")
    )


def _nodes(tree: ast.AST, runtime_only: bool):
    """Every node of ``tree``; with ``runtime_only``, not those under ``if TYPE_CHECKING:``."""
    stack = [tree]
    while stack:
        node = stack.pop()
        yield node
        for child in ast.iter_child_nodes(node):
            if runtime_only and _is_type_checking(child):
                continue
            stack.append(child)


def _imports(module: str, path: pathlib.Path, runtime_only: bool = False) -> set[str]:
    """Every procplan module that ``module`` imports, at the top or inside a function (with ``runtime_only``,
    leaving out imports made only for type checkers, which cannot form a cycle at run time)."""
    found: set[str] = set()
    package = module if path.name == "__init__.py" else module.rsplit(".", 1)[0]
    for node in _nodes(ast.parse(path.read_text(encoding="utf-8")), runtime_only):
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names if a.name.split(".")[0] == "procplan")
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                base = ".".join(
                    package.split(".")[: len(package.split(".")) - node.level + 1] + [base]
                ).strip(".")
            if base.split(".")[0] != "procplan":
                continue
            for alias in node.names:
                sub = f"{base}.{alias.name}"
                found.add(sub if sub in MODULES else base)
    return {m for m in found if m != module}


GRAPH = {m: _imports(m, p) for m, p in MODULES.items()}
RUNTIME_GRAPH = {m: _imports(m, p, runtime_only=True) for m, p in MODULES.items()}


def test_every_unit_is_known():
    units = {_unit(m) for m in MODULES}
    assert units <= set(ALLOWED), f"add these to ALLOWED and to DEVELOPERS.md: {sorted(units - set(ALLOWED))}"


def test_each_package_imports_only_the_layers_below_it():
    bad = defaultdict(set)
    for module, targets in GRAPH.items():
        unit = _unit(module)
        for target in targets:
            tunit = _unit(target)
            if tunit != unit and tunit not in ALLOWED.get(unit, set()):
                bad[module].add(target)
    assert not bad, "imports that break the layering:\n" + "\n".join(
        f"{m} -> {sorted(t)}" for m, t in bad.items()
    )


def test_no_import_cycle_among_modules():
    # Tarjan's strongly connected components; a package's __init__ importing its own sub-modules is not a cycle
    # unless a sub-module imports the package back.
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    cycles: list[list[str]] = []
    counter = [0]

    def visit(v: str) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on_stack.add(v)
        for w in RUNTIME_GRAPH.get(v, ()):
            if w not in RUNTIME_GRAPH:
                continue
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

    for module in sorted(RUNTIME_GRAPH):
        if module not in index:
            visit(module)
    assert not cycles, f"import cycles: {cycles}"


def test_nothing_below_the_ui_imports_streamlit():
    leaks = []
    for module, path in MODULES.items():
        if _unit(module) == "ui":
            continue
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.module:
                names = [node.module]
            if any(n.split(".")[0] == "streamlit" for n in names):
                leaks.append(module)
    assert not leaks


def _code_lines(lines: list[str], start: int, end: int) -> int:
    return sum(1 for line in lines[start - 1 : end] if line.strip() and not line.strip().startswith("#"))


@pytest.mark.parametrize("module", sorted(MODULES))
def test_modules_and_functions_stay_small(module):
    path = MODULES[module]
    rel = path.relative_to(ROOT).as_posix()
    text = path.read_text(encoding="utf-8")
    lines = text.splitlines()
    if rel not in LARGE_MODULE_EXEMPT:
        assert len(lines) <= MAX_MODULE_LINES, f"{rel} has {len(lines)} lines; split it"
    if rel.startswith(UI_PREFIX):
        return
    long = []
    for node in ast.walk(ast.parse(text)):
        if not isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef):
            continue
        body = node.body
        first = body[0]
        has_doc = isinstance(first, ast.Expr) and isinstance(first.value, ast.Constant)
        start = (first.end_lineno + 1) if has_doc and len(body) > 1 else first.lineno
        n = _code_lines(lines, start, node.end_lineno)
        if n > MAX_FUNCTION_CODE_LINES and f"{rel}:{node.name}" not in LONG_FUNCTION_EXEMPT:
            long.append(f"{node.name} ({n} lines)")
    assert not long, f"{rel}: functions over {MAX_FUNCTION_CODE_LINES} lines of code: {long}"


def test_importing_procplan_loads_no_numerical_library():
    # The public API loads on first use, so a command's start (and `import procplan`) stays light.
    import subprocess
    import sys

    code = (
        "import sys, procplan; heavy = [m for m in ('numpy', 'scipy', 'pandas', 'streamlit') if m in sys.modules];"
        "print(','.join(heavy))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""
    code = "import procplan; print(procplan.run_plan.__module__, procplan.Plan.__name__)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split() == ["procplan.run.engine", "Plan"]


#: What `procplan run` of a plan on the exact series solution must not load: the optimisers, the finite
#: volume's sparse and dense solvers, brining (salt and its CoolProp brine curve only through the air), packed
#: loads and the output files; each model is imported where it is used.
NOT_FOR_AN_EXACT_RUN = (
    "scipy.optimize",
    "scipy.sparse",
    "scipy.linalg",
    "scipy.integrate",
    "scipy.stats",
    "procplan.conduction.finite_volume",
    "procplan.conduction.fv_linear",
    "procplan.run.mass_step",
    "procplan.run.packing",
    "procplan.studies",
    "procplan.output.xlsx",
    "procplan.output.sheet",
)


def test_running_a_plan_on_the_exact_solution_loads_only_what_it_needs():
    # The vial demo plan (one step in an air cold room, exact series solution) in a fresh interpreter, as the
    # command line runs it. It needs pandas (the history), scipy.special (the series' Bessel functions) and
    # CoolProp (the air's properties); the modules below are for other plans and must load only when used.
    import json
    import subprocess
    import sys

    code = (
        "import contextlib, io, json, sys\n"
        "from procplan.cli.main import main\n"
        "out = io.StringIO()\n"
        "with contextlib.redirect_stdout(out):\n"
        "    rc = main(['run', 'vial-cool-down', '--json'])\n"
        "doc = json.loads(out.getvalue())\n"
        "print(json.dumps({'rc': rc, 'solvers': [s['solver'] for s in doc['summary']['steps']],"
        " 'loaded': sorted(sys.modules)}))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    found = json.loads(out.stdout.strip().splitlines()[-1])
    assert found["rc"] == 0
    assert found["solvers"] == ["exact"], "the demo plan no longer runs on the exact solution; pick another"
    loaded = set(found["loaded"])
    assert {"pandas", "scipy.special", "procplan.conduction.series"} <= loaded  # the check can see imports
    leaked = [p for p in NOT_FOR_AN_EXACT_RUN if any(m.startswith(p) for m in loaded)]
    assert not leaked, f"loaded although the plan does not use them: {leaked}"
