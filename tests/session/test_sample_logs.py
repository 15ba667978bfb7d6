"""The sample logs kept in tests/data/logs/ are what logmaker.py writes (never edited by hand)."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

LOGS = logmaker.HERE


@pytest.mark.parametrize("name", logmaker.SAMPLES)
def test_sample_log_is_up_to_date(tmp_path: Path, name: str) -> None:
    fresh = logmaker.write(logmaker.samples()[name], tmp_path / name)
    assert fresh.read_bytes() == (LOGS / name).read_bytes(), f"run: python {LOGS / 'logmaker.py'}"
