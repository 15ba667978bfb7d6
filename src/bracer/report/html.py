"""The report as one self-contained HTML file: every plot inline as SVG, the style sheet inline, no script, no
font, image or link to anything outside the file (every ``href`` is a ``#`` anchor inside it).  It prints on
A4 (``@page``), and it reads in greyscale: severities are words in bordered labels, exceedances are bold rows
with a heavy rule, plots use patterns and dashes.

Sections, columns and cell texts come from :mod:`bracer.report.sections`, the same as the Markdown and PDF.
Every text from the protocol or the logs is HTML-escaped.
"""

from __future__ import annotations

from html import escape

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

__all__ = ["render_html"]

CSS = """
@page { size: A4; margin: 15mm 14mm 17mm 14mm; }
:root { --ink: #1a1a1a; --muted: #555; --rule: #bdbdbd; --accent: #1f4e79; --soft: #f3f3f1; }
* { box-sizing: border-box; }
html { font-family: "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; color: var(--ink);
       font-size: 10pt; line-height: 1.4; }
body { max-width: 190mm; margin: 0 auto; padding: 8mm 0 12mm; }
h1 { font-size: 17pt; margin: 0 0 2mm; letter-spacing: .01em; }
h1 small { display: block; font-size: 10pt; font-weight: normal; color: var(--muted); letter-spacing: .08em;
           text-transform: uppercase; margin-bottom: 1mm; }
h2 { font-size: 12.5pt; margin: 7mm 0 2mm; padding-bottom: 1mm; border-bottom: 1.5pt solid var(--ink);
     break-after: avoid; }
h3 { font-size: 10.5pt; margin: 4mm 0 1.5mm; break-after: avoid; }
p { margin: 1.2mm 0 2mm; }
table { border-collapse: collapse; width: 100%; margin: 1mm 0 3mm; font-size: 8.6pt; }
th, td { text-align: left; vertical-align: top; padding: 1.1mm 1.6mm; border-bottom: .5pt solid var(--rule); }
th { border-bottom: 1pt solid var(--ink); font-weight: bold; background: var(--soft); }
tr { break-inside: avoid; }
td.num, th.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
td.nowrap { white-space: nowrap; }
table.title td:first-child { font-weight: bold; width: 30%; }
table.title { font-size: 9.5pt; border-top: 1.5pt solid var(--ink); }
.statements { border: 1pt solid var(--ink); padding: 2mm 3mm; margin: 3mm 0; background: var(--soft); }
.statements p { margin: .6mm 0; }
.verdict { font-size: 10.5pt; border-left: 3pt solid var(--ink); padding: 1mm 3mm; margin: 3mm 0; }
tr.hit td { font-weight: bold; }
tr.hit td.msg { font-weight: normal; }
tr.hit td:first-child { border-left: 3pt solid var(--ink); }
.sev { display: inline-block; padding: 0 1.2mm; border: .6pt solid var(--muted); border-radius: 1mm;
       font-size: 7.5pt; letter-spacing: .04em; white-space: nowrap; }
.sev-error { border: 1.4pt solid var(--ink); font-weight: bold; }
.sev-warning { border: 1pt dashed var(--ink); }
.code { color: var(--muted); white-space: nowrap; }
a { color: var(--accent); }
figure { margin: 3mm 0 5mm; break-inside: avoid; }
figure svg { width: 100%; height: auto; display: block; border: .5pt solid var(--rule); }
figcaption { font-size: 8.6pt; color: var(--muted); margin-top: 1mm; }
figcaption b { color: var(--ink); }
ul.legend { font-size: 8.6pt; columns: 2; margin: 1mm 0 3mm; padding-left: 4mm; }
.notes li { font-size: 8.6pt; }
.blank { display: inline-block; min-width: 22mm; border-bottom: .6pt solid var(--ink); height: 4mm; }
.signoff { display: grid; grid-template-columns: 1fr 1fr; gap: 8mm; margin-top: 3mm; break-inside: avoid; }
.signoff div.role { border: 1pt solid var(--ink); padding: 3mm; }
.signoff p.line { margin: 5mm 0 0; border-bottom: .6pt solid var(--ink); font-size: 8.6pt;
                  color: var(--muted); }
.hash { font-family: "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: 7.4pt;
        word-break: break-all; }
td.msg { min-width: 60mm; }
@media print { body { padding: 0; } a { color: var(--ink); text-decoration: none; } }
"""


def e(text: str) -> str:
    return escape(text, quote=True)


def _table(
    t: Table,
    *,
    classes: str = "",
    numeric: tuple[int, ...] = (),
    cell_html: dict[int, list[str]] | None = None,
    row_class: list[str] | None = None,
    raw: tuple[int, ...] = (),
) -> list[str]:
    out = [f'<table class="{classes}">' if classes else "<table>", "<thead><tr>"]
    out += [
        f'<th class="num">{e(h)}</th>' if i in numeric else f"<th>{e(h)}</th>" for i, h in enumerate(t.header)
    ]
    out.append("</tr></thead><tbody>")
    for r, row in enumerate(t.rows):
        cls = f' class="{row_class[r]}"' if row_class and row_class[r] else ""
        out.append(f"<tr{cls}>")
        for i, cell in enumerate(row):
            content = cell_html[i][r] if cell_html and i in cell_html else (cell if i in raw else e(cell))
            klass = ' class="num"' if i in numeric else (' class="msg"' if t.header[i] == "Message" else "")
            out.append(f"<td{klass}>{content}</td>")
        out.append("</tr>")
    out.append("</tbody></table>")
    return out


def _sev(severity: str) -> str:
    return f'<span class="sev sev-{e(severity)}">{e(SEVERITY_LABELS.get(severity, severity))}</span>'


def _message(f: FindingRow) -> str:
    return (
        f'{_sev(f.severity)} {e(KIND_LABELS.get(f.kind, f.kind))} · <span class="code">{e(f.code)} '
        f"{e(f.name)}</span><br>{e(f.message)}"
    )


def render_html(doc: Document) -> str:
    """The report as an HTML document (UTF-8 text)."""
    t = doc.title
    out: list[str] = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>bracer report: {e(t.kind)} · {e(t.protocol_id)} · {e(t.participant or 'nominal')}</title>",
        f"<style>{CSS}</style></head><body>",
        f"<header><h1><small>bracer report</small>{e(t.kind)}</h1>",
    ]
    out += _table(Table(("Field", "Value"), title_rows(doc)), classes="title")
    out.append("</header>")
    out.append('<div class="statements">' + "".join(f"<p>{e(s)}</p>" for s in doc.statements) + "</div>")
    if doc.has_audit:
        out.append(f'<p class="verdict"><b>Session audit:</b> {e(doc.statement or "")}.</p>')
        out.append(f'<h2 id="summary">{e(HEADINGS["summary"])}</h2>')
        st = summary_table(doc)
        out += _table(st, numeric=(1, 2), row_class=["hit" if c.violations else "" for c in doc.summary])
        gaps = [(c.label, n) for c in doc.summary for n in c.not_analysed]
        if gaps:
            out.append('<p><b>Not analysed:</b></p><ul class="notes">')
            out += [f"<li>{e(label)}: {e(n)}</li>" for label, n in gaps]
            out.append("</ul>")
        out.append(f'<h2 id="incidents">{e(HEADINGS["incidents"])}</h2><p>{e(INCIDENT_INTRO)}</p>')
        if doc.incidents:
            it = incident_table(doc.incidents)
            links = [f'<a href="#row-{e(i.finding)}">{e(i.finding)}</a>' for i in doc.incidents]
            blanks = ['<span class="blank"></span>'] * len(doc.incidents)
            out += _table(it, cell_html={2: links, 5: blanks, 6: blanks})
        else:
            out.append(f"<p>{e(NO_INCIDENTS)}</p>")
        out.append(f'<h2 id="stops">{e(HEADINGS["stops"])}</h2>')
        if doc.stops:
            stt = stop_table(doc.stops)
            refs = [f'<a href="#fig-{e(s.plot)}">{e(s.ref)}</a>' if s.plot else e(s.ref) for s in doc.stops]
            out += _table(stt, cell_html={0: refs}, row_class=["hit" if s.outside else "" for s in doc.stops])
            jt = stop_joint_table(doc.stops)
            if jt.rows:
                out.append("<p>Distance each joint travelled after the trigger:</p>")
                out += _table(jt, numeric=(2, 3, 4))
        else:
            out.append("<p>No stop was requested in the analysed data.</p>")
        out.append(f'<h2 id="findings">{e(HEADINGS["findings"])}</h2>')
        ft = finding_table(doc.findings)
        if ft.rows:
            out.append(
                "<p>Each finding number links to the plot that shows it. Values are in the unit the "
                "protocol declared for the limit; a negative margin lies beyond the limit.</p>"
            )
            refs = [
                (
                    f'<a id="row-{e(f.ref)}" href="#fig-{e(f.plot)}">{e(f.ref)}</a>'
                    if f.plot
                    else f'<span id="row-{e(f.ref)}">{e(f.ref)}</span>'
                )
                for f in doc.findings
            ]
            msgs = [_message(f) for f in doc.findings]
            out += _table(
                ft,
                numeric=(1, 2, 3, 4, 5),
                cell_html={0: refs, 7: msgs},
                row_class=["hit" if f.kind == "violation" else "" for f in doc.findings],
            )
        else:
            out.append("<p>The audit reported no finding.</p>")
        out.append(f'<h2 id="plots">{e(HEADINGS["plots"])}</h2>')
        if doc.figures:
            out.append(
                '<ul class="legend">'
                + "".join(f"<li><b>{e(what)}</b>: {e(how)}</li>" for what, how in legend_items())
                + "</ul>"
            )
        for fig in doc.figures:
            shown = [f for f in doc.findings if f.plot == fig.id]
            back = ""
            if shown and len(shown) <= 12:
                back = (
                    " Findings: "
                    + ", ".join(f'<a href="#row-{e(f.ref)}">{e(f.ref)}</a>' for f in shown)
                    + "."
                )
            out.append(f'<figure id="fig-{e(fig.id)}">')
            out.append(render(fig.chart, fig.id, standalone=False, title=fig.title))
            out.append(f"<figcaption><b>{e(fig.title)}.</b> {e(fig.caption)}{back}</figcaption></figure>")
        if doc.figure_notes:
            out.append('<ul class="notes">' + "".join(f"<li>{e(n)}</li>" for n in doc.figure_notes) + "</ul>")
        out.append(f'<h2 id="coverage">{e(HEADINGS["coverage"])}</h2>')
        out += [f"<p>{e(line)}</p>" for line in coverage_lines(doc)]
    if doc.review is not None:
        out.append(f'<h2 id="review">{e(HEADINGS["review"])}</h2>')
        out += [f"<p>{e(line)}</p>" for line in review_lines(doc)]
        out += _table(review_check_table(doc), numeric=(3, 4, 5))
        if doc.review.ranges:
            out.append(f"<h3>{e(HEADINGS['ranges'])}</h3>")
            out += _table(
                range_table(doc),
                numeric=(2, 3, 4),
                row_class=["hit" if r.layers == "controller only" else "" for r in doc.review.ranges],
            )
        if doc.review.contact_references:
            out.append(f"<h3>{e(HEADINGS['references'])}</h3>")
            out += _table(reference_table(doc), numeric=(3, 4, 5))
            out.append(f"<p>{e(REFERENCE_CAVEAT)}</p>")
        out.append(f"<h3>{e(HEADINGS['cautions'])}</h3>")
        if not doc.review.cautions:
            out.append("<p>No caution or override applies.</p>")
        for entry in doc.review.cautions:
            out.append(f"<p><b>{e(caution_heading(entry))}</b></p>")
            if entry.text:
                out.append(f"<p><i>{e(entry.text)}</i></p>")
            if entry.changes:
                out += _table(caution_table(entry.changes))
            else:
                out.append(f"<p>{e(no_change_text(entry))}</p>")
        out.append("<h3>Review findings</h3>")
        rt = review_finding_table(doc)
        if rt.rows:
            out += _table(rt, cell_html={1: [_sev(f.severity) for f in doc.review.findings]})
        else:
            out.append("<p>The review reported no finding.</p>")
    out.append(f'<h2 id="provenance">{e(HEADINGS["provenance"])}</h2>')
    it = input_table(doc)
    out += _table(
        it,
        numeric=(3,),
        cell_html={2: [f'<span class="hash">{e(d.sha256)}</span>' for d in doc.provenance.inputs]},
    )
    out += [f"<p>{e(line)}</p>" for line in software_lines(doc)]
    out.append(f'<h2 id="standards">{e(HEADINGS["standards"])}</h2><ul>')
    out += [f"<li><b>{e(s)}</b>: {e(w)}</li>" for s, w in doc.standards]
    out.append("</ul>")
    out.append(
        f'<section class="signoff-block"><h2 id="sign-off">{e(HEADINGS["sign_off"])}</h2>'
        f'<p>{e(SIGN_OFF_INTRO)}</p><div class="signoff">'
    )
    for role in doc.sign_off.roles:
        out.append(f'<div class="role"><b>{e(role)}</b>')
        out += [f'<p class="line">{e(line)}</p>' for line in doc.sign_off.lines]
        out.append("</div>")
    out.append("</div>")
    out += [f"<p><i>{e(s)}</i></p>" for s in doc.statements[:2]]
    out.append("</section></body></html>")
    return "\n".join(out) + "\n"
