"""Architecture rules: Qt lives in volbench/gui only; the core imports without it."""

from __future__ import annotations

import ast
import functools
import os
import pkgutil
import subprocess
import sys
from pathlib import Path

import volbench

PKG = Path(volbench.__file__).resolve().parent
ROOT = PKG.parent
QT_MODULES = ("PySide6", "pyqtgraph", "PyQt5", "PyQt6", "shiboken6")


@functools.cache
def _nodes(path: Path) -> tuple[ast.AST, ...]:
    """Every node of a module, parsed and walked once for all the scans below."""
    return tuple(ast.walk(ast.parse(path.read_text(encoding="utf-8"), filename=str(path))))


def _imported_roots(path: Path) -> set[str]:
    roots: set[str] = set()
    for node in _nodes(path):
        if isinstance(node, ast.Import):
            roots.update(a.name.split(".")[0] for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            roots.add(node.module.split(".")[0])
        elif isinstance(node, ast.Call) and getattr(node.func, "attr", getattr(node.func, "id", None)) in (
                "import_module", "__import__") and node.args and isinstance(node.args[0], ast.Constant):
            roots.add(str(node.args[0].value).split(".")[0])
    return roots


def test_no_qt_import_outside_the_gui_package():
    offenders = []
    for path in sorted(PKG.rglob("*.py")):
        rel = path.relative_to(PKG)
        if rel.parts[0] == "gui":
            continue
        bad = _imported_roots(path) & set(QT_MODULES)
        if bad:
            offenders.append(f"volbench/{rel.as_posix()}: {', '.join(sorted(bad))}")
    assert offenders == [], "Qt imported outside volbench/gui: " + "; ".join(offenders)


def test_the_scan_would_catch_a_qt_import(tmp_path):
    # the detector itself must fire (so the rule above cannot pass vacuously)
    f = tmp_path / "m.py"
    f.write_text("import os\nfrom PySide6.QtWidgets import QWidget\nimport importlib\n"
                 "importlib.import_module('pyqtgraph')\n")
    assert {"PySide6", "pyqtgraph"} <= _imported_roots(f)


def _core_modules() -> list[str]:
    names = ["volbench"]
    for info in pkgutil.walk_packages([str(PKG)], prefix="volbench."):
        parts = info.name.split(".")
        if parts[1] == "gui" or parts[-1] == "__main__":
            continue
        names.append(info.name)
    return names


def test_core_modules_import_without_loading_qt():
    modules = _core_modules()
    assert {"volbench.data", "volbench.estimators", "volbench.cli", "volbench.samples"} <= set(modules)
    code = (
        "import importlib, json, sys\n"
        f"mods = {modules!r}\n"
        "for m in mods:\n"
        "    importlib.import_module(m)\n"
        "import volbench.cli\n"
        "volbench.cli.build_parser()\n"  # building the CLI imports every cmd_* module
        f"print(json.dumps(sorted(k for k in sys.modules if k.split('.')[0] in {QT_MODULES!r})))\n"
    )
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    env.pop("QT_API", None)
    res = subprocess.run([sys.executable, "-c", code], check=False, capture_output=True, text=True, env=env, timeout=120)
    assert res.returncode == 0, res.stderr
    assert res.stdout.strip() == "[]", f"Qt loaded by the core: {res.stdout.strip()}"


def _plain_import_offences(path: Path) -> list[str]:
    """Imports of volbench's own modules guarded by ``except ImportError``, or made through importlib."""
    out = []

    def own(node) -> bool:
        if isinstance(node, ast.ImportFrom):
            return node.level > 0 or (node.module or "").split(".")[0] == "volbench"
        return isinstance(node, ast.Import) and any(a.name.split(".")[0] == "volbench" for a in node.names)

    for node in _nodes(path):
        if isinstance(node, ast.Try):
            caught = {getattr(h.type, "id", None) for h in node.handlers}
            caught |= {getattr(e, "id", None) for h in node.handlers if isinstance(h.type, ast.Tuple) for e in h.type.elts}
            if caught & {"ImportError", "ModuleNotFoundError"}:
                out += [f"line {n.lineno}: guarded import" for stmt in node.body for n in ast.walk(stmt) if own(n)]
        if (isinstance(node, ast.Call) and getattr(node.func, "attr", getattr(node.func, "id", None))
                in ("import_module", "__import__")):
            out.append(f"line {node.lineno}: importlib")
    return out


def test_modules_that_ship_are_imported_plainly():
    # Everything in volbench ships with volbench: no "not in this build" paths, no discovery through
    # importlib, so static tools see every dependency (third-party imports may still be guarded).
    offenders = [f"volbench/{p.relative_to(PKG).as_posix()}: {o}" for p in sorted(PKG.rglob("*.py"))
                 for o in _plain_import_offences(p)]
    assert offenders == []


def test_the_plain_import_scan_would_catch_a_guarded_import(tmp_path):
    f = tmp_path / "mod.py"
    f.write_text("try:\n    from volbench.models import fit_garch\nexcept ImportError:\n    fit_garch = None\n"
                 "import importlib\nm = importlib.import_module('volbench.scaling')\n"
                 "try:\n    import distributed\nexcept ImportError:\n    distributed = None\n")
    assert _plain_import_offences(f) == ["line 2: guarded import", "line 6: importlib"]
