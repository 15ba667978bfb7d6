"""The pre-trial review in the terminal: one section per joint and per contact, then the stop function and
logging, then the cautions, then the summary and the statement.

Severity marks are text labels (``ERROR``, ``WARN``, ``info``) with a symbol, so that they read the same
without colour (a pipe, a printout, a colour-blind reader).  All data texts from the protocol are rendered as
plain text, never as rich markup.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from rich import box
from rich.console import Console, Group, RenderableType
from rich.markup import escape
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from bracer.findings import Finding, Severity
from bracer.protocol.model import LAYERS, Contact, Joint
from bracer.review import STATEMENT, ReviewResult
from bracer.review.checks._base import DIRECTIONS, end_label, fmt
from bracer.review.checks.cautions import CautionRow
from bracer.review.checks.completeness import Requirement
from bracer.review.checks.contact_reference import CAVEAT
from bracer.review.checks.layer_order import Protection
from bracer.review.checks.room_to_stop import StopRoom
from bracer.units import format_number

__all__ = ["render_review"]

_MARK = {
    Severity.ERROR: ("✖ ERROR", "bold red"),
    Severity.WARNING: ("▲ WARN ", "yellow"),
    Severity.INFO: ("· info ", "dim"),
}
# Short figure columns never wrap; the others wrap rather than lose text to an ellipsis on a narrow terminal.
_NO_WRAP = frozenset({"layers", "p→d", "d→m", "p→pt", "time", "budget", "ratio", "error", "warning", "info"})
_REGION_WORDS = {
    "skull_forehead": "skull and forehead",
    "back_shoulders": "back and shoulders",
    "upper_arm_elbow": "upper arm and elbow",
    "lower_arm_wrist": "lower arm and wrist",
    "hand_fingers": "hand and fingers",
    "thigh_knee": "thigh and knee",
    "lower_leg": "lower leg",
}
_RULE = "═"


def severity_label(severity: Severity) -> Text:
    label, style = _MARK[severity]
    return Text(label, style=style)


def _table(*columns: str, title: str | None = None) -> Table:
    table = Table(
        box=box.SIMPLE_HEAD,
        show_edge=False,
        pad_edge=False,
        title=title,
        title_justify="left",
        title_style="italic",
        header_style="bold",
    )
    for col in columns:
        table.add_column(col, no_wrap=col in _NO_WRAP)
    return table


def _t(text: str, style: str | None = None) -> Text:
    return Text(text, style=style or "")


def _heading(kind: str, name: str, detail: str) -> Text:
    text = Text()
    text.append(f"{_RULE * 2} {kind} ", style="bold cyan")
    text.append(name, style="bold")
    if detail:
        text.append(f"  {detail}")
    return text


def _findings_block(findings: Sequence[Finding]) -> RenderableType:
    if not findings:
        return Padding(_t("no findings", "dim"), (0, 0, 0, 2))
    table = Table(box=None, show_header=False, pad_edge=False, padding=(0, 1, 0, 0))
    table.add_column(no_wrap=True)
    table.add_column(no_wrap=True, style="dim")
    table.add_column(ratio=1)
    for f in sorted(findings, key=lambda f: -f.severity):
        table.add_row(severity_label(f.severity), _t(f.code), _t(f.message))
    return Padding(table, (0, 0, 0, 2))


def _kind_of(finding: Finding) -> str | None:
    return dict(finding.extra).get("subject_kind")


def _group(findings: Iterable[Finding], kind: str, name: str | None) -> list[Finding]:
    return [f for f in findings if _kind_of(f) == kind and f.subject == name]


# ----------------------------------------------------------------------------------------------- header


def _header(result: ReviewResult) -> RenderableType:
    p = result.resolution.protocol
    ident = p.protocol
    table = Table(box=box.HEAVY_HEAD, show_header=False, show_edge=True, expand=False, padding=(0, 1))
    table.add_column(style="bold", no_wrap=True)
    table.add_column()
    table.add_row(_t("protocol"), _t(f"{ident.id}  version {ident.version}  ({ident.date.isoformat()})"))
    table.add_row(_t("title"), _t(ident.title))
    device = f"{p.device.name} · {p.device.kind}" + (
        f" · firmware {p.device.firmware}" if p.device.firmware else ""
    )
    table.add_row(_t("device"), _t(device))
    if ident.site:
        table.add_row(_t("site"), _t(ident.site))
    if result.participant is None:
        who = "nominal protocol (no participant selected: cautions and overrides not applied)"
    else:
        part = result.resolution.participant
        n_over = len(part.overrides) if part else 0
        who = (
            f"{result.participant} · cautions: {', '.join(result.resolution.cautions) or 'none'} · "
            f"{n_over} override(s)"
        )
    table.add_row(_t("participant"), _t(who))
    for rec in result.inputs[:1]:
        table.add_row(_t("file"), _t(f"{rec.path}  sha256 {rec.sha256[:16]}…"))
    title = Text("bracer · pre-trial review", style="bold")
    return Group(title, table)


def _overview(result: ReviewResult) -> RenderableType:
    table = _table("check", "worst", "error", "warning", "info", title="Checks")
    for r in result.checks:
        counts = {s: sum(f.severity == s for f in r.findings) for s in Severity}
        worst = max((f.severity for f in r.findings), default=None)
        mark = severity_label(worst) if worst is not None else _t("  –", "dim")
        table.add_row(
            _t(f"{r.check.code} {r.check.name}"),
            mark,
            _t(str(counts[Severity.ERROR])),
            _t(str(counts[Severity.WARNING])),
            _t(str(counts[Severity.INFO])),
        )
    return table


# ----------------------------------------------------------------------------------------------- joints


def _limit_cells(joint: Joint, quantity: str, direction: str, unit: str) -> list[str]:
    layers = getattr(joint, quantity)
    out = []
    for layer in LAYERS:
        value = layers.layer(layer)
        out.append("–" if value is None else fmt(value.get(direction).to(unit), unit))
    return out


_MARGIN_COLUMNS = (("planned", "device"), ("device", "mechanical"), ("planned", "participant"))


def _joint_limits(result: ReviewResult, name: str, joint: Joint) -> RenderableType | None:
    table = _table(
        "limit",
        "end",
        "planned",
        "device",
        "mechanical",
        "participant",
        "layers",
        "p→d",
        "d→m",
        "p→pt",
        title="Limits by layer. Margins (+ inside, − beyond): p→d planned to device, d→m device to "
        "mechanical, p→pt planned to participant",
    )
    margins = [m for m in result.layer_order.margins if m.joint == name]
    protection = {p.direction: p for p in result.layer_order.protection if p.joint == name}
    any_row = False
    for quantity in ("range", "speed", "torque", "acceleration"):
        layers = getattr(joint, quantity)
        first = next((layers.layer(x) for x in LAYERS if layers.layer(x) is not None), None)
        if first is None:
            continue
        for direction in DIRECTIONS:
            unit = first.get(direction).unit
            cells = [_t(c) for c in _limit_cells(joint, quantity, direction, unit)]
            prot = protection.get(direction) if quantity == "range" else None
            participant, layers_cell = _participant_cells(prot) if quantity == "range" else ("", "")
            rows = {
                (m.inner, m.outer): m for m in margins if m.quantity == quantity and m.direction == direction
            }
            # With a layer missing the margin spans the gap: planned→mechanical goes in the d→m column.
            if ("planned", "mechanical") in rows:
                rows[("device", "mechanical")] = rows.pop(("planned", "mechanical"))
            for inner in ("device", "mechanical"):
                if (inner, "participant") in rows:
                    rows[("planned", "participant")] = rows.pop((inner, "participant"))
            margin_cells = []
            for key in _MARGIN_COLUMNS:
                m = rows.get(key)
                if m is None:
                    margin_cells.append(_t(""))
                else:
                    margin_cells.append(
                        _t(
                            f"{'+' if m.margin >= 0 else ''}{fmt(m.margin, m.unit)}",
                            "" if m.inside else "bold red",
                        )
                    )
            table.add_row(
                _t(quantity if direction == "positive" else ""),
                _t(end_label(joint, direction)),
                *cells,
                _t(participant),
                _t(layers_cell, "yellow" if layers_cell == "1 only" else ""),
                *margin_cells,
            )
            any_row = True
    return table if any_row else None


def _participant_cells(prot: Protection | None) -> tuple[str, str]:
    """The participant's range at this end with its source, and how many layers protect it."""
    if prot is None or prot.participant is None:
        return "– (not known)", "?"
    return (
        f"{fmt(prot.participant, prot.unit)} ({prot.source})",
        "1 only" if prot.layers == "controller only" else "2",
    )


def _channels_line(requirements: Sequence[Requirement]) -> RenderableType | None:
    rows = [r for r in requirements if r.item.startswith("channel.")]
    if not rows:
        return None
    text = Text("channels: ", style="bold")
    for i, r in enumerate(rows):
        if i:
            text.append("  ·  ")
        style = "bold red" if r.status == "missing" else ""
        text.append(f"{r.item.removeprefix('channel.')} ", style="italic")
        text.append(f"[{r.status}] ", style=style)
        text.append(r.detail)
    return text


def _stops_table(stops: Sequence[StopRoom], joint: Joint) -> RenderableType | None:
    if not stops:
        return None
    table = _table(
        "end",
        "speed",
        "distance",
        "room to next layer",
        "v max",
        "room to participant",
        "v max",
        "time",
        "budget",
        title="Room to stop: d = v·t + v²/(2a), largest speed v max = a·(−t + √(t² + 2·room/a))",
    )
    for s in stops:
        table.add_row(
            _t(end_label(joint, s.direction)),
            _t(f"{fmt(s.speed, s.speed_unit)} ({s.speed_layer})"),
            _t(fmt(s.distance, s.distance_unit)),
            _room(
                s.room_outer,
                s.fits_outer,
                s.distance_unit,
                s.outer_layer if s.outer_layer != "device" else None,
            ),
            _t(fmt(s.largest_speed_outer, s.speed_unit)),
            _room(s.room_participant, s.fits_participant, s.distance_unit, None),
            _t(fmt(s.largest_speed_participant, s.speed_unit)),
            _t(
                fmt(s.stop_time, s.time_unit) + ("" if s.within_budget else " over"),
                None if s.within_budget else "bold red",
            ),
            _t(fmt(s.budget, s.time_unit)),
        )
    return table


def _room(room: float | None, fits: bool | None, unit: str, layer: str | None) -> Text:
    if room is None:
        return _t("–", "dim")
    text = Text(f"{fmt(room, unit)}" + (f" to {layer}" if layer else "") + " ")
    if fits:
        text.append("holds")
    else:
        text.append("short", style="bold red")
    return text


def _changes_block(result: ReviewResult, kind: str, name: str) -> RenderableType | None:
    lines = []
    for row in result.cautions.sources:
        for c in row.changes:
            if c.target_kind == kind and c.target == name:
                state = "" if c.applied else "  (not applied: already tighter)"
                if c.loosens:
                    state = "  (LOOSENS)"
                lines.append(
                    Text(
                        f"  {c.quantity} {c.part}: {fmt(c.before, c.unit)} → {fmt(c.after, c.unit)}"
                        f"  [{_source_label(row)}]{state}"
                    )
                )
    if not lines:
        return None
    return Group(Text("cautions and overrides for this participant:", style="bold"), *lines)


def _joint_section(result: ReviewResult, name: str, joint: Joint) -> list[RenderableType]:
    detail = f"{joint.motion} · + {joint.positive} / − {joint.negative}"
    if joint.stop_deceleration is not None:
        detail += f" · stop deceleration {joint.stop_deceleration}"
    if result.resolution.protocol.stop is not None:
        detail += f" · reaction {result.resolution.protocol.stop.reaction_time}"
    parts: list[RenderableType] = [Text(), _heading("JOINT", name, detail)]
    for block in (
        _joint_limits(result, name, joint),
        _channels_line(
            [r for r in result.completeness.requirements if r.subject_kind == "joint" and r.subject == name]
        ),
        _stops_table([s for s in result.room_to_stop.stops if s.joint == name], joint),
        _changes_block(result, "joint", name),
    ):
        if block is not None:
            parts.append(Padding(block, (0, 0, 0, 2)))
    parts.append(_findings_block(_group(result.findings, "joint", name)))
    return parts


# ----------------------------------------------------------------------------------------------- contacts


def _contact_limits(contact: Contact) -> Text:
    f = contact.force
    text = Text("limits: ", style="bold")
    text.append(f"force {f.quasi_static} quasi-static")
    if f.transient is not None:
        text.append(f", {f.transient} transient (≤ {f.transient_max_duration})")
    if contact.pressure is not None:
        text.append(f" · pressure {contact.pressure.quasi_static} quasi-static")
        if contact.pressure.transient is not None:
            text.append(f", {contact.pressure.transient} transient")
    if contact.sustained is not None:
        text.append(f" · sustained {contact.sustained.level} for ≤ {contact.sustained.max_duration}")
    return text


def _reference_table(result: ReviewResult, name: str) -> RenderableType | None:
    rows = [r for r in result.contact_reference.references if r.contact == name]
    if not rows:
        return None
    table = _table(
        "limit",
        "basis",
        "value",
        "reference",
        "ratio",
        title=escape(f"Against ISO/TS 15066 Annex A: {rows[0].specific_area}"),
    )
    for r in rows:
        ratio = "not permissible" if r.ratio is None else format_number(r.ratio, 3)
        style = (
            "bold red"
            if r.ratio is None and r.basis == "limit"
            else ("yellow" if r.ratio is not None and r.ratio > 1 else "")
        )
        table.add_row(
            _t(f"{r.quantity} {r.item.replace('_', '-')}"),
            _t(r.basis),
            _t(fmt(r.value, r.unit)),
            _t(fmt(r.reference, r.unit)),
            _t(ratio, style),
        )
    return Group(table, Text(f"Ratios to {CAVEAT}.", style="italic"))


def _pressing_table(result: ReviewResult, name: str) -> RenderableType | None:
    rows = [r for r in result.torque_force.pressing if r.contact == name]
    if not rows:
        return None
    table = _table(
        "joint",
        "layer",
        "torque",
        "lever arm",
        "force (τ/r)",
        "× force limit",
        "",
        title="Force a joint's torque limit can press into the contact",
    )
    for r in rows:
        ratio = "–" if r.ratio is None else format_number(r.ratio, 3)
        style = "yellow" if r.status == "can exceed the force limit" else ("dim" if r.force is None else "")
        table.add_row(
            _t(r.joint),
            _t(r.layer or "–"),
            _t(fmt(r.torque, r.torque_unit)),
            _t(fmt(r.lever_arm, r.length_unit)),
            _t(fmt(r.force, r.force_unit)),
            _t(ratio),
            _t(r.status, style),
        )
    return table


def _contact_section(result: ReviewResult, name: str, contact: Contact) -> list[RenderableType]:
    region = _REGION_WORDS.get(contact.body_region, contact.body_region.replace("_", " "))
    where = f"{region}" + (f" ({contact.specific_area})" if contact.specific_area else "")
    parts: list[RenderableType] = [
        Text(),
        _heading("CONTACT", name, f"{contact.kind} on {where} · area {contact.area}"),
    ]
    for block in (
        _contact_limits(contact),
        _channels_line(
            [r for r in result.completeness.requirements if r.subject_kind == "contact" and r.subject == name]
        ),
        _reference_table(result, name),
        _pressing_table(result, name),
        _changes_block(result, "contact", name),
    ):
        if block is not None:
            parts.append(Padding(block, (0, 0, 0, 2)))
    parts.append(_findings_block(_group(result.findings, "contact", name)))
    return parts


# ------------------------------------------------------------------------------------------- protocol-wide


def _stop_and_logging(result: ReviewResult) -> list[RenderableType]:
    p = result.resolution.protocol
    parts: list[RenderableType] = [Text(), _heading("STOP FUNCTION AND LOGGING", "", "")]
    if p.stop is not None:
        s = p.stop
        line = Text(
            f"stop category {s.category} (IEC 60204-1) · latency budget {s.latency_budget} · reaction "
            f"{s.reaction_time} · standstill below {s.standstill.speed} for {s.standstill.hold}"
        )
        if s.torque_off is not None:
            line.append(
                f" · torque off below {s.torque_off.level}"
                + (f" within {s.torque_off.within}" if s.torque_off.within else "")
            )
        parts.append(Padding(line, (0, 0, 0, 2)))
    triggers = [r for r in result.completeness.requirements if r.item.startswith("trigger.")]
    if triggers:
        text = Text("triggers: ", style="bold")
        for i, r in enumerate(triggers):
            if i:
                text.append("  ·  ")
            text.append(f"{r.item.removeprefix('trigger.')} ", style="italic")
            text.append(r.detail if r.status == "present" else f"[{r.status}]")
        parts.append(Padding(text, (0, 0, 0, 2)))
    table = _table(
        "stream",
        "sample rate",
        "channels",
        "samples in budget",
        "needed (≥ 10 samples)",
        title="Sample rate against the stop-latency budget",
    )
    for rate in result.logging.streams:
        samples = "–" if rate.samples_in_budget is None else f"{rate.samples_in_budget:.3g}"
        needed = "–" if rate.required_rate is None else fmt(rate.required_rate, rate.rate_unit)
        style = "" if rate.adequate in (True, None) else "yellow"
        table.add_row(
            _t(rate.stream),
            _t(fmt(rate.sample_rate, rate.rate_unit)),
            _t(str(rate.channels)),
            _t(samples, style),
            _t(needed),
        )
    parts.append(Padding(table, (0, 0, 0, 2)))
    wide = [f for f in result.findings if f.code != "R106" and _kind_of(f) in ("protocol", "stream", None)]
    parts.append(_findings_block(wide))
    return parts


def _cautions(result: ReviewResult) -> list[RenderableType]:
    parts: list[RenderableType] = [Text(), _heading("CAUTIONS AND OVERRIDES", "", "")]
    for row in result.cautions.sources:
        parts.append(Padding(_caution_block(row), (0, 0, 0, 2)))
    parts.append(_findings_block([f for f in result.findings if f.code == "R106"]))
    return parts


def _source_label(row: CautionRow) -> str:
    """``caution spasticity`` or ``override 1`` (overrides are already named by kind)."""
    return row.source if row.source_kind == "override" else f"caution {row.source}"


def _caution_block(row: CautionRow) -> RenderableType:
    head = Text(_source_label(row), style="bold")
    if row.population:
        head.append(f" — {row.population}")
    if not row.applied:
        head.append("  (listed, not applied)", style="dim")
    lines: list[RenderableType] = [head]
    if row.text:
        label = "justification: " if row.source_kind == "override" else ""
        lines.append(Padding(Text(label + row.text, style="italic"), (0, 0, 0, 2)))
    if row.changes:
        table = _table("target", "limit", "before → after", "")
        for c in row.changes:
            if c.loosens:
                note = "applied, LOOSENS"
            elif c.applied:
                note = "applied"
            else:
                note = c.note or "not applied"
            table.add_row(
                _t(f"{c.target_kind} {c.target}"),
                _t(f"{c.quantity} {c.part}"),
                _t(f"{fmt(c.before, c.unit)} → {fmt(c.after, c.unit)}"),
                _t(note, "yellow" if c.loosens else ("dim" if not c.applied else "")),
            )
        lines.append(Padding(table, (0, 0, 0, 2)))
    elif row.applied:
        lines.append(Padding(_t("changes no limit", "dim"), (0, 0, 0, 2)))
    return Group(*lines)


def _footer(result: ReviewResult, fail_on: Severity | None) -> list[RenderableType]:
    n = {s: result.count(s) for s in Severity}
    text = Text()
    text.append(f"{_RULE * 2} summary: ", style="bold")
    text.append(f"{n[Severity.ERROR]} error(s)", style="bold red" if n[Severity.ERROR] else "")
    text.append(" · ")
    text.append(f"{n[Severity.WARNING]} warning(s)", style="yellow" if n[Severity.WARNING] else "")
    text.append(f" · {n[Severity.INFO]} info")
    if fail_on is not None:
        over = len(result.at_or_above(fail_on))
        text.append(f" · {over} at or above '{fail_on.label}'")
    return [Text(), text, Text(f"Note: {STATEMENT}", style="italic")]


def render_review(result: ReviewResult, console: Console, fail_on: Severity | None = None) -> None:
    """Print the review to ``console``."""
    p = result.resolution.protocol
    parts: list[RenderableType] = [_header(result), Text(), _overview(result)]
    for name, joint in p.joints.items():
        parts += _joint_section(result, name, joint)
    for name, contact in p.contacts.items():
        parts += _contact_section(result, name, contact)
    parts += _stop_and_logging(result)
    parts += _cautions(result)
    parts += _footer(result, fail_on)
    console.print(Group(*parts))
