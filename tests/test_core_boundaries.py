"""Architecture checks: Qt only in profilecheck/viewer/, and the CLI shell behaves."""

import ast
import subprocess
import sys
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[1] / "profilecheck"


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(a.name.split(".")[0] for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.add(node.module.split(".")[0])
    return names


def test_qt_only_in_viewer():
    offenders = []
    for py in PKG.rglob("*.py"):
        rel = py.relative_to(PKG)
        if rel.parts[0] == "viewer" or rel.parts == ("commands", "view.py"):
            continue
        if _imports(py) & {"PyQt5", "PyQt6", "PySide2", "PySide6"}:
            offenders.append(str(rel))
    assert offenders == []


def test_viewer_model_is_qt_free():
    model = PKG / "viewer" / "model.py"
    if not model.exists():
        pytest.skip("viewer model not present")
    assert not (_imports(model) & {"PyQt5"})


def test_core_import_does_not_load_qt():
    code = ("import sys, profilecheck, profilecheck.cli as c; c.build_parser(); "
            "import importlib\n"
            "for m in ('imaging', 'calibration', 'standards', 'measure', 'report', 'synth'):\n"
            "    try: importlib.import_module('profilecheck.' + m)\n"
            "    except ModuleNotFoundError: pass\n"
            "print('PyQt5' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_cli_usage_error_is_exit_2():
    out = subprocess.run([sys.executable, "-m", "profilecheck", "no-such-command"],
                         capture_output=True, text=True)
    assert out.returncode == 2
    assert len(out.stderr.strip().splitlines()) <= 3 and "Traceback" not in out.stderr


def test_entry_point_installed():
    exe = Path(sys.executable).with_name("profilecheck")
    if not exe.exists():
        pytest.skip("console script not installed in this environment")
    out = subprocess.run([str(exe), "--version"], capture_output=True, text=True)
    assert out.returncode == 0 and "profilecheck" in out.stdout
