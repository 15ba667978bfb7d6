"""Golden files: the Markdown and the JSON record of fixed reports under a fixed ``SOURCE_DATE_EPOCH``.

The files under golden/ are what bracer writes for the kit session (tests/report/sessionkit.py) and for the
nominal review of the example protocol.  Machine-dependent text is masked before comparing: the versions of
Python and the numerical libraries, and the folder bracer's reference tables are installed in.

To update after an intended change, run ``BRACER_UPDATE_GOLDEN=1 pytest tests/report/test_report_golden.py``
and read the diff (git diff tests/report/golden) before committing: the switch is never a way to make a
failing test pass.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from bracer.report.markdown import render_markdown
from bracer.report.provenance import software
from bracer.report.report_json import dumps, report_record
from bracer.resources import data_dir

GOLDEN = Path(__file__).resolve().parent / "golden"


def mask(text: str) -> str:
    """Replace what differs between machines (not between runs) with fixed placeholders."""
    sw = software()
    for name, version in sw.libraries:
        if version is not None:
            text = text.replace(f"{name} {version}", f"{name} <version>")
            text = text.replace(f'"{name}": "{version}"', f'"{name}": "<version>"')
    text = text.replace(f"Python {sw.python}", "Python <version>")
    text = text.replace(f'"python": "{sw.python}"', '"python": "<version>"')
    return text.replace(data_dir("limits").resolve().as_posix(), "<bracer-data>/limits")


def check(name: str, text: str) -> None:
    path = GOLDEN / name
    text = mask(text)
    if os.environ.get("BRACER_UPDATE_GOLDEN"):
        path.parent.mkdir(exist_ok=True)
        path.write_text(text, encoding="utf-8")
        pytest.skip(f"updated {path.name}")
    assert path.exists(), f"no golden file {path}; run with BRACER_UPDATE_GOLDEN=1 and read the result"
    expected = path.read_text(encoding="utf-8")
    assert text == expected, f"{name} differs from its golden file (update switch: BRACER_UPDATE_GOLDEN=1)"


def test_markdown_of_the_kit_session(kit_doc) -> None:  # type: ignore[no-untyped-def]
    text, _ = render_markdown(kit_doc, "report.plots")
    check("kit-AV-P01.md", text)


def test_json_record_of_the_kit_session(kit_doc) -> None:  # type: ignore[no-untyped-def]
    check("kit-AV-P01.json", dumps(report_record(kit_doc)))


def test_markdown_of_the_nominal_review(review_doc) -> None:  # type: ignore[no-untyped-def]
    text, files = render_markdown(review_doc, "report.plots")
    assert files == {}  # a review has no session to plot
    check("review-nominal.md", text)


def test_masking_leaves_the_figures_alone(kit_doc) -> None:  # type: ignore[no-untyped-def]
    # The mask must only touch version strings and the data folder, never a number of the analysis.
    text = dumps(report_record(kit_doc))
    masked = mask(text)
    for f in kit_doc.findings:
        if f.peak is not None:
            assert repr(f.peak) in masked
