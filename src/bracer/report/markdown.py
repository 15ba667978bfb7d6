"""The report as Markdown, with its plots as SVG files beside it (``<name>.plots/<figure id>.svg``).

Sections, columns and cell texts come from :mod:`bracer.report.sections`, the same as the HTML and PDF.  Text
from the protocol or the logs is escaped, so a caution's wording can never become markup.
"""

from __future__ import annotations

from bracer.report.document import Document
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

__all__ = ["render_markdown"]

_SPECIAL = str.maketrans({c: "\\" + c for c in "\\`*_[]<>|#"})


def esc(text: str) -> str:
    """Text as literal Markdown: special characters escaped, line breaks folded."""
    return " ".join(text.split()).translate(_SPECIAL)


def _table(t: Table, raw_first: bool = False) -> list[str]:
    out = ["| " + " | ".join(esc(h) for h in t.header) + " |", "|" + "---|" * len(t.header)]
    for row in t.rows:
        cells = [c if (raw_first and i == 0) else esc(c) for i, c in enumerate(row)]
        out.append("| " + " | ".join(cells) + " |")
    return [*out, ""]


def render_markdown(doc: Document, plots_dir: str) -> tuple[str, dict[str, str]]:
    """The Markdown text and the plot files it links to (path relative to the Markdown file -> SVG text).

    ``plots_dir`` is the folder name, relative to the Markdown file, that holds the plots.
    """
    files: dict[str, str] = {}
    out: list[str] = [f"# bracer report: {esc(doc.title.kind)}", ""]
    out += ["| | |", "|---|---|"]
    out += [f"| **{esc(k)}** | {esc(v)} |" for k, v in title_rows(doc)]
    out.append("")
    out += [
        f"> {esc(s)}" + ("  " if i < len(doc.statements) - 1 else "") for i, s in enumerate(doc.statements)
    ]
    out.append("")
    if doc.has_audit:
        out += [f"**Session audit:** {esc(doc.statement or '')}.", ""]
        out += [f"## {HEADINGS['summary']}", "", *_table(summary_table(doc))]
        gaps = [(c.label, n) for c in doc.summary for n in c.not_analysed]
        if gaps:
            out += ["Not analysed:", ""] + [f"- {esc(label)}: {esc(n)}" for label, n in gaps] + [""]
        out += [f"## {HEADINGS['incidents']}", "", esc(INCIDENT_INTRO), ""]
        out += _table(incident_table(doc.incidents)) if doc.incidents else [esc(NO_INCIDENTS), ""]
        out += [f"## {HEADINGS['stops']}", ""]
        if doc.stops:
            out += _table(stop_table(doc.stops))
            joints = stop_joint_table(doc.stops)
            if joints.rows:
                out += ["Distance each joint travelled after the trigger:", "", *_table(joints)]
        else:
            out += ["No stop was requested in the analysed data.", ""]
        out += [f"## {HEADINGS['findings']}", ""]
        table = finding_table(doc.findings)
        if table.rows:
            linked = []
            for f, row in zip(doc.findings, table.rows, strict=True):
                ref = f"[{f.ref}]({plots_dir}/{f.plot}.svg)" if f.plot else f.ref
                linked.append((ref, *row[1:]))
            out += _table(Table(table.header, tuple(linked)), raw_first=True)
            out += ["Each finding number links to the plot that shows it.", ""]
        else:
            out += ["The audit reported no finding.", ""]
        out += [f"## {HEADINGS['plots']}", ""]
        if doc.figures:
            out += ["How to read the plots:", ""]
            out += [f"- {esc(what)}: {esc(how)}" for what, how in legend_items()] + [""]
        for fig in doc.figures:
            name = f"{plots_dir}/{fig.id}.svg"
            files[f"{fig.id}.svg"] = render(fig.chart, fig.id, standalone=True, title=fig.title)
            out += [f"### {esc(fig.title)}", "", f"![{esc(fig.title)}]({name})", "", esc(fig.caption), ""]
        out += [f"- {esc(n)}" for n in doc.figure_notes]
        if doc.figure_notes:
            out.append("")
        out += [f"## {HEADINGS['coverage']}", ""] + [esc(line) + "  " for line in coverage_lines(doc)] + [""]
    if doc.review is not None:
        out += [f"## {HEADINGS['review']}", ""] + [esc(line) + "  " for line in review_lines(doc)] + [""]
        out += _table(review_check_table(doc))
        if doc.review.ranges:
            out += [f"### {HEADINGS['ranges']}", "", *_table(range_table(doc))]
        if doc.review.contact_references:
            out += [
                f"### {HEADINGS['references']}",
                "",
                *_table(reference_table(doc)),
                esc(REFERENCE_CAVEAT),
                "",
            ]
        out += [f"### {HEADINGS['cautions']}", ""]
        if not doc.review.cautions:
            out += ["No caution or override applies.", ""]
        for entry in doc.review.cautions:
            out += [f"**{esc(caution_heading(entry))}**", ""]
            if entry.text:
                out += [f"*{esc(entry.text)}*", ""]
            out += _table(caution_table(entry.changes)) if entry.changes else [esc(no_change_text(entry)), ""]
        out += ["### Review findings", ""]
        table = review_finding_table(doc)
        out += _table(table) if table.rows else ["The review reported no finding.", ""]
    out += [f"## {HEADINGS['provenance']}", "", *_table(input_table(doc))]
    out += [esc(line) + "  " for line in software_lines(doc)] + [""]
    out += [f"## {HEADINGS['standards']}", ""] + [f"- {esc(s)}: {esc(w)}" for s, w in doc.standards] + [""]
    out += [f"## {HEADINGS['sign_off']}", "", esc(SIGN_OFF_INTRO), ""]
    for role in doc.sign_off.roles:
        out += [f"**{esc(role)}**", ""]
        out += [f"{esc(line)}: ______________________________  " for line in doc.sign_off.lines] + [""]
    out += [esc(doc.statements[0]), "", esc(doc.statements[1]), ""]
    return "\n".join(out).rstrip() + "\n", files
