"""Golden cases: the exact findings (structured fields, not wording) of the example protocols.

To update after an intended change, run ``BRACER_UPDATE_GOLDEN=1 pytest tests/review/test_review_golden.py``
and read the diff of ``tests/review/golden/`` before committing it; never update to make a failure go away.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest
from review_protocols import EXAMPLE, FLAWED

from bracer.protocol.load import load_protocol
from bracer.review import review

GOLDEN = Path(__file__).parent / "golden"
CASES = [(EXAMPLE, None), (EXAMPLE, "AV-P01"), (EXAMPLE, "AV-P02"), (FLAWED, None), (FLAWED, "FX-P01")]
FIELDS = ("code", "severity", "subject", "quantity", "direction", "layer", "peak", "limit", "unit")


def _rows(path: Path, participant: str | None) -> list[dict[str, object]]:
    result = review(load_protocol(path), participant)
    rows = []
    for f in result.findings:
        d = f.to_dict()
        row = {k: d[k] for k in FIELDS}
        for k in ("peak", "limit"):
            if isinstance(row[k], float):
                row[k] = round(row[k], 6)  # type: ignore[call-overload]
        rows.append(row)
    return rows


@pytest.mark.parametrize(("path", "participant"), CASES, ids=lambda x: getattr(x, "stem", None) or str(x))
def test_golden_findings(path: Path, participant: str | None) -> None:
    golden = GOLDEN / f"{path.stem}-{participant or 'nominal'}.json"
    rows = _rows(path, participant)
    if os.environ.get("BRACER_UPDATE_GOLDEN"):
        golden.write_text(json.dumps(rows, indent=1, ensure_ascii=False) + "\n", encoding="utf-8")
    expected = json.loads(golden.read_text(encoding="utf-8"))
    assert rows == expected
