"""The four formats: self-contained HTML, a PDF that opens and holds the key figures, reproducible bytes, and
wording that never states a verdict."""

from __future__ import annotations

import json
import re
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import pytest
from reportkit import KitSession, build, inside

from bracer.report.html import render_html
from bracer.report.markdown import render_markdown
from bracer.report.pdf import render_typst
from bracer.report.report_json import dumps, report_record
from bracer.report.write import write_report

# ------------------------------------------------------------------------------------------------ HTML


class _Refs(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.ids: list[str] = []
        self.hrefs: list[str] = []
        self.srcs: list[str] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append(tag)
        for name, value in attrs:
            if name == "id" and value:
                self.ids.append(value)
            if name in ("href", "xlink:href") and value is not None:
                self.hrefs.append(value)
            if name in ("src", "srcset", "data", "action", "poster") and value is not None:
                self.srcs.append(value)


@pytest.fixture(scope="module")
def html_text(kit_outputs: dict[str, Path]) -> str:
    return kit_outputs["html"].read_text(encoding="utf-8")


def test_html_holds_no_external_reference(html_text: str) -> None:
    refs = _Refs()
    refs.feed(html_text)
    assert not re.search(r"https?://", html_text, flags=re.IGNORECASE)
    assert "<script" not in html_text.lower()
    assert not re.search(r"@import|@font-face", html_text)
    assert not refs.srcs, refs.srcs
    assert {"link", "iframe", "object", "embed", "img"}.isdisjoint(refs.tags)
    assert refs.hrefs and all(h.startswith("#") for h in refs.hrefs)
    # CSS and SVG references stay inside the file too
    assert all(u.startswith("#") for u in re.findall(r"url\(([^)]*)\)", html_text))


def test_every_link_in_the_html_has_its_target_and_ids_are_unique(html_text: str) -> None:
    refs = _Refs()
    refs.feed(html_text)
    assert len(refs.ids) == len(set(refs.ids)), "duplicate ids"
    ids = set(refs.ids)
    missing = [h for h in refs.hrefs if h[1:] not in ids]
    assert not missing


def test_each_finding_row_links_to_a_plot_that_shows_it(kit_doc, html_text: str) -> None:  # type: ignore[no-untyped-def]
    for f in kit_doc.findings:
        assert f.plot is not None, f"{f.ref} has no plot"
        assert f'href="#fig-{f.plot}"' in html_text
        assert f'id="row-{f.ref}"' in html_text
    # the exceedance has a zoom of its own
    force = next(f for f in kit_doc.findings if f.code == "A111")
    assert force.plot == f"zoom-{force.ref}"


def test_html_prints_on_a4_and_inlines_every_plot(kit_doc, html_text: str) -> None:  # type: ignore[no-untyped-def]
    assert "@page { size: A4" in html_text
    assert html_text.count("<svg ") == len(kit_doc.figures) >= 9


def test_every_svg_is_well_formed(kit_doc) -> None:  # type: ignore[no-untyped-def]
    from bracer.report.plots import render

    for fig in kit_doc.figures:
        root = ET.fromstring(render(fig.chart, fig.id, standalone=True, title=fig.title))
        assert root.tag == "{http://www.w3.org/2000/svg}svg"


# ------------------------------------------------------------------------------------------------ PDF


@pytest.fixture(scope="module")
def pdf_text(kit_outputs: dict[str, Path]) -> str:
    pypdf = pytest.importorskip("pypdf")
    reader = pypdf.PdfReader(str(kit_outputs["pdf"]))
    assert len(reader.pages) >= 5
    return "\n".join(page.extract_text() for page in reader.pages)


def test_the_pdf_opens(kit_outputs: dict[str, Path]) -> None:
    data = kit_outputs["pdf"].read_bytes()
    assert data.startswith(b"%PDF-")
    assert data.rstrip().endswith(b"%%EOF")


def _flat(text: str) -> str:
    """Whitespace folded, and a line break after a hyphen undone ("quasi- static" -> "quasi-static")."""
    return re.sub(r"-\s+", "-", " ".join(text.split()))


def test_the_pdf_text_holds_the_key_figures(kit_doc, pdf_text: str) -> None:  # type: ignore[no-untyped-def]
    text = _flat(pdf_text)
    force = next(f for f in kit_doc.findings if f.code == "A111")
    assert "51.32" in text and "40 N" in text  # the cuff force exceedance: peak and the participant's limit
    assert _flat(force.message.split(":")[0]) in text
    assert "45 ms of 300 ms" in text  # time to standstill against the budget
    assert "99.9 % of session time" in text
    for d in kit_doc.provenance.inputs:
        assert d.sha256 in text.replace(" ", "")


def test_the_pdf_text_holds_the_sign_off_block(pdf_text: str) -> None:
    text = _flat(pdf_text)
    for words in (
        "Sign-off",
        "Responsible clinician",
        "Responsible engineer",
        "Signature",
        "Date",
        "not a certification",
        "ethics committee",
        "local regulations",
    ):
        assert words in text, words


def test_typst_source_keeps_protocol_text_out_of_markup(kit_doc) -> None:  # type: ignore[no-untyped-def]
    import dataclasses

    from bracer.report.pdf import q

    evil = '#set page(fill: red) "quoted" \\ [bracket] *bold* $x$ <label> @ref'
    assert q(evil) == '"#set page(fill: red) \\"quoted\\" \\\\ [bracket] *bold* $x$ <label> @ref"'
    doc = dataclasses.replace(kit_doc, title=dataclasses.replace(kit_doc.title, study=evil))
    source, _ = render_typst(doc)
    assert q(evil) in source


# ------------------------------------------------------------------------------------------------ bytes


def test_the_same_inputs_give_identical_bytes(kit: KitSession, tmp_path: Path) -> None:
    outputs = []
    for run in ("one", "two"):
        doc = build(kit)
        with inside(kit.folder):
            written = write_report(doc, tmp_path / run, ("md", "html", "json"))
        files = sorted(p for p in (tmp_path / run).rglob("*") if p.is_file())
        assert len(files) > len(written)  # the Markdown's plot files too
        outputs.append({p.relative_to(tmp_path / run): p.read_bytes() for p in files})
    assert outputs[0] == outputs[1]


def test_without_source_date_epoch_the_time_is_the_clock(kit: KitSession) -> None:
    from bracer.report.provenance import analysis_time

    with inside(kit.folder, epoch=None):
        when = analysis_time()
    assert when.source == "system clock"
    assert analysis_time({"SOURCE_DATE_EPOCH": "0"}).iso == "1970-01-01T00:00:00Z"
    # 1 800 000 000 s after the epoch: 2027-01-15 08:00:00 UTC (Python's datetime as the reference)
    assert analysis_time({"SOURCE_DATE_EPOCH": "1800000000"}).iso == "2027-01-15T08:00:00Z"


@pytest.mark.parametrize("bad", ["soon", "-5", "1.5", "1e9"])
def test_a_malformed_source_date_epoch_is_refused(bad: str) -> None:
    from bracer.errors import InputError
    from bracer.report.provenance import analysis_time

    with pytest.raises(InputError, match="SOURCE_DATE_EPOCH"):
        analysis_time({"SOURCE_DATE_EPOCH": bad})


# ------------------------------------------------------------------------------------------------ wording

#: A verdict word: "safe" or "pass" as a word of its own (not "safety", "passive", "bypass").
VERDICT = re.compile(r"\b(safe|safely|pass|passed|passes|passing)\b", flags=re.IGNORECASE)


def _json_strings(value: object) -> list[str]:
    if isinstance(value, str):
        return [value]
    if isinstance(value, dict):
        return [s for k, v in value.items() for s in (*_json_strings(k), *_json_strings(v))]
    if isinstance(value, list):
        return [s for v in value for s in _json_strings(v)]
    return []


def test_no_format_states_safe_or_passed(
    kit_doc, review_doc, kit_outputs: dict[str, Path], pdf_text: str
) -> None:  # type: ignore[no-untyped-def]
    texts = {"pdf": pdf_text}
    for name, doc in (("kit", kit_doc), ("review", review_doc)):
        md, files = render_markdown(doc, "plots")
        texts[f"{name}.md"] = md
        texts[f"{name}.html"] = re.sub(r"<[^>]+>", " ", render_html(doc))
        texts[f"{name}.json"] = "\n".join(_json_strings(json.loads(dumps(report_record(doc)))))
        texts[f"{name}.typ"] = render_typst(doc)[0]
        texts.update({f"{name}.{k}": re.sub(r"<[^>]+>", " ", v) for k, v in files.items()})
    for name, text in texts.items():
        hits = VERDICT.findall(text)
        assert not hits, f"{name}: {hits}"


def test_the_verdict_check_can_fail() -> None:
    assert VERDICT.search("The session passed.") and VERDICT.search("device is SAFE")
    assert not VERDICT.search("safety state, passive range, bypass")


def test_the_pdf_is_reproducible_too(review_doc, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    # Typst's bundled fonts only and the analysis time as the PDF's creation date: the same bytes each time.
    from bracer.report.pdf import write_pdf

    write_pdf(review_doc, tmp_path / "a.pdf")
    write_pdf(review_doc, tmp_path / "b.pdf")
    assert (tmp_path / "a.pdf").read_bytes() == (tmp_path / "b.pdf").read_bytes()
