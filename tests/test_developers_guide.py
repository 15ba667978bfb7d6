"""DEVELOPERS.md stays true: its check-code table lists exactly the registered checks."""

from __future__ import annotations

import re
from pathlib import Path

import bracer.audit.checks
import bracer.audit.quality
import bracer.audit.run
import bracer.review.checks  # noqa: F401  (importing registers the checks)
from bracer.findings import CHECKS

GUIDE = Path(__file__).resolve().parents[1] / "DEVELOPERS.md"


def test_guide_lists_every_registered_check_with_its_name_and_severity() -> None:
    pattern = r"^\| ([A-Z]{1,2}\d{3}) \| ([a-z0-9-]+) \| (\w+) \|"
    rows = re.findall(pattern, GUIDE.read_text(encoding="utf-8"), re.M)
    listed = {code: (name, severity) for code, name, severity in rows}
    registered = {c.code: (c.name, c.severity.label) for c in CHECKS.values()}
    assert listed == registered


def test_guide_names_folders_that_exist() -> None:
    root = GUIDE.parent
    text = GUIDE.read_text(encoding="utf-8")
    layout = text.split("```\nsrc/bracer/", 1)[1].split("```", 1)[0]
    for folder in re.findall(r"^  ([a-z_]+)/", layout, re.M):
        assert (root / "src" / "bracer" / folder).is_dir(), folder
