"""The layout of the package: every module imports on its own, imports run one way between the layers, and no
module imports another in a loop (the rules written at the top of each subpackage's ``__init__.py``).

Reference: the project's contributor guide (DEVELOPERS.md, "Architecture"); the checks read the source with
:mod:`ast`, so imports inside functions count too.
"""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[1] / "avalanche"
BASE = {"_version", "constants", "errors", "quantities"}
ALLOWED = {
    "base": set(),
    "kernels": {"constants"},
    "gas": {"constants", "errors", "_version", "quantities"},
    "engine": {"kernels", "gas"} | BASE,
    "gaps": {"kernels", "gas", "engine"} | BASE,
    "store": {"gaps", "engine", "gas"} | BASE,
    "sweep": {"store", "gaps", "engine", "gas"} | BASE,
    "analysis": {"store", "engine", "gas"} | BASE,
    "plots": {"analysis", "store", "gaps", "engine", "gas"} | BASE,
    "cli": {"sweep", "analysis", "plots", "store", "gaps", "engine", "gas", "kernels"} | BASE,
    "root": {"gas", "engine", "gaps", "store", "sweep", "cli"} | BASE,
}
"""Layer → the layers it may import (besides itself)."""


def _modules() -> dict[str, Path]:
    found = {}
    for path in sorted(PACKAGE.rglob("*.py")):
        parts = path.relative_to(PACKAGE).with_suffix("").parts
        if parts[-1] == "__init__":
            parts = parts[:-1]
        found[".".join(("avalanche",) + parts)] = path
    return found


def _layer(module: str) -> str:
    parts = module.split(".")
    if len(parts) == 1 or parts[1] == "__main__":
        return "root"
    if parts[1] in BASE:
        return "base"
    return parts[1]


def _imports(module: str, path: Path) -> set[str]:
    """Package modules imported anywhere in ``path`` (absolute names; ``from X import name`` gives X.name when that
    is a module, else X)."""
    modules = _modules()
    package = module if path.name == "__init__.py" else module.rsplit(".", 1)[0]
    out = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            out |= {a.name for a in node.names if a.name.startswith("avalanche")}
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            elif node.module and node.module.startswith("avalanche"):
                target = node.module
            else:
                continue
            for alias in node.names:
                if alias.name == "__version__":
                    out.add("avalanche._version")
                    continue
                sub = f"{target}.{alias.name}"
                out.add(sub if sub in modules else target)
    return {m for m in out if m in modules and m != module}


def test_imports_follow_the_layers():
    bad = []
    for module, path in _modules().items():
        layer = _layer(module)
        for target in _imports(module, path):
            other = _layer(target)
            if other == layer:
                continue
            name = target.split(".")[1] if other == "base" else other
            if name not in ALLOWED[layer]:
                bad.append(f"{module} ({layer}) imports {target}")
    assert not bad, "imports against the layer rules:\n" + "\n".join(bad)


def test_no_import_cycles():
    modules = _modules()
    graph = {m: {t for t in _imports(m, p) if t != "avalanche" and not t.endswith("__init__")}
             for m, p in modules.items()}
    # a package's __init__ re-exporting its children is not a loop: only follow edges between plain modules
    graph = {m: {t for t in targets if modules[t].name != "__init__.py"} for m, targets in graph.items()
             if modules[m].name != "__init__.py"}
    state, stack, cycles = {}, [], []

    def visit(m):
        state[m] = 1
        stack.append(m)
        for t in sorted(graph.get(m, ())):
            if state.get(t) == 1:
                cycles.append(" -> ".join(stack[stack.index(t):] + [t]))
            elif t not in state:
                visit(t)
        stack.pop()
        state[m] = 2

    for m in sorted(graph):
        if m not in state:
            visit(m)
    assert not cycles, "import loops:\n" + "\n".join(cycles)


def test_every_module_imports_alone():
    names = [m for m in _modules() if not m.endswith("__main__")]
    code = ("import importlib, sys\n"
            f"for name in {names!r}:\n"
            "    for loaded in [k for k in sys.modules if k == 'avalanche' or k.startswith('avalanche.')]:\n"
            "        del sys.modules[loaded]\n"
            "    importlib.import_module(name)\n"
            "print('imported', len(" + repr(names) + "))\n")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=600)
    assert done.returncode == 0, done.stderr[-3000:]


def test_every_subpackage_states_its_rules():
    for init in sorted(PACKAGE.glob("*/__init__.py")):
        doc = ast.get_docstring(ast.parse(init.read_text(encoding="utf-8")))
        assert doc and "import" in doc, f"{init}: the docstring must say what lives here and what it may import"


def test_python_dash_m_runs_the_command_line():
    done = subprocess.run([sys.executable, "-m", "avalanche", "--help"], capture_output=True, text=True, timeout=300)
    assert done.returncode == 0 and "swarm" in done.stdout


def test_every_subpackage_is_installed():
    """A non-editable install ships exactly the subpackages on disk (pyproject's explicit package list)."""
    import tomllib

    config = tomllib.loads((PACKAGE.parent / "pyproject.toml").read_text())
    listed = set(config["tool"]["setuptools"]["packages"])
    on_disk = {"avalanche"} | {
        "avalanche." + init.parent.name for init in PACKAGE.glob("*/__init__.py")
    }
    missing = sorted(on_disk - listed)
    assert not missing, f"pyproject.toml [tool.setuptools] packages lacks {missing}: add them"
    assert "avalanche.gasdata" in listed
