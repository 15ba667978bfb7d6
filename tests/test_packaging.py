"""A regular (non-editable) install carries the reference tables and example protocols, and finds them.

pyproject.toml force-includes limits/ and protocols/ into the wheel as bracer/_data/...; bracer.resources
looks there first.  The wheel is built with pip (the backend, hatchling, comes from pip's isolated build
environment), then installed into a scratch folder and used from a fresh interpreter with that folder first
on the path.
"""

from __future__ import annotations

import os
import subprocess
import sys
import time
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

pytestmark = pytest.mark.packaging


@pytest.fixture(scope="module")
def wheel(tmp_path_factory: pytest.TempPathFactory) -> Path:
    out = tmp_path_factory.mktemp("wheel")
    start = time.perf_counter()
    proc = subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "--no-deps", "--quiet", "-w", str(out), str(ROOT)],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert proc.returncode == 0, proc.stderr
    assert time.perf_counter() - start < 30, "building the wheel should take seconds"
    (whl,) = out.glob("bracer-*.whl")
    return whl


def _files(folder: str, pattern: str) -> set[str]:
    return {p.name for p in (ROOT / folder).glob(pattern)}


def test_wheel_contains_the_data_files(wheel: Path) -> None:
    names = set(zipfile.ZipFile(wheel).namelist())
    limits = {n.removeprefix("bracer/_data/limits/") for n in names if n.startswith("bracer/_data/limits/")}
    protocols = {
        n.removeprefix("bracer/_data/protocols/") for n in names if n.startswith("bracer/_data/protocols/")
    }
    assert {"upper_limb_rom.csv", "iso_ts_15066_force_pressure.csv", "iso_ts_15066_body_model.csv"} <= limits
    assert _files("limits", "*.csv") <= limits
    assert "alder4-upper-limb.yaml" in protocols
    assert _files("protocols", "*.yaml") <= protocols


def test_wheel_contains_the_package_and_the_console_script(wheel: Path) -> None:
    z = zipfile.ZipFile(wheel)
    names = set(z.namelist())
    assert {
        "bracer/__init__.py",
        "bracer/cli/__init__.py",
        "bracer/protocol/model.py",
        "bracer/units.py",
    } <= names
    (entry_points,) = [n for n in names if n.endswith(".dist-info/entry_points.txt")]
    assert "bracer = bracer.cli:main" in z.read(entry_points).decode()
    assert not any(n.startswith(("tests/", "src/")) for n in names)


def test_installed_wheel_finds_its_data(wheel: Path, tmp_path: Path) -> None:
    target = tmp_path / "site"
    proc = subprocess.run(
        [
            sys.executable,
            "-m",
            "pip",
            "install",
            "--no-deps",
            "--no-index",
            "--quiet",
            "--target",
            str(target),
            str(wheel),
        ],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert proc.returncode == 0, proc.stderr
    script = (
        "import bracer, bracer.resources as r, bracer.reference as ref\n"
        "from bracer.protocol.load import load_protocol\n"
        "print(bracer.__file__)\n"
        "print(r.data_dir('limits'))\n"
        "print(len(ref.rom_rows()), len(ref.body_region_limits()))\n"
        "print(load_protocol(r.data_dir('protocols') / 'alder4-upper-limb.yaml').protocol.protocol.id)\n"
    )
    env = {**os.environ, "PYTHONPATH": str(target)}
    # Run from the scratch folder, so that the source checkout is not the current directory.
    run = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, env=env, cwd=tmp_path, timeout=60
    )
    assert run.returncode == 0, run.stderr
    package, limits, counts, protocol_id = run.stdout.splitlines()
    assert Path(package).resolve().is_relative_to(target.resolve())
    assert Path(limits).resolve() == (target / "bracer" / "_data" / "limits").resolve()
    assert counts == "69 23"
    assert protocol_id == "AVRU-EXO-01"
