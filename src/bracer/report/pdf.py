"""The report as PDF, typeset by Typst through its Python binding (the ``typst`` wheel from PyPI: it bundles
the compiler and its fonts and embeds SVG, so no system package is needed).

The Typst source is generated from the same sections as the Markdown and HTML; every text goes in as a Typst
*string* (never as markup), so nothing from a protocol or a log can change the layout.  Only the fonts bundled
with Typst are used (system fonts are ignored), and the PDF's creation date is the report's analysis time, so
the same inputs under ``SOURCE_DATE_EPOCH`` give the same PDF on any machine with the same Typst version.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from bracer.errors import InputError
from bracer.report.document import Document, FindingRow
from bracer.report.plots import legend_items, render
from bracer.report.sections import (
    HEADINGS,
    INCIDENT_INTRO,
    NO_INCIDENTS,
    REFERENCE_CAVEAT,
    SIGN_OFF_INTRO,
    Table,
    caution_heading,
    caution_table,
    coverage_lines,
    finding_table,
    incident_table,
    input_table,
    no_change_text,
    range_table,
    reference_table,
    review_check_table,
    review_finding_table,
    review_lines,
    software_lines,
    stop_joint_table,
    stop_table,
    summary_table,
    title_rows,
)
from bracer.report.wording import KIND_LABELS, SEVERITY_LABELS

__all__ = ["render_typst", "write_pdf"]

_PREAMBLE = """\
#set document(title: {title}, author: "bracer")
#set page(paper: "a4", margin: (x: 15mm, top: 16mm, bottom: 18mm),
  footer: context [#set text(size: 7.5pt, fill: luma(90)); #{footer} #h(1fr) page
    #counter(page).display("1 of 1", both: true)])
#set text(font: "Libertinus Serif", size: 9.5pt, lang: "en")
#set par(leading: 0.55em, spacing: 0.9em)
#set table(stroke: (x, y) => (bottom: if y == 0 {{ 0.9pt }} else {{ 0.35pt + luma(170) }}),
  inset: (x: 4pt, y: 3pt), fill: (x, y) => if y == 0 {{ luma(238) }})
#show table.cell.where(y: 0): set text(weight: "bold")
#show table: set text(size: 7.8pt)
#show heading.where(level: 1): it => block(below: 3mm, text(size: 16pt, weight: "bold", it.body))
#show heading.where(level: 2): it => block(above: 6mm, below: 2.5mm, width: 100%,
  stroke: (bottom: 1.2pt), inset: (bottom: 1.5mm), text(size: 11.5pt, weight: "bold", it.body))
#show heading.where(level: 3): it => block(above: 3.5mm, below: 1.5mm,
  text(size: 9.5pt, weight: "bold", it.body))
#show figure.caption: set align(left)
#show figure.caption: set text(size: 8.5pt)
#show link: it => underline(offset: 1.5pt, stroke: 0.4pt, it)
#let sev(s) = box(inset: (x: 2pt, y: 1.2pt), baseline: 1.2pt, radius: 1.5pt,
  stroke: if s == "ERROR" {{ 1.1pt }} else if s == "WARNING" {{ (thickness: 0.7pt, dash: "dashed") }}
    else {{ 0.4pt + luma(120) }},
  text(size: 6.8pt, weight: if s == "ERROR" {{ "bold" }} else {{ "regular" }}, s))
#let blank = box(width: 20mm, height: 3.5mm, stroke: (bottom: 0.5pt))
"""


def q(text: str) -> str:
    """A Typst string literal holding ``text`` verbatim."""
    out = (
        text.replace("\\", "\\\\")
        .replace('"', '\\"')
        .replace("\n", " ")
        .replace("\r", " ")
        .replace("\t", " ")
    )
    out = "".join(ch for ch in out if ch >= " ")
    return f'"{out}"'


def _bold(text: str) -> str:
    return f'text(weight: "bold", {q(text)})'


def _label(ident: str) -> str:
    return ident.replace(" ", "-")


def _table(
    t: Table,
    *,
    columns: str | None = None,
    cells: dict[int, list[str]] | None = None,
    bold_rows: list[bool] | None = None,
    numeric: tuple[int, ...] = (),
) -> str:
    """A Typst table; ``cells`` replaces column i's cells with Typst code (content expressions)."""
    cols = columns or f"{len(t.header)}"
    align = ", ".join("right" if i in numeric else "left" for i in range(len(t.header)))
    parts = [
        f"#table(columns: {cols}, align: ({align},),",
        "table.header(" + ", ".join(q(h) for h in t.header) + "),",
    ]
    for r, row in enumerate(t.rows):
        strong = bool(bold_rows and bold_rows[r])
        items = []
        for i, cell in enumerate(row):
            code = cells[i][r] if cells and i in cells else q(cell)
            items.append(f'text(weight: "bold", {code})' if strong and not (cells and i in cells) else code)
        parts.append(", ".join(items) + ",")
    parts.append(")")
    return "\n".join(parts)


def _p(text: str) -> str:
    return f"#par({q(text)})"


def _message(f: FindingRow) -> str:
    head = f"{KIND_LABELS.get(f.kind, f.kind)} · {f.code} {f.name}: "
    return f"[#sev({q(SEVERITY_LABELS.get(f.severity, f.severity))}) #{q(head)}#{q(f.message)}]"


def render_typst(doc: Document, plots_dir: str = "plots") -> tuple[str, dict[str, str]]:
    """The Typst source of the report and the SVG files it includes (name relative to ``plots_dir`` ->
    text)."""
    t = doc.title
    files: dict[str, str] = {}
    footer = f"bracer report · {t.protocol_id} {t.protocol_version} · {t.participant or 'nominal'}"
    if t.session:
        footer += f" · session {t.session}"
    out = [_PREAMBLE.format(title=q(f"bracer report: {t.kind}"), footer=q(footer))]
    out.append(f"#text(size: 8.5pt, tracking: 0.08em, fill: luma(80), {q('BRACER REPORT')})")
    out.append(f"= #{q(t.kind)}")
    out.append(
        _table(
            Table(("Field", "Value"), title_rows(doc)),
            columns="(32%, 1fr)",
            cells={0: [_bold(k) for k, _ in title_rows(doc)]},
        )
    )
    statements = " #parbreak() ".join(f"#{q(s)}" for s in doc.statements)
    out.append(f"#block(width: 100%, inset: 3mm, stroke: 0.9pt, fill: luma(246))[{statements}]")
    if doc.has_audit:
        out.append(
            f'#block(inset: (left: 3mm, y: 1mm), stroke: (left: 2.5pt))[#text(weight: "bold", '
            f"{q('Session audit: ')})#{q((doc.statement or '') + '.')}]"
        )
        out.append(f"== #{q(HEADINGS['summary'])} <summary>")
        out.append(
            _table(
                summary_table(doc),
                columns="(17%, auto, auto, 1fr)",
                numeric=(1, 2),
                bold_rows=[c.violations > 0 for c in doc.summary],
            )
        )
        gaps = [(c.label, n) for c in doc.summary for n in c.not_analysed]
        if gaps:
            out.append(f"#{_bold('Not analysed:')}")
            out += [f"- #{q(f'{label}: {n}')}" for label, n in gaps]
        out.append(f"== #{q(HEADINGS['incidents'])} <incidents>")
        out.append(_p(INCIDENT_INTRO))
        if doc.incidents:
            links = [f"link(<row-{_label(i.finding)}>, {q(i.finding)})" for i in doc.incidents]
            blanks = ["blank"] * len(doc.incidents)
            out.append(
                _table(
                    incident_table(doc.incidents),
                    columns="(auto, auto, auto, 1fr, 18%, auto, auto)",
                    cells={2: links, 5: blanks, 6: blanks},
                )
            )
        else:
            out.append(_p(NO_INCIDENTS))
        out.append(f"== #{q(HEADINGS['stops'])} <stops>")
        if doc.stops:
            refs = [f"link(<fig-{_label(s.plot)}>, {q(s.ref)})" if s.plot else q(s.ref) for s in doc.stops]
            out.append(
                _table(
                    stop_table(doc.stops),
                    columns="(auto, auto, 1fr, 1fr, 1fr, 1fr)",
                    cells={0: refs},
                    bold_rows=[s.outside for s in doc.stops],
                )
            )
            jt = stop_joint_table(doc.stops)
            if jt.rows:
                out.append(_p("Distance each joint travelled after the trigger:"))
                out.append(_table(jt, numeric=(2, 3, 4)))
        else:
            out.append(_p("No stop was requested in the analysed data."))
        out.append(f"== #{q(HEADINGS['findings'])} <findings>")
        ft = finding_table(doc.findings)
        if ft.rows:
            out.append(
                _p(
                    "Each finding number links to the plot that shows it. Values are in the unit the "
                    "protocol declared for the limit; a negative margin lies beyond the limit."
                )
            )
            refs = [
                (
                    f"[#link(<fig-{_label(f.plot)}>, {q(f.ref)}) <row-{_label(f.ref)}>]"
                    if f.plot
                    else f"[#{q(f.ref)} <row-{_label(f.ref)}>]"
                )
                for f in doc.findings
            ]
            out.append(
                _table(
                    ft,
                    columns="(auto, auto, auto, auto, auto, auto, auto, 1fr)",
                    numeric=(2, 3, 4, 5),
                    cells={0: refs, 7: [_message(f) for f in doc.findings]},
                    bold_rows=[f.kind == "violation" for f in doc.findings],
                )
            )
        else:
            out.append(_p("The audit reported no finding."))
        out.append(f"== #{q(HEADINGS['plots'])} <plots>")
        if doc.figures:
            out += [f"- #{_bold(what + ':')} #{q(how)}" for what, how in legend_items()]
        for fig in doc.figures:
            name = f"{fig.id}.svg"
            files[name] = render(fig.chart, fig.id, standalone=True, title=fig.title)
            caption = f"#{_bold(fig.title + '.')} #{q(fig.caption)}"
            out.append(
                f"#figure(image({q(plots_dir + '/' + name)}, width: 100%), kind: image, supplement: none, "
                f"caption: [{caption}]) <fig-{_label(fig.id)}>"
            )
        out += [f"- #{q(n)}" for n in doc.figure_notes]
        out.append(f"== #{q(HEADINGS['coverage'])} <coverage>")
        out += [_p(line) for line in coverage_lines(doc)]
    if doc.review is not None:
        out.append(f"== #{q(HEADINGS['review'])} <review>")
        out += [_p(line) for line in review_lines(doc)]
        out.append(
            _table(review_check_table(doc), columns="(auto, auto, 1fr, auto, auto, auto)", numeric=(3, 4, 5))
        )
        if doc.review.ranges:
            out.append(f"=== #{q(HEADINGS['ranges'])}")
            out.append(
                _table(
                    range_table(doc),
                    numeric=(2, 3, 4),
                    bold_rows=[r.layers == "controller only" for r in doc.review.ranges],
                )
            )
        if doc.review.contact_references:
            out.append(f"=== #{q(HEADINGS['references'])}")
            out.append(
                _table(reference_table(doc), columns="(1fr, auto, auto, auto, auto, auto)", numeric=(3, 4, 5))
            )
            out.append(_p(REFERENCE_CAVEAT))
        out.append(f"=== #{q(HEADINGS['cautions'])}")
        if not doc.review.cautions:
            out.append(_p("No caution or override applies."))
        for entry in doc.review.cautions:
            out.append(f"#{_bold(caution_heading(entry))}")
            if entry.text:
                out.append(f"#par(emph({q(entry.text)}))")
            if entry.changes:
                out.append(_table(caution_table(entry.changes), columns="(auto, auto, auto, 1fr)"))
            else:
                out.append(_p(no_change_text(entry)))
        out.append(f"=== #{q('Review findings')}")
        rt = review_finding_table(doc)
        if rt.rows:
            sev = [f"sev({q(SEVERITY_LABELS.get(f.severity, f.severity))})" for f in doc.review.findings]
            out.append(_table(rt, columns="(auto, auto, auto, auto, 1fr)", cells={1: sev}))
        else:
            out.append(_p("The review reported no finding."))
    out.append(f"== #{q(HEADINGS['provenance'])} <provenance>")
    hashes = [f'text(font: "DejaVu Sans Mono", size: 6.4pt, {q(d.sha256)})' for d in doc.provenance.inputs]
    out.append(_table(input_table(doc), columns="(auto, 1fr, auto, auto)", numeric=(3,), cells={2: hashes}))
    out += [_p(line) for line in software_lines(doc)]
    out.append(f"== #{q(HEADINGS['standards'])} <standards>")
    out += [f"- #{_bold(s + ':')} #{q(w)}" for s, w in doc.standards]
    roles = []
    for role in doc.sign_off.roles:
        lines = " ".join(
            f"#v(6mm) #block(width: 100%, stroke: (bottom: 0.5pt), inset: (bottom: 1mm))"
            f"[#text(size: 7.5pt, fill: luma(80), {q(line)})]"
            for line in doc.sign_off.lines
        )
        roles.append(f"block(width: 100%, inset: 3mm, stroke: 0.9pt)[#{_bold(role)} {lines}]")
    out.append(
        f"#block(breakable: false)[== #{q(HEADINGS['sign_off'])} <sign-off>\n{_p(SIGN_OFF_INTRO)}\n"
        f"#grid(columns: (1fr, 1fr), gutter: 6mm, {', '.join(roles)})\n"
        + "\n".join(f"#par(emph({q(s)}))" for s in doc.statements[:2])
        + "]"
    )
    return "\n".join(out) + "\n", files


def write_pdf(doc: Document, path: str | Path) -> None:
    """Typeset the report to ``path``.

    Raises
    ------
    InputError
        The ``typst`` package is missing (with the command that installs it), or the file cannot be written.
    """
    try:
        import typst
    except ImportError:
        raise InputError.single(
            "the PDF report needs the 'typst' package, a bracer dependency: pip install 'typst>=0.13' "
            "(or reinstall bracer)",
            path,
        ) from None
    source, files = render_typst(doc, "plots")
    with tempfile.TemporaryDirectory(prefix="bracer-report-") as tmp:
        root = Path(tmp)
        (root / "plots").mkdir()
        for name, text in files.items():
            (root / "plots" / name).write_text(text, encoding="utf-8")
        main = root / "report.typ"
        main.write_text(source, encoding="utf-8")
        pdf = typst.compile(
            str(main),
            root=str(root),
            ignore_system_fonts=True,
            timestamp=int(doc.provenance.analysis.when.timestamp()),
        )
    assert isinstance(pdf, bytes)
    try:
        Path(path).write_bytes(pdf)
    except OSError as exc:
        raise InputError.single(f"cannot write the PDF: {exc.strerror or exc}", path) from None
