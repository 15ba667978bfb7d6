"""The post-session audit in the terminal: inputs and clocks, the findings with exact times and figures, the
analysed coverage, the summary figures, and the statement with its caution.

Severity marks are text labels (``ERROR``, ``WARN``, ``info``) with a symbol, so they read the same without
colour.  Every text that comes from the protocol or the logs is rendered as plain text, never as markup.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from rich import box
from rich.console import Console, Group, RenderableType
from rich.measure import Measurement
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from bracer.audit.run import AuditResult
from bracer.findings import Finding, Kind, Severity
from bracer.units import format_number

__all__ = ["render_audit"]

_MARK = {
    Severity.ERROR: ("✖ ERROR", "bold red"),
    Severity.WARNING: ("▲ WARN ", "yellow"),
    Severity.INFO: ("· info ", "dim"),
}
_KIND = {
    Kind.VIOLATION: "violation",
    Kind.NEAR_MISS: "near miss",
    Kind.STOP: "stop",
    Kind.DATA_QUALITY: "data quality",
    Kind.NOT_ASSESSABLE: "not assessable",
}


def _t(text: object, style: str = "") -> Text:
    return Text("" if text is None else str(text), style=style)


def _table(*columns: str, title: str, wrap: Sequence[str] = ()) -> Table:
    table = Table(
        box=box.SIMPLE_HEAD,
        show_edge=False,
        pad_edge=False,
        title=title,
        title_justify="left",
        title_style="bold",
        header_style="bold",
    )
    for col in columns:
        table.add_column(col, no_wrap=col not in wrap, ratio=1 if col in wrap else None)
    return table


def _decimals(result: AuditResult) -> int:
    """Decimals that show one sample step of the fastest stream (3 for 1 kHz)."""
    fastest = max((s.declared_rate for s in result.streams), default=1000.0)
    return max(3, math.ceil(math.log10(fastest) - 1e-9))


def _num(value: float | None) -> str:
    return "–" if value is None else format_number(value)


def _size(n: int) -> str:
    for unit in ("B", "kB", "MB", "GB"):
        if n < 1000 or unit == "GB":
            return f"{n:.0f} {unit}" if unit == "B" else f"{n:.1f} {unit}"
        n /= 1000  # type: ignore[assignment]
    return str(n)  # pragma: no cover


def _header(result: AuditResult) -> RenderableType:
    table = Table(box=box.HEAVY_HEAD, show_header=False, padding=(0, 1))
    table.add_column(style="bold", no_wrap=True)
    table.add_column(overflow="fold")  # a long path folds, never cut
    table.add_row(
        _t("protocol"),
        _t(f"{result.protocol_id}  version {result.protocol_version}  ·  {result.protocol_title}"),
    )
    table.add_row(_t("participant"), _t(result.participant or "none given: the protocol's nominal limits"))
    table.add_row(_t("session"), _t(result.session or "–"))
    for i, f in enumerate(result.inputs):
        role = "protocol" if f.format == "yaml" else "log"
        table.add_row(
            _t("inputs" if i == 0 else ""),
            _t(f"{role:<8} {f.path}  ({f.format}, {_size(f.size)})  sha256 {f.sha256[:16]}…"),
        )
    return Group(Text("bracer · post-session audit", style="bold"), table)


def _streams(result: AuditResult, decimals: int) -> RenderableType:
    table = _table(
        "stream",
        "file",
        "samples",
        "time span (s)",
        "declared",
        "measured",
        "jitter",
        title="Streams (each on its own clock)",
    )
    for s in result.streams:
        span = (
            "–"
            if s.t_first is None or s.t_last is None
            else f"{s.t_first:.{decimals}f} – {s.t_last:.{decimals}f}"
        )
        table.add_row(
            _t(s.stream),
            _t(Path(s.path).name),
            _t(s.samples),
            _t(span),
            _t(f"{s.declared_rate:g} Hz"),
            _t("–" if s.rate is None else f"{s.rate:.6g} Hz"),
            _t("–" if s.jitter is None else f"{s.jitter * 1e3:.3f} ms"),
        )
    return table


def _where(f: Finding) -> str:
    stream = dict(f.extra).get("stream")
    if f.subject:
        return f.subject
    return f"stream {stream}" if stream else "session"


_FIGURES = ("#", "severity", "code", "start s", "end s", "peak at s", "peak", "limit", "margin", "unit")
_WORDS = ("kind", "subject", "quantity")


def _findings(result: AuditResult, decimals: int, console: Console) -> RenderableType:
    """A table of the figures, one numbered row per finding, then the messages by number at full width.

    No cell is ever cut or wrapped: a terminal too narrow for the whole table gets the same figures as one
    block per finding.
    """
    counts = {s: sum(f.severity == s for f in result.findings) for s in Severity}
    title = (
        f"Findings: {len(result.findings)}  ({counts[Severity.ERROR]} error · {counts[Severity.WARNING]} "
        f"warning · {counts[Severity.INFO]} info)"
    )
    if not result.findings:
        return Group(Text(title, style="bold"), _t("  none", "dim"))

    def time(x: float | None) -> str:
        return "–" if x is None else f"{x:.{decimals}f}"

    ordered = sorted(
        result.findings, key=lambda f: (-f.severity, f.t_start if f.t_start is not None else -1e300)
    )
    rows = [
        {
            "#": str(n),
            "severity": _MARK[f.severity][0],
            "code": f.code,
            "kind": _KIND.get(f.kind, f.kind.value),
            "subject": _where(f),
            "quantity": f.quantity or "–",
            "start s": time(f.t_start),
            "end s": time(f.t_end),
            "peak at s": time(f.t_peak),
            "peak": _num(f.peak),
            "limit": _num(f.limit),
            "margin": _num(f.margin),
            "unit": f.unit or "",
        }
        for n, f in enumerate(ordered, start=1)
    ]
    columns = ("#", "severity", "code", *_WORDS, *_FIGURES[3:])
    table = Table(
        box=box.SIMPLE_HEAD,
        show_edge=False,
        pad_edge=False,
        title=title,
        title_justify="left",
        title_style="bold",
        header_style="bold",
    )
    for col in columns:
        table.add_column(col, no_wrap=True)
    for f, r in zip(ordered, rows, strict=True):
        table.add_row(*(_t(r[c], _MARK[f.severity][1] if c == "severity" else "") for c in columns))
    natural = Measurement.get(console, console.options.update_width(10_000), table).maximum
    if natural > console.width:  # the table would be squeezed and cells cut
        return _finding_blocks(title, ordered, rows)
    notes = Table(box=None, show_header=False, pad_edge=False, padding=(0, 1, 0, 0))
    notes.add_column(no_wrap=True, justify="right")
    notes.add_column(no_wrap=True)
    notes.add_column(ratio=1)
    for n, f in enumerate(ordered, start=1):
        notes.add_row(_t(n), _t(f"{f.code} {f.name}", "dim"), _t(f.message))
    return Group(table, Text(""), notes)


def _finding_blocks(title: str, ordered: list[Finding], rows: list[dict[str, str]]) -> RenderableType:
    """The findings one block each, for a terminal too narrow for the table (same figures, same order)."""
    lines: list[RenderableType] = [Text(title, style="bold")]
    for f, r in zip(ordered, rows, strict=True):
        head = Text()
        head.append(f"{r['#']:>3} ")
        head.append(r["severity"], style=_MARK[f.severity][1])
        head.append(f"  {f.code} {f.name} · {r['kind']} · {r['subject']} · {r['quantity']}")
        unit = f" {r['unit']}" if r["unit"] else ""
        parts = [f"{r['start s']} – {r['end s']} s"] if f.t_start is not None else []
        if f.peak is not None:
            parts.append(
                f"peak {r['peak']}{unit}" + (f" at {r['peak at s']} s" if f.t_peak is not None else "")
            )
        if f.limit is not None:
            parts.append(f"limit {r['limit']}{unit}")
        if f.margin is not None:
            parts.append(f"margin {r['margin']}{unit}")
        lines.append(head)
        if parts:
            lines.append(Padding(_t(" · ".join(parts)), (0, 0, 0, 6)))
        lines.append(Padding(_t(f.message), (0, 0, 0, 6)))
    return Group(*lines)


def _percent(fraction: float) -> str:
    """Rounded down, so that 99.96 % never reads as 100 %."""
    return f"{math.floor(fraction * 1000 + 1e-9) / 10:.1f} %"


def _coverage(result: AuditResult) -> RenderableType:
    cov = result.coverage
    span = (
        ""
        if cov.session_start is None or cov.session_end is None
        else f", session time {cov.session_start:g} – {cov.session_end:g} s"
    )
    table = _table(
        "stream",
        "column",
        "feeds",
        "analysed",
        "analysed s",
        title=f"Coverage: share of session time with valid samples{span}",
        wrap=("feeds",),
    )
    for c in cov.channels:
        feeds = f"{c.subject} {c.role}" if c.subject else c.role
        pct = "missing" if not c.present else _percent(c.fraction)
        style = "bold red" if c.analysed_s <= 0 else ("yellow" if c.fraction < 0.99 else "")
        table.add_row(_t(c.stream), _t(c.column), _t(feeds), _t(pct, style), _t(f"{c.analysed_s:.3f}"))
    table.add_row(
        _t("session", "bold"),
        _t("all", "bold"),
        _t("every analysed channel at once", "bold"),
        _t(_percent(cov.fraction), "bold"),
        _t(f"{cov.analysed_s:.3f}", "bold"),
    )
    return table


def _summary(summary: Any) -> RenderableType | None:
    """The summary figures the limit checks provide (read by name: a figure they do not give is left out)."""
    if summary is None or not hasattr(summary, "to_dict"):
        return None
    d = summary.to_dict()

    def num(x: Any, unit: str = "") -> str:
        return (
            "–"
            if not isinstance(x, int | float)
            else f"{format_number(float(x))}{' ' + unit if unit else ''}"
        )

    head = [f"duration {num(d.get('duration'), 's')}"]
    if d.get("active_time") is not None:
        head.append(f"active {num(d.get('active_time'), 's')} ({d.get('activity_note', '')})")
    head.append(f"stops {d.get('stops', '–')}")
    lines: list[RenderableType] = [Text("Session figures", style="bold"), _t("  " + " · ".join(head))]
    for c in d.get("contacts", ()):
        unit = c.get("unit", "")
        if c.get("peak") is None:
            lines.append(_t(f"  {c.get('contact')}: force not available ({c.get('note', '')})"))
        else:
            at = f" at {c['t_peak']:.3f} s" if isinstance(c.get("t_peak"), int | float) else ""
            lines.append(
                _t(
                    f"  {c.get('contact')}: peak force {num(c.get('peak'), unit)}{at}, "
                    f"RMS {num(c.get('rms'), unit)}"
                )
            )
    for j in d.get("joints", ()):
        unit = j.get("unit", "")
        if j.get("min") is None:
            lines.append(_t(f"  {j.get('joint')}: position not available"))
        else:
            lines.append(
                _t(
                    f"  {j.get('joint')}: range used {num(j.get('min'))} to {num(j.get('max'), unit)} "
                    f"({num(j.get('range_used'), unit)})"
                )
            )
    return Group(*lines)


def _statement(result: AuditResult, fail_on: Severity | None) -> RenderableType:
    worst = result.worst
    style = (
        "bold red" if worst == Severity.ERROR else ("bold yellow" if worst == Severity.WARNING else "bold")
    )
    lines: list[RenderableType] = [Text("══ " + result.statement, style=style)]
    if fail_on is not None:
        code = result.exit_code(fail_on)
        why = f"findings at or above {fail_on.label}" if code else f"no finding at or above {fail_on.label}"
        lines.append(_t(f"   exit {code}: {why}", "dim"))
    lines.append(Padding(_t(result.caution, "italic"), (0, 0, 0, 3)))
    return Group(*lines)


def render_audit(result: AuditResult, console: Console, fail_on: Severity | None = None) -> None:
    """Print the audit to ``console``."""
    decimals = _decimals(result)
    parts: list[RenderableType | None] = [
        _header(result),
        _streams(result, decimals),
        _findings(result, decimals, console),
        _coverage(result),
        _summary(result.summary),
        _statement(result, fail_on),
    ]
    for part in parts:
        if part is not None:
            console.print(part)
            console.print()
