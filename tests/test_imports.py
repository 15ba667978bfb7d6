"""Start-up and layering: what each part of bracer may import.

* The command line, the protocol loader and the review must not pull in pandas, scipy, pyarrow or pint (each
  costs a large part of the start-up budget: 0.3 s for ``bracer --help``, 1 s for ``bracer review``).
* ``bracer --help`` needs neither pydantic, YAML, numpy nor rich.
* Checks and models never import the command line or the report writers (dependencies point one way), checked
  on the source of every module, imports inside functions included.
"""

from __future__ import annotations

import ast
import importlib.util
import json
import subprocess
import sys
from pathlib import Path

import pytest

SRC = Path(__file__).resolve().parents[1] / "src"
HEAVY = ("pandas", "scipy", "pyarrow", "pint")


def _modules_after(code: str) -> set[str]:
    """Top-level package names in sys.modules after running ``code`` in a fresh interpreter."""
    probe = f"{code}\nimport json, sys\nprint(json.dumps(sorted({{m.split('.')[0] for m in sys.modules}})))\n"
    proc = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, timeout=60)
    assert proc.returncode == 0, proc.stderr
    return set(json.loads(proc.stdout.splitlines()[-1]))


@pytest.mark.parametrize(
    "module", ["bracer.cli", "bracer.protocol.load", "bracer.protocol.resolve", "bracer.review"]
)
def test_importing_does_not_pull_in_heavy_libraries(module: str) -> None:
    if importlib.util.find_spec(module) is None:
        pytest.skip(f"{module} does not exist yet")
    loaded = _modules_after(f"import {module}")
    assert "bracer" in loaded
    assert not loaded & set(HEAVY), sorted(loaded & set(HEAVY))


def test_help_needs_no_pydantic_yaml_numpy_or_rich() -> None:
    code = (
        "import contextlib, io, sys\n"
        "sys.argv = ['bracer', '--help']\n"
        "from bracer.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()), contextlib.suppress(SystemExit):\n"
        "    main()\n"
    )
    loaded = _modules_after(code)
    assert "typer" in loaded  # the probe really ran the command line
    assert not loaded & {"pydantic", "yaml", "numpy", "rich", *HEAVY}, sorted(loaded)


# Start-up times are measured by bench/startup.py (timed unit tests are flaky on shared machines).


# ------------------------------------------------------------------------------ layering


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(SRC).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _imports(path: Path, source: str | None = None) -> list[tuple[int, str]]:
    """Every module a source file imports (absolute names, relative imports resolved), with its line."""
    text = path.read_text(encoding="utf-8") if source is None else source
    tree = ast.parse(text, filename=str(path))
    here = _module_name(path)
    package = here if path.name == "__init__.py" else here.rpartition(".")[0]
    out: list[tuple[int, str]] = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out.extend((node.lineno, alias.name) for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                module = ".".join([*base, node.module] if node.module else base)
            else:
                module = node.module or ""
            out.append((node.lineno, module))
            out.extend((node.lineno, f"{module}.{alias.name}") for alias in node.names)
    return out


LAYER_RULES = {
    # package: prefixes it must never import
    "bracer.review": ("bracer.cli", "bracer.report"),
    "bracer.audit": ("bracer.cli", "bracer.report"),
    "bracer.protocol": ("bracer.cli", "bracer.report", "bracer.review", "bracer.audit", "bracer.session"),
    "bracer.session": ("bracer.cli", "bracer.report", "bracer.review", "bracer.audit"),
    "bracer.reference": ("bracer.cli", "bracer.report", "bracer.review", "bracer.audit", "bracer.session"),
    "bracer.units": ("bracer.",),
}


def _violations(package: str, forbidden: tuple[str, ...]) -> list[str]:
    root = SRC / Path(*package.split("."))
    files = sorted(root.rglob("*.py")) if root.is_dir() else [root.with_suffix(".py")]
    bad = []
    for path in files:
        for line, module in _imports(path):
            if any(module == f.rstrip(".") or module.startswith(f.rstrip(".") + ".") for f in forbidden):
                bad.append(f"{path.relative_to(SRC)}:{line} imports {module}")
    return bad


@pytest.mark.parametrize("package", list(LAYER_RULES))
def test_layering(package: str) -> None:
    root = SRC / Path(*package.split("."))
    if not root.is_dir() and not root.with_suffix(".py").is_file():
        pytest.skip(f"{package} does not exist yet")
    assert _violations(package, LAYER_RULES[package]) == []


def test_the_layering_scan_sees_relative_and_function_level_imports() -> None:
    # The scanner itself: relative and absolute imports of forbidden modules inside a function are caught.
    path = SRC / "bracer" / "review" / "checks" / "probe.py"  # a name only; the file is not read
    source = (
        "def f():\n"
        "    from ...report import review_json\n"
        "    import bracer.cli.common\n"
        "    from . import _base\n"
    )
    found = _imports(path, source)
    assert (2, "bracer.report") in found
    assert (2, "bracer.report.review_json") in found
    assert (3, "bracer.cli.common") in found
    assert (4, "bracer.review.checks._base") in found
